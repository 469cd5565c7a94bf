//! Weekly volume, efficiency on easy runs and decoupling of long runs through the history
//! path (analysis::history::build), on planted summaries.

mod history_support;

use history_support::{close, day, profile, with_load};
use splitdesk::analysis::history::{build, HistoryParams, SessionSummary, ZoneTime};

/// An easy run on day `n` with efficiency `eff` m/beat (HR 140, speed eff*140/60).
fn easy(n: i64, eff: f64) -> SessionSummary {
    let mut s = with_load(n, 50.0);
    s.mean_hr = Some(140.0);
    s.mean_speed_mps = Some(eff * 140.0 / 60.0);
    s.relative_intensity = Some(0.75);
    s
}

#[test]
fn improving_efficiency_shows_a_rising_trend() {
    // Planted: six weeks of three easy runs a week, efficiency up 1.5 % a week, plus one
    // hard session a week that must not count.
    let mut sessions = Vec::new();
    for w in 0..6i64 {
        let eff = 1.20 * (1.0 + 0.015 * w as f64);
        for d in [1, 3, 5] {
            sessions.push(easy(w * 7 + d, eff));
        }
        let mut hard = easy(w * 7 + 4, 0.9);
        hard.relative_intensity = Some(1.02);
        sessions.push(hard);
    }
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(42));
    let e = &h.efficiency_trend;
    assert_eq!(e.runs.len(), 18);
    assert_eq!(e.weekly.len(), 6);
    assert_eq!(e.direction.as_deref(), Some("rising"));
    close(e.over_weeks.unwrap(), 5.0, 1e-9);
    close(e.change_pct.unwrap(), 7.5, 0.01);
    assert_eq!(e.text, "up 8 % over 5 weeks");
    close(e.slope_per_week.unwrap(), 1.2 * 0.015, 1e-9);
}

#[test]
fn steady_efficiency_is_flat_and_falling_is_falling() {
    let flat: Vec<SessionSummary> = (0..4).map(|w| easy(w * 7 + 2, 1.2)).collect();
    let h = build(&flat, &profile(), &HistoryParams::default(), day(28));
    assert_eq!(h.efficiency_trend.direction.as_deref(), Some("flat"));
    assert!(h.efficiency_trend.text.starts_with("flat over 3 weeks"));
    let falling: Vec<SessionSummary> = (0..4)
        .map(|w| easy(w * 7 + 2, 1.2 * (1.0 - 0.03 * w as f64)))
        .collect();
    let h = build(&falling, &profile(), &HistoryParams::default(), day(28));
    assert_eq!(h.efficiency_trend.direction.as_deref(), Some("falling"));
    assert!(h.efficiency_trend.text.starts_with("down 9 %"));
}

#[test]
fn easy_runs_fall_back_to_speed_over_threshold() {
    // No interval relative intensity: the session speed over the profile threshold
    // (4:00/km = 4.1667 m/s) decides. 3.0 m/s is 0.72: easy; 3.8 m/s is 0.91: not easy.
    let mut a = easy(1, 3.0 * 60.0 / 140.0);
    a.relative_intensity = None;
    let mut b = easy(2, 3.8 * 60.0 / 140.0);
    b.relative_intensity = None;
    let h = build(&[a, b], &profile(), &HistoryParams::default(), day(2));
    assert_eq!(h.efficiency_trend.runs.len(), 1);
    close(h.efficiency_trend.runs[0].relative_intensity, 0.72, 0.001);
    close(
        h.efficiency_trend.runs[0].efficiency_m_per_beat,
        3.0 * 60.0 / 140.0,
        1e-12,
    );
}

#[test]
fn weekly_volume_and_zone_shares() {
    let mut a = with_load(1, 40.0); // a Monday
    a.distance_m = Some(8000.0);
    a.moving_s = 2400.0;
    a.hr_zones = vec![
        ZoneTime {
            name: "easy".into(),
            seconds: 1800.0,
        },
        ZoneTime {
            name: "steady".into(),
            seconds: 600.0,
        },
    ];
    let mut b = with_load(3, 60.0);
    b.distance_m = Some(16000.0);
    b.moving_s = 4800.0;
    b.hr_zones = vec![ZoneTime {
        name: "easy".into(),
        seconds: 4800.0,
    }];
    let mut ride = with_load(4, 30.0);
    ride.sport = "cycling".into();
    ride.distance_m = Some(40000.0);
    let h = build(
        &[a, b.clone(), ride],
        &profile(),
        &HistoryParams::default(),
        day(9),
    );
    assert_eq!(h.weekly.len(), 12);
    let w = &h.weekly[10];
    assert_eq!(w.week_start, day(1));
    assert_eq!(w.week, "2026-W10");
    assert_eq!(w.sessions, 2);
    close(w.distance_m, 24000.0, 1e-9);
    close(w.moving_s, 7200.0, 1e-9);
    assert_eq!(w.longest_run_m, Some(16000.0));
    assert_eq!(
        w.longest_run_session.as_deref(),
        Some(b.session_id.as_str())
    );
    assert_eq!(w.hr_zones[0].name, "easy");
    close(w.hr_zones[0].share, 6600.0 / 7200.0, 1e-12);
    close(w.hr_zones[1].share, 600.0 / 7200.0, 1e-12);
    // The ride counts for load, not for volume.
    close(
        h.daily_load
            .iter()
            .find(|d| d.date == day(4))
            .unwrap()
            .value,
        30.0,
        1e-12,
    );
    assert_eq!(h.weekly[11].sessions, 0);
    assert_eq!(h.sessions, 3);
}

#[test]
fn long_run_decoupling_with_the_five_percent_line() {
    let mut long1 = with_load(1, 90.0);
    long1.moving_s = 90.0 * 60.0;
    long1.decoupling_pct = Some(3.2);
    let mut long2 = with_load(8, 90.0);
    long2.moving_s = 75.0 * 60.0;
    long2.decoupling_pct = Some(6.1);
    let mut short = with_load(9, 50.0);
    short.moving_s = 60.0 * 60.0;
    short.decoupling_pct = Some(9.0);
    let h = build(
        &[long1, long2, short],
        &profile(),
        &HistoryParams::default(),
        day(10),
    );
    let l = &h.long_run_decoupling;
    assert_eq!(l.line_pct, 5.0);
    assert_eq!(l.runs.len(), 2);
    assert_eq!(l.runs[0].date, day(1));
    assert!(!l.runs[0].above_line);
    assert!(l.runs[1].above_line);
    close(l.runs[1].decoupling_pct, 6.1, 1e-12);
}

#[test]
fn empty_history_is_well_formed() {
    let h = build(&[], &profile(), &HistoryParams::default(), day(1));
    assert_eq!(h.weekly.len(), 12);
    assert!(h.best_efforts.is_empty());
    assert_eq!(h.acute_chronic_latest, None);
    assert!(h.cautions.is_empty());
    assert!(h.critical_speed_fit.refusal.is_some());
    assert_eq!(h.predictions.len(), 4);
    let json = serde_json::to_value(&h).unwrap();
    for key in [
        "weekly",
        "daily_load",
        "acute_chronic_ratio",
        "fitness",
        "fatigue",
        "readiness",
        "efficiency_trend",
        "long_run_decoupling",
        "best_efforts",
        "critical_speed_mps",
        "d_prime_m",
        "predictions",
        "cautions",
        "notes",
    ] {
        assert!(json.get(key).is_some(), "missing {key}");
    }
}

#[test]
fn empty_weeks_and_tiny_negatives_print_no_negative_zero() {
    use splitdesk::analysis::history::{fixed, fixed_distance};
    use splitdesk::model::Units;
    // One run in week 1, nothing in week 2: week 2's sums are a positive zero.
    let h = build(
        &[with_load(1, 40.0)],
        &profile(),
        &HistoryParams::default(),
        day(8),
    );
    let empty = h.weekly.last().unwrap();
    assert_eq!(empty.sessions, 0);
    assert!(empty.distance_m == 0.0 && empty.distance_m.is_sign_positive());
    assert!(empty.moving_s == 0.0 && empty.moving_s.is_sign_positive());
    assert_eq!(fixed_distance(empty.distance_m, Units::Mi), "0.00 mi");
    assert_eq!(fixed_distance(-0.0, Units::Mi), "0.00 mi");
    assert_eq!(fixed(-0.04, 1), "0.0");
    assert_eq!(fixed(-0.0, 0), "0");
    assert_eq!(fixed(-0.06, 1), "-0.1");
    assert_eq!(fixed(12.345, 2), "12.35");
}

#[test]
fn zones_from_the_age_estimate_are_labelled_in_the_history() {
    // day(1) is in 2026: born 1986, age 40, Tanaka 180 (methods.md §3).
    let mut p = profile();
    p.birth_year = Some(1986);
    let h = build(&[with_load(1, 40.0)], &p, &HistoryParams::default(), day(7));
    assert_eq!(
        h.hr_max_estimate, None,
        "a measured hr_max is not an estimate"
    );
    p.hr_max = None;
    let h = build(&[with_load(1, 40.0)], &p, &HistoryParams::default(), day(7));
    let e = h.hr_max_estimate.unwrap();
    assert!(
        e.starts_with("HR max 180 bpm estimated from age 40 (Tanaka et al. 2001, about ±10 bpm"),
        "{e}"
    );
}

#[test]
fn readiness_that_rounds_to_zero_prints_no_sign() {
    use splitdesk::analysis::history::fixed;
    // Readiness k1·g − k2·h just under zero (g = 100.0, h = 50.2) must not read "-0".
    let readiness: f64 = 100.0 - 2.0 * 50.2;
    assert!(readiness < 0.0);
    assert_eq!(fixed(readiness, 0), "0");
    assert_eq!(
        format!("{readiness:.0}"),
        "-0",
        "what the plain format gives"
    );
}
