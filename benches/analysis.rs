//! Full analysis (intervals, metrics, recoveries, trends, session numbers, findings) of a
//! 3-hour 1 Hz session after ingest. Target: under 5 ms.

use std::hint::black_box;

use criterion::{criterion_group, criterion_main, Criterion};
use splitdesk::demo::simulate::{simulate, Conditions, SimInput, Terrain};
use splitdesk::ingest::{clean, derive};
use splitdesk::model::{AthleteProfile, Plan};

fn profile() -> AthleteProfile {
    let mut p = AthleteProfile::bare("bench-runner");
    p.hr_rest = Some(48.0);
    p.hr_max = Some(188.0);
    p.threshold_speed_mps = Some(4.0);
    p.paces.insert("easy".into(), 3.2);
    p.paces.insert("half".into(), 3.85);
    p
}

fn bench(c: &mut Criterion) {
    let plan = Plan {
        title: "Long run with repeats".into(),
        purpose: String::new(),
        date: None,
        steps: splitdesk::plan::parse_line("60:00 easy; 6 x (8:00 @ half) / 4:00 jog; 48:00 easy")
            .unwrap_or_default(),
    };
    let mut input = SimInput::new(profile(), plan.clone(), 1);
    input.conditions = Conditions {
        terrain: Terrain::Rolling {
            amplitude_m: 15.0,
            wavelength_m: 1500.0,
        },
        ..Conditions::default()
    };
    let mut session = simulate(&input).session;
    session.laps.clear();
    derive::fill_derived(&mut session);
    session.flags = clean::flag(&session, Some(&profile()));
    let p = profile();
    c.bench_function("analyze_3h_1hz_with_plan", |b| {
        b.iter(|| splitdesk::analysis::analyze(black_box(&session), Some(&plan), &p))
    });
    c.bench_function("analyze_3h_1hz_no_plan", |b| {
        b.iter(|| splitdesk::analysis::analyze(black_box(&session), None, &p))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
