//! Haversine against geo's reference distances, and the derived distance/speed channels.

mod clean_common;

use clean_common::{one_hz, session_at, smart_times, track, XorShift};
use geo::{Destination, Distance, Geodesic, Haversine, Point};
use splitdesk::ingest::derive::{fill_derived, haversine_m, EARTH_MEAN_RADIUS_M};
use splitdesk::model::{Channel, ChannelKind, Pause};

fn rel(a: f64, b: f64) -> f64 {
    (a / b - 1.0).abs()
}

#[test]
fn haversine_sofia_plovdiv_matches_geo_docs() {
    // Source: geo crate docs (Haversine, R = 6371008.8 m): 132433.09929460194 m.
    let d = haversine_m(42.698334, 23.319941, 42.136097, 24.742168);
    assert!(rel(d, 132_433.099_294_601_94) <= 1e-6, "got {d}");
    let g = Haversine.distance(
        Point::new(23.319941, 42.698334),
        Point::new(24.742168, 42.136097),
    );
    assert!(rel(d, g) <= 1e-12, "ours {d} geo {g}");
    assert_eq!(EARTH_MEAN_RADIUS_M, 6_371_008.8);
}

#[test]
fn haversine_nyc_london_vs_geodesic() {
    let (nyc, london) = (Point::new(-74.006, 40.7128), Point::new(-0.1278, 51.5074));
    let d = haversine_m(40.7128, -74.006, 51.5074, -0.1278);
    // Source: geo crate docs: haversine 5_570_230 m (rounded).
    assert_eq!(d.round(), 5_570_230.0);
    // Source: Karney 2013, J Geodesy 87:43 (via geo's Geodesic); geo docs print 5_585_234 m.
    let g = Geodesic.distance(nyc, london);
    assert_eq!(g.round(), 5_585_234.0);
    // methods.md §11: haversine error here is -0.269 %.
    let err = d / g - 1.0;
    assert!((err - -0.00269).abs() < 0.00001, "error {err}");
}

#[test]
fn haversine_short_north_south_at_51_5() {
    // methods.md §11 (computed with python3): 0.009° of latitude at 51.5°N is 1000.756 m
    // by haversine, 1001.321 m geodesic.
    let d = haversine_m(51.5, 0.0, 51.509, 0.0);
    assert!((d - 1000.756).abs() < 0.001, "got {d}");
    // Source: Karney 2013, J Geodesy 87:43 (via geo's Geodesic).
    let g = Geodesic.distance(Point::new(0.0, 51.5), Point::new(0.0, 51.509));
    assert!((g - 1001.321).abs() < 0.001, "got {g}");
}

#[test]
fn haversine_within_0_6_percent_of_geodesic_for_random_pairs() {
    let mut rng = XorShift::new(0x5eed_1234);
    let (mut lo, mut hi) = (0.0f64, 0.0f64);
    let mut checked = 0;
    for _ in 0..20_000 {
        let lat = rng.range(-85.0, 85.0);
        let lon = rng.range(-180.0, 180.0);
        let bearing = rng.range(0.0, 360.0);
        // 50 m to 20 km apart, log-uniform so short distances are well represented.
        let dist = 50.0 * (400.0f64).powf(rng.unit());
        let a = Point::new(lon, lat);
        let b = Geodesic.destination(a, bearing, dist);
        // Source: Karney 2013, J Geodesy 87:43 (via geo's Geodesic).
        let g = Geodesic.distance(a, b);
        let h = haversine_m(a.y(), a.x(), b.y(), b.x());
        let err = h / g - 1.0;
        lo = lo.min(err);
        hi = hi.max(err);
        checked += 1;
        // methods.md §11: measured bound -0.447 %..+0.561 %, so 0.6 %.
        assert!(err.abs() <= 0.006, "pair {a:?} -> {b:?}: error {err}");
    }
    assert_eq!(checked, 20_000);
    // The sample really spans the ellipsoid's effect in both directions.
    assert!(lo < -0.002 && hi > 0.002, "error range {lo}..{hi}");
}

#[test]
fn derived_distance_on_north_south_line_matches_geodesic() {
    let t = one_hz(1800);
    let (lat, lon, true_d) = track(&t, 45.0, 7.0, |_| 3.5, |_| 0.0);
    let mut s = session_at(t);
    s.lat = Some(Channel::from_values(lat.clone()));
    s.lon = Some(Channel::from_values(lon.clone()));
    fill_derived(&mut s);
    assert!(s.derived.contains(&ChannelKind::Distance));
    assert!(s.derived.contains(&ChannelKind::Speed));
    let total = s.distance_m().unwrap_or(0.0);
    let (Some(&la1), Some(&lo1), Some(&la2), Some(&lo2)) =
        (lat.first(), lon.first(), lat.last(), lon.last())
    else {
        panic!("empty track");
    };
    // Source: Karney 2013, J Geodesy 87:43 (via geo's Geodesic).
    let g = Geodesic.distance(Point::new(lo1, la1), Point::new(lo2, la2));
    assert!(
        (g - 3.5 * 1799.0).abs() < 1e-3 && (true_d.last().copied().unwrap_or(0.0) - g).abs() < 0.01
    );
    // methods.md §11: haversine within 0.6 % of the geodesic.
    assert!(rel(total, g) <= 0.006, "derived {total} geodesic {g}");
    // Cumulative, non-decreasing, starts at zero.
    let d = s
        .distance
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    assert_eq!(d.first().copied().flatten(), Some(0.0));
    assert!(d.windows(2).all(|w| w[1] >= w[0]));
}

#[test]
fn derived_speed_on_constant_speed_path_is_the_true_speed() {
    let t = one_hz(1200);
    let (lat, lon, _) = track(&t, -33.9, 18.4, |_| 4.2, |x| 60.0 + 0.01 * x);
    let mut s = session_at(t);
    s.lat = Some(Channel::from_values(lat));
    s.lon = Some(Channel::from_values(lon));
    fill_derived(&mut s);
    let speed = s
        .speed
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    assert_eq!(speed.len(), 1200);
    for (i, v) in speed.iter().enumerate() {
        let v = v.unwrap_or(f64::NAN);
        // Within 1 %: the haversine error on this heading is well under 0.6 %.
        assert!(rel(v, 4.2) <= 0.01, "sample {i}: {v}");
    }
}

#[test]
fn derived_speed_with_smart_sampling_1_to_7_s() {
    for seed in [1u64, 7, 42] {
        let t = smart_times(seed, 3600.0);
        let true_speed = |x: f64| 3.0 + 0.5 * (x / 400.0).sin();
        let (lat, lon, true_d) = track(&t, 40.0, -3.7, true_speed, |_| 135.0);
        let mut s = session_at(t.clone());
        s.lat = Some(Channel::from_values(lat));
        s.lon = Some(Channel::from_values(lon));
        fill_derived(&mut s);
        let total = s.distance_m().unwrap_or(0.0);
        let truth = true_d.last().copied().unwrap_or(0.0);
        assert!(
            rel(total, truth) <= 0.006,
            "seed {seed}: {total} vs {truth}"
        );
        let speed = s
            .speed
            .as_ref()
            .map(|c| c.values.clone())
            .unwrap_or_default();
        for (i, (v, &ti)) in speed.iter().zip(&t).enumerate() {
            let v = v.unwrap_or(f64::NAN);
            // A window of up to 14 s on a gently varying speed: within 2 %.
            assert!(
                rel(v, true_speed(ti)) <= 0.02,
                "seed {seed} sample {i} t {ti}: {v}"
            );
        }
    }
}

#[test]
fn recorded_channels_are_never_overwritten() {
    let t = one_hz(300);
    let (lat, lon, _) = track(&t, 45.0, 7.0, |_| 3.0, |_| 90.0);
    let mut s = session_at(t);
    s.lat = Some(Channel::from_values(lat));
    s.lon = Some(Channel::from_values(lon));
    let dist = Channel::from_values((0..300).map(|i| i as f64 * 2.9));
    let spd = Channel::from_values((0..300).map(|_| 2.95));
    s.distance = Some(dist.clone());
    s.speed = Some(spd.clone());
    fill_derived(&mut s);
    assert_eq!(s.distance, Some(dist));
    assert_eq!(s.speed, Some(spd));
    assert!(s.derived.is_empty());
}

#[test]
fn speed_is_derived_from_recorded_distance_without_positions() {
    let t = smart_times(3, 1800.0);
    let mut s = session_at(t.clone());
    s.distance = Some(Channel::from_values(t.iter().map(|x| 3.3 * x)));
    fill_derived(&mut s);
    assert_eq!(s.derived, vec![ChannelKind::Speed]);
    let speed = s
        .speed
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    assert!(speed
        .iter()
        .all(|v| v.is_some_and(|x| (x - 3.3).abs() < 1e-9)));
}

#[test]
fn missing_positions_give_none_and_the_total_carries_on() {
    let t = one_hz(600);
    let (lat, lon, true_d) = track(&t, 45.0, 7.0, |_| 3.0, |_| 0.0);
    let mut lat: Vec<Option<f64>> = lat.into_iter().map(Some).collect();
    for v in &mut lat[200..210] {
        *v = None;
    }
    let mut s = session_at(t);
    s.lat = Some(Channel::new(lat));
    s.lon = Some(Channel::from_values(lon));
    fill_derived(&mut s);
    let d = s
        .distance
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    assert!(d[200..210].iter().all(Option::is_none));
    assert!(d[..200].iter().chain(&d[210..]).all(Option::is_some));
    let truth = true_d.last().copied().unwrap_or(0.0);
    assert!(rel(s.distance_m().unwrap_or(0.0), truth) <= 0.006);
    // Speed is not invented where distance is unknown.
    let v = s
        .speed
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    assert!(v[200..210].iter().all(Option::is_none));
    assert!(v[190..200]
        .iter()
        .chain(&v[210..220])
        .all(|x| x.is_some_and(|x| (x - 3.0).abs() < 0.03)));
}

#[test]
fn an_outlier_fix_adds_no_distance_and_no_speed_spike() {
    let t = one_hz(600);
    let (mut lat, lon, true_d) = track(&t, 45.0, 7.0, |_| 3.0, |_| 0.0);
    lat[300] += 300.0 / 111_320.0; // one fix 300 m north of the track
    let mut s = session_at(t);
    s.lat = Some(Channel::from_values(lat));
    s.lon = Some(Channel::from_values(lon));
    fill_derived(&mut s);
    let truth = true_d.last().copied().unwrap_or(0.0);
    assert!(rel(s.distance_m().unwrap_or(0.0), truth) <= 0.006);
    assert_eq!(s.distance.as_ref().and_then(|c| c.values[300]), None);
    let v = s
        .speed
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    assert!(v.iter().flatten().all(|&x| (x - 3.0).abs() < 0.05));
}

#[test]
fn timer_pause_adds_no_distance_and_invents_no_speed() {
    // 0..600 s running, timer stopped 600..700 s while the athlete walks 80 m, then
    // 700..1200 s running. One sample is logged inside the pause at 650 s.
    let mut t: Vec<f64> = (0..=600).map(f64::from).collect();
    t.push(650.0);
    t.extend((700..1200).map(f64::from));
    let speed = |x: f64| if x <= 600.0 || x >= 700.0 { 3.0 } else { 0.8 };
    let (lat, lon, true_d) = track(&t, 45.0, 7.0, speed, |_| 0.0);
    let mut s = session_at(t.clone());
    s.lat = Some(Channel::from_values(lat));
    s.lon = Some(Channel::from_values(lon));
    s.pauses.push(Pause {
        from_s: 600.0,
        to_s: 700.0,
    });
    fill_derived(&mut s);
    // True running distance: 600 s + 499 s at 3 m/s.
    let running = 3.0 * (600.0 + 499.0);
    let total = s.distance_m().unwrap_or(0.0);
    assert!(
        rel(total, running) <= 0.006,
        "total {total}, running {running}"
    );
    assert!(true_d.last().copied().unwrap_or(0.0) > running + 70.0);
    let v = s
        .speed
        .as_ref()
        .map(|c| c.values.clone())
        .unwrap_or_default();
    let inside = t.iter().position(|&x| x == 650.0).unwrap_or(0);
    assert_eq!(v[inside], None, "no speed inside the pause");
    for (i, x) in v.iter().enumerate() {
        if i != inside {
            let x = x.unwrap_or(f64::NAN);
            assert!((x - 3.0).abs() < 0.03, "sample {i} t {}: {x}", t[i]);
        }
    }
}
