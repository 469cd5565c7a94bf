//! Elevation gain and loss with hysteresis (analysis::elevation).

use splitdesk::analysis::elevation::{gain_loss, DEFAULT_HYSTERESIS_M};
use splitdesk::model::Channel;

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

#[test]
fn jittery_flat_line_gains_nothing() {
    // ±1 m jitter around 120 m for an hour.
    let alt = Channel::from_values(
        (0..3600).map(|i| 120.0 + [1.0, -1.0, 0.3, -0.7, 0.0, 0.9, -1.0, 0.5][i % 8]),
    );
    let (g, l) = gain_loss(&alt, DEFAULT_HYSTERESIS_M);
    assert_eq!((g, l), (0.0, 0.0));
}

#[test]
fn clean_climb_and_descent_count_in_full() {
    let up = (0..=1000).map(|i| 50.0 + 0.1 * i as f64);
    let down = (0..=1000).rev().map(|i| 50.0 + 0.1 * i as f64);
    let alt = Channel::from_values(up.chain(down));
    let (g, l) = gain_loss(&alt, DEFAULT_HYSTERESIS_M);
    close(g, 100.0, 1e-9);
    close(l, 100.0, 1e-9);
}

#[test]
fn jittery_climb_is_close_to_the_true_climb() {
    let alt = Channel::from_values((0..=2000).map(|i| {
        let base = if i <= 1000 {
            0.1 * i as f64
        } else {
            100.0 - 0.1 * (i - 1000) as f64
        };
        base + [1.0, -1.0, 0.5, -0.5][i % 4]
    }));
    let (g, l) = gain_loss(&alt, DEFAULT_HYSTERESIS_M);
    assert!((g - 100.0).abs() <= 2.0, "gain {g}");
    assert!((l - 100.0).abs() <= 2.0, "loss {l}");
}

#[test]
fn small_bumps_below_hysteresis_and_missing_samples() {
    // 2 m bumps with a 3 m hysteresis: nothing.
    let bumps = Channel::from_values((0..100).map(|i| if i % 10 < 5 { 10.0 } else { 12.0 }));
    assert_eq!(gain_loss(&bumps, 3.0), (0.0, 0.0));
    // 5 m bumps: each counts.
    let bumps = Channel::from_values((0..40).map(|i| if i % 10 < 5 { 10.0 } else { 15.0 }));
    let (g, l) = gain_loss(&bumps, 3.0);
    close(g, 20.0, 1e-9);
    close(l, 15.0, 1e-9);
    // Missing samples are skipped.
    let gappy = Channel::new(vec![Some(0.0), None, Some(10.0), None, None, Some(4.0)]);
    assert_eq!(gain_loss(&gappy, 3.0), (10.0, 6.0));
    assert_eq!(gain_loss(&Channel::default(), 3.0), (0.0, 0.0));
    // Zero hysteresis: every change counts.
    let steps = Channel::from_values([0.0, 1.0, 0.5, 2.0]);
    assert_eq!(gain_loss(&steps, 0.0), (2.5, 0.5));
    assert_eq!(gain_loss(&steps, f64::NAN), (2.5, 0.5));
}
