//! `splitdesk trends ATHLETE [--weeks N] [--json]`: the athlete's history from the journal's
//! cached reviews (no session file is read again).

use anyhow::{bail, Context};
use chrono::{NaiveDate, Utc};

use crate::analysis::history::{self, History, HistoryParams, SessionSummary};
use crate::analysis::history::{fixed, fixed_distance as format_distance};
use crate::analysis::race;
use crate::analysis::review::{Review, ANALYSIS_VERSION};
use crate::model::units::{format_clock, format_pace};
use crate::model::Units;
use crate::workspace::Workspace;

/// The summaries of every cached session of an athlete, from the athlete's rows alone (an
/// indexed query). Sessions without a current cached review (unreadable files) are skipped
/// and counted; a cached review damaged inside is made again from its file.
pub fn summaries(
    ws: &mut Workspace,
    athlete: &str,
) -> anyhow::Result<(Vec<SessionSummary>, usize)> {
    let mut out = Vec::new();
    let mut skipped = 0;
    for (id, json) in ws.journal.athlete_summaries(athlete, ANALYSIS_VERSION)? {
        let Some(json) = json else {
            skipped += 1;
            continue;
        };
        let review: Review = match serde_json::from_str(&json) {
            Ok(r) => r,
            Err(_) => ws
                .refresh(&id, Utc::now())
                .with_context(|| format!("{id}: cached analysis is unreadable"))?,
        };
        match SessionSummary::from_review(&id, &review) {
            Some(s) => out.push(s),
            None => skipped += 1,
        }
    }
    Ok((out, skipped))
}

/// Run the command; returns the exit code.
pub fn run(
    ws: &mut Workspace,
    athlete: &str,
    weeks: Option<u32>,
    json: bool,
) -> anyhow::Result<i32> {
    let Some(a) = ws.roster.athlete(athlete) else {
        bail!("no athlete {athlete:?} in the roster");
    };
    let profile = a.profile.clone();
    let (sums, skipped) = summaries(ws, athlete)?;
    let mut params = HistoryParams::default();
    if let Some(w) = weeks {
        if w == 0 {
            bail!("--weeks must be at least 1");
        }
        params.weeks = w;
    }
    // The window ends today, or on the latest session when the files are dated ahead of the
    // clock (a generated roster, a device with a wrong clock).
    let latest = sums.iter().map(SessionSummary::date).max();
    let today = Utc::now()
        .date_naive()
        .max(latest.unwrap_or(NaiveDate::MIN));
    let mut h = history::build(&sums, &profile, &params, today);
    if skipped > 0 {
        h.notes.push(format!(
            "{skipped} session(s) without a readable analysis were left out"
        ));
    }
    if json {
        crate::cli::out::json(&h)?;
    } else {
        print!("{}", render(&h, &profile.name, profile.units));
    }
    Ok(0)
}

/// An equivalent VO2max, starred when the effort is under the model's range.
fn vo2(v: f64, beyond: bool) -> String {
    format!("{v:.1}{}", if beyond { "*" } else { "" })
}

fn opt(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map(f).unwrap_or_else(|| "-".to_string())
}

/// The history as text tables, paces in the athlete's units.
pub fn render(h: &History, name: &str, u: Units) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Trends for {name} ({}), {} to {}: {} session(s)",
        h.athlete, h.from, h.to, h.sessions
    );
    for c in &h.cautions {
        let _ = writeln!(s, "\nCAUTION: {c}");
    }

    let _ = writeln!(s, "\nWeekly volume (runs)");
    let _ = writeln!(
        s,
        "{:<9} {:>4} {:>10} {:>8} {:>10}  time by HR zone",
        "week", "runs", "distance", "moving", "longest"
    );
    for w in &h.weekly {
        let zones: Vec<String> = w
            .hr_zones
            .iter()
            .filter(|z| z.seconds > 0.0)
            .map(|z| format!("{} {:.0}%", z.name, z.share * 100.0))
            .collect();
        let _ = writeln!(
            s,
            "{:<9} {:>4} {:>10} {:>8} {:>10}  {}",
            w.week,
            w.sessions,
            format_distance(w.distance_m, u),
            format_clock(w.moving_s),
            opt(w.longest_run_m, |d| format_distance(d, u)),
            zones.join(", ")
        );
    }

    if let Some(e) = &h.hr_max_estimate {
        let _ = writeln!(s, "time by HR zone: {e}");
    }

    let _ = writeln!(
        s,
        "\nLoad (daily TRIMP), acute/chronic ratio (usual band {:.1}-{:.1}, caution from {:.1}), \
         fitness / fatigue / readiness",
        h.acute_chronic_bands.low, h.acute_chronic_bands.high, h.acute_chronic_bands.caution
    );
    let _ = writeln!(
        s,
        "{:<10} {:>6} {:>6} {:>8} {:>8} {:>9}",
        "date", "load", "ratio", "fitness", "fatigue", "readiness"
    );
    for (k, d) in h.daily_load.iter().enumerate() {
        let ratio = h.acute_chronic_ratio.get(k).and_then(|r| r.value);
        let val =
            |series: &[history::DailyValue]| opt(series.get(k).map(|v| v.value), |v| fixed(v, 0));
        let _ = writeln!(
            s,
            "{:<10} {:>6.0} {:>6} {:>8} {:>8} {:>9}",
            d.date.to_string(),
            d.value,
            opt(ratio, |r| format!("{r:.2}")),
            val(&h.fitness),
            val(&h.fatigue),
            val(&h.readiness),
        );
    }
    if let Some(l) = &h.acute_chronic_latest {
        let _ = writeln!(s, "ratio today {:.2} ({})", l.value, l.band);
    }
    let _ = writeln!(s, "{}", h.acute_chronic_bands.method);

    let _ = writeln!(
        s,
        "\nDays the load rose sharply (acute/chronic ratio {:.1} or more)",
        h.acute_chronic_bands.caution
    );
    if h.load_spikes.is_empty() {
        let _ = writeln!(s, "none in the window");
    }
    for d in &h.load_spikes {
        let _ = writeln!(
            s,
            "CAUTION {:<10} ratio {:.2}, load {:.0}  {}",
            d.date.to_string(),
            d.ratio,
            d.load,
            d.sessions
                .join(", ")
                .chars()
                .filter(|c| !c.is_control())
                .collect::<String>()
        );
    }
    if !h.load_spikes.is_empty() {
        let _ = writeln!(
            s,
            "{} {}",
            crate::analysis::load::ACUTE_CHRONIC_CRITICISM,
            history::LOAD_CAUTION_WORDS
        );
    }

    let e = &h.efficiency_trend;
    let _ = writeln!(
        s,
        "\nEfficiency on easy runs (steady throughout, relative intensity under {:.2}): {}",
        e.easy_max_relative_intensity, e.text
    );
    let _ = writeln!(s, "{:<9} {:>4} {:>12}", "week", "runs", "m/beat");
    for w in &e.weekly {
        let _ = writeln!(s, "{:<9} {:>4} {:>12.3}", w.week, w.runs, w.mean_m_per_beat);
    }

    let l = &h.long_run_decoupling;
    let _ = writeln!(
        s,
        "\nDecoupling of long runs ({} or more; coaching line {:.0} %)",
        format_clock(l.min_moving_s),
        l.line_pct
    );
    if l.runs.is_empty() {
        let _ = writeln!(s, "no long runs with a decoupling in the window");
    }
    for r in &l.runs {
        let _ = writeln!(
            s,
            "{:<10} {:>8} {:>6} %{}  {}",
            r.date.to_string(),
            format_clock(r.moving_s),
            fixed(r.decoupling_pct, 1),
            if r.above_line { " above" } else { "" },
            r.session
        );
    }

    let _ = writeln!(
        s,
        "\nBest efforts (last {} days)",
        h.params.best_effort_days
    );
    let _ = writeln!(
        s,
        "{:>8} {:>10} {:>10} {:>10} {:>9}  {:<10} session",
        "duration", "pace", "speed", "distance", "eq.VO2max", "date"
    );
    for b in &h.best_efforts {
        let _ = writeln!(
            s,
            "{:>8} {:>10} {:>6.2} m/s {:>10} {:>9}  {:<10} {}",
            format_clock(b.duration_s),
            format_pace(b.speed_mps, u),
            b.speed_mps,
            format_distance(b.distance_m, u),
            opt(b.equivalent_vo2max, |v| vo2(v, b.vo2max_beyond_model)),
            b.date.to_string(),
            b.session
        );
    }
    if h.best_efforts
        .iter()
        .any(|b| b.vo2max_beyond_model && b.equivalent_vo2max.is_some())
    {
        let _ = writeln!(s, "* {}", race::SHORT_EFFORT_VO2MAX_CAVEAT);
    }
    match (h.critical_speed_mps, h.d_prime_m) {
        (Some(cs), Some(dp)) => {
            let _ = writeln!(
                s,
                "critical speed {cs:.3} m/s ({}), D' {dp:.0} m, R² {}, from the {} best efforts",
                format_pace(cs, u),
                opt(h.critical_speed_fit.r2, |r| format!("{r:.3}")),
                h.critical_speed_fit.efforts_s.len()
            );
            if let Some(c) = &h.critical_speed_fit.caution {
                let _ = writeln!(s, "  careful: {c}");
            }
        }
        _ => {
            let _ = writeln!(
                s,
                "no critical speed: {}",
                h.critical_speed_fit.refusal.as_deref().unwrap_or("no fit")
            );
        }
    }

    let _ = writeln!(s, "\nPredicted race times");
    if let Some(r) = &h.race_like_effort {
        let _ = writeln!(
            s,
            "Riegel from the {} best effort ({}, equivalent VO2max {}) of {}",
            format_clock(r.duration_s),
            format_pace(r.speed_mps, u),
            opt(r.equivalent_vo2max, |v| vo2(v, r.vo2max_beyond_model)),
            r.date
        );
        if r.vo2max_beyond_model && r.equivalent_vo2max.is_some() {
            let _ = writeln!(s, "* {}", race::SHORT_EFFORT_VO2MAX_CAVEAT);
        }
    }
    let _ = writeln!(
        s,
        "{:<14} {:>14} {:>10}",
        "race", "critical speed", "Riegel"
    );
    for p in &h.predictions {
        let _ = writeln!(
            s,
            "{:<14} {:>14} {:>10}{}",
            p.race,
            opt(p.critical_speed_s, format_clock),
            opt(p.riegel_s, format_clock),
            if p.riegel_beyond_range {
                " (beyond Riegel's range)"
            } else {
                ""
            }
        );
    }
    let _ = writeln!(s, "{}", h.prediction_caveat);

    if !h.notes.is_empty() {
        let _ = writeln!(s, "\nNotes");
        for n in &h.notes {
            let _ = writeln!(s, "- {n}");
        }
    }
    s
}
