//! Training load: TRIMP, acute/chronic ratio, impulse-response model (analysis::load).

use splitdesk::analysis::load::{
    acute_chronic_band, acute_chronic_ewma, acute_chronic_ewma_seeded, acute_chronic_seed, ewma,
    fitness_fatigue, impulse_response_step, rolling_acute_chronic, rolling_acute_chronic_uncoupled,
    trimp_from_average, trimp_from_samples, trimp_minute_weight, AcuteChronicBand,
    ACUTE_CHRONIC_CRITICISM,
};
use splitdesk::model::{Channel, Sex};

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

/// 1 Hz samples: `minutes` at each heart rate in turn. Sample 0 is only the start.
fn hr_blocks(blocks: &[(f64, f64)]) -> (Vec<f64>, Channel) {
    let mut t = vec![0.0];
    let mut hr = vec![blocks.first().map(|b| b.1)];
    for &(minutes, bpm) in blocks {
        for _ in 0..(minutes * 60.0).round() as usize {
            t.push(t.len() as f64);
            hr.push(Some(bpm));
        }
    }
    (t, Channel::new(hr))
}

#[test]
fn trimp_from_average_checks() {
    // Source: Banister EW 1991, Physiological Testing of the High-Performance Athlete pp. 403–424; Morton, Fitz-Clarke & Banister, J Appl Physiol 1990;69(3):1171–1177 (values computed from the formula, methods.md §2)
    close(
        trimp_from_average(30.0, 130.0, 40.0, 200.0, Sex::Male).unwrap(),
        31.80,
        0.005,
    );
    close(
        trimp_from_average(30.0, 130.0, 40.0, 200.0, Sex::Female).unwrap(),
        37.13,
        0.005,
    );
    // Source: Banister EW 1991, Physiological Testing of the High-Performance Athlete pp. 403–424; Morton, Fitz-Clarke & Banister, J Appl Physiol 1990;69(3):1171–1177 (values computed from the formula, methods.md §2); a web calculator shows 75.36, so tolerance 0.05
    close(
        trimp_from_average(45.0, 150.0, 60.0, 190.0, Sex::Male).unwrap(),
        75.33,
        0.05,
    );
    close(
        trimp_from_average(45.0, 150.0, 60.0, 190.0, Sex::Female).unwrap(),
        85.14,
        0.05,
    );
    // Source: Banister EW 1991, Physiological Testing of the High-Performance Athlete pp. 403–424; Morton, Fitz-Clarke & Banister, J Appl Physiol 1990;69(3):1171–1177 (values computed from the formula, methods.md §2)
    close(
        trimp_from_average(60.0, 155.0, 55.0, 190.0, Sex::Male).unwrap(),
        117.9,
        0.05,
    );
    close(
        trimp_from_average(60.0, 155.0, 55.0, 190.0, Sex::Female).unwrap(),
        131.7,
        0.05,
    );
}

#[test]
fn trimp_minute_weight_bounds_and_unspecified_sex() {
    // Source: Banister EW 1991; Morton, Fitz-Clarke & Banister, J Appl Physiol 1990;69(3):1171–1177 (values computed from the formula, methods.md §2): most one minute can score
    close(trimp_minute_weight(1.0, Sex::Male), 4.365, 0.0005);
    close(trimp_minute_weight(1.0, Sex::Female), 4.568, 0.0005);
    // HRr clamped to [0, 1].
    assert_eq!(
        trimp_minute_weight(1.7, Sex::Male),
        trimp_minute_weight(1.0, Sex::Male)
    );
    assert_eq!(trimp_minute_weight(-0.2, Sex::Female), 0.0);
    assert_eq!(trimp_minute_weight(f64::NAN, Sex::Male), 0.0);
    // Our choice: unspecified = mean of the men's and women's curves.
    let hrr = 0.5625;
    close(
        trimp_minute_weight(hrr, Sex::Unspecified),
        0.5 * (trimp_minute_weight(hrr, Sex::Male) + trimp_minute_weight(hrr, Sex::Female)),
        1e-12,
    );
    // Computed with python3: 30 min at 130, rest 40, max 200, mean of the two curves
    close(
        trimp_from_average(30.0, 130.0, 40.0, 200.0, Sex::Unspecified).unwrap(),
        34.4655,
        0.0005,
    );
}

#[test]
fn trimp_sample_by_sample_differs_from_average() {
    // Source: Banister EW 1991; Morton, Fitz-Clarke & Banister, J Appl Physiol 1990;69(3):1171–1177 (values computed from the formula, methods.md §2): convex weighting, men rest 40 max 200
    let (t, hr) = hr_blocks(&[(15.0, 120.0), (15.0, 160.0)]);
    close(
        trimp_from_samples(&t, &hr, None, 40.0, 200.0, Sex::Male).unwrap(),
        42.93,
        0.005,
    );
    close(
        trimp_from_average(30.0, 140.0, 40.0, 200.0, Sex::Male).unwrap(),
        39.84,
        0.005,
    );
    // Constant HR: the two methods agree.
    // Source: Banister EW 1991; Morton, Fitz-Clarke & Banister, J Appl Physiol 1990;69(3):1171–1177 (values computed from the formula, methods.md §2): 30 min at 130 → 31.80
    let (t, hr) = hr_blocks(&[(30.0, 130.0)]);
    close(
        trimp_from_samples(&t, &hr, None, 40.0, 200.0, Sex::Male).unwrap(),
        31.80,
        0.005,
    );
}

#[test]
fn trimp_samples_cap_gaps_and_respect_mask_and_missing() {
    let (mut t, hr) = hr_blocks(&[(30.0, 130.0)]);
    let base = trimp_from_samples(&t, &hr, None, 40.0, 200.0, Sex::Male).unwrap();
    // A 10-minute gap before the last sample counts as at most 10 s.
    let n = t.len();
    t[n - 1] += 600.0;
    let gapped = trimp_from_samples(&t, &hr, None, 40.0, 200.0, Sex::Male).unwrap();
    let per_s = trimp_minute_weight(90.0 / 160.0, Sex::Male) / 60.0;
    close(gapped - base, 9.0 * per_s, 1e-9);

    // Mask out the second half: half the load.
    let (t, hr) = hr_blocks(&[(30.0, 130.0)]);
    let mask: Vec<bool> = (0..t.len()).map(|i| i <= 900).collect();
    close(
        trimp_from_samples(&t, &hr, Some(&mask), 40.0, 200.0, Sex::Male).unwrap(),
        base / 2.0,
        1e-9,
    );
    // Missing HR samples add nothing.
    let mut hr2 = hr.clone();
    for v in hr2.values.iter_mut().skip(901) {
        *v = None;
    }
    close(
        trimp_from_samples(&t, &hr2, None, 40.0, 200.0, Sex::Male).unwrap(),
        base / 2.0,
        1e-9,
    );
    // Undefined cases.
    assert_eq!(
        trimp_from_samples(&t, &hr, None, 200.0, 200.0, Sex::Male),
        None
    );
    assert_eq!(
        trimp_from_samples(&[], &Channel::default(), None, 40.0, 200.0, Sex::Male),
        None
    );
    let all_missing = Channel::new(vec![None; t.len()]);
    assert_eq!(
        trimp_from_samples(&t, &all_missing, None, 40.0, 200.0, Sex::Male),
        None
    );
    assert_eq!(
        trimp_from_average(-1.0, 140.0, 40.0, 200.0, Sex::Male),
        None
    );
    assert_eq!(trimp_from_average(30.0, 140.0, 60.0, 50.0, Sex::Male), None);
}

#[test]
fn ewma_basics() {
    // λ = 2/(N+1): N = 7 → 0.25
    assert_eq!(ewma(&[100.0], 7, 0.0), vec![25.0]);
    // N = 28 → 2/29
    close(ewma(&[29.0], 28, 0.0)[0], 2.0, 1e-12);
    assert_eq!(ewma(&[], 7, 10.0), Vec::<f64>::new());
    // N = 0 counts as N = 1: no memory.
    assert_eq!(ewma(&[5.0, 7.0], 0, 100.0), vec![5.0, 7.0]);
}

#[test]
fn acute_chronic_worked_examples() {
    let a: Vec<f64> = [vec![40.0; 21], vec![60.0; 7]].concat();
    // Source: Williams S, West S, Cross MJ, Stokes KA, BJSM 2017;51(3):209–210 EWMA (values computed from the formula, methods.md §9): seeded from the first day's load
    close(
        acute_chronic_ewma_seeded(&a, 40.0)[27].unwrap(),
        1.198,
        0.0005,
    );
    // Source: Williams S, West S, Cross MJ, Stokes KA, BJSM 2017;51(3):209–210 EWMA (values computed from the formula, methods.md §9): seeded from 0
    close(
        acute_chronic_ewma_seeded(&a, 0.0)[27].unwrap(),
        1.350,
        0.0005,
    );
    // Our seed rule (mean of the first 7 days = 40 here).
    // Computed with python3 from the Williams 2017 EWMA: 57.330322/47.871967 = 1.197576
    assert_eq!(acute_chronic_seed(&a), 40.0);
    close(acute_chronic_ewma(&a)[27].unwrap(), 1.197576, 1e-6);
    // Source: Hulin et al., BJSM 2014;48:708–712; Gabbett, BJSM 2016;50:273–280 rolling averages (values computed from the formula, methods.md §9): coupled 1.333, uncoupled 1.500
    close(rolling_acute_chronic(&a)[27].unwrap(), 1.333, 0.0005);
    close(
        rolling_acute_chronic_uncoupled(&a)[27].unwrap(),
        1.500,
        0.0005,
    );

    let b: Vec<f64> = [vec![50.0; 27], vec![200.0]].concat();
    // Source: Williams S, West S, Cross MJ, Stokes KA, BJSM 2017;51(3):209–210 EWMA (values computed from the formula, methods.md §9): 87.5/60.34 = 1.450, seed = first day
    close(
        acute_chronic_ewma_seeded(&b, 50.0)[27].unwrap(),
        1.450,
        0.0005,
    );
    close(acute_chronic_ewma(&b)[27].unwrap(), 1.450, 0.0005);
    // Source: Hulin et al., BJSM 2014;48:708–712; Gabbett, BJSM 2016;50:273–280 rolling averages (values computed from the formula, methods.md §9): 71.43/55.36 = 1.290
    close(rolling_acute_chronic(&b)[27].unwrap(), 1.290, 0.0005);
}

#[test]
fn seed_rule_differs_from_first_day_seed() {
    // A weekly pattern starting with a rest day: the seed rule matters.
    let week = [0.0, 60.0, 30.0, 0.0, 90.0, 45.0, 120.0];
    let daily: Vec<f64> = week.iter().cycle().take(28).copied().collect();
    close(acute_chronic_seed(&daily), 345.0 / 7.0, 1e-12);
    // Computed with python3 from the Williams 2017 EWMA: seed = mean of first 7 days (49.2857) → 65.805840/52.792626
    close(acute_chronic_ewma(&daily)[27].unwrap(), 1.246497, 1e-6);
    // Computed with python3 from the Williams 2017 EWMA: seed = first day (0) → 65.790193/46.128203
    close(
        acute_chronic_ewma_seeded(&daily, 0.0)[27].unwrap(),
        1.426247,
        1e-6,
    );
    // Rolling: the same weekly pattern throughout gives exactly 1.
    close(rolling_acute_chronic(&daily)[27].unwrap(), 1.0, 1e-12);
}

#[test]
fn acute_chronic_undefined_before_28_days_and_for_zero_load() {
    let short = vec![50.0; 27];
    assert!(acute_chronic_ewma(&short).iter().all(Option::is_none));
    assert!(rolling_acute_chronic(&short).iter().all(Option::is_none));
    let zeros = vec![0.0; 40];
    assert!(acute_chronic_ewma(&zeros).iter().all(Option::is_none));
    assert!(rolling_acute_chronic(&zeros).iter().all(Option::is_none));
    assert!(acute_chronic_ewma(&[]).is_empty());
    let long = vec![50.0; 40];
    let r = rolling_acute_chronic(&long);
    assert_eq!(r.len(), 40);
    assert!(r[..27].iter().all(Option::is_none));
    assert!(r[27..].iter().all(|v| *v == Some(1.0)));
}

#[test]
fn acute_chronic_bands_and_criticism() {
    // Source: Gabbett, BJSM 2016;50:273–280 (bands through secondary pages, methods.md §9)
    assert_eq!(acute_chronic_band(0.79), Some(AcuteChronicBand::Below));
    assert_eq!(acute_chronic_band(0.8), Some(AcuteChronicBand::Within));
    assert_eq!(acute_chronic_band(1.3), Some(AcuteChronicBand::Within));
    assert_eq!(acute_chronic_band(1.4), Some(AcuteChronicBand::Above));
    assert_eq!(acute_chronic_band(1.5), Some(AcuteChronicBand::Caution));
    assert_eq!(acute_chronic_band(f64::NAN), None);
    assert!(ACUTE_CHRONIC_CRITICISM.contains("Impellizzeri"));
    assert!(!ACUTE_CHRONIC_CRITICISM.contains('\n'));
}

#[test]
fn impulse_response_checks() {
    // Source: Banister EW, Calvert TW, Savage MV, Bach T, Aust J Sports Med 1975;7:57–61 impulse-response model (values computed from the formula, methods.md §10): w = 100 days 1–14, 0 days 15–21, τ 42/7, k1 = 1, k2 = 2
    let daily: Vec<f64> = (1..=21)
        .map(|d| if d <= 14 { 100.0 } else { 0.0 })
        .collect();
    let r = fitness_fatigue(&daily, 42.0, 7.0, 1.0, 2.0).unwrap();
    assert_eq!(r.len(), 21);
    let day = |d: usize| r[d - 1];
    close(day(1).fitness, 100.0, 1e-9);
    close(day(1).fatigue, 100.0, 1e-9);
    close(day(1).readiness, -100.0, 1e-9);
    close(day(7).fitness, 652.5, 0.05);
    close(day(7).fatigue, 474.8, 0.05);
    close(day(7).readiness, -297.2, 0.05);
    close(day(14).fitness, 1205.0, 0.5);
    close(day(14).fatigue, 649.5, 0.05);
    close(day(14).readiness, -94.26, 0.005);
    close(day(21).fitness, 1020.0, 0.5);
    close(day(21).fatigue, 238.9, 0.05);
    close(day(21).readiness, 541.9, 0.05);

    // Source: Banister EW, Calvert TW, Savage MV, Bach T, Aust J Sports Med 1975;7:57–61 impulse-response model (values computed from the formula, methods.md §10): one-day update
    let s = impulse_response_step(100.0, 60.0, 50.0, 42.0, 7.0, 1.0, 2.0).unwrap();
    close(s.fitness, 147.6, 0.05);
    close(s.fatigue, 102.0, 0.05);
    close(s.readiness, -56.38, 0.005);

    // Undefined parameters.
    assert_eq!(fitness_fatigue(&daily, 0.0, 7.0, 1.0, 2.0), None);
    assert_eq!(fitness_fatigue(&daily, 42.0, f64::NAN, 1.0, 2.0), None);
    assert_eq!(fitness_fatigue(&[], 42.0, 7.0, 1.0, 2.0), Some(vec![]));
}
