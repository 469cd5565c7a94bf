//! Warm work knows a cached summary is current from the journal's columns alone: the sync
//! over unchanged files neither reads a file nor parses a cached summary (a summary damaged
//! inside is left for the first command that reads it, which makes it again), `queue` takes
//! its titles from the columns, and a journal of the previous schema gets those columns
//! filled from its summaries when it is upgraded (damaged ones left empty, nothing refused).

mod cli_support;
mod tui_support;

use std::path::Path;

use chrono::Utc;
use rusqlite::Connection;
use splitdesk::analysis::review::ANALYSIS_VERSION;
use splitdesk::journal::{schema, Journal};
use splitdesk::workspace::Workspace;
use tui_support::{build_roster, EASY, INTERVALS, LONG};

/// Replace the cached summary JSON of `session` without touching any other column.
fn damage_summary(journal: &Path, session: &str) {
    let c = Connection::open(journal).unwrap();
    let n = c
        .execute(
            "UPDATE session SET summary_json = '{\"truncated' WHERE session_id = ?1",
            [session],
        )
        .unwrap();
    assert_eq!(n, 1);
}

fn summary_json(journal: &Path, session: &str) -> String {
    let c = Connection::open(journal).unwrap();
    c.query_row(
        "SELECT summary_json FROM session WHERE session_id = ?1",
        [session],
        |r| r.get(0),
    )
    .unwrap()
}

#[test]
fn the_warm_sync_reads_no_file_and_parses_no_summary() {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("journal.sqlite");
    let first = {
        let mut ws = Workspace::open(&roster, Some(&journal)).unwrap();
        ws.sync(Utc::now(), |_, _| {}).unwrap()
    };
    assert_eq!(first.analysed, first.sessions);
    assert!(first.sessions >= 3, "{first:?}");

    damage_summary(&journal, INTERVALS);
    let mut ws = Workspace::open(&roster, Some(&journal)).unwrap();
    let warm = ws.sync(Utc::now(), |_, _| {}).unwrap();
    // Every session known current without parsing: the damaged JSON was not looked at.
    assert_eq!((warm.cached, warm.analysed), (first.sessions, 0));
    assert!(warm.problems.is_empty(), "{:?}", warm.problems);
    assert!(ws.synced_current(INTERVALS) && ws.synced_current(EASY));
    assert_eq!(summary_json(&journal, INTERVALS), "{\"truncated");

    // The titles' facts come from the columns, for one athlete or all.
    let briefs = ws.journal.summary_briefs(None, ANALYSIS_VERSION).unwrap();
    assert_eq!(briefs.len(), first.sessions);
    let b = &briefs[INTERVALS];
    assert_eq!(b.plan_title.as_deref(), Some("5 x 3 min"));
    assert_eq!((b.running, b.work_intervals), (Some(true), Some(5)));
    assert_eq!(b.sport.as_deref(), Some("running"));
    let athlete = ws.roster.athlete("ines-aldana").unwrap();
    assert_eq!(
        b.inputs_digest.as_deref(),
        Some(athlete.inputs_digest.as_str())
    );
    let ines = ws
        .journal
        .summary_briefs(Some("ines-aldana"), ANALYSIS_VERSION)
        .unwrap();
    assert!(ines.contains_key(INTERVALS) && !ines.contains_key(LONG));

    // A command that needs the review makes the damaged summary again.
    let review = ws.refresh(INTERVALS, Utc::now()).unwrap();
    assert_eq!(review.work().count(), 5);
    assert_ne!(summary_json(&journal, INTERVALS), "{\"truncated");
}

#[test]
fn queue_titles_come_from_the_columns() {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("journal.sqlite");
    let queue = |expect_ok: bool| {
        let out = cli_support::run(&roster, &journal, &["queue", "--json"]);
        assert_eq!(out.status.code(), Some(0), "{out:?}");
        assert_eq!(out.stderr.is_empty(), expect_ok, "{out:?}");
        serde_json::from_slice::<serde_json::Value>(&out.stdout).unwrap()
    };
    let cold = queue(true);
    damage_summary(&journal, INTERVALS);
    // The same lines although the interval session's summary cannot be parsed.
    let warm = queue(true);
    assert_eq!(warm, cold);
    let e = warm
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["session"] == INTERVALS)
        .unwrap();
    assert_eq!(e["title"], "5 x 3 min");
    assert_eq!(e["work_intervals"], 5);
    assert_eq!(e["sport"], "running");
    // Only the queue read nothing: the damaged summary is still there.
    assert_eq!(summary_json(&journal, INTERVALS), "{\"truncated");
}

#[test]
fn trends_reads_one_athletes_rows_and_remakes_a_damaged_summary() {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("journal.sqlite");
    {
        let mut ws = Workspace::open(&roster, Some(&journal)).unwrap();
        ws.sync(Utc::now(), |_, _| {}).unwrap();
        let rows = ws
            .journal
            .athlete_summaries("ines-aldana", ANALYSIS_VERSION)
            .unwrap();
        let ids: Vec<&str> = rows.iter().map(|(id, _)| id.as_str()).collect();
        // Newest first, this athlete's only, each with its summary.
        assert_eq!(ids.first(), Some(&INTERVALS));
        assert!(ids.contains(&EASY) && !ids.contains(&LONG), "{ids:?}");
        assert!(rows.iter().all(|(_, j)| j.is_some()));
    }
    let before = cli_support::run(&roster, &journal, &["trends", "ines-aldana", "--json"]);
    assert_eq!(before.status.code(), Some(0), "{before:?}");
    damage_summary(&journal, INTERVALS);
    let after = cli_support::run(&roster, &journal, &["trends", "ines-aldana", "--json"]);
    assert_eq!(after.status.code(), Some(0), "{after:?}");
    assert_eq!(after.stdout, before.stdout);
    assert_ne!(summary_json(&journal, INTERVALS), "{\"truncated");
}

#[test]
fn an_upgraded_journal_gets_the_columns_from_its_summaries() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("v4.sqlite");
    {
        let c = Connection::open(&path).unwrap();
        c.pragma_update(None, "application_id", schema::APPLICATION_ID)
            .unwrap();
        for step in &schema::MIGRATIONS[..4] {
            c.execute_batch(step).unwrap();
        }
        c.pragma_update(None, "user_version", 4).unwrap();
        let insert = "INSERT INTO session (session_id, athlete_id, file_path, content_hash,
                start_time, seen_at, summary_json, summary_version, summary_hash, work_intervals)
            VALUES (?1, 'ines', '/r/x.fit', 'h', '2026-03-02T06:00:00.000Z',
                '2026-03-02T06:00:00.000Z', CAST(?2 AS TEXT), 1, 'h', 2)";
        let good = r#"{"analysis_inputs":"d1","running":false,"units":"km",
            "plan":{"title":"Hills","purpose":"p"},
            "session":{"sport":"cycling","distance_m":12000.5}}"#;
        c.execute(insert, rusqlite::params!["ines/good", good.as_bytes()])
            .unwrap();
        c.execute(
            insert,
            rusqlite::params!["ines/bad", b"{\"analysis_inputs\": 1, trunc".as_slice()],
        )
        .unwrap();
        c.execute(
            insert,
            rusqlite::params!["ines/utf8", b"{\"analysis_inputs\":\"\xff\"}".as_slice()],
        )
        .unwrap();
    }
    let j = Journal::open(&path).unwrap();
    assert_eq!(j.check().unwrap().schema_version, schema::current_version());
    let briefs = j.summary_briefs(Some("ines"), 1).unwrap();
    let good = &briefs["ines/good"];
    assert_eq!(good.inputs_digest.as_deref(), Some("d1"));
    assert_eq!(good.plan_title.as_deref(), Some("Hills"));
    assert_eq!(good.sport.as_deref(), Some("cycling"));
    assert_eq!(good.running, Some(false));
    assert_eq!(good.distance_m, Some(12000.5));
    assert_eq!(good.work_intervals, Some(2));
    let bad = &briefs["ines/bad"];
    assert_eq!(
        (bad.inputs_digest.as_deref(), bad.sport.as_deref()),
        (None, None)
    );
    // Not valid UTF-8: read as missing, never an error.
    assert_eq!(briefs["ines/utf8"].inputs_digest, None);
    let warm = j.warm_rows(1).unwrap();
    assert!(warm["ines/good"].summary_current);
    assert_eq!(warm["ines/good"].stat, None);
    assert!(!j.warm_rows(2).unwrap()["ines/good"].summary_current);
}
