//! `splitdesk demo --out DIR [--seed N] [--athletes N --weeks W]`: write the demo roster,
//! or with `--athletes`/`--weeks` a scale roster for benchmarks ([`crate::demo::scale`]).
//!
//! The folder must be new, empty, or a previous demo roster (its `roster.toml` starts with
//! [`roster_writer::MARKER`]); a previous demo roster's athlete folders and `roster.toml` are
//! removed first so no stale file survives. Anything else is refused in one line, exit 2.

use std::path::Path;

use crate::demo::roster_writer;
use crate::demo::scenario::Scenario;

/// The size of a scale roster.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Scale {
    pub athletes: usize,
    pub weeks: u32,
}

/// Write the roster (the demo, or a scale roster when `scale` is given); returns the exit
/// code.
pub fn run(out: &Path, seed: u64, scale: Option<Scale>) -> anyhow::Result<i32> {
    match std::fs::metadata(out) {
        Ok(meta) if !meta.is_dir() => {
            eprintln!("error: {}: not a folder", out.display());
            return Ok(2);
        }
        Ok(_) => {
            let entries: Vec<_> = std::fs::read_dir(out)
                .map_err(|e| anyhow::anyhow!("{}: {e}", out.display()))?
                .filter_map(Result::ok)
                .map(|e| e.path())
                .collect();
            if !entries.is_empty() {
                if !roster_writer::is_demo_roster(out) {
                    eprintln!(
                        "error: {}: folder is not empty and is not a demo roster; \
                         give a new or empty folder",
                        out.display()
                    );
                    return Ok(2);
                }
                remove_previous_demo(&entries)?;
            }
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
        Err(e) => anyhow::bail!("{}: {e}", out.display()),
    }
    use crate::cli::out::count;
    let started = std::time::Instant::now();
    let (scenario, s) = match scale {
        None => {
            let scenario = Scenario::build(seed);
            let s = roster_writer::write_roster(&scenario, out)
                .map_err(|e| anyhow::anyhow!("{}: {e}", out.display()))?;
            (scenario, s)
        }
        Some(Scale { athletes, weeks }) => {
            let workers = std::thread::available_parallelism().map_or(2, |n| n.get());
            crate::demo::scale::write(athletes, weeks, seed, out, workers)
                .map_err(|e| anyhow::anyhow!("{}: {e}", out.display()))?
        }
    };
    println!(
        "{}: {} ({}), {}, {} ({} FIT, {} TCX, {} GPX), {}, {}, \
         {:.1} MB, seed {seed}",
        out.display(),
        scenario.club,
        scenario.place,
        count(s.athletes, "athlete", "athletes"),
        count(s.sessions, "session", "sessions"),
        s.fit,
        s.tcx,
        s.gpx,
        count(s.plans, "plan", "plans"),
        count(s.notes, "note", "notes"),
        s.bytes as f64 / 1e6,
    );
    if scale.is_some() {
        println!(
            "written in {:.1} s ({} damaged on purpose)",
            started.elapsed().as_secs_f64(),
            count(s.damaged.len(), "file", "files")
        );
    }
    Ok(0)
}

/// Remove what a previous demo run wrote: `roster.toml` and every athlete folder.
fn remove_previous_demo(entries: &[std::path::PathBuf]) -> anyhow::Result<()> {
    for path in entries {
        let result = if path.is_dir() && path.join("athlete.toml").is_file() {
            std::fs::remove_dir_all(path)
        } else if path.file_name().is_some_and(|n| n == "roster.toml") {
            std::fs::remove_file(path)
        } else {
            continue;
        };
        result.map_err(|e| anyhow::anyhow!("{}: {e}", path.display()))?;
    }
    Ok(())
}
