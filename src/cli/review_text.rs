//! The human text of a review: interval table, recoveries, trends, session numbers,
//! findings. Paces in the athlete's units.

use std::fmt::Write;

use crate::analysis::review::{Review, HR_COVERAGE_MIN};
use crate::model::units::{format_clock, format_pace};
use crate::model::{AthleteProfile, Units};

fn pace(s_per_km: Option<f64>, u: Units) -> String {
    match s_per_km {
        Some(p) if p > 0.0 => {
            let full = format_pace(1000.0 / p, u);
            full.split('/').next().unwrap_or("").to_string()
        }
        _ => "-".into(),
    }
}

fn num(v: Option<f64>, decimals: usize) -> String {
    v.map(|x| format!("{x:.decimals$}"))
        .unwrap_or_else(|| "-".into())
}

/// Render a review for a terminal or a pipe (no colour, no cursor movement).
pub fn render(r: &Review, profile: &AthleteProfile, plan_source: Option<&str>) -> String {
    let u = profile.units;
    let mut o = String::new();
    let s = &r.session;
    let _ = writeln!(o, "{}", r.file);
    let _ = writeln!(
        o,
        "  {}  {} {}  {} elapsed, {} moving, {}",
        s.start,
        s.format,
        s.sport
            .chars()
            .filter(|c| !c.is_control())
            .collect::<String>(),
        format_clock(s.duration_s),
        format_clock(s.moving_s),
        s.distance_m
            .map(|d| format!("{:.2} {}", d / u.metres(), u.label()))
            .unwrap_or_else(|| "no distance".into())
    );
    match &r.plan {
        Some(p) => {
            let _ = writeln!(
                o,
                "  Plan: {}{}",
                p.title,
                plan_source.map(|s| format!("  ({s})")).unwrap_or_default()
            );
            if !p.purpose.is_empty() {
                let _ = writeln!(o, "  Purpose: {}", p.purpose);
            }
        }
        None => {
            let _ = writeln!(o, "  Plan: none found");
        }
    }
    for note in &r.interval_notes {
        let _ = writeln!(o, "  ({note})");
    }
    if !r.running {
        render_other_sport(&mut o, r, profile);
        return o;
    }
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "   #  kind      start    time  {:>6}  {:>6}  {:>6}  HR avg/max/end  cad   RI    target                    in%  hit",
        format!("dist{}", u.label()),
        format!("/{}", u.label()),
        "hill"
    );
    for m in &r.intervals {
        let label = match (m.kind.as_str(), m.work_number, m.mode.as_deref()) {
            ("work", Some(n), _) => format!("work {n}"),
            ("recovery", _, Some(mode)) => format!("rec {mode}"),
            (k, _, _) => k.to_string(),
        };
        let _ = writeln!(
            o,
            "  {:>2}  {:<9} {:>6} {:>6}  {:>6}  {:>6}  {:>6}  {:>3}/{:>3}/{:>3}    {:>3}  {:>4}  {:<24} {:>4}  {}",
            m.index,
            label,
            format_clock(m.start_s),
            format_clock(m.duration_s),
            num(m.distance_m.map(|d| d / u.metres()), 2),
            pace(m.avg_pace_s_per_km, u),
            pace(m.hill_adjusted_pace_s_per_km, u),
            num(m.avg_hr, 0),
            num(m.max_hr, 0),
            num(m.end_hr, 0),
            num(m.avg_cadence_spm, 0),
            num(m.relative_intensity, 2),
            m.target.as_deref().unwrap_or(""),
            num(m.in_target_pct, 0),
            match m.target_hit {
                Some(true) => "yes",
                Some(false) => "no",
                None if m.target_on_hill() => "hill*",
                None => "",
            }
        );
    }
    let thin: Vec<String> = r
        .intervals
        .iter()
        .filter_map(|m| {
            let c = m.hr_coverage.filter(|c| *c < HR_COVERAGE_MIN)?;
            Some(format!("#{} {:.0} %", m.index, c * 100.0))
        })
        .collect();
    if !thin.is_empty() {
        let _ = writeln!(
            o,
            "  HR present for only part of the moving time: {} (HR figures there rest on partial data)",
            thin.join(", ")
        );
    }
    if r.intervals.iter().any(|m| m.target_on_hill()) {
        let _ = writeln!(
            o,
            "  * on a climb or descent (mean grade 2 % or more) a pace target is an effort: \
             not judged; compare the hill-adjusted pace with the band"
        );
    }
    if !r.recoveries.is_empty() {
        let _ = writeln!(o);
        let _ = writeln!(
            o,
            "  After each work interval:  trough (at)       HR lag           60-s drop"
        );
        for x in &r.recoveries {
            let _ =
                writeln!(
                o,
                "    work {:<3}                {:>4} bpm ({:>6})  {:>3} s, +{:>3} bpm   {:>3} bpm{}",
                x.work_number,
                num(x.recovery_trough_bpm, 0),
                x.trough_at_s.map(format_clock).unwrap_or_else(|| "-".into()),
                num(x.hr_lag_s, 0),
                num(x.hr_lag_bpm, 1),
                num(x.hr_drop_60s_bpm, 0),
                if x.hr_partial { "  (partial HR)" } else { "" },
            );
        }
    }
    if !r.trends.is_empty() {
        let _ = writeln!(o);
        let _ = writeln!(o, "  Across the set (least squares against repeat number):");
        for t in &r.trends {
            let _ = writeln!(
                o,
                "    {:<28} {:<8} r² {:.2}  {}",
                t.metric, t.direction, t.r2, t.text
            );
        }
    }
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "  Decoupling {} %{}   HR drift {} bpm/h   Load (TRIMP) {}   Elevation +{}/-{} m",
        num(r.decoupling_pct, 1),
        if r.hill_adjusted && r.decoupling_pct.is_some() {
            " (hill-adjusted)"
        } else {
            ""
        },
        num(r.hr_drift_bpm_per_h, 1),
        r.load_text(),
        num(r.elevation_gain_m, 0),
        num(r.elevation_loss_m, 0),
    );
    if !r.zones.hr.is_empty() {
        hr_zones_line(&mut o, r);
        // Zones from the age formula say so (Tanaka et al. 2001, with its error).
        let year = r.session.start.get(..4).and_then(|y| y.parse::<i32>().ok());
        if let Some(note) = year.and_then(|y| {
            crate::analysis::zones::hr_max_estimate_note(
                profile,
                crate::analysis::zones::age_in_year(profile, y),
            )
        }) {
            let _ = writeln!(o, "  ({note})");
        }
    }
    if !r.zones.pace.is_empty() {
        let z: Vec<String> = r
            .zones
            .pace
            .iter()
            .map(|z| format!("{} {}", z.name, format_clock(z.seconds)))
            .collect();
        let _ = writeln!(o, "  Pace zones: {}", z.join(", "));
    }
    tail(&mut o, r);
    o
}

/// HR coverage (when short), flagged data and the findings: the end of every review text.
fn tail(o: &mut String, r: &Review) {
    if let Some(c) = r.hr_coverage.filter(|c| *c < HR_COVERAGE_MIN) {
        let _ = writeln!(
            o,
            "  Heart rate present for {:.0} % of the moving time{}",
            c * 100.0,
            if r.trimp_lower_bound {
                ": load is a lower bound"
            } else {
                ""
            }
        );
    }
    let _ = writeln!(
        o,
        "  Flagged data: {} stretch{} ({:.1} % of the session)",
        r.flags.len(),
        if r.flags.len() == 1 { "" } else { "es" },
        r.flagged_fraction * 100.0
    );
    if !r.findings.is_empty() {
        let _ = writeln!(o);
        let _ = writeln!(o, "  Findings:");
        for f in &r.findings {
            let _ = writeln!(o, "    [{}] {}", f.severity.as_str(), f.text);
        }
    }
}

/// A session of another sport (a ride, a walk): no interval table, no pace; the totals,
/// heart rate and load, with speed in km/h or mph.
fn render_other_sport(o: &mut String, r: &Review, profile: &AthleteProfile) {
    let u = profile.units;
    let s = &r.session;
    let sport = crate::model::Sport::from_name(&s.sport).title();
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "  {sport}: not a run, so no running analysis (no intervals to score, no pace, no decoupling)."
    );
    // The session's mean speed over the samples it trusts (distance and time over the same
    // samples); older cached reviews without it fall back to distance over moving time.
    let mean = s.avg_speed_mps.or(match (s.distance_m, s.moving_s) {
        (Some(d), m) if m > 0.0 => Some(d / m),
        _ => None,
    });
    let speed = match mean {
        Some(v) if v.is_finite() => {
            let per_h = v * 3600.0 / u.metres();
            let label = match u {
                Units::Km => "km/h",
                Units::Mi => "mph",
            };
            format!("{per_h:.1} {label}")
        }
        _ => "-".into(),
    };
    let _ = writeln!(
        o,
        "  Average speed {speed}   HR avg/max {}/{}   Load (TRIMP) {}   Elevation +{}/-{} m",
        num(r.avg_hr, 0),
        num(r.max_hr, 0),
        r.load_text(),
        num(r.elevation_gain_m, 0),
        num(r.elevation_loss_m, 0),
    );
    if !r.zones.hr.is_empty() {
        hr_zones_line(o, r);
    }
    tail(o, r);
}

/// The time-in-HR-zones line.
fn hr_zones_line(o: &mut String, r: &Review) {
    let z: Vec<String> = r
        .zones
        .hr
        .iter()
        .map(|z| format!("{} {}", z.name, format_clock(z.seconds)))
        .collect();
    let _ = writeln!(o, "  HR zones: {}", z.join(", "));
}
