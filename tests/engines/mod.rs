//! Run a journal test once per engine: SQLite, then PostgreSQL.
//!
//! `both("name", || { ... })` runs the body with the thread's current engine set to SQLite,
//! then to PostgreSQL on the test server `SPLITDESK_TEST_PG_URL` names (without it the
//! PostgreSQL run is skipped with a message, except under `CI=true`, where it fails; see
//! `pg_support`). Inside the body, [`journal`] opens a fresh journal of the current engine
//! (SQLite in memory, or a new database on the server) and [`place`] a fresh shared location
//! (a SQLite file in a temporary folder, or a new database) that several handles can open.
//! A failure names the engine it happened on. The databases made for a run are dropped
//! after it.

#![allow(dead_code)]

#[path = "../pg_support/mod.rs"]
pub mod pg_support;

use std::cell::{Cell, RefCell};
use std::panic::{catch_unwind, resume_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};

use splitdesk::journal::{Engine, Journal, SessionRecord, SummaryCache};

thread_local! {
    static CURRENT: Cell<Engine> = const { Cell::new(Engine::Sqlite) };
    static TEST: RefCell<String> = const { RefCell::new(String::new()) };
    static MADE: RefCell<Vec<String>> = const { RefCell::new(Vec::new()) };
}

/// The engine's name as a failure message says it.
pub fn name_of(engine: Engine) -> &'static str {
    match engine {
        Engine::Sqlite => "SQLite",
        Engine::Postgres => "PostgreSQL",
    }
}

/// The engine the body runs on now (SQLite outside [`both`]).
pub fn engine() -> Engine {
    CURRENT.with(|c| c.get())
}

/// Run `body` on SQLite, then on PostgreSQL when a test server is named.
pub fn both(test: &str, body: impl Fn()) {
    run(Engine::Sqlite, test, &body);
    if pg_support::server_url().is_some() {
        run(Engine::Postgres, test, &body);
    }
}

/// Run `body` on PostgreSQL only (skipped with a message without a test server).
pub fn postgres_only(test: &str, body: impl Fn()) {
    if pg_support::server_url().is_some() {
        run(Engine::Postgres, test, &body);
    }
}

fn run(engine: Engine, test: &str, body: &dyn Fn()) {
    CURRENT.with(|c| c.set(engine));
    TEST.with(|t| *t.borrow_mut() = test.to_string());
    let outcome = catch_unwind(AssertUnwindSafe(body));
    for url in MADE.with(|m| std::mem::take(&mut *m.borrow_mut())) {
        pg_support::drop_database(&url);
    }
    CURRENT.with(|c| c.set(Engine::Sqlite));
    if let Err(payload) = outcome {
        let msg = payload
            .downcast_ref::<String>()
            .map(String::as_str)
            .or_else(|| payload.downcast_ref::<&str>().copied());
        match msg {
            Some(msg) => panic!("{test} failed on {}: {msg}", name_of(engine)),
            None => {
                eprintln!("{test} failed on {}", name_of(engine));
                resume_unwind(payload)
            }
        }
    }
}

/// A new, empty database on the test server for the current test (dropped after the run).
fn fresh_url() -> String {
    let tag = TEST.with(|t| t.borrow().clone());
    let url = pg_support::fresh_database(&tag)
        .expect("a PostgreSQL run needs SPLITDESK_TEST_PG_URL (checked before the run)");
    MADE.with(|m| m.borrow_mut().push(url.clone()));
    url
}

/// A fresh journal of the current engine: SQLite in memory, or a new PostgreSQL database.
pub fn journal() -> Journal {
    match engine() {
        Engine::Sqlite => Journal::open_in_memory().expect("open an in-memory journal"),
        Engine::Postgres => {
            let url = fresh_url();
            Journal::open_url(&url).unwrap_or_else(|e| panic!("open {url}: {e}"))
        }
    }
}

/// Where a journal shared by several handles lives.
pub enum Place {
    /// A SQLite journal file in a temporary folder (removed with the `Place`).
    File(tempfile::TempDir, PathBuf),
    /// A PostgreSQL database (dropped after the run).
    Server(String),
}

/// A fresh, empty shared location of the current engine.
pub fn place() -> Place {
    match engine() {
        Engine::Sqlite => {
            let dir = tempfile::tempdir().expect("a temporary folder");
            let path = dir.path().join("journal.sqlite");
            Place::File(dir, path)
        }
        Engine::Postgres => Place::Server(fresh_url()),
    }
}

impl Place {
    /// Open a new handle on the journal here (creating it the first time).
    pub fn open(&self) -> Journal {
        match self {
            Place::File(_, path) => {
                Journal::open(path).unwrap_or_else(|e| panic!("open {}: {e}", path.display()))
            }
            Place::Server(url) => {
                Journal::open_url(url).unwrap_or_else(|e| panic!("open {url}: {e}"))
            }
        }
    }

    /// The SQLite file, for a SQLite place.
    pub fn file(&self) -> Option<&Path> {
        match self {
            Place::File(_, path) => Some(path),
            Place::Server(_) => None,
        }
    }

    /// The database URL, for a PostgreSQL place.
    pub fn url(&self) -> Option<&str> {
        match self {
            Place::File(..) => None,
            Place::Server(url) => Some(url),
        }
    }
}

/// An analysed session `<athlete>/<stem>` starting at `start`, with `work` work intervals,
/// its content hash derived from the id, its summary an empty JSON object (version 1).
pub fn analysed_record(id: &str, start: chrono::DateTime<chrono::Utc>, work: u32) -> SessionRecord {
    let (athlete, stem) = id.split_once('/').unwrap_or(("athlete", id));
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.to_string(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/{stem}.fit")),
        content_hash: format!("hash-of-{id}"),
        start,
        summary: Some(SummaryCache {
            json: "{}".into(),
            analysis_version: 1,
            work_intervals: work,
            card: None,
        }),
    }
}
