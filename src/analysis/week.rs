//! The week around a session (the glossary's week strip, `week`): each day's sessions, the
//! planned sessions with no activity (missed) and the activities without a plan (extra),
//! the week's load against the athlete's last four weeks, and the days since the last hard
//! session and the last long run. Pure: session cards and planned days in, a week out.

use std::collections::{BTreeMap, BTreeSet};
use std::fmt::Write as _;

use chrono::{Duration, NaiveDate};
use serde::Serialize;

use super::card::SessionCard;
use super::history::LOAD_CAUTION_WORDS;
use super::kind::SessionKind;
use super::load::{ACUTE_CHRONIC_CAUTION, ACUTE_CHRONIC_CRITICISM};

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
    /// The athlete's activity paired with this plan by file name (`athlete/stem`), when
    /// there is one: a plan whose paired file has no analysis (the file cannot be read) is
    /// not missed but listed as not analysed.
    pub activity: Option<String>,
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
    /// Planned sessions whose activity file (paired by name) has no analysis: the file
    /// cannot be read (`splitdesk check` names it). Run, but not in the day's sessions.
    pub not_analysed: Vec<PlannedDay>,
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
    /// True when the week's load is a lower bound: a session of the 7 days has no load or
    /// one resting on partial HR.
    pub week_load_lower_bound: bool,
    /// How many of the [`LOAD_WEEKS`] weeks before hold no session at all (a break, or days
    /// before the athlete's first recording).
    pub previous_weeks_without_sessions: usize,
    /// Planned sessions of the strip's days before today with no activity.
    pub missed: usize,
    /// Sessions of the strip's days without a plan.
    pub extra: usize,
    /// The week in plain words.
    pub text: Vec<String>,
}

/// A session's load for the sums: its TRIMP when it is a finite, non-negative number.
fn card_load(c: &SessionCard) -> Option<f64> {
    c.trimp.filter(|l| l.is_finite() && *l >= 0.0)
}

/// The file stem of a plan file name (`2026-11-12-cruise-miles.toml` -> `2026-11-12-cruise-miles`).
fn plan_stem(file: &str) -> &str {
    file.strip_suffix(".toml").unwrap_or(file)
}

/// The file stem of a session id (`athlete/stem` -> `stem`).
fn session_stem(id: &str) -> &str {
    id.rsplit('/').next().unwrap_or(id)
}

/// Which session stands for which plan file: a plan counts as done by the session whose
/// analysis used it (the card's `plan_file`). When several sessions used the same plan (two
/// runs on a day with one plan), the one paired with it by name wins, else the one whose
/// length is closest to the plan's, else the earliest; the others are extra. Returns
/// plan file -> session id.
fn plan_owners<'a>(
    cards: &[&'a SessionCard],
    planned: &[PlannedDay],
) -> BTreeMap<&'a str, &'a str> {
    let mut by_plan: BTreeMap<&str, Vec<&SessionCard>> = BTreeMap::new();
    for c in cards {
        if let Some(f) = c.plan_file.as_deref() {
            by_plan.entry(f).or_default().push(c);
        }
    }
    by_plan
        .into_iter()
        .filter_map(|(file, mut users)| {
            let planned_s = planned.iter().find(|p| p.file == file).map(|p| p.planned_s);
            let miss = |c: &SessionCard| match planned_s {
                Some(p) if p.is_finite() && c.duration_s.is_finite() => (c.duration_s - p).abs(),
                _ => f64::INFINITY,
            };
            users.sort_by(|a, b| {
                let named = |c: &SessionCard| session_stem(&c.session_id) != plan_stem(file);
                named(a)
                    .cmp(&named(b))
                    .then_with(|| miss(a).total_cmp(&miss(b)))
                    .then_with(|| a.start.cmp(&b.start))
                    .then_with(|| a.session_id.cmp(&b.session_id))
            });
            users.first().map(|c| (file, c.session_id.as_str()))
        })
        .collect()
}

/// `n session(s)`.
fn sessions_word(n: usize) -> String {
    if n == 1 {
        "1 session".to_string()
    } else {
        format!("{n} sessions")
    }
}

/// `Easy run on Tue 2026-11-24, Tempo on Thu 2026-11-26` (at most three named).
fn planned_list(list: &[&PlannedDay]) -> String {
    let mut parts: Vec<String> = list
        .iter()
        .take(3)
        .map(|p| format!("{} on {}", p.title, p.date.format("%a %Y-%m-%d")))
        .collect();
    if list.len() > 3 {
        parts.push(format!("{} more", list.len() - 3));
    }
    parts.join(", ")
}

/// `n days before`, `1 day before`, `the same day`.
fn days_before_words(n: i64) -> String {
    match n {
        0 => "the same day".to_string(),
        1 => "1 day before".to_string(),
        n => format!("{n} days before"),
    }
}

/// One line over a run of days: sessions, missed, without a plan, planned not yet run.
fn span_line(head: String, days: &[&WeekDay], say_none_missed: bool) -> String {
    let sessions: usize = days.iter().map(|d| d.sessions.len()).sum();
    let extra: usize = days
        .iter()
        .map(|d| d.sessions.iter().filter(|s| s.extra).count())
        .sum();
    let missed: Vec<&PlannedDay> = days.iter().flat_map(|d| d.missed.iter()).collect();
    let upcoming: Vec<&PlannedDay> = days.iter().flat_map(|d| d.upcoming.iter()).collect();
    let unread: usize = days.iter().map(|d| d.not_analysed.len()).sum();
    let mut line = sessions_word(sessions);
    if !head.is_empty() {
        line.push(' ');
        line.push_str(&head);
    }
    if !missed.is_empty() {
        let _ = write!(
            line,
            ", {} missed ({})",
            missed.len(),
            planned_list(&missed)
        );
    } else if say_none_missed {
        line.push_str(", none missed");
    }
    if extra > 0 {
        let _ = write!(line, ", {extra} without a plan");
    }
    if unread > 0 {
        let _ = write!(
            line,
            ", {unread} planned session{} run but its file cannot be read (`splitdesk check` \
             names it)",
            if unread == 1 { "" } else { "s" }
        );
    }
    if !upcoming.is_empty() {
        let _ = write!(
            line,
            ", {} planned and not run yet ({})",
            upcoming.len(),
            planned_list(&upcoming)
        );
    }
    line
}

/// Build the week strip centred on `centre` (`current`: the session it is centred on).
/// `cards` are the athlete's sessions from [`LOAD_WEEKS`] weeks plus a week before the
/// centre, and at least [`LOOKBACK_DAYS`] back, to the end of the strip (any order);
/// `planned` the athlete's planned sessions in the strip's days; `today` bounds the strip
/// and decides what is missed (a planned day before today with no activity).
///
/// The strip runs from [`DAYS_BEFORE`] days before the centre to [`DAYS_AFTER`] days after
/// it, never past today (a centre after today ends the strip on the centre). A planned
/// session is done when a session's analysis used its plan file (the card's `plan_file`,
/// on whatever day); of several sessions that used the same plan, one counts as planned
/// (the one paired with it by name, else the one closest to its length) and the others
/// as extra. The week's load is the sum of TRIMP over the 7 days ending on the centre day;
/// it is set against the mean of the [`LOAD_WEEKS`] 7-day blocks before them (an uncoupled
/// rolling acute/chronic ratio, methods.md §9, with a 28-day chronic window). The last hard
/// session and the last long run are looked for over [`LOOKBACK_DAYS`] days: before the
/// current session when there is one (an earlier run of the same day counts), else up to
/// and including the centre day.
pub fn week_strip(
    athlete: &str,
    centre: NaiveDate,
    current: Option<&str>,
    cards: &[SessionCard],
    planned: &[PlannedDay],
    today: NaiveDate,
) -> Week {
    let from = centre - Duration::days(DAYS_BEFORE);
    let to = (centre + Duration::days(DAYS_AFTER)).min(today.max(centre));
    let mut sorted: Vec<&SessionCard> = cards.iter().collect();
    sorted.sort_by(|a, b| {
        a.start
            .cmp(&b.start)
            .then_with(|| a.session_id.cmp(&b.session_id))
    });
    let owners = plan_owners(&sorted, planned);
    let owned: BTreeSet<&str> = owners.values().copied().collect();
    let done: BTreeSet<&str> = owners.keys().copied().collect();

    let mut days = Vec::new();
    let mut d = from;
    while d <= to {
        let sessions: Vec<WeekSession> = sorted
            .iter()
            .filter(|c| c.day == d)
            .map(|c| {
                let planned = owned.contains(c.session_id.as_str());
                WeekSession {
                    session_id: c.session_id.clone(),
                    kind: c.kind,
                    duration_s: c.duration_s,
                    moving_s: c.moving_s,
                    distance_m: c.distance_m,
                    load: card_load(c),
                    load_lower_bound: c.trimp_lower_bound,
                    plan_title: if planned { c.plan_title.clone() } else { None },
                    extra: !planned,
                    current: current == Some(c.session_id.as_str()),
                }
            })
            .collect();
        let has_card = |id: &str| sorted.iter().any(|c| c.session_id == id);
        let (not_analysed, open): (Vec<PlannedDay>, Vec<PlannedDay>) = planned
            .iter()
            .filter(|p| p.date == d && !done.contains(p.file.as_str()))
            .cloned()
            .partition(|p| p.activity.as_deref().is_some_and(|a| !has_card(a)));
        let (missed, upcoming) = if d < today {
            (open, Vec::new())
        } else {
            (Vec::new(), open)
        };
        days.push(WeekDay {
            date: d,
            offset: (d - centre).num_days(),
            load: sessions
                .iter()
                .filter_map(|s| s.load)
                .fold(0.0, |a, b| a + b),
            sessions,
            missed,
            upcoming,
            not_analysed,
        });
        d += Duration::days(1);
    }

    // Load: the 7 days ending on the centre against the LOAD_WEEKS blocks before them.
    let week_from = centre - Duration::days(6);
    let in_week: Vec<&&SessionCard> = sorted
        .iter()
        .filter(|c| c.day >= week_from && c.day <= centre)
        .collect();
    // A fold from +0.0: an empty `sum` of floats is -0.0.
    let week_load: f64 = in_week
        .iter()
        .filter_map(|c| card_load(c))
        .fold(0.0, |a, b| a + b);
    let week_load_lower_bound = in_week
        .iter()
        .any(|c| c.trimp_lower_bound || card_load(c).is_none());
    let mut previous_sum = 0.0;
    let mut previous_sessions = 0;
    let mut previous_weeks_without_sessions = 0;
    for k in 1..=LOAD_WEEKS {
        let block_to = centre - Duration::days(7 * k);
        let block_from = block_to - Duration::days(6);
        let block: Vec<&&SessionCard> = sorted
            .iter()
            .filter(|c| c.day >= block_from && c.day <= block_to)
            .collect();
        if block.is_empty() {
            previous_weeks_without_sessions += 1;
        }
        previous_sessions += block.len();
        previous_sum += block
            .iter()
            .filter_map(|c| card_load(c))
            .fold(0.0, |a, b| a + b);
    }
    let previous_weeks_mean_load =
        (previous_sessions > 0).then(|| previous_sum / LOAD_WEEKS as f64);
    let load_ratio = previous_weeks_mean_load
        .filter(|m| *m > 0.0)
        .map(|m| week_load / m);

    // The last hard session and the last long run.
    let current_card = current.and_then(|id| sorted.iter().find(|c| c.session_id == id));
    let lookback_from = centre - Duration::days(LOOKBACK_DAYS);
    let before = |c: &SessionCard| -> bool {
        if c.day < lookback_from {
            return false;
        }
        match current_card {
            Some(cur) => c.session_id != cur.session_id && c.start < cur.start && c.day <= centre,
            None => c.day <= centre,
        }
    };
    let last = |pick: &dyn Fn(SessionKind) -> bool| -> Option<LastSession> {
        sorted
            .iter()
            .rev()
            .find(|c| pick(c.kind) && before(c))
            .map(|c| LastSession {
                session_id: c.session_id.clone(),
                day: c.day,
                kind: c.kind,
                days_before: (centre - c.day).num_days(),
            })
    };
    let last_hard = last(&|k: SessionKind| k.has_work());
    let last_long = last(&|k: SessionKind| k == SessionKind::LongRun);

    let missed = days.iter().map(|d| d.missed.len()).sum();
    let extra = days
        .iter()
        .map(|d| d.sessions.iter().filter(|s| s.extra).count())
        .sum();

    let mut week = Week {
        schema: SCHEMA.to_string(),
        athlete: athlete.to_string(),
        centre,
        session_id: current.map(str::to_string),
        today,
        from,
        to,
        days,
        week_load,
        previous_weeks_mean_load,
        load_ratio,
        last_hard,
        last_long,
        week_load_lower_bound,
        previous_weeks_without_sessions,
        missed,
        extra,
        text: Vec::new(),
    };
    week.text = words(&week);
    week
}

/// The week in a few plain lines for the coach.
fn words(w: &Week) -> Vec<String> {
    let mut out = Vec::new();
    let before: Vec<&WeekDay> = w.days.iter().filter(|d| d.offset < 0).collect();
    out.push(span_line(
        format!("in the {} days before", before.len()),
        &before,
        true,
    ));
    if let Some(day) = w.days.iter().find(|d| d.offset == 0) {
        let others = day.sessions.iter().any(|s| !s.current);
        if w.session_id.is_none() || others || !day.missed.is_empty() || !day.upcoming.is_empty() {
            out.push(format!(
                "On the day ({}): {}",
                day.date.format("%a %Y-%m-%d"),
                span_line(String::new(), &[day], false)
            ));
        }
    }
    let after: Vec<&WeekDay> = w.days.iter().filter(|d| d.offset > 0).collect();
    if !after.is_empty() {
        let until = if w.to == w.today && w.to < w.centre + Duration::days(DAYS_AFTER) {
            " (to today)"
        } else {
            ""
        };
        out.push(span_line(
            format!(
                "in the {} day{} after{until}",
                after.len(),
                if after.len() == 1 { "" } else { "s" }
            ),
            &after,
            true,
        ));
    }

    let mut load = format!("Load {:.0} this week", w.week_load);
    match (w.load_ratio, w.previous_weeks_mean_load) {
        (Some(r), Some(m)) => {
            let _ = write!(load, ", {r:.1} x the last four weeks' mean ({m:.0})");
        }
        (None, Some(_)) => load.push_str("; the four weeks before carry no load to set it against"),
        _ => load.push_str("; the four weeks before hold no session to set it against"),
    }
    if w.week_load_lower_bound {
        load.push_str(" (a lower bound: not every session has full heart rate)");
    }
    if w.previous_weeks_mean_load.is_some() && w.previous_weeks_without_sessions > 0 {
        let _ = write!(
            load,
            "; {} of those weeks hold no session",
            w.previous_weeks_without_sessions
        );
    }
    out.push(load);

    let hard = match &w.last_hard {
        Some(h) => format!(
            "Last hard session {} ({})",
            days_before_words(h.days_before),
            h.kind.label()
        ),
        None => format!("No hard session in the {LOOKBACK_DAYS} days before"),
    };
    let long = match &w.last_long {
        Some(l) => format!("last long run {}", days_before_words(l.days_before)),
        None => format!("no long run in the {LOOKBACK_DAYS} days before"),
    };
    out.push(format!("{hard}, {long}"));

    if let Some(r) = w.load_ratio.filter(|r| *r >= ACUTE_CHRONIC_CAUTION) {
        out.push(format!(
            "Caution: this week's load is {r:.1} x the last four weeks' mean, at or above \
             {ACUTE_CHRONIC_CAUTION:.1}, the band usually marked for caution (Gabbett 2016). \
             {ACUTE_CHRONIC_CRITICISM} {LOAD_CAUTION_WORDS}"
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::{TimeZone, Utc};

    fn d(s: &str) -> NaiveDate {
        NaiveDate::parse_from_str(s, "%Y-%m-%d").unwrap()
    }

    /// A card of invented numbers (self-consistency only).
    fn card(
        stem: &str,
        hour: u32,
        kind: SessionKind,
        trimp: f64,
        plan: Option<&str>,
    ) -> SessionCard {
        let day = d(&stem[..10]);
        SessionCard {
            session_id: format!("ada/{stem}"),
            start: Utc.from_utc_datetime(&day.and_hms_opt(hour, 0, 0).unwrap()),
            day,
            kind,
            running: true,
            sport: "running".into(),
            duration_s: 3000.0,
            moving_s: 2950.0,
            distance_m: Some(10_000.0),
            trimp: Some(trimp),
            trimp_lower_bound: false,
            avg_hr: Some(140.0),
            flat_pace_s_per_km: Some(300.0),
            decoupling_pct: None,
            elevation_gain_m: None,
            hill_adjusted: false,
            plan_title: plan.map(|p| format!("title of {p}")),
            plan_file: plan.map(|p| format!("{p}.toml")),
            shape: None,
            reps: Vec::new(),
        }
    }

    fn plan(stem: &str, title: &str, kind: Option<SessionKind>, planned_s: f64) -> PlannedDay {
        PlannedDay {
            file: format!("{stem}.toml"),
            date: d(&stem[..10]),
            title: title.into(),
            kind,
            planned_s,
            activity: None,
        }
    }

    fn day<'a>(w: &'a Week, date: &str) -> &'a WeekDay {
        w.days.iter().find(|x| x.date == d(date)).unwrap()
    }

    #[test]
    fn missed_extra_upcoming_and_a_double_day() {
        let cards = vec![
            card(
                "2026-11-16-easy",
                7,
                SessionKind::Easy,
                40.0,
                Some("2026-11-16-easy"),
            ),
            // Double day: the intervals used the day's one plan, and so did the shake-out
            // (chosen by date, not paired by name): only the intervals count as planned.
            card(
                "2026-11-18-reps",
                7,
                SessionKind::Intervals,
                90.0,
                Some("2026-11-18-sharpen"),
            ),
            {
                let mut c = card(
                    "2026-11-18-shakeout",
                    18,
                    SessionKind::Easy,
                    20.0,
                    Some("2026-11-18-sharpen"),
                );
                c.duration_s = 1200.0;
                c
            },
            card("2026-11-20-jog", 8, SessionKind::Easy, 30.0, None),
            card(
                "2026-11-22-tempo",
                8,
                SessionKind::Tempo,
                100.0,
                Some("2026-11-22-tempo"),
            ),
            card(
                "2026-11-24-easy",
                8,
                SessionKind::Easy,
                35.0,
                Some("2026-11-24-easy"),
            ),
        ];
        let planned = vec![
            plan(
                "2026-11-16-easy",
                "Easy run",
                Some(SessionKind::Easy),
                3000.0,
            ),
            plan(
                "2026-11-17-easy",
                "Easy run",
                Some(SessionKind::Easy),
                2400.0,
            ),
            plan(
                "2026-11-18-sharpen",
                "Sharpen",
                Some(SessionKind::Intervals),
                3000.0,
            ),
            plan(
                "2026-11-22-tempo",
                "Tempo",
                Some(SessionKind::Tempo),
                3000.0,
            ),
            plan(
                "2026-11-24-easy",
                "Easy run",
                Some(SessionKind::Easy),
                3000.0,
            ),
            plan(
                "2026-11-25-hills",
                "Hill repeats",
                Some(SessionKind::Hills),
                3000.0,
            ),
            plan(
                "2026-11-26-long",
                "Long run",
                Some(SessionKind::LongRun),
                6000.0,
            ),
        ];
        let mut unread = plan("2026-11-21-easy", "Easy run", None, 1800.0);
        unread.activity = Some("ada/2026-11-21-easy".into());
        let mut planned = planned;
        planned.push(unread);
        let today = d("2026-11-25");
        let w = week_strip(
            "ada",
            d("2026-11-22"),
            Some("ada/2026-11-22-tempo"),
            &cards,
            &planned,
            today,
        );
        assert_eq!(w.schema, "splitdesk.week/1");
        assert_eq!((w.from, w.to), (d("2026-11-15"), today));
        assert_eq!(w.days.len(), 11);
        assert_eq!(w.days[0].offset, -7);
        assert_eq!(w.days[10].offset, 3);
        // The missed easy run, and nothing else missed: the plan of 11-21 was run, but its
        // file has no analysis (no card).
        assert_eq!(w.missed, 1);
        assert_eq!(
            day(&w, "2026-11-21").not_analysed[0].file,
            "2026-11-21-easy.toml"
        );
        assert!(day(&w, "2026-11-21").missed.is_empty());
        assert_eq!(day(&w, "2026-11-17").missed[0].title, "Easy run");
        // Today's hill session is upcoming, not missed; tomorrow's long run is past the strip.
        assert_eq!(day(&w, "2026-11-25").upcoming.len(), 1);
        assert!(day(&w, "2026-11-25").missed.is_empty());
        // Double day: one planned, one extra.
        let dd = day(&w, "2026-11-18");
        assert!(dd.missed.is_empty());
        assert_eq!(dd.sessions.len(), 2);
        assert!(!dd.sessions[0].extra && dd.sessions[1].extra);
        assert_eq!(
            dd.sessions[0].plan_title.as_deref(),
            Some("title of 2026-11-18-sharpen")
        );
        assert_eq!(dd.sessions[1].plan_title, None);
        assert_eq!(dd.load, 110.0);
        // The unplanned jog is extra.
        assert!(day(&w, "2026-11-20").sessions[0].extra);
        assert_eq!(w.extra, 2);
        assert!(day(&w, "2026-11-22").sessions[0].current);
        // Week load: 11-16 .. 11-22 = 40 + 90 + 20 + 30 + 100.
        assert_eq!(w.week_load, 280.0);
        // Nothing before 11-16: no mean to compare with.
        assert_eq!(w.previous_weeks_mean_load, None);
        assert_eq!(w.load_ratio, None);
        assert_eq!(w.previous_weeks_without_sessions, 4);
        // Last hard: the intervals of 11-18, 4 days before; no long run.
        let h = w.last_hard.as_ref().unwrap();
        assert_eq!(
            (h.session_id.as_str(), h.days_before),
            ("ada/2026-11-18-reps", 4)
        );
        assert_eq!(w.last_long, None);
        assert_eq!(
            w.text[0],
            "4 sessions in the 7 days before, 1 missed (Easy run on Tue 2026-11-17), 2 without a \
             plan, 1 planned session run but its file cannot be read (`splitdesk check` names it)"
        );
        assert_eq!(
            w.text[1],
            "1 session in the 3 days after (to today), none missed, 1 planned and not run yet \
             (Hill repeats on Wed 2026-11-25)"
        );
        assert_eq!(
            w.text[2],
            "Load 280 this week; the four weeks before hold no session to set it against"
        );
        assert_eq!(
            w.text[3],
            "Last hard session 4 days before (interval set), no long run in the 42 days before"
        );
        assert_eq!(w.text.len(), 4);
    }

    #[test]
    fn a_plan_paired_by_name_wins_over_a_closer_length() {
        let mut shake = card(
            "2026-11-18-shakeout",
            6,
            SessionKind::Easy,
            20.0,
            Some("2026-11-18-reps"),
        );
        shake.duration_s = 3000.0;
        let mut reps = card(
            "2026-11-18-reps",
            18,
            SessionKind::Intervals,
            90.0,
            Some("2026-11-18-reps"),
        );
        reps.duration_s = 4000.0;
        let planned = vec![plan("2026-11-18-reps", "Reps", None, 3000.0)];
        let w = week_strip(
            "ada",
            d("2026-11-18"),
            None,
            &[shake, reps],
            &planned,
            d("2026-11-18"),
        );
        let dd = day(&w, "2026-11-18");
        assert_eq!(dd.sessions[0].session_id, "ada/2026-11-18-shakeout");
        assert!(dd.sessions[0].extra);
        assert!(!dd.sessions[1].extra);
        assert_eq!(w.extra, 1);
        // Centred on a day: both runs of the day count for the last hard session.
        assert_eq!(w.last_hard.as_ref().unwrap().days_before, 0);
        assert!(
            w.text[3].starts_with("Last hard session the same day (interval set)"),
            "{:?}",
            w.text
        );
        assert_eq!(
            w.text[1],
            "On the day (Wed 2026-11-18): 2 sessions, 1 without a plan"
        );
    }

    #[test]
    fn load_against_four_weeks_and_the_caution() {
        // 28 days at 40 a day, then 7 days at 60: the week's load 420 against a mean week
        // of 280, ratio 1.5. With the four weeks constant this is the uncoupled rolling ratio
        // of methods.md §9 (60 / 40 = 1.500 in its check).
        let start = d("2026-10-01");
        let mut cards = Vec::new();
        for k in 0..35 {
            let day = start + Duration::days(k);
            let load = if k < 28 { 40.0 } else { 60.0 };
            cards.push(card(
                &format!("{day}-run"),
                7,
                SessionKind::Easy,
                load,
                None,
            ));
        }
        let centre = start + Duration::days(34);
        let w = week_strip("ada", centre, None, &cards, &[], centre);
        assert!((w.week_load - 420.0).abs() < 1e-9);
        assert!((w.previous_weeks_mean_load.unwrap() - 280.0).abs() < 1e-9);
        assert!((w.load_ratio.unwrap() - 1.5).abs() < 1e-12);
        // methods.md §9 formula: A = mean(L[t-6..t]), uncoupled chronic over the 28 days before.
        let a = 60.0;
        let c = 40.0;
        assert!((w.load_ratio.unwrap() - a / c).abs() < 1e-12);
        assert_eq!(w.previous_weeks_without_sessions, 0);
        assert!(
            w.text
                .iter()
                .any(|t| t == "Load 420 this week, 1.5 x the last four weeks' mean (280)"),
            "{:?}",
            w.text
        );
        let caution = w.text.last().unwrap();
        assert!(
            caution.starts_with("Caution: this week's load is 1.5 x"),
            "{caution}"
        );
        assert!(caution.contains("not medical advice") && caution.contains("Impellizzeri"));
        // One session less in the week: under the line, no caution.
        let fewer: Vec<SessionCard> = cards[..34].to_vec();
        let w = week_strip("ada", centre, None, &fewer, &[], centre);
        assert!((w.load_ratio.unwrap() - 360.0 / 280.0).abs() < 1e-12);
        assert!(!w.text.iter().any(|t| t.starts_with("Caution")));
    }

    #[test]
    fn partial_history_and_lower_bounds_are_said() {
        let mut a = card("2026-11-01-run", 7, SessionKind::LongRun, 100.0, None);
        a.moving_s = 6000.0;
        let mut b = card("2026-11-10-run", 7, SessionKind::Easy, 50.0, None);
        b.trimp = None;
        let c = card("2026-11-09-tempo", 7, SessionKind::Tempo, 80.0, None);
        let w = week_strip(
            "ada",
            d("2026-11-10"),
            Some("ada/2026-11-10-run"),
            &[a, b, c],
            &[],
            d("2026-12-01"),
        );
        // Week 11-04..11-10: the tempo (80) and the run without load.
        assert_eq!(w.week_load, 80.0);
        assert!(w.week_load_lower_bound);
        // Blocks before: 10-28..11-03 holds the long run (100); three blocks are empty.
        assert_eq!(w.previous_weeks_mean_load, Some(25.0));
        assert_eq!(w.previous_weeks_without_sessions, 3);
        assert_eq!(w.load_ratio, Some(3.2));
        assert_eq!(w.to, d("2026-11-17"));
        assert_eq!(
            w.text[2],
            "Load 80 this week, 3.2 x the last four weeks' mean (25) (a lower bound: not every \
             session has full heart rate); 3 of those weeks hold no session"
        );
        assert_eq!(w.last_long.as_ref().unwrap().days_before, 9);
        assert_eq!(
            w.text[3],
            "Last hard session 1 day before (tempo), last long run 9 days before"
        );
        assert_eq!(w.text[1], "0 sessions in the 7 days after, none missed");
    }

    #[test]
    fn a_future_centre_ends_the_strip_on_it() {
        let planned = vec![plan(
            "2026-12-10-tempo",
            "Tempo",
            Some(SessionKind::Tempo),
            3000.0,
        )];
        let w = week_strip("ada", d("2026-12-10"), None, &[], &planned, d("2026-12-03"));
        assert_eq!(w.to, d("2026-12-10"));
        assert_eq!(w.days.len(), 8);
        assert_eq!(day(&w, "2026-12-10").upcoming.len(), 1);
        assert_eq!(w.missed, 0);
        assert_eq!(w.text[0], "0 sessions in the 7 days before, none missed");
        // An empty day's load is +0 (JSON `0.0`, not `-0.0`).
        assert!(w.days[0].load == 0.0 && w.days[0].load.is_sign_positive());
        assert!(w.week_load.is_sign_positive());
        assert_eq!(
            w.text[1],
            "On the day (Thu 2026-12-10): 0 sessions, 1 planned and not run yet (Tempo on Thu 2026-12-10)"
        );
    }
}
