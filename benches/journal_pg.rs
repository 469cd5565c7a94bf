//! The journal on a PostgreSQL server over the loopback, against the same journal as a
//! SQLite file: the warm `splitdesk queue` work (open the roster and its journal, bring the
//! journal up to date by one stat per file, list the sessions with their titles), the
//! queue list alone, and a grading round trip (one whole blind grading action written,
//! then the session's state read back, as the workstation does after a score key).
//!
//! The roster is the demo athletes copied under new ids (`SPLITDESK_BENCH_COPIES`, default
//! 60: 9,660 sessions). Its journal is made once as a SQLite file by a cold scan, then
//! copied into a fresh PostgreSQL database with `journal copy`'s code (verified).
//!
//! Needs a PostgreSQL server where it may create a database: `SPLITDESK_TEST_PG_URL` (and
//! the password by `PGPASSFILE`/`PGPASSWORD`), as for the tests; `.ci/pg-cluster start DIR
//! PORT` makes one. Without it the bench says it was skipped.
//!
//! Run: `eval "$(.ci/pg-cluster start /tmp/sdpg 54329)"; cargo bench --bench journal_pg`.

use std::hint::black_box;
use std::path::Path;
use std::time::Instant;

use chrono::Utc;
use criterion::{criterion_group, criterion_main, Criterion};
use splitdesk::analysis::review::ANALYSIS_VERSION;
use splitdesk::journal::{self, Journal, PurposeVerdict};
use splitdesk::workspace::Workspace;

#[path = "bench_roster/mod.rs"]
mod bench_roster;
#[path = "../tests/pg_support/mod.rs"]
mod pg_support;

/// A session with work intervals to grade, and how many.
fn a_session_to_grade(j: &Journal) -> (String, u32) {
    j.unreviewed(None)
        .expect("queue")
        .into_iter()
        .find_map(|e| {
            let n = j.review_state(&e.session_id).ok()?.work_intervals?;
            (n >= 4).then_some((e.session_id, n))
        })
        .expect("a session with work intervals")
}

fn journal_pg(c: &mut Criterion) {
    let Some(url) = pg_support::fresh_database("bench") else {
        return;
    };
    let copies = std::env::var("SPLITDESK_BENCH_COPIES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(60);
    let dir = tempfile::tempdir().expect("temp dir");
    let roster = bench_roster::copied_roster(dir.path(), copies);
    let file = dir.path().join("journal.sqlite");
    let sessions = {
        let mut ws = Workspace::open(&roster, Some(&file)).expect("open");
        ws.sync(Utc::now(), |_, _| {}).expect("cold sync").sessions
    };
    {
        let source = Journal::open_read_only(&file).expect("open the file journal");
        let mut server = Journal::open_url(&url).expect("open the server journal");
        let started = Instant::now();
        let report = journal::copy::copy_journal(&source, &mut server).expect("copy");
        eprintln!(
            "journal_pg: copied {} rows to PostgreSQL in {:.1} s (verified)",
            report.rows.iter().map(|(_, n)| n).sum::<u64>(),
            started.elapsed().as_secs_f64()
        );
    }
    let engines = [("sqlite", file.clone()), ("postgres", url.clone().into())];

    let mut group = c.benchmark_group("journal_pg");
    group.sample_size(10);
    for (engine, location) in &engines {
        let location: &Path = location.as_ref();
        group.bench_function(format!("queue work, {engine}, {sessions} sessions"), |b| {
            b.iter(|| {
                let mut ws = Workspace::open(&roster, Some(location)).expect("open");
                let report = ws.sync(Utc::now(), |_, _| {}).expect("warm sync");
                assert_eq!(report.analysed, 0, "warm: nothing analysed");
                let listed = ws.journal.sessions(None).expect("sessions");
                let briefs = ws
                    .journal
                    .summary_briefs(None, ANALYSIS_VERSION)
                    .expect("briefs");
                black_box((report.cached, listed.len(), briefs.len()))
            })
        });
    }
    for (engine, location) in &engines {
        let location: &Path = location.as_ref();
        let mut ws = Workspace::open(&roster, Some(location)).expect("open");
        group.bench_function(format!("queue list, {engine}, {sessions} sessions"), |b| {
            b.iter(|| black_box(ws.journal.unreviewed(None).expect("queue").len()))
        });
        let (id, n) = a_session_to_grade(&ws.journal);
        let mut round = 0u8;
        group.bench_function(format!("grading round trip, {engine}"), |b| {
            b.iter(|| {
                // A whole blind grading action (every interval and the verdict), then the
                // state read back: before the reveal each action replaces the last.
                round = round % 5 + 1;
                let scores: Vec<(u32, u8)> = (1..=n).map(|i| (i, round)).collect();
                ws.journal
                    .grade(&id, &scores, Some(PurposeVerdict::Met), Utc::now())
                    .expect("grade");
                black_box(ws.journal.review_state(&id).expect("state"))
            })
        });
    }
    group.finish();
    pg_support::drop_database(&url);
}

criterion_group!(benches, journal_pg);
criterion_main!(benches);
