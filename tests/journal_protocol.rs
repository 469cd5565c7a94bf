//! The journal's review model: blind protocol, revisions, feedback, stages, queue, reviews
//! that follow the content hash, analysis cache, rulers, bias inputs. Every test runs on both
//! engines (SQLite in memory, then PostgreSQL; see `engines`).

mod engines;

use std::path::PathBuf;

use chrono::{DateTime, Duration, TimeZone, Utc};
use splitdesk::journal::{
    read_note, FeedbackEventKind, Journal, JournalError, Missing, PurposeVerdict, ReviewStage,
    RevisionChange, SessionChange, SessionRecord, SummaryCache,
};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 3, 2, 6, 0, 0).unwrap() + Duration::minutes(minutes)
}

fn record(id: &str, hash: &str, start_min: i64, work: Option<u32>) -> SessionRecord {
    let (athlete, stem) = id.split_once('/').unwrap();
    SessionRecord {
        session_id: id.to_string(),
        athlete_id: athlete.to_string(),
        file_path: PathBuf::from(format!("/roster/{athlete}/activities/{stem}.fit")),
        content_hash: hash.to_string(),
        start: t(start_min),
        summary: work.map(|n| SummaryCache {
            json: format!("{{\"work\":{n}}}"),
            analysis_version: 3,
            work_intervals: n,
            card: None,
        }),
    }
}

fn journal_with(id: &str, work: u32) -> Journal {
    let mut j = engines::journal();
    j.upsert_session(&record(id, "h1", 0, Some(work)), t(0))
        .unwrap();
    j
}

#[test]
fn reveal_needs_every_score_and_the_verdict() {
    engines::both("reveal_needs_every_score_and_the_verdict", || {
        let mut j = journal_with("ines/tue-intervals", 4);
        let err = j.reveal("ines/tue-intervals", t(1)).unwrap_err();
        match &err {
            JournalError::NotYetGraded { missing, .. } => {
                assert_eq!(missing.scores, vec![1, 2, 3, 4]);
                assert!(missing.verdict);
            }
            other => panic!("{other}"),
        }
        j.set_score("ines/tue-intervals", 1, 4, t(2)).unwrap();
        j.set_score("ines/tue-intervals", 2, 3, t(2)).unwrap();
        let err = j.reveal("ines/tue-intervals", t(3)).unwrap_err();
        assert!(
            err.to_string()
                .contains("scores missing for work intervals 3, 4; purpose verdict not set"),
            "{err}"
        );
        j.set_score("ines/tue-intervals", 3, 3, t(4)).unwrap();
        j.set_score("ines/tue-intervals", 4, 2, t(4)).unwrap();
        match j.reveal("ines/tue-intervals", t(5)).unwrap_err() {
            JournalError::NotYetGraded { missing, .. } => assert_eq!(
                missing,
                Missing {
                    scores: vec![],
                    verdict: true
                }
            ),
            other => panic!("{other}"),
        }
        assert_eq!(
            j.review_state("ines/tue-intervals").unwrap().stage,
            ReviewStage::Grading
        );
        j.set_verdict("ines/tue-intervals", PurposeVerdict::Partly, t(6))
            .unwrap();
        assert_eq!(
            j.review_state("ines/tue-intervals").unwrap().stage,
            ReviewStage::Graded
        );
        let permit = j.reveal("ines/tue-intervals", t(7)).unwrap();
        assert_eq!(permit.session_id(), "ines/tue-intervals");
        let state = j.review_state("ines/tue-intervals").unwrap();
        assert_eq!(state.stage, ReviewStage::Revealed);
        assert_eq!(state.revealed_at, Some(t(7)));
        // A second reveal keeps the first time.
        j.reveal("ines/tue-intervals", t(9)).unwrap();
        assert_eq!(
            j.review_state("ines/tue-intervals").unwrap().revealed_at,
            Some(t(7))
        );
    });
}

#[test]
fn zero_work_intervals_need_the_verdict_only() {
    engines::both("zero_work_intervals_need_the_verdict_only", || {
        let mut j = journal_with("ines/easy", 0);
        match j.reveal("ines/easy", t(1)).unwrap_err() {
            JournalError::NotYetGraded { missing, .. } => {
                assert!(missing.scores.is_empty());
                assert!(missing.verdict);
                assert_eq!(missing.to_string(), "purpose verdict not set");
            }
            other => panic!("{other}"),
        }
        assert!(matches!(
            j.set_score("ines/easy", 1, 3, t(1)),
            Err(JournalError::NoSuchInterval { .. })
        ));
        j.set_verdict("ines/easy", PurposeVerdict::Met, t(2))
            .unwrap();
        j.reveal("ines/easy", t(3)).unwrap();
    });
}

#[test]
fn grading_validates_and_needs_analysis() {
    engines::both("grading_validates_and_needs_analysis", || {
        let mut j = engines::journal();
        assert!(matches!(
            j.set_score("nobody/x", 1, 3, t(0)),
            Err(JournalError::UnknownSession { .. })
        ));
        j.upsert_session(&record("ines/raw", "h", 0, None), t(0))
            .unwrap();
        assert!(matches!(
            j.set_score("ines/raw", 1, 3, t(0)),
            Err(JournalError::NotAnalysed { .. })
        ));
        assert!(matches!(
            j.reveal("ines/raw", t(0)),
            Err(JournalError::NotAnalysed { .. })
        ));
        let mut j = journal_with("ines/a", 2);
        assert!(matches!(
            j.set_score("ines/a", 1, 0, t(0)),
            Err(JournalError::InvalidScore { .. })
        ));
        assert!(matches!(
            j.set_score("ines/a", 1, 6, t(0)),
            Err(JournalError::InvalidScore { .. })
        ));
        assert!(matches!(
            j.set_score("ines/a", 3, 3, t(0)),
            Err(JournalError::NoSuchInterval { .. })
        ));
        assert!(matches!(
            j.set_score("ines/a", 0, 3, t(0)),
            Err(JournalError::NoSuchInterval { .. })
        ));
        // A failed write leaves nothing behind.
        assert_eq!(j.check().unwrap().reviews, 0);
    });
}

#[test]
fn before_reveal_changes_replace_after_reveal_they_are_revisions() {
    engines::both(
        "before_reveal_changes_replace_after_reveal_they_are_revisions",
        || {
            let mut j = journal_with("ines/s", 2);
            j.set_score("ines/s", 1, 2, t(1)).unwrap();
            j.set_score("ines/s", 1, 3, t(2)).unwrap(); // still blind: replaces
            j.set_score("ines/s", 2, 4, t(2)).unwrap();
            j.set_verdict("ines/s", PurposeVerdict::Missed, t(2))
                .unwrap();
            j.set_verdict("ines/s", PurposeVerdict::Met, t(3)).unwrap();
            assert!(j.revisions("ines/s").unwrap().is_empty());
            let state = j.review_state("ines/s").unwrap();
            assert_eq!(state.scores[0].blind, 3);
            assert_eq!(state.scores[0].given_at, t(2));
            assert_eq!(state.verdict.as_ref().unwrap().blind, PurposeVerdict::Met);

            j.reveal("ines/s", t(4)).unwrap();
            j.set_score("ines/s", 1, 5, t(5)).unwrap();
            j.set_score("ines/s", 1, 5, t(6)).unwrap(); // unchanged: nothing recorded
            j.set_score("ines/s", 1, 4, t(7)).unwrap();
            j.set_verdict("ines/s", PurposeVerdict::Partly, t(8))
                .unwrap();

            let state = j.review_state("ines/s").unwrap();
            assert_eq!(state.scores[0].blind, 3, "blind value never overwritten");
            assert_eq!(state.scores[0].current, 4);
            assert_eq!(state.scores[1].blind, 4);
            assert_eq!(state.scores[1].current, 4);
            let v = state.verdict.unwrap();
            assert_eq!(
                (v.blind, v.current),
                (PurposeVerdict::Met, PurposeVerdict::Partly)
            );

            let revs = j.revisions("ines/s").unwrap();
            assert_eq!(revs.len(), 3);
            assert_eq!(
                revs[0].change,
                RevisionChange::Score {
                    interval: 1,
                    old: 3,
                    new: 5
                }
            );
            assert_eq!(revs[0].at, t(5));
            assert_eq!(
                revs[1].change,
                RevisionChange::Score {
                    interval: 1,
                    old: 5,
                    new: 4
                }
            );
            assert_eq!(
                revs[2].change,
                RevisionChange::Verdict {
                    old: PurposeVerdict::Met,
                    new: PurposeVerdict::Partly
                }
            );

            let bias = j.bias_inputs().unwrap();
            assert_eq!(bias.len(), 1);
            let b = &bias[0];
            assert_eq!(b.athlete, "ines");
            assert_eq!(b.blind_scores, vec![(1, 3), (2, 4)]);
            assert_eq!(b.revised_scores, vec![(1, 4), (2, 4)]);
            assert_eq!(b.blind_verdict, Some(PurposeVerdict::Met));
            assert_eq!(b.revised_verdict, Some(PurposeVerdict::Partly));
            assert_eq!(b.revisions, 3);
            assert_eq!(b.revealed_at, t(4));
        },
    );
}

#[test]
fn notes_need_a_permit() {
    engines::both("notes_need_a_permit", || {
        let dir = tempfile::tempdir().unwrap();
        let athlete = dir.path().join("ines");
        std::fs::create_dir_all(athlete.join("activities")).unwrap();
        std::fs::create_dir_all(athlete.join("notes")).unwrap();
        let note = athlete.join("notes/tue.txt");
        std::fs::write(&note, "legs felt heavy\n").unwrap();
        std::fs::write(athlete.join("notes/wed.txt"), "someone else's note").unwrap();

        let mut j = engines::journal();
        let mut rec = record("ines/tue", "h", 0, Some(1));
        rec.file_path = athlete.join("activities/tue.fit");
        j.upsert_session(&rec, t(0)).unwrap();
        j.set_score("ines/tue", 1, 3, t(1)).unwrap();
        j.set_verdict("ines/tue", PurposeVerdict::Met, t(1))
            .unwrap();
        let permit = j.reveal("ines/tue", t(2)).unwrap();
        assert_eq!(permit.note_path().as_deref(), Some(note.as_path()));
        assert_eq!(
            read_note(&permit, Some(&note), Some("embedded")).as_deref(),
            Some("legs felt heavy\n")
        );
        // No note file: the embedded note.
        assert_eq!(
            read_note(&permit, None, Some("from the file")).as_deref(),
            Some("from the file")
        );
        // A permit opens only its own session's note.
        assert_eq!(
            read_note(&permit, Some(&athlete.join("notes/wed.txt")), None),
            None
        );
        assert_eq!(read_note(&permit, None, Some("   ")), None);
    });
}

#[test]
fn feedback_after_reveal_with_history_and_events() {
    engines::both("feedback_after_reveal_with_history_and_events", || {
        let mut j = journal_with("ines/s", 1);
        assert!(matches!(
            j.save_feedback("ines/s", "draft", t(1)),
            Err(JournalError::NotRevealed { .. })
        ));
        assert!(matches!(
            j.record_feedback_event("ines/s", FeedbackEventKind::Copied, t(1)),
            Err(JournalError::NotRevealed { .. })
        ));
        j.set_score("ines/s", 1, 4, t(1)).unwrap();
        j.set_verdict("ines/s", PurposeVerdict::Met, t(1)).unwrap();
        j.reveal("ines/s", t(2)).unwrap();
        j.save_feedback("ines/s", "Good pacing.", t(3)).unwrap();
        j.save_feedback("ines/s", "Good pacing; easy tomorrow.", t(4))
            .unwrap();
        let hist = j.feedback_history("ines/s").unwrap();
        assert_eq!(hist.len(), 2);
        assert_eq!(hist[0].body, "Good pacing.");
        assert_eq!(hist[0].saved_at, t(3));
        assert_eq!(
            j.feedback("ines/s").unwrap().unwrap().body,
            "Good pacing; easy tomorrow."
        );
        assert_eq!(
            j.review_state("ines/s").unwrap().stage,
            ReviewStage::Revealed
        );
        j.record_feedback_event("ines/s", FeedbackEventKind::Copied, t(5))
            .unwrap();
        j.record_feedback_event("ines/s", FeedbackEventKind::Exported, t(6))
            .unwrap();
        let ev = j.feedback_events("ines/s").unwrap();
        assert_eq!(ev.len(), 2);
        assert_eq!(ev[0].kind, FeedbackEventKind::Copied);
        assert_eq!(ev[1].at, t(6));
        assert_eq!(
            j.review_state("ines/s").unwrap().stage,
            ReviewStage::FeedbackDone
        );
    });
}

#[test]
fn queue_lists_unreviewed_oldest_first() {
    engines::both("queue_lists_unreviewed_oldest_first", || {
        let mut j = engines::journal();
        j.upsert_session(&record("ines/b", "hb", 20, Some(1)), t(0))
            .unwrap();
        j.upsert_session(&record("ines/a", "ha", 10, Some(1)), t(0))
            .unwrap();
        j.upsert_session(&record("tom/c", "hc", 5, Some(0)), t(0))
            .unwrap();
        j.upsert_session(&record("tom/d", "hd", 30, Some(0)), t(0))
            .unwrap();
        // tom/c: revealed, out of the queue. ines/a: graded, still in it.
        j.set_verdict("tom/c", PurposeVerdict::Met, t(1)).unwrap();
        j.reveal("tom/c", t(1)).unwrap();
        j.set_score("ines/a", 1, 2, t(1)).unwrap();
        j.set_verdict("ines/a", PurposeVerdict::Missed, t(1))
            .unwrap();

        let q = j.unreviewed(None).unwrap();
        let ids: Vec<&str> = q.iter().map(|e| e.session_id.as_str()).collect();
        assert_eq!(ids, vec!["ines/a", "ines/b", "tom/d"]);
        assert_eq!(q[0].stage, ReviewStage::Graded);
        assert_eq!(q[1].stage, ReviewStage::New);
        assert_eq!(q[0].start, t(10));

        let q = j.unreviewed(Some("tom")).unwrap();
        assert_eq!(q.len(), 1);
        assert_eq!(q[0].session_id, "tom/d");

        let counts = j.unreviewed_counts().unwrap();
        assert_eq!(counts.get("ines"), Some(&2));
        assert_eq!(counts.get("tom"), Some(&1));

        let all = j.sessions(Some("tom")).unwrap();
        assert_eq!(all[0].session_id, "tom/d", "newest first");
        assert_eq!(all[1].stage, ReviewStage::Revealed);
    });
}

#[test]
fn reviews_follow_the_content_hash() {
    engines::both("reviews_follow_the_content_hash", || {
        let mut j = journal_with("ines/morning", 1);
        j.set_score("ines/morning", 1, 4, t(1)).unwrap();
        j.add_ruler("ines/morning", 60.0, 600.0, t(1)).unwrap();

        // Renamed: same bytes, new stem. Summary comes along from the cache too.
        let mut renamed = record("ines/morning-tempo", "h1", 0, None);
        renamed.file_path = PathBuf::from("/roster/ines/activities/morning-tempo.fit");
        assert_eq!(
            j.upsert_session(&renamed, t(2)).unwrap(),
            SessionChange::FoundReview
        );
        let st = j.review_state("ines/morning-tempo").unwrap();
        assert_eq!(st.scores.len(), 1);
        assert_eq!(st.scores[0].blind, 4);
        assert_eq!(st.stage, ReviewStage::Grading);
        assert_eq!(j.rulers("ines/morning-tempo").unwrap().len(), 1);
        assert_eq!(
            j.cached_summary("ines/morning-tempo", 3)
                .unwrap()
                .as_deref(),
            Some("{\"work\":1}")
        );
        // The old id is gone from the roster: forget it; the review stays.
        assert_eq!(j.retain_sessions(&["ines/morning-tempo"]).unwrap(), 1);
        j.set_verdict("ines/morning-tempo", PurposeVerdict::Met, t(3))
            .unwrap();
        j.reveal("ines/morning-tempo", t(4)).unwrap();

        // The file's content changed after grading: flagged, old grades kept.
        assert_eq!(
            j.upsert_session(&record("ines/morning-tempo", "h2", 0, Some(2)), t(5))
                .unwrap(),
            SessionChange::ContentChanged
        );
        let st = j.review_state("ines/morning-tempo").unwrap();
        assert!(st.content_changed);
        assert_eq!(st.scores[0].blind, 4);
        assert_eq!(st.stage, ReviewStage::Revealed);
        assert_eq!(st.work_intervals, Some(1), "frozen at the reveal");
        assert!(j
            .unreviewed(None)
            .unwrap()
            .iter()
            .all(|e| e.session_id != "ines/morning-tempo"));
        assert!(j.sessions(None).unwrap()[0].content_changed);

        // Start over for the new content; the old review stays in the journal.
        assert!(j.restart_review("ines/morning-tempo").unwrap());
        let st = j.review_state("ines/morning-tempo").unwrap();
        assert_eq!(st.stage, ReviewStage::New);
        assert!(!st.content_changed);
        assert_eq!(st.missing.scores, vec![1, 2]);
        assert_eq!(j.check().unwrap().reviews, 1);
        assert_eq!(j.check().unwrap().scores, 1);
        assert!(!j.restart_review("ines/morning-tempo").unwrap());
    });
}

#[test]
fn analysis_cache_checks_version_and_content() {
    engines::both("analysis_cache_checks_version_and_content", || {
        let mut j = journal_with("ines/s", 3);
        assert_eq!(
            j.cached_summary("ines/s", 3).unwrap().as_deref(),
            Some("{\"work\":3}")
        );
        assert_eq!(j.cached_summary("ines/s", 4).unwrap(), None);
        assert_eq!(j.cached_summary("nobody/x", 3).unwrap(), None);
        // Refreshing without a summary keeps it.
        assert_eq!(
            j.upsert_session(&record("ines/s", "h1", 0, None), t(1))
                .unwrap(),
            SessionChange::Same
        );
        assert!(j.cached_summary("ines/s", 3).unwrap().is_some());
        // New content: cache miss, work intervals unknown until analysed again.
        j.upsert_session(&record("ines/s", "h2", 0, None), t(2))
            .unwrap();
        assert_eq!(j.cached_summary("ines/s", 3).unwrap(), None);
        assert_eq!(j.review_state("ines/s").unwrap().work_intervals, None);
        let s = SummaryCache {
            json: "{}".into(),
            analysis_version: 3,
            work_intervals: 5,
            card: None,
        };
        // A result computed for the old content is dropped.
        assert!(!j.store_summary("ines/s", "h1", &s).unwrap());
        assert!(j.store_summary("ines/s", "h2", &s).unwrap());
        assert_eq!(
            j.cached_summary("ines/s", 3).unwrap().as_deref(),
            Some("{}")
        );
        assert_eq!(j.review_state("ines/s").unwrap().work_intervals, Some(5));
    });
}

#[test]
fn rulers_add_list_clear() {
    engines::both("rulers_add_list_clear", || {
        let mut j = journal_with("ines/s", 1);
        assert!(j.rulers("ines/s").unwrap().is_empty());
        let r1 = j.add_ruler("ines/s", 120.0, 900.5, t(1)).unwrap();
        j.add_ruler("ines/s", 1000.0, 1600.0, t(2)).unwrap();
        assert!(matches!(
            j.add_ruler("ines/s", 10.0, 10.0, t(2)),
            Err(JournalError::InvalidRuler { .. })
        ));
        assert!(matches!(
            j.add_ruler("ines/s", f64::NAN, 10.0, t(2)),
            Err(JournalError::InvalidRuler { .. })
        ));
        let rs = j.rulers("ines/s").unwrap();
        assert_eq!(rs.len(), 2);
        assert_eq!(rs[0], r1);
        assert_eq!(rs[1].from_s, 1000.0);
        // Rulers are not grades.
        assert_eq!(j.review_state("ines/s").unwrap().stage, ReviewStage::New);
        assert_eq!(j.clear_rulers("ines/s").unwrap(), 2);
        assert!(j.rulers("ines/s").unwrap().is_empty());
    });
}
