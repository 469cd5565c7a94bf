//! The coach's journal: grades, revisions, feedback, rulers and the analysis cache, in one
//! SQLite file per roster, outside the roster folder. The only module that speaks SQL.
//!
//! # Safety of the coach's data
//!
//! - WAL mode, `synchronous = FULL`, foreign keys on, 5 s busy timeout. Every write method is
//!   one `BEGIN IMMEDIATE` transaction, so a crash or kill loses at most the write in flight.
//! - A file is identified before anything is written to it: it must carry the SQLite header
//!   and our `PRAGMA application_id` (or be a brand-new, empty database). Anything else is
//!   refused and left byte-for-byte untouched, as is a journal from a newer splitdesk.
//!   Identification uses a read-only connection.
//! - Schema changes are numbered migration steps ([`schema::MIGRATIONS`]), each applied in its
//!   own transaction with the `user_version` bump.
//! - Reviews are never deleted; [`Journal::backup_to`] copies the journal with SQLite's
//!   online backup API.
//!
//! # The blind protocol
//!
//! The athlete's note can only be read through [`read_note`], which needs a [`RevealPermit`],
//! which only [`Journal::reveal`] makes, and only once every work interval has a score and the
//! purpose verdict is set (a session with no work intervals needs the verdict only).
//! Before the reveal a new score or verdict simply replaces the blind value: the coach has not
//! seen the notes, so it is still a blind judgement. After the reveal a change is stored as a
//! [`Revision`] beside the blind value, which is never overwritten. Feedback can be saved and
//! sent only after the reveal.
//!
//! A session whose file cannot be read has no analysis: its number of work intervals is
//! taken as zero, so the purpose verdict alone completes its blind grading, and that verdict
//! also records that the coach saw the problem ([`ReviewState::unreadable_seen`]). Any
//! session can instead be marked *seen* ([`Journal::mark_seen`]): it leaves the queue, its
//! note stays hidden.
//!
//! # Reviews follow the content
//!
//! A review is created for the content hash of the session's file at the time of the first
//! grade or ruler. A session id seen for the first time links to the latest review of its
//! content hash, so renaming or moving a file keeps its review. When a known session's
//! content changes, it keeps its review, which is then reported as `content_changed`;
//! [`Journal::restart_review`] starts afresh for the new content, keeping the old review.
//!
//! Times are passed in (`now`) so that callers and tests control the clock.

mod check_mark;
pub mod copy;
mod db;
mod error;
mod location;
mod note;
mod pg;
mod pg_tls;
mod pgpass;
pub mod schema;
mod staff;
mod types;

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::Duration;

use chrono::{DateTime, SecondsFormat, Utc};
use rusqlite::{Connection, OpenFlags, TransactionBehavior};

pub use db::Engine;
use db::{Lite, Sql};
pub use pg::{names_a_server, redact as redact_address};

pub use error::{JournalError, Missing};
pub use location::{check_outside_roster, default_path, default_path_in, DATA_DIR_ENV};
pub use note::{read_note, RevealPermit};
pub use staff::{
    check_coach_name, ColleagueGrades, StaffAdded, StaffMember, MAX_COACH_NAME, REVIEWING_FOR,
};
pub use types::{
    BiasInput, CardCache, CardIndexRow, CheckReport, FeedbackEvent, FeedbackEventKind,
    FeedbackVersion, FileStat, PurposeVerdict, QueueEntry, ReviewStage, ReviewState, Revision,
    RevisionChange, Ruler, ScoreCell, SessionChange, SessionRecord, SummaryBrief, SummaryCache,
    VerdictCell, WarmRow,
};

use schema::{current_version, APPLICATION_ID, BRIEF_FROM_SUMMARY, MIGRATIONS};

/// Why a key=value connection string is refused (it is never echoed: it may hold a
/// password).
pub const CONNINFO_REFUSED: &str =
    "give a journal on a server as a postgres://USER@HOST:PORT/DATABASE address \
     (the password from PGPASSWORD or the password file, never in the address)";

/// How long a write waits for another connection's lock before giving up with `Busy`.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(5);

/// Result of journal operations.
pub type Result<T, E = JournalError> = std::result::Result<T, E>;

/// A session's [`WarmRow`] with its content hash ([`Journal::scan_rows`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ScanRow {
    /// The stat and the currency of the cached summary.
    pub warm: WarmRow,
    /// The content hash the journal holds for the session.
    pub content_hash: Option<String>,
    /// Why the session's file could not be read, when the journal holds it as unreadable.
    pub unreadable: Option<String>,
}

/// An open journal. Reads take `&self`; every write takes `&mut self` and is one transaction.
#[derive(Debug)]
pub struct Journal {
    db: Store,
    /// The journal file, or for PostgreSQL the server address without any password.
    path: PathBuf,
    /// `Some(reason)` for a journal opened with [`Journal::open_snapshot`]: a copy in memory
    /// of a journal that cannot be written. Reads and the analysis cache work on the copy;
    /// any write of the coach's data is refused with [`JournalError::ReadOnly`].
    read_only: Option<String>,
    /// The coach whose records this journal reads and writes ('' for the single coach of a
    /// journal without a staff; see [`Journal::set_coach`]).
    coach: String,
}

/// Map rusqlite results into journal errors carrying the path.
trait SqlExt<T> {
    fn sq(self, path: &Path) -> Result<T>;
}

impl<T> SqlExt<T> for rusqlite::Result<T> {
    fn sq(self, path: &Path) -> Result<T> {
        self.map_err(|e| JournalError::sql(path, e))
    }
}

/// The connection behind a journal.
enum Store {
    /// A SQLite file (or an in-memory copy of one).
    Lite(Connection),
    /// A PostgreSQL database. Behind a lock because the client needs `&mut` for reads too.
    Pg(Box<std::sync::Mutex<pg::PgConn>>),
}

impl std::fmt::Debug for Store {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Store::Lite(c) => f.debug_tuple("Lite").field(c).finish(),
            Store::Pg(_) => f.write_str("Pg"),
        }
    }
}

/// Rows of `sql` (one parameter: the review id) for the session's review; none when the
/// session has no review yet.
fn review_rows<T>(
    conn: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    coach: &str,
    sql: &str,
    f: impl FnMut(&db::Row<'_>) -> Result<T>,
) -> Result<Vec<T>> {
    match require_session(conn, path, session_id, coach)?.review_id {
        Some(rid) => conn.query(path, sql, &[&rid], f),
        None => Ok(Vec::new()),
    }
}

fn ts(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(SecondsFormat::Millis, true)
}

fn parse_ts(path: &Path, s: &str) -> Result<DateTime<Utc>> {
    DateTime::parse_from_rfc3339(s)
        .map(|d| d.with_timezone(&Utc))
        .map_err(|e| JournalError::BadValue {
            path: path.to_path_buf(),
            detail: format!("time {s:?}: {e}"),
        })
}

fn parse_verdict(path: &Path, s: &str) -> Result<PurposeVerdict> {
    PurposeVerdict::parse(s).ok_or_else(|| JournalError::BadValue {
        path: path.to_path_buf(),
        detail: format!("purpose verdict {s:?}"),
    })
}

fn parse_score(path: &Path, s: &str) -> Result<u8> {
    s.parse::<u8>()
        .ok()
        .filter(|v| (1..=5).contains(v))
        .ok_or_else(|| JournalError::BadValue {
            path: path.to_path_buf(),
            detail: format!("score {s:?}"),
        })
}

/// The journal record of a session whose file cannot be read (for
/// [`Journal::record_unreadable`]): the content hash of its bytes when they can be read at
/// all (within the size cap), else a stand-in naming the session; the start from the date
/// at the head of the file name (`2026-11-06-easy-run`), else the file's modification time,
/// else `now`.
pub fn unreadable_record(
    session_id: &str,
    athlete_id: &str,
    file_path: &Path,
    now: DateTime<Utc>,
) -> SessionRecord {
    let content_hash =
        crate::ingest::read_capped(file_path, crate::ingest::limits().max_file_bytes)
            .map(|b| crate::ingest::hash::sha256_hex(&b))
            .unwrap_or_else(|_| format!("unreadable:{session_id}"));
    let stem = session_id.rsplit('/').next().unwrap_or(session_id);
    let from_name = stem
        .get(..10)
        .and_then(|d| chrono::NaiveDate::parse_from_str(d, "%Y-%m-%d").ok())
        .and_then(|d| d.and_hms_opt(12, 0, 0))
        .map(|d| d.and_utc());
    let from_mtime = || {
        fs::metadata(file_path)
            .and_then(|m| m.modified())
            .ok()
            .map(DateTime::<Utc>::from)
    };
    SessionRecord {
        session_id: session_id.to_string(),
        athlete_id: athlete_id.to_string(),
        file_path: file_path.to_path_buf(),
        content_hash,
        start: from_name.or_else(from_mtime).unwrap_or(now),
        summary: None,
    }
}

/// What an existing file turned out to be.
enum Identity {
    /// A splitdesk journal at this schema version.
    Ours(u32),
    /// An empty SQLite database (e.g. a zero-byte file): nothing to lose, adopt it.
    Empty,
}

const SQLITE_MAGIC: &[u8; 16] = b"SQLite format 3\0";

/// Check the first bytes without SQLite: a non-empty file must start with the SQLite header.
fn check_header(path: &Path) -> Result<()> {
    let io = |err| JournalError::Io {
        path: path.to_path_buf(),
        err,
    };
    let mut f = fs::File::open(path).map_err(io)?;
    let mut head = Vec::with_capacity(16);
    f.by_ref().take(16).read_to_end(&mut head).map_err(io)?;
    if head.is_empty() || head.as_slice() == SQLITE_MAGIC {
        Ok(())
    } else {
        Err(JournalError::NotAJournal {
            path: path.to_path_buf(),
            reason: "not an SQLite database".into(),
        })
    }
}

/// Identify and check a journal through `source`, then copy it into a new in-memory
/// database with the backup API, giving up (with `Busy`) after [`BUSY_TIMEOUT`].
fn copy_to_memory(source: &Connection, path: &Path) -> Result<Connection> {
    match identify_conn(source, path)? {
        Identity::Ours(_) => quick_check(source, path, Mark::Leave)?,
        Identity::Empty => {
            return Err(JournalError::NotAJournal {
                path: path.to_path_buf(),
                reason: "an empty database".into(),
            })
        }
    }
    let mut conn = Connection::open_in_memory().sq(path)?;
    {
        use rusqlite::backup::StepResult;
        let backup = rusqlite::backup::Backup::new(source, &mut conn).sq(path)?;
        let deadline = std::time::Instant::now() + BUSY_TIMEOUT;
        loop {
            match backup.step(-1).sq(path)? {
                StepResult::Done => break,
                StepResult::More | StepResult::Busy | StepResult::Locked => {
                    if std::time::Instant::now() > deadline {
                        return Err(JournalError::Busy {
                            path: path.to_path_buf(),
                        });
                    }
                    std::thread::sleep(Duration::from_millis(10));
                }
                _ => {
                    return Err(JournalError::Busy {
                        path: path.to_path_buf(),
                    })
                }
            }
        }
    }
    Ok(conn)
}

fn read_only_conn(path: &Path) -> Result<Connection> {
    let conn = Connection::open_with_flags(
        path,
        OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )
    .sq(path)?;
    conn.busy_timeout(BUSY_TIMEOUT).sq(path)?;
    // Opening is lazy: make SQLite read the file now, so a failure shows here.
    conn.query_row("SELECT count(*) FROM sqlite_schema", [], |r| {
        r.get::<_, i64>(0)
    })
    .sq(path)?;
    Ok(conn)
}

/// A read-only connection that takes the file as unchanging (`immutable=1`): no locks, no
/// shared-memory file. Only for files nobody can be writing.
fn immutable_conn(path: &Path) -> Result<Connection> {
    let abs = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    let mut uri = String::from("file:");
    for b in abs.to_string_lossy().bytes() {
        if b.is_ascii_alphanumeric() || b"/-_.~".contains(&b) {
            uri.push(char::from(b));
        } else {
            uri.push_str(&format!("%{b:02X}"));
        }
    }
    uri.push_str("?immutable=1");
    let conn = Connection::open_with_flags(
        &uri,
        OpenFlags::SQLITE_OPEN_READ_ONLY
            | OpenFlags::SQLITE_OPEN_URI
            | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )
    .sq(path)?;
    conn.query_row("SELECT count(*) FROM sqlite_schema", [], |r| {
        r.get::<_, i64>(0)
    })
    .sq(path)?;
    Ok(conn)
}

/// Identify an existing file through a read-only connection, which never changes it.
fn identify(path: &Path) -> Result<Identity> {
    check_header(path)?;
    let conn = Connection::open_with_flags(
        path,
        OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )
    .sq(path)?;
    conn.busy_timeout(BUSY_TIMEOUT).sq(path)?;
    let identity = identify_conn(&conn, path)?;
    if let Identity::Ours(_) = identity {
        quick_check(&conn, path, Mark::Write)?;
    }
    Ok(identity)
}

fn identify_conn(conn: &Connection, path: &Path) -> Result<Identity> {
    let app_id: i32 = conn
        .pragma_query_value(None, "application_id", |r| r.get(0))
        .sq(path)?;
    let version: i64 = conn
        .pragma_query_value(None, "user_version", |r| r.get(0))
        .sq(path)?;
    let objects: i64 = conn
        .query_row("SELECT count(*) FROM sqlite_schema", [], |r| r.get(0))
        .sq(path)?;
    if app_id == APPLICATION_ID {
        let supported = current_version();
        let found = u32::try_from(version).unwrap_or(u32::MAX);
        if found > supported {
            return Err(JournalError::TooNew {
                path: path.to_path_buf(),
                found,
                supported,
            });
        }
        return Ok(Identity::Ours(found));
    }
    if app_id == 0 && version == 0 && objects == 0 {
        return Ok(Identity::Empty);
    }
    let reason = if app_id != 0 {
        format!("an SQLite database of another program (application id {app_id:#x})")
    } else {
        format!(
            "an SQLite database of another program ({objects} schema objects, no splitdesk marker)"
        )
    };
    Err(JournalError::NotAJournal {
        path: path.to_path_buf(),
        reason,
    })
}

/// Whether a check may write its mark beside the journal: only when the journal is opened
/// for writing. A journal opened read-only never gets a file written beside it.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Mark {
    Write,
    Leave,
}

/// SQLite's `quick_check` of the journal, skipped when the journal's files are exactly as
/// they were at its last clean check (see [`check_mark`]).
fn quick_check(conn: &Connection, path: &Path, mark: Mark) -> Result<()> {
    let stamp = check_mark::stamp(path);
    if stamp
        .as_deref()
        .is_some_and(|s| check_mark::is_marked(path, s))
    {
        return Ok(());
    }
    let checked = run_quick_check(conn, path);
    match (&checked, stamp, mark) {
        (Ok(()), Some(s), Mark::Write) => check_mark::mark(path, &s),
        (Err(_), _, Mark::Write) => check_mark::clear(path),
        _ => {}
    }
    checked
}

fn run_quick_check(conn: &Connection, path: &Path) -> Result<()> {
    let mut stmt = conn.prepare("PRAGMA quick_check").sq(path)?;
    let rows: Vec<String> = stmt
        .query_map([], |r| r.get::<_, String>(0))
        .sq(path)?
        .collect::<rusqlite::Result<_>>()
        .sq(path)?;
    if rows.len() == 1 && rows.first().is_some_and(|r| r == "ok") {
        Ok(())
    } else {
        Err(JournalError::Corrupt {
            path: path.to_path_buf(),
            detail: rows.join("; "),
        })
    }
}

/// In plain words, why the journal at `path` cannot be written: its file or its folder.
pub fn why_read_only(path: &Path) -> String {
    let file_writable = fs::OpenOptions::new().write(true).open(path).is_ok();
    if !file_writable {
        return "the file is read-only".into();
    }
    match check_writable_dir(path) {
        Err(_) => "its folder cannot be written".into(),
        Ok(()) => "the file system refused a write".into(),
    }
}

/// Make sure the folder exists and a file can be created in it.
fn check_writable_dir(journal: &Path) -> Result<()> {
    let dir = match journal.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let ro = |detail: String| JournalError::ReadOnlyLocation {
        path: journal.to_path_buf(),
        detail,
    };
    fs::create_dir_all(&dir).map_err(|e| ro(format!("cannot create {}: {e}", dir.display())))?;
    let probe = dir.join(format!(".splitdesk-probe-{}", std::process::id()));
    fs::OpenOptions::new()
        .write(true)
        .create(true)
        .truncate(true)
        .open(&probe)
        .map_err(|e| ro(format!("cannot write in {}: {e}", dir.display())))?;
    let _ = fs::remove_file(&probe);
    Ok(())
}

/// SQLite's full integrity and foreign-key checks (problems, one per line) and the schema
/// version.
fn sqlite_integrity(conn: &Connection, path: &Path) -> Result<(Vec<String>, u32)> {
    let mut problems = Vec::new();
    {
        let mut stmt = conn.prepare("PRAGMA integrity_check").sq(path)?;
        let rows: Vec<String> = stmt
            .query_map([], |r| r.get(0))
            .sq(path)?
            .collect::<rusqlite::Result<_>>()
            .sq(path)?;
        problems.extend(rows.into_iter().filter(|r| r != "ok"));
    }
    {
        let mut stmt = conn.prepare("PRAGMA foreign_key_check").sq(path)?;
        let rows: Vec<String> = stmt
            .query_map([], |r| {
                Ok(format!(
                    "foreign key: {} row {} -> {}",
                    r.get::<_, String>(0)?,
                    r.get::<_, Option<i64>>(1)?.unwrap_or(-1),
                    r.get::<_, String>(2)?
                ))
            })
            .sq(path)?
            .collect::<rusqlite::Result<_>>()
            .sq(path)?;
        problems.extend(rows);
    }
    let version: i64 = conn
        .pragma_query_value(None, "user_version", |r| r.get(0))
        .sq(path)?;
    Ok((problems, u32::try_from(version).unwrap_or(0)))
}

impl Journal {
    /// Open the journal at `path` for reading and writing, creating it (and its folder) if
    /// missing and upgrading its schema if older. Refuses, without changing the file, anything
    /// that is not a splitdesk journal or that comes from a newer splitdesk; refuses a location
    /// where it could not write.
    pub fn open(path: &Path) -> Result<Journal> {
        let path = path.to_path_buf();
        match fs::metadata(&path) {
            Ok(meta) if meta.is_dir() => {
                return Err(JournalError::NotAJournal {
                    path,
                    reason: "a folder".into(),
                })
            }
            Ok(_) => {
                identify(&path)?;
            }
            // Missing, or a parent is not a folder: the folder check below explains.
            Err(e)
                if matches!(
                    e.kind(),
                    std::io::ErrorKind::NotFound | std::io::ErrorKind::NotADirectory
                ) => {}
            Err(err) => return Err(JournalError::Io { path, err }),
        }
        check_writable_dir(&path)?;
        let conn = Connection::open_with_flags(
            &path,
            OpenFlags::SQLITE_OPEN_READ_WRITE
                | OpenFlags::SQLITE_OPEN_CREATE
                | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )
        .sq(&path)?;
        conn.busy_timeout(BUSY_TIMEOUT).sq(&path)?;
        if conn.is_readonly(rusqlite::MAIN_DB).sq(&path)? {
            return Err(JournalError::ReadOnlyLocation {
                path,
                detail: "the file is read-only".into(),
            });
        }
        // Identify again on this connection: the file may have been created meanwhile.
        identify_conn(&conn, &path)?;
        let mode: String = conn
            .pragma_update_and_check(None, "journal_mode", "WAL", |r| r.get(0))
            .sq(&path)?;
        if !mode.eq_ignore_ascii_case("wal") {
            return Err(JournalError::ReadOnlyLocation {
                path,
                detail: format!("could not switch to WAL mode (got {mode})"),
            });
        }
        let mut journal = Journal {
            db: Store::Lite(conn),
            path,
            read_only: None,
            coach: String::new(),
        };
        journal.configure()?;
        journal.migrate()?;
        Ok(journal)
    }

    /// Open (creating its tables in an empty database, upgrading an older schema) the
    /// PostgreSQL journal at `url` (`postgres://user@host:port/database`, with the usual
    /// parameters such as `sslmode`). The password, when not in the address, comes from
    /// `PGPASSWORD` or the password file, as for the server's own tools; messages show the
    /// address without it. A database holding other tables is refused untouched.
    pub fn open_url(url: &str) -> Result<Journal> {
        let path = pg::shown_path(url);
        if !pg::is_url(url) {
            return Err(JournalError::Connect {
                path: PathBuf::from("(a PostgreSQL connection string)"),
                detail: CONNINFO_REFUSED.into(),
            });
        }
        let conn = pg::PgConn::connect(url, &path)?;
        let mut journal = Journal {
            db: Store::Pg(Box::new(std::sync::Mutex::new(conn))),
            path,
            read_only: None,
            coach: String::new(),
        };
        journal.migrate()?;
        Ok(journal)
    }

    /// [`Journal::open`] after checking that `path` is not inside `roster_root`.
    pub fn open_for_roster(path: &Path, roster_root: &Path) -> Result<Journal> {
        check_outside_roster(path, roster_root)?;
        Journal::open(path)
    }

    /// Open an existing journal read-only. Write methods then fail with `ReadOnlyLocation`.
    pub fn open_read_only(path: &Path) -> Result<Journal> {
        let path = path.to_path_buf();
        if let Err(err) = fs::metadata(&path) {
            return Err(JournalError::Io { path, err });
        }
        check_header(&path)?;
        let conn = Connection::open_with_flags(
            &path,
            OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )
        .sq(&path)?;
        conn.busy_timeout(BUSY_TIMEOUT).sq(&path)?;
        match identify_conn(&conn, &path)? {
            Identity::Ours(v) if v == current_version() => {}
            Identity::Ours(found) => {
                return Err(JournalError::NeedsUpgrade {
                    path,
                    found,
                    supported: current_version(),
                })
            }
            Identity::Empty => {
                return Err(JournalError::NotAJournal {
                    path,
                    reason: "an empty database".into(),
                })
            }
        }
        quick_check(&conn, &path, Mark::Leave)?;
        let journal = Journal {
            db: Store::Lite(conn),
            path,
            read_only: None,
            coach: String::new(),
        };
        journal.configure()?;
        Ok(journal)
    }

    /// Open a journal that cannot be written (`reason` says why) for reading: its content is
    /// copied into memory with SQLite's backup API and upgraded there if older. The file is
    /// never changed. Reads work; the analysis cache is kept in the copy only; every write of
    /// the coach's data is refused with [`JournalError::ReadOnly`], nothing saved.
    pub fn open_snapshot(path: &Path, reason: &str) -> Result<Journal> {
        let path = path.to_path_buf();
        if let Err(err) = fs::metadata(&path) {
            return Err(JournalError::Io { path, err });
        }
        check_header(&path)?;
        // A plain read-only connection sees the write-ahead log too. When it cannot (a WAL
        // journal whose shared-memory file cannot be made or written), and no log with
        // unmerged writes lies beside the file, read the file as it is.
        let copied = read_only_conn(&path).and_then(|source| copy_to_memory(&source, &path));
        let conn = match copied {
            Ok(c) => c,
            Err(e) => {
                let mut wal = path.clone().into_os_string();
                wal.push("-wal");
                let wal_len = fs::metadata(PathBuf::from(wal))
                    .map(|m| m.len())
                    .unwrap_or(0);
                if wal_len > 0 {
                    return Err(e);
                }
                copy_to_memory(&immutable_conn(&path)?, &path)?
            }
        };
        let mut journal = Journal {
            db: Store::Lite(conn),
            path,
            read_only: None,
            coach: String::new(),
        };
        journal.configure()?;
        journal.migrate()?;
        journal.read_only = Some(reason.to_string());
        Ok(journal)
    }

    /// Why the journal is read-only (opened with [`Journal::open_snapshot`]); `None` when it
    /// can be written.
    pub fn read_only(&self) -> Option<&str> {
        self.read_only.as_deref()
    }

    /// A fresh journal in memory (tests, throw-away runs).
    pub fn open_in_memory() -> Result<Journal> {
        let path = PathBuf::from(":memory:");
        let conn = Connection::open_in_memory().sq(&path)?;
        let mut journal = Journal {
            db: Store::Lite(conn),
            path,
            read_only: None,
            coach: String::new(),
        };
        journal.configure()?;
        journal.migrate()?;
        Ok(journal)
    }

    fn configure(&self) -> Result<()> {
        let Store::Lite(conn) = &self.db else {
            return Ok(());
        };
        conn.pragma_update(None, "foreign_keys", true)
            .sq(&self.path)?;
        conn.pragma_update(None, "synchronous", "FULL")
            .sq(&self.path)?;
        conn.set_prepared_statement_cache_capacity(64);
        Ok(())
    }

    fn migrate(&mut self) -> Result<()> {
        let path = self.path.clone();
        let conn = match &mut self.db {
            Store::Lite(conn) => conn,
            Store::Pg(m) => return pg::lock_mut(m).migrate(&path),
        };
        loop {
            let tx = conn
                .transaction_with_behavior(TransactionBehavior::Immediate)
                .sq(&path)?;
            let version = match identify_conn(&tx, &path)? {
                Identity::Ours(v) => v,
                Identity::Empty => 0,
            };
            let Some(step) = MIGRATIONS.get(version as usize) else {
                return Ok(());
            };
            if version == 0 {
                tx.pragma_update(None, "application_id", APPLICATION_ID)
                    .sq(&path)?;
            }
            tx.execute_batch(step).sq(&path)?;
            tx.pragma_update(None, "user_version", version + 1)
                .sq(&path)?;
            tx.commit().sq(&path)?;
        }
    }

    /// For a journal on a server, whether the connection to it is encrypted (TLS); `None`
    /// for a SQLite file.
    pub fn server_tls(&self) -> Result<Option<bool>> {
        match &self.db {
            Store::Lite(_) => Ok(None),
            Store::Pg(m) => pg::lock(m).tls_in_use(&self.path).map(Some),
        }
    }

    /// Which engine holds the journal.
    pub fn engine(&self) -> Engine {
        match &self.db {
            Store::Lite(_) => Engine::Sqlite,
            Store::Pg(_) => Engine::Postgres,
        }
    }

    /// Change how long a write waits for another connection's lock (default [`BUSY_TIMEOUT`])
    /// before failing with [`JournalError::Busy`].
    pub fn set_busy_timeout(&self, timeout: Duration) -> Result<()> {
        match &self.db {
            Store::Lite(conn) => conn.busy_timeout(timeout).sq(&self.path),
            Store::Pg(m) => {
                pg::lock(m).busy_timeout = timeout;
                Ok(())
            }
        }
    }

    /// The journal's file path (`:memory:` for an in-memory journal; for PostgreSQL the
    /// server address, without any password).
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// A number that changes whenever another connection (another process, a worker
    /// thread, another coach's workstation) has committed to the journal since this one
    /// last looked. SQLite: `PRAGMA data_version`; PostgreSQL: the count of change
    /// notifications from other connections. Cheap enough to poll; this connection's own
    /// commits do not change it.
    pub fn data_version(&self) -> Result<i64> {
        match &self.db {
            Store::Lite(conn) => conn
                .query_row("PRAGMA data_version", [], |r| r.get(0))
                .sq(&self.path),
            Store::Pg(m) => pg::lock(m).data_version(&self.path),
        }
    }

    /// Run `f` in one write transaction; commit on success, roll back on error. SQLite:
    /// `BEGIN IMMEDIATE`; PostgreSQL: a transaction holding the journal's write lock, so
    /// writers take turns as on SQLite. On a read-only journal (a snapshot) an `f` that
    /// changes nothing succeeds, one that would change the coach's data is rolled back and
    /// refused with `ReadOnly`.
    fn write<T>(&mut self, f: impl FnOnce(&mut dyn Sql, &Path) -> Result<T>) -> Result<T> {
        let coach = self.coach.clone();
        self.write_unchecked(move |tx, path| {
            staff::require_writer(tx, path, &coach)?;
            f(tx, path)
        })
    }

    /// [`Journal::write`] without the check that the handle's coach may write (for the
    /// staff list itself).
    fn write_unchecked<T>(
        &mut self,
        f: impl FnOnce(&mut dyn Sql, &Path) -> Result<T>,
    ) -> Result<T> {
        let path = self.path.clone();
        let conn = match &mut self.db {
            Store::Lite(conn) => conn,
            Store::Pg(m) => return pg::lock_mut(m).write(&path, f),
        };
        let tx = conn
            .transaction_with_behavior(TransactionBehavior::Immediate)
            .sq(&path)?;
        let changes = |tx: &Connection| -> Result<i64> {
            tx.query_row("SELECT total_changes()", [], |r| r.get(0))
                .sq(&path)
        };
        let before = changes(&tx)?;
        let out = f(&mut Lite(&tx), &path)?;
        if let Some(reason) = &self.read_only {
            if changes(&tx)? != before {
                return Err(JournalError::ReadOnly {
                    path,
                    detail: reason.clone(),
                });
            }
        }
        tx.commit().sq(&path)?;
        Ok(out)
    }

    /// [`Journal::write`] for the session list and the analysis cache (derived data): on a
    /// read-only journal these go to the copy in memory only.
    fn write_cache<T>(&mut self, f: impl FnOnce(&mut dyn Sql, &Path) -> Result<T>) -> Result<T> {
        let path = self.path.clone();
        let conn = match &mut self.db {
            Store::Lite(conn) => conn,
            Store::Pg(m) => return pg::lock_mut(m).write(&path, f),
        };
        let tx = conn
            .transaction_with_behavior(TransactionBehavior::Immediate)
            .sq(&path)?;
        let out = f(&mut Lite(&tx), &path)?;
        tx.commit().sq(&path)?;
        Ok(out)
    }

    /// Run `f` in a read transaction, for a consistent view across several queries.
    fn read<T>(&self, f: impl FnOnce(&mut dyn Sql, &Path) -> Result<T>) -> Result<T> {
        match &self.db {
            Store::Lite(conn) => {
                let tx = conn.unchecked_transaction().sq(&self.path)?;
                let out = f(&mut Lite(&tx), &self.path)?;
                drop(tx);
                Ok(out)
            }
            Store::Pg(m) => pg::lock(m).read(&self.path, f),
        }
    }

    // ----- sessions and the analysis cache -----

    /// Record a session seen in the roster (insert or refresh). See [`SessionChange`].
    pub fn upsert_session(
        &mut self,
        record: &SessionRecord,
        now: DateTime<Utc>,
    ) -> Result<SessionChange> {
        self.upsert_session_with_stat(record, None, now)
    }

    /// [`Journal::upsert_session`] and, in the same transaction, the stat of the session's
    /// file taken before the bytes behind `record.content_hash` were read (see
    /// [`Journal::set_file_stat`]).
    pub fn upsert_session_with_stat(
        &mut self,
        record: &SessionRecord,
        stat: Option<&FileStat>,
        now: DateTime<Utc>,
    ) -> Result<SessionChange> {
        self.write_cache(|tx, path| upsert_row(tx, path, record, stat, now))
    }

    /// Record a session whose file cannot be read (`reason`, one line), so that the coach can
    /// see it and close it with the purpose verdict alone. `record.content_hash` is the hash
    /// of the bytes when they could be read (see [`unreadable_record`]) and
    /// `record.start` the best known start (the date in the file name); its summary is
    /// ignored. A later successful [`Journal::upsert_session`] clears the mark.
    pub fn record_unreadable(
        &mut self,
        record: &SessionRecord,
        reason: &str,
        now: DateTime<Utc>,
    ) -> Result<SessionChange> {
        self.record_unreadable_with_stat(record, reason, None, now)
    }

    /// [`Journal::record_unreadable`] and, in the same transaction, the stat of the file
    /// taken before its bytes were read, so that an unchanged damaged file is known from its
    /// stat next time without being read.
    pub fn record_unreadable_with_stat(
        &mut self,
        record: &SessionRecord,
        reason: &str,
        stat: Option<&FileStat>,
        now: DateTime<Utc>,
    ) -> Result<SessionChange> {
        let coach = self.coach.clone();
        let record = SessionRecord {
            summary: None,
            ..record.clone()
        };
        // Already held as unreadable for these bytes at this path, for the same reason (and
        // with this stat, when one is given): nothing to write, so a warm start that re-reads
        // a damaged file leaves the journal as it is.
        let held = self.read(|conn, path| session_row(conn, path, &record.session_id, &coach))?;
        let same_row = held.is_some_and(|row| {
            row.content_hash == record.content_hash
                && row.file_path == record.file_path
                && row.summary.is_none()
                && row.unreadable.as_deref() == Some(reason)
        });
        let same_stat = match stat {
            None => true,
            Some(st) => self.file_stat(&record.session_id)?.as_ref() == Some(st),
        };
        if same_row && same_stat {
            return Ok(SessionChange::Same);
        }
        self.write_cache(|tx, path| {
            let change = upsert_row(tx, path, &record, stat, now)?;
            mark_unreadable(tx, path, &record.session_id, reason)?;
            Ok(change)
        })
    }

    /// Whether the journal holds the session as unreadable, and why.
    pub fn unreadable(&self, session_id: &str) -> Result<Option<String>> {
        let coach = self.coach.clone();
        self.read(|conn, path| Ok(require_session(conn, path, session_id, &coach)?.unreadable))
    }

    /// Store an analysis summary computed for `content_hash`. Ignored (returns `false`) when
    /// the session's content has changed since: a stale result never replaces a fresh one.
    pub fn store_summary(
        &mut self,
        session_id: &str,
        content_hash: &str,
        summary: &SummaryCache,
    ) -> Result<bool> {
        let coach = self.coach.clone();
        self.write_cache(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            if row.content_hash != content_hash {
                return Ok(false);
            }
            tx.exec(
                path,
                "UPDATE session SET summary_json = ?2, summary_version = ?3, summary_hash = ?4,
                     work_intervals = ?5 WHERE session_id = ?1",
                &[
                    &session_id,
                    &summary.json,
                    &summary.analysis_version,
                    &content_hash,
                    &summary.work_intervals,
                ],
            )?;
            fill_brief(tx, path, session_id)?;
            match &summary.card {
                Some(card) => {
                    tx.exec(
                        path,
                        "INSERT INTO session_card (session_id, athlete_id, start_time, day, kind,
                             content_hash, analysis_version, inputs_digest, shape_json, card_json)
                         SELECT session_id, athlete_id, start_time, CAST(?2 AS TEXT),
                             CAST(?3 AS TEXT), content_hash, CAST(?4 AS BIGINT),
                             CAST(?5 AS TEXT), CAST(?6 AS TEXT), CAST(?7 AS TEXT)
                         FROM session WHERE session_id = ?1
                         ON CONFLICT (session_id) DO UPDATE SET
                             athlete_id = excluded.athlete_id, start_time = excluded.start_time,
                             day = excluded.day, kind = excluded.kind,
                             content_hash = excluded.content_hash,
                             analysis_version = excluded.analysis_version,
                             inputs_digest = excluded.inputs_digest,
                             shape_json = excluded.shape_json, card_json = excluded.card_json",
                        &[
                            &session_id,
                            &card.day,
                            &card.kind,
                            &summary.analysis_version,
                            &card.inputs_digest,
                            &card.shape_json,
                            &card.json,
                        ],
                    )?;
                }
                None => delete_card(tx, path, session_id)?,
            }
            Ok(true)
        })
    }

    /// The cached summary JSON when it was made by `analysis_version` for the session's current
    /// content; `None` otherwise (or for an unknown session).
    pub fn cached_summary(
        &self,
        session_id: &str,
        analysis_version: u32,
    ) -> Result<Option<String>> {
        self.read(|conn, path| {
            Ok(conn
                .query_opt(
                    path,
                    "SELECT summary_json FROM session
                     WHERE session_id = ?1 AND summary_version = ?2
                       AND summary_hash = content_hash",
                    &[&session_id, &analysis_version],
                    |r| Ok(r.text(0)),
                )?
                .flatten())
        })
    }

    /// The athlete's current session cards (made by `analysis_version` under `inputs_digest`
    /// for the session's present content), oldest first, without the cards themselves: the
    /// id, start, day, kind and workout shape of each.
    pub fn card_index(
        &self,
        athlete: &str,
        inputs_digest: &str,
        analysis_version: u32,
    ) -> Result<Vec<CardIndexRow>> {
        self.read(|conn, path| {
            conn.query(
                path,
                "SELECT c.session_id, c.start_time, c.day, c.kind, c.shape_json
                 FROM session_card c JOIN session s ON s.session_id = c.session_id
                 WHERE c.athlete_id = ?1 AND c.inputs_digest = ?2
                   AND c.analysis_version = ?3 AND s.content_hash = c.content_hash
                   AND s.unreadable IS NULL
                 ORDER BY c.start_time, c.session_id",
                &[&athlete, &inputs_digest, &analysis_version],
                |r| {
                    Ok(CardIndexRow {
                        session_id: r.text(0).unwrap_or_default(),
                        start_time: r.text(1).unwrap_or_default(),
                        day: r.text(2).unwrap_or_default(),
                        kind: r.text(3).unwrap_or_default(),
                        shape_json: r.text(4),
                    })
                },
            )
        })
    }

    /// The card JSON of a session when it is current (see [`Journal::card_index`]).
    pub fn card(
        &self,
        session_id: &str,
        inputs_digest: &str,
        analysis_version: u32,
    ) -> Result<Option<String>> {
        self.read(|conn, path| {
            Ok(conn
                .query_opt(
                    path,
                    "SELECT c.card_json FROM session_card c
                     JOIN session s ON s.session_id = c.session_id
                     WHERE c.session_id = ?1 AND c.inputs_digest = ?2
                       AND c.analysis_version = ?3
                       AND s.content_hash = c.content_hash AND s.unreadable IS NULL",
                    &[&session_id, &inputs_digest, &analysis_version],
                    |r| Ok(r.text(0)),
                )?
                .flatten())
        })
    }

    /// The athlete's current cards (id and JSON) of the days `from..=to` (`YYYY-MM-DD`),
    /// in start order.
    pub fn cards_between(
        &self,
        athlete: &str,
        inputs_digest: &str,
        analysis_version: u32,
        from: &str,
        to: &str,
    ) -> Result<Vec<(String, String)>> {
        self.read(|conn, path| {
            conn.query(
                path,
                "SELECT c.session_id, c.card_json
                 FROM session_card c JOIN session s ON s.session_id = c.session_id
                 WHERE c.athlete_id = ?1 AND c.inputs_digest = ?2
                   AND c.analysis_version = ?3 AND c.day BETWEEN ?4 AND ?5
                   AND s.content_hash = c.content_hash AND s.unreadable IS NULL
                 ORDER BY c.start_time, c.session_id",
                &[&athlete, &inputs_digest, &analysis_version, &from, &to],
                |r| Ok((r.text(0).unwrap_or_default(), r.text(1).unwrap_or_default())),
            )
        })
    }

    /// What the session's file looked like when its content hash was recorded; `None` for an
    /// unknown session or when not known.
    pub fn file_stat(&self, session_id: &str) -> Result<Option<FileStat>> {
        self.read(|conn, path| {
            Ok(conn
                .query_opt(
                    path,
                    "SELECT file_path, file_size, file_mtime_ns FROM session
                     WHERE session_id = ?1",
                    &[&session_id],
                    |r| Ok(stat_of(r, 0)),
                )?
                .flatten())
        })
    }

    /// What the warm check needs of every session the journal knows, by session id: the
    /// recorded file stat and whether the cached summary is current by the columns alone
    /// (made by `analysis_version` for the present content), with the inputs digest it was
    /// made under. One query, which the `session_lists` index covers: no summary is read.
    pub fn warm_rows(
        &self,
        analysis_version: u32,
    ) -> Result<std::collections::HashMap<String, WarmRow>> {
        Ok(self
            .scan_rows(analysis_version)?
            .into_iter()
            .map(|(id, row)| (id, row.warm))
            .collect())
    }

    /// [`Journal::warm_rows`] with each session's content hash: what the workstation's
    /// start-up re-check hands its workers (a file whose stat changed but whose content
    /// has this hash needs no new analysis). One query over the columns: no summary is read.
    pub fn scan_rows(
        &self,
        analysis_version: u32,
    ) -> Result<std::collections::HashMap<String, ScanRow>> {
        self.read(|conn, path| {
            let mut out = std::collections::HashMap::new();
            conn.each(
                path,
                "SELECT session_id, file_path, file_size, file_mtime_ns,
                    CASE WHEN summary_version = ?1 AND summary_hash = content_hash
                        THEN 1 ELSE 0 END,
                    summary_inputs, content_hash, unreadable
                 FROM session",
                &[&analysis_version],
                &mut |r| {
                    out.insert(
                        r.text(0).unwrap_or_default(),
                        ScanRow {
                            warm: WarmRow {
                                stat: stat_of(r, 1),
                                summary_current: r.lenient::<bool>(4) == Some(true),
                                summary_inputs: r.text(5),
                            },
                            content_hash: r.text(6),
                            unreadable: r.text(7),
                        },
                    );
                    Ok(())
                },
            )?;
            Ok(out)
        })
    }

    /// The one-line facts of the sessions (optionally of one athlete) whose cached summary was
    /// made by `analysis_version` for their present content, by session id, read from plain
    /// columns (see [`SummaryBrief`]); sessions without such a summary are absent.
    pub fn summary_briefs(
        &self,
        athlete: Option<&str>,
        analysis_version: u32,
    ) -> Result<std::collections::HashMap<String, SummaryBrief>> {
        self.read(|conn, path| {
            let sql_all = "SELECT session_id, summary_inputs, brief_plan_title, brief_sport,
                    brief_running, brief_distance_m, work_intervals
                 FROM session
                 WHERE summary_version = ?1 AND summary_hash = content_hash";
            let sql_one = "SELECT session_id, summary_inputs, brief_plan_title, brief_sport,
                    brief_running, brief_distance_m, work_intervals
                 FROM session
                 WHERE athlete_id = ?2 AND summary_version = ?1 AND summary_hash = content_hash";
            let mut out = std::collections::HashMap::new();
            let mut add = |r: &db::Row<'_>| {
                out.insert(
                    r.text(0).unwrap_or_default(),
                    SummaryBrief {
                        inputs_digest: r.text(1),
                        plan_title: r.text(2),
                        sport: r.text(3),
                        running: r.lenient::<bool>(4),
                        distance_m: r.lenient::<f64>(5),
                        work_intervals: r.lenient::<u32>(6),
                    },
                );
                Ok(())
            };
            match athlete {
                Some(a) => conn.each(path, sql_one, &[&analysis_version, &a], &mut add)?,
                None => conn.each(path, sql_all, &[&analysis_version], &mut add)?,
            }
            Ok(out)
        })
    }

    /// One athlete's sessions, newest first, each with its cached summary JSON when that was
    /// made by `analysis_version` for the present content (`None` otherwise). Indexed by
    /// athlete: no other athlete's row is read.
    pub fn athlete_summaries(
        &self,
        athlete: &str,
        analysis_version: u32,
    ) -> Result<Vec<(String, Option<String>)>> {
        self.read(|conn, path| {
            conn.query(
                path,
                "SELECT session_id,
                    CASE WHEN summary_version = ?2 AND summary_hash = content_hash
                        THEN summary_json END
                 FROM session
                 WHERE athlete_id = ?1
                 ORDER BY start_time DESC, session_id DESC",
                &[&athlete, &analysis_version],
                |r| Ok((r.text(0).unwrap_or_default(), r.text(1))),
            )
        })
    }

    /// Remember the stat of the session's file, taken before the bytes whose hash the journal
    /// holds were read. Ignored (returns `false`) for an unknown session or another path.
    pub fn set_file_stat(&mut self, session_id: &str, stat: &FileStat) -> Result<bool> {
        self.write_cache(|tx, path| write_file_stat(tx, path, session_id, stat))
    }

    /// The content hash the journal last recorded for a session; `None` for an unknown one.
    pub fn session_hash(&self, session_id: &str) -> Result<Option<String>> {
        self.read(|conn, path| {
            conn.query_opt(
                path,
                "SELECT content_hash FROM session WHERE session_id = ?1",
                &[&session_id],
                |r| r.get::<String>(0),
            )
        })
    }

    /// Forget session rows whose ids are not in `present` (files gone from the roster).
    /// Their reviews stay in the journal and reattach if the same content reappears.
    pub fn retain_sessions(&mut self, present: &[&str]) -> Result<usize> {
        let keep: BTreeSet<&str> = present.iter().copied().collect();
        self.write_cache(|tx, path| {
            let ids: Vec<String> =
                tx.query(path, "SELECT session_id FROM session", &[], |r| r.get(0))?;
            let mut removed = 0;
            for id in ids.iter().filter(|id| !keep.contains(id.as_str())) {
                tx.exec(
                    path,
                    "DELETE FROM session_review WHERE session_id = ?1",
                    &[id],
                )?;
                removed +=
                    tx.exec(path, "DELETE FROM session WHERE session_id = ?1", &[id])? as usize;
                delete_card(tx, path, id)?;
            }
            Ok(removed)
        })
    }

    /// After the content changed, start a fresh review for the new content (the old review is
    /// kept in the journal). Returns `false` when the review already matches the content.
    pub fn restart_review(&mut self, session_id: &str) -> Result<bool> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            let Some(rid) = row.review_id else {
                return Ok(false);
            };
            let review = review_row(tx, path, rid)?;
            if review.content_hash == row.content_hash {
                return Ok(false);
            }
            match latest_review_for_hash(tx, path, &row.content_hash, &coach)? {
                Some(other) => tx.exec(
                    path,
                    "UPDATE session_review SET review_id = ?3 WHERE session_id = ?1 AND coach = ?2",
                    &[&session_id, &coach, &other],
                )?,
                None => tx.exec(
                    path,
                    "DELETE FROM session_review WHERE session_id = ?1 AND coach = ?2",
                    &[&session_id, &coach],
                )?,
            };
            Ok(true)
        })
    }

    // ----- grading -----

    /// Give (before the reveal) or revise (after it) the score of work interval `interval`
    /// (1-based). After the reveal an unchanged value records nothing.
    pub fn set_score(
        &mut self,
        session_id: &str,
        interval: u32,
        score: u8,
        now: DateTime<Utc>,
    ) -> Result<()> {
        self.grade(session_id, &[(interval, score)], None, now)
    }

    /// Give (before the reveal) or revise (after it) the purpose verdict.
    pub fn set_verdict(
        &mut self,
        session_id: &str,
        verdict: PurposeVerdict,
        now: DateTime<Utc>,
    ) -> Result<()> {
        self.grade(session_id, &[], Some(verdict), now)
    }

    /// One grading action, all or nothing: every `(interval, score)` (1-based work interval,
    /// score 1-5; a later pair for the same interval wins) and the purpose verdict, if given.
    /// Everything is checked first (scores in range, every interval exists) and then written
    /// in one transaction, so a refused or interrupted action leaves nothing behind. Before
    /// the reveal the values replace the blind ones; after it each change is kept as a
    /// [`Revision`] (an unchanged value records nothing).
    pub fn grade(
        &mut self,
        session_id: &str,
        scores: &[(u32, u8)],
        verdict: Option<PurposeVerdict>,
        now: DateTime<Utc>,
    ) -> Result<()> {
        let coach = self.coach.clone();
        if let Some(&(_, score)) = scores.iter().find(|(_, s)| !(1..=5).contains(s)) {
            return Err(JournalError::InvalidScore {
                path: self.path.clone(),
                score,
            });
        }
        // The last value given for an interval wins.
        let scores: BTreeMap<u32, u8> = scores.iter().copied().collect();
        self.write(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            let review = match row.review_id {
                Some(rid) => Some(review_row(tx, path, rid)?),
                None => None,
            };
            let revealed = review.as_ref().is_some_and(|r| r.revealed_at.is_some());
            if !scores.is_empty() {
                let n = if revealed {
                    review.as_ref().and_then(|r| r.work_intervals).unwrap_or(0)
                } else {
                    row.intervals_to_grade()
                        .ok_or_else(|| JournalError::NotAnalysed {
                            path: path.to_path_buf(),
                            session_id: session_id.to_string(),
                        })?
                };
                if let Some(&interval) = scores.keys().find(|&&i| i == 0 || i > n) {
                    return Err(JournalError::NoSuchInterval {
                        path: path.to_path_buf(),
                        session_id: session_id.to_string(),
                        interval,
                        work_intervals: n,
                    });
                }
            }
            if scores.is_empty() && verdict.is_none() {
                return Ok(());
            }
            let rid = ensure_review(tx, path, &row, now)?;
            for (&interval, &score) in &scores {
                write_score(tx, path, session_id, rid, revealed, interval, score, now)?;
            }
            if let Some(v) = verdict {
                write_verdict(tx, path, session_id, rid, revealed, v, now)?;
                // The blind verdict of a file that cannot be read records that the coach was
                // shown the problem.
                if let (false, Some(why)) = (revealed, &row.unreadable) {
                    tx.exec(
                        path,
                        "UPDATE review SET file_unreadable = ?2 WHERE id = ?1",
                        &[&rid, &why],
                    )?;
                }
            }
            Ok(())
        })
    }

    /// Reveal the athlete's notes: allowed once every work interval has a score and the
    /// purpose verdict is set. Records the reveal time the first time; later calls return a
    /// permit without changing anything.
    pub fn reveal(&mut self, session_id: &str, now: DateTime<Utc>) -> Result<RevealPermit> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            let review = match row.review_id {
                Some(rid) => Some(review_row(tx, path, rid)?),
                None => None,
            };
            if let Some(r) = &review {
                if r.revealed_at.is_some() {
                    return Ok(permit(&row));
                }
            }
            let n = row
                .intervals_to_grade()
                .ok_or_else(|| JournalError::NotAnalysed {
                    path: path.to_path_buf(),
                    session_id: session_id.to_string(),
                })?;
            let (scored, has_verdict) = match (&review, row.review_id) {
                (Some(r), Some(rid)) => (scored_intervals(tx, path, rid)?, r.verdict_counts(&row)),
                _ => (BTreeMap::new(), false),
            };
            let missing = missing_of(n, &scored, has_verdict);
            if !missing.is_empty() {
                return Err(JournalError::NotYetGraded {
                    path: path.to_path_buf(),
                    session_id: session_id.to_string(),
                    missing,
                });
            }
            tx.exec(
                path,
                "UPDATE review SET revealed_at = ?2, work_intervals = ?3 WHERE id = ?1",
                &[&row.review_id, &ts(now), &n],
            )?;
            Ok(permit(&row))
        })
    }

    /// A permit to read the notes of a session whose blind grading is complete and whose
    /// notes the coach has already revealed; `None` otherwise. Changes nothing: this is how
    /// another session's view (the earlier runs of the same workout) may show a note, under
    /// that session's own reveal rule.
    pub fn revealed_permit(&self, session_id: &str) -> Result<Option<RevealPermit>> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let Some(row) = session_row(conn, path, session_id, &coach)? else {
                return Ok(None);
            };
            let Some(rid) = row.review_id else {
                return Ok(None);
            };
            let review = review_row(conn, path, rid)?;
            Ok(review.revealed_at.is_some().then(|| permit(&row)))
        })
    }

    /// The grading state of one session.
    pub fn review_state(&self, session_id: &str) -> Result<ReviewState> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let row = require_session(conn, path, session_id, &coach)?;
            let Some(rid) = row.review_id else {
                return Ok(ReviewState {
                    stage: ReviewStage::New,
                    content_changed: false,
                    work_intervals: row.intervals_to_grade(),
                    scores: Vec::new(),
                    verdict: None,
                    revealed_at: None,
                    missing: missing_of(
                        row.intervals_to_grade().unwrap_or(0),
                        &BTreeMap::<u32, ()>::new(),
                        false,
                    ),
                    file_unreadable: row.unreadable.clone(),
                    unreadable_seen: None,
                    seen_at: None,
                });
            };
            let review = review_row(conn, path, rid)?;
            let revealed_at = match &review.revealed_at {
                Some(s) => Some(parse_ts(path, s)?),
                None => None,
            };
            let n = if revealed_at.is_some() {
                review.work_intervals
            } else {
                row.intervals_to_grade()
            };
            let blind = scored_intervals(conn, path, rid)?;
            let mut scores = Vec::with_capacity(blind.len());
            for (interval, (score, at)) in &blind {
                let current = current_score(conn, path, rid, *interval)?.unwrap_or(*score);
                scores.push(ScoreCell {
                    interval: *interval,
                    blind: *score,
                    given_at: parse_ts(path, at)?,
                    current,
                });
            }
            let verdict = match (&review.verdict, &review.verdict_at) {
                (Some(v), Some(at)) => {
                    let blind = parse_verdict(path, v)?;
                    Some(VerdictCell {
                        blind,
                        given_at: parse_ts(path, at)?,
                        current: current_verdict(conn, path, rid)?.unwrap_or(blind),
                    })
                }
                _ => None,
            };
            let missing = if revealed_at.is_some() {
                Missing::default()
            } else {
                missing_of(n.unwrap_or(0), &blind, review.verdict_counts(&row))
            };
            let sent = feedback_sent(conn, path, rid)?;
            let seen_at = match seen_mark(conn, path, rid)? {
                Some((true, at)) => Some(parse_ts(path, &at)?),
                _ => None,
            };
            let stage = stage_of(
                !blind.is_empty() || verdict.is_some(),
                n.is_some() && missing.is_empty(),
                revealed_at.is_some(),
                sent,
                seen_at.is_some(),
            );
            Ok(ReviewState {
                stage,
                content_changed: review.content_hash != row.content_hash,
                work_intervals: n,
                scores,
                verdict,
                revealed_at,
                missing,
                file_unreadable: row.unreadable.clone(),
                unreadable_seen: review.file_unreadable.clone(),
                seen_at,
            })
        })
    }

    /// Every change made after the reveal, oldest first.
    pub fn revisions(&self, session_id: &str) -> Result<Vec<Revision>> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let row = require_session(conn, path, session_id, &coach)?;
            match row.review_id {
                Some(rid) => revisions_of(conn, path, rid),
                None => Ok(Vec::new()),
            }
        })
    }

    // ----- feedback -----

    /// Save a version of the feedback text (every save is kept). Needs the reveal first.
    pub fn save_feedback(
        &mut self,
        session_id: &str,
        body: &str,
        now: DateTime<Utc>,
    ) -> Result<()> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let rid = revealed_review(tx, path, session_id, &coach)?;
            tx.exec(
                path,
                "INSERT INTO feedback_version (review_id, body, saved_at) VALUES (?1, ?2, ?3)",
                &[&rid, &body, &ts(now)],
            )?;
            Ok(())
        })
    }

    /// Save a version of the feedback written over version `based_on` (the latest version
    /// the writer had read; `None` when they started from no saved version). When another
    /// workstation saved a newer version meanwhile, nothing is saved and the conflict comes
    /// back with their version ([`JournalError::FeedbackConflict`]), for the coach to keep
    /// theirs, take the other or see both; never silently overwritten. Returns the new
    /// version's id.
    pub fn save_feedback_over(
        &mut self,
        session_id: &str,
        body: &str,
        based_on: Option<i64>,
        now: DateTime<Utc>,
    ) -> Result<i64> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let rid = revealed_review(tx, path, session_id, &coach)?;
            check_feedback_base(tx, path, session_id, rid, based_on)?;
            tx.query_one(
                path,
                "INSERT INTO feedback_version (review_id, body, saved_at) VALUES (?1, ?2, ?3)
                 RETURNING id",
                &[&rid, &body, &ts(now)],
                |r| r.get(0),
            )
        })
    }

    /// The latest saved feedback text.
    pub fn feedback(&self, session_id: &str) -> Result<Option<FeedbackVersion>> {
        Ok(self.feedback_history(session_id)?.pop())
    }

    /// Every saved version of the feedback, oldest first.
    pub fn feedback_history(&self, session_id: &str) -> Result<Vec<FeedbackVersion>> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let raw: Vec<(i64, String, String)> = review_rows(
                conn,
                path,
                session_id,
                &coach,
                "SELECT id, body, saved_at FROM feedback_version WHERE review_id = ?1 ORDER BY id",
                |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
            )?;
            raw.into_iter()
                .map(|(id, body, at)| {
                    Ok(FeedbackVersion {
                        id,
                        body,
                        saved_at: parse_ts(path, &at)?,
                    })
                })
                .collect()
        })
    }

    /// Record that the feedback was copied, exported or printed. Needs the reveal first.
    pub fn record_feedback_event(
        &mut self,
        session_id: &str,
        kind: FeedbackEventKind,
        now: DateTime<Utc>,
    ) -> Result<()> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let rid = revealed_review(tx, path, session_id, &coach)?;
            tx.exec(
                path,
                "INSERT INTO feedback_event (review_id, kind, at) VALUES (?1, ?2, ?3)",
                &[&rid, &kind.as_str(), &ts(now)],
            )?;
            Ok(())
        })
    }

    /// Record that the feedback of several sessions left together (one message for an
    /// athlete's day), in one transaction: every session or none. Each needs the reveal.
    pub fn record_feedback_events(
        &mut self,
        session_ids: &[&str],
        kind: FeedbackEventKind,
        now: DateTime<Utc>,
    ) -> Result<()> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            for id in session_ids {
                let rid = revealed_review(tx, path, id, &coach)?;
                tx.exec(
                    path,
                    "INSERT INTO feedback_event (review_id, kind, at) VALUES (?1, ?2, ?3)",
                    &[&rid, &kind.as_str(), &ts(now)],
                )?;
            }
            Ok(())
        })
    }

    /// Save the feedback text (when `body` is given) and record that it was copied, exported
    /// or printed, in one transaction: both or neither. Needs the reveal first.
    pub fn send_feedback(
        &mut self,
        session_id: &str,
        body: Option<&str>,
        kind: FeedbackEventKind,
        now: DateTime<Utc>,
    ) -> Result<()> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let rid = revealed_review(tx, path, session_id, &coach)?;
            if let Some(body) = body {
                tx.exec(
                    path,
                    "INSERT INTO feedback_version (review_id, body, saved_at) VALUES (?1, ?2, ?3)",
                    &[&rid, &body, &ts(now)],
                )?;
            }
            tx.exec(
                path,
                "INSERT INTO feedback_event (review_id, kind, at) VALUES (?1, ?2, ?3)",
                &[&rid, &kind.as_str(), &ts(now)],
            )?;
            Ok(())
        })
    }

    /// [`Journal::send_feedback`] with the version check of [`Journal::save_feedback_over`]
    /// for the text saved with it (when `body` is given). Returns the id of the version
    /// saved, if one was.
    pub fn send_feedback_over(
        &mut self,
        session_id: &str,
        body: Option<&str>,
        based_on: Option<i64>,
        kind: FeedbackEventKind,
        now: DateTime<Utc>,
    ) -> Result<Option<i64>> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let rid = revealed_review(tx, path, session_id, &coach)?;
            let saved = match body {
                Some(body) => {
                    check_feedback_base(tx, path, session_id, rid, based_on)?;
                    Some(tx.query_one(
                        path,
                        "INSERT INTO feedback_version (review_id, body, saved_at)
                         VALUES (?1, ?2, ?3) RETURNING id",
                        &[&rid, &body, &ts(now)],
                        |r| r.get::<i64>(0),
                    )?)
                }
                None => None,
            };
            tx.exec(
                path,
                "INSERT INTO feedback_event (review_id, kind, at) VALUES (?1, ?2, ?3)",
                &[&rid, &kind.as_str(), &ts(now)],
            )?;
            Ok(saved)
        })
    }

    /// When and how the feedback left splitdesk, oldest first.
    pub fn feedback_events(&self, session_id: &str) -> Result<Vec<FeedbackEvent>> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let raw: Vec<(String, String)> = review_rows(
                conn,
                path,
                session_id,
                &coach,
                "SELECT kind, at FROM feedback_event WHERE review_id = ?1 ORDER BY id",
                |r| Ok((r.get(0)?, r.get(1)?)),
            )?;
            raw.into_iter()
                .map(|(kind, at)| {
                    Ok(FeedbackEvent {
                        kind: FeedbackEventKind::parse(&kind).ok_or_else(|| {
                            JournalError::BadValue {
                                path: path.to_path_buf(),
                                detail: format!("feedback event {kind:?}"),
                            }
                        })?,
                        at: parse_ts(path, &at)?,
                    })
                })
                .collect()
        })
    }

    // ----- rulers -----

    /// Keep a ruler (a time window, seconds from the session start) for the session's chart.
    pub fn add_ruler(
        &mut self,
        session_id: &str,
        from_s: f64,
        to_s: f64,
        now: DateTime<Utc>,
    ) -> Result<Ruler> {
        let coach = self.coach.clone();
        if !(from_s.is_finite() && to_s.is_finite() && to_s > from_s) {
            return Err(JournalError::InvalidRuler {
                path: self.path.clone(),
                from_s,
                to_s,
            });
        }
        self.write(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            let rid = ensure_review(tx, path, &row, now)?;
            let id: i64 = tx.query_one(
                path,
                "INSERT INTO ruler (review_id, from_s, to_s, added_at) VALUES (?1, ?2, ?3, ?4)
                 RETURNING id",
                &[&rid, &from_s, &to_s, &ts(now)],
                |r| r.get(0),
            )?;
            Ok(Ruler { id, from_s, to_s })
        })
    }

    /// The session's rulers, in the order added.
    pub fn rulers(&self, session_id: &str) -> Result<Vec<Ruler>> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let raw: Vec<(i64, f64, f64)> = review_rows(
                conn,
                path,
                session_id,
                &coach,
                "SELECT id, from_s, to_s FROM ruler WHERE review_id = ?1 ORDER BY id",
                |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
            )?;
            Ok(raw
                .into_iter()
                .map(|(id, from_s, to_s)| Ruler { id, from_s, to_s })
                .collect())
        })
    }

    /// Remove all of the session's rulers; returns how many there were.
    pub fn clear_rulers(&mut self, session_id: &str) -> Result<usize> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            match row.review_id {
                Some(rid) => {
                    Ok(tx.exec(path, "DELETE FROM ruler WHERE review_id = ?1", &[&rid])? as usize)
                }
                None => Ok(0),
            }
        })
    }

    // ----- seen -----

    /// Mark a session as looked at without a grade: it leaves the daily queue and its note
    /// stays hidden (no reveal permit comes of it). Grades already given are kept. Returns
    /// `false` when it was marked seen already (nothing recorded). Refused with
    /// [`JournalError::AlreadyRevealed`] once the notes are revealed. Undo with
    /// [`Journal::unmark_seen`]; every mark and undo is kept.
    pub fn mark_seen(&mut self, session_id: &str, now: DateTime<Utc>) -> Result<bool> {
        self.set_seen(session_id, true, now)
    }

    /// Bring a session marked seen back to the queue. Returns `false` when it was not marked
    /// seen (nothing recorded).
    pub fn unmark_seen(&mut self, session_id: &str, now: DateTime<Utc>) -> Result<bool> {
        self.set_seen(session_id, false, now)
    }

    fn set_seen(&mut self, session_id: &str, seen: bool, now: DateTime<Utc>) -> Result<bool> {
        let coach = self.coach.clone();
        self.write(|tx, path| {
            let row = require_session(tx, path, session_id, &coach)?;
            if let Some(rid) = row.review_id {
                if review_row(tx, path, rid)?.revealed_at.is_some() {
                    return Err(JournalError::AlreadyRevealed {
                        path: path.to_path_buf(),
                        session_id: session_id.to_string(),
                    });
                }
                let now_seen = matches!(seen_mark(tx, path, rid)?, Some((true, _)));
                if now_seen == seen {
                    return Ok(false);
                }
            } else if !seen {
                return Ok(false);
            }
            let rid = ensure_review(tx, path, &row, now)?;
            tx.exec(
                path,
                "INSERT INTO seen_event (review_id, seen, at) VALUES (?1, ?2, ?3)",
                &[&rid, &i64::from(seen), &ts(now)],
            )?;
            Ok(true)
        })
    }

    /// Sessions marked seen without a grade (stage `Seen`), oldest first, optionally for one
    /// athlete.
    pub fn seen_sessions(&self, athlete: Option<&str>) -> Result<Vec<QueueEntry>> {
        let mut all = self.overview(athlete)?;
        all.retain(|e| e.stage == ReviewStage::Seen);
        Ok(all)
    }

    // ----- lists -----

    /// Sessions with their review stage, newest first (the roster pane), optionally for one
    /// athlete.
    pub fn sessions(&self, athlete: Option<&str>) -> Result<Vec<QueueEntry>> {
        let mut all = self.overview(athlete)?;
        all.reverse();
        Ok(all)
    }

    /// The review queue: sessions not yet reviewed (stage `New`, `Grading` or `Graded`; a
    /// session marked seen is out of it), oldest first; for a coach of a staff, their own
    /// athletes first.
    pub fn unreviewed(&self, athlete: Option<&str>) -> Result<Vec<QueueEntry>> {
        let mut all = self.overview(athlete)?;
        all.retain(|e| e.stage.is_unreviewed());
        self.own_athletes_first(&mut all)?;
        Ok(all)
    }

    /// Number of unreviewed sessions per athlete (athletes with none are absent).
    pub fn unreviewed_counts(&self) -> Result<BTreeMap<String, usize>> {
        let mut out = BTreeMap::new();
        for e in self.unreviewed(None)? {
            *out.entry(e.athlete).or_insert(0) += 1;
        }
        Ok(out)
    }

    /// All sessions (optionally of one athlete) with their stage, oldest first.
    fn overview(&self, athlete: Option<&str>) -> Result<Vec<QueueEntry>> {
        self.read(|conn, path| {
            conn.query(
                path,
                "SELECT s.session_id, s.athlete_id, s.start_time, s.file_path,
                    CASE WHEN r.id IS NOT NULL AND r.content_hash <> s.content_hash
                        THEN 1 ELSE 0 END,
                    CASE WHEN r.revealed_at IS NOT NULL THEN 1 ELSE 0 END,
                    coalesce(CASE WHEN r.revealed_at IS NOT NULL THEN r.work_intervals END,
                             s.work_intervals,
                             CASE WHEN s.unreadable IS NOT NULL THEN 0 END),
                    CASE WHEN r.verdict IS NOT NULL THEN 1 ELSE 0 END,
                    (SELECT count(*) FROM score c WHERE c.review_id = r.id),
                    (SELECT count(*) FROM score c WHERE c.review_id = r.id AND c.interval_no <=
                        coalesce(CASE WHEN r.revealed_at IS NOT NULL THEN r.work_intervals END,
                                 s.work_intervals, 0)),
                    CASE WHEN EXISTS (SELECT 1 FROM feedback_event e WHERE e.review_id = r.id)
                        THEN 1 ELSE 0 END,
                    CASE WHEN coalesce((SELECT v.seen FROM seen_event v
                        WHERE v.review_id = r.id ORDER BY v.id DESC LIMIT 1), 0) = 1
                        THEN 1 ELSE 0 END,
                    s.unreadable,
                    CASE WHEN r.file_unreadable IS NOT NULL THEN 1 ELSE 0 END
                 FROM session s
                 LEFT JOIN session_review sr ON sr.session_id = s.session_id AND sr.coach = ?2
                 LEFT JOIN review r ON r.id = sr.review_id
                 WHERE CAST(?1 AS TEXT) IS NULL OR s.athlete_id = ?1
                 ORDER BY s.start_time, s.session_id",
                &[&athlete, &self.coach],
                |r| {
                    let unreadable: Option<String> = r.get(12)?;
                    let verdict: bool = r.get(7)?;
                    let n: Option<u32> = r.get(6)?;
                    let any: u32 = r.get(8)?;
                    let scored: u32 = r.get(9)?;
                    // As in `ReviewRow::verdict_counts`: for a file that cannot be read, only
                    // a verdict given while the problem was shown counts.
                    let verdict_counts = verdict && (unreadable.is_none() || r.get::<bool>(13)?);
                    let complete = n.is_some_and(|n| scored >= n) && verdict_counts;
                    Ok(QueueEntry {
                        session_id: r.get(0)?,
                        athlete: r.get(1)?,
                        start: parse_ts(path, &r.get::<String>(2)?)?,
                        file_path: PathBuf::from(r.get::<String>(3)?),
                        stage: stage_of(
                            any > 0 || verdict,
                            complete,
                            r.get(5)?,
                            r.get(10)?,
                            r.get(11)?,
                        ),
                        content_changed: r.get(4)?,
                        file_unreadable: unreadable,
                    })
                },
            )
        })
    }

    /// For the bias check: every revealed review with its blind and revised grades, by
    /// session start.
    pub fn bias_inputs(&self) -> Result<Vec<BiasInput>> {
        self.read(|conn, path| {
            type Raw = (
                String,
                String,
                String,
                i64,
                String,
                Option<String>,
                Option<u32>,
            );
            let raw: Vec<Raw> = conn.query(
                path,
                "SELECT s.session_id, s.athlete_id, s.start_time, r.id, r.revealed_at,
                    r.verdict, r.work_intervals
                 FROM session s
                 JOIN session_review sr ON sr.session_id = s.session_id AND sr.coach = ?1
                 JOIN review r ON r.id = sr.review_id
                 WHERE r.revealed_at IS NOT NULL
                 ORDER BY s.start_time, s.session_id",
                &[&self.coach],
                |r| {
                    Ok((
                        r.get(0)?,
                        r.get(1)?,
                        r.get(2)?,
                        r.get(3)?,
                        r.get(4)?,
                        r.get(5)?,
                        r.get(6)?,
                    ))
                },
            )?;
            let mut seen = BTreeSet::new();
            let mut out = Vec::new();
            for (session_id, athlete, start, rid, revealed_at, verdict, n) in raw {
                if !seen.insert(rid) {
                    continue;
                }
                let n = n.unwrap_or(0);
                let blind: Vec<(u32, u8)> = scored_intervals(conn, path, rid)?
                    .into_iter()
                    .filter(|(i, _)| *i <= n)
                    .map(|(i, (s, _))| (i, s))
                    .collect();
                let revisions = revisions_of(conn, path, rid)?;
                let mut revised: BTreeMap<u32, u8> = blind.iter().copied().collect();
                let blind_verdict = match verdict {
                    Some(v) => Some(parse_verdict(path, &v)?),
                    None => None,
                };
                let mut revised_verdict = blind_verdict;
                for rev in &revisions {
                    match rev.change {
                        RevisionChange::Score { interval, new, .. } => {
                            revised.insert(interval, new);
                        }
                        RevisionChange::Verdict { new, .. } => revised_verdict = Some(new),
                    }
                }
                out.push(BiasInput {
                    session_id,
                    athlete,
                    start: parse_ts(path, &start)?,
                    revealed_at: parse_ts(path, &revealed_at)?,
                    blind_scores: blind,
                    revised_scores: revised.into_iter().collect(),
                    blind_verdict,
                    revised_verdict,
                    revisions: revisions.len() as u32,
                });
            }
            Ok(out)
        })
    }

    // ----- maintenance -----

    /// The engine's own integrity check (SQLite: full `PRAGMA integrity_check` and
    /// `foreign_key_check`; PostgreSQL keeps its own storage whole, and its constraints are
    /// always enforced), row counts, and damaged rows of the analysis cache.
    pub fn check(&self) -> Result<CheckReport> {
        let (problems, version) = match &self.db {
            Store::Lite(conn) => sqlite_integrity(conn, &self.path)?,
            Store::Pg(m) => (Vec::new(), pg::lock(m).schema_version(&self.path)?),
        };
        self.read(|conn, path| {
            let mut count = |table: &str| -> Result<u64> {
                conn.query_one(path, &format!("SELECT count(*) FROM {table}"), &[], |r| {
                    r.get::<i64>(0)
                })
                .map(|n| n.max(0) as u64)
            };
            let sessions = count("session")?;
            let reviews = count("review")?;
            let scores = count("score")?;
            let revisions = count("revision")?;
            let feedback_versions = count("feedback_version")?;
            let feedback_events = count("feedback_event")?;
            let rulers = count("ruler")?;
            // The analysis cache is derived: a damaged row is reported, not a failure.
            let mut cache_problems = Vec::new();
            conn.each(
                path,
                "SELECT session_id, summary_json FROM session
                 WHERE summary_json IS NOT NULL ORDER BY session_id",
                &[],
                &mut |r| {
                    if let Some(why) = cache_damage(&r.cell(1)?) {
                        let id = r.text_lossy(0)?;
                        cache_problems.push(format!(
                            "cached analysis of {id} is damaged ({why}); it is dropped and \
                             made again from the activity file on the next run"
                        ));
                    }
                    Ok(())
                },
            )?;
            Ok(CheckReport {
                cache_problems,
                problems,
                schema_version: version,
                sessions,
                reviews,
                scores,
                revisions,
                feedback_versions,
                feedback_events,
                rulers,
            })
        })
    }

    /// [`Journal::backup_to`] after checking that `dest` is not inside `roster_root`
    /// (symbolic links and `..` resolved as for the journal itself).
    pub fn backup_outside_roster(&self, dest: &Path, roster_root: &Path) -> Result<()> {
        if let Err(JournalError::InsideRoster { path, roster }) =
            check_outside_roster(dest, roster_root)
        {
            return Err(JournalError::BackupInsideRoster { path, roster });
        }
        self.backup_to(dest)
    }

    /// Copy the journal to a new file `dest` with SQLite's online backup API (safe while in
    /// use). Never overwrites: an existing `dest` is refused.
    pub fn backup_to(&self, dest: &Path) -> Result<()> {
        // `symlink_metadata`: a dangling symbolic link exists too (and would be followed).
        if fs::symlink_metadata(dest).is_ok() {
            return Err(JournalError::DestinationExists {
                path: dest.to_path_buf(),
            });
        }
        let conn = match &self.db {
            Store::Lite(conn) => conn,
            // A server journal is backed up as a new SQLite journal file, copied row by row
            // and verified.
            Store::Pg(_) => return copy::backup_to_file(self, dest).map(|_| ()),
        };
        let run = || -> Result<()> {
            let mut out = Connection::open_with_flags(
                dest,
                OpenFlags::SQLITE_OPEN_READ_WRITE
                    | OpenFlags::SQLITE_OPEN_CREATE
                    | OpenFlags::SQLITE_OPEN_NO_MUTEX,
            )
            .sq(dest)?;
            {
                let backup = rusqlite::backup::Backup::new(conn, &mut out).sq(dest)?;
                backup
                    .run_to_completion(256, Duration::from_millis(10), None)
                    .sq(dest)?;
            }
            out.close().map_err(|(_, e)| JournalError::sql(dest, e))
        };
        let result = run();
        if result.is_err() {
            let _ = fs::remove_file(dest);
        }
        result
    }

    /// Record many sessions in one transaction (one commit, one sync to disk), for a cold
    /// scan: each analysed session as [`Journal::upsert_session_with_stat`] would, and each
    /// session whose file cannot be read as [`Journal::record_unreadable`] would, but keeping
    /// the file's stat so an unchanged unreadable file is known without reading it again.
    /// All or nothing: on an error no row of the batch is written.
    pub fn upsert_sessions_batch(
        &mut self,
        analysed: &[(SessionRecord, Option<FileStat>)],
        unreadable: &[(SessionRecord, String, Option<FileStat>)],
        now: DateTime<Utc>,
    ) -> Result<()> {
        self.write_cache(|tx, path| {
            for (record, stat) in analysed {
                upsert_row(tx, path, record, stat.as_ref(), now)?;
            }
            for (record, reason, stat) in unreadable {
                let record = SessionRecord {
                    summary: None,
                    ..record.clone()
                };
                upsert_row(tx, path, &record, stat.as_ref(), now)?;
                mark_unreadable(tx, path, &record.session_id, reason)?;
            }
            Ok(())
        })
    }
}

// ----- row helpers (shared by read and write paths) -----

/// Mark a session's file unreadable (`reason`, one line): no analysis, no card, the brief
/// columns cleared with the summary.
fn mark_unreadable(tx: &mut dyn Sql, path: &Path, session_id: &str, reason: &str) -> Result<()> {
    tx.exec(
        path,
        "UPDATE session SET unreadable = ?2, summary_json = NULL, summary_version = NULL,
             summary_hash = NULL, work_intervals = NULL
         WHERE session_id = ?1",
        &[&session_id, &reason],
    )?;
    fill_brief(tx, path, session_id)?;
    delete_card(tx, path, session_id)
}

/// Insert or refresh a session row (see [`Journal::upsert_session_with_stat`]); a session
/// row written here is readable again, so its unreadable mark is cleared.
fn upsert_row(
    tx: &mut dyn Sql,
    path: &Path,
    record: &SessionRecord,
    stat: Option<&FileStat>,
    now: DateTime<Utc>,
) -> Result<SessionChange> {
    // Reviews are the coaches' (see `link_reviews`); the session row only says what the
    // roster holds. `existing` is read without a coach: only its content and cache matter.
    let existing = session_row(tx, path, &record.session_id, "")?;
    let mut change = match &existing {
        None => SessionChange::New,
        Some(row) if row.content_hash == record.content_hash => SessionChange::Same,
        Some(_) => SessionChange::ContentChanged,
    };
    // The summary: the one given, else the one kept (same content), else one cached for
    // the same content under another session id (a renamed file).
    let summary = match &record.summary {
        Some(s) => Some((s.json.clone(), s.analysis_version, s.work_intervals)),
        None => match &existing {
            Some(row) if row.content_hash == record.content_hash => row.summary.clone(),
            _ => summary_for_hash(tx, path, &record.content_hash)?,
        },
    };
    let (json, version, intervals) = match summary {
        Some((j, v, n)) => (Some(j), Some(v), Some(n)),
        None => (None, None, None),
    };
    let summary_hash = json.as_ref().map(|_| record.content_hash.as_str());
    tx.exec(path, "INSERT INTO session (session_id, athlete_id, file_path, content_hash, start_time,
                     seen_at, review_id, summary_json, summary_version, summary_hash, work_intervals)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11)
                 ON CONFLICT (session_id) DO UPDATE SET
                     athlete_id = excluded.athlete_id, file_path = excluded.file_path,
                     content_hash = excluded.content_hash, start_time = excluded.start_time,
                     seen_at = excluded.seen_at, review_id = excluded.review_id,
                     summary_json = excluded.summary_json,
                     summary_version = excluded.summary_version,
                     summary_hash = excluded.summary_hash,
                     work_intervals = excluded.work_intervals,
                     file_size = CASE WHEN session.content_hash = excluded.content_hash
                         AND session.file_path = excluded.file_path THEN session.file_size END,
                     file_mtime_ns = CASE WHEN session.content_hash = excluded.content_hash
                         AND session.file_path = excluded.file_path
                         THEN session.file_mtime_ns END,
                     unreadable = NULL", &[&record.session_id, &record.athlete_id, &record.file_path.to_string_lossy(), &record.content_hash, &ts(record.start), &ts(now), &None::<i64>, &json, &version, &summary_hash, &intervals])?;
    fill_brief(tx, path, &record.session_id)?;
    let linked = link_reviews(tx, path, &record.session_id, &record.content_hash)?;
    if linked > 0 && change == SessionChange::New {
        change = SessionChange::FoundReview;
    }
    if let Some(st) = stat {
        write_file_stat(tx, path, &record.session_id, st)?;
    }
    match record
        .summary
        .as_ref()
        .and_then(|s| s.card.as_ref().map(|c| (s, c)))
    {
        Some((s, card)) => write_card(tx, path, record, card, s.analysis_version)?,
        None if record.summary.is_some() => delete_card(tx, path, &record.session_id)?,
        None => match &existing {
            Some(row) if row.content_hash == record.content_hash => {}
            _ => copy_card_for_hash(tx, path, record)?,
        },
    }
    Ok(change)
}

/// Write the session card of `record` (made by `analysis_version` of its content).
fn write_card(
    tx: &mut dyn Sql,
    path: &Path,
    record: &SessionRecord,
    card: &CardCache,
    analysis_version: u32,
) -> Result<()> {
    tx.exec(
        path,
        "INSERT INTO session_card (session_id, athlete_id, start_time, day, kind, content_hash,
             analysis_version, inputs_digest, shape_json, card_json)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)
         ON CONFLICT (session_id) DO UPDATE SET
             athlete_id = excluded.athlete_id, start_time = excluded.start_time,
             day = excluded.day, kind = excluded.kind, content_hash = excluded.content_hash,
             analysis_version = excluded.analysis_version,
             inputs_digest = excluded.inputs_digest, shape_json = excluded.shape_json,
             card_json = excluded.card_json",
        &[
            &record.session_id,
            &record.athlete_id,
            &ts(record.start),
            &card.day,
            &card.kind,
            &record.content_hash,
            &analysis_version,
            &card.inputs_digest,
            &card.shape_json,
            &card.json,
        ],
    )?;
    Ok(())
}

/// Fill the session's `summary_inputs` and `brief_*` columns from its summary JSON (see
/// schema step 5), after any write of the summary.
fn fill_brief(tx: &mut dyn Sql, path: &Path, session_id: &str) -> Result<()> {
    let sql = match tx.engine() {
        Engine::Sqlite => BRIEF_FROM_SUMMARY,
        Engine::Postgres => schema::BRIEF_FROM_SUMMARY_PG,
    };
    tx.exec(path, sql, &[&session_id])?;
    Ok(())
}

fn delete_card(tx: &mut dyn Sql, path: &Path, session_id: &str) -> Result<()> {
    tx.exec(
        path,
        "DELETE FROM session_card WHERE session_id = ?1",
        &[&session_id],
    )?;
    Ok(())
}

/// A new session id whose content another session already has (a renamed or copied file):
/// take that session's card, else drop any card this id had.
fn copy_card_for_hash(tx: &mut dyn Sql, path: &Path, record: &SessionRecord) -> Result<()> {
    delete_card(tx, path, &record.session_id)?;
    tx.exec(
        path,
        "INSERT INTO session_card (session_id, athlete_id, start_time, day, kind, content_hash,
             analysis_version, inputs_digest, shape_json, card_json)
         SELECT ?1, ?2, ?3, day, kind, content_hash, analysis_version, inputs_digest,
             shape_json, card_json
         FROM session_card WHERE content_hash = ?4 AND session_id != ?1 LIMIT 1",
        &[
            &record.session_id,
            &record.athlete_id,
            &ts(record.start),
            &record.content_hash,
        ],
    )?;
    Ok(())
}

struct SessionRow {
    content_hash: String,
    file_path: PathBuf,
    session_id: String,
    /// The coach this row was read for (its `review_id` is theirs).
    coach: String,
    review_id: Option<i64>,
    work_intervals: Option<u32>,
    summary: Option<(String, u32, u32)>,
    /// Why the file cannot be read, when it cannot.
    unreadable: Option<String>,
}

impl SessionRow {
    /// Work intervals to score before the reveal: the analysis's count, or zero for a file
    /// that cannot be read (it has no analysis; the purpose verdict alone grades it).
    fn intervals_to_grade(&self) -> Option<u32> {
        self.work_intervals
            .or_else(|| self.unreadable.as_ref().map(|_| 0))
    }
}

/// The session as `coach` sees it: its own review link, no other coach's.
fn session_row(
    conn: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    coach: &str,
) -> Result<Option<SessionRow>> {
    conn.query_opt(
        path,
        "SELECT s.content_hash, s.file_path, sr.review_id,
            CASE WHEN s.summary_hash = s.content_hash THEN s.work_intervals END,
            CASE WHEN s.summary_hash = s.content_hash THEN s.summary_json END,
            s.summary_version, s.work_intervals, s.unreadable
         FROM session s
         LEFT JOIN session_review sr ON sr.session_id = s.session_id AND sr.coach = ?2
         WHERE s.session_id = ?1",
        &[&session_id, &coach],
        |r| {
            // The cache columns are derived data: a damaged value reads as missing.
            let json = r.text(4);
            let version: Option<u32> = r.lenient(5);
            let n: Option<u32> = r.lenient(6);
            Ok(SessionRow {
                content_hash: r.text_lossy(0)?,
                file_path: PathBuf::from(r.text_lossy(1)?),
                session_id: session_id.to_string(),
                coach: coach.to_string(),
                review_id: r.get(2)?,
                work_intervals: r.lenient::<u32>(3),
                summary: match (json, version, n) {
                    (Some(j), Some(v), Some(n)) => Some((j, v, n)),
                    _ => None,
                },
                unreadable: r.text(7),
            })
        },
    )
}

fn require_session(
    conn: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    coach: &str,
) -> Result<SessionRow> {
    session_row(conn, path, session_id, coach)?.ok_or_else(|| JournalError::UnknownSession {
        path: path.to_path_buf(),
        session_id: session_id.to_string(),
    })
}

fn summary_for_hash(
    conn: &mut dyn Sql,
    path: &Path,
    hash: &str,
) -> Result<Option<(String, u32, u32)>> {
    let found = conn.query_opt(
        path,
        "SELECT summary_json, summary_version, work_intervals FROM session
         WHERE content_hash = ?1 AND summary_hash = ?1 AND summary_json IS NOT NULL
           AND summary_version IS NOT NULL AND work_intervals IS NOT NULL
         ORDER BY seen_at DESC LIMIT 1",
        &[&hash],
        |r| Ok((r.text(0), r.lenient::<u32>(1), r.lenient::<u32>(2))),
    )?;
    Ok(match found {
        Some((Some(j), Some(v), Some(n))) => Some((j, v, n)),
        _ => None,
    })
}

fn write_file_stat(
    tx: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    stat: &FileStat,
) -> Result<bool> {
    let n = tx.exec(
        path,
        "UPDATE session SET file_size = ?3, file_mtime_ns = ?4
             WHERE session_id = ?1 AND file_path = ?2",
        &[
            &session_id,
            &stat.path.to_string_lossy(),
            &i64::try_from(stat.size).ok(),
            &stat.mtime_ns,
        ],
    )?;
    Ok(n > 0)
}

/// A file stat from three columns (path, size, modification time in ns) starting at `i`;
/// `None` when any is missing or damaged.
fn stat_of(r: &db::Row<'_>, i: usize) -> Option<FileStat> {
    let path = r.text(i)?;
    let size = u64::try_from(r.lenient::<i64>(i + 1)?).ok()?;
    let mtime_ns = r.lenient::<i64>(i + 2)?;
    Some(FileStat {
        path: PathBuf::from(path),
        size,
        mtime_ns,
    })
}

/// Why a cached summary cannot be used, if it cannot.
fn cache_damage(v: &db::Cell) -> Option<&'static str> {
    use db::Cell;
    match v {
        Cell::Null => None,
        Cell::Bytes(_) => Some("not UTF-8 text"),
        Cell::Text(t) if serde_json::from_str::<serde::de::IgnoredAny>(t).is_err() => {
            Some("not valid JSON")
        }
        Cell::Text(_) => None,
        _ => Some("not text"),
    }
}

/// The coach's latest review of this content.
fn latest_review_for_hash(
    conn: &mut dyn Sql,
    path: &Path,
    hash: &str,
    coach: &str,
) -> Result<Option<i64>> {
    conn.query_opt(
        path,
        "SELECT id FROM review WHERE coach = ?2 AND content_hash = ?1 ORDER BY id DESC LIMIT 1",
        &[&hash, &coach],
        |r| r.get(0),
    )
}

/// Link the session to each coach's latest review of its content, for every coach who has
/// one and no link for this session yet (a renamed file finds its reviews; a session whose
/// content changed keeps the reviews it had). Returns how many links were made.
fn link_reviews(conn: &mut dyn Sql, path: &Path, session_id: &str, hash: &str) -> Result<u64> {
    conn.exec(
        path,
        "INSERT INTO session_review (session_id, coach, review_id)
         SELECT ?1, coach, max(id) FROM review WHERE content_hash = ?2 GROUP BY coach
         ON CONFLICT (session_id, coach) DO NOTHING",
        &[&session_id, &hash],
    )
}

struct ReviewRow {
    content_hash: String,
    verdict: Option<String>,
    verdict_at: Option<String>,
    revealed_at: Option<String>,
    work_intervals: Option<u32>,
    file_unreadable: Option<String>,
}

impl ReviewRow {
    /// The blind verdict counts toward the reveal: always for a readable file; for one that
    /// cannot be read, only when it was given while the coach was shown that problem.
    fn verdict_counts(&self, row: &SessionRow) -> bool {
        self.verdict.is_some() && (row.unreadable.is_none() || self.file_unreadable.is_some())
    }
}

fn review_row(conn: &mut dyn Sql, path: &Path, id: i64) -> Result<ReviewRow> {
    conn.query_one(
        path,
        "SELECT content_hash, verdict, verdict_at, revealed_at, work_intervals, file_unreadable
         FROM review WHERE id = ?1",
        &[&id],
        |r| {
            Ok(ReviewRow {
                content_hash: r.get(0)?,
                verdict: r.get(1)?,
                verdict_at: r.get(2)?,
                revealed_at: r.get(3)?,
                work_intervals: r.get(4)?,
                file_unreadable: r.get(5)?,
            })
        },
    )
}

/// The session's review, created (for its current content) if it has none yet.
fn ensure_review(
    conn: &mut dyn Sql,
    path: &Path,
    row: &SessionRow,
    now: DateTime<Utc>,
) -> Result<i64> {
    if let Some(id) = row.review_id {
        return Ok(id);
    }
    let id: i64 = conn.query_one(
        path,
        "INSERT INTO review (content_hash, created_at, coach) VALUES (?1, ?2, ?3) RETURNING id",
        &[&row.content_hash, &ts(now), &row.coach],
        |r| r.get(0),
    )?;
    conn.exec(
        path,
        "INSERT INTO session_review (session_id, coach, review_id) VALUES (?1, ?2, ?3)
         ON CONFLICT (session_id, coach) DO UPDATE SET review_id = excluded.review_id",
        &[&row.session_id, &row.coach, &id],
    )?;
    Ok(id)
}

/// Blind scores by interval: (score, given_at).
fn scored_intervals(
    conn: &mut dyn Sql,
    path: &Path,
    rid: i64,
) -> Result<BTreeMap<u32, (u8, String)>> {
    let rows: Vec<(u32, u8, String)> = conn.query(
        path,
        "SELECT interval_no, score, given_at FROM score WHERE review_id = ?1",
        &[&rid],
        |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
    )?;
    Ok(rows.into_iter().map(|(i, s, at)| (i, (s, at))).collect())
}

fn current_score(conn: &mut dyn Sql, path: &Path, rid: i64, interval: u32) -> Result<Option<u8>> {
    let revised: Option<String> = conn.query_opt(
        path,
        "SELECT new_value FROM revision
         WHERE review_id = ?1 AND target = 'score' AND interval_no = ?2
         ORDER BY id DESC LIMIT 1",
        &[&rid, &interval],
        |r| r.get(0),
    )?;
    if let Some(v) = revised {
        return parse_score(path, &v).map(Some);
    }
    conn.query_opt(
        path,
        "SELECT score FROM score WHERE review_id = ?1 AND interval_no = ?2",
        &[&rid, &interval],
        |r| r.get(0),
    )
}

fn current_verdict(conn: &mut dyn Sql, path: &Path, rid: i64) -> Result<Option<PurposeVerdict>> {
    let revised: Option<String> = conn.query_opt(
        path,
        "SELECT new_value FROM revision WHERE review_id = ?1 AND target = 'verdict'
         ORDER BY id DESC LIMIT 1",
        &[&rid],
        |r| r.get(0),
    )?;
    let raw = match revised {
        Some(v) => Some(v),
        None => review_row(conn, path, rid)?.verdict,
    };
    raw.map(|v| parse_verdict(path, &v)).transpose()
}

fn revisions_of(conn: &mut dyn Sql, path: &Path, rid: i64) -> Result<Vec<Revision>> {
    type Raw = (String, Option<u32>, String, String, String);
    let raw: Vec<Raw> = conn.query(
        path,
        "SELECT target, interval_no, old_value, new_value, at FROM revision
         WHERE review_id = ?1 ORDER BY id",
        &[&rid],
        |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?, r.get(4)?)),
    )?;
    raw.into_iter()
        .map(|(target, interval, old, new, at)| {
            let change = match (target.as_str(), interval) {
                ("score", Some(interval)) => RevisionChange::Score {
                    interval,
                    old: parse_score(path, &old)?,
                    new: parse_score(path, &new)?,
                },
                _ => RevisionChange::Verdict {
                    old: parse_verdict(path, &old)?,
                    new: parse_verdict(path, &new)?,
                },
            };
            Ok(Revision {
                change,
                at: parse_ts(path, &at)?,
            })
        })
        .collect()
}

/// Write one validated score inside a grading transaction: the blind value before the
/// reveal, a revision (when it changes) after it.
#[allow(clippy::too_many_arguments)]
fn write_score(
    tx: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    rid: i64,
    revealed: bool,
    interval: u32,
    score: u8,
    now: DateTime<Utc>,
) -> Result<()> {
    if !revealed {
        tx.exec(
            path,
            "INSERT INTO score (review_id, interval_no, score, given_at)
             VALUES (?1, ?2, ?3, ?4)
             ON CONFLICT (review_id, interval_no)
             DO UPDATE SET score = excluded.score, given_at = excluded.given_at",
            &[&rid, &interval, &score, &ts(now)],
        )?;
        return Ok(());
    }
    let current =
        current_score(tx, path, rid, interval)?.ok_or_else(|| JournalError::BadValue {
            path: path.to_path_buf(),
            detail: format!("{session_id}: revealed without a score for {interval}"),
        })?;
    if current != score {
        tx.exec(
            path,
            "INSERT INTO revision (review_id, target, interval_no, old_value, new_value, at)
             VALUES (?1, 'score', ?2, ?3, ?4, ?5)",
            &[
                &rid,
                &interval,
                &current.to_string(),
                &score.to_string(),
                &ts(now),
            ],
        )?;
    }
    Ok(())
}

/// Write the purpose verdict inside a grading transaction (blind, or a revision).
fn write_verdict(
    tx: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    rid: i64,
    revealed: bool,
    verdict: PurposeVerdict,
    now: DateTime<Utc>,
) -> Result<()> {
    if !revealed {
        tx.exec(
            path,
            "UPDATE review SET verdict = ?2, verdict_at = ?3 WHERE id = ?1",
            &[&rid, &verdict.as_str(), &ts(now)],
        )?;
        return Ok(());
    }
    let current = current_verdict(tx, path, rid)?.ok_or_else(|| JournalError::BadValue {
        path: path.to_path_buf(),
        detail: format!("{session_id}: revealed without a verdict"),
    })?;
    if current != verdict {
        tx.exec(
            path,
            "INSERT INTO revision (review_id, target, interval_no, old_value, new_value, at)
             VALUES (?1, 'verdict', NULL, ?2, ?3, ?4)",
            &[&rid, &current.as_str(), &verdict.as_str(), &ts(now)],
        )?;
    }
    Ok(())
}

/// The latest seen mark of a review: (seen, at); `None` when never marked.
fn seen_mark(conn: &mut dyn Sql, path: &Path, rid: i64) -> Result<Option<(bool, String)>> {
    conn.query_opt(
        path,
        "SELECT seen, at FROM seen_event WHERE review_id = ?1 ORDER BY id DESC LIMIT 1",
        &[&rid],
        |r| Ok((r.get::<i64>(0)? == 1, r.get::<String>(1)?)),
    )
}

fn feedback_sent(conn: &mut dyn Sql, path: &Path, rid: i64) -> Result<bool> {
    conn.query_one(
        path,
        "SELECT CASE WHEN EXISTS (SELECT 1 FROM feedback_event WHERE review_id = ?1)
            THEN 1 ELSE 0 END",
        &[&rid],
        |r| r.get(0),
    )
}

/// Refuse a save over `based_on` when a newer feedback version exists.
fn check_feedback_base(
    tx: &mut dyn Sql,
    path: &Path,
    session_id: &str,
    rid: i64,
    based_on: Option<i64>,
) -> Result<()> {
    let latest: Option<(i64, String, String)> = tx.query_opt(
        path,
        "SELECT id, body, saved_at FROM feedback_version WHERE review_id = ?1
         ORDER BY id DESC LIMIT 1",
        &[&rid],
        |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
    )?;
    match latest {
        Some((id, body, at)) if Some(id) != based_on => Err(JournalError::FeedbackConflict {
            path: path.to_path_buf(),
            session_id: session_id.to_string(),
            theirs: Box::new(FeedbackVersion {
                id,
                body,
                saved_at: parse_ts(path, &at)?,
            }),
        }),
        _ => Ok(()),
    }
}

/// The review id of a revealed session, else `NotRevealed`.
fn revealed_review(conn: &mut dyn Sql, path: &Path, session_id: &str, coach: &str) -> Result<i64> {
    let row = require_session(conn, path, session_id, coach)?;
    let not_revealed = || JournalError::NotRevealed {
        path: path.to_path_buf(),
        session_id: session_id.to_string(),
    };
    let rid = row.review_id.ok_or_else(not_revealed)?;
    if review_row(conn, path, rid)?.revealed_at.is_none() {
        return Err(not_revealed());
    }
    Ok(rid)
}

fn missing_of<V>(n: u32, scored: &BTreeMap<u32, V>, has_verdict: bool) -> Missing {
    Missing {
        scores: (1..=n).filter(|i| !scored.contains_key(i)).collect(),
        verdict: !has_verdict,
    }
}

fn stage_of(
    any_grade: bool,
    complete: bool,
    revealed: bool,
    sent: bool,
    seen: bool,
) -> ReviewStage {
    match (revealed, sent) {
        (true, true) => ReviewStage::FeedbackDone,
        (true, false) => ReviewStage::Revealed,
        _ if seen => ReviewStage::Seen,
        _ if complete => ReviewStage::Graded,
        _ if any_grade => ReviewStage::Grading,
        _ => ReviewStage::New,
    }
}

fn permit(row: &SessionRow) -> RevealPermit {
    RevealPermit {
        session_id: row.session_id.clone(),
        file_path: row.file_path.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    fn t(s: i64) -> DateTime<Utc> {
        Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + chrono::Duration::seconds(s)
    }

    fn journal_with_session() -> Journal {
        let mut j = Journal::open_in_memory().unwrap();
        j.upsert_session(
            &SessionRecord {
                session_id: "a/s".into(),
                athlete_id: "a".into(),
                file_path: PathBuf::from("/r/a/activities/s.fit"),
                content_hash: "h".repeat(64),
                start: t(0),
                summary: Some(SummaryCache {
                    json: "{}".into(),
                    analysis_version: 1,
                    work_intervals: 3,
                    card: None,
                }),
            },
            t(0),
        )
        .unwrap();
        j
    }

    /// SQLITE_FULL (provoked with `max_page_count`) reads "the disk is full; nothing was
    /// saved", and the refused action left nothing behind.
    #[test]
    fn a_full_disk_says_so_and_saves_nothing() {
        let mut j = journal_with_session();
        j.grade(
            "a/s",
            &[(1, 4), (2, 3), (3, 5)],
            Some(PurposeVerdict::Met),
            t(1),
        )
        .unwrap();
        j.reveal("a/s", t(2)).unwrap();
        let Store::Lite(conn) = &j.db else {
            panic!("an in-memory journal is SQLite")
        };
        let pages: i64 = conn
            .pragma_query_value(None, "page_count", |r| r.get(0))
            .unwrap();
        conn.pragma_update(None, "max_page_count", pages).unwrap();
        let big = "x".repeat(64 * 1024);
        let err = j.save_feedback("a/s", &big, t(3)).unwrap_err();
        assert!(matches!(err, JournalError::DiskFull { .. }), "{err:?}");
        assert_eq!(
            err.to_string(),
            ":memory:: the disk is full; nothing was saved. Free some space and try again"
        );
        assert!(j.feedback("a/s").unwrap().is_none());
        // A grade change with a long feedback in one action: neither is kept.
        let err = j
            .send_feedback("a/s", Some(&big), FeedbackEventKind::Copied, t(4))
            .unwrap_err();
        assert!(matches!(err, JournalError::DiskFull { .. }), "{err:?}");
        assert!(j.feedback_events("a/s").unwrap().is_empty());
    }

    #[test]
    fn a_grade_is_checked_whole_before_anything_is_written() {
        let mut j = journal_with_session();
        let err = j
            .grade(
                "a/s",
                &[(1, 4), (2, 3), (4, 5)],
                Some(PurposeVerdict::Met),
                t(1),
            )
            .unwrap_err();
        assert!(
            matches!(err, JournalError::NoSuchInterval { interval: 4, .. }),
            "{err:?}"
        );
        let err = j.grade("a/s", &[(1, 4), (2, 6)], None, t(1)).unwrap_err();
        assert!(matches!(err, JournalError::InvalidScore { score: 6, .. }));
        let st = j.review_state("a/s").unwrap();
        assert!(st.scores.is_empty() && st.verdict.is_none());
        // The last value for an interval wins; after the reveal, only changes are revisions.
        j.grade(
            "a/s",
            &[(1, 4), (2, 3), (3, 5), (1, 2)],
            Some(PurposeVerdict::Met),
            t(1),
        )
        .unwrap();
        let st = j.review_state("a/s").unwrap();
        let blind: Vec<u8> = st.scores.iter().map(|c| c.blind).collect();
        assert_eq!(blind, [2, 3, 5]);
        j.reveal("a/s", t(2)).unwrap();
        j.grade("a/s", &[(1, 2), (2, 4)], Some(PurposeVerdict::Partly), t(3))
            .unwrap();
        let revs = j.revisions("a/s").unwrap();
        assert_eq!(revs.len(), 2, "{revs:?}");
    }
}
