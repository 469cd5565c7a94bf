//! Matching sessions to their plans: explicit pairing by file stem, the day a session
//! counts for, plans dated by their `date` key, and double days. Self-consistency tests on
//! invented folders.

mod history_support;

use std::fs;
use std::path::Path;

use chrono::{DateTime, TimeZone, Utc};
use splitdesk::roster::plans::{plan_for_session, session_day};
use splitdesk::roster::Roster;

fn write(path: &Path, text: &str) {
    if let Some(p) = path.parent() {
        fs::create_dir_all(p).unwrap();
    }
    fs::write(path, text).unwrap();
}

fn at(y: i32, m: u32, d: u32, h: u32, min: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(y, m, d, h, min, 0).single().unwrap()
}

/// An athlete folder with the given activity stems (empty files) and plan files.
fn roster(activities: &[&str], plans: &[(&str, &str)]) -> (tempfile::TempDir, Roster) {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("ana-lind");
    write(&a.join("athlete.toml"), "name = \"Ana Lind\"\n");
    for stem in activities {
        write(&a.join(format!("activities/{stem}.fit")), "");
    }
    for (name, text) in plans {
        write(&a.join(format!("plans/{name}")), text);
    }
    let r = Roster::open(dir.path()).unwrap();
    (dir, r)
}

fn title(r: &Roster, stem: &str, start: DateTime<Utc>, duration_s: f64) -> Option<String> {
    let a = r.athlete("ana-lind").unwrap();
    plan_for_session(a, stem, start, duration_s)
        .unwrap()
        .map(|(_, p)| p.title)
}

#[test]
fn a_plan_with_the_activity_stem_is_its_plan() {
    let (_d, r) = roster(
        &["2026-10-02-reps"],
        &[
            (
                "2026-10-02-reps.toml",
                "title = \"Reps\"\nsteps = \"6 x 3:00 @ 5k / 2:00 jog\"\n",
            ),
            (
                "2026-10-02-long.toml",
                "title = \"Long\"\nsteps = \"90:00 easy\"\n",
            ),
        ],
    );
    // The session lasted 90 minutes, like the long plan, but the stems pair it with Reps.
    let t = title(&r, "2026-10-02-reps", at(2026, 10, 2, 7, 0), 5400.0);
    assert_eq!(t.as_deref(), Some("Reps"));
}

#[test]
fn on_a_double_day_a_paired_plan_is_not_shared() {
    let (_d, r) = roster(
        &["2026-10-02-reps", "2026-10-02-shakeout"],
        &[(
            "2026-10-02-reps.toml",
            "title = \"Reps\"\nsteps = \"6 x 3:00 @ 5k / 2:00 jog\"\n",
        )],
    );
    assert_eq!(
        title(&r, "2026-10-02-reps", at(2026, 10, 2, 7, 0), 2400.0).as_deref(),
        Some("Reps")
    );
    assert_eq!(
        title(&r, "2026-10-02-shakeout", at(2026, 10, 2, 18, 0), 1200.0),
        None
    );
}

#[test]
fn unpaired_plans_of_the_day_go_by_planned_length() {
    let (_d, r) = roster(
        &["2026-10-02-am", "2026-10-02-pm"],
        &[
            (
                "2026-10-02-a.toml",
                "title = \"Short\"\nsteps = \"20:00 easy\"\n",
            ),
            (
                "2026-10-02-b.toml",
                "title = \"Long\"\nsteps = \"80:00 easy\"\n",
            ),
        ],
    );
    assert_eq!(
        title(&r, "2026-10-02-am", at(2026, 10, 2, 6, 0), 4700.0).as_deref(),
        Some("Long")
    );
    assert_eq!(
        title(&r, "2026-10-02-pm", at(2026, 10, 2, 18, 0), 1300.0).as_deref(),
        Some("Short")
    );
}

#[test]
fn the_file_name_date_is_the_athletes_day() {
    // An evening run at 19:30 five hours west of Greenwich starts at 00:30 UTC the next day.
    let start = at(2026, 10, 4, 0, 30);
    assert_eq!(
        session_day("2026-10-03-tempo", start).to_string(),
        "2026-10-03"
    );
    // A name far from the start date is not a calendar date of this run.
    assert_eq!(
        session_day("2026-09-01-tempo", start).to_string(),
        "2026-10-04"
    );
    assert_eq!(session_day("run-8812", start).to_string(), "2026-10-04");
    let (_d, r) = roster(
        &["2026-10-03-tempo"],
        &[(
            "2026-10-03-session.toml",
            "title = \"Tempo\"\nsteps = \"30:00 easy\"\n",
        )],
    );
    assert_eq!(
        title(&r, "2026-10-03-tempo", start, 1800.0).as_deref(),
        Some("Tempo")
    );
}

#[test]
fn a_plan_dated_by_its_date_key_matches() {
    let (_d, r) = roster(
        &["run-8812"],
        &[(
            "tempo.toml",
            "title = \"Tempo\"\ndate = 2026-10-05\nsteps = \"30:00 easy\"\n",
        )],
    );
    assert_eq!(
        title(&r, "run-8812", at(2026, 10, 5, 7, 0), 1800.0).as_deref(),
        Some("Tempo")
    );
    assert_eq!(title(&r, "run-8812", at(2026, 10, 6, 7, 0), 1800.0), None);
}

#[test]
fn a_broken_plan_only_matters_on_its_own_day() {
    let (_d, r) = roster(
        &["2026-10-02-easy", "2026-10-03-easy"],
        &[(
            "2026-10-02-broken.toml",
            "title = \"x\"\nsteps = \"10 x\"\n",
        )],
    );
    let a = r.athlete("ana-lind").unwrap();
    assert!(plan_for_session(a, "2026-10-02-easy", at(2026, 10, 2, 7, 0), 1800.0).is_err());
    assert!(
        plan_for_session(a, "2026-10-03-easy", at(2026, 10, 3, 7, 0), 1800.0)
            .unwrap()
            .is_none()
    );
}

#[test]
fn the_history_counts_a_session_on_the_athletes_day() {
    // An evening run on the 2nd, five hours west of Greenwich: 00:30 UTC on the 3rd.
    let start = at(2026, 3, 3, 0, 30);
    let mut sum = history_support::with_load(1, 50.0);
    sum.session_id = "ana-lind/2026-03-02-evening-run".into();
    sum.start = start;
    assert_eq!(sum.date().to_string(), "2026-03-02");
    let other = splitdesk::analysis::history::SessionSummary {
        session_id: "ana-lind/watch-export-1".into(),
        ..sum
    };
    assert_eq!(other.date().to_string(), "2026-03-03");
}
