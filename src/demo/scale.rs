//! A scale roster for benchmarks: the demo club's athletes copied under new ids and its six
//! weeks repeated back in time, `N` athletes by `W` weeks, every file distinct (each session's
//! seed mixes the scenario seed with its new athlete id and date).
//!
//! Athlete `k` (0-based) is a copy of demo athlete `k mod 6` (in id order) with the id
//! `<demo-id>-<k div 6 + 1>` (zero-padded). The `W` weeks end on the demo's last Sunday:
//! counting back from the last week, week `j` (0-based) repeats demo week `6 - j mod 6`,
//! moved back by `6 * (j div 6)` weeks. Damaged files and missed sessions are repeated too.
//!
//! The files are written as they are simulated (on every core), so memory stays flat
//! however big the roster is. The output is deterministic: each file depends only on the
//! seed, the athlete id and the session.

use std::io;
use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;

use chrono::Duration;

use super::roster_writer::{activity_bytes, plan_toml, Summary, MARKER};
use super::scenario::{toml_string, week_of, AthleteSpec, Scenario, SessionSpec};
use crate::model::FileFormat;

/// Weeks in the demo scenario.
const DEMO_WEEKS: u32 = 6;

/// Most athletes a scale roster may have.
pub const MAX_ATHLETES: usize = 10_000;

/// Most weeks a scale roster may have (ten years).
pub const MAX_WEEKS: u32 = 520;

fn invalid(msg: String) -> io::Error {
    io::Error::new(io::ErrorKind::InvalidData, msg)
}

/// Move a session `days` days (negative: back in time); the plan and note travel with it.
fn shifted(s: &SessionSpec, days: i64) -> SessionSpec {
    let mut out = s.clone();
    out.date = s.date + Duration::days(days);
    out.planted.clear();
    out
}

/// The sessions of `specs` for a roster of `weeks` weeks ending on the demo's last day.
fn spread(specs: &[SessionSpec], weeks: u32) -> Vec<SessionSpec> {
    let mut out = Vec::new();
    for j in (0..weeks).rev() {
        let demo_week = DEMO_WEEKS - j % DEMO_WEEKS;
        let back_days = -i64::from(j / DEMO_WEEKS) * i64::from(DEMO_WEEKS) * 7;
        out.extend(
            specs
                .iter()
                .filter(|s| week_of(s.date) == Some(demo_week))
                .map(|s| shifted(s, back_days)),
        );
    }
    out.sort_by(|a, b| a.date.cmp(&b.date).then_with(|| a.slug.cmp(&b.slug)));
    out
}

/// The scale scenario: `athletes` athletes by `weeks` weeks (each clamped to at least 1 and
/// to [`MAX_ATHLETES`] / [`MAX_WEEKS`]), simulated with `seed`.
pub fn scenario(athletes: usize, weeks: u32, seed: u64) -> Scenario {
    let base = Scenario::build(seed);
    let athletes = athletes.clamp(1, MAX_ATHLETES);
    let weeks = weeks.clamp(1, MAX_WEEKS);
    let copies = athletes.div_ceil(base.athletes.len().max(1));
    let width = copies.to_string().len().max(2);
    let mut out = Vec::with_capacity(athletes);
    for k in 0..athletes {
        let Some(b) = base.athletes.get(k % base.athletes.len().max(1)) else {
            break;
        };
        let copy = k / base.athletes.len().max(1) + 1;
        out.push(AthleteSpec {
            id: format!("{}-{copy:0width$}", b.id),
            name: format!("{} {copy}", b.name),
            sessions: spread(&b.sessions, weeks),
            missed: spread(&b.missed, weeks),
            planted: Vec::new(),
            ..b.clone()
        });
    }
    out.sort_by(|a, b| a.id.cmp(&b.id));
    Scenario {
        club: format!("{} (scale roster)", base.club),
        athletes: out,
        ..base
    }
}

/// The text of a scale roster's `roster.toml` (starts with [`MARKER`], so `splitdesk demo`
/// may replace it).
pub fn roster_toml(scenario: &Scenario, athletes: usize, weeks: u32) -> String {
    format!(
        "{MARKER}\n# A scale roster for benchmarks: the invented club of {} copied; every athlete \
         is made up.\n# Regenerate with: splitdesk demo --out <this folder> --athletes {athletes} \
         --weeks {weeks} --seed {}\nname = {}\nunits = \"{}\"\n",
        scenario.place,
        scenario.seed,
        toml_string(&scenario.club),
        scenario.units.label()
    )
}

fn write_file(path: &Path, bytes: &[u8]) -> io::Result<()> {
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent)?;
    }
    std::fs::write(path, bytes)
        .map_err(|e| io::Error::new(e.kind(), format!("{}: {e}", path.display())))
}

/// Write the scale roster into `out_dir` (created if missing), activity files simulated
/// and written on up to `workers` threads.
pub fn write(
    athletes: usize,
    weeks: u32,
    seed: u64,
    out_dir: &Path,
    workers: usize,
) -> io::Result<(Scenario, Summary)> {
    let scenario = scenario(athletes, weeks, seed);
    let mut summary = Summary {
        athletes: scenario.athletes.len(),
        ..Summary::default()
    };
    std::fs::create_dir_all(out_dir)?;
    let mut small = |rel: &Path, text: String| -> io::Result<()> {
        write_file(&out_dir.join(rel), text.as_bytes())?;
        summary.files += 1;
        summary.bytes += text.len() as u64;
        Ok(())
    };
    small(
        Path::new("roster.toml"),
        roster_toml(
            &scenario,
            athletes.clamp(1, MAX_ATHLETES),
            weeks.clamp(1, MAX_WEEKS),
        ),
    )?;
    let mut jobs: Vec<(&AthleteSpec, &SessionSpec)> = Vec::new();
    let (mut plans, mut notes) = (0, 0);
    for a in &scenario.athletes {
        a.profile(scenario.units).map_err(invalid)?;
        let dir = Path::new(&a.id);
        small(&dir.join("athlete.toml"), a.athlete_toml())?;
        for s in &a.sessions {
            let stem = s.stem();
            if s.plan_file {
                let text =
                    plan_toml(s).map_err(|e| invalid(format!("{}/{stem}: plan: {e}", a.id)))?;
                small(&dir.join("plans").join(format!("{stem}.toml")), text)?;
                plans += 1;
            }
            if let Some(note) = s.note_text() {
                small(
                    &dir.join("notes").join(format!("{stem}.txt")),
                    format!("{note}\n"),
                )?;
                notes += 1;
            }
            jobs.push((a, s));
        }
        // Planned and not run: the plan file only.
        for s in &a.missed {
            let stem = s.stem();
            let text = plan_toml(s).map_err(|e| invalid(format!("{}/{stem}: plan: {e}", a.id)))?;
            small(&dir.join("plans").join(format!("{stem}.toml")), text)?;
            plans += 1;
        }
    }
    summary.plans = plans;
    summary.notes = notes;
    let next = AtomicUsize::new(0);
    let done = Mutex::new((0usize, [0usize; 3], 0u64, Vec::new()));
    let first_error: Mutex<Option<io::Error>> = Mutex::new(None);
    std::thread::scope(|scope| {
        for _ in 0..workers.max(1) {
            scope.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::Relaxed);
                let Some((a, s)) = jobs.get(i) else { break };
                let rel = Path::new(&a.id).join("activities").join(s.file_name());
                let result = activity_bytes(&scenario, a, s).and_then(|bytes| {
                    write_file(&out_dir.join(&rel), &bytes).map(|()| bytes.len())
                });
                match result {
                    Ok(len) => {
                        if let Ok(mut d) = done.lock() {
                            d.0 += 1;
                            let [fit, tcx, gpx] = &mut d.1;
                            match s.format {
                                FileFormat::Fit => *fit += 1,
                                FileFormat::Tcx => *tcx += 1,
                                FileFormat::Gpx => *gpx += 1,
                            }
                            d.2 += len as u64;
                            if s.truncate_at.is_some() {
                                d.3.push(rel);
                            }
                        }
                    }
                    Err(e) => {
                        if let Ok(mut slot) = first_error.lock() {
                            slot.get_or_insert(e);
                        }
                        // Stop every worker: no job after this one is taken.
                        next.store(jobs.len(), Ordering::Relaxed);
                        break;
                    }
                }
            });
        }
    });
    if let Some(e) = first_error.into_inner().ok().flatten() {
        return Err(e);
    }
    let (sessions, by_format, bytes, mut damaged) = done
        .into_inner()
        .map_err(|_| invalid("a simulation thread panicked".into()))?;
    damaged.sort();
    summary.sessions = sessions;
    [summary.fit, summary.tcx, summary.gpx] = by_format;
    summary.files += sessions;
    summary.bytes += bytes;
    summary.damaged = damaged;
    Ok((scenario, summary))
}
