//! Shared helpers for the simulator tests: plans built from model types, and the few
//! measurements the tests compute themselves.
#![allow(dead_code)]

use std::collections::BTreeMap;

use splitdesk::demo::simulate::{hill_cost_ratio, SimInput};
use splitdesk::model::{
    Amount, AthleteProfile, Plan, RecoveryMode, Segment, SegmentKind, Session, Step, Target,
};

/// An invented athlete: rest 50, max 190, threshold 4.0 m/s (4:10/km).
pub fn profile() -> AthleteProfile {
    let mut p = AthleteProfile::bare("test-runner");
    p.hr_rest = Some(50.0);
    p.hr_max = Some(190.0);
    p.threshold_speed_mps = Some(4.0);
    let mut paces = BTreeMap::new();
    paces.insert("easy".to_string(), 3.2);
    paces.insert("marathon".to_string(), 3.65);
    paces.insert("10k".to_string(), 4.15);
    paces.insert("5k".to_string(), 4.35);
    p.paces = paces;
    p
}

pub fn named(name: &str) -> Target {
    Target::NamedPace {
        name: name.to_string(),
        tolerance_s_per_km: 5.0,
    }
}

pub fn seg(kind: SegmentKind, amount: Amount, target: Target) -> Segment {
    Segment {
        kind,
        amount,
        target,
        mode: None,
    }
}

pub fn recovery(amount: Amount, mode: RecoveryMode) -> Segment {
    Segment {
        kind: SegmentKind::Recovery,
        amount,
        target: Target::Open,
        mode: Some(mode),
    }
}

/// Warm-up, `reps` x `work` at `target` with `rec` recoveries, cool-down.
pub fn intervals(reps: u32, work: Amount, target: Target, rec: Segment) -> Plan {
    Plan {
        title: "Intervals".into(),
        purpose: "Speed endurance".into(),
        date: None,
        steps: vec![
            Step::Single(seg(
                SegmentKind::Warmup,
                Amount::Duration(600.0),
                Target::Open,
            )),
            Step::Repeat {
                count: reps,
                work: vec![seg(SegmentKind::Work, work, target)],
                recovery: Some(rec),
            },
            Step::Single(seg(
                SegmentKind::Cooldown,
                Amount::Duration(480.0),
                Target::Open,
            )),
        ],
    }
}

/// A single steady run of `minutes` at easy pace.
pub fn long_run(minutes: f64) -> Plan {
    Plan {
        title: "Long run".into(),
        purpose: "Aerobic endurance".into(),
        date: None,
        steps: vec![Step::Single(seg(
            SegmentKind::Steady,
            Amount::Duration(minutes * 60.0),
            named("easy"),
        ))],
    }
}

pub fn input(plan: Plan, seed: u64) -> SimInput {
    SimInput::new(profile(), plan, seed)
}

/// Gap `q -> q+1` lies across a timer pause.
pub fn gap_is_pause(s: &Session, q: usize) -> bool {
    s.pauses
        .iter()
        .any(|p| s.t[q] >= p.from_s && s.t[q + 1] <= p.to_s)
}

/// Trapezoid integral of the recorded speed over the sample times, pauses skipped.
pub fn speed_integral(s: &Session) -> f64 {
    let v = s.speed.as_ref().expect("speed");
    (0..s.len() - 1)
        .filter(|&q| !gap_is_pause(s, q))
        .map(|q| 0.5 * (v.get(q).unwrap() + v.get(q + 1).unwrap()) * (s.t[q + 1] - s.t[q]))
        .sum()
}

/// Decoupling (E1 - E2) / E1 * 100 with E = mean speed / mean HR, over the two halves (by
/// time) of the run after `skip_s`. `speed_of(q)` gives the speed to use at sample q.
pub fn decoupling_with(s: &Session, skip_s: f64, speed_of: &dyn Fn(usize) -> f64) -> f64 {
    let hr = s.hr.as_ref().expect("hr");
    let end = s.duration_s();
    let mid = skip_s + (end - skip_s) / 2.0;
    let half = |from: f64, to: f64| {
        let (mut sv, mut sh, mut n) = (0.0, 0.0, 0.0);
        for q in 0..s.len() {
            if s.t[q] >= from && s.t[q] < to {
                if let Some(h) = hr.get(q) {
                    sv += speed_of(q);
                    sh += h;
                    n += 1.0;
                }
            }
        }
        (sv / n) / (sh / n)
    };
    let e1 = half(skip_s, mid);
    let e2 = half(mid, end + 1.0);
    (e1 - e2) / e1 * 100.0
}

/// Decoupling on the raw recorded speed.
pub fn decoupling(s: &Session, skip_s: f64) -> f64 {
    let v = s.speed.as_ref().expect("speed");
    decoupling_with(s, skip_s, &|q| v.get(q).unwrap_or(0.0))
}

/// Decoupling on hill-adjusted speed: recorded speed times Cr(i)/Cr(0), the gradient taken
/// from recorded altitude and distance over a +-15 s window.
// Source: Minetti et al. 2002, J Appl Physiol 93:1039
pub fn hill_adjusted_decoupling(s: &Session, skip_s: f64) -> f64 {
    let v = s.speed.as_ref().expect("speed");
    let alt = s.altitude.as_ref().expect("altitude");
    let dist = s.distance.as_ref().expect("distance");
    let n = s.len();
    decoupling_with(s, skip_s, &|q| {
        let a = q.saturating_sub(15);
        let b = (q + 15).min(n - 1);
        let run = dist.get(b).unwrap() - dist.get(a).unwrap();
        let grade = if run > 5.0 {
            (alt.get(b).unwrap() - alt.get(a).unwrap()) / run
        } else {
            0.0
        };
        v.get(q).unwrap_or(0.0) * hill_cost_ratio(grade)
    })
}
