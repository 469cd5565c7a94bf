//! Warm `splitdesk queue` work on a big roster: open the roster and its journal, bring the
//! journal up to date with the roster (every file unchanged: one `stat` each, nothing read),
//! and list the queue with its titles from the journal's columns; and the same for one
//! athlete's trends (only that athlete's sessions synced, its cached reviews read).
//!
//! The roster is the demo roster's athletes copied under new ids into a temporary folder
//! (hard links where the file system allows, else copies): identical files under distinct
//! session ids, which is all the warm path looks at. `SPLITDESK_BENCH_COPIES` sets the copies
//! of each athlete (default 6: 966 sessions); 60 gives 9,660. The journal is warmed once
//! before timing (a full analysis of every file, seconds per thousand sessions).
//!
//! Run: `cargo bench --bench warm` (or `SPLITDESK_BENCH_COPIES=60 cargo bench --bench warm`).

use std::hint::black_box;

use chrono::Utc;
use criterion::{criterion_group, criterion_main, Criterion};
use splitdesk::analysis::history::{self, HistoryParams, SessionSummary};
use splitdesk::analysis::review::{Review, ANALYSIS_VERSION};
use splitdesk::workspace::Workspace;

#[path = "bench_roster/mod.rs"]
mod bench_roster;
use bench_roster::copied_roster;

fn warm_queue(c: &mut Criterion) {
    let copies = std::env::var("SPLITDESK_BENCH_COPIES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(6);
    let dir = tempfile::tempdir().expect("temp dir");
    let roster = copied_roster(dir.path(), copies);
    let journal = dir.path().join("journal.sqlite");
    let sessions = {
        let mut ws = Workspace::open(&roster, Some(&journal)).expect("open");
        // The demo roster's one truncated file (copied with the rest) fails on every sync,
        // as it does for `splitdesk queue`: it is read again each time.
        let report = ws.sync(Utc::now(), |_, _| {}).expect("cold sync");
        report.sessions
    };

    let mut group = c.benchmark_group("warm");
    group.sample_size(10);
    group.bench_function(format!("queue work, {sessions} sessions"), |b| {
        b.iter(|| {
            let mut ws = Workspace::open(&roster, Some(&journal)).expect("open");
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
    group.bench_function(format!("trends work, {sessions} sessions"), |b| {
        // What `splitdesk trends ATHLETE` does: open, sync that athlete's sessions alone,
        // read its cached reviews and build the history.
        let athlete = Workspace::open(&roster, Some(&journal))
            .expect("open")
            .roster
            .athletes
            .first()
            .expect("an athlete")
            .id
            .clone();
        b.iter(|| {
            let mut ws =
                Workspace::open_only(&roster, Some(&journal), Some(&athlete)).expect("open");
            let report = ws
                .sync_only(Some(&athlete), Utc::now(), |_, _| {})
                .expect("warm sync");
            assert_eq!(report.analysed, 0, "warm: nothing analysed");
            let profile = ws
                .roster
                .athlete(&athlete)
                .expect("athlete")
                .profile
                .clone();
            let sums: Vec<SessionSummary> = ws
                .journal
                .athlete_summaries(&athlete, ANALYSIS_VERSION)
                .expect("summaries")
                .into_iter()
                .filter_map(|(id, json)| {
                    let review: Review = serde_json::from_str(&json?).ok()?;
                    SessionSummary::from_review(&id, &review)
                })
                .collect();
            let today = sums
                .iter()
                .map(SessionSummary::date)
                .max()
                .unwrap_or_else(|| Utc::now().date_naive());
            let h = history::build(&sums, &profile, &HistoryParams::default(), today);
            black_box(h.sessions)
        })
    });
    group.bench_function(
        format!("one athlete's summaries, {sessions} sessions"),
        |b| {
            let ws = Workspace::open(&roster, Some(&journal)).expect("open");
            let athlete = ws.roster.athletes.first().expect("an athlete").id.clone();
            b.iter(|| {
                let rows = ws
                    .journal
                    .athlete_summaries(&athlete, ANALYSIS_VERSION)
                    .expect("summaries");
                black_box(rows.len())
            })
        },
    );
    group.finish();
}

criterion_group!(benches, warm_queue);
criterion_main!(benches);
