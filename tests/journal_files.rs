//! The journal on disk: foreign files are refused and left untouched, newer journals too,
//! unwritable locations fail at open, persistence, backup, check, read-only open, location.

use std::path::{Path, PathBuf};

use chrono::{DateTime, TimeZone, Utc};
use splitdesk::ingest::hash::sha256_hex;
use splitdesk::journal::{
    check_outside_roster, default_path, schema, Journal, JournalError, PurposeVerdict, ReviewStage,
    SessionRecord, SummaryCache, DATA_DIR_ENV,
};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + chrono::Duration::minutes(minutes)
}

fn record(id: &str, work: u32) -> SessionRecord {
    let (athlete, stem) = id.split_once('/').unwrap();
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.to_string(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/{stem}.fit")),
        content_hash: sha256_hex(id.as_bytes()),
        start: t(0),
        summary: Some(SummaryCache {
            json: "{}".into(),
            analysis_version: 1,
            work_intervals: work,
            card: None,
        }),
    }
}

fn file_hash(path: &Path) -> String {
    sha256_hex(&std::fs::read(path).unwrap())
}

/// Open must fail on `path` and leave its bytes (and its folder) exactly as they were.
fn assert_refused_untouched(path: &Path, want: fn(&JournalError) -> bool) {
    let before = file_hash(path);
    let dir_before = list_dir(path.parent().unwrap());
    let err = Journal::open(path).unwrap_err();
    assert!(want(&err), "unexpected error: {err}");
    assert!(
        err.to_string().contains(&path.display().to_string()),
        "error names the file: {err}"
    );
    assert_eq!(file_hash(path), before, "file bytes changed");
    assert_eq!(list_dir(path.parent().unwrap()), dir_before);
    let err = Journal::open_read_only(path).unwrap_err();
    assert!(want(&err), "read-only open: {err}");
    assert_eq!(file_hash(path), before, "file bytes changed");
}

fn list_dir(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

fn not_a_journal(e: &JournalError) -> bool {
    matches!(e, JournalError::NotAJournal { .. })
}

#[test]
fn random_bytes_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    let bytes: Vec<u8> = (0..10_000u32)
        .map(|i| (i.wrapping_mul(2_654_435_761) >> 13) as u8)
        .collect();
    std::fs::write(&path, bytes).unwrap();
    assert_refused_untouched(&path, not_a_journal);
}

#[test]
fn text_file_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("notes.txt");
    std::fs::write(&path, "Tuesday: 5 x 1000 m, felt good\n").unwrap();
    assert_refused_untouched(&path, not_a_journal);
}

#[test]
fn another_programs_database_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    // Someone else's database: tables, no application id, in WAL mode with a live WAL file
    // would be the worst case; a plain one is what we usually meet.
    let path = dir.path().join("other.db");
    {
        let c = rusqlite::Connection::open(&path).unwrap();
        c.execute_batch("CREATE TABLE contacts (name TEXT); INSERT INTO contacts VALUES ('a');")
            .unwrap();
    }
    assert_refused_untouched(&path, not_a_journal);

    // One with its own application id and nothing else.
    let path = dir.path().join("other-id.db");
    {
        let c = rusqlite::Connection::open(&path).unwrap();
        c.execute_batch("PRAGMA application_id = 1234; PRAGMA user_version = 7;")
            .unwrap();
    }
    assert_refused_untouched(&path, not_a_journal);
}

#[test]
fn newer_journal_is_refused_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    {
        let mut j = Journal::open(&path).unwrap();
        j.upsert_session(&record("ines/a", 1), t(0)).unwrap();
    }
    {
        let c = rusqlite::Connection::open(&path).unwrap();
        c.pragma_update(None, "user_version", schema::current_version() + 1)
            .unwrap();
        c.pragma_update(None, "journal_mode", "DELETE").unwrap();
    }
    assert_refused_untouched(
        &path,
        |e| matches!(e, JournalError::TooNew { found, .. } if *found == schema::current_version() + 1),
    );
}

#[test]
fn damaged_journal_is_reported_as_corrupt() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    {
        let mut j = Journal::open(&path).unwrap();
        for i in 0..200 {
            j.upsert_session(&record(&format!("ines/s{i:03}"), 2), t(i))
                .unwrap();
            j.set_score(&format!("ines/s{i:03}"), 1, 3, t(i)).unwrap();
        }
    } // last connection closed: WAL checkpointed into the main file
    let mut bytes = std::fs::read(&path).unwrap();
    assert!(bytes.len() > 4096 * 6, "journal too small: {}", bytes.len());
    for b in &mut bytes[4096 * 2..4096 * 5] {
        *b = 0xA5;
    }
    std::fs::write(&path, &bytes).unwrap();
    let err = Journal::open(&path).unwrap_err();
    assert!(matches!(err, JournalError::Corrupt { .. }), "{err}");
    assert_eq!(std::fs::read(&path).unwrap(), bytes, "left untouched");
}

#[test]
fn empty_file_becomes_a_journal() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    std::fs::write(&path, b"").unwrap();
    let j = Journal::open(&path).unwrap();
    assert_eq!(j.check().unwrap().schema_version, schema::current_version());
}

#[test]
fn data_survives_reopen_and_read_only_open_reads_it() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("sub/dir/j.sqlite");
    {
        let mut j = Journal::open(&path).unwrap();
        j.upsert_session(&record("ines/a", 1), t(0)).unwrap();
        j.set_score("ines/a", 1, 4, t(1)).unwrap();
        j.set_verdict("ines/a", PurposeVerdict::Met, t(1)).unwrap();
        j.reveal("ines/a", t(2)).unwrap();
        j.save_feedback("ines/a", "well paced", t(3)).unwrap();
    }
    {
        let j = Journal::open(&path).unwrap();
        assert_eq!(
            j.review_state("ines/a").unwrap().stage,
            ReviewStage::Revealed
        );
    }
    let mut ro = Journal::open_read_only(&path).unwrap();
    assert_eq!(ro.feedback("ines/a").unwrap().unwrap().body, "well paced");
    let err = ro.save_feedback("ines/a", "x", t(4)).unwrap_err();
    assert!(
        matches!(err, JournalError::ReadOnlyLocation { .. }),
        "{err}"
    );
    assert!(matches!(
        Journal::open_read_only(&dir.path().join("missing.sqlite")),
        Err(JournalError::Io { .. })
    ));
}

#[test]
fn unwritable_location_fails_at_open() {
    let dir = tempfile::tempdir().unwrap();
    // A folder that can never be created: its parent is a regular file (holds even for root).
    let blocker = dir.path().join("a-file");
    std::fs::write(&blocker, "x").unwrap();
    let err = Journal::open(&blocker.join("journals/j.sqlite")).unwrap_err();
    assert!(
        matches!(err, JournalError::ReadOnlyLocation { .. }),
        "{err}"
    );
    assert!(err.to_string().contains("cannot be written"), "{err}");

    // A read-only folder: only meaningful when permission bits bind us (not as root).
    use std::os::unix::fs::PermissionsExt;
    let ro = dir.path().join("ro");
    std::fs::create_dir(&ro).unwrap();
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555)).unwrap();
    let privileged = std::fs::write(ro.join("probe"), "x").is_ok();
    if privileged {
        eprintln!(
            "running with privileges that ignore permission bits: read-only folder check skipped"
        );
        let _ = std::fs::remove_file(ro.join("probe"));
    } else {
        let err = Journal::open(&ro.join("j.sqlite")).unwrap_err();
        assert!(
            matches!(err, JournalError::ReadOnlyLocation { .. }),
            "{err}"
        );
        assert!(!ro.join("j.sqlite").exists());
    }
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755)).unwrap();
}

#[test]
fn folder_is_not_a_journal() {
    let dir = tempfile::tempdir().unwrap();
    assert!(matches!(
        Journal::open(dir.path()),
        Err(JournalError::NotAJournal { .. })
    ));
}

#[test]
fn journal_inside_the_roster_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    std::fs::create_dir_all(roster.join("ines")).unwrap();
    let inside = roster.join("ines/journal.sqlite");
    let err = Journal::open_for_roster(&inside, &roster).unwrap_err();
    assert!(matches!(err, JournalError::InsideRoster { .. }), "{err}");
    assert!(!inside.exists());
    assert!(check_outside_roster(&roster.join(".splitdesk/j.sqlite"), &roster).is_err());
    Journal::open_for_roster(&dir.path().join("j.sqlite"), &roster).unwrap();
}

#[test]
fn default_path_uses_the_data_dir_override() {
    // The only test in this binary that touches the environment.
    let data = tempfile::tempdir().unwrap();
    let roster = tempfile::tempdir().unwrap();
    std::env::set_var(DATA_DIR_ENV, data.path());
    let p = default_path(roster.path()).unwrap();
    std::env::remove_var(DATA_DIR_ENV);
    assert!(
        p.starts_with(data.path().join("journals")),
        "{}",
        p.display()
    );
    assert!(p.extension().is_some_and(|e| e == "sqlite"));
    assert!(check_outside_roster(&p, roster.path()).is_ok());
    let mut j = Journal::open(&p).unwrap();
    j.upsert_session(&record("ines/a", 1), t(0)).unwrap();
    assert!(p.exists());
}

#[test]
fn backup_copies_a_live_journal() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    let mut j = Journal::open(&path).unwrap();
    for i in 0..20 {
        let id = format!("ines/s{i:02}");
        j.upsert_session(&record(&id, 2), t(i)).unwrap();
        j.set_score(&id, 1, 2, t(i)).unwrap();
        j.set_score(&id, 2, 5, t(i)).unwrap();
        j.set_verdict(&id, PurposeVerdict::Partly, t(i)).unwrap();
    }
    j.reveal("ines/s00", t(30)).unwrap();
    j.set_score("ines/s00", 2, 4, t(31)).unwrap();
    j.save_feedback("ines/s00", "steady", t(32)).unwrap();

    let dest = dir.path().join("backup/j-copy.sqlite");
    std::fs::create_dir_all(dest.parent().unwrap()).unwrap();
    j.backup_to(&dest).unwrap();
    assert!(matches!(
        j.backup_to(&dest),
        Err(JournalError::DestinationExists { .. })
    ));
    // The original keeps working.
    j.save_feedback("ines/s00", "steady, after backup", t(33))
        .unwrap();

    let copy = Journal::open(&dest).unwrap();
    let report = copy.check().unwrap();
    assert!(report.is_ok(), "{:?}", report.problems);
    assert_eq!(report.sessions, 20);
    assert_eq!(report.scores, 40);
    assert_eq!(report.revisions, 1);
    assert_eq!(report.feedback_versions, 1);
    assert_eq!(copy.feedback("ines/s00").unwrap().unwrap().body, "steady");
    let st = copy.review_state("ines/s00").unwrap();
    assert_eq!(st.scores[1].blind, 5);
    assert_eq!(st.scores[1].current, 4);
}

#[test]
fn check_reports_counts() {
    let mut j = Journal::open_in_memory().unwrap();
    j.upsert_session(&record("ines/a", 1), t(0)).unwrap();
    j.add_ruler("ines/a", 0.0, 10.0, t(0)).unwrap();
    let r = j.check().unwrap();
    assert!(r.is_ok());
    assert_eq!(r.schema_version, schema::current_version());
    assert_eq!((r.sessions, r.reviews, r.rulers, r.scores), (1, 1, 1, 0));
}

#[test]
fn another_programs_live_wal_database_is_refused_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("live.db");
    let other = rusqlite::Connection::open(&path).unwrap();
    other
        .execute_batch(
            "PRAGMA journal_mode = WAL; CREATE TABLE t (x); INSERT INTO t VALUES (1), (2);",
        )
        .unwrap();
    let wal = dir.path().join("live.db-wal");
    assert!(wal.exists());
    let (main_before, wal_before) = (file_hash(&path), file_hash(&wal));
    let err = Journal::open(&path).unwrap_err();
    assert!(not_a_journal(&err), "{err}");
    assert_eq!(file_hash(&path), main_before);
    assert_eq!(file_hash(&wal), wal_before);
    let n: i64 = other
        .query_row("SELECT count(*) FROM t", [], |r| r.get(0))
        .unwrap();
    assert_eq!(n, 2);
}

/// The journal's integrity check is skipped only while its files are exactly as they were at
/// the last clean check: a damaged journal is still refused after a mark was written, and a
/// read-only open leaves no file beside the journal.
#[test]
fn a_checked_journal_is_trusted_only_while_its_files_are_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    let mark = dir.path().join("j.sqlite-checked");
    {
        let mut j = Journal::open(&path).unwrap();
        for i in 0..200 {
            j.upsert_session(&record(&format!("ines/s{i:03}"), 2), t(i))
                .unwrap();
        }
    }
    // Read-only opens never write the mark, settled or not.
    std::thread::sleep(std::time::Duration::from_millis(2_200));
    drop(Journal::open_read_only(&path).unwrap());
    assert!(!mark.exists(), "read-only open wrote a mark");
    // A writable open of a settled journal checks it and marks it.
    drop(Journal::open(&path).unwrap());
    assert!(mark.exists(), "no mark after a clean check");
    let marked = std::fs::read_to_string(&mark).unwrap();
    drop(Journal::open(&path).unwrap());
    assert_eq!(std::fs::read_to_string(&mark).unwrap(), marked);
    // Damage that keeps the size: the change time moves, so the check runs and refuses it.
    let mut bytes = std::fs::read(&path).unwrap();
    let len = bytes.len();
    for b in &mut bytes[4096 * 2..4096 * 5] {
        *b = 0xA5;
    }
    std::fs::write(&path, &bytes).unwrap();
    assert_eq!(std::fs::metadata(&path).unwrap().len() as usize, len);
    let err = Journal::open(&path).unwrap_err();
    assert!(matches!(err, JournalError::Corrupt { .. }), "{err}");
    assert!(!mark.exists(), "the mark of a damaged journal is removed");
}

/// Recording a file as unreadable again, with the same bytes and reason, writes nothing: a
/// warm start that re-reads a damaged file leaves the journal's files as they were.
#[test]
fn an_unchanged_unreadable_file_is_not_written_again() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    let wal = dir.path().join("j.sqlite-wal");
    let mut j = Journal::open(&path).unwrap();
    let rec = record("ines/s001", 0);
    j.record_unreadable(&rec, "FIT: truncated", t(0)).unwrap();
    let len = |p: &Path| std::fs::metadata(p).map(|m| m.len()).unwrap_or(0);
    let before = (len(&path), len(&wal));
    assert_eq!(
        j.record_unreadable(&rec, "FIT: truncated", t(1)).unwrap(),
        splitdesk::journal::SessionChange::Same
    );
    assert_eq!((len(&path), len(&wal)), before, "nothing written");
    // A new reason is written.
    j.record_unreadable(&rec, "FIT: file CRC mismatch", t(2))
        .unwrap();
    assert_eq!(
        j.unreadable("ines/s001").unwrap().as_deref(),
        Some("FIT: file CRC mismatch")
    );
    assert!(
        (len(&path), len(&wal)) != before,
        "the new reason was written"
    );
}
