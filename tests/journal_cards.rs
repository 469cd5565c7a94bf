//! The session cards the journal keeps beside the analysis cache: written in the same
//! transaction as the summary, current only for the session's present content, the analysis
//! version and the athlete inputs they were made under, carried over to a renamed file,
//! dropped when the file changes, becomes unreadable or leaves the roster. Every test runs on
//! both engines (see `engines`) except the upgrade of an old SQLite schema, which writes a
//! SQLite file of that schema with rusqlite and stays SQLite-only.

mod engines;

use std::path::PathBuf;

use chrono::{DateTime, Duration, TimeZone, Utc};
use splitdesk::journal::{CardCache, Journal, SessionRecord, SummaryCache};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + Duration::minutes(minutes)
}

const V: u32 = 8;
const DIGEST: &str = "inputs-1";

fn record(id: &str, hash: &str, day_offset: i64, card: Option<&str>) -> SessionRecord {
    let (athlete, stem) = id.split_once('/').unwrap();
    let start = t(day_offset * 24 * 60);
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.to_string(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/{stem}.fit")),
        content_hash: hash.to_string(),
        start,
        summary: Some(SummaryCache {
            json: "{}".into(),
            analysis_version: V,
            work_intervals: 3,
            card: card.map(|json| CardCache {
                json: json.to_string(),
                shape_json: Some(format!("{{\"of\":\"{id}\"}}")),
                kind: "intervals".into(),
                day: start.date_naive().to_string(),
                inputs_digest: DIGEST.into(),
            }),
        }),
    }
}

fn index_ids(j: &Journal, athlete: &str) -> Vec<String> {
    j.card_index(athlete, DIGEST, V)
        .unwrap()
        .into_iter()
        .map(|r| r.session_id)
        .collect()
}

#[test]
fn cards_are_listed_per_athlete_in_start_order_and_read_back() {
    engines::both(
        "cards_are_listed_per_athlete_in_start_order_and_read_back",
        || {
            let mut j = engines::journal();
            j.upsert_session(&record("ines/b", "hb", 2, Some("{\"n\":2}")), t(0))
                .unwrap();
            j.upsert_session(&record("ines/a", "ha", 1, Some("{\"n\":1}")), t(0))
                .unwrap();
            j.upsert_session(&record("marco/a", "hm", 0, Some("{\"n\":3}")), t(0))
                .unwrap();
            assert_eq!(index_ids(&j, "ines"), ["ines/a", "ines/b"]);
            assert_eq!(index_ids(&j, "marco"), ["marco/a"]);
            let rows = j.card_index("ines", DIGEST, V).unwrap();
            assert_eq!(rows[0].day, "2026-03-03");
            assert_eq!(rows[0].kind, "intervals");
            assert_eq!(rows[0].shape_json.as_deref(), Some("{\"of\":\"ines/a\"}"));
            assert_eq!(
                j.card("ines/b", DIGEST, V).unwrap().as_deref(),
                Some("{\"n\":2}")
            );
            // By day, inclusive at both ends.
            let between = j
                .cards_between("ines", DIGEST, V, "2026-03-04", "2026-03-04")
                .unwrap();
            assert_eq!(between, [("ines/b".to_string(), "{\"n\":2}".to_string())]);
        },
    );
}

#[test]
fn a_card_of_another_version_or_other_inputs_is_not_current() {
    engines::both(
        "a_card_of_another_version_or_other_inputs_is_not_current",
        || {
            let mut j = engines::journal();
            j.upsert_session(&record("ines/a", "ha", 1, Some("{}")), t(0))
                .unwrap();
            assert!(j.card("ines/a", DIGEST, V + 1).unwrap().is_none());
            assert!(j.card("ines/a", "inputs-2", V).unwrap().is_none());
            assert!(j.card_index("ines", "inputs-2", V).unwrap().is_empty());
        },
    );
}

#[test]
fn changed_content_drops_the_card_and_a_fresh_summary_brings_it_back() {
    engines::both(
        "changed_content_drops_the_card_and_a_fresh_summary_brings_it_back",
        || {
            let mut j = engines::journal();
            j.upsert_session(&record("ines/a", "ha", 1, Some("{\"old\":1}")), t(0))
                .unwrap();
            // The file changed: the new content is recorded without an analysis yet.
            let mut changed = record("ines/a", "ha2", 1, None);
            changed.summary = None;
            j.upsert_session(&changed, t(1)).unwrap();
            assert!(j.card("ines/a", DIGEST, V).unwrap().is_none());
            assert!(index_ids(&j, "ines").is_empty());
            // The analysis of the new content arrives through the cache path.
            let fresh = record("ines/a", "ha2", 1, Some("{\"new\":1}"));
            assert!(j
                .store_summary("ines/a", "ha2", fresh.summary.as_ref().unwrap())
                .unwrap());
            assert_eq!(
                j.card("ines/a", DIGEST, V).unwrap().as_deref(),
                Some("{\"new\":1}")
            );
            // A stale result (for the old content) never replaces it.
            let stale = record("ines/a", "ha", 1, Some("{\"old\":1}"));
            assert!(!j
                .store_summary("ines/a", "ha", stale.summary.as_ref().unwrap())
                .unwrap());
            assert_eq!(
                j.card("ines/a", DIGEST, V).unwrap().as_deref(),
                Some("{\"new\":1}")
            );
        },
    );
}

#[test]
fn an_unchanged_file_seen_again_keeps_its_card() {
    engines::both("an_unchanged_file_seen_again_keeps_its_card", || {
        let mut j = engines::journal();
        j.upsert_session(&record("ines/a", "ha", 1, Some("{\"n\":1}")), t(0))
            .unwrap();
        let mut again = record("ines/a", "ha", 1, None);
        again.summary = None;
        j.upsert_session(&again, t(5)).unwrap();
        assert_eq!(
            j.card("ines/a", DIGEST, V).unwrap().as_deref(),
            Some("{\"n\":1}")
        );
    });
}

#[test]
fn a_renamed_file_finds_the_card_of_its_content() {
    engines::both("a_renamed_file_finds_the_card_of_its_content", || {
        let mut j = engines::journal();
        j.upsert_session(&record("ines/a", "ha", 1, Some("{\"n\":1}")), t(0))
            .unwrap();
        let mut renamed = record("ines/a-renamed", "ha", 1, None);
        renamed.summary = None;
        j.upsert_session(&renamed, t(5)).unwrap();
        j.retain_sessions(&["ines/a-renamed"]).unwrap();
        assert_eq!(index_ids(&j, "ines"), ["ines/a-renamed"]);
        assert_eq!(
            j.card("ines/a-renamed", DIGEST, V).unwrap().as_deref(),
            Some("{\"n\":1}")
        );
        assert!(j.card("ines/a", DIGEST, V).unwrap().is_none());
    });
}

#[test]
fn an_unreadable_file_has_no_card() {
    engines::both("an_unreadable_file_has_no_card", || {
        let mut j = engines::journal();
        let rec = record("ines/a", "ha", 1, Some("{\"n\":1}"));
        j.upsert_session(&rec, t(0)).unwrap();
        j.record_unreadable(&rec, "the file is cut short", t(1))
            .unwrap();
        assert!(j.card("ines/a", DIGEST, V).unwrap().is_none());
        assert!(index_ids(&j, "ines").is_empty());
    });
}

// SQLite-only: the old schema is written into a SQLite file with rusqlite.
#[test]
fn a_journal_of_the_schema_before_cards_is_upgraded_with_an_empty_card_table() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("j.sqlite");
    {
        let c = rusqlite::Connection::open(&path).unwrap();
        c.pragma_update(
            None,
            "application_id",
            splitdesk::journal::schema::APPLICATION_ID,
        )
        .unwrap();
        for step in &splitdesk::journal::schema::MIGRATIONS[..3] {
            c.execute_batch(step).unwrap();
        }
        c.pragma_update(None, "user_version", 3).unwrap();
    }
    let mut j = Journal::open(&path).unwrap();
    assert!(j.check().unwrap().is_ok());
    j.upsert_session(&record("ines/a", "ha", 1, Some("{}")), t(0))
        .unwrap();
    assert_eq!(index_ids(&j, "ines"), ["ines/a"]);
}
