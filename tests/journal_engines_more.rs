//! The engine-neutral checks of `journal_warm`, `journal_stat_cache`, `grade_atomic` and
//! `quick_close`, written once over a journal location and run on a SQLite file and on a
//! PostgreSQL database (a `Workspace` opens a server journal when its journal path is a
//! `postgres://` URL; without a test server the PostgreSQL runs are skipped, see `engines`):
//!
//! - a warm sync reads no file and writes nothing; `queue` takes its titles from the columns;
//! - the stat cache: an unchanged stat means the file is not read, a new one reads it again,
//!   the same bytes under a new time only move the stat;
//! - every grading action is all of it or nothing (refused grades, before and after the
//!   reveal, a bad verdict, a coach not on the staff), from the journal and the binary;
//! - the quick close (no work intervals), the verdict-only close of an unreadable file, and
//!   `seen`.
//!
//! Self-consistency data from our own simulator (`tui_support::build_roster`).

mod cli_support;
mod engines;
mod tui_support;

use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

use chrono::{DateTime, TimeZone, Utc};
use engines::pg_support;
use splitdesk::analysis::review::ANALYSIS_VERSION;
use splitdesk::journal::{FileStat, JournalError, PurposeVerdict, ReviewStage};
use splitdesk::workspace::{Workspace, WorkspaceError};
use tui_support::{build_roster, EASY, INTERVALS, LONG, SECRET_NOTE};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + chrono::Duration::minutes(minutes)
}

/// A roster of our own and a fresh journal location of the current engine.
struct Setup {
    _dir: tempfile::TempDir,
    roster: PathBuf,
    place: engines::Place,
}

impl Setup {
    fn new() -> Setup {
        let dir = tempfile::tempdir().unwrap();
        let roster = build_roster(&dir.path().join("roster"));
        Setup {
            _dir: dir,
            roster,
            place: engines::place(),
        }
    }

    /// The journal location as the program takes it: a file path or a URL.
    fn location(&self) -> PathBuf {
        match (self.place.file(), self.place.url()) {
            (Some(f), _) => f.to_path_buf(),
            (None, Some(u)) => PathBuf::from(u),
            (None, None) => unreachable!("a place is a file or a server"),
        }
    }

    fn open(&self) -> Workspace {
        Workspace::open(&self.roster, Some(&self.location()))
            .unwrap_or_else(|e| panic!("open {}: {e}", self.location().display()))
    }

    /// Every row of every table of the journal, as text, sorted: two equal snapshots mean
    /// nothing was written in between.
    fn snapshot(&self) -> Vec<String> {
        match (self.place.file(), self.place.url()) {
            (Some(f), _) => sqlite_rows(f),
            (None, Some(u)) => postgres_rows(u),
            (None, None) => unreachable!(),
        }
    }

    /// Run the binary here (no config file): exit code, stdout, stderr.
    fn run(&self, args: &[&str]) -> (i32, String, String) {
        let out = cli_support::run(&self.roster, &self.location(), args);
        (
            out.status.code().unwrap_or(-1),
            String::from_utf8_lossy(&out.stdout).into_owned(),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    }
}

fn sqlite_rows(file: &Path) -> Vec<String> {
    let c = rusqlite::Connection::open_with_flags(file, rusqlite::OpenFlags::SQLITE_OPEN_READ_ONLY)
        .unwrap();
    let tables: Vec<String> = c
        .prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    assert!(tables.iter().any(|t| t == "session"), "{tables:?}");
    let mut rows = Vec::new();
    for table in tables {
        let mut stmt = c.prepare(&format!("SELECT * FROM \"{table}\"")).unwrap();
        let n = stmt.column_count();
        let mut q = stmt.query([]).unwrap();
        while let Some(r) = q.next().unwrap() {
            let cells: Vec<String> = (0..n)
                .map(|i| format!("{:?}", r.get_ref(i).unwrap()))
                .collect();
            rows.push(format!("{table}: {}", cells.join(" | ")));
        }
    }
    rows.sort();
    rows
}

fn postgres_rows(url: &str) -> Vec<String> {
    let mut c = pg_support::connect(url).unwrap();
    let tables: Vec<String> = c
        .query(
            "SELECT table_name::text FROM information_schema.tables
             WHERE table_schema = current_schema() AND table_type = 'BASE TABLE'
             ORDER BY 1",
            &[],
        )
        .unwrap()
        .iter()
        .map(|r| r.get(0))
        .collect();
    assert!(tables.iter().any(|t| t == "session"), "{tables:?}");
    let mut rows = Vec::new();
    for table in tables {
        for r in c
            .query(&format!("SELECT t::text FROM \"{table}\" t"), &[])
            .unwrap()
        {
            rows.push(format!("{table}: {}", r.get::<_, String>(0)));
        }
    }
    rows.sort();
    rows
}

fn activity(roster: &Path, session: &str) -> PathBuf {
    let (athlete, stem) = session.split_once('/').unwrap();
    roster
        .join(athlete)
        .join("activities")
        .join(format!("{stem}.fit"))
}

/// Overwrite `path` with `bytes`, then set its modification time to `mtime`.
fn write_with_mtime(path: &Path, bytes: &[u8], mtime: SystemTime) {
    std::fs::write(path, bytes).unwrap();
    let f = std::fs::OpenOptions::new().write(true).open(path).unwrap();
    f.set_modified(mtime).unwrap();
}

// ----- warm work (from journal_warm) -----

#[test]
fn a_warm_sync_reads_no_file_and_writes_nothing() {
    engines::both("warm_sync_no_read_no_write", || {
        let s = Setup::new();
        let first = {
            let mut ws = s.open();
            ws.sync(Utc::now(), |_, _| {}).unwrap()
        };
        assert_eq!(first.sessions, 3, "{first:?}");
        assert_eq!((first.analysed, first.cached), (3, 0), "{first:?}");
        assert!(first.problems.is_empty(), "{:?}", first.problems);

        // Every file becomes garbage of the same size under the same modification time: a
        // sync that read any of them would fail on it.
        let mut originals = Vec::new();
        for id in [INTERVALS, EASY, LONG] {
            let file = activity(&s.roster, id);
            let bytes = std::fs::read(&file).unwrap();
            let mtime = std::fs::metadata(&file).unwrap().modified().unwrap();
            write_with_mtime(&file, &vec![0x5Au8; bytes.len()], mtime);
            originals.push((file, bytes, mtime));
        }
        let mut ws = s.open();
        let before = s.snapshot();
        let warm = ws.sync(Utc::now(), |_, _| {}).unwrap();
        assert_eq!(
            (warm.sessions, warm.cached, warm.analysed),
            (3, 3, 0),
            "{warm:?}"
        );
        assert!(warm.problems.is_empty(), "{:?}", warm.problems);
        assert!(ws.synced_current(INTERVALS) && ws.synced_current(EASY) && ws.synced_current(LONG));
        assert_eq!(s.snapshot(), before, "a warm sync wrote to the journal");
        // Once more, and the reads the queue makes (titles from the columns): still nothing.
        ws.sync(Utc::now(), |_, _| {}).unwrap();
        let briefs = ws.journal.summary_briefs(None, ANALYSIS_VERSION).unwrap();
        assert_eq!(briefs.len(), 3);
        let b = &briefs[INTERVALS];
        assert_eq!(b.plan_title.as_deref(), Some("5 x 3 min"));
        assert_eq!((b.running, b.work_intervals), (Some(true), Some(5)));
        assert_eq!(b.sport.as_deref(), Some("running"));
        let athlete = ws.roster.athlete("ines-aldana").unwrap();
        assert_eq!(
            b.inputs_digest.as_deref(),
            Some(athlete.inputs_digest.as_str())
        );
        assert_eq!(s.snapshot(), before);
        drop(ws);

        // The binary's queue, warm: the titles of the columns, no file read, nothing written.
        let (code, out, err) = s.run(&["queue", "--json"]);
        assert_eq!(code, 0, "{err}");
        assert!(
            err.is_empty(),
            "no file was read, so none is damaged: {err}"
        );
        let q: serde_json::Value = serde_json::from_str(&out).unwrap();
        let row = q
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["session"] == INTERVALS)
            .unwrap();
        assert_eq!(
            (row["title"].as_str(), row["work_intervals"].as_u64()),
            (Some("5 x 3 min"), Some(5))
        );
        assert_eq!(s.snapshot(), before);

        // A new modification time on one file: that one is read (and found damaged).
        let (file, bytes, mtime) = &originals[0];
        write_with_mtime(
            file,
            &vec![0x5Au8; bytes.len()],
            *mtime + Duration::from_secs(60),
        );
        let mut ws = s.open();
        let again = ws.sync(Utc::now(), |_, _| {}).unwrap();
        assert_eq!((again.cached, again.analysed), (2, 0), "{again:?}");
        assert_eq!(again.failed, [INTERVALS]);
    });
}

// ----- the stat cache (from journal_stat_cache) -----

#[test]
fn an_unchanged_stat_means_the_file_is_not_read() {
    engines::both("stat_cache", || {
        let s = Setup::new();
        let mut ws = s.open();
        let review = ws.refresh(INTERVALS, Utc::now()).unwrap();
        assert_eq!(review.work().count(), 5);
        let file = activity(&s.roster, INTERVALS);
        let original = std::fs::read(&file).unwrap();
        let mtime = std::fs::metadata(&file).unwrap().modified().unwrap();
        let stat = FileStat::of(&file).unwrap();
        assert_eq!(ws.journal.file_stat(INTERVALS).unwrap(), Some(stat.clone()));
        // Another handle (another workstation) reads the same stat.
        assert_eq!(
            s.open().journal.file_stat(INTERVALS).unwrap(),
            Some(stat.clone())
        );

        // Garbage, same size, same time: the cached review, the file not read.
        let garbage = vec![0xA5u8; original.len()];
        write_with_mtime(&file, &garbage, mtime);
        assert_eq!(FileStat::of(&file), Some(stat.clone()));
        let before = s.snapshot();
        let review = ws.refresh(INTERVALS, Utc::now()).unwrap();
        assert_eq!(review.work().count(), 5);
        assert_eq!(s.snapshot(), before, "a cached review wrote nothing");

        // A new time: read again, and the garbage is found out.
        write_with_mtime(&file, &garbage, mtime + Duration::from_secs(60));
        match ws.refresh(INTERVALS, Utc::now()) {
            Err(WorkspaceError::Ingest(_)) => {}
            Err(e) => panic!("expected the file to be read and refused, got {e}"),
            Ok(_) => panic!("the garbage was not read"),
        }

        // The original bytes under another time: the same hash, so only the stat moves.
        write_with_mtime(&file, &original, mtime + Duration::from_secs(120));
        let review = ws.refresh(INTERVALS, Utc::now()).unwrap();
        assert_eq!(review.work().count(), 5);
        assert_eq!(
            ws.journal.file_stat(INTERVALS).unwrap(),
            FileStat::of(&file)
        );
        let stat2 = FileStat::of(&file).unwrap();
        assert_ne!(stat2, stat);
        let summary = ws
            .journal
            .cached_summary(INTERVALS, ANALYSIS_VERSION)
            .unwrap()
            .unwrap();
        // Touched only: the stat is updated, the summary is the same.
        write_with_mtime(&file, &original, mtime + Duration::from_secs(180));
        ws.refresh(INTERVALS, Utc::now()).unwrap();
        let recorded = s.open().journal.file_stat(INTERVALS).unwrap();
        assert_eq!(recorded, FileStat::of(&file));
        assert_ne!(recorded, Some(stat2));
        assert_eq!(
            ws.journal
                .cached_summary(INTERVALS, ANALYSIS_VERSION)
                .unwrap()
                .unwrap(),
            summary
        );
    });
}

// ----- every grading action all or nothing (from grade_atomic) -----

/// What the journal holds for a session through the handle's coach: per interval
/// (blind, current), the verdict (blind, current), the number of revisions, revealed.
type Grades = (Vec<(u32, u8, u8)>, Option<(String, String)>, usize, bool);

fn grades(ws: &Workspace, id: &str) -> Grades {
    let st = ws.journal.review_state(id).unwrap();
    (
        st.scores
            .iter()
            .map(|c| (c.interval, c.blind, c.current))
            .collect(),
        st.verdict
            .as_ref()
            .map(|v| (v.blind.as_str().to_string(), v.current.as_str().to_string())),
        ws.journal.revisions(id).unwrap().len(),
        st.revealed_at.is_some(),
    )
}

#[test]
fn every_grading_action_is_all_or_nothing() {
    engines::both("grade_all_or_nothing", || {
        let s = Setup::new();
        let mut ws = s.open();
        ws.sync(Utc::now(), |_, _| {}).unwrap();
        let empty: Grades = (vec![], None, 0, false);
        let before = s.snapshot();
        // Valid scores, then an interval the session does not have (it has five).
        let err = ws
            .journal
            .grade(
                INTERVALS,
                &[(1, 4), (2, 3), (99, 1)],
                Some(PurposeVerdict::Met),
                t(1),
            )
            .unwrap_err();
        assert!(
            matches!(
                err,
                JournalError::NoSuchInterval {
                    interval: 99,
                    work_intervals: 5,
                    ..
                }
            ),
            "{err:?}"
        );
        // A score out of range after valid ones.
        let err = ws
            .journal
            .grade(INTERVALS, &[(1, 4), (2, 6)], None, t(1))
            .unwrap_err();
        assert!(
            matches!(err, JournalError::InvalidScore { score: 6, .. }),
            "{err:?}"
        );
        assert_eq!(grades(&ws, INTERVALS), empty);
        assert_eq!(s.snapshot(), before, "a refused grade wrote something");

        // Complete the blind grading and reveal; a refused revision leaves no revision.
        ws.journal
            .grade(
                INTERVALS,
                &[(1, 3), (2, 3), (3, 4), (4, 4), (5, 2)],
                Some(PurposeVerdict::Partly),
                t(2),
            )
            .unwrap();
        ws.journal.reveal(INTERVALS, t(3)).unwrap();
        let revealed = grades(&ws, INTERVALS);
        assert!(revealed.3);
        let before = s.snapshot();
        assert!(ws
            .journal
            .grade(
                INTERVALS,
                &[(1, 5), (6, 2)],
                Some(PurposeVerdict::Met),
                t(4)
            )
            .is_err());
        assert_eq!(grades(&ws, INTERVALS), revealed);
        assert_eq!(s.snapshot(), before);
        // A whole revision: both changes kept beside the blind grade.
        ws.journal
            .grade(INTERVALS, &[(1, 5)], Some(PurposeVerdict::Met), t(5))
            .unwrap();
        let after = grades(&ws, INTERVALS);
        assert_eq!(after.0[0], (1, 3, 5));
        assert_eq!(after.1, Some(("partly".into(), "met".into())));
        assert_eq!(after.2, 2);

        // On a staff: a coach not on it writes nothing, a known coach writes as themselves.
        ws.journal.staff_add("Arne", t(6)).unwrap();
        let before = s.snapshot();
        let mut other = s.open();
        assert!(matches!(
            other.act_as(Some("Zed")),
            Err(WorkspaceError::Journal(JournalError::UnknownCoach { .. }))
        ));
        assert!(matches!(
            other.act_as(None),
            Err(WorkspaceError::Journal(JournalError::NoCoach {
                staff: 1,
                ..
            }))
        ));
        assert!(matches!(
            other
                .journal
                .grade(EASY, &[], Some(PurposeVerdict::Met), t(7)),
            Err(JournalError::NoCoach { .. })
        ));
        assert!(matches!(
            other.journal.mark_seen(LONG, t(7)),
            Err(JournalError::NoCoach { .. })
        ));
        assert_eq!(s.snapshot(), before, "refused writers wrote something");
    });
}

#[test]
fn a_refused_grade_from_the_binary_saves_nothing() {
    engines::both("cli_grade_all_or_nothing", || {
        let s = Setup::new();
        let (code, _, err) = s.run(&["queue"]);
        assert_eq!(code, 0, "{err}");
        let before = s.snapshot();
        for args in [
            vec![
                "grade",
                INTERVALS,
                "--score",
                "1=4",
                "--score",
                "2=3",
                "--score",
                "99=1",
                "--verdict",
                "met",
            ],
            vec!["grade", INTERVALS, "--score", "1=4", "--verdict", "great"],
            vec!["grade", INTERVALS, "--score", "1=4", "--score", "2=0"],
        ] {
            let (code, out, err) = s.run(&args);
            assert_eq!(code, 2, "{args:?}: {out}{err}");
            assert!(
                err.contains("nothing was saved") || err.contains("the score must be 1-5"),
                "{err}"
            );
            assert_eq!(s.snapshot(), before, "{args:?} wrote something");
        }
        let (code, _, err) = s.run(&["grade", INTERVALS, "--score", "1=4", "--score", "2=3"]);
        assert_eq!(code, 0, "{err}");
        assert_ne!(s.snapshot(), before);
        let ws = s.open();
        assert_eq!(
            grades(&ws, INTERVALS),
            (vec![(1, 4, 4), (2, 3, 3)], None, 0, false)
        );
    });
}

// ----- quick close and seen (from quick_close) -----

#[test]
fn a_session_without_work_intervals_closes_with_the_verdict_alone() {
    engines::both("quick_close", || {
        let s = Setup::new();
        let mut ws = s.open();
        ws.sync(Utc::now(), |_, _| {}).unwrap();
        let st = ws.journal.review_state(EASY).unwrap();
        assert_eq!(st.work_intervals, Some(0));
        assert!(st.missing.scores.is_empty() && st.missing.verdict);
        match ws.journal.reveal(EASY, t(1)).unwrap_err() {
            JournalError::NotYetGraded { missing, .. } => {
                assert_eq!(missing.to_string(), "purpose verdict not set")
            }
            other => panic!("{other}"),
        }
        assert!(matches!(
            ws.journal.set_score(EASY, 1, 3, t(1)),
            Err(JournalError::NoSuchInterval {
                interval: 1,
                work_intervals: 0,
                ..
            })
        ));
        ws.journal
            .set_verdict(EASY, PurposeVerdict::Met, t(2))
            .unwrap();
        assert_eq!(
            ws.journal.review_state(EASY).unwrap().stage,
            ReviewStage::Graded
        );
        ws.journal.reveal(EASY, t(3)).unwrap();
        assert_eq!(
            ws.journal.review_state(EASY).unwrap().stage,
            ReviewStage::Revealed
        );
        let left: Vec<String> = ws
            .journal
            .unreviewed(None)
            .unwrap()
            .into_iter()
            .map(|e| e.session_id)
            .collect();
        assert!(!left.iter().any(|id| id == EASY), "{left:?}");

        // From the binary: the quick close line, then the notes.
        let (code, out, err) = s.run(&["grade", LONG, "--verdict", "partly"]);
        assert_eq!(code, 0, "{err}");
        assert!(
            out.contains(&format!(
                "quick close: no work intervals, so the purpose verdict is the whole blind \
                 grade; the notes can be read now (splitdesk notes {LONG})"
            )),
            "{out}"
        );
        let (code, _, err) = s.run(&["notes", LONG]);
        assert_eq!(code, 0, "{err}");
    });
}

#[test]
fn an_unreadable_file_closes_with_the_verdict_and_its_note_waits_for_it() {
    engines::both("unreadable_close", || {
        let s = Setup::new();
        let broken = "ines-aldana/2024-03-05-broken";
        let full = std::fs::read(activity(&s.roster, INTERVALS)).unwrap();
        std::fs::write(activity(&s.roster, broken), &full[..full.len() / 2]).unwrap();
        let marker = "okapiwhistle";
        std::fs::write(
            s.roster.join("ines-aldana/notes/2024-03-05-broken.txt"),
            format!("Watch froze. {marker}\n"),
        )
        .unwrap();
        let (code, out, err) = s.run(&["queue", "--json"]);
        assert_eq!(code, 0, "{err}");
        let q: serde_json::Value = serde_json::from_str(&out).unwrap();
        let row = q
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["session"] == broken)
            .expect("the damaged session is in the queue");
        assert_eq!(row["work_intervals"], 0);
        assert!(
            row["file_unreadable"]
                .as_str()
                .unwrap()
                .starts_with("FIT: "),
            "{row}"
        );
        // Recorded in the journal as unreadable, for another handle too.
        let ws = s.open();
        let st = ws.journal.review_state(broken).unwrap();
        assert_eq!(st.stage, ReviewStage::New);
        assert!(st.file_unreadable.as_deref().unwrap().starts_with("FIT: "));
        assert_eq!(st.unreadable_seen, None);
        drop(ws);
        let (code, out, err) = s.run(&["notes", broken]);
        assert_eq!(code, 3);
        assert!(!out.contains(marker) && !err.contains(marker));
        assert!(
            err.contains("the notes stay hidden until you give the purpose verdict"),
            "{err}"
        );
        let before = s.snapshot();
        let (code, _, err) = s.run(&["grade", broken, "--score", "1=3"]);
        assert_eq!(code, 2);
        assert!(
            err.contains("so it has no work intervals to score"),
            "{err}"
        );
        assert_eq!(s.snapshot(), before);
        let (code, out, err) = s.run(&["grade", broken, "--verdict", "partly"]);
        assert_eq!(code, 0, "{err}");
        assert!(
            out.contains("closed with the verdict alone: the file cannot be read (FIT: "),
            "{out}"
        );
        let st = s.open().journal.review_state(broken).unwrap();
        assert_eq!(st.stage, ReviewStage::Graded);
        assert!(st.unreadable_seen.is_some());
        let (code, out, err) = s.run(&["notes", broken]);
        assert_eq!(code, 0, "{err}");
        assert!(out.contains(marker), "{out}");
    });
}

#[test]
fn seen_leaves_the_queue_keeps_the_note_hidden_and_is_undone() {
    engines::both("seen", || {
        let s = Setup::new();
        let mut ws = s.open();
        ws.sync(Utc::now(), |_, _| {}).unwrap();
        assert!(ws.journal.mark_seen(INTERVALS, t(1)).unwrap());
        assert!(
            !ws.journal.mark_seen(INTERVALS, t(2)).unwrap(),
            "marked already"
        );
        let st = ws.journal.review_state(INTERVALS).unwrap();
        assert_eq!(st.stage, ReviewStage::Seen);
        assert_eq!(st.seen_at, Some(t(1)));
        let queue: Vec<String> = ws
            .journal
            .unreviewed(None)
            .unwrap()
            .into_iter()
            .map(|e| e.session_id)
            .collect();
        assert!(!queue.iter().any(|id| id == INTERVALS), "{queue:?}");
        let seen = ws.journal.seen_sessions(None).unwrap();
        assert_eq!(seen.len(), 1);
        assert_eq!(seen[0].session_id, INTERVALS);
        // Seen is not graded: no permit, the note stays hidden, the bias check has nothing.
        assert!(matches!(
            ws.journal.reveal(INTERVALS, t(3)),
            Err(JournalError::NotYetGraded { .. })
        ));
        assert!(ws.journal.bias_inputs().unwrap().is_empty());
        drop(ws);
        let (code, out, err) = s.run(&["notes", INTERVALS]);
        assert_eq!(code, 3);
        assert!(!out.contains(SECRET_NOTE) && !err.contains(SECRET_NOTE));
        let (code, out, err) = s.run(&["bias-check", "--json"]);
        assert_eq!(code, 0, "{err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        assert_eq!(v["overall"]["seen_without_grade"], 1);
        assert_eq!(v["overall"]["reviews"], 0);
        // Undone: back in the queue, as new.
        let mut ws = s.open();
        assert!(ws.journal.unmark_seen(INTERVALS, t(4)).unwrap());
        assert!(!ws.journal.unmark_seen(INTERVALS, t(5)).unwrap());
        assert_eq!(
            ws.journal.review_state(INTERVALS).unwrap().stage,
            ReviewStage::New
        );
        assert!(ws.journal.seen_sessions(None).unwrap().is_empty());
        // After the reveal there is nothing to mark.
        ws.journal
            .set_verdict(EASY, PurposeVerdict::Met, t(6))
            .unwrap();
        ws.journal.reveal(EASY, t(7)).unwrap();
        assert!(matches!(
            ws.journal.mark_seen(EASY, t(8)),
            Err(JournalError::AlreadyRevealed { .. })
        ));
    });
}
