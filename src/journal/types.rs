//! The plain data the journal takes and gives.

use std::fmt;
use std::path::PathBuf;

use chrono::{DateTime, Utc};

use super::error::Missing;

/// A session as the roster and the analysis see it, for [`super::Journal::upsert_session`].
#[derive(Debug, Clone, PartialEq)]
pub struct SessionRecord {
    /// `<athlete-id>/<activity-file-stem>`.
    pub session_id: String,
    /// The athlete's id (folder name).
    pub athlete_id: String,
    /// Where the activity file is now.
    pub file_path: PathBuf,
    /// Lowercase hex SHA-256 of the file's bytes.
    pub content_hash: String,
    /// Time of the session's first sample.
    pub start: DateTime<Utc>,
    /// The analysis summary of exactly this content, when already computed.
    /// `None` keeps the cached summary when the content is unchanged.
    pub summary: Option<SummaryCache>,
}

/// A cached analysis summary: opaque JSON from the analysis layer plus what the journal needs.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SummaryCache {
    /// The summary as JSON text; the journal never looks inside.
    pub json: String,
    /// Version of the analysis code that produced it; a different version is a cache miss.
    pub analysis_version: u32,
    /// Number of work intervals the analysis found: the number of scores blind grading needs.
    pub work_intervals: u32,
    /// The session card cut from the same analysis, written in the same transaction.
    pub card: Option<CardCache>,
}

/// A session card for [`SummaryCache::card`]: opaque JSON from the analysis layer plus the
/// columns the comparisons select on.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CardCache {
    /// The card as JSON text; the journal never looks inside.
    pub json: String,
    /// The workout shape alone as JSON, when the session has one.
    pub shape_json: Option<String>,
    /// The session kind's JSON word (`intervals`, `easy`, ...).
    pub kind: String,
    /// The calendar day the session counts for, `YYYY-MM-DD`.
    pub day: String,
    /// The athlete inputs (profile and plans) the analysis was made under.
    pub inputs_digest: String,
}

/// What the warm check knows of a session from the journal's columns alone
/// ([`super::Journal::warm_rows`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WarmRow {
    /// The file's stat recorded with its content hash, when known.
    pub stat: Option<FileStat>,
    /// The cached summary was made by the analysis version asked for, for the session's
    /// present content.
    pub summary_current: bool,
    /// The athlete inputs digest the cached summary was made under, when known.
    pub summary_inputs: Option<String>,
}

/// The facts of a session's one-line title, cut from its cached summary when that was written
/// ([`super::Journal::summary_briefs`]); `None` where the summary lacks them.
#[derive(Debug, Clone, PartialEq)]
pub struct SummaryBrief {
    /// The athlete inputs digest the summary was made under.
    pub inputs_digest: Option<String>,
    /// The plan's title, when a plan was used.
    pub plan_title: Option<String>,
    /// The sport the file names.
    pub sport: Option<String>,
    /// False for another sport.
    pub running: Option<bool>,
    /// The session's distance, m.
    pub distance_m: Option<f64>,
    /// Work intervals the analysis found.
    pub work_intervals: Option<u32>,
}

/// One current session card of an athlete, as [`super::Journal::card_index`] lists them:
/// enough to pick sessions without reading their cards.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CardIndexRow {
    pub session_id: String,
    /// RFC 3339 UTC start time.
    pub start_time: String,
    /// `YYYY-MM-DD`.
    pub day: String,
    /// The session kind's JSON word.
    pub kind: String,
    /// The workout shape as JSON, when the session has one.
    pub shape_json: Option<String>,
}

/// What [`super::Journal::upsert_session`] found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SessionChange {
    /// A session id the journal had not seen, with content it had never reviewed.
    New,
    /// A new session id whose content already has a review (the file was renamed or moved,
    /// or is a copy): the review now shows under this id too.
    FoundReview,
    /// Known session, same content; path, start or summary may have been refreshed.
    Same,
    /// Known session whose file content changed. Its review (if any) is kept and reported as
    /// `content_changed`; the cached summary is dropped.
    ContentChanged,
}

/// The coach's judgement whether a session served its purpose.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PurposeVerdict {
    /// The session did what it was for.
    Met,
    /// Partly.
    Partly,
    /// It did not.
    Missed,
}

impl PurposeVerdict {
    /// The stored and displayed word: `met`, `partly` or `missed`.
    pub fn as_str(self) -> &'static str {
        match self {
            PurposeVerdict::Met => "met",
            PurposeVerdict::Partly => "partly",
            PurposeVerdict::Missed => "missed",
        }
    }

    /// Parse `met`, `partly` or `missed`.
    pub fn parse(s: &str) -> Option<PurposeVerdict> {
        match s {
            "met" => Some(PurposeVerdict::Met),
            "partly" => Some(PurposeVerdict::Partly),
            "missed" => Some(PurposeVerdict::Missed),
            _ => None,
        }
    }
}

impl fmt::Display for PurposeVerdict {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// Where a session stands in the daily review, in order.
///
/// - `New`: nothing graded yet (rulers do not count).
/// - `Grading`: some scores or the verdict given, blind grading not complete.
/// - `Graded`: every work interval scored and the verdict set; notes still hidden.
/// - `Seen`: marked as looked at without a grade ([`super::Journal::mark_seen`]); the notes
///   stay hidden. Reversible; grades given before or after are kept.
/// - `Revealed`: the notes were revealed; no feedback sent yet.
/// - `FeedbackDone`: feedback copied, exported or printed at least once.
///
/// A session is *unreviewed* while its stage is `New`, `Grading` or `Graded`: the coach has
/// neither finished the blind grading and read the athlete's notes nor marked it seen.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum ReviewStage {
    /// Nothing graded yet.
    New,
    /// Blind grading started but incomplete.
    Grading,
    /// Blind grading complete, notes not revealed.
    Graded,
    /// Marked seen without a grade; notes not revealed.
    Seen,
    /// Notes revealed, no feedback sent.
    Revealed,
    /// Feedback copied, exported or printed.
    FeedbackDone,
}

impl ReviewStage {
    /// Short lowercase label for lists and JSON: `new`, `grading`, `graded`, `seen`,
    /// `revealed`, `feedback done`.
    pub fn label(self) -> &'static str {
        match self {
            ReviewStage::New => "new",
            ReviewStage::Grading => "grading",
            ReviewStage::Graded => "graded",
            ReviewStage::Seen => "seen",
            ReviewStage::Revealed => "revealed",
            ReviewStage::FeedbackDone => "feedback done",
        }
    }

    /// `true` for `Revealed` and `FeedbackDone`: the notes were read; feedback belongs here.
    pub fn is_revealed(self) -> bool {
        self >= ReviewStage::Revealed
    }

    /// `true` for `New`, `Grading` and `Graded`: in the daily queue.
    pub fn is_unreviewed(self) -> bool {
        matches!(
            self,
            ReviewStage::New | ReviewStage::Grading | ReviewStage::Graded
        )
    }
}

/// One work interval's score: the blind value and the value in force after revisions.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ScoreCell {
    /// Work-interval number, 1-based.
    pub interval: u32,
    /// The score given before the reveal (1-5).
    pub blind: u8,
    /// When the blind score was (last) given.
    pub given_at: DateTime<Utc>,
    /// The score in force now: the latest revision, or the blind score.
    pub current: u8,
}

/// The purpose verdict: the blind value and the value in force after revisions.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct VerdictCell {
    /// The verdict given before the reveal.
    pub blind: PurposeVerdict,
    /// When the blind verdict was (last) given.
    pub given_at: DateTime<Utc>,
    /// The verdict in force now.
    pub current: PurposeVerdict,
}

/// The full grading state of one session.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ReviewState {
    /// Where the session stands.
    pub stage: ReviewStage,
    /// The file's content changed after the review began; the grades shown are for the old
    /// content. See [`super::Journal::restart_review`].
    pub content_changed: bool,
    /// Work intervals to score: frozen at the reveal, else the current analysis's count.
    /// `None` when not analysed yet.
    pub work_intervals: Option<u32>,
    /// Scores by interval number.
    pub scores: Vec<ScoreCell>,
    /// The purpose verdict, if given.
    pub verdict: Option<VerdictCell>,
    /// When the notes were first revealed.
    pub revealed_at: Option<DateTime<Utc>>,
    /// What still blocks the reveal (empty once graded or revealed).
    pub missing: Missing,
    /// Why the session's file cannot be read, when it cannot. Such a session has no
    /// analysis; its work intervals count as zero, so the purpose verdict alone closes it.
    pub file_unreadable: Option<String>,
    /// The problem the coach was shown when giving the blind verdict of an unreadable
    /// session (the record that they saw it).
    pub unreadable_seen: Option<String>,
    /// When the session was marked seen without a grade, while it is (see
    /// [`super::Journal::mark_seen`]).
    pub seen_at: Option<DateTime<Utc>>,
}

/// What a revision changed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RevisionChange {
    /// A work interval's score.
    Score {
        /// Work-interval number, 1-based.
        interval: u32,
        /// Value in force before.
        old: u8,
        /// Value after.
        new: u8,
    },
    /// The purpose verdict.
    Verdict {
        /// Value in force before.
        old: PurposeVerdict,
        /// Value after.
        new: PurposeVerdict,
    },
}

/// A change of grade after the reveal, kept beside the blind value.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Revision {
    /// What changed.
    pub change: RevisionChange,
    /// When.
    pub at: DateTime<Utc>,
}

/// One saved version of the feedback text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FeedbackVersion {
    /// The version's number in the journal: later versions have larger numbers. A save
    /// made over a version ([`crate::journal::Journal::save_feedback_over`]) names it.
    pub id: i64,
    /// The text.
    pub body: String,
    /// When it was saved.
    pub saved_at: DateTime<Utc>,
}

/// How feedback left splitdesk.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum FeedbackEventKind {
    /// Copied to the clipboard.
    Copied,
    /// Saved to a file.
    Exported,
    /// Printed to standard output.
    Printed,
}

impl FeedbackEventKind {
    /// The stored word.
    pub fn as_str(self) -> &'static str {
        match self {
            FeedbackEventKind::Copied => "copied",
            FeedbackEventKind::Exported => "exported",
            FeedbackEventKind::Printed => "printed",
        }
    }

    /// Parse a stored word.
    pub fn parse(s: &str) -> Option<FeedbackEventKind> {
        match s {
            "copied" => Some(FeedbackEventKind::Copied),
            "exported" => Some(FeedbackEventKind::Exported),
            "printed" => Some(FeedbackEventKind::Printed),
            _ => None,
        }
    }
}

/// Feedback copied, exported or printed at a time.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FeedbackEvent {
    /// How.
    pub kind: FeedbackEventKind,
    /// When.
    pub at: DateTime<Utc>,
}

/// A ruler kept for a session's chart: a time window in seconds from the session start.
#[derive(Debug, Clone, PartialEq)]
pub struct Ruler {
    /// Row id, stable for the life of the ruler.
    pub id: i64,
    /// Window start, seconds from the session start.
    pub from_s: f64,
    /// Window end, seconds from the session start.
    pub to_s: f64,
}

/// A session in a list (roster pane, review queue).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct QueueEntry {
    /// `<athlete-id>/<stem>`.
    pub session_id: String,
    /// The athlete's id.
    pub athlete: String,
    /// Start of the session.
    pub start: DateTime<Utc>,
    /// Where the file was last seen.
    pub file_path: PathBuf,
    /// Review stage.
    pub stage: ReviewStage,
    /// The content changed after the review began.
    pub content_changed: bool,
    /// The file cannot be read (the reason); the session closes with the verdict alone.
    pub file_unreadable: Option<String>,
}

/// Inputs of the bias check for one revealed review: blind grades and the grades in force.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BiasInput {
    /// One session id showing this review.
    pub session_id: String,
    /// The athlete's id.
    pub athlete: String,
    /// Start of the session.
    pub start: DateTime<Utc>,
    /// When the notes were revealed.
    pub revealed_at: DateTime<Utc>,
    /// Blind scores as (interval, score), by interval.
    pub blind_scores: Vec<(u32, u8)>,
    /// Scores in force after revisions, by interval.
    pub revised_scores: Vec<(u32, u8)>,
    /// Blind purpose verdict.
    pub blind_verdict: Option<PurposeVerdict>,
    /// Purpose verdict in force after revisions.
    pub revised_verdict: Option<PurposeVerdict>,
    /// Number of revisions made.
    pub revisions: u32,
}

/// Result of [`super::Journal::check`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CheckReport {
    /// Rows of `PRAGMA integrity_check` and `PRAGMA foreign_key_check`; empty when all is well.
    pub problems: Vec<String>,
    /// Damaged rows of the analysis cache (derived data, made again on the next sync), one
    /// line per session. They do not make the check fail.
    pub cache_problems: Vec<String>,
    /// Schema version (`PRAGMA user_version`).
    pub schema_version: u32,
    /// Sessions seen.
    pub sessions: u64,
    /// Reviews.
    pub reviews: u64,
    /// Blind scores.
    pub scores: u64,
    /// Revisions.
    pub revisions: u64,
    /// Saved feedback versions.
    pub feedback_versions: u64,
    /// Feedback copied/exported/printed events.
    pub feedback_events: u64,
    /// Rulers.
    pub rulers: u64,
}

impl CheckReport {
    /// `true` when SQLite found nothing wrong.
    pub fn is_ok(&self) -> bool {
        self.problems.is_empty()
    }
}

/// What an activity file looked like when its content hash was taken: an unchanged file
/// (same path, size and modification time to the nanosecond) is known from one `stat`,
/// without reading or hashing it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FileStat {
    /// The file's path.
    pub path: PathBuf,
    /// Size in bytes.
    pub size: u64,
    /// Modification time, nanoseconds since 1970-01-01 UTC.
    pub mtime_ns: i64,
}

impl FileStat {
    /// The stat of `path` (one `stat` call, following links); `None` when it cannot be
    /// taken or the time is before 1970 (such a file is simply always read).
    pub fn of(path: &std::path::Path) -> Option<FileStat> {
        let meta = std::fs::metadata(path).ok()?;
        let mtime = meta.modified().ok()?;
        let ns = mtime.duration_since(std::time::UNIX_EPOCH).ok()?.as_nanos();
        Some(FileStat {
            path: path.to_path_buf(),
            size: meta.len(),
            mtime_ns: i64::try_from(ns).ok()?,
        })
    }
}
