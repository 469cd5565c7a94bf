//! A coaching staff on one journal, on both engines (see `engines`): the staff list, the
//! assignments, who may write, each coach's own blind reviews, colleague grades only after
//! one's own blind grading, the queue's own athletes first, the feedback version check
//! between two workstations of the same coach, and the advisory "reviewing now" marks.

mod engines;

use std::collections::BTreeMap;

use chrono::{DateTime, Duration, TimeZone, Utc};
use splitdesk::journal::{
    check_coach_name, ColleagueGrades, FeedbackEventKind, Journal, JournalError, Missing,
    PurposeVerdict, ReviewStage, RevisionChange, SessionRecord, StaffAdded, MAX_COACH_NAME,
    REVIEWING_FOR,
};

fn t(minutes: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 11, 2, 6, 0, 0).unwrap() + Duration::minutes(minutes)
}

fn record(id: &str, start_min: i64, work: u32) -> SessionRecord {
    engines::analysed_record(id, t(start_min), work)
}

const REPS: &str = "ines/reps";
const EASY: &str = "ines/easy";
const LONG: &str = "marco/long";
const HILLS: &str = "tom/hills";

fn ids(entries: &[splitdesk::journal::QueueEntry]) -> Vec<&str> {
    entries.iter().map(|e| e.session_id.as_str()).collect()
}

/// A whole blind grading of REPS (three work intervals) and its verdict.
fn grade_reps(j: &mut Journal, scores: [u8; 3], verdict: PurposeVerdict, at: DateTime<Utc>) {
    j.grade(
        REPS,
        &[(1, scores[0]), (2, scores[1]), (3, scores[2])],
        Some(verdict),
        at,
    )
    .unwrap();
}

#[test]
fn staff_add_list_remove_and_assign() {
    engines::both("staff_add_list_remove", || {
        let mut j = engines::journal();
        assert_eq!(j.staff_size().unwrap(), 0);
        assert!(j.staff().unwrap().is_empty());
        assert_eq!(j.coach(), "");

        let added = j.staff_add("Arne", t(1)).unwrap();
        assert_eq!(
            added,
            StaffAdded {
                returned: false,
                took_over_reviews: 0
            }
        );
        j.staff_add("Beth", t(2)).unwrap();
        assert_eq!(j.staff_size().unwrap(), 2);
        let err = j.staff_add("Arne", t(3)).unwrap_err();
        assert!(
            matches!(&err, JournalError::AlreadyOnStaff { coach, .. } if coach == "Arne"),
            "{err:?}"
        );
        assert_eq!(
            err.to_string(),
            format!(
                "{}: coach \"Arne\" is on the staff already",
                j.path().display()
            )
        );

        j.assign("ines", Some("Arne"), t(4)).unwrap();
        j.assign("marco", Some("Beth"), t(4)).unwrap();
        j.assign("tom", Some("Beth"), t(4)).unwrap();
        let err = j.assign("zoe", Some("Nobody"), t(4)).unwrap_err();
        assert!(
            matches!(&err, JournalError::UnknownCoach { coach, staff: 2, .. } if coach == "Nobody"),
            "{err:?}"
        );
        // Reassigning replaces; unassigning removes.
        j.assign("tom", Some("Arne"), t(5)).unwrap();
        j.assign("marco", None, t(5)).unwrap();
        let want: BTreeMap<String, String> = [("ines", "Arne"), ("tom", "Arne")]
            .into_iter()
            .map(|(a, c)| (a.to_string(), c.to_string()))
            .collect();
        assert_eq!(j.assignments().unwrap(), want);
        j.assign("marco", Some("Beth"), t(6)).unwrap();

        let staff = j.staff().unwrap();
        let names: Vec<&str> = staff.iter().map(|m| m.name.as_str()).collect();
        assert_eq!(names, ["Arne", "Beth"]);
        assert_eq!(staff[0].added_at, t(1));
        assert_eq!(staff[0].athletes, ["ines", "tom"]);
        assert_eq!(staff[1].athletes, ["marco"]);
        assert_eq!(staff[1].removed_at, None);
        assert_eq!(staff[0].reviews, 0);

        // Removing a coach: kept in the list with the time, athletes unassigned.
        j.staff_remove("Beth", t(7)).unwrap();
        assert_eq!(j.staff_size().unwrap(), 1);
        let staff = j.staff().unwrap();
        assert_eq!(staff[1].name, "Beth");
        assert_eq!(staff[1].removed_at, Some(t(7)));
        assert!(staff[1].athletes.is_empty());
        assert_eq!(j.assignments().unwrap().get("marco"), None);
        // A removed coach can be assigned no athlete.
        assert!(matches!(
            j.assign("marco", Some("Beth"), t(8)),
            Err(JournalError::UnknownCoach { staff: 1, .. })
        ));
        // The last coach stays.
        let err = j.staff_remove("Arne", t(8)).unwrap_err();
        assert!(
            matches!(&err, JournalError::LastCoach { coach, .. } if coach == "Arne"),
            "{err:?}"
        );
        assert_eq!(
            err.to_string(),
            format!(
                "{}: coach \"Arne\" is the last coach of the staff and cannot be removed; \
                 add another coach first",
                j.path().display()
            )
        );
        assert_eq!(j.staff_size().unwrap(), 1);
        assert!(matches!(
            j.staff_remove("Nobody", t(8)),
            Err(JournalError::UnknownCoach { .. })
        ));
        assert!(matches!(
            j.staff_remove("Beth", t(8)),
            Err(JournalError::UnknownCoach { .. })
        ));
        // A removed coach comes back.
        assert_eq!(
            j.staff_add("Beth", t(9)).unwrap(),
            StaffAdded {
                returned: true,
                took_over_reviews: 0
            }
        );
        assert_eq!(j.staff_size().unwrap(), 2);
        assert_eq!(j.staff().unwrap()[1].removed_at, None);
    });
}

#[test]
fn the_first_coach_takes_over_the_single_coachs_reviews() {
    engines::both("first_coach_takes_over", || {
        let mut j = engines::journal();
        for (i, id) in [REPS, EASY, LONG, HILLS].into_iter().enumerate() {
            let work = if id == REPS { 3 } else { 0 };
            j.upsert_session(&record(id, i as i64 * 10, work), t(0))
                .unwrap();
        }
        // The single coach, unnamed: two grades, one reveal, one session marked seen.
        j.set_score(REPS, 1, 4, t(1)).unwrap();
        j.set_verdict(EASY, PurposeVerdict::Met, t(1)).unwrap();
        j.reveal(EASY, t(2)).unwrap();
        j.mark_seen(LONG, t(3)).unwrap();
        assert_eq!(j.check().unwrap().reviews, 3);

        let added = j.staff_add("Arne", t(4)).unwrap();
        assert_eq!(added.took_over_reviews, 3);
        assert!(!added.returned);
        assert_eq!(j.staff().unwrap()[0].reviews, 3);
        // Only the first coach takes over.
        assert_eq!(j.staff_add("Beth", t(5)).unwrap().took_over_reviews, 0);
        assert_eq!(j.staff().unwrap()[1].reviews, 0);

        // The handle without a coach now sees no review of its own (and may not write).
        assert_eq!(j.review_state(REPS).unwrap().stage, ReviewStage::New);
        j.set_coach("Arne").unwrap();
        assert_eq!(j.coach(), "Arne");
        let st = j.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::Grading);
        assert_eq!(st.scores.len(), 1);
        assert_eq!(st.scores[0].blind, 4);
        assert_eq!(j.review_state(EASY).unwrap().stage, ReviewStage::Revealed);
        assert!(j.revealed_permit(EASY).unwrap().is_some());
        assert_eq!(j.review_state(LONG).unwrap().stage, ReviewStage::Seen);
        assert_eq!(j.review_state(HILLS).unwrap().stage, ReviewStage::New);
        // Beth starts with nothing.
        j.set_coach("Beth").unwrap();
        assert_eq!(j.review_state(EASY).unwrap().stage, ReviewStage::New);
        assert!(j.revealed_permit(EASY).unwrap().is_none());
        assert_eq!(ids(&j.unreviewed(None).unwrap()), [REPS, EASY, LONG, HILLS]);
    });
}

#[test]
fn who_may_write() {
    engines::both("who_may_write", || {
        let mut j = engines::journal();
        j.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        // A journal without a staff knows no named coach.
        let err = j.set_coach("Arne").unwrap_err();
        assert!(
            matches!(&err, JournalError::UnknownCoach { coach, staff: 0, .. } if coach == "Arne"),
            "{err:?}"
        );
        assert_eq!(j.coach(), "");

        j.staff_add("Arne", t(1)).unwrap();
        j.staff_add("Beth", t(1)).unwrap();
        // No coach on a staff journal: no write of a coach's record.
        let err = j.set_score(REPS, 1, 3, t(2)).unwrap_err();
        assert!(
            matches!(err, JournalError::NoCoach { staff: 2, .. }),
            "{err:?}"
        );
        assert_eq!(
            err.to_string(),
            format!(
                "{}: this journal is shared by a staff of 2 coaches; say which one you are \
                 with `name` under [coach] in the config file, $SPLITDESK_COACH, or --as NAME",
                j.path().display()
            )
        );
        assert!(matches!(
            j.mark_seen(REPS, t(2)),
            Err(JournalError::NoCoach { .. })
        ));
        assert!(matches!(
            j.add_ruler(REPS, 10.0, 20.0, t(2)),
            Err(JournalError::NoCoach { .. })
        ));
        assert!(matches!(
            j.set_coach(""),
            Err(JournalError::NoCoach { staff: 2, .. })
        ));
        assert!(matches!(
            j.set_coach("Nobody"),
            Err(JournalError::UnknownCoach { staff: 2, .. })
        ));
        assert_eq!(j.check().unwrap().reviews, 0, "nothing was written");

        // A coach writes; once removed, no more (their records stay).
        j.set_coach("Beth").unwrap();
        j.set_score(REPS, 1, 3, t(3)).unwrap();
        j.staff_remove("Beth", t(4)).unwrap();
        let err = j.set_score(REPS, 2, 3, t(5)).unwrap_err();
        assert!(
            matches!(&err, JournalError::UnknownCoach { coach, staff: 1, .. } if coach == "Beth"),
            "{err:?}"
        );
        assert_eq!(
            err.to_string(),
            format!(
                "{}: coach \"Beth\" is not on this journal's staff (1 coach); see `splitdesk \
                 staff list`, or add them with `splitdesk staff add`",
                j.path().display()
            )
        );
        assert!(matches!(
            j.set_verdict(REPS, PurposeVerdict::Met, t(5)),
            Err(JournalError::UnknownCoach { .. })
        ));
        assert!(matches!(
            j.mark_seen(REPS, t(5)),
            Err(JournalError::UnknownCoach { .. })
        ));
        let st = j.review_state(REPS).unwrap();
        assert_eq!(st.scores.len(), 1, "Beth's record stays, nothing added");
        assert!(st.verdict.is_none());
        assert_eq!(j.check().unwrap().scores, 1);
        assert!(matches!(
            j.set_coach("Beth"),
            Err(JournalError::UnknownCoach { .. })
        ));
    });
}

#[test]
fn bad_coach_names_are_refused() {
    let long = "x".repeat(MAX_COACH_NAME + 1);
    let longest = "é".repeat(MAX_COACH_NAME);
    for bad in [
        "",
        " Arne",
        "Arne ",
        "Ar\u{7}ne",
        "\u{1b}[31mArne",
        "Ar\u{202E}ne",
        long.as_str(),
    ] {
        assert!(check_coach_name(bad).is_err(), "{bad:?}");
    }
    assert_eq!(
        check_coach_name(""),
        Err("a coach name cannot be empty".to_string())
    );
    assert_eq!(
        check_coach_name(&long),
        Err("a coach name has at most 64 characters".to_string())
    );
    assert_eq!(
        check_coach_name("\u{1b}[31mArne"),
        Err("a coach name cannot hold control characters".to_string())
    );
    assert_eq!(
        check_coach_name(" Arne"),
        Err("a coach name cannot start or end with a space".to_string())
    );
    // 64 characters (128 bytes) and an inner space are fine.
    assert_eq!(check_coach_name(&longest), Ok(()));
    assert_eq!(check_coach_name("Ines M. Ortega"), Ok(()));

    engines::both("bad_coach_names", || {
        let mut j = engines::journal();
        for bad in ["", " Arne", "Ar\u{7}ne", "\u{1b}[31mArne", long.as_str()] {
            let err = j.staff_add(bad, t(1)).unwrap_err();
            assert!(
                matches!(err, JournalError::BadCoachName { .. }),
                "{bad:?}: {err:?}"
            );
            // The name is shown, but never with its control characters.
            let text = err.to_string();
            assert!(
                !text.contains('\u{1b}') && !text.contains('\u{7}'),
                "{text:?}"
            );
        }
        assert_eq!(j.staff_size().unwrap(), 0, "nothing was added");
        j.staff_add(&longest, t(2)).unwrap();
        j.staff_add("Ines M. Ortega", t(2)).unwrap();
        assert_eq!(j.staff_size().unwrap(), 2);
    });
}

/// Arne and Beth on two workstations (two handles on one journal); REPS has three work
/// intervals. Arne grades, reveals, revises and writes feedback before Beth starts.
#[test]
fn blind_per_coach() {
    engines::both("blind_per_coach", || {
        let place = engines::place();
        let mut a = place.open();
        a.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        a.upsert_session(&record(EASY, 10, 0), t(0)).unwrap();
        a.staff_add("Arne", t(1)).unwrap();
        a.staff_add("Beth", t(1)).unwrap();
        a.set_coach("Arne").unwrap();
        let mut b = place.open();
        b.set_coach("Beth").unwrap();

        grade_reps(&mut a, [4, 3, 5], PurposeVerdict::Met, t(2));
        a.reveal(REPS, t(3)).unwrap();
        a.set_score(REPS, 2, 2, t(4)).unwrap(); // a revision after the reveal
        a.set_verdict(REPS, PurposeVerdict::Partly, t(4)).unwrap();
        a.save_feedback(REPS, "Strong last rep.", t(5)).unwrap();
        a.record_feedback_event(REPS, FeedbackEventKind::Copied, t(6))
            .unwrap();
        assert_eq!(
            a.review_state(REPS).unwrap().stage,
            ReviewStage::FeedbackDone
        );

        // Beth sees none of it.
        let st = b.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::New);
        assert!(st.scores.is_empty());
        assert!(st.verdict.is_none());
        assert!(st.revealed_at.is_none());
        assert_eq!(
            st.missing,
            Missing {
                scores: vec![1, 2, 3],
                verdict: true
            }
        );
        assert_eq!(st.work_intervals, Some(3));
        assert!(b.revisions(REPS).unwrap().is_empty());
        assert!(b.feedback(REPS).unwrap().is_none());
        assert!(b.feedback_history(REPS).unwrap().is_empty());
        assert!(b.feedback_events(REPS).unwrap().is_empty());
        assert!(b.revealed_permit(REPS).unwrap().is_none());
        assert!(b.bias_inputs().unwrap().is_empty());
        assert!(matches!(
            b.save_feedback(REPS, "x", t(7)),
            Err(JournalError::NotRevealed { .. })
        ));
        match b.reveal(REPS, t(7)).unwrap_err() {
            JournalError::NotYetGraded { missing, .. } => {
                assert_eq!(missing.scores, vec![1, 2, 3]);
                assert!(missing.verdict);
            }
            other => panic!("{other:?}"),
        }
        match b.colleague_grades(REPS).unwrap_err() {
            JournalError::ColleaguesHidden { missing, .. } => {
                assert_eq!(missing.scores, vec![1, 2, 3]);
                assert!(missing.verdict);
            }
            other => panic!("{other:?}"),
        }
        // The queue and the roster pane: in Beth's queue, out of Arne's.
        assert_eq!(ids(&b.unreviewed(None).unwrap()), [REPS, EASY]);
        assert_eq!(ids(&a.unreviewed(None).unwrap()), [EASY]);
        let pane = b.sessions(None).unwrap();
        assert_eq!(pane[1].session_id, REPS);
        assert_eq!(pane[1].stage, ReviewStage::New);
        assert_eq!(
            a.sessions(None).unwrap()[1].stage,
            ReviewStage::FeedbackDone
        );

        // Part of her grading: still nothing of Arne's, still no reveal.
        b.grade(REPS, &[(1, 3), (2, 3)], None, t(8)).unwrap();
        match b.colleague_grades(REPS).unwrap_err() {
            JournalError::ColleaguesHidden { missing, .. } => {
                assert_eq!(
                    missing,
                    Missing {
                        scores: vec![3],
                        verdict: true
                    }
                )
            }
            other => panic!("{other:?}"),
        }
        b.set_score(REPS, 3, 4, t(9)).unwrap();
        assert!(matches!(
            b.colleague_grades(REPS),
            Err(JournalError::ColleaguesHidden { .. })
        ));
        assert!(matches!(
            b.reveal(REPS, t(9)),
            Err(JournalError::NotYetGraded { .. })
        ));
        let st = b.review_state(REPS).unwrap();
        assert_eq!(st.stage, ReviewStage::Grading);
        let mine: Vec<u8> = st.scores.iter().map(|c| c.blind).collect();
        assert_eq!(mine, [3, 3, 4], "only Beth's own scores");

        // Her blind grading complete: Arne's blind grades (not his revisions) are shown.
        b.set_verdict(REPS, PurposeVerdict::Missed, t(10)).unwrap();
        assert_eq!(b.review_state(REPS).unwrap().stage, ReviewStage::Graded);
        assert_eq!(
            b.colleague_grades(REPS).unwrap(),
            [ColleagueGrades {
                coach: "Arne".into(),
                scores: vec![(1, 4), (2, 3), (3, 5)],
                verdict: Some(PurposeVerdict::Met),
                revealed: true,
            }]
        );
        // Arne's reveal did not reveal for Beth.
        assert!(b.revealed_permit(REPS).unwrap().is_none());
        assert_eq!(ids(&b.unreviewed(None).unwrap()), [REPS, EASY]);
        // Arne sees Beth's blind grades; she has not revealed.
        assert_eq!(
            a.colleague_grades(REPS).unwrap(),
            [ColleagueGrades {
                coach: "Beth".into(),
                scores: vec![(1, 3), (2, 3), (3, 4)],
                verdict: Some(PurposeVerdict::Missed),
                revealed: false,
            }]
        );

        let permit = b.reveal(REPS, t(11)).unwrap();
        assert_eq!(permit.session_id(), REPS);
        assert_eq!(b.review_state(REPS).unwrap().revealed_at, Some(t(11)));
        assert_eq!(a.review_state(REPS).unwrap().revealed_at, Some(t(3)));
        // Beth's feedback is her own, and Arne's stays his.
        b.save_feedback(REPS, "Even pacing.", t(12)).unwrap();
        assert_eq!(b.feedback_history(REPS).unwrap().len(), 1);
        assert_eq!(a.feedback(REPS).unwrap().unwrap().body, "Strong last rep.");
        assert_eq!(b.feedback(REPS).unwrap().unwrap().body, "Even pacing.");
        assert!(b.feedback_events(REPS).unwrap().is_empty());

        // The bias check per coach.
        let bias_a = a.bias_inputs().unwrap();
        assert_eq!(bias_a.len(), 1);
        assert_eq!(bias_a[0].blind_scores, [(1, 4), (2, 3), (3, 5)]);
        assert_eq!(bias_a[0].revised_scores, [(1, 4), (2, 2), (3, 5)]);
        assert_eq!(bias_a[0].revised_verdict, Some(PurposeVerdict::Partly));
        assert_eq!(bias_a[0].revisions, 2);
        assert_eq!(bias_a[0].revealed_at, t(3));
        let bias_b = b.bias_inputs().unwrap();
        assert_eq!(bias_b.len(), 1);
        assert_eq!(bias_b[0].blind_scores, [(1, 3), (2, 3), (3, 4)]);
        assert_eq!(bias_b[0].revised_scores, bias_b[0].blind_scores);
        assert_eq!(bias_b[0].blind_verdict, Some(PurposeVerdict::Missed));
        assert_eq!(bias_b[0].revisions, 0);
        assert_eq!(bias_b[0].revealed_at, t(11));
        let revs = a.revisions(REPS).unwrap();
        assert_eq!(
            revs[0].change,
            RevisionChange::Score {
                interval: 2,
                old: 3,
                new: 2
            }
        );

        // Every coach's blind scores for the agreement; Arne's revision is not among them.
        let grades: Vec<(String, u32, u8)> = a
            .coach_grades()
            .unwrap()
            .into_iter()
            .map(|g| {
                assert_eq!(g.session_id, REPS);
                assert_eq!(g.athlete_id, "ines");
                assert_eq!(g.start_time, t(0));
                (g.coach, g.interval_no, g.score)
            })
            .collect();
        let want: Vec<(String, u32, u8)> = [
            ("Arne", 1, 4),
            ("Beth", 1, 3),
            ("Arne", 2, 3),
            ("Beth", 2, 3),
            ("Arne", 3, 5),
            ("Beth", 3, 4),
        ]
        .into_iter()
        .map(|(c, i, s)| (c.to_string(), i, s))
        .collect();
        assert_eq!(grades, want);
        assert_eq!(
            b.coach_grades().unwrap().len(),
            6,
            "the same from either handle"
        );
    });
}

#[test]
fn a_staff_coach_sees_their_own_athletes_first() {
    engines::both("own_athletes_first", || {
        let mut j = engines::journal();
        j.upsert_session(&record(HILLS, 5, 0), t(0)).unwrap();
        j.upsert_session(&record("ines/a", 10, 0), t(0)).unwrap();
        j.upsert_session(&record("marco/b", 20, 0), t(0)).unwrap();
        j.upsert_session(&record("ines/c", 30, 0), t(0)).unwrap();
        // The single coach: oldest first.
        let oldest_first = [HILLS, "ines/a", "marco/b", "ines/c"];
        assert_eq!(ids(&j.unreviewed(None).unwrap()), oldest_first);

        j.staff_add("Arne", t(1)).unwrap();
        j.staff_add("Beth", t(1)).unwrap();
        j.staff_add("Cleo", t(1)).unwrap();
        j.assign("ines", Some("Arne"), t(1)).unwrap();
        j.assign("marco", Some("Beth"), t(1)).unwrap();
        j.set_coach("Arne").unwrap();
        assert_eq!(
            ids(&j.unreviewed(None).unwrap()),
            ["ines/a", "ines/c", HILLS, "marco/b"]
        );
        assert_eq!(ids(&j.unreviewed(Some("marco")).unwrap()), ["marco/b"]);
        j.set_coach("Beth").unwrap();
        assert_eq!(
            ids(&j.unreviewed(None).unwrap()),
            ["marco/b", HILLS, "ines/a", "ines/c"]
        );
        // A coach without athletes covers for everyone, oldest first.
        j.set_coach("Cleo").unwrap();
        assert_eq!(ids(&j.unreviewed(None).unwrap()), oldest_first);
        // Reviewed sessions leave only the queue of the coach who reviewed them.
        j.set_verdict("ines/a", PurposeVerdict::Met, t(2)).unwrap();
        j.reveal("ines/a", t(2)).unwrap();
        assert_eq!(
            ids(&j.unreviewed(None).unwrap()),
            [HILLS, "marco/b", "ines/c"]
        );
        j.set_coach("Arne").unwrap();
        assert_eq!(
            ids(&j.unreviewed(None).unwrap()),
            ["ines/a", "ines/c", HILLS, "marco/b"]
        );
        let counts = j.unreviewed_counts().unwrap();
        assert_eq!(counts.get("ines"), Some(&2));
    });
}

/// One coach on two workstations: both start from the same feedback version; the first save
/// wins, the second is refused with the first's text and saves nothing.
#[test]
fn a_feedback_edit_over_a_changed_version_is_a_conflict() {
    engines::both("feedback_conflict", || {
        let place = engines::place();
        let mut one = place.open();
        one.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        one.staff_add("Arne", t(0)).unwrap();
        one.set_coach("Arne").unwrap();
        let mut two = place.open();
        two.set_coach("Arne").unwrap();
        grade_reps(&mut one, [4, 4, 4], PurposeVerdict::Met, t(1));
        one.reveal(REPS, t(2)).unwrap();

        let first = one
            .save_feedback_over(REPS, "Good session.", None, t(3))
            .unwrap();
        // Both workstations read version `first`.
        let base_one = one.feedback(REPS).unwrap().unwrap();
        let base_two = two.feedback(REPS).unwrap().unwrap();
        assert_eq!(base_one.id, first);
        assert_eq!(base_two.id, first);

        let mine = one
            .save_feedback_over(REPS, "Good session; rest tomorrow.", Some(first), t(4))
            .unwrap();
        assert!(mine > first);
        let err = two
            .save_feedback_over(REPS, "Good session; hills Friday.", Some(first), t(5))
            .unwrap_err();
        match &err {
            JournalError::FeedbackConflict {
                session_id, theirs, ..
            } => {
                assert_eq!(session_id, REPS);
                assert_eq!(theirs.id, mine);
                assert_eq!(theirs.body, "Good session; rest tomorrow.");
                assert_eq!(theirs.saved_at, t(4));
            }
            other => panic!("{other:?}"),
        }
        assert_eq!(
            err.to_string(),
            format!(
                "{}: ines/reps: the feedback was changed elsewhere (saved 2026-11-02 06:04 UTC) \
                 while you edited it; nothing was saved: keep yours, take theirs, or see both",
                two.path().display()
            )
        );
        let bodies: Vec<String> = one
            .feedback_history(REPS)
            .unwrap()
            .into_iter()
            .map(|v| v.body)
            .collect();
        assert_eq!(bodies, ["Good session.", "Good session; rest tomorrow."]);

        // Starting from no version when one exists is a conflict too.
        assert!(matches!(
            two.save_feedback_over(REPS, "fresh", None, t(6)),
            Err(JournalError::FeedbackConflict { .. })
        ));
        // Sending over a stale version: neither the text nor the event is kept.
        let err = two
            .send_feedback_over(
                REPS,
                Some("Good session; hills Friday."),
                Some(first),
                FeedbackEventKind::Copied,
                t(7),
            )
            .unwrap_err();
        assert!(
            matches!(&err, JournalError::FeedbackConflict { theirs, .. } if theirs.id == mine),
            "{err:?}"
        );
        assert!(one.feedback_events(REPS).unwrap().is_empty());
        assert_eq!(one.feedback_history(REPS).unwrap().len(), 2);
        assert_eq!(one.review_state(REPS).unwrap().stage, ReviewStage::Revealed);

        // Taking theirs and saving over it works.
        let latest = two.feedback(REPS).unwrap().unwrap();
        assert_eq!(latest.id, mine);
        let sent = two
            .send_feedback_over(
                REPS,
                Some("Good session; rest tomorrow. Hills Friday."),
                Some(latest.id),
                FeedbackEventKind::Exported,
                t(8),
            )
            .unwrap();
        assert_eq!(one.feedback_history(REPS).unwrap().len(), 3);
        // The id returned is the version now in force.
        assert_eq!(sent, Some(one.feedback(REPS).unwrap().unwrap().id));
        assert_eq!(one.feedback_events(REPS).unwrap().len(), 1);
        assert_eq!(
            one.review_state(REPS).unwrap().stage,
            ReviewStage::FeedbackDone
        );

        // Another coach's feedback is another record: no conflict with Arne's versions.
        one.staff_add("Beth", t(9)).unwrap();
        let mut beth = place.open();
        beth.set_coach("Beth").unwrap();
        grade_reps(&mut beth, [3, 3, 3], PurposeVerdict::Partly, t(9));
        beth.reveal(REPS, t(10)).unwrap();
        beth.save_feedback_over(REPS, "Beth's words.", None, t(11))
            .unwrap();
        assert_eq!(one.feedback_history(REPS).unwrap().len(), 3);
    });
}

#[test]
fn reviewing_marks_show_to_the_others_and_expire() {
    engines::both("reviewing_marks", || {
        let place = engines::place();
        let mut a = place.open();
        a.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        a.upsert_session(&record(EASY, 10, 0), t(0)).unwrap();
        // The single coach of a journal without a staff marks nothing.
        a.mark_reviewing(REPS, t(0)).unwrap();
        assert!(a.reviewing_by_others(t(0)).unwrap().is_empty());

        a.staff_add("Arne", t(0)).unwrap();
        a.staff_add("Beth", t(0)).unwrap();
        a.set_coach("Arne").unwrap();
        let mut b = place.open();
        b.set_coach("Beth").unwrap();

        a.mark_reviewing(REPS, t(1)).unwrap();
        let want: BTreeMap<String, Vec<String>> =
            [(REPS.to_string(), vec!["Arne".to_string()])].into();
        assert_eq!(b.reviewing_by_others(t(2)).unwrap(), want);
        assert!(
            a.reviewing_by_others(t(2)).unwrap().is_empty(),
            "one's own mark is not shown"
        );
        // Two coaches on one session.
        b.mark_reviewing(REPS, t(2)).unwrap();
        let seen_by_third = place.open().reviewing_by_others(t(2)).unwrap();
        assert_eq!(
            seen_by_third.get(REPS),
            Some(&vec!["Arne".to_string(), "Beth".to_string()])
        );
        // Past REVIEWING_FOR without a renewal the mark is ignored.
        let expired = t(1) + REVIEWING_FOR + Duration::seconds(1);
        assert!(b.reviewing_by_others(expired).unwrap().is_empty());
        assert_eq!(
            b.reviewing_by_others(t(1) + REVIEWING_FOR - Duration::seconds(1))
                .unwrap(),
            want
        );
        // A renewal moves the expiry on.
        a.mark_reviewing(REPS, t(3)).unwrap();
        assert_eq!(b.reviewing_by_others(expired).unwrap(), want);
        // One session at a time: opening another moves the mark.
        a.mark_reviewing(EASY, t(4)).unwrap();
        let moved: BTreeMap<String, Vec<String>> =
            [(EASY.to_string(), vec!["Arne".to_string()])].into();
        assert_eq!(b.reviewing_by_others(t(4)).unwrap(), moved);
        // Closing the workstation clears it.
        a.clear_reviewing().unwrap();
        assert!(b.reviewing_by_others(t(4)).unwrap().is_empty());
        // A removed coach's marks go with them.
        let mut c = place.open();
        assert_eq!(
            a.reviewing_by_others(t(4)).unwrap().get(REPS).unwrap(),
            &["Beth"]
        );
        c.staff_remove("Beth", t(5)).unwrap();
        assert!(a.reviewing_by_others(t(5)).unwrap().is_empty());
    });
}

/// Each coach's review follows the file's content: a renamed file keeps every coach's
/// review; a changed file flags each; one coach restarting leaves the other's review alone.
#[test]
fn each_coachs_review_follows_the_content() {
    engines::both("staff_reviews_follow_content", || {
        let mut j = engines::journal();
        j.upsert_session(&record(REPS, 0, 3), t(0)).unwrap();
        j.staff_add("Arne", t(0)).unwrap();
        j.staff_add("Beth", t(0)).unwrap();
        j.set_coach("Arne").unwrap();
        grade_reps(&mut j, [4, 3, 5], PurposeVerdict::Met, t(1));
        j.set_coach("Beth").unwrap();
        j.set_score(REPS, 1, 2, t(2)).unwrap();

        // Renamed: same bytes under a new id.
        let mut renamed = record("ines/reps-tuesday", 0, 3);
        renamed.content_hash = format!("hash-of-{REPS}");
        renamed.summary = None;
        assert_eq!(
            j.upsert_session(&renamed, t(3)).unwrap(),
            splitdesk::journal::SessionChange::FoundReview
        );
        j.retain_sessions(&["ines/reps-tuesday"]).unwrap();
        let id = "ines/reps-tuesday";
        let beth: Vec<u8> = j
            .review_state(id)
            .unwrap()
            .scores
            .iter()
            .map(|c| c.blind)
            .collect();
        assert_eq!(beth, [2]);
        j.set_coach("Arne").unwrap();
        let st = j.review_state(id).unwrap();
        assert_eq!(st.stage, ReviewStage::Graded);
        let arne: Vec<u8> = st.scores.iter().map(|c| c.blind).collect();
        assert_eq!(arne, [4, 3, 5]);

        // The content changes: both reviews are flagged and kept.
        let mut changed = record(id, 0, 4);
        changed.content_hash = "hash-new".into();
        assert_eq!(
            j.upsert_session(&changed, t(4)).unwrap(),
            splitdesk::journal::SessionChange::ContentChanged
        );
        assert!(j.review_state(id).unwrap().content_changed);
        assert!(j.restart_review(id).unwrap());
        let st = j.review_state(id).unwrap();
        assert_eq!(st.stage, ReviewStage::New);
        assert!(!st.content_changed);
        assert_eq!(st.missing.scores, [1, 2, 3, 4]);
        j.set_coach("Beth").unwrap();
        let st = j.review_state(id).unwrap();
        assert!(st.content_changed, "Beth's review is hers to restart");
        assert_eq!(st.scores.len(), 1);
        assert_eq!(j.check().unwrap().reviews, 2);
    });
}
