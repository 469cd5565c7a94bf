//! Gradient, hill-adjusted speed and altitude smoothing (analysis::gradient).

use chrono::{TimeZone, Utc};
use splitdesk::analysis::gradient::{
    cost_ratio, flat_equivalent_speed, gradients, hill_adjusted_speed, minetti_cr, smooth_altitude,
    HillAdjustment,
};
use splitdesk::model::{Channel, FileFormat, Session};

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

/// A session sampled at times `t`, with cumulative distance and altitude as given.
fn session(t: Vec<f64>, dist: Option<Vec<f64>>, alt: Option<Vec<f64>>) -> Session {
    let start = Utc.with_ymd_and_hms(2026, 3, 1, 7, 0, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.time = t
        .iter()
        .map(|&x| start + chrono::Duration::milliseconds((x * 1000.0) as i64))
        .collect();
    if let Some(d) = &dist {
        // speed from the distance steps (speed at sample i covers t[i-1]..t[i])
        let mut v = vec![0.0];
        for i in 1..t.len() {
            let dt = t[i] - t[i - 1];
            v.push(if dt > 0.0 {
                (d[i] - d[i - 1]) / dt
            } else {
                0.0
            });
        }
        if let Some(first) = v.get(1).copied() {
            v[0] = first;
        }
        s.speed = Some(Channel::from_values(v));
    }
    s.distance = dist.map(Channel::from_values);
    s.altitude = alt.map(Channel::from_values);
    s.t = t;
    s
}

#[test]
fn minetti_polynomial_tabled_values() {
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (values computed from the published polynomial, methods.md §1)
    let table = [
        (-0.40, 3.610, 0.0005),
        (-0.20, 1.800, 0.0005),
        (-0.10, 2.152, 0.0005),
        (0.0, 3.600, 0.0005),
        (0.10, 5.968, 0.0005),
        (0.20, 9.007, 0.0005),
        (0.40, 16.85, 0.005),
    ];
    for (i, cr, tol) in table {
        close(minetti_cr(i), cr, tol);
    }
}

#[test]
fn minetti_cost_ratios() {
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (values computed from the published polynomial, methods.md §1)
    let table = [
        (-0.40, 1.003),
        (-0.20, 0.5000),
        (-0.10, 0.5977),
        (0.0, 1.0),
        (0.10, 1.658),
        (0.20, 2.502),
        (0.40, 4.681),
    ];
    for (i, r) in table {
        close(cost_ratio(i), r, 0.0005);
    }
}

#[test]
fn minetti_range_ends_minimum_and_clamp() {
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (values computed from the published polynomial, methods.md §1)
    close(minetti_cr(-0.45), 4.032, 0.0005);
    close(minetti_cr(0.45), 19.43, 0.005);
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (values computed from the published polynomial, methods.md §1): minimum at i = -0.1814
    close(minetti_cr(-0.1814), 1.781, 0.0005);
    // Clamped to the fitted range ±0.45.
    assert_eq!(minetti_cr(0.9), minetti_cr(0.45));
    assert_eq!(minetti_cr(-3.0), minetti_cr(-0.45));
    assert_eq!(minetti_cr(f64::INFINITY), minetti_cr(0.45));
    assert_eq!(minetti_cr(f64::NAN), 3.6);
}

#[test]
fn flat_equivalent_speed_checks() {
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (values computed from the published polynomial, methods.md §1)
    close(flat_equivalent_speed(3.0, 0.10), 4.974, 0.0005);
    close(flat_equivalent_speed(3.0, -0.10), 1.793, 0.0005);
    close(flat_equivalent_speed(4.0, -0.05), 3.051, 0.0005);
    close(flat_equivalent_speed(2.5, 0.20), 6.255, 0.0005);
    // Flat: unchanged.
    assert_eq!(flat_equivalent_speed(3.3, 0.0), 3.3);
}

#[test]
fn smoothing_tolerates_gaps_and_missing_samples() {
    let t: Vec<f64> = vec![0.0, 1.0, 2.0, 10.0, 11.0, 30.0];
    let alt = Channel::new(vec![Some(100.0), None, Some(102.0), Some(50.0), None, None]);
    let s = smooth_altitude(&t, &alt, 4.0);
    assert_eq!(s.len(), 6);
    // t=0: window [-2, 2] holds 100 and 102
    close(s[0].unwrap(), 101.0, 1e-12);
    // t=1: missing sample filled from its window
    close(s[1].unwrap(), 101.0, 1e-12);
    // t=10 and t=11: only the 50 at t=10
    close(s[3].unwrap(), 50.0, 1e-12);
    close(s[4].unwrap(), 50.0, 1e-12);
    // t=30: nothing within 2 s
    assert_eq!(s[5], None);
    // No smoothing with a zero window.
    let raw = smooth_altitude(&t, &alt, 0.0);
    assert_eq!(raw[1], None);
    assert_eq!(raw[2], Some(102.0));
    // Empty input.
    assert!(smooth_altitude(&[], &Channel::default(), 20.0).is_empty());
}

#[test]
fn smoothing_uses_time_not_sample_count() {
    // Dense then sparse sampling of a constant altitude with one outlier.
    let t: Vec<f64> = vec![0.0, 0.5, 1.0, 1.5, 2.0, 20.0, 40.0];
    let alt = Channel::from_values([10.0, 10.0, 10.0, 10.0, 10.0, 16.0, 10.0]);
    let s = smooth_altitude(&t, &alt, 10.0);
    // t=40 sees only itself: the outlier 20 s away is outside ±5 s.
    assert_eq!(s[6], Some(10.0));
    assert_eq!(s[5], Some(16.0));
}

#[test]
fn constant_gradient_is_recovered() {
    // 3 m/s up a 5 % road for 10 minutes, 1 Hz.
    let t: Vec<f64> = (0..=600).map(f64::from).collect();
    let d: Vec<f64> = t.iter().map(|x| 3.0 * x).collect();
    let a: Vec<f64> = d.iter().map(|x| 200.0 + 0.05 * x).collect();
    let s = session(t, Some(d), Some(a));
    let g = gradients(&s).unwrap();
    assert_eq!(g.len(), 601);
    for gi in &g[20..580] {
        close(gi.unwrap(), 0.05, 1e-9);
    }
    // Edges are still defined (baseline shortened, not a tiny run).
    assert!(g[0].is_some() && g[600].is_some());
}

#[test]
fn gradient_with_irregular_sampling_and_no_distance_channel() {
    // Irregular spacing 1..5 s; distance only through speed; 8 % slope.
    let mut t = vec![0.0];
    let mut k = 0;
    while *t.last().unwrap() < 900.0 {
        let dt = [1.0, 3.0, 2.0, 5.0, 1.0][k % 5];
        t.push(t.last().unwrap() + dt);
        k += 1;
    }
    let d: Vec<f64> = t.iter().map(|x| 2.5 * x).collect();
    let a: Vec<f64> = d.iter().map(|x| 0.08 * x).collect();
    let mut s = session(t.clone(), Some(d), Some(a));
    s.distance = None; // force integration of speed
    let g = gradients(&s).unwrap();
    let n = g.len();
    for gi in &g[20..n - 20] {
        close(gi.unwrap(), 0.08, 0.01);
    }
}

#[test]
fn jittery_flat_altitude_gives_small_gradients() {
    // ±1 m deterministic jitter on the flat at 3 m/s.
    let t: Vec<f64> = (0..=600).map(f64::from).collect();
    let d: Vec<f64> = t.iter().map(|x| 3.0 * x).collect();
    let a: Vec<f64> = (0..=600)
        .map(|i| 50.0 + [1.0, -1.0, 0.5, -0.5, 0.0, 1.0, -1.0][i % 7])
        .collect();
    let s = session(t, Some(d), Some(a));
    for gi in gradients(&s).unwrap().iter().flatten() {
        assert!(gi.abs() < 0.03, "gradient {gi} from jitter alone");
    }
}

#[test]
fn standing_still_never_divides_by_a_tiny_distance() {
    // A whole session standing still: no gradient anywhere.
    let t: Vec<f64> = (0..=120).map(f64::from).collect();
    let d = vec![0.0; 121];
    let a: Vec<f64> = (0..=120).map(|i| 30.0 + (i % 3) as f64).collect();
    let s = session(t, Some(d), Some(a));
    assert!(gradients(&s).unwrap().iter().all(Option::is_none));

    // A 60 s stop in the middle of a 4 % climb: gradients stay bounded and present.
    let t: Vec<f64> = (0..=400).map(f64::from).collect();
    let d: Vec<f64> = t
        .iter()
        .map(|&x| {
            if x < 170.0 {
                3.0 * x
            } else if x < 230.0 {
                510.0
            } else {
                510.0 + 3.0 * (x - 230.0)
            }
        })
        .collect();
    let a: Vec<f64> = d.iter().map(|x| 0.04 * x).collect();
    let s = session(t, Some(d), Some(a));
    let g = gradients(&s).unwrap();
    for gi in &g[180..220] {
        let gi = gi.unwrap();
        assert!((0.0..=0.08).contains(&gi), "gradient while standing {gi}");
    }
}

#[test]
fn hill_adjusted_speed_on_a_climb_and_without_altitude() {
    let t: Vec<f64> = (0..=300).map(f64::from).collect();
    let d: Vec<f64> = t.iter().map(|x| 3.0 * x).collect();
    let a: Vec<f64> = d.iter().map(|x| 0.10 * x).collect();
    let s = session(t.clone(), Some(d.clone()), Some(a));
    let h = hill_adjusted_speed(&s).unwrap();
    assert_eq!(h.adjustment, HillAdjustment::Adjusted);
    assert_eq!(h.samples_without_gradient, 0);
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (values computed from the published polynomial, methods.md §1): 3.0 m/s at +0.10 → 4.974
    for v in &h.values[30..270] {
        close(v.unwrap(), 4.974, 0.0005);
    }

    // No altitude: raw speed, and the flag says so.
    let s = session(t, Some(d), None);
    assert_eq!(gradients(&s), None);
    let h = hill_adjusted_speed(&s).unwrap();
    assert_eq!(h.adjustment, HillAdjustment::RawNoAltitude);
    assert_eq!(h.values, s.speed.as_ref().unwrap().values);

    // No speed at all: nothing to adjust.
    let start = Utc.with_ymd_and_hms(2026, 3, 1, 7, 0, 0).unwrap();
    assert_eq!(
        hill_adjusted_speed(&Session::empty(FileFormat::Gpx, start)),
        None
    );
}

/// A 40-minute run over a profile of constant-gradient legs, at the speed that holds the
/// hill-adjusted speed at `v_eq` on each (raw speed `v_eq / (Cr(i)/Cr(0))`), heart rate flat.
fn even_effort_over(grades: &[f64], leg_s: usize, v_eq: f64) -> Session {
    let n = 2400usize;
    let t: Vec<f64> = (0..=n).map(|x| x as f64).collect();
    let (mut d, mut a) = (vec![0.0], vec![100.0]);
    for i in 1..=n {
        let g = grades[(i / leg_s) % grades.len()];
        let v = v_eq / cost_ratio(g);
        d.push(d[i - 1] + v);
        a.push(a[i - 1] + v * g);
    }
    let mut s = session(t, Some(d), Some(a));
    s.hr = Some(Channel::from_values(
        (0..=n).map(|i| 150.0 + (i % 7) as f64 * 0.3),
    ));
    s
}

#[test]
fn the_table_and_the_finder_share_the_minetti_hill_adjustment() {
    // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (Cr(i)/Cr(0) computed from the
    // published polynomial, methods.md §1): -0.10 → 0.5977, +0.10 → 1.658, +0.20 → 2.502.
    for (g, ratio) in [(-0.10, 0.5977), (0.0, 1.0), (0.10, 1.658), (0.20, 2.502)] {
        let t: Vec<f64> = (0..=1800).map(f64::from).collect();
        let d: Vec<f64> = t.iter().map(|x| 3.0 * x).collect();
        let a: Vec<f64> = d.iter().map(|x| 100.0 + g * x).collect();
        let s = session(t, Some(d), Some(a));
        let r =
            splitdesk::analysis::analyze(&s, None, &splitdesk::model::AthleteProfile::bare("x"));
        assert_eq!(
            r.work().count(),
            0,
            "grade {g}: a constant run is not a set"
        );
        let iv = r
            .intervals
            .iter()
            .find(|i| i.kind == "steady")
            .expect("one steady interval");
        // Hill-adjusted pace in the table: 1000 / (3.0 · Cr(i)/Cr(0)) s/km.
        close(
            iv.hill_adjusted_pace_s_per_km.unwrap(),
            1000.0 / (3.0 * ratio),
            1000.0 / (3.0 * ratio) * 0.01,
        );
    }
    // The finder holds the same correction: rolling legs of ±6 % run at an even
    // hill-adjusted pace (the descents 1.3 times faster on the watch) with a flat heart
    // rate are one steady run, not descents taken for reps.
    let s = even_effort_over(&[0.0, 0.06, 0.0, -0.06], 150, 3.2);
    let r = splitdesk::analysis::analyze(&s, None, &splitdesk::model::AthleteProfile::bare("x"));
    assert_eq!(
        r.work().count(),
        0,
        "{:?}",
        r.intervals
            .iter()
            .map(|i| (&i.kind, i.start_s))
            .collect::<Vec<_>>()
    );
}
