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

/// The plan files of `athlete` dated on the session's day (UTC date of its start).
pub fn plan_files_on(athlete: &Athlete, start: DateTime<Utc>) -> Vec<PathBuf> {
    let day = start.date_naive();
    athlete
        .plan_files
        .iter()
        .filter(|p| file_date(p) == Some(day))
        .cloned()
        .collect()
}

/// The plan for a session: among the athlete's plans of that day, the one whose planned
/// length is closest to the session's duration. Plans that fail to load are returned as
/// errors so the caller can report them.
pub fn plan_for_session(
    athlete: &Athlete,
    start: DateTime<Utc>,
    duration_s: f64,
) -> Result<Option<(PathBuf, Plan)>, PlanFileError> {
    let mut best: Option<(f64, PathBuf, Plan)> = None;
    for path in plan_files_on(athlete, start) {
        let plan = crate::plan::load(&path)?;
        let miss = (planned_seconds(&plan) - duration_s).abs();
        if best.as_ref().is_none_or(|(m, _, _)| miss < *m) {
            best = Some((miss, path, plan));
        }
    }
    Ok(best.map(|(_, p, plan)| (p, plan)))
}
