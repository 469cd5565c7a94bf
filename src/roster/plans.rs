//! Matching a recorded session to its planned workout: same athlete, same date.

use std::path::{Path, PathBuf};

use chrono::{DateTime, NaiveDate, Utc};

use crate::model::{Amount, AthleteProfile, Plan};
use crate::plan::PlanFileError;

use super::{Athlete, Problem};

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

/// The plan chosen for a session, and the plan files of its day that could not be used.
#[derive(Debug, Default)]
pub struct PlanChoice {
    pub plan: Option<(PathBuf, Plan)>,
    /// Plan files meant for this session (same stem, or dated on its day) that failed to load.
    pub broken: Vec<PlanFileError>,
}

/// The plan for the session of activity `stem`: a plan file with the same stem as the
/// activity when there is one (an explicit pairing); otherwise, among the athlete's plans
/// dated on the session's day ([`session_day`]; a plan's `date` key, else its file-name
/// date) and not paired with another of the athlete's activities, the one whose planned
/// length is closest to the session's duration. A plan file meant for the session (its
/// pairing, or dated by its file name on the session's day) that fails to load is listed in
/// `broken`, so the session can be analysed without it and say why; other broken files are
/// left to `splitdesk check` and `splitdesk plan check`.
pub fn choose_plan(
    athlete: &Athlete,
    stem: &str,
    start: DateTime<Utc>,
    duration_s: f64,
) -> PlanChoice {
    let mut choice = PlanChoice::default();
    if let Some(path) = athlete.plan_files.iter().find(|p| stem_of(p) == Some(stem)) {
        match crate::plan::load(path) {
            Ok(plan) => choice.plan = Some((path.clone(), plan)),
            Err(e) => choice.broken.push(e),
        }
        return choice;
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
            Err(e) => {
                if file_date(path) == Some(day) {
                    choice.broken.push(e);
                }
                continue;
            }
        };
        if plan.date != Some(day) {
            continue;
        }
        let miss = (planned_seconds(&plan) - duration_s).abs();
        if best.as_ref().is_none_or(|(m, _, _)| miss < *m) {
            best = Some((miss, path.clone(), plan));
        }
    }
    choice.plan = best.map(|(_, p, plan)| (p, plan));
    choice
}

/// The athlete's planned sessions dated `from..=to` (a plan's `date` key, else its file-name
/// date), oldest first, each with the activity paired with it by name when there is one. A
/// plan file that cannot be read is left out here (`splitdesk check` names it). Only files
/// whose name dates them within a month of the range, or that carry no date in their name,
/// are read.
pub fn planned_days(
    athlete: &Athlete,
    from: NaiveDate,
    to: NaiveDate,
) -> Vec<crate::analysis::week::PlannedDay> {
    let slack = chrono::Duration::days(31);
    let mut out = Vec::new();
    for path in &athlete.plan_files {
        let named = file_date(path);
        if named.is_some_and(|d| d < from - slack || d > to + slack) {
            continue;
        }
        let Ok(plan) = crate::plan::load(path) else {
            continue;
        };
        let Some(date) = plan.date.or(named) else {
            continue;
        };
        if date < from || date > to {
            continue;
        }
        out.push(crate::analysis::week::PlannedDay {
            file: path
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            date,
            title: plan.title.clone(),
            kind: crate::analysis::kind::plan_kind(&plan),
            planned_s: planned_seconds(&plan),
            activity: stem_of(path)
                .and_then(|s| athlete.activities.iter().find(|a| a.stem == s))
                .map(|a| athlete.session_id(a)),
        });
    }
    out.sort_by(|a, b| a.date.cmp(&b.date).then_with(|| a.file.cmp(&b.file)));
    out
}

/// [`choose_plan`] as a result: the first broken plan file of the session is an error.
pub fn plan_for_session(
    athlete: &Athlete,
    stem: &str,
    start: DateTime<Utc>,
    duration_s: f64,
) -> Result<Option<(PathBuf, Plan)>, PlanFileError> {
    let mut choice = choose_plan(athlete, stem, start, duration_s);
    if choice.broken.is_empty() {
        Ok(choice.plan)
    } else {
        Err(choice.broken.remove(0))
    }
}

/// The problems of one plan file for an athlete, one line each: the file cannot be read, is
/// not a valid plan (`line L, column C: ...`), or names paces the profile does not have.
pub fn check_plan_file(path: &Path, profile: &AthleteProfile) -> Vec<Problem> {
    let problem = |message: String| Problem {
        path: path.to_path_buf(),
        message,
    };
    let text = match crate::ingest::read_text_file(path) {
        Ok(t) => t,
        Err(e) => return vec![problem(e.to_string())],
    };
    let name = path.file_name().and_then(|n| n.to_str());
    match crate::plan::parse_toml(&text, name) {
        Err(e) => vec![problem(e.located())],
        Ok(plan) => crate::plan::unknown_paces(&plan, profile, &text)
            .iter()
            .map(|u| problem(u.message(profile)))
            .collect(),
    }
}
