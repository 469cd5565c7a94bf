//! Moving a journal between engines: every row of every table copied in one transaction
//! into a new, empty journal, then verified (row counts, and a content hash of the grades,
//! revisions and feedback read back from both sides).
//!
//! The copy keeps row ids, so reviews keep their links; on PostgreSQL the id sequences are
//! moved past the copied ids afterwards. A destination that already holds sessions or
//! reviews is refused before anything is written.

use std::path::Path;

use sha2::{Digest, Sha256};

use super::db::{Cell, Engine, Param, Sql};
use super::{Journal, JournalError, Result};

/// The tables in the order their references allow, each with its columns and the column
/// that orders it.
const TABLES: &[(&str, &[&str], &str)] = &[
    ("coach", &["name", "added_at", "removed_at"], "name"),
    ("assignment", &["athlete_id", "coach", "at"], "athlete_id"),
    (
        "review",
        &[
            "id",
            "content_hash",
            "created_at",
            "verdict",
            "verdict_at",
            "revealed_at",
            "work_intervals",
            "file_unreadable",
            "coach",
        ],
        "id",
    ),
    (
        "session",
        &[
            "session_id",
            "athlete_id",
            "file_path",
            "content_hash",
            "start_time",
            "seen_at",
            "review_id",
            "summary_json",
            "summary_version",
            "summary_hash",
            "work_intervals",
            "file_size",
            "file_mtime_ns",
            "unreadable",
            "summary_inputs",
            "brief_plan_title",
            "brief_sport",
            "brief_running",
            "brief_distance_m",
        ],
        "session_id",
    ),
    (
        "session_review",
        &["session_id", "coach", "review_id"],
        "session_id, coach",
    ),
    (
        "score",
        &["review_id", "interval_no", "score", "given_at"],
        "review_id, interval_no",
    ),
    (
        "revision",
        &[
            "id",
            "review_id",
            "target",
            "interval_no",
            "old_value",
            "new_value",
            "at",
        ],
        "id",
    ),
    (
        "feedback_version",
        &["id", "review_id", "body", "saved_at"],
        "id",
    ),
    ("feedback_event", &["id", "review_id", "kind", "at"], "id"),
    (
        "ruler",
        &["id", "review_id", "from_s", "to_s", "added_at"],
        "id",
    ),
    ("seen_event", &["id", "review_id", "seen", "at"], "id"),
    (
        "session_card",
        &[
            "session_id",
            "athlete_id",
            "start_time",
            "day",
            "kind",
            "content_hash",
            "analysis_version",
            "inputs_digest",
            "shape_json",
            "card_json",
        ],
        "session_id",
    ),
];

/// Tables with an identity column `id` (their sequence follows the copied ids).
const WITH_ID: &[&str] = &[
    "review",
    "revision",
    "feedback_version",
    "feedback_event",
    "ruler",
    "seen_event",
];

/// What a copy moved, and the proof it arrived whole.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CopyReport {
    /// Rows per table, as counted in the destination after the copy (equal to the source's).
    pub rows: Vec<(String, u64)>,
    /// SHA-256 of the coach's records (grades, revisions, feedback), hex; the same read
    /// from the source and from the destination.
    pub content_hash: String,
}

/// Row counts of every table, in [`TABLES`] order.
fn counts(conn: &mut dyn Sql, path: &Path) -> Result<Vec<(String, u64)>> {
    let mut out = Vec::new();
    for (table, _, _) in TABLES {
        let n: i64 = conn.query_one(path, &format!("SELECT count(*) FROM {table}"), &[], |r| {
            r.get(0)
        })?;
        out.push((table.to_string(), n.max(0) as u64));
    }
    Ok(out)
}

/// SHA-256 over the coaches' records in a fixed order and a fixed text form, the same on
/// either engine: the staff and its assignments, every review's coach, blind verdict and
/// reveal, which review each coach's session shows, every score, revision, feedback version
/// and feedback event. (The advisory "reviewing now" marks are
/// not copied: they expire within minutes.)
pub(crate) fn records_hash(conn: &mut dyn Sql, path: &Path) -> Result<String> {
    let mut h = Sha256::new();
    let mut feed = |conn: &mut dyn Sql, label: &str, sql: &str, cols: usize| -> Result<()> {
        h.update(label.as_bytes());
        h.update([0]);
        conn.each(path, sql, &[], &mut |r| {
            for i in 0..cols {
                let text = match r.cell(i)? {
                    Cell::Null => "\u{0}null".to_string(),
                    Cell::Int(n) => n.to_string(),
                    Cell::Real(x) => format!("{x:?}"),
                    Cell::Text(s) => s,
                    Cell::Bytes(b) => String::from_utf8_lossy(&b).into_owned(),
                };
                h.update(text.len().to_le_bytes());
                h.update(text.as_bytes());
            }
            h.update([1]);
            Ok(())
        })
    };
    feed(
        conn,
        "coach",
        "SELECT name, added_at, removed_at FROM coach ORDER BY name",
        3,
    )?;
    feed(
        conn,
        "review",
        "SELECT id, content_hash, created_at, verdict, verdict_at, revealed_at, work_intervals,
            file_unreadable, coach FROM review ORDER BY id",
        9,
    )?;
    feed(
        conn,
        "assignment",
        "SELECT athlete_id, coach, at FROM assignment ORDER BY athlete_id",
        3,
    )?;
    feed(
        conn,
        "session_review",
        "SELECT session_id, coach, review_id FROM session_review ORDER BY session_id, coach",
        3,
    )?;
    feed(
        conn,
        "score",
        "SELECT review_id, interval_no, score, given_at FROM score
         ORDER BY review_id, interval_no",
        4,
    )?;
    feed(
        conn,
        "revision",
        "SELECT id, review_id, target, interval_no, old_value, new_value, at FROM revision
         ORDER BY id",
        7,
    )?;
    feed(
        conn,
        "feedback_version",
        "SELECT id, review_id, body, saved_at FROM feedback_version ORDER BY id",
        4,
    )?;
    feed(
        conn,
        "feedback_event",
        "SELECT id, review_id, kind, at FROM feedback_event ORDER BY id",
        4,
    )?;
    Ok(format!("{:x}", h.finalize()))
}

/// One table read from the source: its name, its columns and its rows.
type Copied = (&'static str, &'static [&'static str], Vec<Vec<Cell>>);

/// Copy every row of `from` into `to`, a journal with no sessions or reviews yet, in one
/// transaction, then verify. On any error nothing is left in `to`.
pub fn copy_journal(from: &Journal, to: &mut Journal) -> Result<CopyReport> {
    let mut tables: Vec<Copied> = Vec::new();
    let (source_counts, source_hash) = from.read(|conn, path| {
        for (table, cols, order) in TABLES {
            let sql = format!("SELECT {} FROM {table} ORDER BY {order}", cols.join(", "));
            let rows = conn.query(path, &sql, &[], |r| {
                (0..cols.len())
                    .map(|i| r.cell(i))
                    .collect::<Result<Vec<_>>>()
            })?;
            tables.push((table, cols, rows));
        }
        Ok((counts(conn, path)?, records_hash(conn, path)?))
    })?;
    // A whole journal, every coach's records: not one coach's write.
    to.write_unchecked(|conn, path| {
        let held: i64 = conn.query_one(
            path,
            "SELECT (SELECT count(*) FROM session) + (SELECT count(*) FROM review)",
            &[],
            |r| r.get(0),
        )?;
        if held > 0 {
            return Err(JournalError::NotEmpty {
                path: path.to_path_buf(),
                rows: held.max(0) as u64,
            });
        }
        for (table, cols, rows) in &tables {
            let marks: Vec<String> = (1..=cols.len()).map(|i| format!("?{i}")).collect();
            let sql = format!(
                "INSERT INTO {table} ({}) VALUES ({})",
                cols.join(", "),
                marks.join(", ")
            );
            for row in rows {
                let params: Vec<&dyn Param> = row.iter().map(|c| c as &dyn Param).collect();
                conn.exec(path, &sql, &params)?;
            }
        }
        if conn.engine() == Engine::Postgres {
            for table in WITH_ID {
                conn.exec(
                    path,
                    &format!(
                        "SELECT setval(pg_get_serial_sequence('{table}', 'id'),
                            coalesce((SELECT max(id) FROM {table}), 0) + 1, false)"
                    ),
                    &[],
                )?;
            }
        }
        let copied_counts = counts(conn, path)?;
        let copied_hash = records_hash(conn, path)?;
        if copied_counts != source_counts || copied_hash != source_hash {
            return Err(JournalError::CopyMismatch {
                path: path.to_path_buf(),
                detail: format!(
                    "rows {source_counts:?} became {copied_counts:?}; records hash \
                     {source_hash} became {copied_hash}"
                ),
            });
        }
        Ok(())
    })?;
    // Read back once more after the commit, from the destination as any later reader would.
    let (rows, content_hash) =
        to.read(|conn, path| Ok((counts(conn, path)?, records_hash(conn, path)?)))?;
    if rows != source_counts || content_hash != source_hash {
        return Err(JournalError::CopyMismatch {
            path: to.path().to_path_buf(),
            detail: "the committed copy reads back differently".into(),
        });
    }
    Ok(CopyReport { rows, content_hash })
}

/// Back up a server journal as a new SQLite journal file at `dest` (which must not exist),
/// verified as [`copy_journal`] is. On any error the new file is removed.
pub fn backup_to_file(from: &Journal, dest: &Path) -> Result<CopyReport> {
    if std::fs::symlink_metadata(dest).is_ok() {
        return Err(JournalError::DestinationExists {
            path: dest.to_path_buf(),
        });
    }
    let result = Journal::open(dest).and_then(|mut to| copy_journal(from, &mut to));
    if result.is_err() {
        for suffix in ["", "-wal", "-shm", "-checked"] {
            let mut p = dest.as_os_str().to_os_string();
            p.push(suffix);
            let _ = std::fs::remove_file(std::path::PathBuf::from(p));
        }
    }
    result
}
