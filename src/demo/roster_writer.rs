//! Writes a [`Scenario`] as a roster folder (the layout `crate::roster` reads):
//!
//! ```text
//! <out>/roster.toml                       club name, default units, a "written by" line
//! <out>/<athlete-id>/athlete.toml         the profile as the scenario states it
//! <out>/<athlete-id>/plans/<stem>.toml    title, purpose, date, steps (shorthand); also for
//!                                         the planned sessions not run (no activity)
//! <out>/<athlete-id>/activities/<stem>.fit|tcx|gpx
//! <out>/<athlete-id>/notes/<stem>.txt     the athlete's note
//! ```
//!
//! Deterministic: the same scenario (and seed) gives byte-identical files. Nothing depends
//! on the clock, the machine or the order work is done in; sessions are simulated on a few
//! threads and the files are written in sorted order afterwards.

use std::collections::BTreeMap;
use std::io;
use std::path::{Path, PathBuf};

use super::scenario::{toml_string, AthleteSpec, Scenario, SessionSpec};
use super::{fit_writer, gpx_writer, simulate, tcx_writer};
use crate::model::FileFormat;

/// The first line of a `roster.toml` written here; marks a folder as a demo roster.
pub const MARKER: &str = "# Written by `splitdesk demo`.";

/// What [`write_roster`] wrote.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Summary {
    /// Athlete folders.
    pub athletes: usize,
    /// Activity files.
    pub sessions: usize,
    /// FIT activity files.
    pub fit: usize,
    /// TCX activity files.
    pub tcx: usize,
    /// GPX activity files.
    pub gpx: usize,
    /// Plan files.
    pub plans: usize,
    /// Note files.
    pub notes: usize,
    /// Every file written.
    pub files: usize,
    /// Their total size.
    pub bytes: u64,
    /// The deliberately damaged activity files, relative to the roster folder.
    pub damaged: Vec<PathBuf>,
}

/// True when `dir` holds a `roster.toml` written by [`write_roster`].
pub fn is_demo_roster(dir: &Path) -> bool {
    std::fs::read_to_string(dir.join("roster.toml")).is_ok_and(|t| t.starts_with(MARKER))
}

/// The text of `roster.toml`.
pub fn roster_toml(scenario: &Scenario) -> String {
    format!(
        "{MARKER}\n# An invented club from the invented town of {}; every athlete is made up.\n\
         # Regenerate with: splitdesk demo --out <this folder> --seed {}\n\
         name = {}\nunits = \"{}\"\n",
        scenario.place,
        scenario.seed,
        toml_string(&scenario.club),
        scenario.units.label()
    )
}

/// The text of a plan file: title, purpose, date and the steps in shorthand, written with
/// [`crate::plan::describe_line`] from the parsed plan.
pub fn plan_toml(session: &SessionSpec) -> Result<String, crate::plan::PlanError> {
    let steps = session.steps()?;
    Ok(format!(
        "title = {}\npurpose = {}\ndate = {}\nsteps = {}\n",
        toml_string(&session.title),
        toml_string(&session.purpose),
        session.date,
        toml_string(&crate::plan::describe_line(&steps)),
    ))
}

/// A rendered file: path relative to the roster folder, and its bytes.
type RenderedFile = (PathBuf, Vec<u8>);

fn invalid(msg: String) -> io::Error {
    io::Error::new(io::ErrorKind::InvalidData, msg)
}

/// Simulate one session and encode it; truncated when the scenario says so.
pub fn activity_bytes(
    scenario: &Scenario,
    athlete: &AthleteSpec,
    session: &SessionSpec,
) -> io::Result<Vec<u8>> {
    let input = scenario.sim_input(athlete, session).map_err(invalid)?;
    let mut out = simulate::simulate(&input).session;
    if let Some(max_c) = session.hr_lag_stretch {
        let kinds: Vec<_> = input.plan.expand().iter().map(|e| e.kind).collect();
        super::scenario::effects::stretch_hr_lag(&mut out, &kinds, max_c);
    }
    if session.note_in_file {
        out.note = session.note_text().map(str::to_string);
    }
    let mut bytes = match session.format {
        FileFormat::Fit => fit_writer::write(&out),
        FileFormat::Tcx => tcx_writer::write(&out),
        FileFormat::Gpx => gpx_writer::write(&out),
    };
    if let Some(keep) = session.truncate_at {
        let n = (bytes.len() as f64 * keep.clamp(0.0, 1.0)).round() as usize;
        bytes.truncate(n);
    }
    Ok(bytes)
}

/// Every file of the roster as (path relative to the roster folder, bytes), sorted by path.
pub fn render(scenario: &Scenario) -> io::Result<BTreeMap<PathBuf, Vec<u8>>> {
    let mut files = BTreeMap::new();
    files.insert(
        PathBuf::from("roster.toml"),
        roster_toml(scenario).into_bytes(),
    );
    let mut jobs: Vec<(&AthleteSpec, &SessionSpec, PathBuf)> = Vec::new();
    for a in &scenario.athletes {
        let dir = PathBuf::from(&a.id);
        // Parse once here so a bad profile is reported before any simulation.
        a.profile(scenario.units).map_err(invalid)?;
        files.insert(dir.join("athlete.toml"), a.athlete_toml().into_bytes());
        for s in &a.sessions {
            let stem = s.stem();
            if s.plan_file {
                let text =
                    plan_toml(s).map_err(|e| invalid(format!("{}/{stem}: plan: {e}", a.id)))?;
                files.insert(
                    dir.join("plans").join(format!("{stem}.toml")),
                    text.into_bytes(),
                );
            }
            if let Some(note) = s.note_text() {
                files.insert(
                    dir.join("notes").join(format!("{stem}.txt")),
                    format!("{note}\n").into_bytes(),
                );
            }
            jobs.push((a, s, dir.join("activities").join(s.file_name())));
        }
        // Planned and not run: the plan file only.
        for s in &a.missed {
            let stem = s.stem();
            let text = plan_toml(s).map_err(|e| invalid(format!("{}/{stem}: plan: {e}", a.id)))?;
            files.insert(
                dir.join("plans").join(format!("{stem}.toml")),
                text.into_bytes(),
            );
        }
    }
    // Sessions are independent: simulate them round-robin on a few threads.
    let workers = std::thread::available_parallelism()
        .map_or(2, |n| n.get())
        .clamp(1, 8);
    let results: Vec<io::Result<Vec<RenderedFile>>> = std::thread::scope(|scope| {
        let handles: Vec<_> = (0..workers)
            .map(|w| {
                let mine: Vec<_> = jobs.iter().skip(w).step_by(workers).collect();
                scope.spawn(move || {
                    mine.into_iter()
                        .map(|(a, s, path)| Ok((path.clone(), activity_bytes(scenario, a, s)?)))
                        .collect::<io::Result<Vec<_>>>()
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| {
                h.join()
                    .unwrap_or_else(|_| Err(invalid("a simulation thread panicked".into())))
            })
            .collect()
    });
    for r in results {
        for (path, bytes) in r? {
            files.insert(path, bytes);
        }
    }
    Ok(files)
}

/// Write the scenario's roster into `out_dir` (created if missing). Existing files of the
/// same names are replaced; nothing else in the folder is touched.
pub fn write_roster(scenario: &Scenario, out_dir: &Path) -> io::Result<Summary> {
    let files = render(scenario)?;
    std::fs::create_dir_all(out_dir)?;
    let mut summary = Summary {
        athletes: scenario.athletes.len(),
        ..Summary::default()
    };
    for (rel, bytes) in &files {
        let path = out_dir.join(rel);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)?;
        }
        std::fs::write(&path, bytes)?;
        summary.files += 1;
        summary.bytes += bytes.len() as u64;
        let folder = rel
            .parent()
            .and_then(|p| p.file_name())
            .and_then(|n| n.to_str());
        match folder {
            Some("plans") => summary.plans += 1,
            Some("notes") => summary.notes += 1,
            Some("activities") => {
                summary.sessions += 1;
                match rel
                    .extension()
                    .and_then(|e| e.to_str())
                    .and_then(FileFormat::from_extension)
                {
                    Some(FileFormat::Fit) => summary.fit += 1,
                    Some(FileFormat::Tcx) => summary.tcx += 1,
                    Some(FileFormat::Gpx) => summary.gpx += 1,
                    None => {}
                }
            }
            _ => {}
        }
    }
    for a in &scenario.athletes {
        for s in a.sessions.iter().filter(|s| s.truncate_at.is_some()) {
            summary
                .damaged
                .push(PathBuf::from(&a.id).join("activities").join(s.file_name()));
        }
    }
    Ok(summary)
}
