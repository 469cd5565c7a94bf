//! The demo roster's planted cases come out of the analysis as planted, and every demo
//! session analyses into the full `splitdesk.analysis/1` contract. (The demo data is our
//! own invention; these are self-consistency checks of the whole pipeline.)

use std::path::Path;

use splitdesk::analysis::review::Review;
use splitdesk::roster::Roster;
use splitdesk::workspace::analyse_activity;

fn demo() -> Roster {
    Roster::open(&Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes")).unwrap()
}

fn review(r: &Roster, id: &str) -> Review {
    let (a, act) = r.find_session(id).unwrap();
    analyse_activity(a, act).unwrap().review
}

fn has(r: &Review, code: &str) -> bool {
    r.findings.iter().any(|f| f.code == code)
}

#[test]
fn hot_long_run_decouples_over_five_percent() {
    let r = review(&demo(), "keziah-brandt/2026-11-15-long-run");
    // Common coaching practice (no published source): the 5 % line.
    assert!(r.decoupling_pct.unwrap() > 5.0, "{:?}", r.decoupling_pct);
    assert!(has(&r, "decoupling_high"));
}

#[test]
fn downhill_long_run_is_negative_and_the_finding_names_downhill() {
    let r = review(&demo(), "keziah-brandt/2026-11-01-long-run");
    assert!(
        r.decoupling_raw_pct.unwrap() < 0.0,
        "{:?}",
        r.decoupling_raw_pct
    );
    let f = r
        .findings
        .iter()
        .find(|f| f.code == "decoupling_negative_downhill")
        .expect("downhill finding");
    assert!(f.text.contains("downhill"));
}

#[test]
fn progression_set_gets_faster_and_tired_set_troughs_climb() {
    let roster = demo();
    let p = review(&roster, "tobias-wrenfield/2026-11-05-progression-repeats");
    assert_eq!(p.trend("avg_pace_s_per_km").unwrap().direction, "falling");
    assert!(has(&p, "progression"));
    let tired = review(&roster, "mira-castellan/2026-11-17-intervals");
    assert_eq!(
        tired.trend("recovery_trough_bpm").unwrap().direction,
        "rising"
    );
    assert_eq!(tired.trend("hr_lag_s").unwrap().direction, "rising");
    assert!(has(&tired, "troughs_rising"));
    let fresh = review(&roster, "mira-castellan/2026-10-27-intervals");
    let fresh_rise = fresh.trend("recovery_trough_bpm").unwrap().change_over_set;
    let tired_rise = tired.trend("recovery_trough_bpm").unwrap().change_over_set;
    assert!(
        tired_rise > fresh_rise + 4.0,
        "{tired_rise} vs {fresh_rise}"
    );
}

#[test]
fn badly_paced_time_trial_is_called_out_and_the_even_one_is_not() {
    let roster = demo();
    let bad = review(&roster, "mira-castellan/2026-10-24-time-trial");
    assert!(has(&bad, "fade_within") && has(&bad, "uneven_pacing"));
    let good = review(&roster, "mira-castellan/2026-11-28-time-trial");
    assert!(!has(&good, "fade_within") && !has(&good, "uneven_pacing"));
}

#[test]
fn faulty_sessions_are_flagged_and_still_analysed() {
    let roster = demo();
    let gps = review(&roster, "keziah-brandt/2026-11-03-easy-run");
    assert!(gps.flags.iter().any(|f| f.kind == "position_jump"));
    let lock = review(&roster, "dagny-holloway/2026-11-02-easy-run");
    assert!(lock.flags.iter().any(|f| f.kind == "cadence_lock"));
    assert!(has(&lock, "cadence_lock"));
    let mill = review(&roster, "tobias-wrenfield/2026-11-05-progression-repeats");
    assert!(has(&mill, "no_gps"));
}

#[test]
fn every_demo_session_analyses_into_the_contract() {
    let roster = demo();
    let mut analysed = 0;
    for (a, act) in roster.activities() {
        let Ok(x) = analyse_activity(a, act) else {
            // the one planted damaged file
            assert_eq!(act.stem, "2026-11-06-easy-run");
            continue;
        };
        analysed += 1;
        let v = serde_json::to_value(&x.review).unwrap();
        assert_eq!(v["schema"], "splitdesk.analysis/1");
        for key in [
            "file",
            "session",
            "plan",
            "flags",
            "flagged_fraction",
            "intervals",
            "recoveries",
            "trends",
            "decoupling_pct",
            "hr_drift_bpm_per_h",
            "trimp",
            "elevation_gain_m",
            "elevation_loss_m",
            "zones",
            "findings",
        ] {
            assert!(v.get(key).is_some(), "{}: missing {key}", act.stem);
        }
        for key in [
            "format",
            "start",
            "duration_s",
            "moving_s",
            "distance_m",
            "samples",
        ] {
            assert!(v["session"].get(key).is_some(), "session.{key}");
        }
        for iv in v["intervals"].as_array().unwrap() {
            for key in [
                "index",
                "kind",
                "source",
                "start_s",
                "end_s",
                "duration_s",
                "distance_m",
                "avg_pace_s_per_km",
                "hill_adjusted_pace_s_per_km",
                "avg_hr",
                "max_hr",
                "end_hr",
                "avg_cadence_spm",
                "relative_intensity",
                "first_half_pace_s_per_km",
                "second_half_pace_s_per_km",
                "decoupling_pct",
                "target",
                "in_target_pct",
                "target_hit",
            ] {
                assert!(iv.get(key).is_some(), "{}: interval.{key}", act.stem);
            }
        }
        // intervals cover the session contiguously
        let ivs = &x.review.intervals;
        assert!(!ivs.is_empty(), "{}", act.stem);
        for w in ivs.windows(2) {
            assert_eq!(w[0].end_s, w[1].start_s, "{}", act.stem);
        }
        // a structured session's plan was found
        if act.stem.contains("intervals") || act.stem.contains("tempo") {
            assert!(x.review.plan.is_some(), "{}: plan not matched", act.stem);
        }
    }
    assert_eq!(analysed, 160);
}
