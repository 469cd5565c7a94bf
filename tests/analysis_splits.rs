//! Splits against an independent computation from the raw points of demo files, the demo
//! races' splits over the race distance in the athlete's units, and `analyze --json`
//! carrying `kind` and `splits`.

use std::path::{Path, PathBuf};

use geo::{Distance, Haversine, Point};
use splitdesk::analysis::kind::SessionKind;
use splitdesk::analysis::review::Review;
use splitdesk::roster::Roster;
use splitdesk::workspace::analyse_activity;

fn demo_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes")
}

fn review(id: &str) -> Review {
    let r = Roster::open(&demo_dir()).unwrap();
    let (a, act) = r.find_session(id).unwrap();
    analyse_activity(a, act).unwrap().review
}

/// Raw points (seconds from the first point, lat, lon) of a GPX file.
// Source: gpx crate (crates.io), an independent GPX reader.
fn gpx_points(path: &Path) -> Vec<(f64, f64, f64)> {
    let doc = gpx::read(std::fs::read(path).unwrap().as_slice()).unwrap();
    let mut out = Vec::new();
    let mut t0 = None;
    for trk in &doc.tracks {
        for seg in &trk.segments {
            for p in &seg.points {
                let Some(t) = p.time else { continue };
                let t = chrono::DateTime::parse_from_rfc3339(&t.format().unwrap()).unwrap();
                let t0 = *t0.get_or_insert(t);
                let s = (t - t0).num_milliseconds() as f64 / 1000.0;
                out.push((s, p.point().y(), p.point().x()));
            }
        }
    }
    out
}

/// (seconds from the first record, (lat, lon), recorded distance in metres).
type FitRecord = (f64, Option<(f64, f64)>, Option<f64>);

/// Raw records of a FIT file, read with fitparser directly: (seconds from the first
/// record, lat, lon, recorded distance). Positions in semicircles (degrees = x·180/2³¹).
// Source: FIT SDK profile (record: timestamp, position_lat/long in semicircles, distance in
// metres), read by the fitparser crate (independent of our framing and channel rules).
fn fit_records(path: &Path) -> Vec<FitRecord> {
    use fitparser::profile::MesgNum;
    use fitparser::Value;
    let recs = fitparser::from_bytes(&std::fs::read(path).unwrap()).unwrap();
    let semi = 180.0 / 2f64.powi(31);
    let mut out = Vec::new();
    let mut t0 = None;
    for r in recs.iter().filter(|r| r.kind() == MesgNum::Record) {
        let (mut t, mut lat, mut lon, mut dist) = (None, None, None, None);
        for f in r.fields() {
            match (f.name(), f.value()) {
                ("timestamp", Value::Timestamp(ts)) => t = Some(ts.timestamp() as f64),
                ("position_lat", Value::SInt32(v)) => lat = Some(f64::from(*v) * semi),
                ("position_long", Value::SInt32(v)) => lon = Some(f64::from(*v) * semi),
                ("distance", Value::Float64(v)) => dist = Some(*v),
                _ => {}
            }
        }
        let Some(t) = t else { continue };
        let t0 = *t0.get_or_insert(t);
        out.push((t - t0, lat.zip(lon), dist));
    }
    out
}

/// Times (seconds) at which a cumulative distance, counted from `from_s`, reaches each whole
/// `unit_m`, by linear interpolation between the samples around it; and the total.
/// `steps` are (time, metres since the previous sample).
fn unit_times(steps: &[(f64, f64)], unit_m: f64) -> (Vec<f64>, f64) {
    let mut cum = 0.0;
    let mut next = unit_m;
    let mut times = Vec::new();
    for w in steps.windows(2) {
        let (t0, (t1, d)) = (w[0].0, w[1]);
        while d > 0.0 && cum + d >= next {
            times.push(t0 + (next - cum) / d * (t1 - t0));
            next += unit_m;
        }
        cum += d;
    }
    (times, cum)
}

/// Steps of the cumulative haversine distance between consecutive positions in
/// `from_s..=to_s`.
// Source: geo crate `Haversine` (great circle on a sphere of mean radius 6371008.8 m).
fn haversine_steps(pts: &[(f64, f64, f64)], from_s: f64, to_s: f64) -> Vec<(f64, f64)> {
    let inside: Vec<_> = pts
        .iter()
        .filter(|p| p.0 >= from_s && p.0 <= to_s)
        .collect();
    let mut out = Vec::with_capacity(inside.len());
    let mut prev: Option<&(f64, f64, f64)> = None;
    for p in inside {
        let d = prev.map_or(0.0, |a| {
            Haversine.distance(Point::new(a.2, a.1), Point::new(p.2, p.1))
        });
        out.push((p.0, d));
        prev = Some(p);
    }
    out
}

/// The ends of each split (seconds from the start) from the review's split times.
fn split_ends(sp: &splitdesk::analysis::splits::Splits) -> Vec<f64> {
    let mut at = sp.from_s;
    sp.splits
        .iter()
        .map(|x| {
            at += x.time_s;
            at
        })
        .collect()
}

/// Each full split's time against the independent crossing times, within `tol_s`.
fn assert_splits_match(
    id: &str,
    sp: &splitdesk::analysis::splits::Splits,
    times: &[f64],
    tol_s: f64,
) {
    let unit_m = if sp.unit == "mi" { 1609.344 } else { 1000.0 };
    let full: Vec<_> = sp
        .splits
        .iter()
        .filter(|x| x.distance_m >= unit_m * 0.999)
        .collect();
    assert!(!full.is_empty(), "{id}: no full split");
    assert_eq!(full.len(), times.len(), "{id}: number of full splits");
    let mut prev = sp.from_s;
    for (x, &t) in full.iter().zip(times) {
        let theirs = t - prev;
        assert!(
            (x.time_s - theirs).abs() <= tol_s,
            "{id}: split {} ours {:.2} s, independent {:.2} s",
            x.number,
            x.time_s,
            theirs
        );
        prev = t;
    }
    // The ends themselves (the running total) agree too.
    for (end, &t) in split_ends(sp).iter().zip(times) {
        assert!(
            (end - t).abs() <= tol_s * 2.0,
            "{id}: end {end:.2} vs {t:.2}"
        );
    }
}

#[test]
fn gpx_splits_match_haversine_from_the_raw_points() {
    // GPX has no distance: ours is derived from the positions (haversine), so an independent
    // haversine over the same points must give the same crossings. Dagny runs in miles;
    // Ansel in kilometres.
    for id in [
        "dagny-holloway/2026-10-19-easy-run",
        "dagny-holloway/2026-11-09-easy-run",
        "ansel-marchetti/2026-11-06-easy-run",
    ] {
        let (athlete, stem) = id.split_once('/').unwrap();
        let path = demo_dir()
            .join(athlete)
            .join("activities")
            .join(format!("{stem}.gpx"));
        let r = review(id);
        let sp = r.splits.as_ref().expect("splits");
        let unit_m = if sp.unit == "mi" { 1609.344 } else { 1000.0 };
        let (times, total) = unit_times(
            &haversine_steps(&gpx_points(&path), sp.from_s, sp.to_s),
            unit_m,
        );
        assert!(
            (sp.distance_m - total).abs() <= 1.0,
            "{id}: {} vs {total}",
            sp.distance_m
        );
        assert_splits_match(id, sp, &times, 1.0);
    }
}

#[test]
fn fit_splits_match_the_recorded_distance_and_the_positions() {
    for id in [
        "tobias-wrenfield/2026-11-29-race",
        "dagny-holloway/2026-11-28-time-trial",
    ] {
        let (athlete, stem) = id.split_once('/').unwrap();
        let path = demo_dir()
            .join(athlete)
            .join("activities")
            .join(format!("{stem}.fit"));
        let recs = fit_records(&path);
        let r = review(id);
        let sp = r.splits.as_ref().expect("splits");
        let unit_m = if sp.unit == "mi" { 1609.344 } else { 1000.0 };
        // 1. The file's own distance field (what the review trusts on a FIT file): within
        //    1 s per split.
        let inside: Vec<(f64, f64)> = recs
            .iter()
            .filter(|r| r.0 >= sp.from_s && r.0 <= sp.to_s)
            .filter_map(|r| r.2.map(|d| (r.0, d)))
            .collect();
        let steps: Vec<(f64, f64)> = inside
            .iter()
            .enumerate()
            .map(|(i, &(t, d))| {
                (
                    t,
                    i.checked_sub(1)
                        .and_then(|j| inside.get(j))
                        .map_or(0.0, |p| (d - p.1).max(0.0)),
                )
            })
            .collect();
        let (times, total) = unit_times(&steps, unit_m);
        assert!(
            (sp.distance_m - total).abs() <= 1.0,
            "{id}: {} vs {total}",
            sp.distance_m
        );
        assert_splits_match(id, sp, &times, 1.0);
        // 2. Haversine over the recorded positions: the positions carry GPS scatter of a
        //    few metres that the device's distance smooths out, so each crossing can move by
        //    about ±5 m: 1 s at 5 m/s race pace, and a split has two crossings. Measured on
        //    the demo files: at most 1.9 s per split, totals within 3 m over 10 km.
        let pts: Vec<(f64, f64, f64)> = recs
            .iter()
            .filter_map(|r| r.1.map(|(la, lo)| (r.0, la, lo)))
            .collect();
        let (times, total) = unit_times(&haversine_steps(&pts, sp.from_s, sp.to_s), unit_m);
        assert!(
            (sp.distance_m - total).abs() <= 0.001 * total,
            "{id}: {} vs {total}",
            sp.distance_m
        );
        assert_splits_match(id, sp, &times, 2.5);
    }
}

#[test]
fn demo_races_have_splits_over_the_race_distance_in_the_athletes_units() {
    // Tobias: a 10 km race in kilometres.
    let r = review("tobias-wrenfield/2026-11-29-race");
    assert_eq!(r.kind, SessionKind::Race);
    let sp = r.splits.as_ref().expect("splits");
    assert_eq!(sp.unit, "km");
    let work: Vec<_> = r.work().collect();
    assert_eq!(work.len(), 1);
    // The splits cover the race (its work interval), and their distance is the interval's.
    assert_eq!((sp.from_s, sp.to_s), (work[0].start_s, work[0].end_s));
    assert!((sp.distance_m - work[0].distance_m.unwrap()).abs() < 0.5);
    assert!((sp.distance_m - 10_000.0).abs() < 50.0, "{}", sp.distance_m);
    assert_eq!(sp.full(splitdesk::model::Units::Km).count(), 10);
    assert_eq!(sp.splits.len(), 10, "the 4.5 m over 10 km is not a split");
    assert!((sp.time_s - work[0].duration_s).abs() < 1e-9);
    let sum: f64 = sp.splits.iter().map(|x| x.time_s).sum();
    // The left-out 4.5 m at race pace: under a second.
    assert!(
        sp.time_s - sum >= 0.0 && sp.time_s - sum < 1.0,
        "{} vs {sum}",
        sp.time_s
    );
    assert!((sp.first_half_s.unwrap() + sp.second_half_s.unwrap() - sp.time_s).abs() < 1e-9);
    let (f, s) = (sp.fastest_s_per_km.unwrap(), sp.slowest_s_per_km.unwrap());
    assert!(f <= s);
    assert!(sp
        .splits
        .iter()
        .all(|x| x.pace_s_per_km >= f - 1e-9 && x.pace_s_per_km <= s + 1e-9));
    assert!(sp
        .splits
        .iter()
        .all(|x| x.avg_hr.is_some() && x.moving_s > 0.0));

    // Dagny: a 5 km time trial in miles: three miles and what is left (5000 - 3 x 1609.344
    // = 171.968 m, give or take the GPS).
    let r = review("dagny-holloway/2026-11-28-time-trial");
    assert_eq!(r.kind, SessionKind::Race);
    let sp = r.splits.as_ref().expect("splits");
    assert_eq!(sp.unit, "mi");
    assert!((sp.distance_m - 5000.0).abs() < 25.0, "{}", sp.distance_m);
    assert_eq!(sp.splits.len(), 4);
    assert_eq!(sp.full(splitdesk::model::Units::Mi).count(), 3);
    let last = sp.splits.last().unwrap();
    assert!(
        (last.distance_m - 171.968).abs() < 25.0,
        "{}",
        last.distance_m
    );
    let sum: f64 = sp.splits.iter().map(|x| x.time_s).sum();
    assert!((sum - sp.time_s).abs() < 1e-6);
}

#[test]
fn analyze_json_carries_kind_and_splits() {
    let file = demo_dir().join("dagny-holloway/activities/2026-11-28-time-trial.fit");
    let out = assert_cmd::Command::cargo_bin("splitdesk")
        .unwrap()
        .args(["analyze", file.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["kind"], "race");
    let sp = &v["splits"];
    assert_eq!(sp["unit"], "mi");
    for key in [
        "from_s",
        "to_s",
        "distance_m",
        "time_s",
        "moving_s",
        "fastest_s_per_km",
        "slowest_s_per_km",
        "first_half_s",
        "second_half_s",
    ] {
        assert!(sp[key].is_number(), "{key}: {}", sp[key]);
    }
    let list = sp["splits"].as_array().unwrap();
    assert_eq!(list.len(), 4);
    for (i, x) in list.iter().enumerate() {
        assert_eq!(x["number"], i + 1);
        for key in [
            "distance_m",
            "time_s",
            "moving_s",
            "pace_s_per_km",
            "avg_hr",
            "elevation_change_m",
        ] {
            assert!(x[key].is_number(), "{key}: {}", x[key]);
        }
    }
    assert!((list[0]["distance_m"].as_f64().unwrap() - 1609.344).abs() < 1e-9);

    // The text output names the kind and lists the splits.
    let out = assert_cmd::Command::cargo_bin("splitdesk")
        .unwrap()
        .args(["analyze", file.to_str().unwrap()])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("Kind: race or time trial"), "{text}");
    assert!(
        text.contains("Splits (mi) from 15:00 to 45:17: 3.11 mi in 30:17, first half 15:11, second half 15:06"),
        "{text}"
    );
    // The last part: 0.11 mi in 1:00, its pace per mile.
    assert!(
        text.contains("   4    0.11     1:00    9:22   162   +0 m"),
        "{text}"
    );
    assert!(text.contains("Fastest 9:45/mi, slowest 9:47/mi"), "{text}");
}
