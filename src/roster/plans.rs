//! Matching a recorded session to its planned workout: same athlete, same date.

use std::path::{Path, PathBuf};

use chrono::{DateTime, NaiveDate, Utc};

use crate::model::{Amount, Plan};
use crate::plan::PlanFileError;

use super::Athlete;

/// Speed used to turn a distance step into a time when comparing plans, m/s.
/// Our design choice: only used to rank two plans of the same day.
const RANKING_SPEED_MPS: f64 = 3.5;

/// The date a plan file's name starts with (`YYYY-MM-DD-...`).
pub fn file_date(path: &Path) -> Option<NaiveDate> {
    let name = path.file_name()?.to_str()?;
    NaiveDate::parse_from_str(name.get(..10)?, "%Y-%m-%d").ok()
}

/// Planned length of a plan in seconds (distances at a nominal running speed).
pub fn planned_seconds(plan: &Plan) -> f64 {
    plan.expand()
        .iter()
        .map(|e| match e.amount {
            Amount::Duration(s) => s,
            Amount::Distance(m) => m / RANKING_SPEED_MPS,
        })
        .sum()
}

pub use crate::model::session::session_day;

/// File stem (name without extension).
fn stem_of(path: &Path) -> Option<&str> {
    path.file_stem().and_then(|s| s.to_str())
}

/// The plan for the session of activity `stem`: a plan file with the same stem as the
/// activity when there is one (an explicit pairing); otherwise, among the athlete's plans
/// dated on the session's day ([`session_day`]; a plan's `date` key, else its file-name
/// date) and not paired with another of the athlete's activities, the one whose planned
/// length is closest to the session's duration. A plan file that fails to load is an error
/// for the sessions of its file-name day, so the caller can report it; for other days (and
/// when its name carries no date) it is left to `splitdesk plan check`.
pub fn plan_for_session(
    athlete: &Athlete,
    stem: &str,
    start: DateTime<Utc>,
    duration_s: f64,
) -> Result<Option<(PathBuf, Plan)>, PlanFileError> {
    if let Some(path) = athlete.plan_files.iter().find(|p| stem_of(p) == Some(stem)) {
        let plan = crate::plan::load(path)?;
        return Ok(Some((path.clone(), plan)));
    }
    let day = session_day(stem, start);
    let paired_elsewhere =
        |p: &Path| stem_of(p).is_some_and(|s| athlete.activities.iter().any(|a| a.stem == s));
    let mut best: Option<(f64, PathBuf, Plan)> = None;
    for path in &athlete.plan_files {
        if paired_elsewhere(path) {
            continue;
        }
        let plan = match crate::plan::load(path) {
            Ok(plan) => plan,
            Err(e) if file_date(path) == Some(day) => return Err(e),
            Err(_) => continue,
        };
        if plan.date != Some(day) {
            continue;
        }
        let miss = (planned_seconds(&plan) - duration_s).abs();
        if best.as_ref().is_none_or(|(m, _, _)| miss < *m) {
            best = Some((miss, path.clone(), plan));
        }
    }
    Ok(best.map(|(_, p, plan)| (p, plan)))
}
