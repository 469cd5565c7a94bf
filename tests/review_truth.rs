//! The per-session review against the run simulator's ground truth (self-consistency: the
//! simulator is ours). Intervals are taken from the truth here so that the metrics are
//! checked on their own; detection is tested in tests/intervals_*.rs.

mod sim_support;

use sim_support::{intervals, named, profile, recovery};
use splitdesk::analysis::review::review;
use splitdesk::demo::simulate::{simulate, Conditions, SimInput, SimOutput};
use splitdesk::ingest::{clean, derive};
use splitdesk::model::{Amount, Interval, IntervalSet, IntervalSource, Plan, RecoveryMode};

/// Run the simulator, clean its output like ingest does, and build the true interval set.
fn run(plan: &Plan, conditions: Conditions, seed: u64) -> (SimOutput, IntervalSet) {
    let mut input = SimInput::new(profile(), plan.clone(), seed);
    input.conditions = conditions;
    let mut out = simulate(&input);
    derive::fill_derived(&mut out.session);
    out.session.flags = clean::flag(&out.session, Some(&profile()));
    let t = &out.session.t;
    let snap = |x: f64| {
        t.iter()
            .enumerate()
            .min_by(|a, b| (a.1 - x).abs().total_cmp(&(b.1 - x).abs()))
            .map(|(i, _)| i)
            .unwrap()
    };
    let expected = plan.expand();
    let set = IntervalSet {
        intervals: out
            .truth
            .intervals
            .iter()
            .enumerate()
            .map(|(k, ti)| {
                let (a, b) = (snap(ti.start_s), snap(ti.end_s));
                Interval {
                    kind: ti.kind,
                    source: IntervalSource::DeviceLap,
                    start: a,
                    end: b,
                    start_s: t[a],
                    end_s: t[b],
                    expected: (k < expected.len()).then_some(k),
                    mode: ti.mode,
                }
            })
            .collect(),
        ..IntervalSet::default()
    };
    (out, set)
}

#[test]
fn per_interval_averages_match_the_truth() {
    let plan = intervals(
        5,
        Amount::Duration(180.0),
        named("5k"),
        recovery(Amount::Duration(120.0), RecoveryMode::Jog),
    );
    for seed in 1..=4 {
        let (out, set) = run(&plan, Conditions::default(), seed);
        let r = review(&out.session, &set, Some(&plan), &profile());
        assert_eq!(r.intervals.len(), out.truth.intervals.len());
        for (m, ti) in r.intervals.iter().zip(&out.truth.intervals) {
            let pace_truth = 1000.0 / ti.avg_speed_mps;
            let pace = m.avg_pace_s_per_km.unwrap();
            assert!(
                (pace / pace_truth - 1.0).abs() <= 0.01,
                "seed {seed} interval {}: pace {pace:.1} vs truth {pace_truth:.1}",
                m.index
            );
            let hr = m.avg_hr.unwrap();
            assert!(
                (hr - ti.avg_hr).abs() <= 1.0,
                "seed {seed} interval {}: HR {hr:.1} vs truth {:.1}",
                m.index,
                ti.avg_hr
            );
        }
        assert_eq!(r.work().count(), 5);
        assert_eq!(r.recoveries.len(), 5);
    }
}

#[test]
fn recovery_trough_and_hr_lag_match_the_truth() {
    // Reps short enough that HR is still climbing when they end, so there is a lag to find.
    let plan = intervals(
        8,
        Amount::Duration(60.0),
        named("5k"),
        recovery(Amount::Duration(90.0), RecoveryMode::Jog),
    );
    let mut compared = 0;
    let mut lag_errors = Vec::new();
    for seed in 1..=4 {
        let (out, set) = run(&plan, Conditions::default(), seed);
        let r = review(&out.session, &set, Some(&plan), &profile());
        let truth_work: Vec<_> = out.truth.work().collect();
        for (rec, ti) in r.recoveries.iter().zip(&truth_work) {
            if let (Some(trough), Some(truth)) = (rec.recovery_trough_bpm, ti.trough_hr) {
                assert!(
                    (trough - truth).abs() <= 2.0,
                    "seed {seed} rep {}: trough {trough} vs {truth}",
                    rec.work_number
                );
            }
            let lag = rec.hr_lag_s.unwrap();
            let truth_lag = ti.peak_hr_after_s.unwrap();
            // A lag gaining under 2 bpm is lost in 1 bpm of sensor noise: compare the rest.
            let end_i = out.session.t.iter().position(|&x| x >= ti.end_s).unwrap();
            let gain = ti.peak_hr.unwrap() - out.truth.hr_bpm[end_i];
            if gain < 2.0 {
                continue;
            }

            compared += 1;
            lag_errors.push((lag - truth_lag).abs());
        }
        assert_eq!(
            r.recoveries
                .iter()
                .filter(|x| x.recovery_trough_bpm.is_some())
                .count(),
            7,
            "the last rep is followed by the cool-down, not a recovery"
        );
    }
    assert!(compared >= 20, "only {compared} reps had a measurable lag");
    // Sensor noise of about 1 bpm blurs a peak that gains 2-3 bpm: nearly every lag is
    // within 3 s of the truth, and the typical one well inside.
    lag_errors.sort_by(f64::total_cmp);
    let within = lag_errors.iter().filter(|e| **e <= 3.0).count();
    assert!(
        within * 100 >= lag_errors.len() * 95,
        "{within} of {} lags within 3 s: {lag_errors:?}",
        lag_errors.len()
    );
    assert!(lag_errors[lag_errors.len() / 2] <= 2.0, "{lag_errors:?}");
}

#[test]
fn progression_and_climbing_troughs_show_in_the_trends() {
    let plan = intervals(
        5,
        Amount::Duration(180.0),
        named("10k"),
        recovery(Amount::Duration(90.0), RecoveryMode::Jog),
    );
    let c = Conditions {
        pacing: splitdesk::demo::simulate::Pacing::Progression,
        fatigue: 1.0,
        ..Conditions::default()
    };
    let (out, set) = run(&plan, c, 7);
    let r = review(&out.session, &set, Some(&plan), &profile());
    let pace = r.trend("avg_pace_s_per_km").unwrap();
    assert_eq!(pace.direction, "falling", "{pace:?}");
    assert!(pace.text.contains("faster"), "{}", pace.text);
    let trough = r.trend("recovery_trough_bpm").unwrap();
    assert_eq!(trough.direction, "rising", "{trough:?}");
    assert!(r.findings.iter().any(|f| f.text.starts_with("Progression")));
    assert!(r
        .findings
        .iter()
        .any(|f| f.text.starts_with("Recoveries got less complete")));
}

#[test]
fn hot_long_run_decouples_and_the_cool_one_does_not() {
    let plan = sim_support::long_run(100.0);
    let hot = Conditions {
        temperature_c: 28.0,
        ..Conditions::default()
    };
    let (out, set) = run(&plan, hot, 3);
    let r = review(&out.session, &set, None, &profile());
    let d = r.decoupling_pct.unwrap();
    assert!(d > 5.0, "hot run decoupling {d}");
    assert!(r
        .findings
        .iter()
        .any(|f| f.text.starts_with("Decoupling") && f.text.contains("above")));
    let cool = Conditions {
        temperature_c: 12.0,
        ..Conditions::default()
    };
    let (out, set) = run(&plan, cool, 3);
    let r = review(&out.session, &set, None, &profile());
    let d = r.decoupling_pct.unwrap();
    assert!((0.0..5.0).contains(&d), "cool run decoupling {d}");
    assert!(r.trimp.unwrap() > 0.0);
}

#[test]
fn downhill_run_gives_negative_raw_decoupling_and_the_finding_names_it() {
    let plan = sim_support::long_run(70.0);
    let c = Conditions {
        terrain: splitdesk::demo::simulate::Terrain::Downhill {
            grade: 0.03,
            flat_m: 9000.0,
        },
        ..Conditions::default()
    };
    let (out, set) = run(&plan, c, 5);
    let r = review(&out.session, &set, None, &profile());
    assert!(
        r.decoupling_raw_pct.unwrap() < 0.0,
        "{:?}",
        r.decoupling_raw_pct
    );
    let finding = r
        .findings
        .iter()
        .find(|f| f.text.starts_with("Negative decoupling"))
        .expect("a negative-decoupling finding");
    assert!(finding.text.contains("downhill"), "{}", finding.text);
}

#[test]
fn missing_channels_give_nulls_and_findings() {
    let plan = intervals(
        3,
        Amount::Duration(120.0),
        named("5k"),
        recovery(Amount::Duration(60.0), RecoveryMode::Walk),
    );
    let (mut out, set) = run(&plan, Conditions::default(), 2);
    out.session.hr = None;
    out.session.altitude = None;
    let r = review(&out.session, &set, Some(&plan), &profile());
    assert!(r.trimp.is_none() && r.decoupling_pct.is_none());
    assert!(r.intervals.iter().all(|m| m.avg_hr.is_none()));
    assert!(r.intervals.iter().all(|m| m.avg_pace_s_per_km.is_some()));
    assert!(r
        .findings
        .iter()
        .any(|f| f.text.starts_with("No heart rate")));
    assert!(r.findings.iter().any(|f| f.text.starts_with("No altitude")));
}

#[test]
fn pace_targets_on_a_climb_are_left_to_the_coach() {
    // Self-consistency with our simulator: the same set on a 6 % hill and on the flat.
    let plan = intervals(
        6,
        Amount::Duration(60.0),
        named("5k"),
        recovery(Amount::Duration(120.0), RecoveryMode::Jog),
    );
    let hill = Conditions {
        terrain: splitdesk::demo::simulate::Terrain::Hill { grade: 0.06 },
        ..Conditions::default()
    };
    let (out, set) = run(&plan, hill, 3);
    let r = review(&out.session, &set, Some(&plan), &profile());
    assert_eq!(r.work().count(), 6);
    for m in r.work() {
        assert_eq!(m.target_basis.as_deref(), Some("not_judged_on_hill"));
        assert_eq!(m.target_hit, None, "rep {:?}", m.work_number);
        assert_eq!(m.in_target_pct, None);
        // Altitude is smoothed, so the ends of a one-minute climb read a little flatter.
        let g = m.grade_pct.unwrap();
        assert!((3.5..=7.0).contains(&g), "grade {g}");
        // Minetti: a climb costs more, so the hill-adjusted pace is faster than the pace.
        assert!(m.hill_adjusted_pace_s_per_km.unwrap() < m.avg_pace_s_per_km.unwrap());
    }
    assert!(r.findings.iter().all(|f| f.code != "targets"));
    let f = r
        .findings
        .iter()
        .find(|f| f.code == "targets_on_hill")
        .expect("a finding about the climb");
    assert!(f.text.starts_with("Reps 1-6 ran on a climb"), "{}", f.text);
    assert!(f.text.contains("hill-adjusted"), "{}", f.text);

    let (out, set) = run(&plan, Conditions::default(), 3);
    let r = review(&out.session, &set, Some(&plan), &profile());
    for m in r.work() {
        assert_eq!(m.target_basis.as_deref(), Some("pace"));
        assert!(m.target_hit.is_some());
        assert!(
            m.grade_pct.is_none_or(|g| g.abs() < 0.5),
            "{:?}",
            m.grade_pct
        );
    }
    assert!(r.findings.iter().any(|f| f.code == "targets"));
    assert!(r.findings.iter().all(|f| f.code != "targets_on_hill"));
}
