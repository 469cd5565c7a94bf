//! Structural invariants of simulated sessions: distance vs speed, sampling, plan structure,
//! determinism, treadmill and pauses, speed of the simulator.

mod sim_support;

use std::time::Instant;

use sim_support::*;
use splitdesk::demo::simulate::{simulate, Faults, Sampling, SimInput, Stop, Terrain};
use splitdesk::model::{Amount, Plan, RecoveryMode, SegmentKind, Step, Target};

fn workouts() -> Vec<Plan> {
    vec![
        intervals(
            6,
            Amount::Duration(180.0),
            named("5k"),
            recovery(Amount::Duration(120.0), RecoveryMode::Jog),
        ),
        intervals(
            10,
            Amount::Distance(400.0),
            named("5k"),
            recovery(Amount::Duration(60.0), RecoveryMode::Stand),
        ),
        intervals(
            5,
            Amount::Distance(1000.0),
            named("10k"),
            recovery(Amount::Distance(200.0), RecoveryMode::Walk),
        ),
        long_run(75.0),
    ]
}

/// Recorded distance equals the trapezoid integral of recorded speed within 0.1 %.
#[test]
fn distance_is_the_integral_of_speed() {
    for (p, plan) in workouts().into_iter().enumerate() {
        for sampling in [
            Sampling::EverySecond,
            Sampling::Smart { min_s: 1, max_s: 7 },
        ] {
            for seed in 0..3 {
                let mut inp = input(plan.clone(), seed);
                inp.conditions.sampling = sampling;
                if p == 0 {
                    inp.conditions.terrain = Terrain::Rolling {
                        amplitude_m: 15.0,
                        wavelength_m: 900.0,
                    };
                }
                let s = simulate(&inp).session;
                let total = s.distance_m().unwrap();
                let integral = speed_integral(&s);
                let rel = (integral - total).abs() / total;
                assert!(
                    rel < 0.001,
                    "plan {p} {sampling:?} seed {seed}: distance {total:.1} vs integral {integral:.1}"
                );
            }
        }
    }
}

#[test]
fn sessions_satisfy_model_invariants() {
    for plan in workouts() {
        let out = simulate(&input(plan.clone(), 9));
        let s = &out.session;
        s.check_invariants().unwrap();
        assert_eq!(s.t[0], 0.0);
        assert!(s.lat.is_some() && s.lon.is_some() && s.altitude.is_some());
        assert_eq!(out.truth.speed_mps.len(), s.len());
        assert_eq!(out.truth.hr_bpm.len(), s.len());
        for (q, w) in s.time.windows(2).enumerate() {
            assert_eq!((w[1] - w[0]).num_seconds() as f64, s.t[q + 1] - s.t[q]);
        }
        let d = s.distance.as_ref().unwrap();
        for q in 1..s.len() {
            assert!(d.get(q).unwrap() >= d.get(q - 1).unwrap());
        }
    }
}

#[test]
fn smart_sampling_gaps_are_one_to_seven_seconds() {
    for seed in 0..5 {
        let mut inp = input(workouts().remove(0), seed);
        inp.conditions.sampling = Sampling::Smart { min_s: 1, max_s: 7 };
        let s = simulate(&inp).session;
        let gaps: Vec<f64> = s.t.windows(2).map(|w| w[1] - w[0]).collect();
        assert!(gaps.iter().all(|&g| (1.0..=7.0).contains(&g)), "{gaps:?}");
        // Irregular, and clearly sparser than every second.
        assert!(gaps.contains(&7.0));
        assert!(gaps.contains(&1.0));
        assert!(s.len() * 2 < s.duration_s() as usize);
    }
}

/// The truth follows the plan: one true interval per expanded segment, the right kinds, the
/// planned durations and distances, device laps at the boundaries.
#[test]
fn truth_matches_plan_structure() {
    for plan in workouts() {
        let out = simulate(&input(plan.clone(), 5));
        let expanded = plan.expand();
        let truth = &out.truth;
        assert_eq!(truth.intervals.len(), expanded.len());
        assert_eq!(truth.work().count(), plan.work_count());
        assert_eq!(out.session.laps.len(), expanded.len());
        for ((iv, e), lap) in truth.intervals.iter().zip(&expanded).zip(&out.session.laps) {
            assert_eq!(iv.kind, e.kind);
            assert_eq!(iv.repeat, e.repeat);
            assert_eq!((lap.start_s, lap.end_s), (iv.start_s, iv.end_s));
            match e.amount {
                Amount::Duration(t) => assert_eq!(iv.end_s - iv.start_s, t),
                Amount::Distance(m) => {
                    assert!(
                        iv.distance_m >= m && iv.distance_m < m + 6.0,
                        "{}",
                        iv.distance_m
                    )
                }
            }
        }
        for w in truth.intervals.windows(2) {
            assert_eq!(w[0].end_s, w[1].start_s);
        }
        assert_eq!(
            truth.intervals.last().unwrap().end_s,
            out.session.duration_s()
        );
    }
}

#[test]
fn stand_and_walk_recoveries_look_like_it() {
    let plan = Plan {
        title: "mixed".into(),
        purpose: "test".into(),
        date: None,
        steps: vec![
            Step::Single(seg(
                SegmentKind::Warmup,
                Amount::Duration(300.0),
                Target::Open,
            )),
            Step::Single(seg(SegmentKind::Work, Amount::Duration(120.0), named("5k"))),
            Step::Single(recovery(Amount::Duration(90.0), RecoveryMode::Stand)),
            Step::Single(seg(SegmentKind::Work, Amount::Duration(120.0), named("5k"))),
            Step::Single(recovery(Amount::Duration(120.0), RecoveryMode::Walk)),
            Step::Single(seg(SegmentKind::Work, Amount::Duration(120.0), named("5k"))),
        ],
    };
    let out = simulate(&input(plan, 3));
    let s = &out.session;
    let cad = s.cadence.as_ref().unwrap();
    let v = s.speed.as_ref().unwrap();
    let stand = &out.truth.intervals[2];
    let walk = &out.truth.intervals[4];
    // Only the first few seconds of slowing down move the runner.
    assert!(stand.avg_speed_mps < 0.25, "{}", stand.avg_speed_mps);
    assert!(
        (1.2..1.6).contains(&walk.avg_speed_mps),
        "{}",
        walk.avg_speed_mps
    );
    for q in 0..s.len() {
        let t = s.t[q];
        if t > stand.start_s + 15.0 && t <= stand.end_s {
            assert_eq!(cad.get(q), Some(0.0));
            assert_eq!(v.get(q), Some(0.0));
        }
        if t > walk.start_s + 15.0 && t <= walk.end_s {
            let c = cad.get(q).unwrap();
            assert!((105.0..=125.0).contains(&c), "walking cadence {c}");
        }
        if t > 400.0 && t < 420.0 {
            let c = cad.get(q).unwrap();
            assert!((165.0..=185.0).contains(&c), "5 km pace cadence {c}");
        }
    }
}

#[test]
fn same_seed_same_session_other_seed_differs() {
    let mut inp = input(workouts().remove(0), 77);
    inp.conditions.sampling = Sampling::Smart { min_s: 1, max_s: 7 };
    inp.faults = Faults {
        gps_jumps: 2,
        cadence_lock: Some((900.0, 60.0)),
        hr_dropouts: 2,
    };
    let a = simulate(&inp);
    let b = simulate(&inp.clone());
    assert_eq!(a, b);
    let mut other = inp.clone();
    other.seed = 78;
    let c = simulate(&other);
    assert_ne!(a.session, c.session);
    assert_ne!(a.session.speed, c.session.speed);
}

/// Faults touch only the recording: the truth is the same with and without them.
#[test]
fn faults_do_not_change_the_truth() {
    let clean = input(workouts().remove(0), 12);
    let mut faulty = clean.clone();
    faulty.faults = Faults {
        gps_jumps: 3,
        cadence_lock: Some((700.0, 90.0)),
        hr_dropouts: 3,
    };
    let a = simulate(&clean);
    let b = simulate(&faulty);
    assert_eq!(a.truth, b.truth);
    assert_eq!(a.session.distance, b.session.distance);
    assert_eq!(a.session.t, b.session.t);
    assert_ne!(a.session.hr, b.session.hr);
}

#[test]
fn treadmill_has_no_positions_or_altitude() {
    let mut inp = input(workouts().remove(0), 1);
    inp.conditions.treadmill = true;
    inp.conditions.terrain = Terrain::Hill { grade: 0.1 };
    inp.faults.gps_jumps = 3;
    let out = simulate(&inp);
    let s = &out.session;
    assert!(s.lat.is_none() && s.lon.is_none() && s.altitude.is_none());
    assert!(s.distance_m().unwrap() > 5000.0);
    assert!(out.truth.grade.iter().all(|&g| g == 0.0));
    assert!(s
        .speed
        .as_ref()
        .unwrap()
        .iter_present()
        .all(|(_, v)| v < 7.0));
    let rel = (speed_integral(s) - s.distance_m().unwrap()).abs() / s.distance_m().unwrap();
    assert!(rel < 0.001);
}

/// A stop at a traffic light pauses the timer: no samples inside the pause, the pause is
/// listed, the runner is stationary across it, and the planned duration still runs in full.
#[test]
fn timer_pause_at_a_stop() {
    let mut inp = input(long_run(30.0), 4);
    inp.conditions.stops = vec![Stop {
        at_s: 600.0,
        dur_s: 45.0,
    }];
    let out = simulate(&inp);
    let s = &out.session;
    assert_eq!(s.pauses.len(), 1);
    let p = s.pauses[0];
    assert!(p.from_s > 600.0 && p.from_s < 625.0, "{p:?}");
    assert_eq!(p.duration_s(), 45.0);
    assert!(s.t.iter().all(|&t| t <= p.from_s || t >= p.to_s));
    let q = s.t.iter().position(|&t| t == p.from_s).unwrap();
    assert_eq!(s.t[q + 1], p.to_s);
    let d = s.distance.as_ref().unwrap();
    assert_eq!(d.get(q), d.get(q + 1));
    assert!((s.timer_s() - 1800.0).abs() < 1e-9, "{}", s.timer_s());
    let rel = (speed_integral(s) - s.distance_m().unwrap()).abs() / s.distance_m().unwrap();
    assert!(rel < 0.001);
}

#[test]
fn empty_plan_gives_a_single_sample() {
    let mut inp = SimInput::default();
    inp.plan.steps.clear();
    let out = simulate(&inp);
    assert_eq!(out.session.len(), 1);
    assert!(out.truth.intervals.is_empty());
    out.session.check_invariants().unwrap();
}

#[test]
fn default_input_runs() {
    let out = simulate(&SimInput::default());
    assert_eq!(out.session.duration_s(), 1800.0);
    let v = out.truth.intervals[0].avg_speed_mps;
    assert!((2.4..3.2).contains(&v), "{v}");
}

/// A 3-hour 1 Hz run is quick (well under 100 ms in release; generous here for debug).
#[test]
fn three_hour_run_is_fast() {
    let mut inp = input(long_run(180.0), 1);
    inp.conditions.terrain = Terrain::Rolling {
        amplitude_m: 20.0,
        wavelength_m: 1500.0,
    };
    let t0 = Instant::now();
    let out = simulate(&inp);
    let el = t0.elapsed();
    println!("3-hour simulation: {el:?}");
    assert_eq!(out.session.len(), 10_801);
    assert!(el.as_millis() < 2000);
}

/// Positions follow the route: distance summed from the fixes is within 1 % of the recorded
/// distance (GPS noise is smooth), and a flat run shows little false climb.
#[test]
fn positions_and_altitude_agree_with_distance() {
    for seed in 0..3 {
        let s = simulate(&input(long_run(100.0), seed)).session;
        let r = 6_371_008.8;
        let mut d = 0.0;
        for q in 1..s.len() {
            let (la0, lo0) = s.position(q - 1).unwrap();
            let (la1, lo1) = s.position(q).unwrap();
            let dn = (la1 - la0).to_radians() * r;
            let de = (lo1 - lo0).to_radians() * r * la0.to_radians().cos();
            d += (dn * dn + de * de).sqrt();
        }
        let rec = s.distance_m().unwrap();
        assert!((d / rec - 1.0).abs() < 0.01, "seed {seed}: {d} vs {rec}");
        let a = s.altitude.as_ref().unwrap();
        let gain: f64 = (1..s.len())
            .map(|q| (a.get(q).unwrap() - a.get(q - 1).unwrap()).max(0.0))
            .sum();
        assert!(gain < 40.0, "seed {seed}: false climb {gain}");
    }
}
