//! Crash safety: a child process writing grades is killed with SIGKILL at random points, 50
//! times. After each kill the journal passes `PRAGMA integrity_check` and holds every write the
//! child reported as committed.
//!
//! The child is this test binary itself, run with `child_writer --exact --nocapture` and
//! `SPLITDESK_KILL_CHILD_DB` set; without that variable `child_writer` does nothing.

mod rng_support;

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use chrono::{DateTime, TimeZone, Utc};
use rng_support::Rng;
use splitdesk::journal::{
    FeedbackEventKind, Journal, PurposeVerdict, RevisionChange, SessionRecord, SummaryCache,
};

const DB_ENV: &str = "SPLITDESK_KILL_CHILD_DB";
const START_ENV: &str = "SPLITDESK_KILL_CHILD_START";

fn t(seconds: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + chrono::Duration::seconds(seconds)
}

fn id(i: u64) -> String {
    format!("kid/s{i:06}")
}

fn score_of(i: u64) -> u8 {
    (i % 5) as u8 + 1
}

fn revised_of(i: u64) -> u8 {
    (i % 5) as u8 % 4 + 2 // always differs from score_of(i)
}

/// One unit of the child's work; every call below is its own transaction.
fn write_unit(j: &mut Journal, i: u64) {
    let sid = id(i);
    j.upsert_session(
        &SessionRecord {
            session_id: sid.clone(),
            athlete_id: "kid".into(),
            file_path: PathBuf::from(format!("/roster/kid/activities/s{i:06}.fit")),
            content_hash: format!("{i:064x}"),
            start: t(i as i64),
            summary: Some(SummaryCache {
                json: format!("{{\"i\":{i}}}"),
                analysis_version: 1,
                work_intervals: 1,
                card: None,
            }),
        },
        t(i as i64),
    )
    .unwrap();
    j.set_score(&sid, 1, score_of(i), t(i as i64)).unwrap();
    j.set_verdict(&sid, PurposeVerdict::Met, t(i as i64))
        .unwrap();
    if i.is_multiple_of(3) {
        j.reveal(&sid, t(i as i64)).unwrap();
        j.set_score(&sid, 1, revised_of(i), t(i as i64 + 1))
            .unwrap();
        j.save_feedback(&sid, &format!("feedback {i}"), t(i as i64 + 2))
            .unwrap();
        j.record_feedback_event(&sid, FeedbackEventKind::Copied, t(i as i64 + 3))
            .unwrap();
    }
}

/// Check that unit `i` is wholly there.
fn verify_unit(j: &Journal, i: u64) {
    let sid = id(i);
    let st = j
        .review_state(&sid)
        .unwrap_or_else(|e| panic!("{sid} reported committed but missing: {e}"));
    assert_eq!(st.scores.len(), 1, "{sid}");
    assert_eq!(st.scores[0].blind, score_of(i), "{sid}");
    assert_eq!(
        st.verdict.as_ref().map(|v| v.blind),
        Some(PurposeVerdict::Met)
    );
    if i.is_multiple_of(3) {
        assert_eq!(st.scores[0].current, revised_of(i), "{sid}");
        let revs = j.revisions(&sid).unwrap();
        assert_eq!(
            revs[0].change,
            RevisionChange::Score {
                interval: 1,
                old: score_of(i),
                new: revised_of(i)
            }
        );
        assert_eq!(
            j.feedback(&sid).unwrap().unwrap().body,
            format!("feedback {i}")
        );
        // A unit killed after its last commit but before "committed" was printed is redone
        // by the next child, so an event may be there twice.
        assert!(!j.feedback_events(&sid).unwrap().is_empty(), "{sid}");
    }
}

/// The writer. Does nothing unless started by `kill_mid_write_keeps_every_commit`.
#[test]
fn child_writer() {
    let Some(db) = std::env::var_os(DB_ENV) else {
        return;
    };
    let start: u64 = std::env::var(START_ENV)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0);
    let mut j = Journal::open(Path::new(&db)).unwrap();
    let deadline = Instant::now() + Duration::from_secs(30); // never outlive a lost parent
    let mut i = start;
    while Instant::now() < deadline {
        write_unit(&mut j, i);
        println!("committed {i}");
        i += 1;
    }
}

#[test]
fn kill_mid_write_keeps_every_commit() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("journal.sqlite");
    let exe = std::env::current_exe().unwrap();
    let seed = 0x5EED_2026;
    let mut rng = Rng(seed);
    let mut reported: Vec<u64> = Vec::new();
    let mut next_start = 0u64;
    let began = Instant::now();

    for round in 0..50u32 {
        let mut child = Command::new(&exe)
            .args(["child_writer", "--exact", "--nocapture", "--test-threads=1"])
            .env(DB_ENV, &db)
            .env(START_ENV, next_start.to_string())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let stdout = child.stdout.take().unwrap();
        let (tx, rx) = mpsc::channel();
        let reader = std::thread::spawn(move || {
            for line in BufReader::new(stdout).lines() {
                let Ok(line) = line else { break };
                // libtest may print "test child_writer ... " on the same line.
                if let Some(pos) = line.find("committed ") {
                    if let Ok(n) = line[pos + "committed ".len()..].trim().parse::<u64>() {
                        if tx.send(n).is_err() {
                            break;
                        }
                    }
                }
            }
        });

        // Every third round kill blindly (often during open or the first write); otherwise
        // wait for a few commits and kill somewhere in the next ones.
        if round.is_multiple_of(3) {
            std::thread::sleep(Duration::from_micros(rng.below(40_000)));
        } else {
            let want = 1 + rng.below(6);
            let mut got = 0;
            while got < want {
                match rx.recv_timeout(Duration::from_secs(10)) {
                    Ok(n) => {
                        reported.push(n);
                        got += 1;
                    }
                    Err(e) => panic!("round {round}: child stopped reporting: {e:?}"),
                }
            }
            std::thread::sleep(Duration::from_micros(rng.below(3_000)));
        }
        child.kill().unwrap(); // SIGKILL
        child.wait().unwrap();
        reader.join().unwrap();
        reported.extend(rx.try_iter());
        if let Some(max) = reported.iter().max() {
            next_start = max + 1;
        }

        if !db.exists() {
            continue; // killed before the journal file was even created
        }
        let j = Journal::open(&db)
            .unwrap_or_else(|e| panic!("round {round} (seed {seed:#x}): reopen failed: {e}"));
        let report = j.check().unwrap();
        assert!(
            report.is_ok(),
            "round {round} (seed {seed:#x}): {:?}",
            report.problems
        );
        for &i in &reported {
            verify_unit(&j, i);
        }
    }
    assert!(
        reported.len() >= 50,
        "too few commits observed: {}",
        reported.len()
    );
    eprintln!(
        "kill test: 50 kills, {} reported commits verified, {:.1} s",
        reported.len(),
        began.elapsed().as_secs_f64()
    );
}
