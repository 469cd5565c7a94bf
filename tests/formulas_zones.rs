//! Heart-rate and pace zones, HR max formulas, time in zones (analysis::zones).

use splitdesk::analysis::zones::{
    fox_hr_max, hr_zones, hr_zones_by_max, hr_zones_by_reserve, karvonen, pace_zones,
    tanaka_hr_max, time_in_zones, HrMaxSource, HrZoneBasis, ZONE_NAMES,
};
use splitdesk::model::{AthleteProfile, Zone};

fn close(actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "expected {expected} ± {tol}, got {actual}"
    );
}

fn bounds(zones: &[Zone]) -> Vec<f64> {
    let mut b: Vec<f64> = zones.iter().map(|z| z.from).collect();
    b.extend(zones.last().map(|z| z.to));
    b
}

#[test]
fn karvonen_checks() {
    // Source: Karvonen MJ, Kentala E, Mustala O, Ann Med Exp Biol Fenn 1957;35(3):307–315 (values computed from the formula, methods.md §3)
    close(karvonen(60.0, 180.0, 0.6).unwrap(), 132.0, 1e-9);
    close(karvonen(60.0, 180.0, 0.7).unwrap(), 144.0, 1e-9);
    close(karvonen(50.0, 194.0, 0.8).unwrap(), 165.2, 1e-9);
    assert_eq!(karvonen(180.0, 180.0, 0.6), None);
    assert_eq!(karvonen(f64::NAN, 180.0, 0.6), None);
}

#[test]
fn age_predicted_hr_max_checks() {
    // Source: Tanaka H, Monahan KD, Seals DR, J Am Coll Cardiol 2001;37(1):153–156; Fox SM, Naughton JP, Haskell WL, Ann Clin Res 1971;3:404–432 (values computed from the formulas, methods.md §3)
    close(tanaka_hr_max(20.0).unwrap(), 194.0, 1e-9);
    close(tanaka_hr_max(40.0).unwrap(), 180.0, 1e-9);
    close(tanaka_hr_max(60.0).unwrap(), 166.0, 1e-9);
    close(fox_hr_max(20.0).unwrap(), 200.0, 1e-9);
    close(fox_hr_max(60.0).unwrap(), 160.0, 1e-9);
    // The two cross exactly at 40.
    close(
        fox_hr_max(40.0).unwrap(),
        tanaka_hr_max(40.0).unwrap(),
        1e-9,
    );
    assert_eq!(tanaka_hr_max(-1.0), None);
    assert_eq!(fox_hr_max(f64::NAN), None);
}

#[test]
fn default_zones_by_heart_rate_reserve() {
    // Karvonen bounds at k = 0, 0.6, 0.7, 0.8, 0.9, 1.0 for rest 60, max 180.
    let z = hr_zones_by_reserve(60.0, 180.0).unwrap();
    let names: Vec<&str> = z.iter().map(|z| z.name.as_str()).collect();
    assert_eq!(names, ZONE_NAMES.to_vec());
    let b = bounds(&z);
    for (got, want) in b.iter().zip([60.0, 132.0, 144.0, 156.0, 168.0, 180.0]) {
        close(*got, want, 1e-9);
    }
    assert_eq!(hr_zones_by_reserve(180.0, 60.0), None);
    let b = bounds(&hr_zones_by_max(200.0).unwrap());
    for (got, want) in b.iter().zip([100.0, 120.0, 140.0, 160.0, 180.0, 200.0]) {
        close(*got, want, 1e-9);
    }
    assert_eq!(hr_zones_by_max(0.0), None);
}

#[test]
fn zones_from_profile() {
    let mut p = AthleteProfile::bare("ines-aldana");
    // Nothing known: no zones.
    assert_eq!(hr_zones(&p, None), None);
    // Age only: Tanaka max, fraction-of-max zones.
    let z = hr_zones(&p, Some(40.0)).unwrap();
    assert_eq!(
        z.basis,
        HrZoneBasis::FractionOfMax(HrMaxSource::Tanaka { age_years: 40.0 })
    );
    close(z.zones.last().unwrap().to, 180.0, 1e-9);
    // Rest and measured max: reserve zones.
    p.hr_rest = Some(50.0);
    p.hr_max = Some(194.0);
    let z = hr_zones(&p, Some(40.0)).unwrap();
    assert_eq!(z.basis, HrZoneBasis::HeartRateReserve(HrMaxSource::Profile));
    // Source: Karvonen MJ, Kentala E, Mustala O, Ann Med Exp Biol Fenn 1957;35(3):307–315 (values computed from the formula, methods.md §3): rest 50, max 194, k = 0.8 → 165.2
    close(z.zones[3].from, 165.2, 1e-9);
    close(z.zones[4].from, 50.0 + 0.9 * 144.0, 1e-9);
    // An override wins.
    let custom = vec![Zone {
        name: "all".into(),
        from: 0.0,
        to: 250.0,
    }];
    p.hr_zones = Some(custom.clone());
    let z = hr_zones(&p, None).unwrap();
    assert_eq!(z.basis, HrZoneBasis::Override);
    assert_eq!(z.zones, custom);
    // An empty override does not.
    p.hr_zones = Some(vec![]);
    assert_eq!(
        hr_zones(&p, None).unwrap().basis,
        HrZoneBasis::HeartRateReserve(HrMaxSource::Profile)
    );
}

#[test]
fn pace_zones_from_threshold_speed() {
    let z = pace_zones(4.0).unwrap();
    assert_eq!(z.len(), 5);
    let b = bounds(&z);
    for (got, want) in b.iter().zip([0.0, 3.0, 3.48, 3.8, 4.12, 12.5]) {
        close(*got, want, 1e-9);
    }
    assert_eq!(pace_zones(0.0), None);
    assert_eq!(pace_zones(f64::INFINITY), None);
}

#[test]
fn time_in_zones_counts_capped_usable_time() {
    let zones = hr_zones_by_reserve(60.0, 180.0).unwrap();
    // 1 Hz: 100 s at 120 (recovery), 50 s at 150 (steady), 30 s at 180 (max, top bound
    // included), 10 s at 40 (below every zone), 20 s unusable at 150.
    let mut t = vec![0.0];
    let mut hr = vec![None];
    let mut usable = vec![false];
    for (secs, bpm, ok) in [
        (100, 120.0, true),
        (50, 150.0, true),
        (30, 180.0, true),
        (10, 40.0, true),
        (20, 150.0, false),
    ] {
        for _ in 0..secs {
            t.push(t.len() as f64);
            hr.push(Some(bpm));
            usable.push(ok);
        }
    }
    // One sample after a 5-minute gap counts 10 s.
    t.push(t.last().unwrap() + 300.0);
    hr.push(Some(140.0));
    usable.push(true);
    let secs = time_in_zones(&t, &hr, &usable, &zones);
    assert_eq!(secs, vec![100.0, 10.0, 50.0, 0.0, 30.0]);
    assert!(time_in_zones(&t, &hr, &usable, &[]).is_empty());
    assert_eq!(time_in_zones(&[], &[], &[], &zones), vec![0.0; 5]);
}
