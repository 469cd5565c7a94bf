//! Moving a journal between engines (`copy_journal`, `backup_to_file`): everything arrives,
//! the verification figures agree on every hop, the copy answers as the source does, a
//! non-empty destination is refused untouched; and what a PostgreSQL journal refuses to
//! open (another program's database, a journal from a newer splitdesk).
//!
//! The hops run on both engines (see `engines`): SQLite in memory, to the engine under test
//! (a SQLite file, or a PostgreSQL database), back to a new SQLite file.

mod engines;

use std::path::PathBuf;

use chrono::{DateTime, Duration, TimeZone, Utc};
use splitdesk::journal::copy::{backup_to_file, copy_journal, CopyReport};
use splitdesk::journal::{
    schema, Engine, FeedbackEventKind, Journal, JournalError, PurposeVerdict, SessionRecord,
    SummaryCache,
};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 11, 2, 6, 0, 0).unwrap() + Duration::minutes(minutes)
}

fn record(id: &str, start_min: i64, work: u32) -> SessionRecord {
    let (athlete, stem) = id.split_once('/').unwrap();
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.to_string(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/{stem}.fit")),
        content_hash: format!("hash-of-{id}"),
        start: t(start_min),
        summary: Some(SummaryCache {
            json: format!("{{\"work\":{work},\"note\":\"ünïcode ✓\"}}"),
            analysis_version: 4,
            work_intervals: work,
            card: None,
        }),
    }
}

const REPS: &str = "ines/reps";
const EASY: &str = "ines/easy";
const LONG: &str = "marco/long";
const HILLS: &str = "tom/hills";
const BROKEN: &str = "tom/broken";
const ALL: [&str; 5] = [REPS, EASY, LONG, HILLS, BROKEN];

/// A journal with a history: the single coach's reviews taken over by the first coach of a
/// staff of two, both coaches' blind grades, a reveal, revisions, feedback versions and
/// events, rulers, seen marks (one undone), an unreadable file, assignments.
fn fill(j: &mut Journal) {
    j.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
    j.upsert_session(&record(EASY, 10, 0), t(0)).unwrap();
    j.upsert_session(&record(LONG, 20, 0), t(0)).unwrap();
    j.upsert_session(&record(HILLS, 30, 2), t(0)).unwrap();
    let mut broken = record(BROKEN, 40, 0);
    broken.summary = None;
    j.record_unreadable(&broken, "the file is cut short", t(0))
        .unwrap();

    // The single coach.
    j.grade(
        REPS,
        &[(1, 4), (2, 3), (3, 5)],
        Some(PurposeVerdict::Met),
        t(1),
    )
    .unwrap();
    j.reveal(REPS, t(2)).unwrap();
    j.set_score(REPS, 2, 2, t(3)).unwrap();
    j.set_verdict(REPS, PurposeVerdict::Partly, t(3)).unwrap();
    j.save_feedback(REPS, "Strong finish.\nEasy tomorrow.", t(4))
        .unwrap();
    j.save_feedback(REPS, "Strong finish. Easy tomorrow, then hills.", t(5))
        .unwrap();
    j.record_feedback_event(REPS, FeedbackEventKind::Copied, t(6))
        .unwrap();
    j.add_ruler(REPS, 120.0, 900.5, t(6)).unwrap();
    j.add_ruler(REPS, 1000.0, 1600.25, t(6)).unwrap();
    j.mark_seen(LONG, t(7)).unwrap();
    j.mark_seen(EASY, t(7)).unwrap();
    j.unmark_seen(EASY, t(8)).unwrap();
    j.set_verdict(BROKEN, PurposeVerdict::Missed, t(8)).unwrap();
    j.set_score(HILLS, 1, 2, t(9)).unwrap();

    // A staff: the first coach takes the reviews over; a second grades blind.
    assert_eq!(j.staff_add("Arne", t(10)).unwrap().took_over_reviews, 5);
    j.staff_add("Beth", t(10)).unwrap();
    j.staff_add("Cleo", t(10)).unwrap();
    j.staff_remove("Cleo", t(11)).unwrap();
    j.assign("ines", Some("Arne"), t(11)).unwrap();
    j.assign("tom", Some("Beth"), t(11)).unwrap();
    j.set_coach("Beth").unwrap();
    j.grade(
        REPS,
        &[(1, 3), (2, 3), (3, 4)],
        Some(PurposeVerdict::Missed),
        t(12),
    )
    .unwrap();
    j.reveal(REPS, t(13)).unwrap();
    j.send_feedback(
        REPS,
        Some("Even pacing."),
        FeedbackEventKind::Exported,
        t(14),
    )
    .unwrap();
    j.grade(HILLS, &[(1, 4)], None, t(15)).unwrap();
    j.add_ruler(HILLS, 30.0, 90.0, t(15)).unwrap();
    j.mark_seen(EASY, t(16)).unwrap();
    j.set_coach("Arne").unwrap();
}

/// What a journal answers, coach by coach, in a form that compares whole. Leaves the handle
/// reading as the last coach, Beth.
fn answers(j: &mut Journal) -> Vec<String> {
    let mut out = vec![
        format!("staff {:?}", j.staff().unwrap()),
        format!("assignments {:?}", j.assignments().unwrap()),
        format!("coach grades {:?}", j.coach_grades().unwrap()),
    ];
    for coach in ["Arne", "Beth"] {
        j.set_coach(coach).unwrap();
        out.push(format!("{coach} queue {:?}", j.unreviewed(None).unwrap()));
        out.push(format!("{coach} pane {:?}", j.sessions(None).unwrap()));
        out.push(format!("{coach} seen {:?}", j.seen_sessions(None).unwrap()));
        out.push(format!("{coach} bias {:?}", j.bias_inputs().unwrap()));
        for id in ALL {
            out.push(format!(
                "{coach} {id} state {:?}",
                j.review_state(id).unwrap()
            ));
            out.push(format!(
                "{coach} {id} revisions {:?}",
                j.revisions(id).unwrap()
            ));
            out.push(format!(
                "{coach} {id} feedback {:?}",
                j.feedback_history(id).unwrap()
            ));
            out.push(format!(
                "{coach} {id} events {:?}",
                j.feedback_events(id).unwrap()
            ));
            out.push(format!("{coach} {id} rulers {:?}", j.rulers(id).unwrap()));
            out.push(format!(
                "{coach} {id} permit {:?}",
                j.revealed_permit(id)
                    .unwrap()
                    .map(|p| p.session_id().to_string())
            ));
            out.push(format!(
                "{coach} {id} colleagues {:?}",
                j.colleague_grades(id).map_err(|e| match e {
                    // The message names the journal's path, which differs between copies.
                    JournalError::ColleaguesHidden { missing, .. } =>
                        format!("not yet {missing:?}"),
                    other => format!("{other:?}"),
                })
            ));
            out.push(format!(
                "{coach} {id} summary {:?}",
                j.cached_summary(id, 4).unwrap()
            ));
        }
    }
    out
}

/// The copy's answers equal the source's, line by line (the first differing line shown).
fn assert_same_answers(source: &[String], copy: &[String], hop: &str) {
    for (s, c) in source.iter().zip(copy) {
        assert_eq!(s, c, "{hop}: the copy answers differently");
    }
    assert_eq!(source.len(), copy.len(), "{hop}");
}

fn rows(report: &CopyReport, table: &str) -> u64 {
    report
        .rows
        .iter()
        .find(|(name, _)| name == table)
        .map(|(_, n)| *n)
        .unwrap_or_else(|| panic!("no {table} in {:?}", report.rows))
}

#[test]
fn a_journal_copied_to_the_engine_and_back_answers_the_same() {
    engines::both("copy_there_and_back", || {
        let mut source = Journal::open_in_memory().unwrap();
        fill(&mut source);
        let source_answers = answers(&mut source);
        let source_check = source.check().unwrap();

        // Hop 1: SQLite in memory to the engine under test.
        let middle_place = engines::place();
        let mut middle = middle_place.open();
        assert_eq!(middle.engine(), engines::engine());
        let there = copy_journal(&source, &mut middle).unwrap();
        // Hop 2: back to a new SQLite file.
        let dir = tempfile::tempdir().unwrap();
        let back_path = dir.path().join("back.sqlite");
        let mut back = Journal::open(&back_path).unwrap();
        let back_report = copy_journal(&middle, &mut back).unwrap();

        assert_eq!(there.rows, back_report.rows);
        assert_eq!(there.content_hash, back_report.content_hash);
        assert_eq!(there.content_hash.len(), 64);
        assert!(there
            .content_hash
            .bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b)));
        // The figures are the source's.
        assert_eq!(rows(&there, "session"), 5);
        assert_eq!(rows(&there, "review"), source_check.reviews);
        assert_eq!(rows(&there, "score"), source_check.scores);
        assert_eq!(rows(&there, "revision"), source_check.revisions);
        assert_eq!(
            rows(&there, "feedback_version"),
            source_check.feedback_versions
        );
        assert_eq!(rows(&there, "feedback_event"), source_check.feedback_events);
        assert_eq!(rows(&there, "ruler"), source_check.rulers);
        assert_eq!(rows(&there, "seen_event"), 4);
        assert_eq!(source_check.reviews, 8);
        assert_eq!(source_check.scores, 8);
        assert_eq!(source_check.revisions, 2);
        assert_eq!(source_check.feedback_versions, 3);
        assert_eq!(source_check.feedback_events, 2);
        assert_eq!(source_check.rulers, 3);

        // Opened afresh, each copy answers as the source does, for every coach.
        drop(middle);
        let mut middle = middle_place.open();
        assert_same_answers(&source_answers, &answers(&mut middle), "there");
        drop(back);
        let mut back = Journal::open(&back_path).unwrap();
        assert!(back.check().unwrap().is_ok());
        assert_same_answers(&source_answers, &answers(&mut back), "and back");

        // The copies go on working: new ids do not collide with copied ones.
        middle.set_coach("Beth").unwrap();
        middle
            .save_feedback(REPS, "Even pacing; well done.", t(20))
            .unwrap();
        assert_eq!(middle.feedback_history(REPS).unwrap().len(), 2);
        middle.set_coach("Arne").unwrap();
        middle.set_score(HILLS, 2, 3, t(21)).unwrap();
        assert_eq!(middle.review_state(HILLS).unwrap().scores.len(), 2);
    });
}

/// A single coach's journal (no staff): the reviews are linked to their sessions in the copy.
#[test]
fn a_single_coachs_journal_copied_keeps_its_reviews() {
    engines::both("copy_single_coach", || {
        let mut source = Journal::open_in_memory().unwrap();
        source.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        source.upsert_session(&record(LONG, 20, 0), t(0)).unwrap();
        source
            .grade(
                REPS,
                &[(1, 4), (2, 3), (3, 5)],
                Some(PurposeVerdict::Met),
                t(1),
            )
            .unwrap();
        source.reveal(REPS, t(2)).unwrap();
        source.set_score(REPS, 1, 5, t(3)).unwrap();
        source.save_feedback(REPS, "Well paced.", t(4)).unwrap();
        source.add_ruler(REPS, 60.0, 120.0, t(4)).unwrap();
        source.mark_seen(LONG, t(5)).unwrap();
        let mut dest = engines::journal();
        let report = copy_journal(&source, &mut dest).unwrap();
        assert_eq!(rows(&report, "review"), 2);
        for id in [REPS, LONG] {
            assert_eq!(
                format!("{:?}", dest.review_state(id).unwrap()),
                format!("{:?}", source.review_state(id).unwrap()),
                "{id}"
            );
        }
        let st = dest.review_state(REPS).unwrap();
        assert_eq!(st.revealed_at, Some(t(2)));
        assert_eq!(st.scores[0].current, 5);
        assert_eq!(dest.revisions(REPS).unwrap().len(), 1);
        assert_eq!(dest.feedback(REPS).unwrap().unwrap().body, "Well paced.");
        assert_eq!(dest.rulers(REPS).unwrap().len(), 1);
        assert!(dest.revealed_permit(REPS).unwrap().is_some());
        assert!(dest.unreviewed(None).unwrap().is_empty());
        assert_eq!(dest.seen_sessions(None).unwrap().len(), 1);
    });
}

#[test]
fn a_copy_into_a_journal_that_holds_sessions_is_refused_and_writes_nothing() {
    engines::both("copy_into_non_empty", || {
        let mut source = Journal::open_in_memory().unwrap();
        fill(&mut source);
        let mut dest = engines::journal();
        dest.upsert_session(&record("zoe/own", 0, 1), t(0)).unwrap();
        let before = dest.check().unwrap();
        let err = copy_journal(&source, &mut dest).unwrap_err();
        assert!(
            matches!(err, JournalError::NotEmpty { rows: 1, .. }),
            "{err:?}"
        );
        assert_eq!(
            err.to_string(),
            format!(
                "{}: the destination already holds 1 sessions and reviews; copy into a new, \
                 empty journal (nothing was written)",
                dest.path().display()
            )
        );
        let after = dest.check().unwrap();
        assert_eq!(format!("{before:?}"), format!("{after:?}"));
        assert_eq!(after.sessions, 1);
        assert_eq!(after.reviews, 0);
        assert!(dest.staff().unwrap().is_empty());
        let ids: Vec<String> = dest
            .sessions(None)
            .unwrap()
            .into_iter()
            .map(|e| e.session_id)
            .collect();
        assert_eq!(ids, ["zoe/own"]);

        // A journal holding a review only (its session gone from the roster) is refused too.
        let mut dest = engines::journal();
        dest.upsert_session(&record("zoe/own", 0, 1), t(0)).unwrap();
        dest.set_score("zoe/own", 1, 3, t(1)).unwrap();
        dest.retain_sessions(&[]).unwrap();
        assert_eq!(dest.check().unwrap().sessions, 0);
        assert!(matches!(
            copy_journal(&source, &mut dest),
            Err(JournalError::NotEmpty { rows: 1, .. })
        ));
        assert_eq!(dest.check().unwrap().reviews, 1);
        assert_eq!(dest.check().unwrap().scores, 1);
    });
}

#[test]
fn a_server_journal_backs_up_to_a_sqlite_file_that_opens_and_verifies() {
    engines::postgres_only("backup_to_file", || {
        let mut pg = engines::journal();
        assert_eq!(pg.engine(), Engine::Postgres);
        fill(&mut pg);
        let pg_answers = answers(&mut pg);
        let dir = tempfile::tempdir().unwrap();
        let dest = dir.path().join("backup.sqlite");
        let report = backup_to_file(&pg, &dest).unwrap();
        assert_eq!(rows(&report, "session"), 5);
        assert_eq!(rows(&report, "review"), 8);

        let mut copy = Journal::open(&dest).unwrap();
        assert_eq!(copy.engine(), Engine::Sqlite);
        let check = copy.check().unwrap();
        assert!(check.is_ok(), "{:?}", check.problems);
        assert_eq!(check.schema_version, schema::current_version());
        assert_eq!(check.reviews, 8);
        assert_same_answers(&pg_answers, &answers(&mut copy), "backup");
        // The backup's own copy verifies to the same figures.
        let again = Journal::open_in_memory().map(|mut m| copy_journal(&copy, &mut m));
        let again = again.unwrap().unwrap();
        assert_eq!(again.content_hash, report.content_hash);
        assert_eq!(again.rows, report.rows);
        drop(copy);
        let read_only = Journal::open_read_only(&dest).unwrap();
        assert_eq!(read_only.check().unwrap().feedback_versions, 3);

        // Never over an existing file, by either door.
        let before = std::fs::read(&dest).unwrap();
        assert!(matches!(
            backup_to_file(&pg, &dest),
            Err(JournalError::DestinationExists { .. })
        ));
        assert!(matches!(
            pg.backup_to(&dest),
            Err(JournalError::DestinationExists { .. })
        ));
        assert_eq!(std::fs::read(&dest).unwrap(), before);
        // `backup_to` of a server journal makes the same SQLite file.
        let second = dir.path().join("second.sqlite");
        pg.backup_to(&second).unwrap();
        let mut second = Journal::open(&second).unwrap();
        assert_same_answers(&pg_answers, &answers(&mut second), "backup_to");
    });
}

#[test]
fn a_database_of_another_program_is_refused_untouched() {
    engines::postgres_only("another_programs_db", || {
        let place = engines::place();
        let url = place.url().unwrap();
        let mut client = engines::pg_support::connect(url).unwrap();
        client
            .batch_execute(
                "CREATE TABLE invoices (id BIGINT PRIMARY KEY, total TEXT);
                 INSERT INTO invoices VALUES (1, '12.50'), (2, '99.00');",
            )
            .unwrap();
        let err = Journal::open_url(url).unwrap_err();
        assert!(
            matches!(&err, JournalError::NotAJournal { reason, .. }
                if reason.contains("1 tables of another program")),
            "{err:?}"
        );
        let tables: Vec<String> = client
            .query(
                "SELECT tablename::text FROM pg_catalog.pg_tables
                 WHERE schemaname = current_schema() ORDER BY 1",
                &[],
            )
            .unwrap()
            .into_iter()
            .map(|r| r.get(0))
            .collect();
        assert_eq!(tables, ["invoices"], "nothing was added");
        let totals: Vec<String> = client
            .query("SELECT total FROM invoices ORDER BY id", &[])
            .unwrap()
            .into_iter()
            .map(|r| r.get(0))
            .collect();
        assert_eq!(totals, ["12.50", "99.00"]);
        let functions: i64 = client
            .query_one(
                "SELECT count(*) FROM pg_catalog.pg_proc p
                 JOIN pg_catalog.pg_namespace n ON n.oid = p.pronamespace
                 WHERE n.nspname = current_schema()",
                &[],
            )
            .unwrap()
            .get(0);
        assert_eq!(functions, 0, "no function of ours was made");
    });
}

#[test]
fn a_journal_from_a_newer_splitdesk_is_refused_untouched() {
    engines::postgres_only("too_new", || {
        let place = engines::place();
        let url = place.url().unwrap();
        {
            let mut j = place.open();
            j.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        }
        let newer = i64::from(schema::current_version()) + 1;
        let mut client = engines::pg_support::connect(url).unwrap();
        client
            .execute(
                "UPDATE splitdesk_journal SET schema_version = $1",
                &[&newer],
            )
            .unwrap();
        let err = Journal::open_url(url).unwrap_err();
        match &err {
            JournalError::TooNew {
                found, supported, ..
            } => {
                assert_eq!(i64::from(*found), newer);
                assert_eq!(*supported, schema::current_version());
            }
            other => panic!("{other:?}"),
        }
        let version: i64 = client
            .query_one("SELECT schema_version FROM splitdesk_journal", &[])
            .unwrap()
            .get(0);
        assert_eq!(version, newer, "the version is left as it was");
        let sessions: i64 = client
            .query_one("SELECT count(*) FROM session", &[])
            .unwrap()
            .get(0);
        assert_eq!(sessions, 1);
    });
}

#[test]
fn a_marker_table_of_another_program_is_refused_untouched() {
    engines::postgres_only("foreign_marker", || {
        let place = engines::place();
        let url = place.url().unwrap();
        let mut client = engines::pg_support::connect(url).unwrap();
        client.batch_execute(schema::PG_META).unwrap();
        client
            .execute(
                "INSERT INTO splitdesk_journal (application_id, schema_version) VALUES (7, 1)",
                &[],
            )
            .unwrap();
        let err = Journal::open_url(url).unwrap_err();
        assert!(
            matches!(&err, JournalError::NotAJournal { reason, .. }
                if reason == "another program's marker (application id 0x7)"),
            "{err:?}"
        );
        let tables: i64 = client
            .query_one(
                "SELECT count(*) FROM pg_catalog.pg_tables WHERE schemaname = current_schema()",
                &[],
            )
            .unwrap()
            .get(0);
        assert_eq!(tables, 1, "no journal table was made");
        let row = client
            .query_one(
                "SELECT application_id, schema_version FROM splitdesk_journal",
                &[],
            )
            .unwrap();
        assert_eq!((row.get::<_, i64>(0), row.get::<_, i64>(1)), (7, 1));
    });
}
