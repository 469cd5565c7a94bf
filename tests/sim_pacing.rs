//! Pacing styles and the speed model.

mod sim_support;

use sim_support::*;
use splitdesk::demo::simulate::{simulate, Pacing, SimOutput};
use splitdesk::model::{Amount, RecoveryMode};

fn reps() -> splitdesk::model::Plan {
    intervals(
        6,
        Amount::Duration(180.0),
        named("5k"),
        recovery(Amount::Duration(120.0), RecoveryMode::Jog),
    )
}

fn run(pacing: Pacing, seed: u64) -> SimOutput {
    let mut inp = input(reps(), seed);
    inp.conditions.pacing = pacing;
    simulate(&inp)
}

/// Mean recorded speed between two times.
fn recorded_mean(out: &SimOutput, from: f64, to: f64) -> f64 {
    let s = &out.session;
    let v = s.speed.as_ref().unwrap();
    let xs: Vec<f64> = (0..s.len())
        .filter(|&q| s.t[q] >= from && s.t[q] <= to)
        .filter_map(|q| v.get(q))
        .collect();
    xs.iter().sum::<f64>() / xs.len() as f64
}

#[test]
fn even_pacing_holds_target() {
    for seed in 0..5 {
        let out = run(Pacing::Even, seed);
        for w in out.truth.work() {
            let rel = w.avg_speed_mps / w.target_speed_mps - 1.0;
            assert!(rel.abs() < 0.02, "seed {seed}: {rel}");
        }
    }
}

/// Progression: every work interval faster than the one before, in the truth and in the
/// recorded speed.
#[test]
fn progression_gets_faster_each_rep() {
    for seed in 0..10 {
        let out = run(Pacing::Progression, seed);
        let truth: Vec<f64> = out.truth.work().map(|w| w.avg_speed_mps).collect();
        let recorded: Vec<f64> = out
            .truth
            .work()
            .map(|w| recorded_mean(&out, w.start_s, w.end_s))
            .collect();
        for v in [&truth, &recorded] {
            for w in v.windows(2) {
                assert!(w[1] > w[0], "seed {seed}: {v:?}");
            }
        }
        assert!(truth[5] / truth[0] > 1.05);
    }
}

#[test]
fn progression_steady_run_speeds_up() {
    let mut inp = input(long_run(60.0), 3);
    inp.conditions.pacing = Pacing::Progression;
    let out = simulate(&inp);
    let first = recorded_mean(&out, 300.0, 1800.0);
    let second = recorded_mean(&out, 1800.0, 3600.0);
    assert!(second > first * 1.03, "{first} -> {second}");
}

/// Fading: slower late in each rep and across the set.
#[test]
fn fading_slows_within_and_across_reps() {
    for seed in 0..5 {
        let out = run(Pacing::Fading, seed);
        let w: Vec<_> = out.truth.work().collect();
        assert!(
            w[5].avg_speed_mps < w[0].avg_speed_mps * 0.985,
            "seed {seed}"
        );
        let (mut early, mut late) = (0.0, 0.0);
        for iv in &w {
            // Skip the acceleration and the finishing kick.
            early += recorded_mean(&out, iv.start_s + 15.0, iv.start_s + 75.0);
            late += recorded_mean(&out, iv.end_s - 80.0, iv.end_s - 25.0);
        }
        assert!(late < early * 0.985, "seed {seed}: {early} {late}");
    }
}

/// Surging: more speed variation inside the reps than even pacing.
#[test]
fn surging_varies_more_than_even() {
    let spread = |out: &SimOutput| {
        let mut acc = 0.0;
        let mut n = 0.0;
        for w in out.truth.work() {
            let xs: Vec<f64> = out
                .session
                .t
                .iter()
                .zip(&out.truth.speed_mps)
                .filter(|(t, _)| **t >= w.start_s + 15.0 && **t <= w.end_s - 20.0)
                .map(|(_, v)| *v)
                .collect();
            let m = xs.iter().sum::<f64>() / xs.len() as f64;
            acc += xs.iter().map(|x| (x - m).powi(2)).sum::<f64>() / xs.len() as f64;
            n += 1.0;
        }
        (acc / n).sqrt()
    };
    for seed in 0..5 {
        let even = spread(&run(Pacing::Even, seed));
        let surging = spread(&run(Pacing::Surging, seed));
        assert!(
            surging > even * 1.3,
            "seed {seed}: even {even} surging {surging}"
        );
    }
}

/// Fatigue lowers the achievable speed late in the session.
#[test]
fn fatigue_slows_late_reps() {
    let fresh = run(Pacing::Even, 2);
    let mut inp = input(reps(), 2);
    inp.conditions.fatigue = 1.0;
    let tired = simulate(&inp);
    let last = |o: &SimOutput| o.truth.work().last().unwrap().avg_speed_mps;
    assert!(last(&tired) < last(&fresh) * 0.98);
}

/// Acceleration stays human: the true speed never changes by more than 3 m/s in a second.
#[test]
fn acceleration_is_limited() {
    let out = run(Pacing::Surging, 1);
    for w in out.truth.speed_mps.windows(2) {
        assert!((w[1] - w[0]).abs() <= 3.0 + 1e-9);
    }
    assert!(out.truth.speed_mps.iter().all(|&v| v < 6.0));
}
