//! A damaged analysis-cache row (invalid UTF-8 or bad JSON in a cached summary, which
//! SQLite's own integrity check does not see) blocks nothing: grades, revisions and feedback
//! stay reachable, `journal check` names the session in one line, `journal backup` works, and
//! the next command drops the row and makes the summary again.

mod cli_support;
mod tui_support;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use cli_support::binary;
use splitdesk::journal::Journal;
use tui_support::{build_roster, INTERVALS};

struct Setup {
    dir: tempfile::TempDir,
    roster: PathBuf,
    journal: PathBuf,
}

impl Setup {
    fn new() -> Setup {
        let dir = tempfile::tempdir().unwrap();
        let roster = build_roster(&dir.path().join("roster"));
        let journal = dir.path().join("coach/journal.sqlite");
        Setup {
            dir,
            roster,
            journal,
        }
    }

    fn run(&self, args: &[&str]) -> Output {
        Command::new(binary())
            .env("SPLITDESK_CONFIG", "/nonexistent")
            .arg("--roster")
            .arg(&self.roster)
            .arg("--journal")
            .arg(&self.journal)
            .args(args)
            .output()
            .unwrap()
    }

    fn ok(&self, args: &[&str]) -> String {
        let out = self.run(args);
        assert_eq!(out.status.code(), Some(0), "{args:?}: {out:?}");
        String::from_utf8_lossy(&out.stdout).into_owned()
    }
}

/// Replace the cached summary of `session` with raw bytes, stored as SQLite text.
fn damage(journal: &Path, session: &str, bytes: &[u8]) {
    let c = rusqlite::Connection::open(journal).unwrap();
    let n = c
        .execute(
            "UPDATE session SET summary_json = CAST(?2 AS TEXT) WHERE session_id = ?1",
            rusqlite::params![session, bytes],
        )
        .unwrap();
    assert_eq!(n, 1);
    let check: String = c
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .unwrap();
    assert_eq!(check, "ok", "SQLite itself sees nothing wrong");
}

/// Grade, reveal, revise and save feedback for the interval session.
fn reviewed(s: &Setup) {
    s.ok(&[
        "grade",
        INTERVALS,
        "--score",
        "1=3",
        "--score",
        "2=3",
        "--score",
        "3=4",
        "--score",
        "4=4",
        "--score",
        "5=2",
        "--verdict",
        "partly",
    ]);
    s.ok(&["notes", INTERVALS]);
    s.ok(&["grade", INTERVALS, "--score", "5=3"]);
    let fb = s.dir.path().join("fb.txt");
    std::fs::write(&fb, "Well held.\n").unwrap();
    s.ok(&["feedback", INTERVALS, "--set", fb.to_str().unwrap()]);
}

fn assert_review_reachable(journal: &Path) {
    let j = Journal::open(journal).unwrap();
    let st = j.review_state(INTERVALS).unwrap();
    let blind: Vec<u8> = st.scores.iter().map(|c| c.blind).collect();
    let current: Vec<u8> = st.scores.iter().map(|c| c.current).collect();
    assert_eq!(blind, [3, 3, 4, 4, 2]);
    assert_eq!(current, [3, 3, 4, 4, 3]);
    assert_eq!(j.revisions(INTERVALS).unwrap().len(), 1);
    assert_eq!(j.feedback(INTERVALS).unwrap().unwrap().body, "Well held.\n");
}

#[test]
fn invalid_utf8_in_a_cached_summary_blocks_nothing() {
    let s = Setup::new();
    reviewed(&s);
    damage(&s.journal, INTERVALS, b"{\"title\":\"\xff\xfe\"}");

    // The library reads the review whatever the cache holds.
    assert_review_reachable(&s.journal);

    // `journal check`: one line naming the session; the coach's data is fine (exit 0).
    let out = s.run(&["journal", "check"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let lines: Vec<&str> = text.lines().filter(|l| l.contains("damaged")).collect();
    assert_eq!(lines.len(), 1, "{text}");
    assert!(lines[0].contains(INTERVALS), "{text}");
    assert!(lines[0].contains("not UTF-8"), "{text}");
    assert!(out.stderr.is_empty(), "{out:?}");
    let out = s.run(&["journal", "check", "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["cache_problems"].as_array().map(Vec::len), Some(1));
    assert_eq!(v["ok"], true);

    // `journal backup` works, and the backup holds the review.
    let bk = s.dir.path().join("backup.sqlite");
    s.ok(&["journal", "backup", bk.to_str().unwrap()]);
    assert_review_reachable(&bk);

    // Every other command works, and the cache row is made again on the way.
    let out = s.run(&["grade", INTERVALS, "--json"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    assert!(out.stderr.is_empty(), "{out:?}");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["scores"]["5"], 3);
    assert_eq!(v["blind_scores"]["5"], 2);
    assert_eq!(v["revisions"], 1);
    assert!(s.ok(&["feedback", INTERVALS]).contains("Well held."));
    let check = s.ok(&["journal", "check"]);
    assert!(!check.contains("damaged"), "{check}");
}

#[test]
fn bad_json_in_a_cached_summary_is_made_again() {
    let s = Setup::new();
    reviewed(&s);
    damage(&s.journal, INTERVALS, b"{\"analysis_inputs\": 1, truncated");
    assert_review_reachable(&s.journal);
    let text = s.ok(&["journal", "check"]);
    assert_eq!(
        text.matches("damaged (not valid JSON)").count(),
        1,
        "{text}"
    );
    // The interval table still comes out (from a fresh analysis), scores beside it.
    let out = s.run(&["export", "intervals", "--csv"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let csv = String::from_utf8_lossy(&out.stdout);
    let work_rows = csv
        .lines()
        .filter(|l| l.starts_with(INTERVALS) && l.contains(",work,"))
        .count();
    assert_eq!(work_rows, 5, "{csv}");
    assert!(!s.ok(&["journal", "check"]).contains("damaged"));
}

#[test]
fn damaged_cache_numbers_block_nothing_either() {
    let s = Setup::new();
    reviewed(&s);
    let c = rusqlite::Connection::open(&s.journal).unwrap();
    c.execute(
        "UPDATE session SET work_intervals = 'many', summary_version = x'00ff'
         WHERE session_id = ?1",
        [INTERVALS],
    )
    .unwrap();
    drop(c);
    assert_review_reachable(&s.journal);
    let out = s.run(&["grade", INTERVALS, "--json"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["scores"]["5"], 3);
}
