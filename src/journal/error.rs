//! The journal's error type. Every variant names the journal file it concerns.

use std::fmt;
use std::path::PathBuf;

/// What still blocks the reveal of a session's notes under the blind protocol.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Missing {
    /// Work-interval numbers (1-based) that have no score yet, ascending.
    pub scores: Vec<u32>,
    /// `true` when the purpose verdict is not set yet.
    pub verdict: bool,
}

impl Missing {
    /// `true` when nothing is missing: the blind grading is complete.
    pub fn is_empty(&self) -> bool {
        self.scores.is_empty() && !self.verdict
    }
}

impl fmt::Display for Missing {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut parts = Vec::new();
        match self.scores.as_slice() {
            [] => {}
            [one] => parts.push(format!("score missing for work interval {one}")),
            many => {
                let list: Vec<String> = many.iter().map(u32::to_string).collect();
                parts.push(format!(
                    "scores missing for work intervals {}",
                    list.join(", ")
                ));
            }
        }
        if self.verdict {
            parts.push("purpose verdict not set".to_string());
        }
        if parts.is_empty() {
            f.write_str("nothing missing")
        } else {
            f.write_str(&parts.join("; "))
        }
    }
}

/// Everything that can go wrong with the coach's journal.
#[derive(Debug, thiserror::Error)]
pub enum JournalError {
    /// The file exists but is not a splitdesk journal. It was not changed.
    #[error("{path}: not a splitdesk journal ({reason}); the file was left untouched")]
    NotAJournal { path: PathBuf, reason: String },

    /// The file looks like a splitdesk journal but SQLite finds it damaged.
    #[error("{path}: the journal is damaged ({detail}); restore a backup")]
    Corrupt { path: PathBuf, detail: String },

    /// The journal was written by a newer splitdesk. It was not changed.
    #[error(
        "{path}: the journal has schema version {found}, this splitdesk knows up to {supported}; \
         update splitdesk (the file was left untouched)"
    )]
    TooNew {
        path: PathBuf,
        found: u32,
        supported: u32,
    },

    /// A read-only open found a journal that first needs a schema upgrade.
    #[error(
        "{path}: the journal has schema version {found} and needs upgrading to {supported}; \
         open it once read-write"
    )]
    NeedsUpgrade {
        path: PathBuf,
        found: u32,
        supported: u32,
    },

    /// The journal cannot be written at its location.
    #[error("{path}: the journal cannot be written there ({detail})")]
    ReadOnlyLocation { path: PathBuf, detail: String },

    /// A write refused because the journal was opened read-only (its file or folder cannot
    /// be written). Nothing was saved.
    #[error(
        "{path}: the journal is read-only ({detail}); nothing was saved. Make the file and its \
         folder writable, or pass --journal to use another journal"
    )]
    ReadOnly { path: PathBuf, detail: String },

    /// The disk holding the journal is full. The write was rolled back.
    #[error("{path}: the disk is full; nothing was saved. Free some space and try again")]
    DiskFull { path: PathBuf },

    /// The operating system failed to read or write the journal file.
    #[error(
        "{path}: the journal file could not be read or written (the disk or file system \
         reported an error); nothing was saved"
    )]
    DiskIo { path: PathBuf },

    /// Another program held the journal locked for longer than the busy timeout.
    #[error("{path}: the journal is busy (locked by another splitdesk?); try again")]
    Busy { path: PathBuf },

    /// The journal would sit inside the roster folder, which may be shared with athletes.
    #[error(
        "{path}: the journal must not live inside the roster folder {roster} \
         (it may be shared with athletes); choose another --journal path"
    )]
    InsideRoster { path: PathBuf, roster: PathBuf },

    /// A backup would sit inside the roster folder, which may be shared with athletes.
    #[error(
        "{path}: a backup of the journal must not be written inside the roster folder {roster} \
         (it may be shared with athletes); choose a file outside it. Nothing was written"
    )]
    BackupInsideRoster { path: PathBuf, roster: PathBuf },

    /// The backup destination already exists; backups never overwrite a file.
    #[error("{path}: backup destination already exists; choose a new file name")]
    DestinationExists { path: PathBuf },

    /// The blind protocol: the notes stay hidden until the blind grading is complete.
    #[error("{path}: {session_id}: notes stay hidden until grading is complete: {missing}")]
    NotYetGraded {
        path: PathBuf,
        session_id: String,
        missing: Missing,
    },

    /// A colleague's grades stay hidden until one's own blind grading is complete.
    #[error(
        "{path}: {session_id}: colleagues' grades stay hidden until your own blind grading \
         is complete: {missing}"
    )]
    ColleaguesHidden {
        path: PathBuf,
        session_id: String,
        missing: Missing,
    },

    /// Feedback belongs after the reveal.
    #[error("{path}: {session_id}: the notes have not been revealed yet")]
    NotRevealed { path: PathBuf, session_id: String },

    /// Marking seen belongs before the reveal: a revealed session is reviewed already.
    #[error("{path}: {session_id}: the notes are revealed already; the session is reviewed")]
    AlreadyRevealed { path: PathBuf, session_id: String },

    /// The session id is not in the journal (call `upsert_session` first).
    #[error("{path}: unknown session {session_id}")]
    UnknownSession { path: PathBuf, session_id: String },

    /// Grading needs the number of work intervals, which comes with the analysis summary.
    #[error("{path}: {session_id}: not analysed yet (number of work intervals unknown)")]
    NotAnalysed { path: PathBuf, session_id: String },

    /// A score for a work interval the session does not have.
    #[error(
        "{path}: {session_id}: no work interval {interval} (the session has {work_intervals})"
    )]
    NoSuchInterval {
        path: PathBuf,
        session_id: String,
        interval: u32,
        work_intervals: u32,
    },

    /// A score outside 1..=5.
    #[error("{path}: score {score} is outside 1-5")]
    InvalidScore { path: PathBuf, score: u8 },

    /// A ruler whose window is empty or not finite.
    #[error("{path}: ruler from {from_s} s to {to_s} s is not a valid window")]
    InvalidRuler {
        path: PathBuf,
        from_s: f64,
        to_s: f64,
    },

    /// A stored value the journal cannot interpret (hand-edited or damaged row).
    #[error("{path}: unexpected stored value: {detail}")]
    BadValue { path: PathBuf, detail: String },

    /// A file-system operation failed. (The cause is in the message and deliberately not
    /// chained as a `source`, so a printed error chain says it once.)
    #[error("{path}: {err}")]
    Io { path: PathBuf, err: std::io::Error },

    /// Any other SQLite failure (its message said once, as for `Io`).
    #[error("{path}: {err}")]
    Sqlite { path: PathBuf, err: rusqlite::Error },

    /// A copy's destination already holds a journal; copies go into a new, empty one.
    #[error(
        "{path}: the destination already holds {rows} sessions and reviews; copy into a new, \
         empty journal (nothing was written)"
    )]
    NotEmpty { path: PathBuf, rows: u64 },

    /// A copied journal did not read back the same as its source; the copy was rolled back.
    #[error("{path}: the copy did not verify ({detail}); nothing was kept")]
    CopyMismatch { path: PathBuf, detail: String },

    /// A journal with a staff needs to know which coach is writing.
    #[error(
        "{path}: this journal is shared by a staff of {}; say which one you are with \
         `name` under [coach] in the config file, $SPLITDESK_COACH, or --as NAME",
        coaches(*staff)
    )]
    NoCoach { path: PathBuf, staff: u64 },

    /// The coach named is not an active coach of the journal's staff.
    #[error(
        "{path}: coach \"{coach}\" is not on this journal's staff ({}); \
         see `splitdesk staff list`, or add them with `splitdesk staff add`",
        coaches(*staff)
    )]
    UnknownCoach {
        path: PathBuf,
        coach: String,
        staff: u64,
    },

    /// A coach name that cannot be used.
    #[error("{path}: \"{name}\" cannot be a coach name: {why}")]
    BadCoachName {
        path: PathBuf,
        name: String,
        why: String,
    },

    /// The coach is on the staff already.
    #[error("{path}: coach \"{coach}\" is on the staff already")]
    AlreadyOnStaff { path: PathBuf, coach: String },

    /// The last coach of a staff cannot be removed.
    #[error(
        "{path}: coach \"{coach}\" is the last coach of the staff and cannot be removed; \
         add another coach first"
    )]
    LastCoach { path: PathBuf, coach: String },

    /// Another workstation saved a newer version of the feedback than the one this edit
    /// started from. Nothing was saved; `theirs` is that version.
    #[error(
        "{path}: {session_id}: the feedback was changed elsewhere (saved {saved_at}) while \
         you edited it; nothing was saved: keep yours, take theirs, or see both",
        saved_at = theirs.saved_at.format("%Y-%m-%d %H:%M UTC")
    )]
    FeedbackConflict {
        path: PathBuf,
        session_id: String,
        theirs: Box<crate::journal::FeedbackVersion>,
    },

    /// The PostgreSQL server could not be reached, or refused the connection.
    #[error("{path}: cannot connect to the journal server ({detail})")]
    Connect { path: PathBuf, detail: String },

    /// Any other failure reported by the PostgreSQL server or its connection; the
    /// transaction was rolled back.
    #[error("{path}: the journal server reported an error ({detail}); nothing was saved")]
    Server { path: PathBuf, detail: String },
}

/// SQLite's extended result code SQLITE_IOERR_SHMSIZE (`SQLITE_IOERR | 19 << 8`).
// Source: https://www.sqlite.org/rescode.html#ioerr_shmsize
const SQLITE_IOERR_SHMSIZE: std::os::raw::c_int = 4874;

impl JournalError {
    /// Classify a SQLite error for the journal at `path`.
    pub(crate) fn sql(path: &std::path::Path, source: rusqlite::Error) -> JournalError {
        use rusqlite::ErrorCode;
        let path = path.to_path_buf();
        match source.sqlite_error_code() {
            Some(ErrorCode::DatabaseBusy) | Some(ErrorCode::DatabaseLocked) => {
                JournalError::Busy { path }
            }
            Some(ErrorCode::NotADatabase) | Some(ErrorCode::DatabaseCorrupt) => {
                JournalError::Corrupt {
                    path,
                    detail: source.to_string(),
                }
            }
            Some(ErrorCode::DiskFull) => JournalError::DiskFull { path },
            // SQLITE_IOERR_SHMSIZE: the WAL index could not grow, which on Linux means the
            // file system is full.
            _ if matches!(
                &source,
                rusqlite::Error::SqliteFailure(f, _) if f.extended_code == SQLITE_IOERR_SHMSIZE
            ) =>
            {
                JournalError::DiskFull { path }
            }
            Some(ErrorCode::SystemIoFailure) => JournalError::DiskIo { path },
            Some(ErrorCode::ReadOnly) | Some(ErrorCode::CannotOpen) => {
                JournalError::ReadOnlyLocation {
                    path,
                    detail: source.to_string(),
                }
            }
            _ => JournalError::Sqlite { path, err: source },
        }
    }
}

impl JournalError {
    /// Classify a PostgreSQL error for the journal at `path` (the server address, without
    /// any password).
    pub(crate) fn pg(path: &std::path::Path, source: postgres::Error) -> JournalError {
        use postgres::error::SqlState;
        let path = path.to_path_buf();
        let Some(db) = source.as_db_error() else {
            return if source.is_closed() {
                JournalError::Connect {
                    path,
                    detail: "the connection was closed".into(),
                }
            } else {
                JournalError::Server {
                    path,
                    detail: one_line(&source.to_string()),
                }
            };
        };
        let code = db.code();
        if *code == SqlState::LOCK_NOT_AVAILABLE
            || *code == SqlState::T_R_SERIALIZATION_FAILURE
            || *code == SqlState::T_R_DEADLOCK_DETECTED
            || *code == SqlState::QUERY_CANCELED
        {
            JournalError::Busy { path }
        } else if *code == SqlState::DISK_FULL {
            JournalError::DiskFull { path }
        } else if *code == SqlState::INSUFFICIENT_PRIVILEGE
            || *code == SqlState::READ_ONLY_SQL_TRANSACTION
        {
            JournalError::ReadOnlyLocation {
                path,
                detail: one_line(db.message()),
            }
        } else if *code == SqlState::DATA_CORRUPTED || *code == SqlState::INDEX_CORRUPTED {
            JournalError::Corrupt {
                path,
                detail: one_line(db.message()),
            }
        } else {
            JournalError::Server {
                path,
                detail: one_line(db.message()),
            }
        }
    }
}

/// "no coaches", "1 coach", "N coaches".
fn coaches(n: u64) -> String {
    match n {
        0 => "no coaches".into(),
        1 => "1 coach".into(),
        n => format!("{n} coaches"),
    }
}

/// A server message on one line, without control characters.
pub(crate) fn one_line(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_printed_error_chain_says_the_cause_once() {
        let io = std::io::Error::new(std::io::ErrorKind::PermissionDenied, "no entry here");
        let e = anyhow::Error::from(JournalError::Io {
            path: "/j.sqlite".into(),
            err: io,
        });
        let text = format!("{e:#}");
        assert_eq!(text, "/j.sqlite: no entry here");
        let sql = rusqlite::Error::InvalidColumnType(
            4,
            "summary_json".into(),
            rusqlite::types::Type::Blob,
        );
        let e = anyhow::Error::from(JournalError::sql(std::path::Path::new("/j.sqlite"), sql));
        let text = format!("{e:#}");
        assert_eq!(text.matches("summary_json").count(), 1, "{text}");
    }

    #[test]
    fn missing_reads_plainly() {
        let m = Missing {
            scores: vec![3, 4],
            verdict: true,
        };
        assert_eq!(
            m.to_string(),
            "scores missing for work intervals 3, 4; purpose verdict not set"
        );
        let m = Missing {
            scores: vec![2],
            verdict: false,
        };
        assert_eq!(m.to_string(), "score missing for work interval 2");
        let m = Missing {
            scores: vec![],
            verdict: true,
        };
        assert_eq!(m.to_string(), "purpose verdict not set");
        assert!(Missing::default().is_empty());
    }
}
