//! The committed demo roster reads cleanly: every file ingests except the one damaged on
//! purpose, `splitdesk check` reports exactly that file, and every plan file parses into the
//! plan the simulator ran (or, for a planned session not run, the plan the scenario wrote).

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use splitdesk::demo::scenario::{PlantedKind, Scenario};
use splitdesk::ingest::ingest_file;
use splitdesk::model::FileFormat;
use splitdesk::roster::Roster;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes")
}

fn damaged() -> PathBuf {
    let p = Scenario::default_demo()
        .find_planted(PlantedKind::Truncated)
        .unwrap();
    root()
        .join(&p.athlete)
        .join("activities")
        .join(format!("{}.fit", p.stem.unwrap()))
}

#[test]
fn roster_matches_the_scenario() {
    let scenario = Scenario::default_demo();
    let roster = Roster::open(&root()).unwrap();
    assert!(roster.problems().is_empty(), "{:?}", roster.problems());
    assert_eq!(roster.name, scenario.club);
    let ids: Vec<&str> = roster.athletes.iter().map(|a| a.id.as_str()).collect();
    let want: Vec<&str> = scenario.athletes.iter().map(|a| a.id.as_str()).collect();
    assert_eq!(ids, want);
    let mut formats = [0usize; 3];
    for (a, spec) in roster.athletes.iter().zip(&scenario.athletes) {
        assert_eq!(a.profile, spec.profile(scenario.units).unwrap());
        let stems: Vec<String> = a.activities.iter().map(|x| x.stem.clone()).collect();
        let want: Vec<String> = spec.sessions.iter().map(|s| s.stem()).collect();
        assert_eq!(stems, want, "{}", a.id);
        for act in &a.activities {
            formats[match act.format {
                FileFormat::Fit => 0,
                FileFormat::Tcx => 1,
                FileFormat::Gpx => 2,
            }] += 1;
        }
    }
    // Mostly FIT, a representative minority of TCX and GPX.
    assert!((8..=12).contains(&(formats[1] + formats[2])), "{formats:?}");
    assert!(formats[1] >= 3 && formats[2] >= 3, "{formats:?}");
}

#[test]
fn every_activity_ingests_except_the_damaged_one() {
    let roster = Roster::open(&root()).unwrap();
    let damaged = damaged();
    let mut failed = Vec::new();
    let mut notes_in_files = 0;
    for (athlete, act) in roster.activities() {
        match ingest_file(&act.path, Some(&athlete.profile)) {
            Ok(s) => {
                s.check_invariants().unwrap();
                assert!(s.duration_s() > 600.0, "{}", act.path.display());
                if let Some(note) = &s.note {
                    notes_in_files += 1;
                    let file = std::fs::read_to_string(act.note_file.as_ref().unwrap()).unwrap();
                    assert_eq!(note.trim(), file.trim(), "{}", act.path.display());
                }
            }
            Err(e) => failed.push((act.path.clone(), e.to_string())),
        }
    }
    assert_eq!(failed.len(), 1, "{failed:?}");
    assert_eq!(failed[0].0, damaged);
    assert!(failed[0].1.contains("truncated"), "{failed:?}");
    assert!(notes_in_files >= 2);
}

#[test]
fn check_reports_exactly_the_damaged_file() {
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml")
        .arg("check")
        .arg(root())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let text = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 2, "{text}");
    assert!(
        lines[0].starts_with(&format!("{}: ", damaged().display())),
        "{text}"
    );
    assert!(lines[1].ends_with("1 problem"), "{text}");
}

#[test]
fn every_plan_parses_and_every_structured_session_has_one() {
    let scenario = Scenario::default_demo();
    let mut checked = 0;
    for a in &scenario.athletes {
        let dir = root().join(&a.id).join("plans");
        let on_disk: Vec<PathBuf> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        let mut expected = 0;
        for s in &a.sessions {
            let path = dir.join(format!("{}.toml", s.stem()));
            if s.is_structured() {
                assert!(s.plan_file, "{}/{}", a.id, s.stem());
            }
            if !s.plan_file {
                assert!(!path.exists(), "{}", path.display());
                continue;
            }
            expected += 1;
            let plan =
                splitdesk::plan::load(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            assert_eq!(plan, s.plan().unwrap(), "{}", path.display());
            checked += 1;
        }
        // Planned sessions not run: a plan file and no activity.
        for m in &a.missed {
            let path = dir.join(format!("{}.toml", m.stem()));
            let plan =
                splitdesk::plan::load(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            assert_eq!(plan, m.plan().unwrap(), "{}", path.display());
            let activities = root().join(&a.id).join("activities");
            assert!(
                !std::fs::read_dir(&activities).unwrap().any(|e| e
                    .unwrap()
                    .file_name()
                    .to_string_lossy()
                    .starts_with(&m.stem())),
                "{}: an activity for a missed session",
                m.stem()
            );
            expected += 1;
        }
        assert_eq!(on_disk.len(), expected, "{}", a.id);
    }
    assert!(checked > 100);
}
