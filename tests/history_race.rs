//! Best efforts across sessions, critical speed and predictions through the history path:
//! sessions -> best_efforts -> SessionSummary -> history::build.

mod history_support;

use history_support::{close, day, profile, session_1hz, with_efforts};
use splitdesk::analysis::best_efforts::best_efforts_for;
use splitdesk::analysis::history::{build, HistoryParams, SessionSummary};

/// A session with one planted effort of `secs` at `metres`, jogging at 2.5 m/s around it.
fn effort_session(n: i64, secs: f64, metres: f64, durations: &[f64]) -> SessionSummary {
    let v = metres / secs;
    let s = session_1hz(3600, |t| {
        if t > 600.0 && t <= 600.0 + secs {
            v
        } else {
            2.5
        }
    });
    let mut sum = with_efforts(n, &[]);
    sum.best_efforts = best_efforts_for(&s, durations);
    sum
}

#[test]
fn critical_speed_from_best_efforts_of_three_sessions() {
    // Source: Monod & Scherrer, Ergonomics 1965;8(3):329–338; Hill, Sports Med
    // 1993;16(4):237–254; distance-on-time least squares (values computed, methods.md §6):
    // 1200 m in 3:40, 2400 m in 8:10, 4800 m in 17:20 -> CS 4.386 m/s, D' 241.3 m.
    let durs = [220.0, 490.0, 1040.0];
    let sessions = vec![
        effort_session(1, 220.0, 1200.0, &durs),
        effort_session(8, 490.0, 2400.0, &durs),
        effort_session(15, 1040.0, 4800.0, &durs),
    ];
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(20));
    // Each best effort comes from the session that planted it.
    let ids: Vec<&str> = h.best_efforts.iter().map(|b| b.session.as_str()).collect();
    assert_eq!(
        ids,
        vec![
            sessions[0].session_id.as_str(),
            sessions[1].session_id.as_str(),
            sessions[2].session_id.as_str()
        ]
    );
    close(h.best_efforts[0].distance_m, 1200.0, 1e-6);
    close(h.best_efforts[2].distance_m, 4800.0, 1e-6);
    close(h.critical_speed_mps.unwrap(), 4.386, 0.0005);
    close(h.d_prime_m.unwrap(), 241.3, 0.05);
    close(h.critical_speed_fit.r2.unwrap(), 0.99998, 0.00001);
    assert_eq!(h.critical_speed_fit.efforts_s, durs.to_vec());
    assert_eq!(h.critical_speed_fit.refusal, None);
    // A D' in the usual range carries no caution.
    assert_eq!(h.critical_speed_fit.caution, None);
    // The model predicts the 5 km ((5000 - 241.3)/4.386 s) but not beyond 30 minutes.
    let p5 = &h.predictions[0];
    assert_eq!(p5.race, "5 km");
    close(p5.critical_speed_s.unwrap(), (5000.0 - 241.3) / 4.386, 0.5);
    assert_eq!(h.predictions[3].critical_speed_s, None);
    assert!(h.prediction_caveat.contains("rough guides"));
}

#[test]
fn a_fit_from_one_steady_run_is_flagged_as_rough() {
    // Efforts that all came from one run held at 4.0 m/s: the line fits perfectly, but its
    // D' (10 m) is far below what all-out efforts give.
    // From memory: D' of trained runners is usually about 100-300 m (Jones & Vanhatalo
    // 2017, Sports Med 47 Suppl 1:65-78).
    let sessions = vec![with_efforts(
        1,
        &[
            (180.0, 730.0),
            (300.0, 1210.0),
            (600.0, 2410.0),
            (1200.0, 4810.0),
        ],
    )];
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(1));
    close(h.critical_speed_mps.unwrap(), 4.0, 1e-9);
    close(h.d_prime_m.unwrap(), 10.0, 1e-6);
    let c = h.critical_speed_fit.caution.clone().expect("a caution");
    assert!(c.starts_with("D′ 10 m is far below"), "{c}");
    assert!(h
        .notes
        .iter()
        .any(|n| n.starts_with("critical speed: D′ 10 m")));
    // The thresholds themselves.
    assert!(splitdesk::analysis::history::d_prime_caution(49.0).is_some());
    assert!(splitdesk::analysis::history::d_prime_caution(150.0).is_none());
    assert!(splitdesk::analysis::history::d_prime_caution(700.0)
        .is_some_and(|c| c.contains("far above")));
}

#[test]
fn critical_speed_refuses_with_too_few_efforts() {
    let sessions = vec![
        with_efforts(1, &[(180.0, 900.0)]),
        with_efforts(2, &[(1200.0, 4800.0)]),
        // Outside the 3-20 minute range: not used.
        with_efforts(3, &[(60.0, 380.0), (1800.0, 7000.0)]),
    ];
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(5));
    assert_eq!(h.critical_speed_mps, None);
    assert_eq!(h.d_prime_m, None);
    let why = h.critical_speed_fit.refusal.clone().unwrap();
    assert!(why.contains("at least 3"), "{why}");
    assert!(h.notes.iter().any(|n| n.starts_with("no critical speed")));
    assert!(h.predictions.iter().all(|p| p.critical_speed_s.is_none()));
}

#[test]
fn critical_speed_refuses_a_poor_fit() {
    // Efforts that do not lie on one distance-time line (a slow 20 minutes).
    let sessions = vec![with_efforts(
        1,
        &[
            (180.0, 1000.0),
            (300.0, 1500.0),
            (600.0, 2800.0),
            (1200.0, 3200.0),
        ],
    )];
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(1));
    assert_eq!(h.critical_speed_mps, None);
    let why = h.critical_speed_fit.refusal.clone().unwrap();
    assert!(why.contains("do not fit one distance-time line"), "{why}");
}

#[test]
fn equivalent_vo2max_of_each_best_effort() {
    // Source: Daniels & Gilbert, Oxygen Power, 1979 (values computed from the equations,
    // methods.md §4): 5 km 20:00 -> 49.81; 10 km 40:00 -> 51.94; marathon 3:00:00 -> 53.53.
    let sessions = vec![
        with_efforts(1, &[(1200.0, 5000.0)]),
        with_efforts(2, &[(2400.0, 10000.0)]),
        with_efforts(3, &[(10800.0, 42195.0)]),
    ];
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(3));
    let vo2: Vec<f64> = h
        .best_efforts
        .iter()
        .map(|b| b.equivalent_vo2max.unwrap())
        .collect();
    close(vo2[0], 49.81, 0.01);
    close(vo2[1], 51.94, 0.01);
    close(vo2[2], 53.53, 0.01);
    // The race-like effort is the one with the highest equivalent VO2max: the marathon,
    // which Riegel then predicts at its own time.
    let r = h.race_like_effort.clone().unwrap();
    assert_eq!(r.duration_s, 10800.0);
    close(h.predictions[3].riegel_s.unwrap(), 10800.0, 1e-6);
}

#[test]
fn riegel_predictions_off_the_race_like_effort() {
    // Source: Riegel PS, American Scientist 1981;69(3):285–290 (values computed from the
    // formula, methods.md §5): 5 km 20:00 -> 10 km 41:41.9.
    let h = build(
        &[with_efforts(1, &[(1200.0, 5000.0)])],
        &profile(),
        &HistoryParams::default(),
        day(1),
    );
    close(h.predictions[1].riegel_s.unwrap(), 2501.9, 0.05);
    // 10 km 40:00 -> half 1:28:15.4, marathon 3:04:00.5.
    let h = build(
        &[with_efforts(1, &[(2400.0, 10000.0)])],
        &profile(),
        &HistoryParams::default(),
        day(1),
    );
    close(h.predictions[2].riegel_s.unwrap(), 5295.4, 0.05);
    close(h.predictions[3].riegel_s.unwrap(), 11040.0, 1.0);
    assert!(!h.predictions[3].riegel_beyond_range);
}

#[test]
fn race_like_effort_ignores_efforts_under_five_minutes() {
    // A 3-minute best with a higher equivalent VO2max than the 10-minute best is not used.
    let h = build(
        &[with_efforts(1, &[(180.0, 1100.0), (600.0, 2800.0)])],
        &profile(),
        &HistoryParams::default(),
        day(1),
    );
    assert!(
        h.best_efforts[0].equivalent_vo2max.unwrap() > h.best_efforts[1].equivalent_vo2max.unwrap()
    );
    assert_eq!(h.race_like_effort.unwrap().duration_s, 600.0);
}

#[test]
fn best_efforts_window_and_fastest_wins() {
    let sessions = vec![
        with_efforts(1, &[(600.0, 3000.0)]), // 5.0 m/s but 100 days before today
        with_efforts(60, &[(600.0, 2700.0)]), // 4.5 m/s
        with_efforts(70, &[(600.0, 2640.0)]), // 4.4 m/s
    ];
    let h = build(&sessions, &profile(), &HistoryParams::default(), day(101));
    assert_eq!(h.best_efforts.len(), 1);
    assert_eq!(h.best_efforts[0].session, sessions[1].session_id);
    assert_eq!(h.best_efforts[0].date, day(60));
    close(h.best_efforts[0].speed_mps, 4.5, 1e-12);
    // A longer window reaches the old one.
    let params = HistoryParams {
        best_effort_days: 120,
        ..HistoryParams::default()
    };
    let h = build(&sessions, &profile(), &params, day(101));
    assert_eq!(h.best_efforts[0].session, sessions[0].session_id);
}

#[test]
fn equivalent_vo2max_of_short_efforts_is_marked_beyond_the_model() {
    use splitdesk::analysis::race::{
        daniels_gilbert_fraction, vo2max_beyond_model, DANIELS_GILBERT_MIN_S,
    };
    // Source: Daniels & Gilbert 1979, F(t) = 0.8 + 0.1894393e^(−0.012778t) +
    // 0.2989558e^(−0.1932605t); methods.md §4 (computed): F(t) > 1 for t < 11.03 min, and
    // F = 1.069 for a 6:00 mile.
    close(daniels_gilbert_fraction(6.0), 1.069, 0.0005);
    close(DANIELS_GILBERT_MIN_S / 60.0, 11.03, 0.005);
    close(
        daniels_gilbert_fraction(DANIELS_GILBERT_MIN_S / 60.0),
        1.0,
        1e-5,
    );
    assert!(vo2max_beyond_model(360.0));
    assert!(vo2max_beyond_model(600.0));
    assert!(!vo2max_beyond_model(700.0));
    assert!(!vo2max_beyond_model(f64::NAN));
    // Through the history: the 5- and 10-minute bests are marked, the 20-minute one is not.
    let durs = [300.0, 600.0, 1200.0];
    let s = effort_session(1, 1200.0, 4800.0, &durs);
    let h = build(&[s], &profile(), &HistoryParams::default(), day(2));
    let marks: Vec<(f64, bool)> = h
        .best_efforts
        .iter()
        .map(|b| (b.duration_s, b.vo2max_beyond_model))
        .collect();
    assert_eq!(marks, vec![(300.0, true), (600.0, true), (1200.0, false)]);
    assert!(h.best_efforts.iter().all(|b| b.equivalent_vo2max.is_some()));
}
