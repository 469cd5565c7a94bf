//! `splitdesk analyze FILE [--athlete athlete.toml] [--plan PLAN.toml | --plan-line TEXT] [--json]`
//!
//! Inside a roster the athlete's profile and the day's plan are found automatically;
//! outside one they come from the flags. Without a profile, metrics that need one are null.

use std::path::{Path, PathBuf};

use anyhow::Context;

use crate::ingest;
use crate::model::{AthleteProfile, Plan, Units};
use crate::roster::Roster;

/// Where the profile and plan came from, for the human output.
struct Context_ {
    profile: AthleteProfile,
    plan: Option<Plan>,
    plan_source: Option<String>,
    /// The roster's athlete and the session id, when the file is inside a roster.
    roster_athlete: Option<(crate::roster::Athlete, String)>,
    /// The roster athlete and activity stem when the plan is to be found in the roster.
    roster_plan: Option<(crate::roster::Athlete, String)>,
}

/// The roster a file sits in, when its path is `<roster>/<athlete>/activities/<file>`.
fn roster_of(file: &Path) -> Option<PathBuf> {
    let canon = std::fs::canonicalize(file).ok()?;
    let activities = canon.parent()?;
    if activities.file_name()? != "activities" {
        return None;
    }
    let athlete = activities.parent()?;
    athlete
        .join("athlete.toml")
        .is_file()
        .then(|| athlete.parent().map(Path::to_path_buf))
        .flatten()
}

fn load_profile(path: &Path) -> anyhow::Result<AthleteProfile> {
    let text = crate::ingest::read_text_file(path).with_context(|| path.display().to_string())?;
    let id = path
        .parent()
        .and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "athlete".to_string());
    // Every valid key is used; each bad one is one warning line.
    let report = crate::roster::read_profile(&text, &id, Units::Km);
    for p in &report.problems {
        eprintln!(
            "warning: {}",
            crate::roster::printable(&format!("{}: {p}", path.display()))
        );
    }
    Ok(report.profile)
}

fn context(
    file: &Path,
    athlete: Option<&AthleteProfile>,
    plan_file: Option<&Path>,
    plan_line: Option<&str>,
) -> anyhow::Result<Context_> {
    let in_roster = roster_of(file).and_then(|root| Roster::open(&root).ok());
    let located = in_roster.as_ref().and_then(|r| r.locate_file(file));
    let profile = match (athlete, located) {
        (Some(p), _) => p.clone(),
        (None, Some((a, _))) => a.profile.clone(),
        (None, None) => AthleteProfile::bare("athlete"),
    };
    let (plan, plan_source) = match (plan_file, plan_line, located) {
        (Some(p), _, _) => (
            Some(crate::plan::load(p).map_err(|e| anyhow::anyhow!("{e}"))?),
            Some(p.display().to_string()),
        ),
        (None, Some(line), _) => {
            let steps =
                crate::plan::parse_line(line).map_err(|e| anyhow::anyhow!("--plan-line: {e}"))?;
            (
                Some(Plan {
                    title: "plan from --plan-line".into(),
                    purpose: String::new(),
                    date: None,
                    steps,
                }),
                Some("--plan-line".into()),
            )
        }
        (None, None, Some(_)) => (None, None),
        (None, None, None) => (None, None),
    };
    let roster_athlete = located.map(|(a, act)| (a.clone(), a.session_id(act)));
    let roster_plan = match (plan_file, plan_line, located) {
        (None, None, Some((a, act))) => {
            let mut a = a.clone();
            a.profile = profile.clone();
            Some((a, act.stem.clone()))
        }
        _ => None,
    };
    Ok(Context_ {
        profile,
        plan,
        plan_source,
        roster_athlete,
        roster_plan,
    })
}

/// Analyse one file; exit 2 with one line when it cannot be read.
pub fn run(
    file: &Path,
    athlete: Option<&Path>,
    plan_file: Option<&Path>,
    plan_line: Option<&str>,
    json: bool,
) -> anyhow::Result<i32> {
    // The profile is needed for the HR flags; read it first when given explicitly.
    let explicit = match athlete {
        Some(p) => Some(load_profile(p)?),
        None => None,
    };
    let session = match ingest::ingest_file(file, explicit.as_ref()) {
        Ok(s) => s,
        Err(e) => {
            eprintln!("error: {e}");
            if json {
                crate::cli::out::json_error(&e.to_string(), 2, serde_json::Value::Null)?;
            }
            return Ok(2);
        }
    };
    let ctx = context(file, explicit.as_ref(), plan_file, plan_line)?;
    // Re-flag with the roster profile when it was found there (no rule needs it today: HR
    // above the profile's maximum is kept; this keeps `analyze` equal to the workstation).
    let session = if explicit.is_none() && ctx.profile.hr_max.is_some() {
        let mut s = session;
        s.flags = ingest::clean::flag(&s, Some(&ctx.profile));
        s
    } else {
        session
    };
    // In a roster the day's plan is chosen there; a broken plan file is a note, not a failure.
    let (mut review, plan_source) = match &ctx.roster_plan {
        Some((athlete, stem)) => {
            let (chosen, review) = crate::workspace::analyse_with_plan(athlete, stem, &session);
            (review, chosen.map(|(p, _)| p.display().to_string()))
        }
        None => (
            crate::analysis::analyze(&session, ctx.plan.as_ref(), &ctx.profile),
            ctx.plan_source.clone(),
        ),
    };
    review.file = file.display().to_string();
    // Inside a roster: the load-spike caution, from the athlete's other sessions.
    if let Some((athlete, id)) = &ctx.roster_athlete {
        if let Some(me) = crate::analysis::history::SessionSummary::from_review(id, &review) {
            let mut sums = crate::workspace::athlete_summaries_until(athlete, me.date(), id);
            sums.push(me);
            if let Some(f) = crate::analysis::history::load_spike_finding(&sums, id) {
                review.findings.insert(0, f);
            }
        }
    }
    if json {
        crate::cli::out::json(&review)?;
    } else {
        print!(
            "{}",
            super::review_text::render(&review, &ctx.profile, plan_source.as_deref())
        );
        print!("{}", kind_and_splits(&review, ctx.profile.units));
    }
    Ok(0)
}

/// The session's kind and, for a race or time trial, its splits table; for another run
/// with splits, the split times on a few wrapped lines. Units are the splits' own (the
/// athlete's), pace per unit.
fn kind_and_splits(review: &crate::analysis::review::Review, units: Units) -> String {
    use crate::analysis::kind::SessionKind;
    use crate::model::units::{format_clock, format_distance};
    use std::fmt::Write;
    let mut o = String::new();
    let _ = writeln!(o, "\n  Kind: {}", review.kind.label());
    let Some(sp) = review.splits.as_ref().filter(|s| !s.splits.is_empty()) else {
        return o;
    };
    let u = Units::parse(&sp.unit).unwrap_or(units);
    let unit_m = u.metres();
    let halves = match (sp.first_half_s, sp.second_half_s) {
        (Some(a), Some(b)) => format!(
            ", first half {}, second half {}",
            format_clock(a),
            format_clock(b)
        ),
        _ => String::new(),
    };
    let _ = writeln!(
        o,
        "  Splits ({}) from {} to {}: {} in {}{halves}",
        u.label(),
        format_clock(sp.from_s),
        format_clock(sp.to_s),
        format_distance(sp.distance_m, u),
        format_clock(sp.time_s),
    );
    if review.kind != SessionKind::Race {
        // Short: the times only, ten to a line.
        let words: Vec<String> = sp
            .splits
            .iter()
            .map(|x| match x.distance_m >= unit_m * 0.999 {
                true => format!("{} {}", x.number, format_clock(x.time_s)),
                false => format!(
                    "{:.2} {} {}",
                    x.distance_m / unit_m,
                    u.label(),
                    format_clock(x.time_s)
                ),
            })
            .collect();
        for chunk in words.chunks(10) {
            let _ = writeln!(o, "    {}", chunk.join("  "));
        }
        return o;
    }
    let _ = writeln!(
        o,
        "     #  {:>6}  {:>7}  {:>6}  {:>4}  {:>5}",
        u.label(),
        "time",
        format!("/{}", u.label()),
        "HR",
        "elev"
    );
    for x in &sp.splits {
        let pace = format_clock(x.pace_s_per_km * unit_m / 1000.0);
        let hr = x
            .avg_hr
            .map(|h| format!("{h:.0}"))
            .unwrap_or_else(|| "-".into());
        let elev = x
            .elevation_change_m
            // Rounded first, so a small fall reads +0 m, not -0 m.
            .map(|e| format!("{:+.0} m", e.round() + 0.0))
            .unwrap_or_else(|| "-".into());
        let _ = writeln!(
            o,
            "  {:>4}  {:>6.2}  {:>7}  {:>6}  {:>4}  {:>5}",
            x.number,
            x.distance_m / unit_m,
            format_clock(x.time_s),
            pace,
            hr,
            elev
        );
    }
    if let (Some(f), Some(s)) = (sp.fastest_s_per_km, sp.slowest_s_per_km) {
        let _ = writeln!(
            o,
            "  Fastest {}/{u}, slowest {}/{u} (full splits)",
            format_clock(f * unit_m / 1000.0),
            format_clock(s * unit_m / 1000.0),
            u = u.label()
        );
    }
    o
}
