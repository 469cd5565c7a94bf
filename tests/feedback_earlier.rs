//! The draft says "faster than last time at the same effort" only where the comparison with
//! the last run of the same workout is clear, in athlete words and units. Self-consistency
//! checks on comparisons built here (the comparison itself is checked in earlier_runs).

use chrono::NaiveDate;
use splitdesk::analysis::earlier::{
    Change, Comparison, MatchedBy, Occurrence, PaceBasis, RepRow, CAUTION, SCHEMA,
};
use splitdesk::analysis::kind::SessionKind;
use splitdesk::export::feedback::body::against_earlier;
use splitdesk::export::feedback::words::coach_word_in;
use splitdesk::model::Units;

fn day(d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(2026, 11, d).unwrap()
}

fn run(id: &str, d: u32, current: bool, reps: usize) -> Occurrence {
    Occurrence {
        session_id: id.into(),
        day: day(d),
        current,
        plan_title: Some("Cruise miles".into()),
        reps: (1..=reps)
            .map(|n| RepRow {
                number: n,
                pace_s_per_km: Some(230.0),
                avg_hr: Some(170.0),
                relative_intensity: Some(1.0),
                recovery_trough_bpm: Some(120.0),
            })
            .collect(),
        mean_pace_s_per_km: Some(230.0),
        spread_s_per_km: Some(1.0),
        mean_hr: Some(170.0),
        mean_relative_intensity: Some(1.0),
        mean_trough_bpm: Some(120.0),
        decoupling_pct: None,
        distance_m: Some(9000.0),
        duration_s: 3000.0,
    }
}

fn comparison(pace: f64, hr: f64, matched_by: MatchedBy) -> Comparison {
    Comparison {
        schema: SCHEMA.into(),
        session_id: "a/now".into(),
        day: day(12),
        kind: SessionKind::Intervals,
        matched_by,
        shape: None,
        pace_basis: PaceBasis::Raw,
        units: "km".into(),
        runs: vec![run("a/then", 5, false, 3), run("a/now", 12, true, 3)],
        changes: vec![Change {
            session_id: "a/then".into(),
            day: day(5),
            pace_s_per_km: Some(pace),
            hr_bpm: Some(hr),
            text: String::new(),
        }],
        pace_at_hr: None,
        text: Vec::new(),
        caution: CAUTION.into(),
    }
}

#[test]
fn a_clear_gain_at_the_same_heart_rate_is_said_in_athlete_words() {
    let c = comparison(-3.2, 1.0, MatchedBy::WorkoutShape);
    let t = against_earlier(&c, Units::Km).unwrap();
    assert_eq!(
        t,
        "Your repeats averaged 3 seconds per km quicker than when you ran this session on \
         Thursday 5 November, at the same heart rate."
    );
    assert_eq!(coach_word_in(&t), None);
}

#[test]
fn a_gain_at_a_lower_heart_rate_says_so_and_miles_are_miles() {
    let c = comparison(-3.2, -4.0, MatchedBy::WorkoutShape);
    // 3.2 s/km is 5.15 s/mi: 5 seconds per mile.
    let t = against_earlier(&c, Units::Mi).unwrap();
    assert!(t.contains("5 seconds per mile quicker"), "{t}");
    assert!(t.ends_with("at a lower heart rate."), "{t}");
}

#[test]
fn nothing_is_said_when_the_gain_is_small_bought_with_heart_rate_or_a_loss() {
    // Under 2 s per km.
    assert_eq!(
        against_earlier(&comparison(-1.4, 0.0, MatchedBy::WorkoutShape), Units::Km),
        None
    );
    // Faster, but at a clearly higher heart rate: not "the same effort".
    assert_eq!(
        against_earlier(&comparison(-6.0, 4.0, MatchedBy::WorkoutShape), Units::Km),
        None
    );
    // Slower.
    assert_eq!(
        against_earlier(&comparison(5.0, -3.0, MatchedBy::WorkoutShape), Units::Km),
        None
    );
    // Easy runs compared by kind are not "this session" again.
    assert_eq!(
        against_earlier(&comparison(-6.0, 0.0, MatchedBy::Kind), Units::Km),
        None
    );
}

/// A demo session's review, analysed the way the workstation does.
fn demo_review(
    id: &str,
) -> (
    splitdesk::analysis::review::Review,
    splitdesk::model::AthleteProfile,
) {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = splitdesk::roster::Roster::open(&root).unwrap();
    let (athlete, act) = roster.find_session(id).unwrap();
    let a = splitdesk::workspace::analyse_activity(athlete, act).unwrap();
    (a.review, athlete.profile.clone())
}

fn draft_with(id: &str, c: &Comparison) -> String {
    let (review, profile) = demo_review(id);
    let n = review.work().count() as u32;
    let input = splitdesk::export::feedback::DraftInput {
        review: &review,
        profile: &profile,
        grades: splitdesk::export::feedback::Grades {
            scores: (1..=n).map(|k| (k, 4)).collect(),
            verdict: Some(splitdesk::journal::PurposeVerdict::Met),
        },
        note: None,
        marks: Vec::new(),
        earlier: Some(c),
    };
    let style = splitdesk::export::feedback::FeedbackStyle {
        length: splitdesk::export::feedback::Length::Full,
        ..Default::default()
    };
    splitdesk::export::feedback::draft(&input, &style)
}

#[test]
fn a_set_run_faster_than_its_target_is_not_cheered_for_beating_last_time() {
    let c = comparison(-8.0, 0.0, MatchedBy::WorkoutShape);
    // Ansel's second cruise miles ran every mile quicker than the threshold band.
    let (review, _) = demo_review("ansel-marchetti/2026-11-12-cruise-miles");
    assert!(splitdesk::export::feedback::body::ran_above_target(&review));
    let d = draft_with("ansel-marchetti/2026-11-12-cruise-miles", &c);
    assert!(!d.contains("quicker than when you ran"), "{d}");
    // A set held inside its targets gets the sentence.
    let on_target = "mira-castellan/2026-10-27-intervals";
    let (review, _) = demo_review(on_target);
    assert!(!splitdesk::export::feedback::body::ran_above_target(
        &review
    ));
    let d = draft_with(on_target, &c);
    assert!(d.contains("quicker than when you ran this session"), "{d}");
}
