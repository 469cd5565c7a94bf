//! Shared pieces of the PostgreSQL concurrency and kill tests: a database dropped when the
//! test ends, analysed sessions to grade, and reading marked lines from a child process.
//!
//! The child processes are the test binary itself; they print their reports as lines
//! starting with [`MARK`], since libtest may print "test child_... " on the same line.

#![allow(dead_code)]

use std::path::PathBuf;

use chrono::{DateTime, TimeZone, Utc};
use splitdesk::journal::{Journal, SessionRecord, SummaryCache};

use crate::pg_support;

/// The start of every report line a child prints.
pub const MARK: &str = "@@pgcon ";

/// A fresh test database, dropped (with any connection still on it) when this goes out of
/// scope, also when the test panics.
pub struct Db {
    pub url: String,
}

impl Db {
    /// `None` when the PostgreSQL tests are skipped (no `SPLITDESK_TEST_PG_URL`).
    pub fn fresh(tag: &str) -> Option<Db> {
        pg_support::fresh_database(tag).map(|url| Db { url })
    }

    pub fn open(&self) -> Journal {
        Journal::open_url(&self.url).unwrap_or_else(|e| {
            panic!(
                "open {}: {e}",
                splitdesk::journal::redact_address(&self.url)
            )
        })
    }
}

impl Drop for Db {
    fn drop(&mut self) {
        pg_support::drop_database(&self.url);
    }
}

pub fn t(seconds: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + chrono::Duration::seconds(seconds)
}

/// An analysed session `id` with `intervals` work intervals; `n` makes its content (and so
/// its review) its own.
pub fn session(id: &str, n: u64, intervals: u32) -> SessionRecord {
    let athlete = id.split('/').next().unwrap_or("athlete").to_string();
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.clone(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/s{n:06}.fit")),
        content_hash: format!("{n:064x}"),
        start: t(n as i64),
        summary: Some(SummaryCache {
            json: format!("{{\"n\":{n}}}"),
            analysis_version: 1,
            work_intervals: intervals,
            card: None,
        }),
    }
}

/// The text after [`MARK`] on a line, if the line holds one.
pub fn marked(line: &str) -> Option<&str> {
    line.find(MARK).map(|i| line[i + MARK.len()..].trim())
}
