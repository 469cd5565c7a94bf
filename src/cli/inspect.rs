//! `splitdesk inspect FILE... [--json]`: what a recorded file holds.
//!
//! The athlete's note is never printed here (only whether there is one): notes are
//! revealed through the journal once grading is complete.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Serialize;

use crate::analysis::summary::moving_time_s;
use crate::ingest;
use crate::model::units::format_clock;
use crate::model::{Pause, Session};

#[derive(Debug, Serialize)]
struct LapOut {
    start_s: f64,
    end_s: f64,
    trigger: Option<String>,
}

#[derive(Debug, Serialize)]
struct FlagSummary {
    count: usize,
    fraction: f64,
    by_kind: BTreeMap<&'static str, usize>,
}

/// What `inspect` reports for one file.
#[derive(Debug, Serialize)]
struct Report {
    file: PathBuf,
    format: &'static str,
    sport: String,
    start: String,
    duration_s: f64,
    timer_s: f64,
    moving_s: f64,
    distance_m: Option<f64>,
    samples: usize,
    median_interval_s: f64,
    channels: Vec<&'static str>,
    derived: Vec<&'static str>,
    laps: Vec<LapOut>,
    pauses: Vec<Pause>,
    flags: FlagSummary,
    has_note: bool,
    content_hash: String,
}

fn report(path: &Path, s: &Session) -> Report {
    let mut by_kind = BTreeMap::new();
    for f in &s.flags {
        *by_kind.entry(f.kind.as_str()).or_insert(0) += 1;
    }
    Report {
        file: path.to_path_buf(),
        format: s.format.as_str(),
        sport: s.sport.label().to_string(),
        start: s.start.to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
        duration_s: s.duration_s(),
        timer_s: s.timer_s(),
        moving_s: moving_time_s(s),
        distance_m: s.distance_m(),
        samples: s.len(),
        median_interval_s: s.median_interval_s(),
        channels: s.channels_present().iter().map(|c| c.as_str()).collect(),
        derived: s.derived.iter().map(|c| c.as_str()).collect(),
        laps: s
            .laps
            .iter()
            .map(|l| LapOut {
                start_s: l.start_s,
                end_s: l.end_s,
                trigger: l.trigger.clone(),
            })
            .collect(),
        pauses: s.pauses.clone(),
        flags: FlagSummary {
            count: s.flags.len(),
            fraction: ingest::clean::flagged_fraction(s, &s.flags),
            by_kind,
        },
        has_note: s.note.is_some(),
        content_hash: s.content_hash.clone(),
    }
}

fn print_text(r: &Report) {
    println!("{}", r.file.display());
    println!("  format     {} ({})", r.format, r.sport);
    println!("  start      {}", r.start);
    println!(
        "  duration   {} elapsed, {} timer, {} moving",
        format_clock(r.duration_s),
        format_clock(r.timer_s),
        format_clock(r.moving_s)
    );
    match r.distance_m {
        Some(d) => println!("  distance   {:.2} km", d / 1000.0),
        None => println!("  distance   none"),
    }
    println!(
        "  samples    {} (median spacing {:.1} s)",
        r.samples, r.median_interval_s
    );
    let derived = if r.derived.is_empty() {
        String::new()
    } else {
        format!(" (derived: {})", r.derived.join(", "))
    };
    println!("  channels   {}{derived}", r.channels.join(", "));
    println!("  laps       {}", r.laps.len());
    println!(
        "  pauses     {} ({} in total)",
        r.pauses.len(),
        format_clock(r.pauses.iter().map(Pause::duration_s).sum())
    );
    if r.flags.count == 0 {
        println!("  flags      none");
    } else {
        let kinds: Vec<String> = r
            .flags
            .by_kind
            .iter()
            .map(|(k, n)| format!("{k} x{n}"))
            .collect();
        println!(
            "  flags      {} ({:.1} % of the session): {}",
            r.flags.count,
            r.flags.fraction * 100.0,
            kinds.join(", ")
        );
    }
    println!("  note       {}", if r.has_note { "yes" } else { "no" });
}

/// Inspect each file; unreadable files print `error: PATH: reason` and make the exit code 2.
pub fn run(files: &[PathBuf], json: bool) -> anyhow::Result<i32> {
    let mut code = 0;
    let mut reports = Vec::new();
    for (i, path) in files.iter().enumerate() {
        match ingest::ingest_file(path, None) {
            Ok(s) => {
                let r = report(path, &s);
                if json {
                    reports.push(r);
                } else {
                    if i > 0 {
                        println!();
                    }
                    print_text(&r);
                }
            }
            Err(e) => {
                eprintln!("error: {e}");
                code = 2;
            }
        }
    }
    if json {
        crate::cli::out::json(&reports)?;
    }
    Ok(code)
}
