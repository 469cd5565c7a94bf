//! The session card: the few numbers of one session that the comparisons across sessions
//! need (the same workout over time, the week around a session), cut from its review when it
//! is analysed and kept in the journal beside the review, so that an athlete's whole history
//! is compared without reading a file or a full review again. Pure.

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use super::kind::SessionKind;
use super::review::{IntervalMetrics, Review};
use super::shape::WorkoutShape;
use crate::model::Session;

/// Width of the bins of a rep's speed trace, seconds.
// Our design choice: fine enough to show a fade or a surge inside a 90-s rep, coarse
// enough that a 20-minute block is 120 numbers.
pub const TRACE_BIN_S: f64 = 10.0;

/// One work interval (a rep) of a session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RepCard {
    /// 1-based number among the work intervals.
    pub number: usize,
    /// Seconds from the session's first sample.
    pub start_s: f64,
    pub end_s: f64,
    pub duration_s: f64,
    pub distance_m: Option<f64>,
    /// Pace, s/km.
    pub pace_s_per_km: Option<f64>,
    /// Hill-adjusted pace, s/km (Minetti et al. 2002); `None` without altitude.
    pub hill_adjusted_pace_s_per_km: Option<f64>,
    pub avg_hr: Option<f64>,
    pub relative_intensity: Option<f64>,
    /// Mean gradient, percent.
    pub grade_pct: Option<f64>,
    /// Lowest HR in the recovery after this rep, bpm.
    pub recovery_trough_bpm: Option<f64>,
    /// Mean speed in consecutive [`TRACE_BIN_S`] bins from the rep's start, m/s (`None`
    /// where the bin has no usable speed): the faint line the chart overlays.
    #[serde(default)]
    pub trace_mps: Vec<Option<f32>>,
}

/// One session as the comparisons see it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SessionCard {
    /// `<athlete-id>/<file-stem>`.
    pub session_id: String,
    pub start: DateTime<Utc>,
    /// The calendar day the session counts for ([`crate::model::session::session_day`]).
    pub day: NaiveDate,
    pub kind: SessionKind,
    /// False for another sport (a ride, a walk).
    pub running: bool,
    pub sport: String,
    pub duration_s: f64,
    pub moving_s: f64,
    pub distance_m: Option<f64>,
    /// Banister TRIMP.
    pub trimp: Option<f64>,
    /// True when the load rests on partial HR (a lower bound).
    pub trimp_lower_bound: bool,
    /// Time-weighted mean HR over the session, bpm.
    pub avg_hr: Option<f64>,
    /// Pace on flat ground over the moving intervals: the time-weighted mean of their
    /// hill-adjusted speeds (raw speed where there is none), as s/km.
    pub flat_pace_s_per_km: Option<f64>,
    /// Whole-session decoupling, percent.
    pub decoupling_pct: Option<f64>,
    pub elevation_gain_m: Option<f64>,
    /// Whether the paces are hill-adjusted (the session has altitude).
    pub hill_adjusted: bool,
    /// The plan's title, when a plan was used.
    pub plan_title: Option<String>,
    /// The file name of the plan used (`2026-11-12-cruise-miles.toml`).
    pub plan_file: Option<String>,
    /// The workout shape (plan, else detected); `None` for a run without work intervals.
    pub shape: Option<WorkoutShape>,
    /// The work intervals.
    pub reps: Vec<RepCard>,
}

fn weight(i: &IntervalMetrics) -> f64 {
    if i.moving_s > 0.0 {
        i.moving_s
    } else {
        i.duration_s
    }
}

/// Time-weighted mean pace on flat ground over the intervals (hill-adjusted where known),
/// s/km, as the mean of speeds.
fn flat_pace(review: &Review) -> Option<f64> {
    let (mut sum, mut w) = (0.0, 0.0);
    for i in &review.intervals {
        let Some(p) = i
            .hill_adjusted_pace_s_per_km
            .or(i.avg_pace_s_per_km)
            .filter(|p| p.is_finite() && *p > 0.0)
        else {
            continue;
        };
        let wt = weight(i);
        if wt.is_finite() && wt > 0.0 {
            sum += wt * 1000.0 / p;
            w += wt;
        }
    }
    (w > 0.0 && sum > 0.0).then(|| 1000.0 / (sum / w))
}

/// Mean speed in [`TRACE_BIN_S`] bins over `[from_s, to_s)`.
fn trace(session: Option<&Session>, from_s: f64, to_s: f64) -> Vec<Option<f32>> {
    let Some(session) = session else {
        return Vec::new();
    };
    let Some(speed) = session.speed.as_ref() else {
        return Vec::new();
    };
    if to_s.is_nan() || from_s.is_nan() || to_s <= from_s {
        return Vec::new();
    }
    let bins = ((to_s - from_s) / TRACE_BIN_S).ceil().max(1.0) as usize;
    let mut sums = vec![(0.0f64, 0usize); bins];
    let lo = session.t.partition_point(|&t| t < from_s);
    for (i, &t) in session.t.iter().enumerate().skip(lo) {
        if t >= to_s {
            break;
        }
        let Some(v) = speed.get(i).filter(|v| v.is_finite() && *v >= 0.0) else {
            continue;
        };
        if session.is_paused_at(t) {
            continue;
        }
        let b = (((t - from_s) / TRACE_BIN_S) as usize).min(bins - 1);
        if let Some(cell) = sums.get_mut(b) {
            cell.0 += v;
            cell.1 += 1;
        }
    }
    sums.into_iter()
        .map(|(s, n)| (n > 0).then(|| (s / n as f64) as f32))
        .collect()
}

impl SessionCard {
    /// Cut the card of a session from its review; `session` (its samples) gives the reps'
    /// speed traces and may be left out (no traces). `None` when the review's start time is
    /// unreadable.
    pub fn build(
        session_id: &str,
        review: &Review,
        session: Option<&Session>,
    ) -> Option<SessionCard> {
        let start = DateTime::parse_from_rfc3339(&review.session.start)
            .ok()?
            .with_timezone(&Utc);
        let stem = session_id.rsplit('/').next().unwrap_or(session_id);
        let day = crate::model::session::session_day(stem, start);
        let reps = review
            .work()
            .enumerate()
            .map(|(k, w)| {
                let number = w.work_number.unwrap_or(k + 1);
                RepCard {
                    number,
                    start_s: w.start_s,
                    end_s: w.end_s,
                    duration_s: w.duration_s,
                    distance_m: w.distance_m,
                    pace_s_per_km: w.avg_pace_s_per_km,
                    hill_adjusted_pace_s_per_km: w.hill_adjusted_pace_s_per_km,
                    avg_hr: w.avg_hr,
                    relative_intensity: w.relative_intensity,
                    grade_pct: w.grade_pct,
                    recovery_trough_bpm: review
                        .recoveries
                        .iter()
                        .find(|r| r.work_number == number)
                        .and_then(|r| r.recovery_trough_bpm),
                    trace_mps: trace(session, w.start_s, w.end_s),
                }
            })
            .collect();
        Some(SessionCard {
            session_id: session_id.to_string(),
            start,
            day,
            kind: review.kind,
            running: review.running,
            sport: review.session.sport.clone(),
            duration_s: review.session.duration_s,
            moving_s: review.session.moving_s,
            distance_m: review.session.distance_m,
            trimp: review.trimp,
            trimp_lower_bound: review.trimp_lower_bound,
            avg_hr: review.avg_hr,
            flat_pace_s_per_km: flat_pace(review),
            decoupling_pct: review.decoupling_pct,
            elevation_gain_m: review.elevation_gain_m,
            hill_adjusted: review.hill_adjusted,
            plan_title: review.plan.as_ref().map(|p| p.title.clone()),
            plan_file: review.plan_file.clone(),
            shape: review.workout_shape.clone(),
            reps,
        })
    }
}
