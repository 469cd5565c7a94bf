//! `splitdesk compare SESSION [--json]`: the session beside its earlier runs of the same
//! workout, from the journal's session cards (no activity file is read again).

use crate::analysis::earlier::{Comparison, MatchedBy, Occurrence, PaceBasis};
use crate::model::units::format_clock;
use crate::model::Units;
use crate::workspace::Workspace;

/// Run the command; returns the exit code.
pub fn run(ws: &Workspace, session: &str, json: bool) -> anyhow::Result<i32> {
    let (athlete, _) = ws.find(session)?;
    let comparison = crate::context::comparison(&ws.journal, athlete, session)?;
    let notes = earlier_notes(ws, &comparison)?;
    if json {
        let mut value = serde_json::to_value(&comparison)?;
        if let Some(map) = value.as_object_mut() {
            map.insert("earlier_notes".into(), serde_json::to_value(&notes)?);
        }
        crate::cli::out::json(&value)?;
    } else {
        print!("{}", render(&comparison, &athlete.profile.name));
        if !notes.is_empty() {
            println!();
            println!("Notes of earlier runs (graded and read):");
            for n in &notes {
                println!(
                    "  {}: {}",
                    n.day,
                    n.note.split_whitespace().collect::<Vec<_>>().join(" ")
                );
            }
        }
    }
    Ok(0)
}

/// The note of an earlier run, shown because that run's own blind grading is done and its
/// notes were read.
#[derive(Debug, serde::Serialize)]
pub struct EarlierNote {
    pub session_id: String,
    pub day: chrono::NaiveDate,
    pub note: String,
}

/// The notes of the earlier runs whose reveal rule is met (the journal's
/// [`crate::journal::Journal::revealed_permit`]): never the session's own note, never a
/// note of a run not yet graded. The note file is read; a note kept only inside the
/// activity file is not (the comparison reads no activity file).
fn earlier_notes(ws: &Workspace, c: &Comparison) -> anyhow::Result<Vec<EarlierNote>> {
    let mut out = Vec::new();
    for run in c.earlier() {
        let Some(permit) = ws.journal.revealed_permit(&run.session_id)? else {
            continue;
        };
        let Some(path) = permit.note_path() else {
            continue;
        };
        if let Some(note) = crate::journal::read_note(&permit, Some(&path), None) {
            out.push(EarlierNote {
                session_id: run.session_id.clone(),
                day: run.day,
                note,
            });
        }
    }
    Ok(out)
}

/// A pace in s/km as `m:ss` per the comparison's unit.
fn pace(s_per_km: Option<f64>, units: Units) -> String {
    match s_per_km.filter(|p| p.is_finite() && *p > 0.0) {
        Some(p) => format_clock(p * units.metres() / 1000.0),
        None => "-".to_string(),
    }
}

fn num(v: Option<f64>, decimals: usize) -> String {
    match v.filter(|x| x.is_finite()) {
        Some(x) => format!("{x:.decimals$}"),
        None => "-".to_string(),
    }
}

/// A summary row of a table: its label and the cell of each run.
type SummaryRow<'a> = (&'a str, &'a dyn Fn(&Occurrence) -> String);

/// Column width of one run.
const COL: usize = 11;
/// Width of the row labels.
const LABEL: usize = 14;

fn row(label: &str, cells: impl Iterator<Item = String>) -> String {
    let mut line = format!("{label:<LABEL$}");
    for c in cells {
        line.push_str(&format!("{c:>COL$}"));
    }
    line.trim_end().to_string()
}

/// One side-by-side table: a row per rep of `cell`, then `mean` and `spread` rows.
fn rep_table(
    out: &mut String,
    heading: &str,
    runs: &[Occurrence],
    cell: impl Fn(&crate::analysis::earlier::RepRow) -> String,
    summary: &[SummaryRow<'_>],
) {
    use std::fmt::Write;
    let _ = writeln!(out, "{heading}");
    let reps = runs.iter().map(|r| r.reps.len()).max().unwrap_or(0);
    for k in 0..reps {
        let cells = runs.iter().map(|r| {
            r.reps
                .get(k)
                .map(&cell)
                .unwrap_or_else(|| String::from(" "))
        });
        let _ = writeln!(out, "{}", row(&format!("  rep {}", k + 1), cells));
    }
    for (label, f) in summary {
        let _ = writeln!(out, "{}", row(&format!("  {label}"), runs.iter().map(f)));
    }
}

/// The comparison as text, paces in the athlete's units.
pub fn render(c: &Comparison, name: &str) -> String {
    use std::fmt::Write;
    let units = Units::parse(&c.units).unwrap_or_default();
    let u = units.label();
    let mut out = String::new();
    let current = c.runs.iter().find(|r| r.current);
    let title = current
        .and_then(|r| r.plan_title.clone())
        .unwrap_or_else(|| c.kind.label().to_string());
    let _ = writeln!(out, "{name} · {} · {title}", c.day);
    let earlier = c.earlier().count();
    let what = match (&c.matched_by, &c.shape) {
        (MatchedBy::WorkoutShape, Some(s)) => format!("Same workout: {}", s.label),
        (MatchedBy::Kind, _) => format!("Earlier {}s", c.kind.label()),
        _ => "Nothing to compare this session with".to_string(),
    };
    let _ = writeln!(
        out,
        "{what} · {}",
        crate::cli::out::count(earlier, "earlier run", "earlier runs")
    );
    if earlier == 0 {
        for t in &c.text {
            let _ = writeln!(out, "{t}");
        }
        return out;
    }
    let _ = writeln!(out);
    let header = row("", c.runs.iter().map(|r| r.day.to_string()));
    let _ = writeln!(out, "{header}");
    let basis = match c.pace_basis {
        PaceBasis::HillAdjusted => "hill-adjusted",
        PaceBasis::Raw => "as run",
    };
    if c.matched_by == MatchedBy::WorkoutShape {
        rep_table(
            &mut out,
            &format!("Pace (/{u}, {basis})"),
            &c.runs,
            |r| pace(r.pace_s_per_km, units),
            &[
                ("mean", &|o: &Occurrence| pace(o.mean_pace_s_per_km, units)),
                ("spread (SD)", &|o: &Occurrence| {
                    num(o.spread_s_per_km.map(|s| s * units.metres() / 1000.0), 1)
                }),
            ],
        );
        rep_table(
            &mut out,
            "Heart rate (bpm)",
            &c.runs,
            |r| num(r.avg_hr, 0),
            &[("mean", &|o: &Occurrence| num(o.mean_hr, 0))],
        );
        rep_table(
            &mut out,
            "Relative intensity",
            &c.runs,
            |r| num(r.relative_intensity, 2),
            &[("mean", &|o: &Occurrence| num(o.mean_relative_intensity, 2))],
        );
        rep_table(
            &mut out,
            "Recovery trough (bpm)",
            &c.runs,
            |r| num(r.recovery_trough_bpm, 0),
            &[("mean", &|o: &Occurrence| num(o.mean_trough_bpm, 0))],
        );
    } else {
        let lines: [SummaryRow<'_>; 5] = [
            ("pace", &|o| pace(o.mean_pace_s_per_km, units)),
            ("heart rate", &|o| num(o.mean_hr, 0)),
            ("decoupling %", &|o| num(o.decoupling_pct, 1)),
            ("distance", &|o| {
                num(o.distance_m.map(|m| m / units.metres()), 2)
            }),
            ("time", &|o| format_clock(o.duration_s)),
        ];
        let _ = writeln!(out, "Whole run (pace /{u} on flat ground)");
        for (label, f) in lines {
            let _ = writeln!(out, "{}", row(&format!("  {label}"), c.runs.iter().map(f)));
        }
    }
    let _ = writeln!(out, "The last column is this session; spreads in seconds.");
    let _ = writeln!(out);
    for t in &c.text {
        let _ = writeln!(out, "{t}");
    }
    // The pace at a fixed heart rate is one of the text lines; said here when it is not.
    if let Some(p) = c.pace_at_hr.as_ref().filter(|p| !c.text.contains(&p.text)) {
        let _ = writeln!(out, "{}", p.text);
    }
    let _ = writeln!(out, "{}", c.caution);
    out
}
