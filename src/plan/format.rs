//! A plain-text listing of a plan's expanded sequence.

use crate::model::units::{format_clock, format_distance, format_pace, Units};
use crate::model::{Amount, AthleteProfile, ExpectedInterval, Plan, SegmentKind, Target};

fn amount_text(a: &Amount, units: Units) -> String {
    match *a {
        Amount::Duration(s) => format_clock(s),
        Amount::Distance(m) if m < 1000.0 && units == Units::Km => format!("{m:.0} m"),
        Amount::Distance(m) => format_distance(m, units),
    }
}

fn band_text(slow: f64, fast: f64, units: Units) -> String {
    let f = format_pace(fast, units);
    let s = format_pace(slow, units);
    // "4:00/km-4:10/km" -> "4:00-4:10/km"
    let f_clock = f.split('/').next().unwrap_or(&f);
    if (slow - fast).abs() < 1e-12 {
        s
    } else {
        format!("{f_clock}-{s}")
    }
}

fn target_text(t: &Target, profile: Option<&AthleteProfile>) -> String {
    let units = profile.map_or(Units::Km, |p| p.units);
    match t {
        Target::Open => "open".to_string(),
        Target::PaceRange { slow_mps, fast_mps } => band_text(*slow_mps, *fast_mps, units),
        Target::HrRange { low_bpm, high_bpm } => format!("hr {low_bpm}-{high_bpm} bpm"),
        Target::NamedPace {
            name,
            tolerance_s_per_km,
        } => {
            let named = format!("{name} ±{tolerance_s_per_km} s/km");
            match profile {
                None => named,
                Some(p) => match (p.pace(name), t.speed_band(p)) {
                    (Some(v), Some((slow, fast))) => format!(
                        "{name} {} ({})",
                        format_pace(v, units),
                        band_text(slow, fast, units)
                    ),
                    _ => format!("{named} (not in profile)"),
                },
            }
        }
    }
}

/// A human listing of the plan's expanded sequence: one line per expected interval with its
/// index, kind, amount, target, recovery mode and repeat number, then totals. With a profile,
/// named paces are shown with the athlete's pace and band, in the athlete's units.
pub fn format_expanded(plan: &Plan, profile: Option<&AthleteProfile>) -> String {
    let units = profile.map_or(Units::Km, |p| p.units);
    let expanded: Vec<ExpectedInterval> = plan.expand();
    let mut out = String::new();
    out.push_str(&plan.title);
    if let Some(d) = plan.date {
        out.push_str(&format!(" ({d})"));
    }
    out.push('\n');
    if plan.purpose.is_empty() {
        out.push_str("Purpose: (none given)\n");
    } else {
        out.push_str(&format!("Purpose: {}\n", plan.purpose));
    }
    if let Some(p) = profile {
        out.push_str(&format!("Athlete: {}\n", p.name));
    }
    out.push('\n');

    let rows: Vec<[String; 6]> = expanded
        .iter()
        .enumerate()
        .map(|(i, e)| {
            [
                (i + 1).to_string(),
                e.kind.as_str().to_string(),
                amount_text(&e.amount, units),
                target_text(&e.target, profile),
                e.mode.map_or(String::new(), |m| m.as_str().to_string()),
                e.repeat
                    .map_or(String::new(), |(n, of)| format!("{n}/{of}")),
            ]
        })
        .collect();
    let header = ["#", "kind", "amount", "target", "mode", "repeat"].map(String::from);
    let mut widths = header.clone().map(|h| h.chars().count());
    for r in &rows {
        for (w, c) in widths.iter_mut().zip(r.iter()) {
            *w = (*w).max(c.chars().count());
        }
    }
    for r in std::iter::once(&header).chain(rows.iter()) {
        let line = format!(
            "{:>w0$}  {:<w1$}  {:<w2$}  {:<w3$}  {:<w4$}  {}",
            r[0],
            r[1],
            r[2],
            r[3],
            r[4],
            r[5],
            w0 = widths[0],
            w1 = widths[1],
            w2 = widths[2],
            w3 = widths[3],
            w4 = widths[4],
        );
        out.push_str(line.trim_end());
        out.push('\n');
    }

    let work = expanded
        .iter()
        .filter(|e| e.kind == SegmentKind::Work)
        .count();
    let secs: f64 = expanded
        .iter()
        .filter_map(|e| match e.amount {
            Amount::Duration(s) => Some(s),
            Amount::Distance(_) => None,
        })
        .sum();
    let metres: f64 = expanded
        .iter()
        .filter_map(|e| match e.amount {
            Amount::Distance(m) => Some(m),
            Amount::Duration(_) => None,
        })
        .sum();
    let mut total = Vec::new();
    if secs > 0.0 {
        total.push(format_clock(secs));
    }
    if metres > 0.0 {
        total.push(format_distance(metres, units));
    }
    out.push_str(&format!(
        "\n{} intervals, {} work; planned {}\n",
        expanded.len(),
        work,
        total.join(" + ")
    ));
    out
}
