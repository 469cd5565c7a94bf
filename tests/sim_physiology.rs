//! Heart-rate behaviour of the simulator: bounds, HR lag after hard work, recovery troughs,
//! cardiac drift and decoupling, the hill cost.

mod sim_support;

use sim_support::*;
use splitdesk::demo::simulate::{simulate, Terrain};
use splitdesk::model::{Amount, RecoveryMode, SegmentKind, Target};

#[test]
fn hr_stays_between_rest_and_max() {
    let plans = [
        intervals(
            8,
            Amount::Duration(240.0),
            named("5k"),
            recovery(Amount::Duration(60.0), RecoveryMode::Stand),
        ),
        long_run(150.0),
    ];
    for (p, plan) in plans.iter().enumerate() {
        for seed in 0..4 {
            let mut inp = input(plan.clone(), seed);
            inp.conditions.temperature_c = 34.0;
            inp.conditions.fatigue = 1.0;
            if p == 0 {
                inp.conditions.terrain = Terrain::Hill { grade: 0.08 };
            }
            let out = simulate(&inp);
            let (rest, max) = (out.truth.hr_rest, out.truth.hr_max);
            assert_eq!((rest, max), (50.0, 190.0));
            for &h in &out.truth.hr_bpm {
                assert!(h >= rest && h <= max, "true HR {h}");
            }
            for (_, h) in out.session.hr.as_ref().unwrap().iter_present() {
                assert!(h >= rest && h <= max, "recorded HR {h}");
            }
        }
    }
}

#[test]
fn profile_without_hr_numbers_uses_fallbacks() {
    let mut inp = input(long_run(10.0), 1);
    inp.profile.hr_rest = None;
    inp.profile.hr_max = None;
    inp.profile.birth_year = None;
    let out = simulate(&inp);
    assert_eq!((out.truth.hr_rest, out.truth.hr_max), (55.0, 185.0));
    // Source: Tanaka, Monahan & Seals 2001, J Am Coll Cardiol 37:153: 208 - 0.7 * age.
    inp.profile.birth_year = Some(1984); // 40 years old at the 2024 start
    let out = simulate(&inp);
    assert!((out.truth.hr_max - 180.0).abs() < 1e-9);
    for &h in &out.truth.hr_bpm {
        assert!((55.0..=180.0).contains(&h));
    }
}

/// After every hard work interval (>= 60 s at >= 5 km pace) HR keeps rising: it peaks after
/// the end of the effort, within 60 s.
#[test]
fn hr_peaks_after_hard_work_ends() {
    let plans = [
        intervals(
            6,
            Amount::Duration(180.0),
            named("5k"),
            recovery(Amount::Duration(120.0), RecoveryMode::Jog),
        ),
        intervals(
            8,
            Amount::Duration(60.0),
            named("5k"),
            recovery(Amount::Duration(60.0), RecoveryMode::Stand),
        ),
        intervals(
            5,
            Amount::Distance(1000.0),
            named("5k"),
            recovery(Amount::Duration(90.0), RecoveryMode::Walk),
        ),
        intervals(
            4,
            Amount::Duration(300.0),
            Target::PaceRange {
                slow_mps: 4.4,
                fast_mps: 4.6,
            },
            recovery(Amount::Duration(180.0), RecoveryMode::Jog),
        ),
    ];
    let mut lags = Vec::new();
    for plan in &plans {
        for seed in 0..10 {
            let out = simulate(&input(plan.clone(), seed));
            for w in out.truth.work() {
                assert!(w.end_s - w.start_s >= 60.0);
                let lag = w.peak_hr_after_s.expect("peak found");
                assert!(
                    lag > 0.0 && lag <= 60.0,
                    "seed {seed}: lag {lag} s after work ending at {}",
                    w.end_s
                );
                lags.push(lag);
            }
        }
    }
    lags.sort_by(f64::total_cmp);
    println!(
        "HR lag over {} reps: min {} median {} max {} s",
        lags.len(),
        lags[0],
        lags[lags.len() / 2],
        lags[lags.len() - 1]
    );
}

#[test]
fn recovery_troughs_climb_with_fatigue() {
    let plan = intervals(
        6,
        Amount::Duration(180.0),
        named("5k"),
        recovery(Amount::Duration(90.0), RecoveryMode::Jog),
    );
    for seed in 0..5 {
        let mut rises = Vec::new();
        for fatigue in [0.0, 1.0] {
            let mut inp = input(plan.clone(), seed);
            inp.conditions.fatigue = fatigue;
            let out = simulate(&inp);
            let troughs: Vec<f64> = out.truth.work().filter_map(|w| w.trough_hr).collect();
            assert_eq!(troughs.len(), 5);
            if fatigue > 0.0 {
                for w in troughs.windows(2) {
                    assert!(w[1] > w[0], "seed {seed}: troughs {troughs:?}");
                }
            }
            rises.push(troughs[4] - troughs[0]);
        }
        assert!(rises[1] > rises[0] + 3.0, "seed {seed}: rises {rises:?}");
    }
}

/// A long hot run drifts: decoupling over 5 %; the same run cool and flat stays under 5 %.
#[test]
fn hot_long_run_decouples_cool_run_does_not() {
    for seed in 0..5 {
        let mut hot = input(long_run(100.0), seed);
        hot.conditions.temperature_c = 28.0;
        let mut cool = hot.clone();
        cool.conditions.temperature_c = 12.0;
        let dec_hot = decoupling(&simulate(&hot).session, 600.0);
        let dec_cool = decoupling(&simulate(&cool).session, 600.0);
        println!("seed {seed}: decoupling hot {dec_hot:.2} %, cool {dec_cool:.2} %");
        assert!(dec_hot > 5.0, "hot {dec_hot}");
        assert!(dec_cool < 5.0 && dec_cool > 0.0, "cool {dec_cool}");
    }
}

/// A long run that ends on a gentle descent: raw-speed decoupling goes negative (the
/// descent lowers the HR cost), while hill-adjusted decoupling stays positive.
#[test]
fn downhill_run_gives_negative_raw_decoupling() {
    for seed in 0..5 {
        let mut inp = input(long_run(100.0), seed);
        inp.conditions.temperature_c = 12.0;
        inp.conditions.terrain = Terrain::Downhill {
            grade: 0.03,
            flat_m: 10_000.0,
        };
        let out = simulate(&inp);
        let raw = decoupling(&out.session, 600.0);
        let adjusted = hill_adjusted_decoupling(&out.session, 600.0);
        println!("seed {seed}: downhill raw {raw:.2} %, hill-adjusted {adjusted:.2} %");
        assert!(raw < 0.0, "raw {raw}");
        assert!(adjusted > 0.0 && adjusted < 5.0, "adjusted {adjusted}");
    }
}

/// Hill repeats: climbing during work, back down in recovery; uphill reps are slower and
/// cost more heart rate than the same target on the flat.
#[test]
fn hill_repeats_climb_and_cost_more() {
    let plan = intervals(
        6,
        Amount::Duration(90.0),
        named("5k"),
        recovery(Amount::Duration(120.0), RecoveryMode::Jog),
    );
    let flat = simulate(&input(plan.clone(), 4));
    let mut inp = input(plan, 4);
    inp.conditions.terrain = Terrain::Hill { grade: 0.06 };
    let hill = simulate(&inp);
    let alt = hill.session.altitude.as_ref().unwrap();
    for (f, h) in flat.truth.work().zip(hill.truth.work()) {
        let (qa, qb) = (
            hill.session.t.partition_point(|&t| t < h.start_s),
            hill.session.t.partition_point(|&t| t < h.end_s),
        );
        let climb = alt.get(qb).unwrap() - alt.get(qa).unwrap();
        // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (runner slows uphill).
        assert!(
            climb > 0.05 * h.distance_m,
            "climb {climb} over {}",
            h.distance_m
        );
        assert!(h.avg_speed_mps < 0.9 * f.avg_speed_mps);
        assert!(h.avg_hr > f.avg_hr);
    }
    // Back at the foot of the hill after each recovery (the recovery covers more ground).
    let last_rec = hill
        .truth
        .intervals
        .iter()
        .rev()
        .find(|i| i.kind == SegmentKind::Recovery)
        .unwrap();
    let q = hill.session.t.partition_point(|&t| t < last_rec.end_s);
    assert!((alt.get(q).unwrap() - alt.get(0).unwrap()).abs() < 3.0);
}

/// A steady run held to an HR band ends up with its average HR in the band.
#[test]
fn hr_target_is_held() {
    let mut plan = long_run(40.0);
    if let splitdesk::model::Step::Single(s) = &mut plan.steps[0] {
        s.target = Target::HrRange {
            low_bpm: 145.0,
            high_bpm: 152.0,
        };
    }
    let mut inp = input(plan, 2);
    inp.conditions.temperature_c = 25.0;
    let out = simulate(&inp);
    let avg = out.truth.intervals[0].avg_hr;
    assert!((143.0..=154.0).contains(&avg), "avg HR {avg}");
}
