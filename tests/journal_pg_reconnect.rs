//! A journal server that drops the connection (restarted, or the network cut) costs the
//! coach at most the action in flight: the next one connects again, and the change missed
//! meanwhile counts as a change from elsewhere, so a workstation reads its lists again.

#[path = "pg_support/mod.rs"]
mod pg_support;

use std::path::PathBuf;

use chrono::{TimeZone, Utc};
use splitdesk::journal::{Journal, JournalError, PurposeVerdict, SessionRecord, SummaryCache};

fn record() -> SessionRecord {
    SessionRecord {
        session_id: "ines/reps".into(),
        athlete_id: "ines".into(),
        file_path: PathBuf::from("/roster/ines/activities/reps.fit"),
        content_hash: "hash-of-reps".into(),
        start: Utc.with_ymd_and_hms(2026, 11, 2, 6, 0, 0).unwrap(),
        summary: Some(SummaryCache {
            json: "{}".into(),
            analysis_version: 1,
            work_intervals: 2,
            card: None,
        }),
    }
}

/// Close every other connection to the database, as a server restart would.
fn drop_connections(url: &str) {
    let mut admin = pg_support::connect(url).expect("connect to the test server");
    let db = url
        .rsplit('/')
        .next()
        .and_then(|s| s.split('?').next())
        .unwrap()
        .to_string();
    admin
        .execute(
            "SELECT pg_terminate_backend(pid) FROM pg_stat_activity
             WHERE datname = $1 AND pid <> pg_backend_pid()",
            &[&db],
        )
        .unwrap();
}

#[test]
fn the_next_action_after_a_dropped_connection_works() {
    let Some(url) = pg_support::fresh_database("pg_reconnect") else {
        return;
    };
    let now = Utc::now();
    let mut j = Journal::open_url(&url).unwrap();
    j.upsert_session(&record(), now).unwrap();
    let seen = j.data_version().unwrap();
    drop_connections(&url);
    std::thread::sleep(std::time::Duration::from_millis(100));
    // The action in flight may fail (nothing saved), said as a lost connection; the next
    // one connects again.
    match j.grade(
        "ines/reps",
        &[(1, 4), (2, 3)],
        Some(PurposeVerdict::Met),
        now,
    ) {
        Ok(()) => {}
        Err(JournalError::Connect { .. } | JournalError::Server { .. }) => {
            j.grade(
                "ines/reps",
                &[(1, 4), (2, 3)],
                Some(PurposeVerdict::Met),
                now,
            )
            .unwrap();
        }
        Err(other) => panic!("{other:?}"),
    }
    let st = j.review_state("ines/reps").unwrap();
    assert_eq!(st.scores.len(), 2);
    assert!(st.missing.is_empty());
    // The workstation learns that it may have missed a change.
    assert!(j.data_version().unwrap() > seen);
    drop(j);
    pg_support::drop_database(&url);
}
