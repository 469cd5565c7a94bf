//! The same workout over time: a session beside its earlier runs (the glossary's
//! `earlier_runs`), rep by rep, with the change in plain words and the pace at a fixed heart
//! rate across them (`pace_at_hr`). Pure: session cards in, a comparison out.
//!
//! Structured sessions (a workout shape) are compared with the athlete's earlier sessions of
//! the same shape ([`super::shape::same_workout`]). Easy runs and long runs are compared
//! with earlier runs of the same kind, on their own terms: pace on flat ground at a given
//! heart rate, and drift (decoupling).

use chrono::NaiveDate;
use serde::Serialize;

use super::card::SessionCard;
use super::kind::SessionKind;
use super::shape::WorkoutShape;
use crate::model::Units;

/// The JSON schema name of [`Comparison`].
pub const SCHEMA: &str = "splitdesk.compare/1";

/// At most this many earlier runs are shown beside the session.
pub const MAX_EARLIER: usize = 5;

/// How the earlier runs were chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MatchedBy {
    /// The same workout shape.
    WorkoutShape,
    /// The same kind of run (easy runs with easy runs, long runs with long runs).
    Kind,
    /// Nothing to compare on (a session that is not a run, a structured session without a
    /// shape).
    Nothing,
}

/// Which pace the comparison uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PaceBasis {
    /// Hill-adjusted pace (Minetti et al. 2002), used when the ground differs between the runs
    /// and every run has it.
    HillAdjusted,
    /// The pace as run.
    Raw,
}

/// One rep of one run, on the comparison's pace basis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RepRow {
    /// 1-based rep number.
    pub number: usize,
    /// s/km on the comparison's basis.
    pub pace_s_per_km: Option<f64>,
    pub avg_hr: Option<f64>,
    pub relative_intensity: Option<f64>,
    pub recovery_trough_bpm: Option<f64>,
}

/// One run in the comparison: the session itself or an earlier run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Occurrence {
    pub session_id: String,
    pub day: NaiveDate,
    /// True for the session being compared.
    pub current: bool,
    pub plan_title: Option<String>,
    /// The reps (empty for an easy or long run).
    pub reps: Vec<RepRow>,
    /// Mean of the reps' paces, s/km (an easy or long run: its flat-ground pace).
    pub mean_pace_s_per_km: Option<f64>,
    /// Standard deviation of the reps' paces, s/km (`None` under two reps).
    pub spread_s_per_km: Option<f64>,
    /// Mean of the reps' heart rates (an easy or long run: the session's), bpm.
    pub mean_hr: Option<f64>,
    pub mean_relative_intensity: Option<f64>,
    /// Mean recovery trough, bpm.
    pub mean_trough_bpm: Option<f64>,
    /// Whole-session decoupling, percent.
    pub decoupling_pct: Option<f64>,
    pub distance_m: Option<f64>,
    pub duration_s: f64,
}

/// The session against one earlier run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Change {
    /// The earlier run.
    pub session_id: String,
    pub day: NaiveDate,
    /// Session's mean pace minus the earlier run's, s/km: negative is faster.
    pub pace_s_per_km: Option<f64>,
    /// Session's mean HR minus the earlier run's, bpm.
    pub hr_bpm: Option<f64>,
    /// In words, in the athlete's units: `2.1 s/km faster per rep than on 2026-10-27 at
    /// 3 bpm lower heart rate`.
    pub text: String,
}

/// Whether the pace at a fixed heart rate improved across the runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FitnessTrend {
    /// Faster at the same heart rate.
    Fitter,
    /// About the same.
    Same,
    /// Slower at the same heart rate.
    Slower,
    /// Too few runs or reps, or heart rate does not explain pace across them.
    Unclear,
}

/// The pace at one heart rate, per run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PaceAtHrRun {
    pub session_id: String,
    pub day: NaiveDate,
    /// s/km at [`PaceAtHr::hr_bpm`].
    pub pace_s_per_km: f64,
}

/// Least squares of pace on heart rate and date over every rep of the runs (the glossary's
/// `pace_at_hr`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PaceAtHr {
    /// The fixed heart rate, bpm.
    pub hr_bpm: f64,
    /// Fitted change of pace per bpm, s/km (negative: faster at a higher heart rate).
    pub slope_s_per_km_per_bpm: Option<f64>,
    /// Fitted change of pace at a fixed heart rate per week, s/km (negative: fitter).
    pub trend_s_per_km_per_week: Option<f64>,
    /// Points (reps, or runs for easy and long runs) in the fit.
    pub points: usize,
    pub runs: Vec<PaceAtHrRun>,
    pub trend: FitnessTrend,
    /// In words, with the caution that conditions differ.
    pub text: String,
}

/// A session beside its earlier runs (the `splitdesk.compare/1` JSON contract).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Comparison {
    pub schema: String,
    pub session_id: String,
    pub day: NaiveDate,
    pub kind: SessionKind,
    pub matched_by: MatchedBy,
    pub shape: Option<WorkoutShape>,
    pub pace_basis: PaceBasis,
    /// `km` or `mi`: the units of the texts.
    pub units: String,
    /// Oldest first; the session itself last.
    pub runs: Vec<Occurrence>,
    /// The session against each earlier run, latest first.
    pub changes: Vec<Change>,
    pub pace_at_hr: Option<PaceAtHr>,
    /// The comparison in plain words, most important first.
    pub text: Vec<String>,
    /// Conditions differ between runs: read as a hint, not a measurement.
    pub caution: String,
}

impl Comparison {
    /// The earlier runs (every run but the session itself).
    pub fn earlier(&self) -> impl Iterator<Item = &Occurrence> {
        self.runs.iter().filter(|r| !r.current)
    }
}

/// The caution every comparison carries.
pub const CAUTION: &str = "Conditions differ between runs (heat, wind, hills, fatigue, \
                           the surface): read the change as a hint, not a measurement.";

/// One of the athlete's sessions as the search for earlier runs sees it (from the journal's
/// card index: no card is read).
#[derive(Debug, Clone, PartialEq)]
pub struct Candidate {
    pub session_id: String,
    pub start: chrono::DateTime<chrono::Utc>,
    pub kind: SessionKind,
    pub shape: Option<WorkoutShape>,
}

/// Which of the athlete's sessions are earlier runs of the same workout as `current`: the
/// positions in `candidates` (any order; the session itself and sessions starting at or
/// after it are skipped), latest first, at most [`MAX_EARLIER`]. A session with a shape
/// matches shapes ([`super::shape::same_workout`]); an easy or long run matches runs of the
/// same kind; anything else matches nothing.
pub fn pick_earlier(current: &SessionCard, candidates: &[Candidate]) -> Vec<usize> {
    let _ = (current, candidates);
    Vec::new()
}

/// Compare `current` with `earlier` (the runs [`pick_earlier`] chose, any order).
pub fn compare(current: &SessionCard, earlier: &[SessionCard], units: Units) -> Comparison {
    let matched_by = if current.shape.is_some() {
        MatchedBy::WorkoutShape
    } else if matches!(current.kind, SessionKind::Easy | SessionKind::LongRun) && current.running {
        MatchedBy::Kind
    } else {
        MatchedBy::Nothing
    };
    let _ = earlier;
    Comparison {
        schema: SCHEMA.to_string(),
        session_id: current.session_id.clone(),
        day: current.day,
        kind: current.kind,
        matched_by,
        shape: current.shape.clone(),
        pace_basis: PaceBasis::Raw,
        units: units.label().to_string(),
        runs: Vec::new(),
        changes: Vec::new(),
        pace_at_hr: None,
        text: Vec::new(),
        caution: CAUTION.to_string(),
    }
}
