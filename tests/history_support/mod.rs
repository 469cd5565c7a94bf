//! Shared helpers for the history tests: planted session summaries and sessions.
#![allow(dead_code)]

use chrono::{Duration, NaiveDate, TimeZone, Utc};
use splitdesk::analysis::best_efforts::BestEffort;
use splitdesk::analysis::history::SessionSummary;
use splitdesk::model::{AthleteProfile, Channel, FileFormat, Session};

/// Day 1 of every planted series.
pub fn day1() -> NaiveDate {
    NaiveDate::from_ymd_opt(2026, 3, 2).unwrap()
}

/// The date of planted day `n` (1-based).
pub fn day(n: i64) -> NaiveDate {
    day1() + Duration::days(n - 1)
}

/// A running session on day `n` at 07:00 UTC with nothing but a load.
pub fn with_load(n: i64, trimp: f64) -> SessionSummary {
    let d = day(n);
    SessionSummary {
        session_id: format!("planted/{d}"),
        start: Utc.from_utc_datetime(&d.and_hms_opt(7, 0, 0).unwrap()),
        sport: "running".into(),
        distance_m: Some(10_000.0),
        moving_s: 3000.0,
        trimp: Some(trimp),
        hr_zones: Vec::new(),
        relative_intensity: None,
        mean_speed_mps: None,
        mean_hr: None,
        decoupling_pct: None,
        best_efforts: Vec::new(),
        work_intervals: 0,
        effort_spread_pct: Some(0.0),
        steady: true,
    }
}

/// A running session on day `n` whose only content is its best efforts.
pub fn with_efforts(n: i64, efforts: &[(f64, f64)]) -> SessionSummary {
    let mut s = with_load(n, 0.0);
    s.best_efforts = efforts
        .iter()
        .map(|&(duration_s, distance_m)| BestEffort {
            duration_s,
            distance_m,
            speed_mps: distance_m / duration_s,
            start_s: 0.0,
        })
        .collect();
    s
}

/// A profile with a threshold pace of 4:00/km.
pub fn profile() -> AthleteProfile {
    let mut p = AthleteProfile::bare("planted");
    p.threshold_speed_mps = Some(1000.0 / 240.0);
    p.hr_rest = Some(50.0);
    p.hr_max = Some(190.0);
    p
}

/// A 1 Hz session whose speed follows `speed(t)` for `seconds`, with a distance channel.
pub fn session_1hz(seconds: usize, speed: impl Fn(f64) -> f64) -> Session {
    let start = Utc.with_ymd_and_hms(2026, 3, 2, 7, 0, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.t = (0..=seconds).map(|i| i as f64).collect();
    s.time =
        s.t.iter()
            .map(|&x| start + Duration::seconds(x as i64))
            .collect();
    let v: Vec<f64> = s.t.iter().map(|&x| speed(x)).collect();
    let mut d = Vec::with_capacity(v.len());
    let mut acc = 0.0;
    for (i, sp) in v.iter().enumerate() {
        if i > 0 {
            acc += sp;
        }
        d.push(acc);
    }
    s.speed = Some(Channel::from_values(v));
    s.distance = Some(Channel::from_values(d));
    s
}

/// Assert `actual` is within `tol` of `expected`.
pub fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}
