//! Least-squares trend (analysis::trend).

use splitdesk::analysis::trend::{fit, Direction};

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

#[test]
fn hand_computed_fits() {
    // Perfect line y = 2x.
    let f = fit(&[1.0, 2.0, 3.0], &[2.0, 4.0, 6.0]).unwrap();
    close(f.slope, 2.0, 1e-12);
    close(f.intercept, 0.0, 1e-12);
    assert_eq!(f.r2, 1.0);
    assert_eq!(f.n, 3);
    // (0,1), (1,3), (2,2): x̄ = 1, ȳ = 2, Sxx = 2, Sxy = 1, Syy = 2
    // → slope 0.5, intercept 1.5, R² = 1/(2·2) = 0.25
    let f = fit(&[0.0, 1.0, 2.0], &[1.0, 3.0, 2.0]).unwrap();
    close(f.slope, 0.5, 1e-12);
    close(f.intercept, 1.5, 1e-12);
    close(f.r2, 0.25, 1e-12);
    close(f.predict(4.0), 3.5, 1e-12);
    close(f.residual(1.0, 3.0), 1.0, 1e-12);
    // Two points: exact line.
    let f = fit(&[10.0, 20.0], &[5.0, 3.0]).unwrap();
    close(f.slope, -0.2, 1e-12);
    close(f.intercept, 7.0, 1e-12);
    assert_eq!(f.r2, 1.0);
}

#[test]
fn degenerate_inputs() {
    assert_eq!(fit(&[], &[]), None);
    assert_eq!(fit(&[1.0], &[1.0]), None);
    // Zero x-variance.
    assert_eq!(fit(&[3.0, 3.0, 3.0], &[1.0, 2.0, 3.0]), None);
    // Zero y-variance: flat line, R² = 1 by definition.
    let f = fit(&[1.0, 2.0, 3.0], &[7.0, 7.0, 7.0]).unwrap();
    assert_eq!(f.slope, 0.0);
    assert_eq!(f.intercept, 7.0);
    assert_eq!(f.r2, 1.0);
    // Non-finite pairs and the tail of the longer slice are ignored.
    let f = fit(&[1.0, f64::NAN, 2.0, 3.0, 99.0], &[2.0, 5.0, 4.0, 6.0]).unwrap();
    assert_eq!(f.n, 3);
    close(f.slope, 2.0, 1e-12);
}

#[test]
fn direction_from_fitted_change() {
    // Slope 0.1 over x from 0 to 10: change +1.0.
    let xs: Vec<f64> = (0..=10).map(f64::from).collect();
    let ys: Vec<f64> = xs.iter().map(|x| 5.0 + 0.1 * x).collect();
    let f = fit(&xs, &ys).unwrap();
    close(f.change(), 1.0, 1e-12);
    assert_eq!(f.direction(0.5), Direction::Rising);
    assert_eq!(f.direction(1.5), Direction::Flat);
    let down: Vec<f64> = ys.iter().map(|y| -y).collect();
    assert_eq!(fit(&xs, &down).unwrap().direction(0.5), Direction::Falling);
    assert_eq!(fit(&xs, &down).unwrap().direction(-0.5), Direction::Falling);
    assert_eq!(Direction::Flat.as_str(), "flat");
}

#[test]
fn critical_speed_worked_fit() {
    // Source: Monod H, Scherrer J, Ergonomics 1965;8(3):329–338; Hill DW, Sports Med 1993;16(4):237–254; distance-on-time OLS worked fit (values computed, methods.md §6)
    let ts = [220.0, 490.0, 1040.0];
    let ds = [1200.0, 2400.0, 4800.0];
    let f = fit(&ts, &ds).unwrap();
    close(f.slope, 4.386, 0.0005);
    close(f.intercept, 241.3, 0.05);
    close(f.r2, 0.99998, 0.000005);
    let res: Vec<f64> = ts
        .iter()
        .zip(ds.iter())
        .map(|(&t, &d)| f.residual(t, d))
        .collect();
    close(res[0], -6.30, 0.005);
    close(res[1], 9.39, 0.005);
    close(res[2], -3.09, 0.005);
}
