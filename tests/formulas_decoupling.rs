//! Aerobic decoupling, efficiency and HR drift (analysis::decoupling).

use splitdesk::analysis::decoupling::{decoupling_pct, efficiency, hr_drift_bpm_per_h};

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

struct Trace {
    t: Vec<f64>,
    speed: Vec<Option<f64>>,
    hr: Vec<Option<f64>>,
    usable: Vec<bool>,
}

/// Blocks of (seconds, spacing, speed, hr, usable), starting at t = 0.
fn trace(blocks: &[(f64, f64, f64, f64, bool)]) -> Trace {
    let mut tr = Trace {
        t: vec![0.0],
        speed: vec![None],
        hr: vec![None],
        usable: vec![false],
    };
    for &(secs, dt, v, h, ok) in blocks {
        let n = (secs / dt).round() as usize;
        for _ in 0..n {
            let last = *tr.t.last().unwrap();
            tr.t.push(last + dt);
            tr.speed.push(Some(v));
            tr.hr.push(Some(h));
            tr.usable.push(ok);
        }
    }
    tr
}

fn dec(tr: &Trace) -> Option<f64> {
    decoupling_pct(&tr.speed, &tr.hr, &tr.t, &tr.usable)
}

#[test]
fn decoupling_checks() {
    // Source: methods.md §7, common practice (values computed from the formula): (E1 − E2)/E1·100
    let tr = trace(&[
        (1800.0, 1.0, 3.0, 140.0, true),
        (1800.0, 1.0, 3.0, 147.0, true),
    ]);
    close(dec(&tr).unwrap(), 4.762, 0.0005);
    let tr = trace(&[
        (1800.0, 1.0, 3.0, 140.0, true),
        (1800.0, 1.0, 2.85, 140.0, true),
    ]);
    close(dec(&tr).unwrap(), 5.000, 0.0005);
    let tr = trace(&[
        (1800.0, 1.0, 3.2, 150.0, true),
        (1800.0, 1.0, 3.1, 152.0, true),
    ]);
    close(dec(&tr).unwrap(), 4.400, 0.0005);
    // No change: 0.
    let tr = trace(&[(3600.0, 1.0, 3.0, 140.0, true)]);
    close(dec(&tr).unwrap(), 0.0, 1e-12);
}

#[test]
fn halves_are_equal_usable_time_not_equal_sample_counts() {
    // 100 s of 1-s samples, then 100 s of 10-s samples: a split by count would be wrong.
    let tr = trace(&[
        (100.0, 1.0, 3.0, 140.0, true),
        (100.0, 10.0, 3.0, 147.0, true),
    ]);
    close(dec(&tr).unwrap(), 4.762, 0.0005);
    // An unusable stretch in the middle does not count towards either half.
    let tr = trace(&[
        (1000.0, 1.0, 3.0, 140.0, true),
        (1000.0, 1.0, 5.0, 100.0, false),
        (1000.0, 1.0, 3.0, 147.0, true),
    ]);
    close(dec(&tr).unwrap(), 4.762, 0.0005);
    // The sample straddling the split is shared in proportion: 3 samples of 10 s,
    // split at 15 s. First half 10 s @ (3,140) + 5 s @ (3,147); second 5 s @ 147 + 10 s @ 150.
    let tr = trace(&[
        (10.0, 10.0, 3.0, 140.0, true),
        (10.0, 10.0, 3.0, 147.0, true),
        (10.0, 10.0, 3.0, 150.0, true),
    ]);
    let (h1, h2) = (
        (10.0 * 140.0 + 5.0 * 147.0) / 15.0,
        (5.0 * 147.0 + 10.0 * 150.0) / 15.0,
    );
    close(dec(&tr).unwrap(), (1.0 - h1 / h2) * 100.0, 1e-9);
}

#[test]
fn decoupling_undefined_cases() {
    let tr = trace(&[(600.0, 1.0, 3.0, 140.0, false)]);
    assert_eq!(dec(&tr), None);
    assert_eq!(decoupling_pct(&[], &[], &[], &[]), None);
    // Missing HR everywhere.
    let mut tr = trace(&[(600.0, 1.0, 3.0, 140.0, true)]);
    tr.hr.iter_mut().for_each(|h| *h = None);
    assert_eq!(dec(&tr), None);
    // Gaps are capped at 10 s, so a long gap does not pull the split.
    let mut tr = trace(&[
        (600.0, 1.0, 3.0, 140.0, true),
        (600.0, 1.0, 3.0, 147.0, true),
    ]);
    let n = tr.t.len();
    for t in tr.t.iter_mut().skip(n - 600) {
        *t += 3000.0;
    }
    let d = dec(&tr).unwrap();
    assert!((d - 4.762).abs() < 0.05, "decoupling {d}");
}

#[test]
fn efficiency_is_metres_per_beat() {
    // 3 m/s at 180 bpm: 180 m per minute over 180 beats = 1 m per beat.
    close(efficiency(3.0, 180.0).unwrap(), 1.0, 1e-12);
    close(efficiency(3.0, 150.0).unwrap(), 1.2, 1e-12);
    assert_eq!(efficiency(3.0, 0.0), None);
    assert_eq!(efficiency(f64::NAN, 150.0), None);
}

#[test]
fn hr_drift_is_the_least_squares_slope_per_hour() {
    // HR rising 10 bpm per hour, with one unusable spike and one missing sample.
    let t: Vec<f64> = (0..=3600).map(f64::from).collect();
    let mut hr: Vec<Option<f64>> = t.iter().map(|x| Some(140.0 + 10.0 * x / 3600.0)).collect();
    let mut usable = vec![true; t.len()];
    hr[100] = Some(230.0);
    usable[100] = false;
    hr[200] = None;
    close(hr_drift_bpm_per_h(&t, &hr, &usable).unwrap(), 10.0, 1e-9);
    // Flat HR: no drift.
    let flat = vec![Some(150.0); t.len()];
    close(hr_drift_bpm_per_h(&t, &flat, &usable).unwrap(), 0.0, 1e-12);
    // Too few samples.
    assert_eq!(hr_drift_bpm_per_h(&t[..1], &hr[..1], &usable[..1]), None);
    assert_eq!(hr_drift_bpm_per_h(&t, &hr, &vec![false; t.len()]), None);
}
