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
    let by = matched_by(current);
    let mut picked: Vec<usize> = candidates
        .iter()
        .enumerate()
        .filter(|(_, c)| c.session_id != current.session_id && c.start < current.start)
        .filter(|(_, c)| c.kind != SessionKind::NotRunning)
        .filter(|(_, c)| match by {
            MatchedBy::WorkoutShape => match (&current.shape, &c.shape) {
                (Some(a), Some(b)) => super::shape::same_workout(a, b),
                _ => false,
            },
            MatchedBy::Kind => c.shape.is_none() && c.kind == current.kind,
            MatchedBy::Nothing => false,
        })
        .map(|(i, _)| i)
        .collect();
    // Latest first; the same start (two files of one run) in id order, so the pick is stable.
    picked.sort_by(|&x, &y| match (candidates.get(x), candidates.get(y)) {
        (Some(a), Some(b)) => b
            .start
            .cmp(&a.start)
            .then_with(|| a.session_id.cmp(&b.session_id)),
        _ => std::cmp::Ordering::Equal,
    });
    picked.truncate(MAX_EARLIER);
    picked
}

/// How a session is compared with earlier ones.
fn matched_by(current: &SessionCard) -> MatchedBy {
    if !current.running || current.kind == SessionKind::NotRunning {
        MatchedBy::Nothing
    } else if current.shape.is_some() {
        MatchedBy::WorkoutShape
    } else if matches!(current.kind, SessionKind::Easy | SessionKind::LongRun) {
        MatchedBy::Kind
    } else {
        MatchedBy::Nothing
    }
}

/// Mean gradients of two runs' reps further apart than this (percentage points) are
/// different ground.
// Our design choice, from Minetti et al. 2002 (J Appl Physiol 93:1039-1046): the energy cost
// of running rises by roughly 5 % from 0 % to 1 % gradient (From memory: the polynomial's
// linear term, 19.5 i against 3.6 J/kg/m on the flat), so half a point moves the cost of a
// rep by more than the changes the comparison reports; smaller differences are within the
// noise of the recorded altitude over a rep.
pub const GROUND_DIFFERS_PCT: f64 = 0.5;

/// The trend of the pace at a fixed heart rate across the runs counts as a change (fitter or
/// slower) from this fraction of the pace.
// Our design choice (no published source): 1 % of pace (2.4 s/km at 4:00/km) over the span
// of the runs. Smaller changes are inside what the comparison cannot hold fixed: the watch's
// distance on a rep (satellite distance over a few hundred metres is commonly off by 1 % or
// more; From memory, no single source) and the day's heat and wind.
pub const TREND_MIN_FRACTION: f64 = 0.01;

/// Fewest points (reps, or runs for easy and long runs) the fit of pace on heart rate and
/// date needs: three coefficients and two degrees of freedom left.
pub const MIN_FIT_POINTS: usize = 5;

fn finite(x: Option<f64>) -> Option<f64> {
    x.filter(|v| v.is_finite())
}

fn mean(v: &[f64]) -> Option<f64> {
    (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64)
}

/// Sample standard deviation (n - 1); `None` under two values.
fn sample_sd(v: &[f64]) -> Option<f64> {
    if v.len() < 2 {
        return None;
    }
    let m = mean(v)?;
    let ss: f64 = v.iter().map(|x| (x - m) * (x - m)).sum();
    Some((ss / (v.len() - 1) as f64).sqrt())
}

fn mean_of(v: impl Iterator<Item = Option<f64>>) -> Option<f64> {
    let v: Vec<f64> = v.filter_map(finite).collect();
    mean(&v)
}

/// The mean gradient of a run's reps, percent.
fn rep_grade(card: &SessionCard) -> Option<f64> {
    mean_of(card.reps.iter().map(|r| r.grade_pct))
}

/// Which pace a set of runs is compared on.
fn pace_basis(runs: &[&SessionCard], by: MatchedBy) -> PaceBasis {
    if by == MatchedBy::Kind {
        // Easy and long runs compare on flat ground wherever every run can.
        return if runs.iter().all(|c| c.hill_adjusted) {
            PaceBasis::HillAdjusted
        } else {
            PaceBasis::Raw
        };
    }
    let every_rep_adjusted = runs.iter().all(|c| {
        c.hill_adjusted
            && c.reps.iter().all(|r| {
                r.pace_s_per_km.is_none() || finite(r.hill_adjusted_pace_s_per_km).is_some()
            })
    });
    let grades: Vec<Option<f64>> = runs.iter().map(|c| rep_grade(c)).collect();
    let known: Vec<f64> = grades.iter().filter_map(|g| *g).collect();
    let differs = known.len() == grades.len()
        && match (
            known.iter().copied().reduce(f64::min),
            known.iter().copied().reduce(f64::max),
        ) {
            (Some(lo), Some(hi)) => hi - lo > GROUND_DIFFERS_PCT,
            _ => false,
        };
    if differs && every_rep_adjusted {
        PaceBasis::HillAdjusted
    } else {
        PaceBasis::Raw
    }
}

/// A rep's pace on the basis.
fn rep_pace(r: &super::card::RepCard, basis: PaceBasis) -> Option<f64> {
    match basis {
        PaceBasis::HillAdjusted => finite(r.hill_adjusted_pace_s_per_km),
        PaceBasis::Raw => finite(r.pace_s_per_km),
    }
    .filter(|p| *p > 0.0)
}

/// An easy or long run's pace on the basis: flat-ground pace, or the moving pace as run.
fn run_pace(c: &SessionCard, basis: PaceBasis) -> Option<f64> {
    match basis {
        PaceBasis::HillAdjusted => finite(c.flat_pace_s_per_km),
        PaceBasis::Raw => match c.distance_m {
            Some(d) if d > 0.0 && c.moving_s > 0.0 => Some(c.moving_s / d * 1000.0),
            _ => None,
        }
        .filter(|p| p.is_finite()),
    }
    .filter(|p| *p > 0.0)
}

fn occurrence(c: &SessionCard, current: bool, basis: PaceBasis, by: MatchedBy) -> Occurrence {
    if by == MatchedBy::Kind {
        return Occurrence {
            session_id: c.session_id.clone(),
            day: c.day,
            current,
            plan_title: c.plan_title.clone(),
            reps: Vec::new(),
            mean_pace_s_per_km: run_pace(c, basis),
            spread_s_per_km: None,
            mean_hr: finite(c.avg_hr),
            mean_relative_intensity: None,
            mean_trough_bpm: None,
            decoupling_pct: finite(c.decoupling_pct),
            distance_m: c.distance_m,
            duration_s: c.duration_s,
        };
    }
    let reps: Vec<RepRow> = c
        .reps
        .iter()
        .map(|r| RepRow {
            number: r.number,
            pace_s_per_km: rep_pace(r, basis),
            avg_hr: finite(r.avg_hr),
            relative_intensity: finite(r.relative_intensity),
            recovery_trough_bpm: finite(r.recovery_trough_bpm),
        })
        .collect();
    let paces: Vec<f64> = reps.iter().filter_map(|r| r.pace_s_per_km).collect();
    Occurrence {
        session_id: c.session_id.clone(),
        day: c.day,
        current,
        plan_title: c.plan_title.clone(),
        mean_pace_s_per_km: mean(&paces),
        spread_s_per_km: sample_sd(&paces),
        mean_hr: mean_of(reps.iter().map(|r| r.avg_hr)),
        mean_relative_intensity: mean_of(reps.iter().map(|r| r.relative_intensity)),
        mean_trough_bpm: mean_of(reps.iter().map(|r| r.recovery_trough_bpm)),
        decoupling_pct: finite(c.decoupling_pct),
        distance_m: c.distance_m,
        duration_s: c.duration_s,
        reps,
    }
}

/// A pace difference in the athlete's units: seconds per km or per mile.
fn per_unit(s_per_km: f64, units: Units) -> f64 {
    s_per_km * units.metres() / 1000.0
}

/// A pace in the athlete's units, `4:05/km`.
fn pace_words(s_per_km: f64, units: Units) -> String {
    format!(
        "{}/{}",
        crate::model::units::format_clock(per_unit(s_per_km, units)),
        units.label()
    )
}

/// `2.1 s/km faster`, `0.4 s/mi slower`, `the same pace`.
fn pace_change_words(d_s_per_km: f64, units: Units) -> String {
    let d = per_unit(d_s_per_km, units);
    let shown = format!("{:.1}", d.abs());
    if shown == "0.0" {
        "the same pace".to_string()
    } else if d < 0.0 {
        format!("{shown} s/{} faster", units.label())
    } else {
        format!("{shown} s/{} slower", units.label())
    }
}

/// `at 3 bpm lower heart rate`, `at the same heart rate`.
fn hr_change_words(d_bpm: f64) -> String {
    let n = d_bpm.abs().round();
    if n == 0.0 {
        "at the same heart rate".to_string()
    } else if d_bpm < 0.0 {
        format!("at {n:.0} bpm lower heart rate")
    } else {
        format!("at {n:.0} bpm higher heart rate")
    }
}

fn change(now: &Occurrence, then: &Occurrence, by: MatchedBy, units: Units) -> Change {
    let pace = match (now.mean_pace_s_per_km, then.mean_pace_s_per_km) {
        (Some(a), Some(b)) => Some(a - b),
        _ => None,
    };
    let hr = match (now.mean_hr, then.mean_hr) {
        (Some(a), Some(b)) => Some(a - b),
        _ => None,
    };
    // How the pace is taken: on flat ground (an easy or long run), per rep (a set), or the
    // one work interval's (a tempo, a race).
    let what = if by == MatchedBy::Kind {
        " on flat ground"
    } else if now.reps.len() > 1 || then.reps.len() > 1 {
        " per rep"
    } else {
        ""
    };
    let mut text = match pace {
        Some(d) => {
            let words = pace_change_words(d, units);
            if words == "the same pace" {
                format!("the same pace{what} as on {}", then.day)
            } else {
                format!("{words}{what} than on {}", then.day)
            }
        }
        None => format!("no pace to compare with {}", then.day),
    };
    if let Some(h) = hr {
        text.push(' ');
        text.push_str(&hr_change_words(h));
    }
    if by == MatchedBy::Kind {
        if let (Some(a), Some(b)) = (now.decoupling_pct, then.decoupling_pct) {
            text.push_str(&format!("; drift {a:.1} % against {b:.1} %"));
        }
    }
    Change {
        session_id: then.session_id.clone(),
        day: then.day,
        pace_s_per_km: pace,
        hr_bpm: hr,
        text: capitalise(&text),
    }
}

fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

/// Compare `current` with `earlier` (the runs [`pick_earlier`] chose, any order).
pub fn compare(current: &SessionCard, earlier: &[SessionCard], units: Units) -> Comparison {
    let by = matched_by(current);
    let mut before: Vec<&SessionCard> = if by == MatchedBy::Nothing {
        Vec::new()
    } else {
        earlier
            .iter()
            .filter(|c| c.session_id != current.session_id && c.start < current.start)
            .collect()
    };
    before.sort_by(|a, b| {
        a.start
            .cmp(&b.start)
            .then_with(|| a.session_id.cmp(&b.session_id))
    });
    before.dedup_by(|a, b| a.session_id == b.session_id);
    // The latest MAX_EARLIER, oldest first.
    let skip = before.len().saturating_sub(MAX_EARLIER);
    let before: Vec<&SessionCard> = before.into_iter().skip(skip).collect();
    let mut all = before.clone();
    all.push(current);
    let basis = pace_basis(&all, by);
    let runs: Vec<Occurrence> = all
        .iter()
        .map(|c| occurrence(c, c.session_id == current.session_id, basis, by))
        .collect();
    let (changes, pace_at_hr) = match runs.split_last() {
        Some((now, then)) if by != MatchedBy::Nothing && !then.is_empty() => (
            then.iter()
                .rev()
                .map(|t| change(now, t, by, units))
                .collect::<Vec<_>>(),
            pace_at_hr(&runs, basis, by, units),
        ),
        _ => (Vec::new(), None),
    };
    let mut text = Vec::new();
    match by {
        MatchedBy::Nothing => text.push(
            "Nothing to compare: only runs with a workout shape, easy runs and long runs are \
             compared with earlier ones."
                .to_string(),
        ),
        _ if changes.is_empty() => text.push(match by {
            MatchedBy::Kind => format!(
                "No earlier {} to compare with.",
                if current.kind == SessionKind::LongRun {
                    "long run"
                } else {
                    "easy run"
                }
            ),
            _ => "No earlier run of this workout to compare with.".to_string(),
        }),
        _ => {
            if let Some(c) = changes.first() {
                text.push(format!("{}.", c.text));
            }
            match &pace_at_hr {
                Some(p) => text.push(p.text.clone()),
                None => text.push(
                    "Pace at a fixed heart rate: none, the session has no heart rate.".to_string(),
                ),
            }
            if let Some(c) = changes.last().filter(|_| changes.len() > 1) {
                text.push(format!("{}.", c.text));
            }
            if basis == PaceBasis::HillAdjusted && by == MatchedBy::WorkoutShape {
                text.push(
                    "Paces are hill-adjusted: the ground differs between these runs.".to_string(),
                );
            }
        }
    }
    Comparison {
        schema: SCHEMA.to_string(),
        session_id: current.session_id.clone(),
        day: current.day,
        kind: current.kind,
        matched_by: by,
        shape: current.shape.clone(),
        pace_basis: basis,
        units: units.label().to_string(),
        runs,
        changes,
        pace_at_hr,
        text,
        caution: CAUTION.to_string(),
    }
}

/// The caution the pace-at-HR text always ends with.
pub const PACE_AT_HR_CAUTION: &str =
    "Conditions (heat, hills, fatigue) differ between runs: read it as a hint.";

/// One point of the fit: pace (s/km), heart rate (bpm), days from the first run.
#[derive(Debug, Clone, Copy)]
struct Point {
    pace: f64,
    hr: f64,
    day: f64,
    run: usize,
}

/// Ordinary least squares of `pace = b0 + b1 * hr + b2 * day` over the points: the normal
/// equations (X'X) b = X'y solved by Gaussian elimination with partial pivoting. `None`
/// when X'X is singular (every point on one day, one heart rate, or HR and date in step).
// Source of the method: ordinary least squares with the normal equations, as in any
// regression text (From memory: Draper & Smith, Applied Regression Analysis, 3rd ed. 1998,
// ch. 5, the matrix form b = (X'X)^-1 X'y).
// Indexing: a fixed 3 x 4 array indexed by loop counters below 3 and 4, nothing read from a
// file or typed; it cannot go out of bounds.
#[allow(clippy::indexing_slicing, clippy::needless_range_loop)]
fn least_squares(points: &[Point]) -> Option<[f64; 3]> {
    // The augmented normal equations [X'X | X'y], X = [1, hr, day].
    let mut a = [[0.0f64; 4]; 3];
    for p in points {
        let x = [1.0, p.hr, p.day];
        for i in 0..3 {
            for j in 0..3 {
                a[i][j] += x[i] * x[j];
            }
            a[i][3] += x[i] * p.pace;
        }
    }
    // Scale of the system, for the singularity test.
    let scale = a
        .iter()
        .flat_map(|r| r.iter().take(3))
        .fold(0.0f64, |m, v| m.max(v.abs()));
    if scale.is_nan() || scale <= 0.0 || !scale.is_finite() {
        return None;
    }
    for col in 0..3 {
        let mut pivot = col;
        for r in col + 1..3 {
            if a[r][col].abs() > a[pivot][col].abs() {
                pivot = r;
            }
        }
        a.swap(col, pivot);
        let pv = a[col][col];
        // Relative to the system's scale (sums of squares of HR near 10^5 per point).
        if pv.abs() <= 1e-10 * scale {
            return None;
        }
        for r in 0..3 {
            if r != col {
                let f = a[r][col] / pv;
                for c in col..4 {
                    a[r][c] -= f * a[col][c];
                }
            }
        }
    }
    let b = [a[0][3] / a[0][0], a[1][3] / a[1][1], a[2][3] / a[2][2]];
    b.iter().all(|v| v.is_finite()).then_some(b)
}

fn pace_at_hr(
    runs: &[Occurrence],
    basis: PaceBasis,
    by: MatchedBy,
    units: Units,
) -> Option<PaceAtHr> {
    let first_day = runs.first().map(|r| r.day);
    let days_from_first = |d: NaiveDate| first_day.map_or(0.0, |f| (d - f).num_days() as f64);
    let mut points = Vec::new();
    for (k, run) in runs.iter().enumerate() {
        let day = days_from_first(run.day);
        if by == MatchedBy::Kind {
            if let (Some(pace), Some(hr)) = (run.mean_pace_s_per_km, run.mean_hr) {
                points.push(Point {
                    pace,
                    hr,
                    day,
                    run: k,
                });
            }
        } else {
            for r in &run.reps {
                if let (Some(pace), Some(hr)) = (r.pace_s_per_km, r.avg_hr) {
                    points.push(Point {
                        pace,
                        hr,
                        day,
                        run: k,
                    });
                }
            }
        }
    }
    let current = runs.last();
    // The fixed heart rate: the session's own (mean rep HR, or the run's), rounded.
    let fixed = current
        .and_then(|r| {
            let own: Vec<f64> = points
                .iter()
                .filter(|p| p.run + 1 == runs.len())
                .map(|p| p.hr)
                .collect();
            mean(&own).or(r.mean_hr)
        })
        .map(f64::round);
    let runs_in_fit = {
        let mut v: Vec<usize> = points.iter().map(|p| p.run).collect();
        v.dedup();
        v.len()
    };
    let hr_fixed = fixed?;
    let unclear = |slope: Option<f64>, trend: Option<f64>, why: String| PaceAtHr {
        hr_bpm: hr_fixed,
        slope_s_per_km_per_bpm: slope,
        trend_s_per_km_per_week: trend,
        points: points.len(),
        runs: Vec::new(),
        trend: FitnessTrend::Unclear,
        text: format!("Pace at a fixed heart rate: unclear ({why}). {PACE_AT_HR_CAUTION}"),
    };
    let what = if by == MatchedBy::Kind {
        "runs"
    } else if runs.iter().any(|r| r.reps.len() > 1) {
        "reps"
    } else {
        "work intervals"
    };
    if runs_in_fit < 2 || points.len() < MIN_FIT_POINTS {
        return Some(unclear(
            None,
            None,
            format!(
                "{} {what} with pace and heart rate over {runs_in_fit} run{}; the fit needs \
                 at least {MIN_FIT_POINTS} over two runs or more",
                points.len(),
                if runs_in_fit == 1 { "" } else { "s" }
            ),
        ));
    }
    let Some([_, b1, b2]) = least_squares(&points) else {
        return Some(unclear(
            None,
            None,
            "heart rate and date cannot be told apart in these runs".to_string(),
        ));
    };
    let trend_week = b2 * 7.0;
    if b1 >= 0.0 {
        return Some(unclear(
            Some(b1),
            Some(trend_week),
            format!(
                "heart rate does not explain pace across these {what}: the faster ones did \
                 not come with a higher heart rate"
            ),
        ));
    }
    // Per run: its mean pace (over the points in the fit) moved to the fixed heart rate.
    let mut per_run = Vec::new();
    for (k, run) in runs.iter().enumerate() {
        let own: Vec<&Point> = points.iter().filter(|p| p.run == k).collect();
        let (Some(p), Some(h)) = (
            mean(&own.iter().map(|p| p.pace).collect::<Vec<_>>()),
            mean(&own.iter().map(|p| p.hr).collect::<Vec<_>>()),
        ) else {
            continue;
        };
        per_run.push(PaceAtHrRun {
            session_id: run.session_id.clone(),
            day: run.day,
            pace_s_per_km: p + b1 * (hr_fixed - h),
        });
    }
    let span_days = points.iter().map(|p| p.day).fold(0.0f64, f64::max)
        - points.iter().map(|p| p.day).fold(f64::INFINITY, f64::min);
    let change = b2 * span_days;
    let reference = per_run
        .last()
        .map(|r| r.pace_s_per_km)
        .filter(|p| *p > 0.0)
        .or_else(|| mean(&points.iter().map(|p| p.pace).collect::<Vec<_>>()))
        .unwrap_or(0.0);
    let threshold = TREND_MIN_FRACTION * reference;
    let trend = if change <= -threshold {
        FitnessTrend::Fitter
    } else if change >= threshold {
        FitnessTrend::Slower
    } else {
        FitnessTrend::Same
    };
    let ground = if basis == PaceBasis::HillAdjusted {
        " on flat ground"
    } else {
        ""
    };
    let list = per_run
        .iter()
        .map(|r| format!("{} on {}", pace_words(r.pace_s_per_km, units), r.day))
        .collect::<Vec<_>>()
        .join(", ");
    let verdict = match trend {
        FitnessTrend::Fitter => "getting fitter at this workout",
        FitnessTrend::Slower => "slower at this workout than before",
        _ => "about the same at this workout",
    };
    let over = format!(
        "{} over {:.0} weeks",
        pace_change_words(change, units).replace("the same pace", "no change"),
        span_days / 7.0
    );
    let text = format!(
        "Pace at {hr_fixed:.0} bpm{ground}: {list}; {over}: {verdict}. {PACE_AT_HR_CAUTION}"
    );
    Some(PaceAtHr {
        hr_bpm: hr_fixed,
        slope_s_per_km_per_bpm: Some(b1),
        trend_s_per_km_per_week: Some(trend_week),
        points: points.len(),
        runs: per_run,
        trend,
        text,
    })
}
