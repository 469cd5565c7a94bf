//! A roster with its journal: what the headless commands and the workstation share.
//!
//! Reading and analysing a session is a pure step (`analyse_activity`, safe on any thread);
//! recording it, and everything the coach decides, goes through the journal.

use std::collections::HashSet;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};

use crate::analysis::card::SessionCard;
use crate::analysis::findings::{Finding, Severity};
use crate::analysis::review::{Review, ANALYSIS_VERSION};
use crate::ingest::{self, IngestError};
use crate::journal::{
    self, CardCache, FileStat, Journal, JournalError, SessionRecord, SummaryCache,
};
use crate::model::{Plan, Session};
use crate::plan::PlanFileError;
use crate::roster::{plans, Activity, Athlete, Roster, RosterError};

/// Why a workspace operation failed. Each variant's message names the file.
#[derive(Debug, thiserror::Error)]
pub enum WorkspaceError {
    #[error(transparent)]
    Roster(#[from] RosterError),
    #[error(transparent)]
    Journal(#[from] JournalError),
    #[error(transparent)]
    Ingest(#[from] IngestError),
    #[error(transparent)]
    Plan(#[from] PlanFileError),
    #[error("no session {0:?} in the roster (ids look like athlete-id/file-stem)")]
    UnknownSession(String),
    #[error("no journal location: the platform has no data directory; pass --journal PATH")]
    NoJournalLocation,
    #[error("{path}: cached analysis is unreadable ({message})")]
    BadCache { path: PathBuf, message: String },
}

/// One session read and analysed.
#[derive(Debug, Clone)]
pub struct Analysed {
    pub session_id: String,
    pub athlete_id: String,
    pub path: PathBuf,
    pub session: Session,
    pub plan: Option<Plan>,
    pub plan_path: Option<PathBuf>,
    pub review: Review,
    /// The athlete's [`Athlete::inputs_digest`] the review was made under.
    pub inputs_digest: String,
    /// The file's stat, taken before its bytes were read (`None` when it could not be).
    pub file_stat: Option<FileStat>,
}

/// The key of the summary JSON that holds the inputs digest (the review itself ignores it;
/// the journal reads it into a column when the summary is written).
const INPUTS_KEY: &str = journal::schema::SUMMARY_INPUTS_KEY;

/// Whether a cached summary is a readable review made under the athlete's current profile
/// and plans. A damaged one (bad JSON, not a review) is not current: it is made again.
pub fn summary_is_current(json: &str, athlete: &Athlete) -> bool {
    cached_review(json, athlete).is_some()
}

/// The review in a cached summary, when it is readable and was made under the athlete's
/// current profile and plans.
pub fn cached_review(json: &str, athlete: &Athlete) -> Option<Review> {
    let value = serde_json::from_str::<serde_json::Value>(json).ok()?;
    let current = value
        .get(INPUTS_KEY)
        .and_then(|d| d.as_str())
        .is_some_and(|d| d == athlete.inputs_digest);
    if !current {
        return None;
    }
    serde_json::from_value(value).ok()
}

impl Analysed {
    /// The journal record of this session, with its summary.
    pub fn record(&self) -> Result<SessionRecord, WorkspaceError> {
        let bad = |e: serde_json::Error| WorkspaceError::BadCache {
            path: self.path.clone(),
            message: e.to_string(),
        };
        let mut value = serde_json::to_value(&self.review).map_err(bad)?;
        if let Some(map) = value.as_object_mut() {
            map.insert(
                INPUTS_KEY.to_string(),
                serde_json::Value::String(self.inputs_digest.clone()),
            );
        }
        let json = serde_json::to_string(&value).map_err(bad)?;
        let card = match SessionCard::build(&self.session_id, &self.review, Some(&self.session)) {
            Some(c) => Some(CardCache {
                json: serde_json::to_string(&c).map_err(bad)?,
                shape_json: match &c.shape {
                    Some(sh) => Some(serde_json::to_string(sh).map_err(bad)?),
                    None => None,
                },
                kind: c.kind.as_str().to_string(),
                day: c.day.to_string(),
                inputs_digest: self.inputs_digest.clone(),
            }),
            None => None,
        };
        Ok(SessionRecord {
            session_id: self.session_id.clone(),
            athlete_id: self.athlete_id.clone(),
            file_path: self.path.clone(),
            content_hash: self.session.content_hash.clone(),
            start: self.session.start,
            summary: Some(SummaryCache {
                json,
                analysis_version: ANALYSIS_VERSION,
                work_intervals: self.review.work().count() as u32,
                card,
            }),
        })
    }
}

/// Read, clean and analyse one activity of a roster (no journal; any thread).
pub fn analyse_activity(athlete: &Athlete, act: &Activity) -> Result<Analysed, WorkspaceError> {
    let stat = FileStat::of(&act.path);
    let bytes = read_activity(&act.path)?;
    let mut analysed = analyse_bytes(athlete, act, &bytes)?;
    analysed.file_stat = stat;
    Ok(analysed)
}

/// Read an activity file whole, within the configured size cap (see [`ingest::read_activity`]).
pub(crate) fn read_activity(path: &Path) -> Result<Vec<u8>, WorkspaceError> {
    Ok(ingest::read_activity(path, ingest::limits())?)
}

/// Record an analysed session in the journal, in one transaction: the session with its
/// summary and the stat of its file (so the next start knows it unchanged without reading it).
pub fn record_analysed(
    journal: &mut Journal,
    a: &Analysed,
    now: DateTime<Utc>,
) -> Result<(), WorkspaceError> {
    journal.upsert_session_with_stat(&a.record()?, a.file_stat.as_ref(), now)?;
    Ok(())
}

fn analyse_bytes(
    athlete: &Athlete,
    act: &Activity,
    bytes: &[u8],
) -> Result<Analysed, WorkspaceError> {
    let session =
        ingest::ingest_bytes(bytes, act.format, Some(&athlete.profile)).map_err(|source| {
            IngestError::Parse {
                path: act.path.clone(),
                source,
            }
        })?;
    let (chosen, mut review) = analyse_with_plan(athlete, &act.stem, &session);
    let (plan_path, plan) = match chosen {
        Some((p, plan)) => (Some(p), Some(plan)),
        None => (None, None),
    };
    review.file = act.path.display().to_string();
    review.plan_file = plan_path
        .as_ref()
        .and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned());
    Ok(Analysed {
        session_id: athlete.session_id(act),
        athlete_id: athlete.id.clone(),
        path: act.path.clone(),
        session,
        plan,
        plan_path,
        review,
        inputs_digest: athlete.inputs_digest.clone(),
        file_stat: None,
    })
}

/// Summaries of an athlete's sessions for the history-side checks of one session on `day`
/// (the load-spike caution), read and analysed afresh without a journal: every activity
/// except `skip` (a session id the caller already has), leaving out files that cannot be read
/// and files whose name starts with a date after `day` (they cannot change that day's load
/// ratio) or more than [`SPIKE_LOOKBACK_DAYS`] before it (their weight in the ratio is
/// below 1e-11).
pub fn athlete_summaries_until(
    athlete: &Athlete,
    day: chrono::NaiveDate,
    skip: &str,
) -> Vec<crate::analysis::history::SessionSummary> {
    athlete
        .activities
        .iter()
        .filter(|act| athlete.session_id(act) != skip)
        .filter(|act| {
            act.stem
                .get(..10)
                .and_then(|d| chrono::NaiveDate::parse_from_str(d, "%Y-%m-%d").ok())
                .is_none_or(|d| {
                    d <= day + chrono::Duration::days(2)
                        && d >= day - chrono::Duration::days(SPIKE_LOOKBACK_DAYS)
                })
        })
        .filter_map(|act| analyse_activity(athlete, act).ok())
        .filter_map(|a| {
            crate::analysis::history::SessionSummary::from_review(&a.session_id, &a.review)
        })
        .collect()
}

/// How far back [`athlete_summaries_until`] reads, days: the chronic average's weight
/// after a year is (27/29)^365, about 5e-12.
pub const SPIKE_LOOKBACK_DAYS: i64 = 365;
/// The note a review carries when the session's plan file could not be used; it starts the
/// review's interval notes, and the verdict pane shows it in place of the plan.
pub const PLAN_NOT_USED: &str = "plan not used";

/// Analyse a session of a roster athlete with the plan chosen for it ([`plans::choose_plan`]).
/// Plan and profile problems that touch this session become notes and findings instead of
/// failures: a broken plan file leaves the session analysed without it and says why, a pace
/// the profile lacks is named, and a missing-HR finding caused by a bad profile key says so.
pub fn analyse_with_plan(
    athlete: &Athlete,
    stem: &str,
    session: &Session,
) -> (Option<(PathBuf, Plan)>, Review) {
    let choice = plans::choose_plan(athlete, stem, session.start, session.duration_s());
    let plan = choice.plan.as_ref().map(|(_, p)| p);
    let mut review = crate::analysis::analyze(session, plan, &athlete.profile);
    annotate(&mut review, athlete, &choice);
    (choice.plan, review)
}

fn file_name(path: &Path) -> String {
    crate::roster::printable(
        &path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| path.display().to_string()),
    )
}

fn finding(severity: Severity, code: &str, text: String, metrics: &[&str]) -> Finding {
    Finding {
        severity,
        code: code.to_string(),
        text: crate::roster::printable(&text),
        metrics: metrics.iter().map(|m| m.to_string()).collect(),
    }
}

/// Add the plan and profile problems that concern this session to its review.
fn annotate(review: &mut Review, athlete: &Athlete, choice: &plans::PlanChoice) {
    let mut front = Vec::new();
    for (k, e) in choice.broken.iter().enumerate() {
        let name = file_name(e.path());
        let reason = crate::roster::printable(&e.reason());
        review
            .interval_notes
            .insert(k, format!("{PLAN_NOT_USED}: {name}: {reason}"));
        let text = match &choice.plan {
            None => format!(
                "Plan not used: {name} could not be read ({reason}). The intervals were found \
                 from the speed; fix the plan file to judge the targets."
            ),
            Some((used, _)) => format!(
                "Plan file {name} could not be read ({reason}); the session was judged \
                 against {} instead.",
                file_name(used)
            ),
        };
        front.push(finding(Severity::Warning, "plan_not_used", text, &["plan"]));
    }
    if let Some((path, plan)) = &choice.plan {
        for u in crate::plan::unknown_paces(plan, &athlete.profile, "") {
            let text = format!("Plan {}: {}.", file_name(path), u.message(&athlete.profile));
            front.push(finding(
                Severity::Warning,
                "plan_pace_unknown",
                text,
                &["intervals.target"],
            ));
        }
    }
    let profile = &athlete.profile_problems;
    let hr_problem = profile
        .iter()
        .find(|p| p.concerns("hr_max") || p.concerns("hr_rest"));
    if let (Some(p), Some(f)) = (
        hr_problem,
        review
            .findings
            .iter_mut()
            .find(|f| f.code == "no_hr_profile"),
    ) {
        f.text = crate::roster::printable(&format!(
            "The profile's resting or maximum HR could not be read (athlete.toml {p}): load \
             (TRIMP) is not computed."
        ));
    }
    if let Some(first) = profile.first() {
        let more = match profile.len() {
            1 => String::new(),
            n => format!("; {} more", n - 1),
        };
        front.push(finding(
            Severity::Note,
            "profile_problems",
            format!(
                "athlete.toml has a problem ({first}{more}): keys that could not be read are \
                 left out of this review."
            ),
            &["profile"],
        ));
    }
    review.findings.splice(0..0, front);
}

/// What `sync` did.
#[derive(Debug, Default)]
pub struct SyncReport {
    pub sessions: usize,
    pub analysed: usize,
    pub cached: usize,
    /// Files that could not be read or analysed, one line each.
    pub problems: Vec<String>,
    /// The session ids of those files.
    pub failed: Vec<String>,
}

/// A roster opened with its journal.
pub struct Workspace {
    pub roster: Roster,
    pub journal: Journal,
    /// The sessions the last [`Workspace::sync`] left current: file unchanged since its
    /// summary was cached, or analysed by it.
    current: HashSet<String>,
}

/// The journal path for a roster: the explicit one, else the per-roster default.
pub fn journal_path(
    roster_root: &Path,
    explicit: Option<&Path>,
) -> Result<PathBuf, WorkspaceError> {
    match explicit {
        Some(p) => Ok(p.to_path_buf()),
        None => journal::default_path(roster_root).ok_or(WorkspaceError::NoJournalLocation),
    }
}

impl Workspace {
    /// Open the roster and its journal (created when missing; never inside the roster).
    pub fn open(roster_dir: &Path, journal: Option<&Path>) -> Result<Workspace, WorkspaceError> {
        Workspace::open_only(roster_dir, journal, None)
    }

    /// [`Workspace::open`] with only athlete `only` read from the roster when it is `Some`
    /// ([`Roster::open_athlete`]): for a command about that athlete alone.
    pub fn open_only(
        roster_dir: &Path,
        journal: Option<&Path>,
        only: Option<&str>,
    ) -> Result<Workspace, WorkspaceError> {
        let roster = match only {
            Some(id) => Roster::open_athlete(roster_dir, id)?,
            None => Roster::open(roster_dir)?,
        };
        // A journal on a PostgreSQL server (shared by a staff): no file, no roster check. A
        // key=value connection string is refused, never taken for a file name.
        if let Some(url) = journal
            .and_then(Path::to_str)
            .filter(|s| journal::names_a_server(s))
        {
            return Ok(Workspace {
                roster,
                journal: Journal::open_url(url)?,
                current: HashSet::new(),
            });
        }
        let path = journal_path(&roster.root, journal)?;
        if let Some(parent) = path.parent() {
            if !parent.as_os_str().is_empty() && !parent.exists() {
                std::fs::create_dir_all(parent).map_err(|err| {
                    WorkspaceError::Journal(JournalError::Io {
                        path: parent.to_path_buf(),
                        err,
                    })
                })?;
            }
        }
        let journal = match Journal::open_for_roster(&path, &roster.root) {
            Ok(j) => j,
            // An existing journal that cannot be written still serves reading: a copy in
            // memory, every write of the coach's data refused.
            Err(JournalError::ReadOnlyLocation { .. }) if path.is_file() => {
                Journal::open_snapshot(&path, &journal::why_read_only(&path))?
            }
            Err(e) => return Err(e.into()),
        };
        Ok(Workspace {
            roster,
            journal,
            current: HashSet::new(),
        })
    }

    /// Read and write the journal as `coach`. Without one, a journal with a staff refuses
    /// ([`JournalError::NoCoach`]): on it every record belongs to a named coach.
    pub fn act_as(&mut self, coach: Option<&str>) -> Result<(), WorkspaceError> {
        match coach {
            Some(name) => self.journal.set_coach(name)?,
            None => {
                let staff = self.journal.staff_size()?;
                if staff > 0 {
                    return Err(JournalError::NoCoach {
                        path: self.journal.path().to_path_buf(),
                        staff,
                    }
                    .into());
                }
            }
        }
        Ok(())
    }

    /// Find an athlete and activity by session id.
    pub fn find(&self, session_id: &str) -> Result<(&Athlete, &Activity), WorkspaceError> {
        self.roster
            .find_session(session_id)
            .ok_or_else(|| WorkspaceError::UnknownSession(session_id.to_string()))
    }

    /// Bring one session up to date in the journal: hash the file, record it, and analyse it
    /// unless the journal already holds a summary of this content by this analysis version,
    /// made under the athlete's current profile and plans.
    /// Returns the review.
    pub fn refresh(
        &mut self,
        session_id: &str,
        now: DateTime<Utc>,
    ) -> Result<Review, WorkspaceError> {
        self.refresh_inner(session_id, now).map(|(r, _)| r)
    }

    /// `refresh`, also saying whether the cached summary was used.
    fn refresh_inner(
        &mut self,
        session_id: &str,
        now: DateTime<Utc>,
    ) -> Result<(Review, bool), WorkspaceError> {
        let (athlete, act) = self.find(session_id)?;
        let (athlete, act) = (athlete.clone(), act.clone());
        // One stat first: a file with the path, size and modification time the journal
        // recorded with its hash is known unchanged without reading it.
        let stat = FileStat::of(&act.path);
        if stat.is_some() && self.journal.file_stat(session_id)? == stat {
            if let Some(review) = self
                .journal
                .cached_summary(session_id, ANALYSIS_VERSION)?
                .and_then(|json| cached_review(&json, &athlete))
            {
                return Ok((review, true));
            }
        }
        let bytes = read_activity(&act.path)?;
        let hash = ingest::hash::sha256_hex(&bytes);
        // A damaged or stale cached summary is simply made again (and replaced).
        if let Some(review) = self
            .cached(session_id, &hash)?
            .and_then(|json| cached_review(&json, &athlete))
        {
            // Same content under a new stat (touched, copied back): remember the new stat.
            if let Some(stat) = &stat {
                self.journal.set_file_stat(session_id, stat)?;
            }
            return Ok((review, true));
        }
        let mut analysed = analyse_bytes(&athlete, &act, &bytes)?;
        analysed.file_stat = stat;
        self.record(&analysed, now)?;
        Ok((analysed.review, false))
    }

    /// The cached summary when the journal knows this session with exactly this content.
    fn cached(&self, session_id: &str, hash: &str) -> Result<Option<String>, WorkspaceError> {
        match self.journal.session_hash(session_id)? {
            Some(h) if h == hash => {
                Ok(self.journal.cached_summary(session_id, ANALYSIS_VERSION)?)
            }
            _ => Ok(None),
        }
    }

    /// Record an analysed session (and its summary) in the journal.
    pub fn record(&mut self, a: &Analysed, now: DateTime<Utc>) -> Result<(), WorkspaceError> {
        record_analysed(&mut self.journal, a, now)
    }

    /// Whether the last [`Workspace::sync`] found the session's file unchanged since its
    /// cached summary was made, or analysed it: its summary in the journal is that of the
    /// file as it is now (unless damaged inside).
    pub fn synced_current(&self, session_id: &str) -> bool {
        self.current.contains(session_id)
    }

    /// Bring every session of the roster up to date in the journal.
    ///
    /// Warm work is one query and one `stat` per file: a file whose path, size and
    /// modification time are those the journal recorded with its hash, and whose cached
    /// summary is current by the journal's columns (analysis version, content hash, the
    /// athlete's inputs digest), is neither read, hashed nor its summary parsed. Any other
    /// session goes through [`Workspace::refresh`]. A cached summary damaged inside (which
    /// the columns cannot show) is made again by the first command that reads it.
    pub fn sync(
        &mut self,
        now: DateTime<Utc>,
        progress: impl FnMut(usize, usize),
    ) -> Result<SyncReport, WorkspaceError> {
        self.sync_only(None, now, progress)
    }

    /// [`Workspace::sync`] of one athlete's sessions (`Some(id)`), or of every session
    /// (`None`): a command about one athlete (`trends`) neither stats nor refreshes the
    /// others' files. An unknown id syncs nothing.
    pub fn sync_only(
        &mut self,
        athlete: Option<&str>,
        now: DateTime<Utc>,
        mut progress: impl FnMut(usize, usize),
    ) -> Result<SyncReport, WorkspaceError> {
        let warm = self.journal.warm_rows(ANALYSIS_VERSION)?;
        self.current.clear();
        let mut stale = Vec::new();
        let mut report = SyncReport::default();
        let wanted = |a: &Athlete| athlete.is_none_or(|id| a.id == id);
        for (athlete, act) in self.roster.activities().filter(|(a, _)| wanted(a)) {
            report.sessions += 1;
            let id = athlete.session_id(act);
            let current = warm.get(&id).is_some_and(|w| {
                w.summary_current
                    && w.summary_inputs.as_deref() == Some(athlete.inputs_digest.as_str())
                    && w.stat.is_some()
                    && FileStat::of(&act.path) == w.stat
            });
            if current {
                report.cached += 1;
                self.current.insert(id);
            } else {
                stale.push(id);
            }
        }
        let (total, known) = (report.sessions, report.cached);
        progress(known, total);
        for (k, id) in stale.into_iter().enumerate() {
            match self.refresh_inner(&id, now) {
                Ok((_, cached)) => {
                    if cached {
                        report.cached += 1;
                    } else {
                        report.analysed += 1;
                    }
                    self.current.insert(id);
                }
                Err(WorkspaceError::Journal(e)) => return Err(WorkspaceError::Journal(e)),
                Err(e) => {
                    report.problems.push(e.to_string());
                    report.failed.push(id);
                }
            }
            progress(known + k + 1, total);
        }
        Ok(report)
    }
}
