//! Values no recording can hold (a damaged or hostile file): the analysis reads them as
//! missing and every number it gives stays finite (invented data, self-consistency only).

use chrono::{TimeZone, Utc};
use splitdesk::analysis::analyze;
use splitdesk::model::{AthleteProfile, Channel, FileFormat, Session, Sport};

#[test]
fn extreme_distance_speed_and_hr_values_read_as_missing() {
    // Found by the property tests: one distance sample at f64::MAX made the session's
    // distance infinite (and its pace zero).
    let start = Utc.with_ymd_and_hms(2026, 3, 1, 7, 0, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = Sport::Running;
    let n = 600;
    s.t = (0..n).map(|i| i as f64).collect();
    s.time =
        s.t.iter()
            .map(|&x| start + chrono::Duration::seconds(x as i64))
            .collect();
    s.distance = Some(Channel::from_values((0..n).map(|i| match i {
        300 => f64::MAX,
        400 => -1e300,
        _ => 3.0 * i as f64,
    })));
    s.speed = Some(Channel::from_values((0..n).map(|i| match i {
        200 => 1e300,
        _ => 3.0,
    })));
    s.hr = Some(Channel::from_values((0..n).map(|i| match i {
        100 => f64::MAX,
        101 => -1e9,
        _ => 150.0,
    })));
    let mut p = AthleteProfile::bare("a");
    p.hr_max = Some(190.0);
    p.hr_rest = Some(50.0);
    let r = analyze(&s, None, &p);
    // 599 one-second steps of 3 m; the two bad samples are skipped, their steps bridged.
    let d = r.session.distance_m.unwrap();
    assert!((d - 1797.0).abs() < 1e-6, "distance {d}");
    let v = r.session.avg_speed_mps.unwrap();
    assert!((v - 3.0).abs() < 1e-9, "speed {v}");
    assert_eq!(r.max_hr, Some(150.0));
    let text = format!("{r:?}");
    assert!(!text.contains("NaN") && !text.contains("inf,") && !text.contains("inf)"));
    // The session itself keeps every sample as recorded.
    assert_eq!(s.distance.as_ref().unwrap().get(300), Some(f64::MAX));
}

#[test]
fn a_vanishing_speed_has_no_pace() {
    // Found by the property tests: the smallest positive speed gave an infinite pace.
    use splitdesk::model::units::pace_s_per_km;
    assert_eq!(pace_s_per_km(f64::MIN_POSITIVE), None);
    assert_eq!(pace_s_per_km(0.0), None);
    // 1e-300 m/s is a finite (if absurd) pace; 4 m/s is 250 s/km.
    assert_eq!(pace_s_per_km(1e-300), Some(1e303));
    assert_eq!(pace_s_per_km(4.0), Some(250.0));
}
