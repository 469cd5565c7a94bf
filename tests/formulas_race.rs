//! Race formulas: Riegel, Daniels & Gilbert equivalent VO2max, critical speed (analysis::race).

use splitdesk::analysis::race::{
    critical_speed, daniels_gilbert_fraction, daniels_gilbert_vo2max, predict_time_cs, riegel,
    CsRefusal,
};

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

const HALF: f64 = 21097.5;
const MARATHON: f64 = 42195.0;

#[test]
fn riegel_checks() {
    // Source: Riegel PS, American Scientist 1981;69(3):285–290 (values computed from the formula, methods.md §5)
    close(riegel(1200.0, 5000.0, 10000.0).unwrap(), 2501.9, 0.05);
    close(riegel(2400.0, 10000.0, HALF).unwrap(), 5295.4, 0.05);
    close(riegel(2400.0, 10000.0, MARATHON).unwrap(), 11040.0, 1.0);
    close(riegel(5400.0, HALF, MARATHON).unwrap(), 11259.0, 0.5);
    // Same distance: same time.
    close(riegel(1234.0, 5000.0, 5000.0).unwrap(), 1234.0, 1e-9);
    assert_eq!(riegel(0.0, 5000.0, 10000.0), None);
    assert_eq!(riegel(1200.0, -5000.0, 10000.0), None);
    assert_eq!(riegel(1200.0, 5000.0, f64::NAN), None);
}

#[test]
fn equivalent_vo2max_checks() {
    // Source: Daniels J, Gilbert J, Oxygen Power, 1979 (values computed from the equations, methods.md §4)
    close(daniels_gilbert_vo2max(5000.0, 1200.0).unwrap(), 49.81, 0.01);
    close(
        daniels_gilbert_vo2max(10000.0, 2400.0).unwrap(),
        51.94,
        0.01,
    );
    close(
        daniels_gilbert_vo2max(MARATHON, 10800.0).unwrap(),
        53.53,
        0.01,
    );
    // Source: Daniels J, Gilbert J, Oxygen Power, 1979 (values computed from the equations, methods.md §4): F(20 min) = 0.9530
    close(daniels_gilbert_fraction(20.0), 0.9530, 0.00005);
    // Source: Daniels J, Gilbert J, Oxygen Power, 1979 (values computed from the equations, methods.md §4): F(t) > 1 below 11.03 min
    assert!(daniels_gilbert_fraction(11.0) > 1.0);
    assert!(daniels_gilbert_fraction(11.1) < 1.0);
    assert_eq!(daniels_gilbert_vo2max(0.0, 1200.0), None);
    assert_eq!(daniels_gilbert_vo2max(5000.0, 0.0), None);
}

#[test]
fn critical_speed_worked_fit() {
    // Source: Monod H, Scherrer J, Ergonomics 1965;8(3):329–338; Hill DW, Sports Med 1993;16(4):237–254; distance-on-time OLS worked fit (values computed, methods.md §6)
    let f = critical_speed(&[(220.0, 1200.0), (490.0, 2400.0), (1040.0, 4800.0)]).unwrap();
    close(f.cs_mps, 4.386, 0.0005);
    close(f.d_prime_m, 241.3, 0.05);
    close(f.r2, 0.99998, 0.000005);
    assert_eq!(f.n, 3);
}

#[test]
fn critical_speed_refusals() {
    assert_eq!(
        critical_speed(&[(220.0, 1200.0), (490.0, 2400.0)]),
        Err(CsRefusal::TooFewPoints { n: 2 })
    );
    assert_eq!(
        critical_speed(&[(220.0, 1200.0), (0.0, 2400.0), (1040.0, 4800.0)]),
        Err(CsRefusal::InvalidPoint { index: 1 })
    );
    assert_eq!(
        critical_speed(&[(300.0, 1200.0), (300.0, 1300.0), (300.0, 1250.0)]),
        Err(CsRefusal::SameDuration)
    );
    // A line through (100,300),(200,700),(300,1100): CS 4, D' −100.
    match critical_speed(&[(100.0, 300.0), (200.0, 700.0), (300.0, 1100.0)]) {
        Err(CsRefusal::NonPositiveDPrime { d_prime_m }) => close(d_prime_m, -100.0, 1e-9),
        other => panic!("expected a D' refusal, got {other:?}"),
    }
    // Longer efforts covering less distance.
    assert!(matches!(
        critical_speed(&[(200.0, 1500.0), (400.0, 1400.0), (600.0, 1300.0)]),
        Err(CsRefusal::NonPositiveCs { .. })
    ));
    // Scattered efforts: poor fit.
    match critical_speed(&[
        (200.0, 1000.0),
        (400.0, 3000.0),
        (600.0, 2000.0),
        (800.0, 4200.0),
    ]) {
        Err(CsRefusal::PoorFit { r2 }) => assert!(r2 < 0.95),
        other => panic!("expected a poor-fit refusal, got {other:?}"),
    }
    // The refusal reads as a reason.
    let msg = CsRefusal::TooFewPoints { n: 1 }.to_string();
    assert!(msg.contains("at least 3"));
}

#[test]
fn critical_speed_prediction_range() {
    // (3000 − 241.3)/4.386 ≈ 629 s: inside 2–30 min.
    close(
        predict_time_cs(4.386, 241.3, 3000.0).unwrap(),
        (3000.0 - 241.3) / 4.386,
        1e-9,
    );
    // 400 m: ~36 s, outside the model's range.
    assert_eq!(predict_time_cs(4.386, 241.3, 400.0), None);
    // 10 km: ~2225 s, beyond 30 min.
    assert_eq!(predict_time_cs(4.386, 241.3, 10000.0), None);
    assert_eq!(predict_time_cs(0.0, 241.3, 3000.0), None);
    assert_eq!(predict_time_cs(4.0, -1.0, 3000.0), None);
}
