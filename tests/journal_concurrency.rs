//! Two connections (threads) and two processes writing one journal at once: both succeed
//! thanks to the busy timeout and immediate transactions, and no update is lost.
//!
//! The process writers are this test binary itself, run with `child_concurrent_writer --exact`
//! and `SPLITDESK_CONCURRENT_CHILD_DB` set; without it that test does nothing.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

use chrono::{DateTime, TimeZone, Utc};
use splitdesk::journal::{
    Journal, JournalError, PurposeVerdict, RevisionChange, SessionRecord, SummaryCache,
};

const DB_ENV: &str = "SPLITDESK_CONCURRENT_CHILD_DB";
const WHO_ENV: &str = "SPLITDESK_CONCURRENT_CHILD_WHO";
const SESSION: &str = "ines/tue-intervals";
const PER_WRITER: usize = 100;

fn t(seconds: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + chrono::Duration::seconds(seconds)
}

/// A journal with one revealed session (blind score 3 for its one work interval).
fn prepare(path: &Path) {
    let mut j = Journal::open(path).unwrap();
    j.upsert_session(
        &SessionRecord {
            session_id: SESSION.into(),
            athlete_id: "ines".into(),
            file_path: PathBuf::from("/roster/ines/activities/tue-intervals.fit"),
            content_hash: "ab".repeat(32),
            start: t(0),
            summary: Some(SummaryCache {
                json: "{}".into(),
                analysis_version: 1,
                work_intervals: 1,
                card: None,
            }),
        },
        t(0),
    )
    .unwrap();
    j.set_score(SESSION, 1, 3, t(1)).unwrap();
    j.set_verdict(SESSION, PurposeVerdict::Met, t(1)).unwrap();
    j.reveal(SESSION, t(2)).unwrap();
}

/// Writer `who` (0 or 1): 100 feedback versions and 100 score revisions. Writer 0 uses scores
/// 1/2, writer 1 uses 4/5, so every call is a real change whatever the interleaving.
fn write_many(path: &Path, who: usize) {
    let mut j = Journal::open(path).unwrap();
    for i in 0..PER_WRITER {
        j.save_feedback(
            SESSION,
            &format!("writer {who} version {i}"),
            t(10 + i as i64),
        )
        .unwrap();
        let score = if who == 0 { 1 + (i % 2) } else { 4 + (i % 2) } as u8;
        j.set_score(SESSION, 1, score, t(10 + i as i64)).unwrap();
    }
}

/// Both writers' work is all there, and the revision chain has no gap: each revision's old
/// value is the previous revision's new value (no lost read-modify-write).
fn verify(path: &Path) {
    let j = Journal::open(path).unwrap();
    assert!(j.check().unwrap().is_ok());
    let hist = j.feedback_history(SESSION).unwrap();
    assert_eq!(hist.len(), 2 * PER_WRITER);
    for who in 0..2 {
        for i in 0..PER_WRITER {
            let body = format!("writer {who} version {i}");
            assert!(hist.iter().any(|v| v.body == body), "lost: {body}");
        }
    }
    let revs = j.revisions(SESSION).unwrap();
    assert_eq!(revs.len(), 2 * PER_WRITER);
    let mut prev = 3u8;
    for r in &revs {
        match r.change {
            RevisionChange::Score { old, new, .. } => {
                assert_eq!(old, prev, "revision chain broken");
                prev = new;
            }
            RevisionChange::Verdict { .. } => panic!("unexpected verdict revision"),
        }
    }
    let st = j.review_state(SESSION).unwrap();
    assert_eq!(st.scores[0].blind, 3, "blind score untouched");
    assert_eq!(st.scores[0].current, prev);
}

#[test]
fn two_connections_in_threads() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    prepare(&path);
    let handles: Vec<_> = (0..2)
        .map(|who| {
            let p = path.clone();
            std::thread::spawn(move || write_many(&p, who))
        })
        .collect();
    for h in handles {
        h.join().unwrap();
    }
    verify(&path);
}

/// The process writer. Does nothing unless started by `two_processes`.
#[test]
fn child_concurrent_writer() {
    let Some(db) = std::env::var_os(DB_ENV) else {
        return;
    };
    let who: usize = std::env::var(WHO_ENV)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0);
    write_many(Path::new(&db), who);
}

#[test]
fn two_processes() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    prepare(&path);
    let exe = std::env::current_exe().unwrap();
    let children: Vec<_> = (0..2)
        .map(|who| {
            Command::new(&exe)
                .args(["child_concurrent_writer", "--exact", "--test-threads=1"])
                .env(DB_ENV, &path)
                .env(WHO_ENV, who.to_string())
                .stdout(Stdio::null())
                .stderr(Stdio::piped())
                .spawn()
                .unwrap()
        })
        .collect();
    for child in children {
        let out = child.wait_with_output().unwrap();
        assert!(
            out.status.success(),
            "writer failed: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    verify(&path);
}

#[test]
fn a_lock_held_too_long_is_reported_as_busy() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    prepare(&path);
    let mut j = Journal::open(&path).unwrap();
    j.set_busy_timeout(std::time::Duration::from_millis(100))
        .unwrap();
    let other = rusqlite::Connection::open(&path).unwrap();
    other.execute_batch("BEGIN IMMEDIATE").unwrap();
    let err = j.save_feedback(SESSION, "blocked", t(5)).unwrap_err();
    assert!(matches!(err, JournalError::Busy { .. }), "{err}");
    assert!(err.to_string().contains("busy"), "{err}");
    other.execute_batch("ROLLBACK").unwrap();
    j.save_feedback(SESSION, "now it works", t(6)).unwrap();
    // Readers are never blocked by a writer in WAL mode.
    other.execute_batch("BEGIN IMMEDIATE").unwrap();
    assert_eq!(j.feedback(SESSION).unwrap().unwrap().body, "now it works");
    other.execute_batch("ROLLBACK").unwrap();
}
