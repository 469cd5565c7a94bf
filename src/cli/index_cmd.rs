//! `splitdesk index [ROSTER]`: a cold scan of the roster into its journal, on every core,
//! with bounded memory.
//!
//! One pass on the main thread takes each activity file's `stat`; a file whose path, size
//! and modification time the journal already holds (with a current summary, or marked
//! unreadable) is unchanged and is not read. The others go through a bounded queue to the
//! workers, which read, clean and analyse them and hand back only the journal record (the
//! summary and the card; the sample series is dropped in the worker). The main thread
//! writes the records in batches, one transaction each, and draws the progress bar.
//!
//! Output: one line per file that cannot be read (`PATH: reason`) or that failed otherwise,
//! then one summary line: files, analysed, unchanged, unreadable, seconds, files per second.

use std::path::{Path, PathBuf};
use std::sync::mpsc::{sync_channel, Receiver};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use chrono::Utc;

use crate::analysis::review::ANALYSIS_VERSION;
use crate::cli::out::count;
use crate::journal::{self, FileStat, Journal, SessionRecord};
use crate::roster::{Activity, Athlete, Roster};
use crate::workspace::{self, Workspace, WorkspaceError};

/// Records written per transaction.
pub const BATCH: usize = 128;

/// The longest a finished record waits for its batch to be written.
const BATCH_WAIT: Duration = Duration::from_millis(500);

/// What [`index`] did.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct IndexReport {
    /// Activity files in the roster.
    pub files: usize,
    /// Read, analysed and recorded.
    pub analysed: usize,
    /// Known unchanged from their stat: not read.
    pub unchanged: usize,
    /// Files that cannot be read, recorded as such: (path, reason).
    pub unreadable: Vec<(PathBuf, String)>,
    /// Files that failed otherwise (not recorded): one line each, naming the file.
    pub failed: Vec<String>,
    /// Wall time of the scan.
    pub seconds: f64,
}

/// One file to analyse: indexes into the roster, and the session id.
struct Job {
    athlete: usize,
    activity: usize,
}

/// What a worker hands back.
enum Outcome {
    Analysed(SessionRecord, Option<FileStat>),
    Unreadable(SessionRecord, String, Option<FileStat>),
    Failed(String),
}

/// Read and analyse one file; only the journal record leaves this function.
fn work(athlete: &Athlete, act: &Activity) -> Outcome {
    match workspace::analyse_activity(athlete, act) {
        Ok(a) => match a.record() {
            Ok(record) => Outcome::Analysed(record, a.file_stat),
            Err(e) => Outcome::Failed(e.to_string()),
        },
        Err(WorkspaceError::Ingest(e)) => {
            let stat = FileStat::of(&act.path);
            let id = athlete.session_id(act);
            let record = journal::unreadable_record(&id, &athlete.id, &act.path, Utc::now());
            Outcome::Unreadable(record, e.reason(), stat)
        }
        Err(e) => Outcome::Failed(e.to_string()),
    }
}

/// Whether the journal already holds this file as it is on disk (the same stat), with a
/// summary current for the athlete's profile and plans (from the journal's columns, no
/// summary read: `warm`), or marked unreadable.
fn unchanged(
    journal: &Journal,
    warm: &std::collections::HashMap<String, journal::WarmRow>,
    athlete: &Athlete,
    id: &str,
    stat: &Option<FileStat>,
) -> Result<bool, journal::JournalError> {
    let Some(row) = warm.get(id) else {
        return Ok(false);
    };
    if stat.is_none() || row.stat != *stat {
        return Ok(false);
    }
    if row.summary_current && row.summary_inputs.as_deref() == Some(&athlete.inputs_digest) {
        return Ok(true);
    }
    Ok(journal.unreadable(id).ok().flatten().is_some())
}

/// Scan `roster` into `journal` on `workers` threads; `progress(done, total)` is called on
/// the calling thread after every file.
pub fn index(
    roster: &Roster,
    journal: &mut Journal,
    workers: usize,
    mut progress: impl FnMut(usize, usize),
) -> Result<IndexReport, journal::JournalError> {
    let started = Instant::now();
    let mut report = IndexReport::default();
    let mut jobs = Vec::new();
    let warm = journal.warm_rows(ANALYSIS_VERSION)?;
    for (ai, athlete) in roster.athletes.iter().enumerate() {
        for (xi, act) in athlete.activities.iter().enumerate() {
            report.files += 1;
            let id = athlete.session_id(act);
            if unchanged(journal, &warm, athlete, &id, &FileStat::of(&act.path))? {
                report.unchanged += 1;
            } else {
                jobs.push(Job {
                    athlete: ai,
                    activity: xi,
                });
            }
        }
    }
    let total = report.files;
    let mut done = report.unchanged;
    progress(done, total);
    let workers = workers.clamp(1, 64);
    let (job_tx, job_rx) = sync_channel::<Job>(workers * 2);
    let (out_tx, out_rx) = sync_channel::<(PathBuf, Outcome)>(BATCH.max(workers * 2));
    let job_rx: Arc<Mutex<Receiver<Job>>> = Arc::new(Mutex::new(job_rx));
    let written = std::thread::scope(|scope| {
        for _ in 0..workers {
            let job_rx = Arc::clone(&job_rx);
            let out_tx = out_tx.clone();
            scope.spawn(move || loop {
                let job = match job_rx.lock() {
                    Ok(rx) => rx.recv(),
                    Err(_) => break,
                };
                let Ok(job) = job else { break };
                let Some(athlete) = roster.athletes.get(job.athlete) else {
                    continue;
                };
                let Some(act) = athlete.activities.get(job.activity) else {
                    continue;
                };
                if out_tx.send((act.path.clone(), work(athlete, act))).is_err() {
                    break;
                }
            });
        }
        drop(out_tx);
        // The feeder: blocks while the queue is full, so at most `workers * 2` jobs wait.
        scope.spawn(move || {
            for job in jobs {
                if job_tx.send(job).is_err() {
                    break;
                }
            }
        });
        let mut analysed = Vec::with_capacity(BATCH);
        let mut unreadable = Vec::new();
        let mut oldest: Option<Instant> = None;
        let mut flush = |analysed: &mut Vec<(SessionRecord, Option<FileStat>)>,
                         unreadable: &mut Vec<(SessionRecord, String, Option<FileStat>)>|
         -> Result<(), journal::JournalError> {
            if !analysed.is_empty() || !unreadable.is_empty() {
                journal.upsert_sessions_batch(analysed, unreadable, Utc::now())?;
                analysed.clear();
                unreadable.clear();
            }
            Ok(())
        };
        loop {
            let next = match oldest {
                Some(t) => out_rx.recv_timeout(BATCH_WAIT.saturating_sub(t.elapsed())),
                None => out_rx
                    .recv()
                    .map_err(|_| std::sync::mpsc::RecvTimeoutError::Disconnected),
            };
            match next {
                Ok((path, outcome)) => {
                    match outcome {
                        Outcome::Analysed(record, stat) => {
                            report.analysed += 1;
                            analysed.push((record, stat));
                        }
                        Outcome::Unreadable(record, reason, stat) => {
                            report.unreadable.push((path, reason.clone()));
                            unreadable.push((record, reason, stat));
                        }
                        Outcome::Failed(line) => report.failed.push(line),
                    }
                    oldest.get_or_insert_with(Instant::now);
                    done += 1;
                    progress(done, total);
                    if analysed.len() + unreadable.len() >= BATCH {
                        flush(&mut analysed, &mut unreadable)?;
                        oldest = None;
                    }
                }
                Err(std::sync::mpsc::RecvTimeoutError::Timeout) => {
                    flush(&mut analysed, &mut unreadable)?;
                    oldest = None;
                }
                Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => break,
            }
        }
        flush(&mut analysed, &mut unreadable)
    });
    // On a journal error the receiver is gone, so the workers and the feeder stop at
    // their next send; the scope has joined them.
    written?;
    report.seconds = started.elapsed().as_secs_f64();
    Ok(report)
}

/// The number of worker threads: one per core.
pub fn default_workers() -> usize {
    std::thread::available_parallelism().map_or(2, |n| n.get())
}

/// Run the command; returns the exit code (0, or 1 when a file failed other than by being
/// unreadable).
pub fn run(root: &Path, journal: Option<&Path>) -> anyhow::Result<i32> {
    let mut ws = Workspace::open(root, journal)?;
    if let Some(reason) = ws.journal.read_only() {
        crate::cli::out::eprint_text(format_args!(
            "error: {}: the journal is read-only ({reason}); index writes to it\n",
            ws.journal.path().display()
        ));
        return Ok(2);
    }
    let total = ws.roster.activities().count() as u64;
    let bar = super::progress_bar(total, "indexing");
    let Workspace {
        roster, journal, ..
    } = &mut ws;
    let report = index(roster, journal, default_workers(), |done, _| {
        bar.set_position(done as u64)
    })?;
    bar.finish_and_clear();
    for (path, reason) in &report.unreadable {
        crate::cli::out::print_text(format_args!("{}: {reason}\n", path.display()));
    }
    for line in &report.failed {
        crate::cli::out::print_text(format_args!("{line}\n"));
    }
    let rate = if report.seconds > 0.0 {
        (report.analysed + report.unreadable.len()) as f64 / report.seconds
    } else {
        0.0
    };
    crate::cli::out::print_text(format_args!(
        "{}: {}, {} analysed, {} unchanged, {} unreadable, {:.1} s, {:.0} files/s\n",
        roster.root.display(),
        count(report.files, "file", "files"),
        report.analysed,
        report.unchanged,
        report.unreadable.len(),
        report.seconds,
        rate,
    ));
    Ok(if report.failed.is_empty() { 0 } else { 1 })
}
