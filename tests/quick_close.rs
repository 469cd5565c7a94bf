//! Closing sessions that need no scoring: the quick close (no work intervals: the purpose
//! verdict is the blind grade), and the verdict-only close of a session whose file cannot be
//! read (its note stays hidden until the coach gave the verdict that records the problem).
//! In the journal, and from the CLI on a tiny roster with a truncated FIT file.

mod cli_support;
mod roster_support;

use std::path::{Path, PathBuf};

use chrono::{DateTime, Duration, TimeZone, Utc};
use cli_support::TempRoster;
use roster_support::{write_roster, EASY_ID, NOTE_MARKER, REPS_ID};
use splitdesk::journal::{
    read_note, unreadable_record, Journal, JournalError, PurposeVerdict, ReviewStage,
    SessionRecord, SummaryCache,
};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + Duration::minutes(minutes)
}

fn record(id: &str, work: Option<u32>) -> SessionRecord {
    let (athlete, stem) = id.split_once('/').unwrap();
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.to_string(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/{stem}.fit")),
        content_hash: format!("hash-of-{id}"),
        start: t(0),
        summary: work.map(|n| SummaryCache {
            json: "{}".into(),
            analysis_version: 1,
            work_intervals: n,
            card: None,
        }),
    }
}

#[test]
fn a_session_with_no_work_intervals_closes_with_the_verdict_alone() {
    let mut j = Journal::open_in_memory().unwrap();
    j.upsert_session(&record("ines/easy", Some(0)), t(0))
        .unwrap();
    let st = j.review_state("ines/easy").unwrap();
    assert_eq!(st.work_intervals, Some(0));
    assert!(st.missing.scores.is_empty());
    assert!(st.missing.verdict);
    // Still blind: no verdict, no note.
    match j.reveal("ines/easy", t(1)).unwrap_err() {
        JournalError::NotYetGraded { missing, .. } => {
            assert_eq!(missing.to_string(), "purpose verdict not set")
        }
        other => panic!("{other}"),
    }
    // A score has nowhere to go.
    assert!(matches!(
        j.set_score("ines/easy", 1, 3, t(1)),
        Err(JournalError::NoSuchInterval {
            interval: 1,
            work_intervals: 0,
            ..
        })
    ));
    j.set_verdict("ines/easy", PurposeVerdict::Met, t(2))
        .unwrap();
    assert_eq!(
        j.review_state("ines/easy").unwrap().stage,
        ReviewStage::Graded
    );
    assert!(j.unreviewed(None).unwrap()[0].stage == ReviewStage::Graded);
    j.reveal("ines/easy", t(3)).unwrap();
    let st = j.review_state("ines/easy").unwrap();
    assert_eq!(st.stage, ReviewStage::Revealed);
    assert_eq!(st.file_unreadable, None);
    assert!(j.unreviewed(None).unwrap().is_empty());
}

/// A roster-like folder with one unreadable activity and its note.
fn broken_files(dir: &Path) -> (PathBuf, PathBuf) {
    let act = dir.join("ines/activities/2026-11-06-easy-run.fit");
    let note = dir.join("ines/notes/2026-11-06-easy-run.txt");
    std::fs::create_dir_all(act.parent().unwrap()).unwrap();
    std::fs::create_dir_all(note.parent().unwrap()).unwrap();
    std::fs::write(&act, b"not a FIT file at all").unwrap();
    std::fs::write(&note, "Watch died halfway, sorry.\n").unwrap();
    (act, note)
}

const BROKEN: &str = "ines/2026-11-06-easy-run";

#[test]
fn an_unreadable_session_closes_with_a_verdict_that_records_the_problem() {
    let dir = tempfile::tempdir().unwrap();
    let (act, note) = broken_files(dir.path());
    let mut j = Journal::open_in_memory().unwrap();
    let rec = unreadable_record(BROKEN, "ines", &act, t(0));
    // The start comes from the date in the file name; the hash from the bytes.
    assert_eq!(
        rec.start,
        Utc.with_ymd_and_hms(2026, 11, 6, 12, 0, 0).unwrap()
    );
    assert_eq!(
        rec.content_hash,
        splitdesk::ingest::hash::sha256_hex(b"not a FIT file at all")
    );
    j.record_unreadable(&rec, "FIT: truncated", t(0)).unwrap();
    assert_eq!(
        j.unreadable(BROKEN).unwrap().as_deref(),
        Some("FIT: truncated")
    );
    let st = j.review_state(BROKEN).unwrap();
    assert_eq!(st.stage, ReviewStage::New);
    assert_eq!(st.work_intervals, Some(0), "no analysis: taken as zero");
    assert_eq!(st.file_unreadable.as_deref(), Some("FIT: truncated"));
    assert_eq!(st.unreadable_seen, None);
    let q = j.unreviewed(None).unwrap();
    assert_eq!(q.len(), 1);
    assert_eq!(q[0].file_unreadable.as_deref(), Some("FIT: truncated"));
    // The note stays hidden until the verdict: the reveal gives no permit.
    assert!(matches!(
        j.reveal(BROKEN, t(1)),
        Err(JournalError::NotYetGraded { .. })
    ));
    assert!(matches!(
        j.set_score(BROKEN, 1, 3, t(1)),
        Err(JournalError::NoSuchInterval {
            work_intervals: 0,
            ..
        })
    ));
    j.set_verdict(BROKEN, PurposeVerdict::Partly, t(2)).unwrap();
    let st = j.review_state(BROKEN).unwrap();
    assert_eq!(st.stage, ReviewStage::Graded);
    assert_eq!(st.unreadable_seen.as_deref(), Some("FIT: truncated"));
    let permit = j.reveal(BROKEN, t(3)).unwrap();
    let text = read_note(&permit, Some(&note), None).unwrap();
    assert_eq!(text.trim(), "Watch died halfway, sorry.");
    assert_eq!(j.review_state(BROKEN).unwrap().stage, ReviewStage::Revealed);
    // Revealed with zero work intervals: the bias check sees a verdict-only review.
    let bias = j.bias_inputs().unwrap();
    assert_eq!(bias.len(), 1);
    assert!(bias[0].blind_scores.is_empty());
    assert_eq!(bias[0].blind_verdict, Some(PurposeVerdict::Partly));
}

#[test]
fn a_verdict_given_before_the_problem_was_known_does_not_open_the_note() {
    let dir = tempfile::tempdir().unwrap();
    let (act, _) = broken_files(dir.path());
    let mut j = Journal::open_in_memory().unwrap();
    // Known, not analysed yet; a verdict is given.
    let mut rec = unreadable_record(BROKEN, "ines", &act, t(0));
    rec.summary = None;
    j.upsert_session(&rec, t(0)).unwrap();
    j.set_verdict(BROKEN, PurposeVerdict::Met, t(1)).unwrap();
    assert!(matches!(
        j.reveal(BROKEN, t(1)),
        Err(JournalError::NotAnalysed { .. })
    ));
    // Then the file turns out unreadable: that verdict did not see the problem.
    j.record_unreadable(&rec, "FIT: bad header", t(2)).unwrap();
    let st = j.review_state(BROKEN).unwrap();
    assert!(st.missing.verdict, "the verdict must be given again");
    assert_eq!(st.stage, ReviewStage::Grading);
    match j.reveal(BROKEN, t(3)).unwrap_err() {
        JournalError::NotYetGraded { missing, .. } => assert!(missing.verdict),
        other => panic!("{other}"),
    }
    j.set_verdict(BROKEN, PurposeVerdict::Met, t(4)).unwrap();
    j.reveal(BROKEN, t(5)).unwrap();
}

#[test]
fn a_file_that_reads_again_is_no_longer_unreadable() {
    let mut j = Journal::open_in_memory().unwrap();
    let id = "ines/2026-11-06-easy-run";
    let mut rec = record(id, None);
    j.record_unreadable(&rec, "FIT: truncated", t(0)).unwrap();
    assert!(j.unreadable(id).unwrap().is_some());
    rec.summary = Some(SummaryCache {
        json: "{}".into(),
        analysis_version: 1,
        work_intervals: 4,
        card: None,
    });
    j.upsert_session(&rec, t(1)).unwrap();
    assert_eq!(j.unreadable(id).unwrap(), None);
    let st = j.review_state(id).unwrap();
    assert_eq!(st.work_intervals, Some(4));
    assert_eq!(st.missing.scores, vec![1, 2, 3, 4]);
}

#[test]
fn a_file_that_cannot_be_opened_gets_a_stand_in_hash() {
    let rec = unreadable_record(
        "ines/no-date",
        "ines",
        Path::new("/nonexistent/ines/activities/no-date.fit"),
        t(9),
    );
    assert_eq!(rec.content_hash, "unreadable:ines/no-date");
    assert_eq!(rec.start, t(9), "no date in the name, no file: now");
}

// ----- from the command line -----

const CLI_BROKEN: &str = "tova-renn/2026-11-05-broken";
const BROKEN_NOTE: &str = "quasarmitten";

/// The test roster plus a truncated copy of the interval session, with a note.
fn write_broken_roster(root: &Path) {
    write_roster(root);
    let a = root.join("tova-renn");
    let full = std::fs::read(a.join("activities/2026-11-03-reps.fit")).unwrap();
    std::fs::write(
        a.join("activities/2026-11-05-broken.fit"),
        &full[..full.len() / 2],
    )
    .unwrap();
    std::fs::write(
        a.join("notes/2026-11-05-broken.txt"),
        format!("Watch froze. {BROKEN_NOTE}\n"),
    )
    .unwrap();
}

#[test]
fn cli_quick_close_of_an_easy_run() {
    let e = TempRoster::new(write_roster);
    let q: serde_json::Value = serde_json::from_str(&e.ok(&["queue", "--json"])).unwrap();
    let easy = q
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["session"] == EASY_ID)
        .unwrap();
    assert_eq!(easy["work_intervals"], 0);
    let (code, _, err) = e.run(&["notes", EASY_ID]);
    assert_eq!(code, 3);
    assert!(
        err.contains("purpose verdict not set")
            && err.contains(&format!(
                "no work intervals: splitdesk grade {EASY_ID} --verdict met|partly|missed closes it"
            )),
        "{err}"
    );
    let out = e.ok(&["grade", EASY_ID, "--verdict", "met"]);
    assert!(
        out.contains(&format!(
            "quick close: no work intervals, so the purpose verdict is the whole blind grade; \
             the notes can be read now (splitdesk notes {EASY_ID})"
        )),
        "{out}"
    );
    assert!(!out.contains("still needed"), "{out}");
    let (code, _, _) = e.run(&["notes", EASY_ID]);
    assert_eq!(code, 0);
    let q: serde_json::Value = serde_json::from_str(&e.ok(&["queue", "--json"])).unwrap();
    let ids: Vec<&str> = q
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["session"].as_str().unwrap())
        .collect();
    assert_eq!(ids, [REPS_ID]);
}

#[test]
fn cli_damaged_file_says_why_and_closes_with_the_verdict() {
    let e = TempRoster::new(write_broken_roster);
    let q: serde_json::Value = serde_json::from_str(&e.ok(&["queue", "--json"])).unwrap();
    let broken = q
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["session"] == CLI_BROKEN)
        .expect("the damaged session is in the queue");
    let title = broken["title"].as_str().unwrap();
    assert!(
        title.starts_with("file cannot be read: FIT: truncated"),
        "{title}"
    );
    assert_eq!(broken["work_intervals"], 0);
    assert!(broken["file_unreadable"]
        .as_str()
        .unwrap()
        .starts_with("FIT: truncated"));
    let reps = q
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["session"] == REPS_ID);
    assert!(reps.unwrap()["file_unreadable"].is_null());
    // The note stays hidden, and the refusal says why and what to do.
    let (code, out, err) = e.run(&["notes", CLI_BROKEN]);
    assert_eq!(code, 3);
    assert!(!out.contains(BROKEN_NOTE) && !err.contains(BROKEN_NOTE));
    assert!(
        err.contains(&format!(
            "error: {CLI_BROKEN}: the file cannot be read (FIT: truncated"
        )) && err.contains("the notes stay hidden until you give the purpose verdict"),
        "{err}"
    );
    // Scores are refused: nothing to score.
    let (code, _, err) = e.run(&["grade", CLI_BROKEN, "--score", "1=3"]);
    assert_ne!(code, 0);
    assert!(
        err.contains("so it has no work intervals to score") && err.contains("nothing was saved"),
        "{err}"
    );
    let out = e.ok(&["grade", CLI_BROKEN, "--verdict", "partly"]);
    assert!(
        out.contains("closed with the verdict alone: the file cannot be read (FIT: truncated")
            && out.contains("the verdict records that you saw this"),
        "{out}"
    );
    let out = e.ok(&["notes", CLI_BROKEN]);
    assert!(out.contains(BROKEN_NOTE), "{out}");
}

#[test]
fn cli_seen_leaves_the_queue_is_counted_and_undone() {
    let e = TempRoster::new(write_roster);
    let out = e.ok(&["seen", REPS_ID]);
    assert_eq!(
        out.trim(),
        format!(
            "{REPS_ID}: marked seen without a grade; it is out of the queue and its notes stay \
             hidden (undo: splitdesk seen {REPS_ID} --undo)"
        )
    );
    let out = e.ok(&["seen", REPS_ID]);
    assert_eq!(
        out.trim(),
        format!("{REPS_ID}: already marked seen; nothing changed")
    );
    let out = e.ok(&["queue"]);
    assert!(!out.contains(REPS_ID), "{out}");
    assert!(
        out.contains("(1 session marked seen without a grade, not listed;"),
        "{out}"
    );
    // The note stays hidden.
    let (code, out, _) = e.run(&["notes", REPS_ID]);
    assert_eq!(code, 3);
    assert!(!out.contains(NOTE_MARKER));
    let v: serde_json::Value = serde_json::from_str(&e.ok(&["bias-check", "--json"])).unwrap();
    assert_eq!(v["overall"]["seen_without_grade"], 1);
    assert_eq!(v["overall"]["reviews"], 0);
    let out = e.ok(&["bias-check"]);
    assert!(
        out.contains("1 session seen without grading (not counted)"),
        "{out}"
    );
    let v: serde_json::Value =
        serde_json::from_str(&e.ok(&["seen", REPS_ID, "--undo", "--json"])).unwrap();
    assert_eq!(v["seen"], false);
    assert_eq!(v["changed"], true);
    assert_eq!(v["stage"], "new");
    let out = e.ok(&["queue"]);
    assert!(
        out.contains(REPS_ID) && !out.contains("marked seen"),
        "{out}"
    );
    // After the reveal there is nothing to mark.
    e.ok(&["grade", EASY_ID, "--verdict", "met"]);
    e.ok(&["notes", EASY_ID]);
    let (code, _, err) = e.run(&["seen", EASY_ID]);
    assert_ne!(code, 0);
    assert!(
        err.contains("the notes are revealed already, so the session is reviewed"),
        "{err}"
    );
}
