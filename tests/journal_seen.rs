//! "Seen": a session marked as looked at without a grade. It leaves the queue, its note stays
//! hidden, the mark is reversible and kept in the journal, and it is counted apart in the
//! queue and the bias check. Also the migration from the schema before it.
//!
//! The tests of the review model run on both engines (see `engines`). SQLite-only: the
//! read-only snapshot (an in-memory copy of a SQLite file that cannot be written) and the
//! upgrade of a version-2 SQLite file written with rusqlite.

mod engines;

use chrono::{DateTime, Duration, TimeZone, Utc};
use rusqlite::Connection;
use splitdesk::journal::{
    schema, Journal, JournalError, PurposeVerdict, ReviewStage, SessionRecord,
};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + Duration::minutes(minutes)
}

fn record(id: &str, start_min: i64, work: u32) -> SessionRecord {
    engines::analysed_record(id, t(start_min), work)
}

const EASY: &str = "ines/easy";
const REPS: &str = "ines/reps";
const LONG: &str = "marco/long";

fn journal() -> Journal {
    let mut j = engines::journal();
    j.upsert_session(&record(EASY, 0, 0), t(0)).unwrap();
    j.upsert_session(&record(REPS, 10, 3), t(0)).unwrap();
    j.upsert_session(&record(LONG, 20, 0), t(0)).unwrap();
    j
}

fn queue_ids(j: &Journal) -> Vec<String> {
    j.unreviewed(None)
        .unwrap()
        .into_iter()
        .map(|e| e.session_id)
        .collect()
}

#[test]
fn seen_leaves_the_queue_and_undo_brings_it_back() {
    engines::both("seen_leaves_the_queue_and_undo_brings_it_back", || {
        let mut j = journal();
        assert_eq!(queue_ids(&j), [EASY, REPS, LONG]);
        assert!(j.mark_seen(REPS, t(30)).unwrap());
        assert_eq!(queue_ids(&j), [EASY, LONG]);
        let st = j.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::Seen);
        assert_eq!(st.stage.label(), "seen");
        assert!(!st.stage.is_unreviewed());
        assert!(!st.stage.is_revealed());
        assert_eq!(st.seen_at, Some(t(30)));
        assert!(st.revealed_at.is_none());
        // Marking twice records nothing more.
        assert!(!j.mark_seen(REPS, t(31)).unwrap());
        assert_eq!(j.review_state(REPS).unwrap().seen_at, Some(t(30)));
        let seen: Vec<String> = j
            .seen_sessions(None)
            .unwrap()
            .into_iter()
            .map(|e| e.session_id)
            .collect();
        assert_eq!(seen, [REPS]);
        assert_eq!(j.seen_sessions(Some("marco")).unwrap().len(), 0);
        assert_eq!(j.unreviewed_counts().unwrap().get("ines"), Some(&1));
        // Undo: back in the queue, at its place (oldest first).
        assert!(j.unmark_seen(REPS, t(40)).unwrap());
        assert_eq!(queue_ids(&j), [EASY, REPS, LONG]);
        let st = j.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::New);
        assert_eq!(st.seen_at, None);
        assert!(
            !j.unmark_seen(REPS, t(41)).unwrap(),
            "not seen: nothing to undo"
        );
        assert!(
            !j.unmark_seen(LONG, t(41)).unwrap(),
            "never reviewed: nothing to undo"
        );
        // Every mark and undo is kept.
        let check = j.check().unwrap();
        assert!(check.is_ok());
    });
}

#[test]
fn seen_keeps_the_note_hidden_and_grades_already_given() {
    engines::both(
        "seen_keeps_the_note_hidden_and_grades_already_given",
        || {
            let mut j = journal();
            j.set_score(REPS, 1, 4, t(1)).unwrap();
            j.mark_seen(REPS, t(2)).unwrap();
            let st = j.review_state(REPS).unwrap();
            assert_eq!(st.stage, ReviewStage::Seen);
            assert_eq!(st.scores.len(), 1, "the score given before stays");
            // The reveal still needs the whole blind grading: no permit comes from "seen".
            match j.reveal(REPS, t(3)).unwrap_err() {
                JournalError::NotYetGraded { missing, .. } => {
                    assert_eq!(missing.scores, vec![2, 3]);
                    assert!(missing.verdict);
                }
                other => panic!("{other}"),
            }
            // A session with no work intervals, seen: still blind until its verdict.
            j.mark_seen(EASY, t(3)).unwrap();
            assert!(matches!(
                j.reveal(EASY, t(4)),
                Err(JournalError::NotYetGraded { .. })
            ));
            // Grading completed later and revealed: the reveal wins over the seen mark.
            j.set_verdict(EASY, PurposeVerdict::Met, t(5)).unwrap();
            assert_eq!(j.review_state(EASY).unwrap().stage, ReviewStage::Seen);
            j.reveal(EASY, t(6)).unwrap();
            assert_eq!(j.review_state(EASY).unwrap().stage, ReviewStage::Revealed);
            // Once revealed, marking seen is refused and nothing is recorded.
            let err = j.mark_seen(EASY, t(7)).unwrap_err();
            assert!(
                matches!(err, JournalError::AlreadyRevealed { .. }),
                "{err:?}"
            );
            // On SQLite the path is ":memory:"; on PostgreSQL the server address.
            assert_eq!(
                err.to_string(),
                format!(
                    "{}: ines/easy: the notes are revealed already; the session is reviewed",
                    j.path().display()
                )
            );
            assert!(matches!(
                j.unmark_seen(EASY, t(7)),
                Err(JournalError::AlreadyRevealed { .. })
            ));
            assert!(matches!(
                j.mark_seen("nobody/x", t(7)),
                Err(JournalError::UnknownSession { .. })
            ));
        },
    );
}

#[test]
fn bias_inputs_leave_seen_sessions_out_and_the_count_says_how_many() {
    engines::both(
        "bias_inputs_leave_seen_sessions_out_and_the_count_says_how_many",
        || {
            let mut j = journal();
            j.set_verdict(EASY, PurposeVerdict::Met, t(1)).unwrap();
            j.reveal(EASY, t(2)).unwrap();
            j.mark_seen(REPS, t(3)).unwrap();
            j.mark_seen(LONG, t(3)).unwrap();
            let inputs = j.bias_inputs().unwrap();
            assert_eq!(inputs.len(), 1);
            assert_eq!(inputs[0].session_id, EASY);
            let seen: Vec<String> = j
                .seen_sessions(None)
                .unwrap()
                .into_iter()
                .map(|e| e.athlete)
                .collect();
            assert_eq!(seen, ["ines", "marco"]);
            let cases: Vec<splitdesk::bias::BiasCase> = inputs
                .into_iter()
                .map(|input| splitdesk::bias::BiasCase { input, tone: None })
                .collect();
            let r = splitdesk::bias::report_with_seen(&cases, &seen);
            assert_eq!(r.overall.reviews, 1);
            assert_eq!(r.overall.seen_without_grade, 2);
            assert_eq!(
                r.overall.text,
                "grades never moved after reading the notes (1 reviews); \
         2 sessions seen without grading (not counted)"
            );
            assert_eq!(r.athletes["marco"].reviews, 0);
            assert_eq!(r.athletes["marco"].seen_without_grade, 1);
        },
    );
}

#[test]
fn seen_is_kept_across_reopen_on_both_engines() {
    engines::both("seen_kept_across_reopen", || {
        let place = engines::place();
        {
            let mut j = place.open();
            j.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
            assert!(j.mark_seen(REPS, t(1)).unwrap());
        }
        let j = place.open();
        let st = j.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::Seen);
        assert_eq!(st.seen_at, Some(t(1)));
        assert_eq!(j.seen_sessions(None).unwrap().len(), 1);
    });
}

// SQLite-only: a read-only snapshot is an in-memory copy of a SQLite file.
#[test]
fn seen_is_kept_across_reopen_and_a_read_only_copy_refuses_it() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    {
        let mut j = Journal::open(&path).unwrap();
        j.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        j.mark_seen(REPS, t(1)).unwrap();
    }
    let j = Journal::open(&path).unwrap();
    assert_eq!(j.review_state(REPS).unwrap().stage, ReviewStage::Seen);
    drop(j);
    let mut snap = Journal::open_snapshot(&path, "the file is read-only").unwrap();
    let err = snap.unmark_seen(REPS, t(2)).unwrap_err();
    assert!(matches!(err, JournalError::ReadOnly { .. }), "{err:?}");
    assert_eq!(snap.review_state(REPS).unwrap().stage, ReviewStage::Seen);
}

/// The schema of version 2 (steps 1 and 2 only), with a graded session in it.
fn write_version_2(path: &std::path::Path) {
    let c = Connection::open(path).unwrap();
    c.pragma_update(None, "application_id", schema::APPLICATION_ID)
        .unwrap();
    for step in &schema::MIGRATIONS[..2] {
        c.execute_batch(step).unwrap();
    }
    c.pragma_update(None, "user_version", 2).unwrap();
    c.execute_batch(
        "INSERT INTO review (id, content_hash, created_at, verdict, verdict_at)
             VALUES (1, 'h-reps', '2026-03-02T06:01:00.000Z', 'met', '2026-03-02T06:01:00.000Z');
         INSERT INTO session (session_id, athlete_id, file_path, content_hash, start_time,
             seen_at, review_id, summary_json, summary_version, summary_hash, work_intervals)
             VALUES ('ines/reps', 'ines', '/roster/ines/activities/reps.fit', 'h-reps',
                 '2026-03-02T06:00:00.000Z', '2026-03-02T06:00:00.000Z', 1, '{}', 1, 'h-reps', 2);
         INSERT INTO score (review_id, interval_no, score, given_at)
             VALUES (1, 1, 4, '2026-03-02T06:01:00.000Z');",
    )
    .unwrap();
}

// SQLite-only: the old schema is written into a SQLite file with rusqlite.
#[test]
fn a_version_2_journal_is_upgraded_keeping_its_grades() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("old.sqlite");
    write_version_2(&path);
    // A read-only open refuses to upgrade and leaves the file as it was.
    let before = std::fs::read(&path).unwrap();
    assert!(matches!(
        Journal::open_read_only(&path),
        Err(JournalError::NeedsUpgrade {
            found: 2,
            supported,
            ..
        }) if supported == schema::current_version()
    ));
    assert_eq!(std::fs::read(&path).unwrap(), before);
    let mut j = Journal::open(&path).unwrap();
    let report = j.check().unwrap();
    assert!(report.is_ok(), "{:?}", report.problems);
    assert_eq!(report.schema_version, schema::current_version());
    let st = j.review_state(REPS).unwrap();
    assert_eq!(st.stage, ReviewStage::Grading);
    assert_eq!(st.scores.len(), 1);
    assert_eq!(st.seen_at, None);
    assert_eq!(st.file_unreadable, None);
    assert_eq!(st.unreadable_seen, None);
    // The new parts work on the upgraded journal.
    assert!(j.mark_seen(REPS, t(5)).unwrap());
    assert_eq!(j.review_state(REPS).unwrap().stage, ReviewStage::Seen);
    assert!(queue_ids(&j).is_empty());
}

/// The same upgrade on PostgreSQL: a server journal of schema version 2 (steps 1 and 2 of
/// `PG_MIGRATIONS`, written with the server's client) with a graded session in it.
#[test]
fn a_version_2_server_journal_is_upgraded_keeping_its_grades() {
    engines::postgres_only("pg_version_2_upgrade", || {
        let place = engines::place();
        let url = place.url().unwrap();
        let mut client = engines::pg_support::connect(url).unwrap();
        client.batch_execute(schema::PG_META).unwrap();
        client
            .execute(
                "INSERT INTO splitdesk_journal (application_id, schema_version) VALUES ($1, 2)",
                &[&i64::from(schema::APPLICATION_ID)],
            )
            .unwrap();
        for step in &schema::PG_MIGRATIONS[..2] {
            client.batch_execute(step).unwrap();
        }
        client
            .batch_execute(
                // No explicit id: the identity column gives 1, as splitdesk's writes did.
                "INSERT INTO review (content_hash, created_at, verdict, verdict_at)
                     VALUES ('h-reps', '2026-03-02T06:01:00.000Z', 'met',
                         '2026-03-02T06:01:00.000Z');
                 INSERT INTO session (session_id, athlete_id, file_path, content_hash,
                     start_time, seen_at, review_id, summary_json, summary_version,
                     summary_hash, work_intervals)
                     VALUES ('ines/reps', 'ines', '/roster/ines/activities/reps.fit', 'h-reps',
                         '2026-03-02T06:00:00.000Z', '2026-03-02T06:00:00.000Z', 1, '{}', 1,
                         'h-reps', 2);
                 INSERT INTO score (review_id, interval_no, score, given_at)
                     VALUES (1, 1, 4, '2026-03-02T06:01:00.000Z');",
            )
            .unwrap();
        let mut j = place.open();
        let report = j.check().unwrap();
        assert!(report.is_ok(), "{:?}", report.problems);
        assert_eq!(report.schema_version, schema::current_version());
        let version: i64 = client
            .query_one("SELECT schema_version FROM splitdesk_journal", &[])
            .unwrap()
            .get(0);
        assert_eq!(version, i64::from(schema::current_version()));
        let st = j.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::Grading);
        assert_eq!(st.scores.len(), 1);
        assert_eq!(st.scores[0].blind, 4);
        assert_eq!(
            st.verdict.as_ref().map(|v| v.blind),
            Some(PurposeVerdict::Met)
        );
        assert_eq!(st.seen_at, None);
        assert_eq!(st.file_unreadable, None);
        assert_eq!(st.unreadable_seen, None);
        // The new parts work on the upgraded journal; a new review gets a fresh id.
        assert!(j.mark_seen(REPS, t(5)).unwrap());
        assert_eq!(j.review_state(REPS).unwrap().stage, ReviewStage::Seen);
        assert!(queue_ids(&j).is_empty());
        j.upsert_session(&record(EASY, 20, 0), t(6)).unwrap();
        j.set_verdict(EASY, PurposeVerdict::Partly, t(6)).unwrap();
        assert_eq!(j.check().unwrap().reviews, 2);
    });
}
