//! Heart rate above a stale profile maximum, HR drop-outs (coverage), and sessions of
//! another sport, through the whole analysis (self-consistency: the simulator is ours).

mod sim_support;

use sim_support::{intervals, long_run, named, profile, recovery};
use splitdesk::analysis::analyze;
use splitdesk::analysis::review::{Review, HR_COVERAGE_MIN};
use splitdesk::demo::simulate::{simulate, Faults, SimInput, SimOutput};
use splitdesk::demo::{fit_writer, gpx_writer, tcx_writer};
use splitdesk::ingest::{clean, derive, ingest_bytes};
use splitdesk::model::{
    Amount, AthleteProfile, FileFormat, FlagKind, Plan, RecoveryMode, Session, Sport,
};

/// Simulate with the test profile, clean like ingest does with `analysis_profile`.
fn sim(plan: &Plan, faults: Faults, seed: u64, analysis_profile: &AthleteProfile) -> SimOutput {
    let mut input = SimInput::new(profile(), plan.clone(), seed);
    input.faults = faults;
    let mut out = simulate(&input);
    derive::fill_derived(&mut out.session);
    out.session.flags = clean::flag(&out.session, Some(analysis_profile));
    out
}

fn hard_set() -> Plan {
    intervals(
        6,
        Amount::Duration(240.0),
        named("5k"),
        recovery(Amount::Duration(90.0), RecoveryMode::Jog),
    )
}

/// `splitdesk analyze` text of a session written as `format`, with the test profile.
fn analyze_text(s: &Session, format: FileFormat) -> String {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join(format!("ride.{format}"));
    let bytes = match format {
        FileFormat::Tcx => tcx_writer::write(s),
        _ => gpx_writer::write(s),
    };
    std::fs::write(&file, bytes).unwrap();
    let athlete = dir.path().join("athlete.toml");
    // The test profile (sim_support::profile) as a file.
    std::fs::write(
        &athlete,
        "name = \"Test Runner\"\nhr_max = 190\nhr_rest = 50\nthreshold_pace = \"4:10/km\"\n",
    )
    .unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_splitdesk"))
        .arg("analyze")
        .arg(&file)
        .arg("--athlete")
        .arg(&athlete)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

fn codes(r: &Review) -> Vec<&str> {
    r.findings.iter().map(|f| f.code.as_str()).collect()
}

fn peak(s: &Session) -> f64 {
    s.hr.as_ref()
        .unwrap()
        .values
        .iter()
        .flatten()
        .copied()
        .fold(0.0, f64::max)
}

#[test]
fn hr_above_a_stale_profile_maximum_is_kept_and_named() {
    let truth_profile = profile();
    let out = sim(&hard_set(), Faults::default(), 11, &truth_profile);
    let reached = peak(&out.session);
    // The profile's maximum is 12 bpm below what the runner really reached.
    let mut stale = truth_profile.clone();
    stale.hr_max = Some((reached - 12.0).round());
    let mut session = out.session.clone();
    session.flags = clean::flag(&session, Some(&stale));
    assert!(
        session.flags.iter().all(|f| f.kind != FlagKind::HrAboveMax),
        "{:#?}",
        session.flags
    );
    let r = analyze(&session, Some(&hard_set()), &stale);
    let fresh = analyze(&out.session, Some(&hard_set()), &truth_profile);
    // The real peak is reported, and rep averages do not change with the profile.
    let top = r.work().filter_map(|m| m.max_hr).fold(0.0, f64::max);
    assert!(
        (top - reached).abs() < 0.5,
        "reported {top}, reached {reached}"
    );
    for (a, b) in r.work().zip(fresh.work()) {
        assert_eq!(a.avg_hr, b.avg_hr, "rep {:?}", a.work_number);
    }
    let f = r
        .findings
        .iter()
        .find(|f| f.code == "hr_max_stale")
        .unwrap_or_else(|| panic!("{:#?}", r.findings));
    assert_eq!(f.severity, splitdesk::analysis::findings::Severity::Warning);
    assert!(
        f.text.starts_with(&format!(
            "Heart rate reached {reached:.0} bpm, above the profile's maximum of {:.0} bpm",
            reached - 12.0
        )),
        "{}",
        f.text
    );
    assert!(f.text.contains("looks out of date"), "{}", f.text);
    assert!(!codes(&r).contains(&"hr_above_max"), "{:?}", codes(&r));
    assert!(!f.text.contains("physician"));
}

#[test]
fn hr_far_above_the_maximum_while_jogging_keeps_the_medical_caution() {
    let p = profile();
    let mut out = sim(&long_run(40.0), Faults::default(), 12, &p);
    // 40 s at 220 bpm on an easy run (max 190), entered by a climb of 8 bpm/s.
    let hr = out.session.hr.as_mut().unwrap();
    for (k, i) in (1200..1250).enumerate() {
        let base = hr.values[1199].unwrap();
        hr.values[i] = Some(if k < 5 {
            base + (220.0 - base) * (k + 1) as f64 / 5.0
        } else {
            220.0
        });
    }
    out.session.flags = clean::flag(&out.session, Some(&p));
    let r = analyze(&out.session, Some(&long_run(40.0)), &p);
    let f = r
        .findings
        .iter()
        .find(|f| f.code == "hr_above_max")
        .unwrap_or_else(|| panic!("{:#?}", r.findings));
    assert_eq!(f.severity, splitdesk::analysis::findings::Severity::Caution);
    assert!(f
        .text
        .contains(splitdesk::analysis::findings::MEDICAL_CAUTION));
    assert!(f.text.contains("far above"), "{}", f.text);
    assert!(!codes(&r).contains(&"hr_max_stale"));
}

#[test]
fn hr_drop_outs_lower_the_coverage_and_mark_the_load() {
    let p = profile();
    let clean_run = sim(&hard_set(), Faults::default(), 21, &p);
    let r0 = analyze(&clean_run.session, Some(&hard_set()), &p);
    assert_eq!(r0.hr_coverage, Some(1.0));
    assert!(!r0.trimp_lower_bound);
    assert!(!codes(&r0).contains(&"hr_coverage"), "{:?}", codes(&r0));
    assert!(r0.intervals.iter().all(|m| m.hr_coverage == Some(1.0)));

    let faults = Faults {
        hr_dropouts: 40,
        ..Faults::default()
    };
    let out = sim(&hard_set(), faults, 21, &p);
    let r = analyze(&out.session, Some(&hard_set()), &p);
    let cov = r.hr_coverage.unwrap();
    // Self-consistency: coverage from the recorded HR, counted here on its own.
    let s = &out.session;
    let hr = s.hr.as_ref().unwrap();
    let missing: f64 = (1..s.len())
        .filter(|&i| hr.get(i).is_none())
        .map(|i| s.t[i] - s.t[i - 1])
        .sum();
    let expected = 1.0 - missing / r.session.moving_s;
    assert!(
        cov < HR_COVERAGE_MIN && (cov - expected).abs() < 0.02,
        "coverage {cov}, expected about {expected}"
    );
    assert!(r.trimp_lower_bound);
    assert!(r.trimp.unwrap() < r0.trimp.unwrap());
    assert_eq!(r.load_text(), format!("{:.0} or more", r.trimp.unwrap()));
    let f = r
        .findings
        .iter()
        .find(|f| f.code == "hr_coverage")
        .unwrap_or_else(|| panic!("{:#?}", r.findings));
    assert!(
        f.text.starts_with(&format!(
            "No usable heart rate for {:.0} % of the moving time",
            (1.0 - cov) * 100.0
        )),
        "{}",
        f.text
    );
    assert!(
        f.text.contains("load (TRIMP) is a lower bound"),
        "{}",
        f.text
    );
    assert!(r
        .intervals
        .iter()
        .any(|m| m.hr_coverage.is_some_and(|c| c < 1.0)));
    let text = analyze_text(&out.session, FileFormat::Tcx);
    assert!(
        text.contains(&format!("Load (TRIMP) {:.0} or more", r.trimp.unwrap())),
        "{text}"
    );
    assert!(text.contains("load is a lower bound"), "{text}");
}

#[test]
fn hr_missing_while_the_sensor_pairs_is_not_a_drop_out() {
    let p = profile();
    let mut out = sim(&long_run(30.0), Faults::default(), 22, &p);
    let hr = out.session.hr.as_mut().unwrap();
    // Common coaching practice (no published source): pairing takes up to half a minute.
    for v in hr.values.iter_mut().take(25) {
        *v = None;
    }
    let r = analyze(&out.session, Some(&long_run(30.0)), &p);
    assert_eq!(r.hr_coverage, Some(1.0));
    assert!(!r.trimp_lower_bound);
    assert!(!codes(&r).contains(&"hr_coverage"), "{:?}", codes(&r));
}

#[test]
fn a_recovery_on_partial_hr_says_so() {
    let p = profile();
    let mut out = sim(&hard_set(), Faults::default(), 23, &p);
    // Remove HR through the whole recovery after rep 2.
    let rec = out
        .truth
        .intervals
        .iter()
        .filter(|i| i.kind == splitdesk::model::SegmentKind::Recovery)
        .nth(1)
        .unwrap()
        .clone();
    let s = &mut out.session;
    let hr = s.hr.as_mut().unwrap();
    for (i, &t) in s.t.iter().enumerate() {
        if t > rec.start_s && t <= rec.end_s {
            hr.values[i] = None;
        }
    }
    let r = analyze(&out.session, Some(&hard_set()), &p);
    let partial: Vec<usize> = r
        .recoveries
        .iter()
        .filter(|x| x.hr_partial)
        .map(|x| x.work_number)
        .collect();
    assert_eq!(partial, vec![2]);
    let f = r.findings.iter().find(|f| f.code == "hr_coverage").unwrap();
    assert!(
        f.text
            .starts_with("The recovery figures after rep 2 rest on partial heart rate"),
        "{}",
        f.text
    );
}

fn assert_not_run(r: &Review, sport: &str) {
    assert!(!r.running);
    assert_eq!(r.session.sport, sport);
    assert!(r.intervals.is_empty(), "{:#?}", r.intervals);
    assert_eq!(r.work().count(), 0);
    assert!(r.recoveries.is_empty() && r.trends.is_empty());
    assert!(r.decoupling_pct.is_none() && r.hr_drift_bpm_per_h.is_none());
    assert!(r.best_efforts.is_empty() && r.zones.pace.is_empty());
    // Still listed with duration, distance, HR and load.
    assert!(r.session.duration_s > 1000.0);
    assert!(r.session.distance_m.is_some_and(|d| d > 1000.0));
    assert!(r.avg_hr.is_some() && r.max_hr.is_some());
    assert!(r.trimp.is_some_and(|t| t > 0.0));
    let allowed = [
        "not_running",
        "hr_above_max",
        "hr_max_stale",
        "hr_rate",
        "hr_coverage",
        "flagged",
        "cadence_lock",
        "no_hr",
        "no_hr_profile",
    ];
    assert!(
        codes(r).iter().all(|c| allowed.contains(c)),
        "{:?}",
        codes(r)
    );
    assert!(codes(r).contains(&"not_running"));
}

#[test]
fn a_ride_is_not_analysed_as_a_run() {
    let p = profile();
    let mut out = sim(&hard_set(), Faults::default(), 31, &p);
    out.session.sport = Sport::Cycling;
    let r = analyze(&out.session, None, &p);
    assert_not_run(&r, "cycling");
    let f = r.findings.iter().find(|f| f.code == "not_running").unwrap();
    assert!(
        f.text.starts_with("Cycling session, not a run"),
        "{}",
        f.text
    );
    let text = analyze_text(&out.session, FileFormat::Gpx);
    assert!(text.contains("Cycling: not a run"), "{text}");
    assert!(text.contains("km/h"), "{text}");
    assert!(!text.contains("work 1"), "{text}");
    // A walk (a hike) too; a file that names no sport stays a run.
    out.session.sport = Sport::Walking;
    assert_not_run(&analyze(&out.session, None, &p), "walking");
    out.session.sport = Sport::Unknown;
    let r = analyze(&out.session, Some(&hard_set()), &p);
    assert!(r.running && r.work().count() == 6);
}

#[test]
fn a_ride_read_from_tcx_gpx_and_fit_files_is_not_a_run() {
    let p = profile();
    let mut out = sim(&long_run(35.0), Faults::default(), 32, &p);
    out.session.sport = Sport::Cycling;
    let tcx = tcx_writer::write(&out.session);
    assert!(String::from_utf8_lossy(&tcx).contains("Sport=\"Biking\""));
    for (format, bytes) in [
        (FileFormat::Tcx, tcx),
        (FileFormat::Gpx, gpx_writer::write(&out.session)),
        (FileFormat::Fit, fit_writer::write(&out.session)),
    ] {
        let s = ingest_bytes(&bytes, format, Some(&p)).unwrap();
        assert_eq!(s.sport, Sport::Cycling, "{format}");
        let r = analyze(&s, None, &p);
        assert_not_run(&r, "cycling");
    }
}

#[test]
fn session_distance_is_last_minus_first() {
    let p = profile();
    let mut out = sim(&long_run(30.0), Faults::default(), 41, &p);
    let before = out.session.distance_m().unwrap();
    // A file whose cumulative distance starts at 1 km (a resumed recording).
    for v in out.session.distance.as_mut().unwrap().values.iter_mut() {
        *v = v.map(|d| d + 1000.0);
    }
    let after = out.session.distance_m().unwrap();
    assert!((after - before).abs() < 1e-6, "{before} vs {after}");
    let r = analyze(&out.session, None, &p);
    assert!((r.session.distance_m.unwrap() - before).abs() < 1e-6);
}

#[test]
fn a_recovery_peak_does_not_take_the_reps_last_beat() {
    let p = profile();
    let mut out = sim(&hard_set(), Faults::default(), 42, &p);
    let first = analyze(&out.session, Some(&hard_set()), &p);
    // Each rep's last beat (the sample it shares with the recovery) is its highest.
    let s = &mut out.session;
    let hr = s.hr.as_mut().unwrap();
    for m in first.intervals.iter().filter(|m| m.kind == "recovery") {
        let k = s.t.iter().position(|&t| t == m.start_s).unwrap();
        let after = (k + 1..k + 60)
            .filter_map(|i| hr.get(i))
            .fold(0.0, f64::max);
        hr.values[k] = Some(after + 3.0);
    }
    let r = analyze(&out.session, Some(&hard_set()), &p);
    let s = &out.session;
    let hr = s.hr.as_ref().unwrap();
    let mut checked = 0;
    for m in r.intervals.iter().filter(|m| m.kind == "recovery") {
        // The recovery's own samples: after its first (shared) sample, up to its end.
        let own =
            s.t.iter()
                .enumerate()
                .filter(|(_, &t)| t > m.start_s && t <= m.end_s)
                .filter_map(|(i, _)| hr.get(i))
                .fold(0.0, f64::max);
        assert_eq!(m.max_hr, Some(own), "interval {}", m.index);
        checked += 1;
    }
    // Five recoveries: the sixth rep runs into the cool-down.
    assert_eq!(checked, 5);
}

#[test]
fn a_review_cached_before_these_fields_still_reads() {
    let p = profile();
    let out = sim(&long_run(25.0), Faults::default(), 51, &p);
    let r = analyze(&out.session, None, &p);
    let mut v = serde_json::to_value(&r).unwrap();
    let obj = v.as_object_mut().unwrap();
    for key in [
        "running",
        "hr_coverage",
        "trimp_lower_bound",
        "avg_hr",
        "max_hr",
    ] {
        assert!(obj.remove(key).is_some(), "{key}");
    }
    for m in obj["intervals"].as_array_mut().unwrap() {
        m.as_object_mut().unwrap().remove("hr_coverage").unwrap();
    }
    let old: Review = serde_json::from_value(v).unwrap();
    assert!(old.running && !old.trimp_lower_bound);
    assert_eq!(old.hr_coverage, None);
    assert!(old.intervals.iter().all(|m| m.hr_coverage.is_none()));
}
