//! Crash safety on PostgreSQL: a child process writing grades is killed with SIGKILL at
//! random points, 30 times. After each kill the journal opens, a write goes through at once
//! (the dead writer's lock went with its connection), `check()` finds no problem, every
//! grading action is whole (all of it or none of it, also the one in flight at the kill),
//! and every write the child reported as committed is there.
//!
//! The child is this test binary itself, run as `child_writer --exact --nocapture` with
//! `SPLITDESK_PGKILL_CHILD_URL` set; without that variable `child_writer` does nothing.
//! Skipped with a message without `SPLITDESK_TEST_PG_URL` (see tests/pg_support), except
//! under `CI=true`.

mod pg_support;
mod pgcon_support;
mod rng_support;

use std::io::{BufRead, BufReader};
use std::process::{Command, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use pgcon_support::{marked, session, t, Db, MARK};
use rng_support::Rng;
use splitdesk::journal::{Journal, JournalError, PurposeVerdict, RevisionChange};

const URL_ENV: &str = "SPLITDESK_PGKILL_CHILD_URL";
const START_ENV: &str = "SPLITDESK_PGKILL_CHILD_START";
const ROUNDS: u32 = 30;
const INTERVALS: u32 = 5;

fn id(i: u64) -> String {
    format!("kid/s{i:06}")
}

/// Unit `i`'s blind score of interval `k` (1-based): differs from interval to interval.
fn score_of(i: u64, k: u32) -> u8 {
    ((i + u64::from(k)) % 5) as u8 + 1
}

/// The revised score: always differs from the blind one.
fn revised_of(i: u64, k: u32) -> u8 {
    score_of(i, k) % 5 + 1
}

fn verdict_of(i: u64) -> PurposeVerdict {
    [
        PurposeVerdict::Met,
        PurposeVerdict::Partly,
        PurposeVerdict::Missed,
    ][(i % 3) as usize]
}

fn revised_verdict_of(i: u64) -> PurposeVerdict {
    verdict_of(i + 1)
}

fn blind_action(i: u64) -> Vec<(u32, u8)> {
    (1..=INTERVALS).map(|k| (k, score_of(i, k))).collect()
}

fn revised_action(i: u64) -> Vec<(u32, u8)> {
    (1..=INTERVALS).map(|k| (k, revised_of(i, k))).collect()
}

/// One unit of the child's work; every call is its own transaction, each grading action
/// one call.
fn write_unit(j: &mut Journal, i: u64) -> Result<(), JournalError> {
    let sid = id(i);
    j.upsert_session(&session(&sid, i + 1, INTERVALS), t(i as i64))?;
    j.grade(&sid, &blind_action(i), Some(verdict_of(i)), t(i as i64))?;
    if i.is_multiple_of(3) {
        j.reveal(&sid, t(i as i64 + 1))?;
        j.grade(
            &sid,
            &revised_action(i),
            Some(revised_verdict_of(i)),
            t(i as i64 + 2),
        )?;
        j.save_feedback(&sid, &format!("feedback {i}"), t(i as i64 + 3))?;
        j.add_ruler(&sid, i as f64, i as f64 + 30.0, t(i as i64 + 4))?;
    }
    Ok(())
}

/// Unit `i`, whatever was reached of it: each grading action whole or absent. With
/// `committed`, all of the unit is there. Returns whether its blind grading is there.
fn verify_unit(j: &Journal, i: u64, committed: bool) -> bool {
    let sid = id(i);
    let st = match j.review_state(&sid) {
        Ok(st) => st,
        Err(JournalError::UnknownSession { .. }) if !committed => return false,
        Err(e) => panic!("{sid}: {e}"),
    };
    // The blind grading: every score and the verdict, or nothing.
    if st.scores.is_empty() && st.verdict.is_none() {
        assert!(!committed, "{sid} reported committed but not graded");
        assert!(st.revealed_at.is_none(), "{sid}");
        return false;
    }
    let blind: Vec<(u32, u8)> = st.scores.iter().map(|c| (c.interval, c.blind)).collect();
    assert_eq!(blind, blind_action(i), "{sid}: a part of a grading action");
    let v = st
        .verdict
        .as_ref()
        .unwrap_or_else(|| panic!("{sid}: scores without the verdict"));
    assert_eq!(v.blind, verdict_of(i), "{sid}");

    // The revisions after the reveal: whole actions only. A unit killed after a commit but
    // before "committed" was printed is done again by the next child, whose blind grading
    // action then revises the grades back (after the reveal a grade is a revision) and whose
    // revising action revises them again: so whole actions of all six changes each, back
    // and forth, the first towards the revised values.
    let revs = j.revisions(&sid).unwrap();
    let per_action = INTERVALS as usize + 1;
    assert!(
        revs.len().is_multiple_of(per_action),
        "{sid}: a part of a grading action: {revs:?}"
    );
    let mut revised = false;
    for action in revs.chunks(per_action) {
        revised = !revised;
        let (from, to) = if revised {
            (blind_action(i), revised_action(i))
        } else {
            (revised_action(i), blind_action(i))
        };
        let (from_v, to_v) = if revised {
            (verdict_of(i), revised_verdict_of(i))
        } else {
            (revised_verdict_of(i), verdict_of(i))
        };
        let mut intervals = Vec::new();
        let mut verdicts = 0;
        for r in action {
            match r.change {
                RevisionChange::Score { interval, old, new } => {
                    let k = interval as usize - 1;
                    assert_eq!((old, new), (from[k].1, to[k].1), "{sid}: {revs:?}");
                    intervals.push(interval);
                }
                RevisionChange::Verdict { old, new } => {
                    assert_eq!((old, new), (from_v, to_v), "{sid}: {revs:?}");
                    verdicts += 1;
                }
            }
        }
        intervals.sort_unstable();
        assert_eq!(
            intervals,
            (1..=INTERVALS).collect::<Vec<_>>(),
            "{sid}: {revs:?}"
        );
        assert_eq!(verdicts, 1, "{sid}: {revs:?}");
        assert!(
            action.iter().all(|r| r.at == action[0].at),
            "{sid}: one action, two times: {revs:?}"
        );
    }
    if !revs.is_empty() {
        assert!(
            st.revealed_at.is_some(),
            "{sid}: revisions before the reveal"
        );
    }
    let current: Vec<(u32, u8)> = st.scores.iter().map(|c| (c.interval, c.current)).collect();
    if revised {
        assert_eq!(current, revised_action(i), "{sid}");
        assert_eq!(v.current, revised_verdict_of(i), "{sid}");
    } else {
        assert_eq!(current, blind_action(i), "{sid}");
        assert_eq!(v.current, verdict_of(i), "{sid}");
    }
    if committed && i.is_multiple_of(3) {
        assert!(st.revealed_at.is_some(), "{sid}");
        assert!(revised, "{sid}: committed revision missing: {revs:?}");
        assert_eq!(
            j.feedback(&sid).unwrap().map(|f| f.body),
            Some(format!("feedback {i}")),
            "{sid}"
        );
        assert!(!j.rulers(&sid).unwrap().is_empty(), "{sid}");
    }
    if !i.is_multiple_of(3) {
        assert!(st.revealed_at.is_none() && revs.is_empty(), "{sid}");
    }
    true
}

/// The writer. Does nothing unless started by `kill_mid_write_leaves_whole_actions`.
#[test]
fn child_writer() {
    let Some(url) = std::env::var_os(URL_ENV) else {
        return;
    };
    let start: u64 = std::env::var(START_ENV)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0);
    let mut j = Journal::open_url(&url.to_string_lossy()).unwrap();
    let deadline = Instant::now() + Duration::from_secs(30); // never outlive a lost parent
    let mut i = start;
    while Instant::now() < deadline {
        write_unit(&mut j, i).unwrap();
        println!("{MARK}committed {i}");
        i += 1;
    }
}

#[test]
fn kill_mid_write_leaves_whole_actions() {
    let Some(db) = Db::fresh("pgkill") else {
        return;
    };
    let exe = std::env::current_exe().unwrap();
    let seed = 0x5EED_2027;
    let mut rng = Rng(seed);
    let mut reported: Vec<u64> = Vec::new();
    let mut next_start = 0u64;
    let mut in_flight_graded = 0;
    let mut verified = 0;
    let mut slowest_probe = Duration::ZERO;
    let began = Instant::now();

    for round in 0..ROUNDS {
        let mut child = Command::new(&exe)
            .args(["child_writer", "--exact", "--nocapture", "--test-threads=1"])
            .env(URL_ENV, &db.url)
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
                let n = marked(&line)
                    .and_then(|m| m.strip_prefix("committed "))
                    .and_then(|n| n.trim().parse::<u64>().ok());
                if let Some(n) = n {
                    if tx.send(n).is_err() {
                        break;
                    }
                }
            }
        });

        // Every third round kill blindly (often while connecting, opening or in the first
        // write); otherwise wait for a few commits and kill somewhere in the next ones.
        if round.is_multiple_of(3) {
            std::thread::sleep(Duration::from_micros(rng.below(400_000)));
        } else {
            let want = 1 + rng.below(6);
            let mut got = 0;
            while got < want {
                match rx.recv_timeout(Duration::from_secs(20)) {
                    Ok(n) => {
                        reported.push(n);
                        got += 1;
                    }
                    Err(e) => panic!("round {round}: child stopped reporting: {e:?}"),
                }
            }
            std::thread::sleep(Duration::from_micros(rng.below(25_000)));
        }
        child.kill().unwrap(); // SIGKILL
        child.wait().unwrap();
        reader.join().unwrap();
        reported.extend(rx.try_iter());
        let first_unreported = reported.iter().max().map_or(0, |m| m + 1);
        next_start = first_unreported;

        let mut j = Journal::open_url(&db.url)
            .unwrap_or_else(|e| panic!("round {round} (seed {seed:#x}): reopen failed: {e}"));
        // The killed child's write lock is gone with its connection: a write goes through
        // well within the busy timeout.
        let probe = Instant::now();
        j.upsert_session(&session("probe/p", 999_999, 1), t(0))
            .unwrap_or_else(|e| panic!("round {round}: write after the kill: {e}"));
        slowest_probe = slowest_probe.max(probe.elapsed());
        let report = j.check().unwrap();
        assert!(
            report.is_ok(),
            "round {round} (seed {seed:#x}): {:?}",
            report.problems
        );
        // The units reported in this round (the earlier ones are checked again at the end).
        for &i in &reported[verified..] {
            assert!(verify_unit(&j, i, true), "round {round}");
        }
        verified = reported.len();
        // The unit in flight at the kill (and one beyond, in case): whole or absent.
        let mut graded = first_unreported;
        for i in first_unreported..first_unreported + 2 {
            if verify_unit(&j, i, false) {
                graded += 1;
                in_flight_graded += 1;
            }
        }
        // Every blind grading in the journal is whole: all the scores of its review, and
        // no scores elsewhere (the units 0..first_unreported were all reported).
        assert_eq!(
            report.scores,
            graded * u64::from(INTERVALS),
            "round {round}"
        );
    }
    let expected: Vec<u64> = (0..reported.len() as u64).collect();
    assert_eq!(
        reported, expected,
        "the units reported are not 0, 1, 2, ..."
    );
    let j = Journal::open_url(&db.url).unwrap();
    assert!(j.check().unwrap().is_ok());
    for &i in &reported {
        assert!(verify_unit(&j, i, true));
    }
    assert!(
        reported.len() >= 40,
        "too few commits observed: {}",
        reported.len()
    );
    eprintln!(
        "pg kill test: {ROUNDS} kills, {} reported commits verified, in-flight unit found \
         graded {in_flight_graded} times, slowest write after a kill {} ms, {:.1} s",
        reported.len(),
        slowest_probe.as_millis(),
        began.elapsed().as_secs_f64()
    );
}
