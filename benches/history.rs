//! History benchmarks: the best-effort search over a 3-hour 1 Hz session (10,800 samples,
//! ten durations up to 2 hours, a flagged stretch and a pause), and building a year of
//! history from 300 session summaries.

mod support;

use std::hint::black_box;

use chrono::{Duration, NaiveDate, TimeZone, Utc};
use criterion::{criterion_group, criterion_main, Criterion};
use splitdesk::analysis::best_efforts::{best_efforts, BestEffort, DURATIONS_S};
use splitdesk::analysis::history::{build, HistoryParams, SessionSummary};
use splitdesk::model::{AthleteProfile, ChannelKind, Flag, FlagKind, Pause, Session};

fn three_hour_run() -> Session {
    let mut s = support::three_hour_run();
    s.flags.push(Flag {
        from_s: 4000.0,
        to_s: 4030.0,
        channel: ChannelKind::Speed,
        kind: FlagKind::SpeedLimit,
        reason: "bench".into(),
    });
    s.pauses.push(Pause {
        from_s: 6000.0,
        to_s: 6060.0,
    });
    s
}

fn year_of_summaries() -> Vec<SessionSummary> {
    let day1 = NaiveDate::from_ymd_opt(2025, 1, 1).expect("valid date");
    (0..300)
        .map(|k| {
            let d = day1 + Duration::days(k * 365 / 300);
            SessionSummary {
                session_id: format!("bench/{k}"),
                start: Utc.from_utc_datetime(&d.and_hms_opt(7, 0, 0).expect("valid time")),
                sport: "running".into(),
                distance_m: Some(10_000.0 + (k % 7) as f64 * 1000.0),
                moving_s: 3000.0 + (k % 7) as f64 * 600.0,
                trimp: Some(40.0 + (k % 5) as f64 * 15.0),
                hr_zones: Vec::new(),
                relative_intensity: Some(0.7 + (k % 4) as f64 * 0.1),
                mean_speed_mps: Some(3.2),
                mean_hr: Some(140.0),
                decoupling_pct: Some(4.0),
                best_efforts: DURATIONS_S
                    .iter()
                    .map(|&dur| BestEffort {
                        duration_s: dur,
                        distance_m: dur * (4.5 - dur.ln() * 0.1 + (k % 3) as f64 * 0.01),
                        speed_mps: 4.5 - dur.ln() * 0.1,
                        start_s: 0.0,
                    })
                    .collect(),
                work_intervals: 0,
                effort_spread_pct: Some(1.0),
                steady: k % 4 != 3,
            }
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let s = three_hour_run();
    c.bench_function("best_efforts_3h_1hz", |b| {
        b.iter(|| best_efforts(black_box(&s)))
    });
    let sums = year_of_summaries();
    let profile = AthleteProfile::bare("bench");
    let today = NaiveDate::from_ymd_opt(2025, 12, 31).expect("valid date");
    c.bench_function("history_build_year_300_sessions", |b| {
        b.iter(|| build(black_box(&sums), &profile, &HistoryParams::default(), today))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
