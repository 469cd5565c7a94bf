//! What kind of session a run was: an interval set, a tempo, a progression, a long run, an
//! easy run, a race or time trial, a hill session, a treadmill run. The kind decides how the
//! feedback draft is built and what the verdict pane shows first (splits for races).
//!
//! The plan decides where it says so (its title and purpose, then its structure); without a
//! plan, the structure the analysis found and the run's length decide. Pure: the review in,
//! a kind out.

use serde::{Deserialize, Serialize};

use super::review::Review;
use crate::model::Plan;

/// The kind of a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum SessionKind {
    /// Two or more work intervals: repeats on the track or the road.
    Intervals,
    /// One sustained block at threshold or around it.
    Tempo,
    /// Repeats (or one run) meant to get faster as it goes.
    Progression,
    /// A long run: time on feet.
    LongRun,
    /// An easy or recovery run (the default for a run with nothing else to say).
    #[default]
    Easy,
    /// A race or a time trial: one all-out effort over a set distance.
    Race,
    /// Repeats up a hill.
    Hills,
    /// A steady run on a treadmill (no positions recorded).
    Treadmill,
    /// Not a run (a ride, a walk): no running analysis.
    NotRunning,
}

impl SessionKind {
    /// Whether the kind is built around work intervals (reps or a block) whose shape is
    /// worth comparing with earlier runs: intervals, tempo, progression, race, hills.
    pub fn has_work(self) -> bool {
        matches!(
            self,
            SessionKind::Intervals
                | SessionKind::Tempo
                | SessionKind::Progression
                | SessionKind::Race
                | SessionKind::Hills
        )
    }

    /// Every kind, for tests and documentation.
    pub const ALL: [SessionKind; 9] = [
        SessionKind::Intervals,
        SessionKind::Tempo,
        SessionKind::Progression,
        SessionKind::LongRun,
        SessionKind::Easy,
        SessionKind::Race,
        SessionKind::Hills,
        SessionKind::Treadmill,
        SessionKind::NotRunning,
    ];

    /// The JSON word (`interval set` reads `intervals`).
    pub fn as_str(self) -> &'static str {
        match self {
            SessionKind::Intervals => "intervals",
            SessionKind::Tempo => "tempo",
            SessionKind::Progression => "progression",
            SessionKind::LongRun => "long_run",
            SessionKind::Easy => "easy",
            SessionKind::Race => "race",
            SessionKind::Hills => "hills",
            SessionKind::Treadmill => "treadmill",
            SessionKind::NotRunning => "not_running",
        }
    }

    /// The kind as the coach reads it on screen.
    pub fn label(self) -> &'static str {
        match self {
            SessionKind::Intervals => "interval set",
            SessionKind::Tempo => "tempo",
            SessionKind::Progression => "progression",
            SessionKind::LongRun => "long run",
            SessionKind::Easy => "easy run",
            SessionKind::Race => "race or time trial",
            SessionKind::Hills => "hill session",
            SessionKind::Treadmill => "treadmill run",
            SessionKind::NotRunning => "not a run",
        }
    }

    /// Kinds built from repeated work intervals.
    pub fn is_repeats(self) -> bool {
        matches!(
            self,
            SessionKind::Intervals | SessionKind::Hills | SessionKind::Progression
        )
    }
}

/// A run of at least this much moving time with nothing else to say is a long run.
// Common coaching practice (no published source): a long run is 75-90 minutes or more.
pub const LONG_RUN_MOVING_S: f64 = 75.0 * 60.0;

/// An unplanned run whose only work interval is at least this long ...
// Common coaching practice (no published source): races and time trials start at 3 km;
// 2.5 km leaves room for a GPS that reads short.
pub const RACE_MIN_DISTANCE_M: f64 = 2500.0;
/// ... and at least this fast against threshold (speed / threshold speed) is a race.
// Common coaching practice (no published source): 5 km to 10 km race pace is at or above
// threshold pace; a tempo sits a little below it.
pub const RACE_MIN_RELATIVE_INTENSITY: f64 = 0.98;

/// A single work block at least this long ...
// Common coaching practice (no published source): a tempo or threshold run lasts 10 to 40
// minutes; 8 leaves room for a short one.
pub const TEMPO_MIN_S: f64 = 8.0 * 60.0;
/// ... and at least this fast against threshold is a tempo.
// Common coaching practice (no published source): tempo runs sit at 85-100 % of threshold
// speed (the "steady" and "hard" pace zones, `zones::PACE_RELATIVE_BOUNDS`).
pub const TEMPO_MIN_RELATIVE_INTENSITY: f64 = 0.87;

/// Mean gradient of the work intervals, percent, from which a set counts as hill repeats.
// Common coaching practice (no published source): hill repeats are run on 4-8 % slopes;
// 3 % leaves room for a smoothed altitude trace.
pub const HILL_MIN_GRADE_PCT: f64 = 3.0;

/// Whether `words` (lowercase) holds `w` as a whole word or phrase.
pub fn has_word(words: &str, w: &str) -> bool {
    words.match_indices(w).any(|(i, _)| {
        let before = words[..i].chars().next_back();
        let after = words[i + w.len()..].chars().next();
        !before.is_some_and(char::is_alphanumeric) && !after.is_some_and(char::is_alphanumeric)
    })
}

/// The plan's own words for what it is, lowercase (title first, then purpose).
fn plan_words(plan: &Plan) -> (String, String) {
    (plan.title.to_lowercase(), plan.purpose.to_lowercase())
}

/// The kind the plan names in its title (or, failing that, its purpose).
fn named_kind(text: &str) -> Option<SessionKind> {
    let any = |ws: &[&str]| ws.iter().any(|w| has_word(text, w));
    if any(&[
        "race",
        "racing",
        "time trial",
        "time-trial",
        "timetrial",
        "tt",
    ]) {
        Some(SessionKind::Race)
    } else if any(&["hill", "hills", "hilly"]) {
        Some(SessionKind::Hills)
    } else if any(&["progression", "progressive"]) {
        Some(SessionKind::Progression)
    } else if any(&["tempo", "threshold"]) {
        Some(SessionKind::Tempo)
    } else if any(&["long run", "long one", "long slow"]) {
        Some(SessionKind::LongRun)
    } else if any(&["treadmill"]) {
        Some(SessionKind::Treadmill)
    } else if any(&[
        "interval",
        "intervals",
        "reps",
        "repeats",
        "repetitions",
        "fartlek",
        "cruise",
    ]) {
        Some(SessionKind::Intervals)
    } else if any(&["easy", "recovery", "shakeout", "shake-out", "jog"]) {
        Some(SessionKind::Easy)
    } else {
        None
    }
}

/// The kind a plan names in its title (or, failing that, its purpose); `None` when it
/// names none.
pub fn plan_kind(plan: &Plan) -> Option<SessionKind> {
    let (title, purpose) = plan_words(plan);
    named_kind(&title).or_else(|| named_kind(&purpose))
}

/// The kind of a reviewed session. `plan` is the plan it was analysed against, if any.
pub fn classify(review: &Review, plan: Option<&Plan>) -> SessionKind {
    if !review.running {
        return SessionKind::NotRunning;
    }
    let work: Vec<_> = review.work().collect();
    if let Some(p) = plan {
        let (title, purpose) = plan_words(p);
        if let Some(k) = named_kind(&title).or_else(|| named_kind(&purpose)) {
            // A plan that names intervals but was run as one block is still what it says;
            // the draft reads the structure it finds.
            return k;
        }
    }
    let on_hill = work.len() >= 2 && {
        let grades: Vec<f64> = work.iter().filter_map(|w| w.grade_pct).collect();
        !grades.is_empty()
            && grades.len() * 2 >= work.len()
            && grades.iter().sum::<f64>() / grades.len() as f64 >= HILL_MIN_GRADE_PCT
    };
    if on_hill {
        return SessionKind::Hills;
    }
    if work.len() >= 2 {
        return SessionKind::Intervals;
    }
    if let [only] = work.as_slice() {
        let ri = only.relative_intensity.unwrap_or(0.0);
        if plan.is_none()
            && ri >= RACE_MIN_RELATIVE_INTENSITY
            && only.distance_m.unwrap_or(0.0) >= RACE_MIN_DISTANCE_M
        {
            return SessionKind::Race;
        }
        if only.duration_s >= TEMPO_MIN_S && ri >= TEMPO_MIN_RELATIVE_INTENSITY {
            return SessionKind::Tempo;
        }
    }
    if review.session.moving_s >= LONG_RUN_MOVING_S {
        return SessionKind::LongRun;
    }
    if treadmill(review) {
        return SessionKind::Treadmill;
    }
    SessionKind::Easy
}

/// Whether the run was recorded without positions but with a distance or speed: a
/// treadmill (or a watch with satellites off indoors).
pub fn treadmill(review: &Review) -> bool {
    let has = |c: &str| review.session.channels.iter().any(|x| x == c);
    review.running && !has("position") && (has("distance") || has("speed"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_match_whole_words_only() {
        assert!(has_word("10km race", "race"));
        assert!(has_word("5km time trial", "time trial"));
        assert!(!has_word("embrace the hills", "race"));
        assert!(!has_word("attempt", "tt"));
        assert!(has_word("hill repeats", "hill"));
    }

    #[test]
    fn plan_titles_name_kinds() {
        assert_eq!(named_kind("10km race"), Some(SessionKind::Race));
        assert_eq!(named_kind("5km time trial"), Some(SessionKind::Race));
        assert_eq!(named_kind("hill repeats"), Some(SessionKind::Hills));
        assert_eq!(
            named_kind("progression repeats"),
            Some(SessionKind::Progression)
        );
        assert_eq!(named_kind("tempo"), Some(SessionKind::Tempo));
        assert_eq!(named_kind("long run"), Some(SessionKind::LongRun));
        assert_eq!(named_kind("cruise miles"), Some(SessionKind::Intervals));
        assert_eq!(
            named_kind("short reps, walked recoveries"),
            Some(SessionKind::Intervals)
        );
        assert_eq!(named_kind("easy run"), Some(SessionKind::Easy));
        assert_eq!(named_kind("saturday with the club"), None);
    }
}
