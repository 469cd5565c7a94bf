//! `splitdesk week SESSION|ATHLETE [--date D] [--json]`: the week around a session (or a
//! day of an athlete's): each day's sessions, the planned sessions missed, the sessions
//! without a plan, the week's load against the four weeks before, the last hard session and
//! long run. From the journal's session cards and the athlete's plan files; no activity
//! file is read again.

use anyhow::bail;
use chrono::{NaiveDate, Utc};

use crate::analysis::history::fixed_distance;
use crate::analysis::week::{PlannedDay, Week, WeekDay};
use crate::model::units::format_clock;
use crate::model::Units;
use crate::workspace::Workspace;

/// What the command is centred on, from its first argument.
pub enum Target<'a> {
    /// A session id `athlete/stem`.
    Session(&'a str),
    /// An athlete id.
    Athlete(&'a str),
}

/// A session id holds a `/`; anything else names an athlete.
pub fn target(arg: &str) -> Target<'_> {
    if arg.contains('/') {
        Target::Session(arg)
    } else {
        Target::Athlete(arg)
    }
}

/// Run the command; returns the exit code.
pub fn run(ws: &Workspace, what: &str, date: Option<NaiveDate>, json: bool) -> anyhow::Result<i32> {
    let today = Utc::now().date_naive();
    let (week, athlete) = match target(what) {
        Target::Session(id) => {
            if date.is_some() {
                bail!("--date goes with an athlete; a session's week centres on its own day");
            }
            let (athlete, _) = ws.find(id)?;
            (
                crate::context::week_of_session(&ws.journal, athlete, id, today)?,
                athlete,
            )
        }
        Target::Athlete(id) => {
            let Some(athlete) = ws.roster.athlete(id) else {
                bail!("no athlete {id:?} in the roster (give an athlete id or a session id athlete-id/file-stem)");
            };
            let centre = date.unwrap_or(today);
            (
                crate::context::week_around(&ws.journal, athlete, centre, None, today)?,
                athlete,
            )
        }
    };
    if json {
        crate::cli::out::json(&week)?;
    } else {
        print!(
            "{}",
            render(&week, &athlete.profile.name, athlete.profile.units)
        );
    }
    Ok(0)
}

fn day_label(d: NaiveDate) -> String {
    d.format("%a %Y-%m-%d").to_string()
}

fn planned_cells(p: &PlannedDay, what: &str) -> String {
    format!(
        "  {:<14}  {:<15} {:>8} {:>10} {:>5}  {}",
        "",
        what,
        format_clock(p.planned_s),
        "",
        "",
        p.title
    )
}

fn day_lines(s: &mut String, d: &WeekDay, u: Units) {
    use std::fmt::Write;
    let mut first = true;
    let mut date = || {
        if std::mem::take(&mut first) {
            day_label(d.date)
        } else {
            String::new()
        }
    };
    for x in &d.sessions {
        let load = match x.load {
            Some(l) if x.load_lower_bound => format!("{l:.0}+"),
            Some(l) => format!("{l:.0}"),
            None => "-".to_string(),
        };
        let plan = match &x.plan_title {
            Some(t) => t.clone(),
            None => "no plan (extra)".to_string(),
        };
        let _ = writeln!(
            s,
            "{} {:<14}  {:<15} {:>8} {:>10} {:>5}  {}",
            if x.current { ">" } else { " " },
            date(),
            x.kind.label(),
            format_clock(x.duration_s),
            x.distance_m
                .map(|m| fixed_distance(m, u))
                .unwrap_or_else(|| "-".to_string()),
            load,
            plan
        );
    }
    for p in &d.missed {
        let _ = writeln!(s, "{}", with_date(planned_cells(p, "missed"), &date()));
    }
    for p in &d.upcoming {
        let _ = writeln!(s, "{}", with_date(planned_cells(p, "planned"), &date()));
    }
    for p in &d.not_analysed {
        let line = planned_cells(p, "not analysed");
        let _ = writeln!(
            s,
            "{} (the file cannot be read: splitdesk check)",
            with_date(line, &date())
        );
    }
    if d.sessions.is_empty()
        && d.missed.is_empty()
        && d.upcoming.is_empty()
        && d.not_analysed.is_empty()
    {
        let _ = writeln!(s, "  {:<14}  rest", date());
    }
}

/// Put `date` into the date column of a line built with an empty one.
fn with_date(line: String, date: &str) -> String {
    if date.is_empty() {
        return line;
    }
    let rest = line.get(2 + 14..).unwrap_or("");
    format!("  {date:<14}{rest}")
}

/// The week as text: one line per session, missed or planned session (a rest day on its
/// own line), then the week in plain words. Distances in the athlete's units.
pub fn render(w: &Week, name: &str, u: Units) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    match &w.session_id {
        Some(id) => {
            let _ = writeln!(
                s,
                "Week around {id} ({name}), {} to {}",
                day_label(w.from),
                day_label(w.to)
            );
        }
        None => {
            let _ = writeln!(
                s,
                "Week around {} for {name} ({}), {} to {}",
                day_label(w.centre),
                w.athlete,
                day_label(w.from),
                day_label(w.to)
            );
        }
    }
    let _ = writeln!(
        s,
        "  {:<14}  {:<15} {:>8} {:>10} {:>5}  plan",
        "day", "kind", "time", "distance", "load"
    );
    for d in &w.days {
        day_lines(&mut s, d, u);
    }
    let _ = writeln!(s);
    for t in &w.text {
        let _ = writeln!(s, "{t}");
    }
    s
}
