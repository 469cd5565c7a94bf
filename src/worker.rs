//! Background jobs: read and analyse sessions off the UI thread.
//!
//! A small pool of std threads takes [`Job`]s from one queue and sends each result back by
//! value ([`Done`], the analysis boxed) over a channel. Nothing is shared between the UI and
//! the workers but the queue. Every job carries a generation id; the UI drops results whose
//! generation is stale, and [`Worker::retain`] drops queued jobs nobody wants any more.
//! Urgent jobs (the session the coach just opened, and the one after it in the queue) go
//! to the front of the queue.

use std::collections::VecDeque;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{self, Receiver, Sender};
use std::sync::{Arc, Condvar, Mutex};
use std::thread::JoinHandle;

use crate::ingest::hash::sha256_hex;
use crate::journal::FileStat;
use crate::roster::{Activity, Athlete};
use crate::workspace::{analyse_activity, read_activity, Analysed};

/// Why a job was asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum JobKind {
    /// Bring the journal's cache up to date (start-up ingestion).
    Scan,
    /// The coach opened this session: the full series is needed for the chart.
    Open,
    /// The session after the open one in the queue (what `]` opens), read ahead so it
    /// opens from memory. At most one is kept.
    Prefetch,
}

/// One session to read and (when needed) analyse.
#[derive(Debug, Clone)]
pub struct Job {
    /// The requester's generation; results of older generations are dropped by the UI.
    pub generation: u64,
    /// Scan, open or prefetch.
    pub kind: JobKind,
    /// The athlete (shared, read-only).
    pub athlete: Arc<Athlete>,
    /// The activity file.
    pub activity: Activity,
    /// For scans: the content hash the journal holds with a valid cached summary. When the
    /// file still has this hash the job answers [`Outcome::Unchanged`] without analysing.
    pub cached_hash: Option<String>,
    /// For scans: the file's stat the journal recorded with `cached_hash`. A file with this
    /// very stat is [`Outcome::Unchanged`] without being read.
    pub cached_stat: Option<FileStat>,
}

impl Job {
    /// The session id the job is about.
    pub fn session_id(&self) -> String {
        self.athlete.session_id(&self.activity)
    }
}

/// What a job found.
#[derive(Debug)]
pub enum Outcome {
    /// The file is unchanged and the journal's cached summary is still good.
    Unchanged,
    /// The file's content is unchanged (same hash) but its stat is new: the journal should
    /// remember this stat; the cached summary is still good.
    Restat(FileStat),
    /// The session read and analysed.
    Analysed(Box<Analysed>),
    /// The file could not be read or analysed (one line naming the file), with the file's
    /// stat taken before it was read, when there was one.
    Failed(String, Option<FileStat>),
}

/// A finished job, sent back to the UI thread.
#[derive(Debug)]
pub struct Done {
    /// The job's generation.
    pub generation: u64,
    /// Scan or open.
    pub kind: JobKind,
    /// `<athlete-id>/<stem>`.
    pub session_id: String,
    /// The result.
    pub outcome: Outcome,
}

/// Run one job (any thread; pure apart from reading the file).
pub fn run_job(job: &Job) -> Outcome {
    // Taken before the file is read: a failure is recorded with the stat of the bytes that
    // failed, never of a newer file.
    let stat = FileStat::of(&job.activity.path);
    if job.kind == JobKind::Scan {
        if let Some(known) = &job.cached_hash {
            // One stat: the recorded path, size and modification time mean the same file.
            if stat.is_some() && stat == job.cached_stat {
                return Outcome::Unchanged;
            }
            match read_activity(&job.activity.path) {
                Ok(bytes) if &sha256_hex(&bytes) == known => {
                    return match stat {
                        Some(s) => Outcome::Restat(s),
                        None => Outcome::Unchanged,
                    }
                }
                Ok(_) => {}
                Err(e) => return Outcome::Failed(e.to_string(), stat),
            }
        }
    }
    match analyse_activity(&job.athlete, &job.activity) {
        Ok(a) => Outcome::Analysed(Box::new(a)),
        Err(e) => Outcome::Failed(e.to_string(), stat),
    }
}

struct Queue {
    jobs: Mutex<VecDeque<Job>>,
    ready: Condvar,
    stop: AtomicBool,
}

/// The pool of background threads.
pub struct Worker {
    queue: Arc<Queue>,
    results: Receiver<Done>,
    threads: Vec<JoinHandle<()>>,
}

impl Worker {
    /// Start `threads` workers (at least one).
    pub fn spawn(threads: usize) -> Worker {
        let queue = Arc::new(Queue {
            jobs: Mutex::new(VecDeque::new()),
            ready: Condvar::new(),
            stop: AtomicBool::new(false),
        });
        let (tx, results) = mpsc::channel();
        let threads = (0..threads.max(1))
            .map(|k| {
                let q = Arc::clone(&queue);
                let tx: Sender<Done> = tx.clone();
                std::thread::Builder::new()
                    .name(format!("splitdesk-worker-{k}"))
                    .spawn(move || work(&q, &tx))
            })
            .filter_map(Result::ok)
            .collect();
        Worker {
            queue,
            results,
            threads,
        }
    }

    /// A pool sized for this machine: one thread per core less one for the UI, 1 to 4.
    pub fn for_machine() -> Worker {
        let n = std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(2);
        Worker::spawn(n.saturating_sub(1).clamp(1, 4))
    }

    /// Queue a job; `urgent` jobs go first.
    pub fn submit(&self, job: Job, urgent: bool) {
        if let Ok(mut q) = self.queue.jobs.lock() {
            if urgent {
                q.push_front(job);
            } else {
                q.push_back(job);
            }
        }
        self.queue.ready.notify_one();
    }

    /// Keep only the queued jobs for which `keep` is true (a newer request supersedes).
    pub fn retain(&self, keep: impl Fn(&Job) -> bool) {
        if let Ok(mut q) = self.queue.jobs.lock() {
            q.retain(|j| keep(j));
        }
    }

    /// Jobs waiting (not counting those in progress).
    pub fn queued(&self) -> usize {
        self.queue.jobs.lock().map(|q| q.len()).unwrap_or(0)
    }

    /// A finished job, if one is ready (never blocks).
    pub fn try_recv(&self) -> Option<Done> {
        self.results.try_recv().ok()
    }

    /// Wait up to `timeout` for a finished job.
    pub fn recv_timeout(&self, timeout: std::time::Duration) -> Option<Done> {
        self.results.recv_timeout(timeout).ok()
    }
}

impl Drop for Worker {
    fn drop(&mut self) {
        self.queue.stop.store(true, Ordering::SeqCst);
        if let Ok(mut q) = self.queue.jobs.lock() {
            q.clear();
        }
        self.queue.ready.notify_all();
        for t in self.threads.drain(..) {
            let _ = t.join();
        }
    }
}

fn work(q: &Queue, tx: &Sender<Done>) {
    loop {
        let job = {
            let Ok(mut jobs) = q.jobs.lock() else { return };
            loop {
                if q.stop.load(Ordering::SeqCst) {
                    return;
                }
                if let Some(j) = jobs.pop_front() {
                    break j;
                }
                jobs = match q.ready.wait(jobs) {
                    Ok(g) => g,
                    Err(_) => return,
                };
            }
        };
        let outcome = run_job(&job);
        let done = Done {
            generation: job.generation,
            kind: job.kind,
            session_id: job.session_id(),
            outcome,
        };
        if tx.send(done).is_err() {
            return;
        }
    }
}
