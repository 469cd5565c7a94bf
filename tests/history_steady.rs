//! The easy-run efficiency trend keeps to runs that are steady throughout: simulated sessions
//! (the simulator is ours: self-consistency) analysed as the workstation does, cut to
//! summaries and put through the history.

mod sim_support;

use chrono::{Duration, NaiveDate, TimeZone, Utc};
use sim_support::{intervals, long_run, named, profile, recovery};
use splitdesk::analysis::history::{
    build, effort_spread_pct, steady_throughout, HistoryParams, SessionSummary,
};
use splitdesk::analysis::review::Review;
use splitdesk::demo::simulate::{simulate, Conditions, SimInput, Terrain};
use splitdesk::ingest::{clean, derive};
use splitdesk::model::{Amount, Plan, RecoveryMode};

fn day(n: i64) -> NaiveDate {
    NaiveDate::from_ymd_opt(2026, 3, 2).unwrap() + Duration::days(n - 1)
}

/// Simulate `plan`, analyse with or without the plan, and cut a summary dated day `n`.
fn summary(
    plan: &Plan,
    with_plan: bool,
    terrain: Terrain,
    n: i64,
    seed: u64,
) -> (Review, SessionSummary) {
    let mut input = SimInput::new(profile(), plan.clone(), seed);
    input.start = Utc.from_utc_datetime(&day(n).and_hms_opt(7, 0, 0).unwrap());
    input.conditions = Conditions {
        terrain,
        ..Conditions::default()
    };
    let mut out = simulate(&input);
    out.session.laps.clear();
    derive::fill_derived(&mut out.session);
    out.session.flags = clean::flag(&out.session, Some(&profile()));
    let review = splitdesk::analysis::analyze(&out.session, with_plan.then_some(plan), &profile());
    let s = SessionSummary::from_review(&format!("sim/{}-run", day(n)), &review).unwrap();
    (review, s)
}

/// Six short reps with long walked recoveries inside a long warm-up and cool-down: the
/// time-weighted relative intensity is well inside the easy band.
fn short_reps() -> Plan {
    intervals(
        6,
        Amount::Duration(60.0),
        named("5k"),
        recovery(Amount::Duration(120.0), RecoveryMode::Walk),
    )
}

#[test]
fn an_interval_session_with_an_easy_average_is_not_an_easy_run() {
    for with_plan in [true, false] {
        let (review, s) = summary(&short_reps(), with_plan, Terrain::Flat, 1, 7);
        // The average alone would let it in: that was the bug.
        let ri = s.relative_intensity.unwrap();
        assert!(ri < 0.85, "plan {with_plan}: relative intensity {ri}");
        assert!(
            review.work().count() >= 5,
            "plan {with_plan}: {:?}",
            review.interval_notes
        );
        assert!(s.work_intervals >= 5);
        assert!(!s.steady, "plan {with_plan}");
        assert!(!steady_throughout(&review));
        // The reps at 5 km pace against the walks: a wide spread of effort.
        assert!(
            s.effort_spread_pct.unwrap() > 20.0,
            "{:?}",
            s.effort_spread_pct
        );
    }
}

#[test]
fn easy_runs_flat_and_rolling_are_steady() {
    for (k, terrain) in [
        Terrain::Flat,
        Terrain::Rolling {
            amplitude_m: 10.0,
            wavelength_m: 1200.0,
        },
    ]
    .into_iter()
    .enumerate()
    {
        for with_plan in [true, false] {
            let (review, s) = summary(
                &long_run(40.0),
                with_plan,
                terrain.clone(),
                1,
                11 + k as u64,
            );
            assert_eq!(s.work_intervals, 0, "{:?}", review.interval_notes);
            assert!(
                s.effort_spread_pct.unwrap() <= 6.0,
                "{:?}",
                s.effort_spread_pct
            );
            assert!(
                s.steady,
                "terrain {k}, plan {with_plan}: {:?}",
                review.intervals
            );
        }
    }
}

#[test]
fn the_efficiency_trend_counts_easy_runs_only() {
    // Four weeks: two easy runs a week and one short-rep session with an easy average.
    let mut sums = Vec::new();
    let mut reps = Vec::new();
    for w in 0..4i64 {
        for d in [1, 4] {
            sums.push(
                summary(
                    &long_run(40.0),
                    false,
                    Terrain::Flat,
                    w * 7 + d,
                    (w * 10 + d) as u64,
                )
                .1,
            );
        }
        let (_, s) = summary(
            &short_reps(),
            false,
            Terrain::Flat,
            w * 7 + 3,
            100 + w as u64,
        );
        reps.push(s.session_id.clone());
        sums.push(s);
    }
    let mut p = profile();
    p.threshold_speed_mps = Some(4.0);
    let h = build(&sums, &p, &HistoryParams::default(), day(28));
    let e = &h.efficiency_trend;
    assert_eq!(e.runs.len(), 8, "{:?}", e.runs);
    assert!(e.runs.iter().all(|r| !reps.contains(&r.session)));
    assert_eq!(e.weekly.len(), 4);
    assert!(e.weekly.iter().all(|w| w.runs == 2));
    assert!(
        h.notes
            .iter()
            .any(|n| n.starts_with("4 run(s) with an easy average left out")),
        "{:?}",
        h.notes
    );
}

#[test]
fn effort_spread_leaves_out_a_short_standing_start() {
    // One easy run as the finder sometimes cuts it: a 4-s "warm-up" standing, then the run.
    let (mut review, _) = summary(&long_run(30.0), true, Terrain::Flat, 1, 3);
    assert_eq!(review.intervals.len(), 1, "{:?}", review.intervals);
    let mut stand = review.intervals[0].clone();
    stand.kind = "warmup".into();
    stand.duration_s = 4.0;
    stand.moving_s = 0.0;
    stand.hill_adjusted_pace_s_per_km = Some(1500.0);
    stand.avg_pace_s_per_km = Some(1500.0);
    review.intervals.insert(0, stand);
    review.intervals[1].kind = "work".into();
    let spread = effort_spread_pct(&review.intervals).unwrap();
    assert!(spread < 1.0, "{spread}");
    // One work interval that is the whole run is still one effort.
    assert!(steady_throughout(&review));
    // Two work intervals are a set.
    let extra = review.intervals[1].clone();
    review.intervals.push(extra);
    assert!(!steady_throughout(&review));
}
