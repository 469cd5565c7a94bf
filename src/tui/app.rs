//! The workstation's state and its one update function, [`App::handle`].
//!
//! `handle` takes an event (a key, a worker result, a tick) and returns the effects the
//! event loop must carry out (run a job, copy, open `$EDITOR`, write a file, quit). Grades,
//! verdicts, rulers and feedback are written to the journal inside `handle`, as they are
//! typed: the App owns the journal, and only the UI thread touches it. No threads, no
//! terminal: tests drive `handle` with an in-memory journal.

use std::collections::{BTreeMap, HashMap};
use std::path::PathBuf;
use std::sync::Arc;

use chrono::{DateTime, NaiveDate, Utc};
use crossterm::event::{Event, KeyCode, KeyEvent, KeyEventKind, KeyModifiers};

use crate::analysis::history::SessionSummary;
use crate::analysis::review::{Review, ANALYSIS_VERSION};
use crate::journal::{
    read_note, FeedbackEventKind, FeedbackVersion, FileStat, Journal, JournalError, PurposeVerdict,
    QueueEntry, ReviewStage, ReviewState, Revision, Ruler,
};
use crate::model::units::format_distance;
use crate::roster::{Athlete, Roster};
use crate::worker::{Done, Job, JobKind, Outcome};
use crate::workspace::Analysed;

use super::action::Action;
pub use super::editor::TextEditor;
use super::event::AppEvent;
use super::keymap::{Key, KeyMap};
use super::theme::Theme;

/// Something the event loop must do after `handle`.
#[derive(Debug)]
pub enum Effect {
    /// Queue a background job (`urgent`: ahead of the others).
    Submit {
        /// The job.
        job: Job,
        /// Put it first.
        urgent: bool,
    },
    /// Drop queued `Open` and `Prefetch` jobs older than this generation.
    DropStaleOpens(u64),
    /// Copy the text to the clipboard.
    Copy(String),
    /// Suspend the terminal and edit this text in `$EDITOR`.
    OpenEditor(String),
    /// Write the feedback text to a file.
    WriteFile {
        /// Where.
        path: PathBuf,
        /// What.
        text: String,
    },
    /// Write the day's messages to a file, then copy them (see [`App::export_day`]).
    WriteDay {
        /// Where.
        path: PathBuf,
        /// What.
        text: String,
    },
    /// Leave the workstation.
    Quit,
}

/// Which pane has the keyboard.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Focus {
    /// Athletes and sessions.
    Roster,
    /// Pace and heart-rate traces.
    Chart,
    /// Purpose, interval table, grading, feedback.
    Verdict,
}

/// What the right-hand side shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum View {
    /// Chart and verdict of the open session.
    Review,
    /// The selected athlete's history.
    History,
}

/// A popup. Only one at a time.
#[derive(Debug, Clone, PartialEq)]
pub enum Modal {
    /// Every key, from the key map.
    Help,
    /// The athlete's notes (only ever built after the reveal).
    Notes(String),
    /// Quit with unsaved feedback edits?
    ConfirmQuit,
    /// A message to acknowledge.
    Message {
        /// Heading.
        title: String,
        /// Text.
        text: String,
    },
    /// The feedback was saved elsewhere while it was edited here: keep mine, take theirs or
    /// show both (see [`CONFLICT_KEYS`]); nothing was saved.
    Conflict(FeedbackConflict),
}

/// A save of the feedback refused because another workstation saved a newer version
/// meanwhile (the journal's version check): what the coach is asked to settle.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FeedbackConflict {
    /// The session.
    pub session_id: String,
    /// The version saved elsewhere.
    pub theirs: FeedbackVersion,
    /// The feedback was on its way out (copy or file) when the conflict came: after "keep
    /// mine" it goes on its way.
    pub then: Option<FeedbackEventKind>,
}

/// Title of the feedback conflict prompt.
pub const CONFLICT_TITLE: &str = "Feedback changed elsewhere";

/// The feedback conflict prompt's keys and what they do, in the order shown.
pub const CONFLICT_KEYS: [(&str, &str); 4] = [
    ("k", "keep mine (save my text over theirs)"),
    ("t", "take theirs (my text is dropped)"),
    ("b", "show both (in the editor, to merge by hand)"),
    ("Esc", "back to editing (nothing saved)"),
];

/// The marker lines "show both" puts around the two texts in the editor.
pub const BOTH_MINE: &str = "=== My text (not saved) ===";
/// Heading of the other text (followed by when it was saved).
pub const BOTH_THEIRS: &str = "=== Text saved elsewhere";
/// The last marker line.
pub const BOTH_END: &str =
    "=== End of both: keep what you want, delete the marker lines, then save ===";

/// How often the "reviewing now" mark of the open session is renewed, and other coaches'
/// marks re-read when nothing else changed (their marks expire after
/// [`crate::journal::REVIEWING_FOR`]).
pub const REVIEWING_RENEW: chrono::Duration = chrono::Duration::seconds(60);

/// An action that leaves the open session, held while the coach answers whether to keep an
/// unsaved feedback edit (see [`App::pending_leave`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Leave {
    /// Open another session (Enter, or `]` / `[` through the queue).
    Open(String),
    /// Switch to the athlete's history view.
    History,
}

/// Title of the question asked before leaving a session with an unsaved feedback edit.
pub const LEAVE_TITLE: &str = "Leave this session?";

/// How a status message should look.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Tone {
    /// Plain information.
    Info,
    /// Something done.
    Done,
    /// A refusal or problem.
    Warn,
}

/// The status line message.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Message {
    /// Text.
    pub text: String,
    /// Look.
    pub tone: Tone,
}

/// One session row in the roster pane.
#[derive(Debug, Clone, PartialEq)]
pub struct SessionRow {
    /// `<athlete-id>/<stem>`.
    pub session_id: String,
    /// Session start, once the journal knows the session.
    pub start: Option<DateTime<Utc>>,
    /// Review stage, once the journal knows the session.
    pub stage: Option<ReviewStage>,
    /// The file could not be read.
    pub failed: bool,
}

/// Where the roster cursor is: an athlete, or one of its sessions.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct RosterCursor {
    /// The athlete id.
    pub athlete: Option<String>,
    /// The session id, when on a session row.
    pub session: Option<String>,
}

/// A row of the roster pane as drawn.
#[derive(Debug, Clone, PartialEq)]
pub enum RosterRow {
    /// An athlete: index into `roster.athletes`.
    Athlete(usize),
    /// A session of the expanded athlete.
    Session(SessionRow),
}

/// Background work progress.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Progress {
    /// Jobs of the current scan.
    pub total: usize,
    /// Finished.
    pub done: usize,
    /// Failed.
    pub failed: usize,
}

/// The chart's window and cursor, seconds from the session start.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChartView {
    /// Session length.
    pub duration: f64,
    /// Window start.
    pub from: f64,
    /// Window end.
    pub to: f64,
    /// Cursor time.
    pub cursor: f64,
    /// Draw the elevation trace.
    pub elevation: bool,
}

impl ChartView {
    /// The whole session, cursor at the start.
    pub fn full(duration: f64) -> ChartView {
        let d = if duration.is_finite() && duration > 0.0 {
            duration
        } else {
            1.0
        };
        ChartView {
            duration: d,
            from: 0.0,
            to: d,
            cursor: 0.0,
            elevation: false,
        }
    }

    /// Window length.
    pub fn span(&self) -> f64 {
        self.to - self.from
    }

    /// Zoomed in at all.
    pub fn zoomed(&self) -> bool {
        self.span() < self.duration - 1e-9
    }

    fn set_window(&mut self, from: f64, span: f64) {
        let span = span.clamp(MIN_SPAN_S.min(self.duration), self.duration);
        let from = from.clamp(0.0, (self.duration - span).max(0.0));
        self.from = from;
        self.to = from + span;
    }

    /// Halve (factor 0.5) or double (2.0) the window around the cursor.
    pub fn zoom(&mut self, factor: f64) {
        let span = self.span() * factor;
        let rel = if self.span() > 0.0 {
            (self.cursor - self.from) / self.span()
        } else {
            0.5
        };
        self.set_window(self.cursor - rel * span, span);
    }

    /// Move the cursor by `dt`; the window follows when the cursor leaves it.
    pub fn move_cursor(&mut self, dt: f64) {
        self.cursor = (self.cursor + dt).clamp(0.0, self.duration);
        if self.cursor > self.to {
            self.set_window(self.cursor - self.span(), self.span());
        } else if self.cursor < self.from {
            self.set_window(self.cursor, self.span());
        }
    }

    /// Pan by a fraction of the window (negative: back); the cursor stays inside.
    pub fn pan(&mut self, fraction: f64) {
        self.set_window(self.from + fraction * self.span(), self.span());
        self.cursor = self.cursor.clamp(self.from, self.to);
    }
}

/// Shortest chart window, seconds.
pub const MIN_SPAN_S: f64 = 60.0;

/// The session the coach is reviewing.
#[derive(Debug)]
pub struct OpenSession {
    /// `<athlete-id>/<stem>`.
    pub session_id: String,
    /// Index into `roster.athletes`.
    pub athlete: usize,
    /// Generation of the load request.
    pub generation: u64,
    /// The objective review (from the journal cache or the fresh analysis).
    pub review: Option<Review>,
    /// The full session and review, once analysed in the background.
    pub analysed: Option<Box<Analysed>>,
    /// Why the session could not be loaded.
    pub load_error: Option<String>,
    /// Grading state from the journal.
    pub state: Option<ReviewState>,
    /// Changes made after the reveal.
    pub revisions: Vec<Revision>,
    /// The session's rulers.
    pub rulers: Vec<Ruler>,
    /// First point of a ruler being marked.
    pub pending_ruler: Option<f64>,
    /// Chart window and cursor (once the duration is known).
    pub chart: Option<ChartView>,
    /// Selected work interval (0-based among the work intervals).
    pub selected_work: usize,
    /// How the verdict pane's document is scrolled.
    pub verdict: super::panes::verdict_state::VerdictView,
    /// The athlete's note: `Some` only after the reveal (`Some(None)`: there is no note).
    pub note: Option<Option<String>>,
    /// The feedback text (after the reveal).
    pub feedback: Option<TextEditor>,
    /// The journal's feedback version the editor's text started from (`None`: no saved
    /// version); a save names it, so a newer save elsewhere is a conflict, not overwritten.
    pub feedback_base: Option<i64>,
    /// The load-spike caution when this session's day took the athlete's acute/chronic
    /// ratio to the caution band (from the athlete's cached reviews; shown with the
    /// findings, kept out of the review and so out of the feedback draft).
    pub load_spike: Option<crate::analysis::findings::Finding>,
    /// The session in its context: the verdict pane's lower view, the earlier runs and the
    /// week once asked for, the chart's overlay (dropped with the session).
    pub context: super::panes::context_view::ContextState,
}

impl OpenSession {
    /// Number of work intervals in the review.
    pub fn work_count(&self) -> usize {
        self.review.as_ref().map(|r| r.work().count()).unwrap_or(0)
    }

    /// The notes were revealed.
    pub fn revealed(&self) -> bool {
        self.state.as_ref().is_some_and(|s| s.revealed_at.is_some())
    }

    /// Why the session's file cannot be read, as the journal holds it.
    pub fn unreadable(&self) -> Option<&str> {
        self.state
            .as_ref()
            .and_then(|s| s.file_unreadable.as_deref())
    }
}

/// How the workstation is set up.
#[derive(Debug, Clone)]
pub struct Options {
    /// Key bindings.
    pub keymap: KeyMap,
    /// Look.
    pub theme: Theme,
    /// Where `s` saves feedback files (`None`: the current folder).
    pub feedback_dir: Option<PathBuf>,
}

/// The whole state of the workstation.
pub struct App {
    /// The coach's journal (only the UI thread holds it).
    pub journal: Journal,
    /// The roster.
    pub roster: Roster,
    athletes: Vec<Arc<Athlete>>,
    /// Key bindings.
    pub keymap: KeyMap,
    /// Look.
    pub theme: Theme,
    /// Terminal size (columns, rows).
    pub size: (u16, u16),
    /// Focused pane.
    pub focus: Focus,
    /// Right-hand view.
    pub view: View,
    /// Show the roster pane even when the terminal is narrow.
    pub show_roster: bool,
    /// Name filter.
    pub filter: String,
    /// Typing into the filter.
    pub filter_editing: bool,
    /// Hide reviewed sessions and athletes with nothing to review.
    pub only_unreviewed: bool,
    /// Roster cursor.
    pub cursor: RosterCursor,
    /// Unreviewed sessions per athlete.
    pub counts: BTreeMap<String, usize>,
    /// Session rows per athlete, newest first; sessions not yet in the journal last.
    pub rows: HashMap<String, Vec<SessionRow>>,
    /// The daily queue (unreviewed sessions, oldest first).
    pub queue: Vec<QueueEntry>,
    /// Reviews known (cache or fresh analysis), by session id.
    pub reviews: HashMap<String, Review>,
    /// The session under review.
    pub open: Option<OpenSession>,
    /// The popup.
    pub modal: Option<Modal>,
    /// Start-up ingestion progress.
    pub progress: Progress,
    /// Files that could not be read.
    pub problems: Vec<String>,
    /// The coach's voice for feedback drafts (`[feedback]` in `config.toml`).
    pub feedback_style: crate::export::feedback::FeedbackStyle,
    /// Problems in `config.toml` the coach should see (the `[feedback]` table), one line each.
    pub config_problems: Vec<String>,
    /// The day's messages on their way out (written, then copied).
    day_export: Option<DayExport>,
    failed: std::collections::HashSet<String>,
    /// Sessions the journal holds as unreadable with their file's stat, by id, and why: the
    /// start-up re-check knows them from that stat without reading them again.
    known_unreadable: std::collections::HashMap<String, String>,
    /// The status line message.
    pub message: Option<Message>,
    scan_generation: u64,
    open_generation: u64,
    lists_dirty: bool,
    /// When the lists were last read whole, and how many scan results had come in then
    /// (a cold scan re-reads them rarely: see [`App::refresh_due`]).
    last_refresh: (std::time::Instant, usize),
    /// Where feedback files go.
    pub feedback_dir: Option<PathBuf>,
    /// The history view's data, built when the view opens.
    pub history: Option<HistoryView>,
    /// The journal's `data_version` when last looked at (see [`App::poll_journal`]).
    journal_version: Option<i64>,
    /// Where the coach was going when asked about an unsaved feedback edit (the question is
    /// the `Modal::Message` titled [`LEAVE_TITLE`]).
    pub pending_leave: Option<Leave>,
    /// Sessions marked seen without a grade (counted apart from the queue).
    pub seen_count: usize,
    /// The session after the open one in the queue, read ahead (at most one is kept):
    /// `(id asked for, the analysed session once it came back)`.
    prefetch: Option<(String, Option<Box<Analysed>>)>,
    /// Sessions other coaches are reviewing now: session id to their names (as stored;
    /// drawn through `printable`).
    pub reviewing: BTreeMap<String, Vec<String>>,
    /// The session this workstation last marked as reviewed here, and when.
    marked: Option<(String, DateTime<Utc>)>,
    /// When the other coaches' marks were last read.
    reviewing_read: Option<DateTime<Utc>>,
}

/// The day's messages between the key press and the clipboard.
#[derive(Debug, Clone)]
struct DayExport {
    day: NaiveDate,
    text: String,
    /// The sessions of each message, in order.
    messages: Vec<Vec<String>>,
    /// Sessions of that day not reviewed yet (left out).
    unreviewed: usize,
    /// Where the file was written.
    path: Option<PathBuf>,
}

/// The history view's state lives beside its pane.
pub use super::panes::history_window::{HistoryView, HistoryWindow};

/// During a scan, lists marked stale are read whole at most this often.
pub const REFRESH_EVERY: std::time::Duration = std::time::Duration::from_secs(1);

/// During a scan, lists marked stale are read whole after at least this many results.
pub const REFRESH_RESULTS: usize = 64;

fn now() -> DateTime<Utc> {
    Utc::now()
}

impl App {
    /// A workstation on an opened roster and journal.
    pub fn new(roster: Roster, journal: Journal, options: Options) -> App {
        let athletes = roster.athletes.iter().cloned().map(Arc::new).collect();
        let mut app = App {
            journal,
            athletes,
            keymap: options.keymap,
            theme: options.theme,
            size: (80, 24),
            focus: Focus::Roster,
            view: View::Review,
            show_roster: true,
            filter: String::new(),
            filter_editing: false,
            only_unreviewed: false,
            cursor: RosterCursor {
                athlete: roster.athletes.first().map(|a| a.id.clone()),
                session: None,
            },
            roster,
            counts: BTreeMap::new(),
            rows: HashMap::new(),
            queue: Vec::new(),
            reviews: HashMap::new(),
            open: None,
            modal: None,
            progress: Progress::default(),
            problems: Vec::new(),
            feedback_style: Default::default(),
            config_problems: Vec::new(),
            day_export: None,
            failed: Default::default(),
            known_unreadable: Default::default(),
            message: None,
            scan_generation: 0,
            open_generation: 0,
            lists_dirty: false,
            last_refresh: (std::time::Instant::now(), 0),
            feedback_dir: options.feedback_dir,
            history: None,
            journal_version: None,
            pending_leave: None,
            seen_count: 0,
            prefetch: None,
            reviewing: BTreeMap::new(),
            marked: None,
            reviewing_read: None,
        };
        app.problems = app
            .roster
            .problems()
            .iter()
            .map(|p| p.to_string())
            .collect();
        app.refresh_lists();
        app.journal_version = app.journal.data_version().ok();
        app.read_reviewing(now());
        app
    }

    // ----- "reviewing now" marks -----

    /// Re-read which sessions other coaches are reviewing now; `true` when it changed.
    fn read_reviewing(&mut self, at: DateTime<Utc>) -> bool {
        self.reviewing_read = Some(at);
        // Advisory: a journal that cannot say shows no marks.
        let now_reviewing = self.journal.reviewing_by_others(at).unwrap_or_default();
        let changed = now_reviewing != self.reviewing;
        self.reviewing = now_reviewing;
        changed
    }

    /// Mark the open session as reviewed here (when it is not marked yet, or the mark is
    /// due for renewal), and re-read the other coaches' marks when due. Never fatal: a
    /// mark that cannot be written is said on the status line (when it is free) and tried
    /// again at the next renewal. `true` when the other coaches' marks changed.
    pub fn keep_reviewing(&mut self, at: DateTime<Utc>) -> bool {
        if let Some(id) = self.open.as_ref().map(|o| o.session_id.clone()) {
            let due = match &self.marked {
                Some((marked, when)) => *marked != id || at - *when >= REVIEWING_RENEW,
                None => true,
            };
            if due {
                self.marked = Some((id.clone(), at));
                if let Err(e) = self.journal.mark_reviewing(&id, at) {
                    if self.message.is_none() {
                        self.say(
                            Tone::Info,
                            format!(
                                "other coaches cannot see that you have this session open ({})",
                                short_error(&e)
                            ),
                        );
                    }
                }
            }
        }
        let read_due = self
            .reviewing_read
            .is_none_or(|when| at - when >= REVIEWING_RENEW);
        read_due && self.read_reviewing(at)
    }

    /// The workstation is closing: drop this coach's "reviewing now" mark (it would expire
    /// by itself; a failure changes nothing).
    pub fn stop_reviewing(&mut self) {
        if self.marked.take().is_some() {
            let _ = self.journal.clear_reviewing();
        }
    }

    /// The coach this workstation reads and writes as, printable (`None` for the single
    /// coach of a journal without a staff).
    pub fn coach_name(&self) -> Option<String> {
        let c = self.journal.coach();
        (!c.is_empty()).then(|| crate::roster::printable(c))
    }

    /// Whether another process (a `grade` command, a second workstation) or a worker wrote
    /// to the journal since the last look; if so the lists and the open session's grades
    /// are re-read. The event loop calls this when it is idle. `true` when something was
    /// re-read (the screen needs a redraw).
    pub fn poll_journal(&mut self) -> bool {
        self.poll_journal_at(now())
    }

    /// [`App::poll_journal`] at a given time: also renews the open session's "reviewing
    /// now" mark and re-reads the other coaches' marks when due (see
    /// [`App::keep_reviewing`]).
    pub fn poll_journal_at(&mut self, at: DateTime<Utc>) -> bool {
        let marks = self.keep_reviewing(at);
        let Ok(v) = self.journal.data_version() else {
            return marks;
        };
        if self.journal_version == Some(v) {
            return marks;
        }
        self.read_reviewing(at);
        self.journal_version = Some(v);
        self.refresh_lists();
        self.reload_grades();
        // Grading completed and the notes revealed elsewhere: show them here too.
        if self
            .open
            .as_ref()
            .is_some_and(|o| o.revealed() && o.note.is_none())
        {
            self.load_revealed();
        }
        self.reload_feedback();
        self.settle_verdict();
        true
    }

    /// After another process wrote the journal: the open session's feedback follows the
    /// journal (text saved elsewhere, or a draft rebuilt from grades revised elsewhere),
    /// unless the coach is editing it or has unsaved changes here.
    fn reload_feedback(&mut self) {
        let Some(o) = self.open.as_ref() else { return };
        let Some(ed) = o.feedback.as_ref() else {
            return;
        };
        if ed.dirty || ed.editing || o.note.is_none() {
            return;
        }
        let id = o.session_id.clone();
        let current = ed.text();
        let note = o.note.clone().flatten();
        let Ok(saved) = self.journal.feedback(&id) else {
            return;
        };
        let base = saved.as_ref().map(|f| f.id);
        if let Some(o) = self.open.as_mut() {
            o.feedback_base = base;
        }
        let saved = saved.map(|f| f.body);
        let was_saved = saved.is_some();
        let text = match saved {
            Some(body) => body,
            None => self.draft_text(note.as_deref()),
        };
        let ed = TextEditor::new(&text);
        if ed.text() != current {
            if let Some(o) = self.open.as_mut() {
                let mut ed = ed;
                ed.saved = was_saved;
                o.feedback = Some(ed);
            }
        }
    }

    /// Whether the start-up scan has begun (before it, the session counts are not known).
    pub fn scan_started(&self) -> bool {
        self.scan_generation > 0
    }

    /// Start the background ingestion of every session: jobs for the event loop.
    pub fn start_scan(&mut self) -> Vec<Effect> {
        self.scan_generation += 1;
        let generation = self.scan_generation;
        // One query over the journal's columns says which sessions hold a summary current
        // for their content, profile and plans: no summary is read for unchanged files.
        let known = match self.journal.scan_rows(ANALYSIS_VERSION) {
            Ok(rows) => rows,
            Err(e) => {
                self.say(Tone::Warn, short_error(&e));
                Default::default()
            }
        };
        let mut out = Vec::new();
        self.known_unreadable.clear();
        for athlete in &self.athletes {
            for act in &athlete.activities {
                let id = athlete.session_id(act);
                // A summary made under another profile or other plans is stale.
                let (cached_hash, cached_stat) = match known.get(&id) {
                    Some(row)
                        if row.warm.summary_current
                            && row.warm.summary_inputs.as_deref()
                                == Some(athlete.inputs_digest.as_str()) =>
                    {
                        (row.content_hash.clone(), row.warm.stat.clone())
                    }
                    // Held as unreadable with its stat: the same bytes fail the same way.
                    Some(row) if row.warm.stat.is_some() => match &row.unreadable {
                        Some(why) => {
                            self.known_unreadable.insert(id.clone(), why.clone());
                            (row.content_hash.clone(), row.warm.stat.clone())
                        }
                        None => (None, None),
                    },
                    _ => (None, None),
                };
                out.push(Effect::Submit {
                    job: Job {
                        generation,
                        kind: JobKind::Scan,
                        athlete: Arc::clone(athlete),
                        activity: act.clone(),
                        cached_hash,
                        cached_stat,
                    },
                    urgent: false,
                });
            }
        }
        self.progress = Progress {
            total: out.len(),
            done: 0,
            failed: 0,
        };
        out
    }

    /// Background work still running (the scan, the open session's load, the read-ahead
    /// of the next one: the loop looks for their results every few milliseconds, so a
    /// read-ahead is in memory before the key that wants it).
    pub fn busy(&self) -> bool {
        self.progress.done < self.progress.total
            || self
                .open
                .as_ref()
                .is_some_and(|o| o.analysed.is_none() && o.load_error.is_none())
            || self.prefetch.as_ref().is_some_and(|(_, a)| a.is_none())
    }

    fn say(&mut self, tone: Tone, text: impl Into<String>) {
        self.message = Some(Message {
            text: text.into(),
            tone,
        });
    }

    /// The athlete at an index.
    pub fn athlete(&self, idx: usize) -> Option<&Athlete> {
        self.roster.athletes.get(idx)
    }

    fn athlete_index(&self, id: &str) -> Option<usize> {
        self.roster.athletes.iter().position(|a| a.id == id)
    }

    // ----- lists -----

    /// Re-read the session lists and counts from the journal.
    pub fn refresh_lists(&mut self) {
        self.lists_dirty = false;
        self.last_refresh = (std::time::Instant::now(), self.progress.done);
        let all = match self.journal.sessions(None) {
            Ok(v) => v,
            Err(e) => {
                // The lists stay as last read (a journal server gone for a moment must not
                // empty the queue); the next change or key tries again.
                self.say(Tone::Warn, e.to_string());
                return;
            }
        };
        // The queue, the counts and the seen sessions from the one read (the journal's
        // `unreviewed`, `unreviewed_counts` and `seen_sessions` each read every session).
        self.queue = all
            .iter()
            .rev()
            .filter(|e| e.stage.is_unreviewed())
            .cloned()
            .collect();
        // A coach of a staff works through their own athletes first, as
        // `Journal::unreviewed` lists them (kept oldest first when that cannot be read).
        let _ = self.journal.own_athletes_first(&mut self.queue);
        self.counts = BTreeMap::new();
        for e in &self.queue {
            *self.counts.entry(e.athlete.clone()).or_insert(0) += 1;
        }
        self.seen_count = all.iter().filter(|e| e.stage == ReviewStage::Seen).count();
        let mut rows: HashMap<String, Vec<SessionRow>> = HashMap::new();
        let mut known = std::collections::HashSet::new();
        for e in all {
            known.insert(e.session_id.clone());
            rows.entry(e.athlete.clone()).or_default().push(SessionRow {
                failed: self.failed.contains(&e.session_id),
                session_id: e.session_id,
                start: Some(e.start),
                stage: Some(e.stage),
            });
        }
        for a in &self.roster.athletes {
            let mut pending: Vec<SessionRow> = a
                .activities
                .iter()
                .map(|x| a.session_id(x))
                .filter(|id| !known.contains(id))
                .map(|id| SessionRow {
                    failed: self.failed.contains(&id),
                    session_id: id,
                    start: None,
                    stage: None,
                })
                .collect();
            pending.sort_by(|x, y| y.session_id.cmp(&x.session_id));
            let list = rows.entry(a.id.clone()).or_default();
            // Sessions of files no longer in the roster are not shown.
            list.retain(|r| {
                r.session_id
                    .split_once('/')
                    .is_some_and(|(_, stem)| a.activities.iter().any(|x| x.stem == stem))
            });
            list.extend(pending);
        }
        self.rows = rows;
        if let Some(a) = self.cursor.athlete.clone() {
            self.ensure_reviews(&a);
        }
        if self.view == View::History {
            self.build_history();
        }
    }

    /// Whether lists marked stale should be read whole now: at once when no background
    /// work runs; during a scan at most once per [`REFRESH_EVERY`] and once per tenth of the
    /// scan (at least [`REFRESH_RESULTS`] results), so a scan's list work grows with the
    /// roster, not its square.
    fn refresh_due(&self) -> bool {
        if !self.busy() {
            return true;
        }
        let (at, done) = self.last_refresh;
        let results = self.progress.done.saturating_sub(done);
        at.elapsed() >= REFRESH_EVERY && results >= REFRESH_RESULTS.max(self.progress.total / 10)
    }

    /// One session changed in the journal (graded, revealed, marked seen, analysed, found
    /// unreadable): update its row, its athlete's count, the queue and the seen count from
    /// the journal's record of that session alone. `start` is the session's start when
    /// it is new to the lists. When the journal cannot say, the lists are marked stale.
    fn apply_session(&mut self, id: &str, start: Option<DateTime<Utc>>) {
        let Some((athlete, path)) = self
            .roster
            .find_session(id)
            .map(|(a, act)| (a.id.clone(), act.path.clone()))
        else {
            return;
        };
        let state = match self.journal.review_state(id) {
            Ok(s) => s,
            Err(_) => {
                self.lists_dirty = true;
                return;
            }
        };
        let failed = self.failed.contains(id);
        let rows = self.rows.entry(athlete.clone()).or_default();
        let old = rows
            .iter()
            .position(|r| r.session_id == id)
            .map(|i| rows.remove(i));
        let old_stage = old.as_ref().and_then(|r| r.stage);
        let old_start = old.as_ref().and_then(|r| r.start);
        let Some(start) = start.or(old_start) else {
            rows.extend(old);
            self.lists_dirty = true;
            return;
        };
        // Newest first; sessions the journal does not know yet stay last.
        let at = rows
            .iter()
            .position(|r| {
                r.start
                    .is_none_or(|s| (s, r.session_id.as_str()) < (start, id))
            })
            .unwrap_or(rows.len());
        rows.insert(
            at,
            SessionRow {
                session_id: id.to_string(),
                start: Some(start),
                stage: Some(state.stage),
                failed,
            },
        );
        let was = old_stage.is_some_and(ReviewStage::is_unreviewed);
        let is = state.stage.is_unreviewed();
        if was != is {
            let n = self.counts.get(&athlete).copied().unwrap_or(0);
            let n = if is { n + 1 } else { n.saturating_sub(1) };
            if n == 0 {
                self.counts.remove(&athlete);
            } else {
                self.counts.insert(athlete.clone(), n);
            }
        }
        let found = old_start
            .map(|s| {
                self.queue
                    .partition_point(|e| (e.start, e.session_id.as_str()) < (s, id))
            })
            .filter(|&i| self.queue.get(i).is_some_and(|e| e.session_id == id))
            .or_else(|| self.queue.iter().position(|e| e.session_id == id));
        if let Some(i) = found {
            self.queue.remove(i);
        }
        if is {
            let entry = QueueEntry {
                session_id: id.to_string(),
                athlete: athlete.clone(),
                start,
                file_path: path,
                stage: state.stage,
                content_changed: state.content_changed,
                file_unreadable: state.file_unreadable.clone(),
            };
            let at = self
                .queue
                .partition_point(|e| (e.start, e.session_id.as_str()) < (start, id));
            self.queue.insert(at, entry);
        }
        let seen_before = old_stage == Some(ReviewStage::Seen);
        let seen_now = state.stage == ReviewStage::Seen;
        if seen_now && !seen_before {
            self.seen_count += 1;
        } else if seen_before && !seen_now {
            self.seen_count = self.seen_count.saturating_sub(1);
        }
        if self.view == View::History && self.cursor.athlete.as_deref() == Some(&athlete) {
            self.build_history();
        }
    }

    /// Build the history of the athlete under the cursor from the cached reviews. The window
    /// ends today, or on the latest session when the files are dated ahead of the clock.
    pub fn build_history(&mut self) {
        let Some(id) = self.cursor.athlete.clone() else {
            self.history = None;
            return;
        };
        let Some(a) = self.roster.athlete(&id) else {
            self.history = None;
            return;
        };
        let rows = self.rows.get(&id).map(Vec::as_slice).unwrap_or(&[]);
        let sums: Vec<SessionSummary> = rows
            .iter()
            .filter_map(|r| {
                let rv = self.reviews.get(&r.session_id)?;
                SessionSummary::from_review(&r.session_id, rv)
            })
            .collect();
        let latest = sums.iter().map(SessionSummary::date).max();
        let today = now().date_naive().max(latest.unwrap_or(NaiveDate::MIN));
        let mut view = HistoryView::new(id.clone(), sums, a.profile.clone(), today);
        if let Some(old) = self.history.as_ref().filter(|h| h.athlete == id) {
            view.keep_window(&old.window);
        }
        self.history = Some(view);
    }

    /// Pan (`pan` weeks) or zoom the history window; at the edge, say why nothing moved.
    fn move_history(&mut self, pan: i64, zoom: Option<bool>) {
        let Some(h) = self.history.as_mut() else {
            return;
        };
        let moved = match zoom {
            Some(in_) => h.zoom(in_),
            None => h.pan(pan),
        };
        if moved {
            return;
        }
        let w = h.window;
        let text = match (zoom, w.first) {
            (Some(true), _) => format!("the history shows {} weeks at the narrowest", w.weeks),
            (Some(false), _) => "the history shows every week of data".to_string(),
            (None, _) if pan > 0 => "the history ends today".to_string(),
            (None, Some(f)) => format!("the history starts here: first data in the week of {f}"),
            (None, None) => "no data yet".to_string(),
        };
        self.say(Tone::Info, text);
    }

    /// Work out whether the open session's day took the athlete's acute/chronic ratio to
    /// the caution band, from the reviews the workstation holds for that athlete.
    fn update_load_spike(&mut self) {
        let Some(o) = self.open.as_ref() else { return };
        let Some(athlete) = self.athlete(o.athlete).map(|a| a.id.clone()) else {
            return;
        };
        let rows = self.rows.get(&athlete).map(Vec::as_slice).unwrap_or(&[]);
        let mut sums: Vec<SessionSummary> = rows
            .iter()
            .filter(|r| r.session_id != o.session_id)
            .filter_map(|r| {
                let rv = self.reviews.get(&r.session_id)?;
                SessionSummary::from_review(&r.session_id, rv)
            })
            .collect();
        sums.extend(
            o.review
                .as_ref()
                .and_then(|rv| SessionSummary::from_review(&o.session_id, rv)),
        );
        let spike = crate::analysis::history::load_spike_finding(&sums, &o.session_id);
        if let Some(o) = self.open.as_mut() {
            o.load_spike = spike;
        }
    }

    /// Load the cached reviews of an athlete's sessions (for titles and totals).
    pub fn ensure_reviews(&mut self, athlete: &str) {
        let ids: Vec<String> = self
            .rows
            .get(athlete)
            .map(|rs| {
                rs.iter()
                    .filter(|r| r.start.is_some() && !self.reviews.contains_key(&r.session_id))
                    .map(|r| r.session_id.clone())
                    .collect()
            })
            .unwrap_or_default();
        for id in ids {
            if let Ok(Some(json)) = self.journal.cached_summary(&id, ANALYSIS_VERSION) {
                if let Ok(r) = serde_json::from_str::<Review>(&json) {
                    self.reviews.insert(id, r);
                }
            }
        }
    }

    fn athlete_visible(&self, a: &Athlete) -> bool {
        if self.only_unreviewed && self.counts.get(&a.id).copied().unwrap_or(0) == 0 {
            return false;
        }
        if self.filter.is_empty() {
            return true;
        }
        let f = self.filter.to_lowercase();
        a.profile.name.to_lowercase().contains(&f) || a.id.contains(&f)
    }

    /// The rows of the roster pane: visible athletes, the cursor's athlete expanded.
    pub fn roster_rows(&self) -> Vec<RosterRow> {
        let mut out = Vec::new();
        for (i, a) in self.roster.athletes.iter().enumerate() {
            if !self.athlete_visible(a) {
                continue;
            }
            out.push(RosterRow::Athlete(i));
            if self.cursor.athlete.as_deref() == Some(a.id.as_str()) {
                for r in self.rows.get(&a.id).map(Vec::as_slice).unwrap_or(&[]) {
                    let reviewed = r.stage.is_some_and(|s| !s.is_unreviewed());
                    if self.only_unreviewed && reviewed {
                        continue;
                    }
                    out.push(RosterRow::Session(r.clone()));
                }
            }
        }
        out
    }

    /// Index of the cursor in [`App::roster_rows`].
    pub fn cursor_index(&self, rows: &[RosterRow]) -> Option<usize> {
        rows.iter().position(|r| match r {
            RosterRow::Athlete(i) => {
                self.cursor.session.is_none()
                    && self.athlete(*i).map(|a| a.id.as_str()) == self.cursor.athlete.as_deref()
            }
            RosterRow::Session(s) => self.cursor.session.as_deref() == Some(&s.session_id),
        })
    }

    fn set_cursor_row(&mut self, row: &RosterRow) {
        match row {
            RosterRow::Athlete(i) => {
                let id = self.athlete(*i).map(|a| a.id.clone());
                self.cursor = RosterCursor {
                    athlete: id,
                    session: None,
                };
            }
            RosterRow::Session(s) => {
                self.cursor.session = Some(s.session_id.clone());
            }
        }
        if let Some(a) = self.cursor.athlete.clone() {
            self.ensure_reviews(&a);
        }
    }

    fn move_roster(&mut self, delta: i32) {
        let rows = self.roster_rows();
        if rows.is_empty() {
            return;
        }
        let idx = self.cursor_index(&rows).unwrap_or(0) as i64 + i64::from(delta);
        let idx = idx.clamp(0, rows.len() as i64 - 1) as usize;
        if let Some(row) = rows.get(idx).cloned() {
            self.set_cursor_row(&row);
        }
    }

    /// Put the cursor on the first visible athlete when the current one is hidden.
    fn fix_cursor(&mut self) {
        let rows = self.roster_rows();
        if self.cursor_index(&rows).is_none() {
            let athlete_still = rows.iter().find(|r| match r {
                RosterRow::Athlete(i) => {
                    self.athlete(*i).map(|a| a.id.as_str()) == self.cursor.athlete.as_deref()
                }
                _ => false,
            });
            match athlete_still.or_else(|| rows.first()).cloned() {
                Some(r) => {
                    self.cursor.session = None;
                    self.set_cursor_row(&r);
                }
                None => self.cursor = RosterCursor::default(),
            }
        }
    }

    // ----- events -----

    /// Apply one event; returns what the event loop must do.
    pub fn handle(&mut self, event: AppEvent) -> Vec<Effect> {
        let tick = matches!(event, AppEvent::Tick);
        let out = match event {
            AppEvent::Input(Event::Key(k)) if k.kind != KeyEventKind::Release => self.on_key(k),
            AppEvent::Input(Event::Resize(w, h)) => {
                self.size = (w, h);
                Vec::new()
            }
            AppEvent::Input(Event::Paste(text)) => {
                self.on_paste(&text);
                Vec::new()
            }
            AppEvent::Input(_) => Vec::new(),
            AppEvent::Worker(done) => {
                self.on_done(done);
                Vec::new()
            }
            AppEvent::Tick => Vec::new(),
            AppEvent::EditorDone(r) => {
                self.on_editor(r);
                Vec::new()
            }
            AppEvent::FileWritten(r) => {
                self.on_written(r);
                Vec::new()
            }
            AppEvent::DayWritten(r) => self.on_day_written(r),
            AppEvent::Copied(how) => {
                if self.day_export.is_some() {
                    self.on_day_copied(&how);
                } else {
                    // `how` says what was done ("sent to the terminal (OSC 52)", ...).
                    self.say(Tone::Done, format!("feedback {how}"));
                }
                Vec::new()
            }
        };
        let refresh = self.lists_dirty && self.refresh_due();
        if refresh {
            self.refresh_lists();
        }
        // A tick alone changes nothing the verdict pane shows (the loop ticks often while
        // results are awaited).
        if !tick || refresh {
            self.settle_verdict();
        }
        out
    }

    /// The verdict pane's document extent at the current terminal size, and the row of
    /// the athlete's notes (`None` when the pane is not shown).
    fn verdict_extent(&self) -> Option<(super::panes::verdict_state::Extent, Option<usize>)> {
        let area = ratatui::layout::Rect::new(0, 0, self.size.0, self.size.1);
        let rect = super::ui::areas(area, self).verdict?;
        let (w, h) = super::panes::verdict::inner_size(rect);
        let doc = super::panes::verdict::document(self, w);
        Some((doc.extent(h), doc.notes))
    }

    /// Keep the verdict pane's scroll inside its document and its working row in view.
    fn settle_verdict(&mut self) {
        if self.open.is_none() {
            return;
        }
        if let Some((e, notes)) = self.verdict_extent() {
            if let Some(o) = self.open.as_mut() {
                let revealed = o.revealed();
                o.verdict.settle(e, revealed, notes);
            }
        }
    }

    fn on_paste(&mut self, text: &str) {
        if self.filter_editing {
            self.filter.push_str(text.lines().next().unwrap_or(""));
            self.fix_cursor();
            return;
        }
        if let Some(ed) = self
            .open
            .as_mut()
            .and_then(|o| o.feedback.as_mut())
            .filter(|e| e.editing)
        {
            for c in text.chars() {
                let code = if c == '\n' {
                    KeyCode::Enter
                } else {
                    KeyCode::Char(c)
                };
                ed.key(&KeyEvent::new(code, KeyModifiers::NONE));
            }
        }
    }

    fn on_key(&mut self, k: KeyEvent) -> Vec<Effect> {
        let key = Key::from_event(&k);
        let action = self.keymap.action(key);
        if let Some(modal) = self.modal.clone() {
            return self.on_modal_key(&modal, key, action);
        }
        if self.filter_editing {
            match k.code {
                KeyCode::Enter => self.filter_editing = false,
                KeyCode::Esc => {
                    self.filter_editing = false;
                    self.filter.clear();
                }
                KeyCode::Backspace => {
                    self.filter.pop();
                }
                KeyCode::Char(c) if !k.modifiers.contains(KeyModifiers::CONTROL) => {
                    self.filter.push(c)
                }
                _ => {}
            }
            self.fix_cursor();
            return Vec::new();
        }
        let editing = self
            .open
            .as_ref()
            .and_then(|o| o.feedback.as_ref())
            .is_some_and(|e| e.editing);
        if editing {
            match action {
                Some(Action::SaveFeedback) => self.save_feedback(),
                Some(Action::Cancel) => {
                    if let Some(ed) = self.open.as_mut().and_then(|o| o.feedback.as_mut()) {
                        ed.editing = false;
                        if ed.dirty {
                            self.say(Tone::Info, "feedback edited, not saved yet (C-s saves)");
                        }
                    }
                }
                _ => {
                    if let Some(o) = self.open.as_mut() {
                        if let Some(ed) = o.feedback.as_mut() {
                            ed.key(&k);
                        }
                        o.verdict.follow();
                    }
                }
            }
            return Vec::new();
        }
        match action {
            Some(a) => self.on_action(a),
            None => Vec::new(),
        }
    }

    fn on_modal_key(&mut self, modal: &Modal, key: Key, action: Option<Action>) -> Vec<Effect> {
        if self.pending_leave.is_some() {
            return self.on_leave_key(key);
        }
        match modal {
            Modal::Conflict(c) => return self.on_conflict_key(c, key),
            Modal::ConfirmQuit => match key.code {
                KeyCode::Char('y') | KeyCode::Char('Y') => return vec![Effect::Quit],
                KeyCode::Char('n') | KeyCode::Char('N') | KeyCode::Esc => self.modal = None,
                _ => {}
            },
            Modal::Help => {
                if matches!(action, Some(Action::Help | Action::Cancel | Action::Quit)) {
                    self.modal = None;
                }
            }
            Modal::Notes(_) | Modal::Message { .. } => {
                if matches!(
                    action,
                    Some(Action::Cancel | Action::Open | Action::RevealNotes | Action::Quit)
                ) {
                    self.modal = None;
                }
            }
        }
        Vec::new()
    }

    /// The workstation is being ended from outside (a signal, a terminal that went away):
    /// an unsaved feedback edit is saved to the journal as a new version, so nothing typed
    /// is lost. The journal keeps every version, so this never overwrites a saved text.
    pub fn save_before_exit(&mut self) {
        if self.unsaved() {
            self.save_feedback();
        }
        // A version saved elsewhere meanwhile: nobody is here to choose, so both texts are
        // saved together (marked), over theirs; neither is lost or silently replaced.
        if let Some(Modal::Conflict(c)) = self.modal.clone() {
            let mine = self.feedback_text().unwrap_or_default();
            if let Some(o) = self.open.as_mut().filter(|o| o.session_id == c.session_id) {
                o.feedback = Some(TextEditor::new(&both_texts(&mine, &c.theirs)));
                o.feedback_base = Some(c.theirs.id);
                self.modal = None;
                let text = self.feedback_text().unwrap_or_default();
                if let Ok(new) =
                    self.journal
                        .save_feedback_over(&c.session_id, &text, Some(c.theirs.id), now())
                {
                    self.saved_as(new);
                }
            }
        }
    }

    /// Whether any feedback edit is unsaved.
    pub fn unsaved(&self) -> bool {
        self.open
            .as_ref()
            .and_then(|o| o.feedback.as_ref())
            .is_some_and(|e| e.dirty)
    }

    fn on_action(&mut self, action: Action) -> Vec<Effect> {
        match action {
            Action::Quit => {
                if self.unsaved() {
                    self.modal = Some(Modal::ConfirmQuit);
                } else {
                    return vec![Effect::Quit];
                }
            }
            Action::Help => self.modal = Some(Modal::Help),
            Action::Cancel => {
                if let Some(o) = self.open.as_mut().filter(|o| o.pending_ruler.is_some()) {
                    o.pending_ruler = None;
                    self.say(Tone::Info, "ruler cancelled");
                } else if self.view == View::History {
                    self.view = View::Review;
                } else {
                    self.message = None;
                }
            }
            Action::FocusNext => self.cycle_focus(1),
            Action::FocusPrev => self.cycle_focus(-1),
            Action::Up | Action::Down | Action::Left | Action::Right | Action::Open => {
                return self.on_move(action)
            }
            Action::PageUp | Action::PageDown | Action::ScrollTop | Action::ScrollEnd => {
                if self.focus == Focus::Verdict {
                    let e = self.verdict_extent().map(|(e, _)| e);
                    if let Some(o) = self.open.as_mut() {
                        super::panes::verdict_state::on_action(o, action, e);
                    }
                }
            }
            Action::Filter => {
                self.show_roster = true;
                self.focus = Focus::Roster;
                self.filter_editing = true;
            }
            Action::ToggleUnreviewed => {
                self.only_unreviewed = !self.only_unreviewed;
                self.fix_cursor();
                let what = if self.only_unreviewed {
                    "showing only unreviewed sessions"
                } else {
                    "showing all sessions"
                };
                self.say(Tone::Info, what);
            }
            Action::NextUnreviewed => return self.queue_step(true),
            Action::PrevUnreviewed => return self.queue_step(false),
            Action::ToggleRoster => {
                self.show_roster = !self.show_roster;
                if !self.show_roster && self.focus == Focus::Roster && self.open.is_some() {
                    self.focus = Focus::Verdict;
                }
                if self.show_roster {
                    self.focus = Focus::Roster;
                }
            }
            Action::Score1 | Action::Score2 | Action::Score3 | Action::Score4 | Action::Score5 => {
                if let Some(s) = action.score() {
                    self.score(s);
                }
            }
            Action::CycleVerdict => self.cycle_verdict(),
            Action::RevealNotes => self.reveal(),
            Action::ToggleSeen => self.toggle_seen(),
            Action::ToggleElevation => {
                if let Some(c) = self.open.as_mut().and_then(|o| o.chart.as_mut()) {
                    c.elevation = !c.elevation;
                }
            }
            Action::Ruler => self.ruler(),
            Action::ClearRulers => self.clear_rulers(),
            Action::PanLeft | Action::PanRight if self.view == View::History => {
                // A half window at a time (←/→ move a week).
                let half = self
                    .history
                    .as_ref()
                    .map_or(1, |h| i64::from(h.window.shown_weeks().div_ceil(2)));
                self.move_history(
                    if action == Action::PanLeft {
                        -half
                    } else {
                        half
                    },
                    None,
                );
            }
            Action::ZoomIn | Action::ZoomOut if self.view == View::History => {
                self.move_history(0, Some(action == Action::ZoomIn));
            }
            Action::ZoomIn | Action::ZoomOut | Action::PanLeft | Action::PanRight => {
                if let Some(c) = self.open.as_mut().and_then(|o| o.chart.as_mut()) {
                    match action {
                        Action::ZoomIn => c.zoom(0.5),
                        Action::ZoomOut => c.zoom(2.0),
                        Action::PanLeft => c.pan(-0.5),
                        _ => c.pan(0.5),
                    }
                }
            }
            Action::EditFeedback => {
                if self.feedback_ready() {
                    if let Some(o) = self.open.as_mut() {
                        if let Some(ed) = o.feedback.as_mut() {
                            ed.editing = true;
                        }
                        o.verdict.follow();
                    }
                    self.focus = Focus::Verdict;
                    self.say(Tone::Info, "editing feedback: Esc stops, C-s saves");
                }
            }
            Action::ExternalEditor => {
                if self.feedback_ready() {
                    if let Some(text) = self.feedback_text() {
                        return vec![Effect::OpenEditor(text)];
                    }
                }
            }
            Action::SaveFeedback => {
                if self.feedback_ready() {
                    self.save_feedback();
                }
            }
            Action::CopyFeedback => {
                if self.feedback_ready() {
                    return self.copy_feedback();
                }
            }
            Action::ExportFeedback => {
                if self.feedback_ready() {
                    return self.export_feedback();
                }
            }
            Action::ExportDay => return self.export_day(),
            Action::ContextView | Action::EarlierOverlay => {
                super::panes::context_view::on_action(self, action);
            }
            Action::History => {
                if self.view == View::Review && self.ask_before_leaving(Leave::History) {
                    return Vec::new();
                }
                self.toggle_history();
            }
        }
        Vec::new()
    }

    fn toggle_history(&mut self) {
        self.view = match self.view {
            View::History => View::Review,
            View::Review => View::History,
        };
        if let Some(a) = self.cursor.athlete.clone() {
            self.ensure_reviews(&a);
        }
        if self.view == View::History {
            self.build_history();
        }
    }

    // ----- leaving a session with an unsaved feedback edit -----

    /// When the open session's feedback edit is unsaved, ask before going `to` (the same
    /// question as quitting, with a third answer: save and go on) and return `true`: the
    /// action waits for the answer. `false`: nothing to ask, go on.
    fn ask_before_leaving(&mut self, to: Leave) -> bool {
        if !self.unsaved() {
            return false;
        }
        let save = self.keymap.first(Action::SaveFeedback);
        self.pending_leave = Some(to);
        self.modal = Some(Modal::Message {
            title: LEAVE_TITLE.to_string(),
            text: format!(
                "The feedback edit is not saved.\n\
                 s = save it and go on ({save} saves too)\n\
                 y = go on without saving (the edit is dropped)\n\
                 n = stay"
            ),
        });
        true
    }

    /// The answer to [`App::ask_before_leaving`]: `s` saves and goes on, `y` drops the edit
    /// and goes on, `n` or Esc stays; other keys wait.
    fn on_leave_key(&mut self, key: Key) -> Vec<Effect> {
        let save = self.keymap.action(key) == Some(Action::SaveFeedback);
        match key.code {
            KeyCode::Char('s') | KeyCode::Char('S') => self.leave_saving(),
            _ if save => self.leave_saving(),
            KeyCode::Char('y') | KeyCode::Char('Y') => {
                if let Some(o) = self.open.as_mut() {
                    o.feedback = None;
                }
                self.modal = None;
                let to = self.pending_leave.take();
                let fx = self.go(to);
                if self.message.is_none() {
                    self.say(Tone::Info, "the feedback edit was dropped");
                }
                fx
            }
            KeyCode::Char('n') | KeyCode::Char('N') | KeyCode::Esc => {
                self.pending_leave = None;
                self.modal = None;
                let save = self.keymap.first(Action::SaveFeedback);
                self.say(
                    Tone::Info,
                    format!("stayed: the feedback edit is still not saved ({save} saves)"),
                );
                Vec::new()
            }
            _ => Vec::new(),
        }
    }

    fn leave_saving(&mut self) -> Vec<Effect> {
        self.modal = None;
        self.save_feedback();
        if self.unsaved() {
            // The save was refused (its reason is on the status line): stay.
            self.pending_leave = None;
            return Vec::new();
        }
        let to = self.pending_leave.take();
        self.go(to)
    }

    fn go(&mut self, to: Option<Leave>) -> Vec<Effect> {
        match to {
            Some(Leave::Open(id)) => self.open_session(&id),
            Some(Leave::History) => {
                self.toggle_history();
                Vec::new()
            }
            None => Vec::new(),
        }
    }

    /// The panes that can take focus now, in Tab order.
    pub fn focusable(&self) -> Vec<Focus> {
        let mut v = Vec::new();
        if self.show_roster || self.open.is_none() {
            v.push(Focus::Roster);
        }
        if self.open.is_some() && self.view == View::Review {
            v.push(Focus::Chart);
            v.push(Focus::Verdict);
        }
        if v.is_empty() {
            v.push(Focus::Roster);
        }
        v
    }

    fn cycle_focus(&mut self, step: i32) {
        let panes = self.focusable();
        let i = panes.iter().position(|f| *f == self.focus).unwrap_or(0) as i32;
        let n = panes.len() as i32;
        let next = (i + step).rem_euclid(n) as usize;
        if let Some(f) = panes.get(next) {
            self.focus = *f;
        }
    }

    fn on_move(&mut self, action: Action) -> Vec<Effect> {
        if self.view == View::History && matches!(action, Action::Left | Action::Right) {
            self.move_history(if action == Action::Left { -1 } else { 1 }, None);
            return Vec::new();
        }
        let before = self.cursor.athlete.clone();
        let fx = self.on_move_inner(action);
        if self.view == View::History && self.cursor.athlete != before {
            if let Some(a) = self.cursor.athlete.clone() {
                self.ensure_reviews(&a);
            }
            self.build_history();
        }
        fx
    }

    fn on_move_inner(&mut self, action: Action) -> Vec<Effect> {
        match self.focus {
            Focus::Roster => match action {
                Action::Up => self.move_roster(-1),
                Action::Down => self.move_roster(1),
                Action::Left => {
                    self.cursor.session = None;
                }
                Action::Right | Action::Open => {
                    if let Some(id) = self.cursor.session.clone() {
                        if action == Action::Open {
                            return self.open_session(&id);
                        }
                    } else {
                        self.move_roster(1);
                        if self.cursor.session.is_none() {
                            // No sessions: stay on the athlete.
                            self.move_roster(0);
                        }
                    }
                }
                _ => {}
            },
            Focus::Chart => {
                let cols = f64::from(self.chart_columns().max(10));
                if let Some(c) = self.open.as_mut().and_then(|o| o.chart.as_mut()) {
                    let step = c.span() / cols;
                    match action {
                        Action::Left => c.move_cursor(-step),
                        Action::Right => c.move_cursor(step),
                        Action::Up => c.move_cursor(-step * 10.0),
                        Action::Down => c.move_cursor(step * 10.0),
                        _ => {}
                    }
                }
            }
            Focus::Verdict => {
                if let Some(o) = self.open.as_mut() {
                    super::panes::verdict_state::on_action(o, action, None);
                }
            }
        }
        Vec::new()
    }

    /// Columns the chart traces span (from the same layout the drawing uses).
    pub fn chart_columns(&self) -> u16 {
        super::ui::chart_plot_width(self)
    }

    // ----- opening sessions -----

    /// Open a session: show what the journal knows at once, load the series in the background.
    pub fn open_session(&mut self, session_id: &str) -> Vec<Effect> {
        let Some((aidx, act)) = self
            .roster
            .find_session(session_id)
            .and_then(|(a, x)| self.athlete_index(&a.id).map(|i| (i, x.clone())))
        else {
            self.say(Tone::Warn, format!("no session {session_id} in the roster"));
            return Vec::new();
        };
        if self.unsaved() {
            if self
                .open
                .as_ref()
                .is_some_and(|o| o.session_id == session_id)
            {
                // Already open, with the edit in it: nothing to leave.
                self.view = View::Review;
                self.focus = Focus::Verdict;
                return Vec::new();
            }
            self.ask_before_leaving(Leave::Open(session_id.to_string()));
            return Vec::new();
        }
        self.open_generation += 1;
        let generation = self.open_generation;
        let athlete_id = self.athlete(aidx).map(|a| a.id.clone());
        self.cursor = RosterCursor {
            athlete: athlete_id.clone(),
            session: Some(session_id.to_string()),
        };
        if let Some(a) = athlete_id {
            self.ensure_reviews(&a);
        }
        let review = self.reviews.get(session_id).cloned();
        let chart = review
            .as_ref()
            .map(|r| ChartView::full(r.session.duration_s));
        self.open = Some(OpenSession {
            session_id: session_id.to_string(),
            athlete: aidx,
            generation,
            review,
            analysed: None,
            load_error: None,
            state: None,
            revisions: Vec::new(),
            rulers: Vec::new(),
            pending_ruler: None,
            chart,
            selected_work: 0,
            verdict: Default::default(),
            note: None,
            feedback: None,
            feedback_base: None,
            load_spike: None,
            context: Default::default(),
        });
        self.update_load_spike();
        self.reload_grades();
        self.load_revealed();
        self.view = View::Review;
        self.focus = Focus::Verdict;
        self.message = None;
        self.say_unreadable();
        self.keep_reviewing(now());
        if let Some(names) = self.reviewing.get(session_id) {
            if self.message.is_none() {
                let names: Vec<String> =
                    names.iter().map(|n| crate::roster::printable(n)).collect();
                self.say(
                    Tone::Info,
                    format!("{} is reviewing this session now too", names.join(", ")),
                );
            }
        }
        // Read ahead when `]` led here (or to the one before): drawn from memory now, when
        // the file is as it was read.
        let ready = match self.prefetch.take() {
            Some((id, Some(a)))
                if id == session_id
                    && a.file_stat.is_some()
                    && a.file_stat == FileStat::of(&act.path) =>
            {
                Some(a)
            }
            _ => None,
        };
        let mut out = vec![Effect::DropStaleOpens(generation)];
        // Urgent jobs go first: the read-ahead is queued before the open job so the open
        // job runs first.
        out.extend(self.prefetch_next(generation));
        match ready {
            Some(a) => self.attach(a),
            None => {
                if let Some(athlete) = self.athletes.get(aidx).cloned() {
                    out.push(Effect::Submit {
                        job: Job {
                            generation,
                            kind: JobKind::Open,
                            athlete,
                            activity: act,
                            cached_hash: None,
                            cached_stat: None,
                        },
                        urgent: true,
                    });
                }
            }
        }
        out
    }

    /// The read-ahead of the session `]` would open next (the open session's successor in
    /// the queue): one job, its result kept until that session is opened or another is
    /// opened instead.
    fn prefetch_next(&mut self, generation: u64) -> Vec<Effect> {
        let open = self.open.as_ref().map(|o| o.session_id.clone());
        let Some(next) = self
            .queue_target(true)
            .filter(|id| Some(id) != open.as_ref())
        else {
            return Vec::new();
        };
        let Some((athlete, act)) = self.roster.find_session(&next).and_then(|(a, x)| {
            let i = self.athlete_index(&a.id)?;
            Some((self.athletes.get(i).cloned()?, x.clone()))
        }) else {
            return Vec::new();
        };
        self.prefetch = Some((next, None));
        vec![Effect::Submit {
            job: Job {
                generation,
                kind: JobKind::Prefetch,
                athlete,
                activity: act,
                cached_hash: None,
                cached_stat: None,
            },
            urgent: true,
        }]
    }

    /// The id of the prefetched session, once its analysis is in memory.
    pub fn prefetched(&self) -> Option<&str> {
        match &self.prefetch {
            Some((id, Some(_))) => Some(id),
            _ => None,
        }
    }

    fn queue_step(&mut self, forward: bool) -> Vec<Effect> {
        if self.lists_dirty {
            self.refresh_lists();
        }
        match self.queue_target(forward) {
            Some(id) => self.open_session(&id),
            None => {
                let text = if self.queue.is_empty() && self.roster.activities().next().is_none() {
                    "no sessions in this roster: nothing to review"
                } else if self.queue.is_empty() {
                    "the queue is empty: every session is reviewed"
                } else if forward {
                    "no later unreviewed session"
                } else {
                    "no earlier unreviewed session"
                };
                self.say(Tone::Info, text);
                Vec::new()
            }
        }
    }

    /// The session `]` (`forward`) or `[` opens: the open session's neighbour in the queue
    /// (by start when it has left the queue), else the queue's first or last.
    fn queue_target(&self, forward: bool) -> Option<String> {
        let current = self.open.as_ref().map(|o| o.session_id.clone());
        let pos = current
            .as_ref()
            .and_then(|id| self.queue.iter().position(|e| &e.session_id == id));
        let target = match (pos, &current) {
            (Some(i), _) => {
                if forward {
                    self.queue.get(i + 1)
                } else {
                    i.checked_sub(1).and_then(|j| self.queue.get(j))
                }
            }
            (None, Some(id)) => {
                let start = self
                    .rows
                    .values()
                    .flatten()
                    .find(|r| &r.session_id == id)
                    .and_then(|r| r.start);
                match start {
                    Some(s) if forward => self
                        .queue
                        .iter()
                        .find(|e| (e.start, &e.session_id) > (s, id)),
                    Some(s) => self
                        .queue
                        .iter()
                        .rev()
                        .find(|e| (e.start, &e.session_id) < (s, id)),
                    None => self.queue.first(),
                }
            }
            (None, None) => {
                if forward {
                    self.queue.first()
                } else {
                    self.queue.last()
                }
            }
        };
        target.map(|e| e.session_id.clone())
    }

    fn reload_grades(&mut self) {
        let Some(o) = self.open.as_mut() else { return };
        match self.journal.review_state(&o.session_id) {
            Ok(s) => o.state = Some(s),
            Err(JournalError::UnknownSession { .. }) => o.state = None,
            Err(e) => {
                o.state = None;
                let text = e.to_string();
                self.say(Tone::Warn, text);
                return;
            }
        }
        o.revisions = self.journal.revisions(&o.session_id).unwrap_or_default();
        o.rulers = self.journal.rulers(&o.session_id).unwrap_or_default();
    }

    /// After the reveal (now or earlier): the note and the feedback text.
    fn load_revealed(&mut self) {
        let Some(o) = self.open.as_ref() else { return };
        if !o.revealed() {
            return;
        }
        let id = o.session_id.clone();
        let embedded = o.analysed.as_ref().and_then(|a| a.session.note.clone());
        let note_file = self
            .roster
            .find_session(&id)
            .and_then(|(_, act)| act.note_file.clone());
        let note = match self.journal.reveal(&id, now()) {
            Ok(permit) => read_note(&permit, note_file.as_deref(), embedded.as_deref()),
            Err(_) => return,
        };
        let saved = self.journal.feedback(&id).ok().flatten();
        let base = saved.as_ref().map(|f| f.id);
        let saved = saved.map(|f| f.body);
        let was_saved = saved.is_some();
        let draft = saved.unwrap_or_else(|| self.draft_text(note.as_deref()));
        if let Some(o) = self.open.as_mut() {
            o.note = Some(note);
            if o.feedback.is_none() {
                let mut ed = TextEditor::new(&draft);
                ed.saved = was_saved;
                o.feedback = Some(ed);
                o.feedback_base = base;
            }
        }
    }

    /// The draft for the open session from its review, the coach's grades and the note.
    fn draft_text(&mut self, note: Option<&str>) -> String {
        // The comparison with the earlier runs, asked once per open session.
        super::panes::context_view::ensure_comparison(self);
        let Some(o) = self.open.as_ref() else {
            return String::new();
        };
        let (Some(review), Some(athlete)) = (o.review.as_ref(), self.athlete(o.athlete)) else {
            return String::new();
        };
        let earlier = match &o.context.comparison {
            Some(Ok(c)) => Some(c),
            _ => None,
        };
        let input = crate::export::feedback::DraftInput {
            review,
            profile: &athlete.profile,
            grades: o
                .state
                .as_ref()
                .map(crate::export::feedback::Grades::from_state)
                .unwrap_or_default(),
            note,
            marks: o
                .analysed
                .as_ref()
                .map(|a| {
                    o.rulers
                        .iter()
                        .map(|r| crate::analysis::ruler::fit_window(&a.session, r.from_s, r.to_s))
                        .collect()
                })
                .unwrap_or_default(),
            earlier,
        };
        crate::export::feedback::draft(&input, &self.feedback_style)
    }

    fn on_done(&mut self, done: Done) {
        match done.kind {
            JobKind::Scan => {
                if done.generation != self.scan_generation {
                    return;
                }
                self.progress.done += 1;
            }
            JobKind::Open => {
                let current = self.open.as_ref().is_some_and(|o| {
                    o.generation == done.generation && o.session_id == done.session_id
                });
                if !current {
                    return;
                }
            }
            JobKind::Prefetch => {
                let wanted = done.generation == self.open_generation
                    && self
                        .prefetch
                        .as_ref()
                        .is_some_and(|(id, a)| id == &done.session_id && a.is_none());
                if !wanted {
                    return;
                }
                match done.outcome {
                    Outcome::Analysed(a) => {
                        self.record(&a);
                        self.reviews.insert(a.session_id.clone(), a.review.clone());
                        self.apply_session(&a.session_id, Some(a.session.start));
                        if let Some(p) = self.prefetch.as_mut() {
                            p.1 = Some(a);
                        }
                    }
                    // What went wrong is said when the session is opened.
                    _ => self.prefetch = None,
                }
                return;
            }
        }
        if matches!(done.outcome, Outcome::Unchanged | Outcome::Restat(_)) {
            self.still_unreadable(&done);
        }
        match done.outcome {
            Outcome::Unchanged => {}
            Outcome::Restat(stat) => {
                // Same content, new stat: remember it (derived data; a failure only costs a
                // read next time).
                let _ = self.journal.set_file_stat(&done.session_id, &stat);
            }
            Outcome::Failed(why, stat) => {
                if done.kind == JobKind::Scan {
                    self.progress.failed += 1;
                }
                self.failed.insert(done.session_id.clone());
                self.problems.push(why.clone());
                let start = self.note_unreadable(&done.session_id, &why, stat.as_ref());
                self.apply_session(&done.session_id, start);
                if let Some(o) = self
                    .open
                    .as_mut()
                    .filter(|o| o.session_id == done.session_id && o.analysed.is_none())
                {
                    o.load_error = Some(why);
                    self.reload_grades();
                    self.say_unreadable();
                }
            }
            Outcome::Analysed(a) => {
                self.record(&a);
                self.reviews.insert(a.session_id.clone(), a.review.clone());
                self.apply_session(&a.session_id, Some(a.session.start));
                let is_open = self
                    .open
                    .as_ref()
                    .is_some_and(|o| o.session_id == a.session_id && o.analysed.is_none());
                if is_open {
                    self.attach(a);
                }
            }
        }
    }

    fn record(&mut self, a: &Analysed) {
        if let Err(e) = crate::workspace::record_analysed(&mut self.journal, a, now()) {
            self.say(Tone::Warn, e.to_string());
        }
    }

    /// Give the open session its analysed series.
    fn attach(&mut self, a: Box<Analysed>) {
        let Some(o) = self.open.as_mut() else { return };
        let duration = a.session.duration_s();
        match o.chart.as_mut() {
            Some(c) if (c.duration - duration).abs() < 1e-6 => {}
            _ => o.chart = Some(ChartView::full(duration)),
        }
        o.review = Some(a.review.clone());
        let n = a.review.work().count();
        if o.selected_work >= n {
            o.selected_work = n.saturating_sub(1);
        }
        o.analysed = Some(a);
        self.update_load_spike();
        self.reload_grades();
        if let Some(o) = self.open.as_mut() {
            o.note = None;
        }
        self.load_revealed();
        super::panes::context_view::on_analysed(self);
    }

    // ----- grading -----

    fn open_graded(&mut self) -> Option<String> {
        let (id, ready, failed) = match self.open.as_ref() {
            None => {
                self.say(
                    Tone::Info,
                    "open a session first (Enter, or ] for the queue)",
                );
                return None;
            }
            Some(o) => (
                o.session_id.clone(),
                // A file that cannot be read has no review: the verdict alone closes it.
                o.state.is_some() && (o.review.is_some() || o.unreadable().is_some()),
                o.load_error.clone(),
            ),
        };
        if !ready {
            if let Some(why) = failed {
                // The journal could not keep the session as unreadable (its reason is said
                // there); the file's problem is said plainly, never "still analysing".
                let why = self.reason_of(&id, &why);
                self.say(Tone::Warn, format!("the file cannot be read: {why}"));
                return None;
            }
            self.say(
                Tone::Info,
                "still analysing this session; grading opens in a moment",
            );
            return None;
        }
        Some(id)
    }

    fn score(&mut self, score: u8) {
        let Some(id) = self.open_graded() else { return };
        let (n, sel) = match self.open.as_ref() {
            Some(o) => (o.work_count(), o.selected_work),
            None => return,
        };
        if n == 0 {
            let v = self.keymap.first(Action::CycleVerdict);
            let text = if self
                .open
                .as_ref()
                .and_then(OpenSession::unreadable)
                .is_some()
            {
                format!("the file cannot be read, so there is nothing to score: give the purpose verdict ({v})")
            } else {
                format!("no work intervals to score: give the purpose verdict ({v})")
            };
            self.say(Tone::Info, text);
            return;
        }
        let interval = sel.min(n - 1) as u32 + 1;
        let revealed = self.open.as_ref().is_some_and(OpenSession::revealed);
        match self.journal.grade(&id, &[(interval, score)], None, now()) {
            Ok(()) => {
                self.reload_grades();
                let advanced = match self.open.as_mut() {
                    Some(o) if o.selected_work + 1 < n => {
                        o.selected_work += 1;
                        o.verdict.follow();
                        true
                    }
                    _ => false,
                };
                let what = if revealed { "revised" } else { "scored" };
                let next = if advanced || revealed {
                    String::new()
                } else {
                    format!(
                        " · purpose verdict: {}",
                        self.keymap.first(Action::CycleVerdict)
                    )
                };
                self.say(
                    Tone::Done,
                    format!("interval {interval} {what} {score}{next}"),
                );
                self.apply_session(&id, None);
            }
            Err(e) => self.say(Tone::Warn, short_error(&e)),
        }
    }

    fn cycle_verdict(&mut self) {
        let Some(id) = self.open_graded() else { return };
        let current = self
            .open
            .as_ref()
            .and_then(|o| o.state.as_ref())
            .and_then(|s| s.verdict.as_ref())
            .map(|v| v.current);
        let next = match current {
            None | Some(PurposeVerdict::Missed) => PurposeVerdict::Met,
            Some(PurposeVerdict::Met) => PurposeVerdict::Partly,
            Some(PurposeVerdict::Partly) => PurposeVerdict::Missed,
        };
        match self.journal.set_verdict(&id, next, now()) {
            Ok(()) => {
                self.reload_grades();
                let text = format!("purpose verdict: {next}{}", self.close_hint());
                self.say(Tone::Done, text);
                self.apply_session(&id, None);
            }
            Err(e) => self.say(Tone::Warn, short_error(&e)),
        }
    }

    fn reveal(&mut self) {
        let Some(id) = self.open_graded() else { return };
        if self.open.as_ref().is_some_and(OpenSession::revealed) {
            if let Some(Some(text)) = self.open.as_ref().and_then(|o| o.note.clone()) {
                self.modal = Some(Modal::Notes(text));
            } else {
                self.say(Tone::Info, "the athlete left no notes for this session");
            }
            return;
        }
        match self.journal.reveal(&id, now()) {
            Ok(_permit) => {
                // The permit is used again inside load_revealed (reveal is idempotent).
                self.reload_grades();
                self.load_revealed();
                self.apply_session(&id, None);
                match self.open.as_ref().and_then(|o| o.note.clone()) {
                    Some(Some(text)) => {
                        self.modal = Some(Modal::Notes(text));
                        self.say(
                            Tone::Done,
                            "notes revealed; grades changed from now on are kept as revisions",
                        );
                    }
                    _ => self.say(Tone::Done, "revealed: the athlete left no notes"),
                }
            }
            Err(JournalError::NotYetGraded { missing, .. }) => {
                let v = self.keymap.first(Action::CycleVerdict);
                let text = match self.open.as_ref().and_then(OpenSession::unreadable) {
                    Some(_) => format!(
                        "the file cannot be read: give the purpose verdict ({v}) first; it records that you saw this"
                    ),
                    None => format!("notes stay hidden until grading is complete: {missing}"),
                };
                self.say(Tone::Warn, text);
            }
            Err(e) => self.say(Tone::Warn, short_error(&e)),
        }
    }

    // ----- quick close, seen, unreadable files -----

    /// After a verdict: when it alone completes the blind grading (no work intervals, or a
    /// file that cannot be read), say so and what comes next.
    fn close_hint(&self) -> String {
        let Some(st) = self.open.as_ref().and_then(|o| o.state.as_ref()) else {
            return String::new();
        };
        if st.revealed_at.is_some() || !st.missing.is_empty() || st.work_intervals != Some(0) {
            return String::new();
        }
        let o = self.keymap.first(Action::RevealNotes);
        if st.unreadable_seen.is_some() {
            format!(" · closed with the verdict alone (the file cannot be read; noted); {o} reads the notes")
        } else {
            format!(" · quick close: no work intervals, so the verdict is the blind grade; {o} reads the notes")
        }
    }

    /// The failure of a session's file without the file's path (the status line is short).
    fn reason_of(&self, session_id: &str, why: &str) -> String {
        let path = self
            .roster
            .find_session(session_id)
            .map(|(_, act)| format!("{}: ", act.path.display()));
        let why = match path {
            Some(p) => why.strip_prefix(p.as_str()).unwrap_or(why),
            None => why,
        };
        crate::roster::printable(why)
    }

    /// A session the journal holds as unreadable came back unchanged from the start-up
    /// re-check (its file was not read again): count and list it as the failure it still is.
    fn still_unreadable(&mut self, done: &Done) {
        if done.kind != JobKind::Scan {
            return;
        }
        let Some(reason) = self.known_unreadable.get(&done.session_id).cloned() else {
            return;
        };
        let Some(path) = self
            .roster
            .find_session(&done.session_id)
            .map(|(_, act)| act.path.clone())
        else {
            return;
        };
        self.progress.failed += 1;
        self.failed.insert(done.session_id.clone());
        self.problems.push(format!("{}: {reason}", path.display()));
    }

    /// A session's file could not be read: keep it in the journal as unreadable, so it can
    /// be closed with the verdict alone.
    /// Returns the start the journal now holds for it, when recorded.
    fn note_unreadable(
        &mut self,
        session_id: &str,
        why: &str,
        stat: Option<&FileStat>,
    ) -> Option<DateTime<Utc>> {
        let (athlete, path) = self
            .roster
            .find_session(session_id)
            .map(|(a, act)| (a.id.clone(), act.path.clone()))?;
        let reason = self.reason_of(session_id, why);
        let record = crate::journal::unreadable_record(session_id, &athlete, &path, now());
        match self
            .journal
            .record_unreadable_with_stat(&record, &reason, stat, now())
        {
            Ok(_) => Some(record.start),
            Err(e) => {
                self.say(Tone::Warn, short_error(&e));
                None
            }
        }
    }

    /// Say plainly that the open session's file cannot be read, and how to close it.
    fn say_unreadable(&mut self) {
        let Some(o) = self.open.as_ref() else { return };
        if o.revealed() {
            return;
        }
        let Some(why) = o.unreadable().map(crate::roster::printable) else {
            return;
        };
        let v = self.keymap.first(Action::CycleVerdict);
        let r = self.keymap.first(Action::RevealNotes);
        let text = if o
            .state
            .as_ref()
            .is_some_and(|s| s.unreadable_seen.is_some())
        {
            format!("the file cannot be read, closed with the verdict: {r} reads the notes · {why}")
        } else {
            format!("the file cannot be read: {v} closes it with the purpose verdict alone, then {r} reads the notes · {why}")
        };
        self.say(Tone::Warn, text);
    }

    /// Mark the open session (or the one under the roster cursor) seen without a grade, or
    /// bring it back to the queue.
    fn toggle_seen(&mut self) {
        let target = match (self.focus, &self.cursor.session, &self.open) {
            (Focus::Roster, Some(id), _) => Some(id.clone()),
            (_, _, Some(o)) => Some(o.session_id.clone()),
            (_, id, None) => id.clone(),
        };
        let Some(id) = target else {
            self.say(Tone::Info, "open or select a session first");
            return;
        };
        let seen = match self.journal.review_state(&id) {
            Ok(st) => st.seen_at.is_some(),
            Err(JournalError::UnknownSession { .. }) => {
                self.say(
                    Tone::Info,
                    "still reading this session; try again in a moment",
                );
                return;
            }
            Err(e) => {
                self.say(Tone::Warn, short_error(&e));
                return;
            }
        };
        let result = if seen {
            self.journal.unmark_seen(&id, now())
        } else {
            self.journal.mark_seen(&id, now())
        };
        match result {
            Ok(_) => {
                self.apply_session(&id, None);
                self.reload_grades();
                let m = self.keymap.first(Action::ToggleSeen);
                let counts = format!(
                    "{} to review, {} seen without a grade",
                    self.queue.len(),
                    self.seen_count
                );
                let text = if seen {
                    format!("back in the queue · {counts}")
                } else {
                    format!("marked seen: out of the queue, the notes stay hidden ({m} again brings it back) · {counts}")
                };
                self.say(Tone::Done, text);
            }
            Err(JournalError::AlreadyRevealed { .. }) => self.say(
                Tone::Info,
                "the notes are revealed already: the session is reviewed",
            ),
            Err(e) => self.say(Tone::Warn, short_error(&e)),
        }
    }

    // ----- rulers -----

    fn ruler(&mut self) {
        let Some(o) = self.open.as_mut() else {
            self.say(Tone::Info, "open a session first");
            return;
        };
        let Some(cursor) = o.chart.as_ref().map(|c| c.cursor) else {
            return;
        };
        match o.pending_ruler.take() {
            None => {
                o.pending_ruler = Some(cursor);
                let text = format!(
                    "ruler from {}: move the cursor and press {} again",
                    crate::model::units::format_clock(cursor),
                    self.keymap.first(Action::Ruler)
                );
                self.say(Tone::Info, text);
            }
            Some(first) => {
                let (a, b) = if first <= cursor {
                    (first, cursor)
                } else {
                    (cursor, first)
                };
                if b - a < 10.0 {
                    self.say(Tone::Warn, "a ruler needs at least 10 s between its points");
                    return;
                }
                let id = o.session_id.clone();
                match self.journal.add_ruler(&id, a, b, now()) {
                    Ok(r) => {
                        if let Some(o) = self.open.as_mut() {
                            o.rulers.push(r);
                        }
                        self.say(Tone::Done, "ruler kept");
                    }
                    Err(e) => self.say(Tone::Warn, short_error(&e)),
                }
            }
        }
    }

    fn clear_rulers(&mut self) {
        let Some(id) = self.open.as_ref().map(|o| o.session_id.clone()) else {
            return;
        };
        match self.journal.clear_rulers(&id) {
            Ok(n) => {
                if let Some(o) = self.open.as_mut() {
                    o.rulers.clear();
                    o.pending_ruler = None;
                }
                self.say(Tone::Done, format!("{n} ruler(s) cleared"));
            }
            Err(e) => self.say(Tone::Warn, short_error(&e)),
        }
    }

    // ----- feedback -----

    fn feedback_ready(&mut self) -> bool {
        if self.open.is_none() {
            self.say(Tone::Info, "open a session first");
            return false;
        }
        if !self.open.as_ref().is_some_and(OpenSession::revealed) {
            self.say(
                Tone::Warn,
                format!(
                    "feedback comes after the reveal: grade blind, then {}",
                    self.keymap.first(Action::RevealNotes)
                ),
            );
            return false;
        }
        if self.open.as_ref().is_some_and(|o| o.feedback.is_none()) {
            let note = self.open.as_ref().and_then(|o| o.note.clone()).flatten();
            let draft = self.draft_text(note.as_deref());
            let base = self.latest_feedback_id();
            if let Some(o) = self.open.as_mut() {
                o.feedback = Some(TextEditor::new(&draft));
                o.feedback_base = base;
            }
        }
        true
    }

    fn feedback_text(&self) -> Option<String> {
        self.open
            .as_ref()
            .and_then(|o| o.feedback.as_ref())
            .map(TextEditor::text)
    }

    fn save_feedback(&mut self) {
        let Some((id, text)) = self.open.as_ref().and_then(|o| {
            o.feedback
                .as_ref()
                .map(|f| (o.session_id.clone(), f.text()))
        }) else {
            return;
        };
        let base = self.open.as_ref().and_then(|o| o.feedback_base);
        match self.journal.save_feedback_over(&id, &text, base, now()) {
            Ok(new) => {
                self.saved_as(new);
                self.say(Tone::Done, "feedback saved in the journal");
            }
            Err(JournalError::FeedbackConflict { theirs, .. }) => {
                self.ask_conflict(id, *theirs, None);
            }
            Err(e) => self.say(Tone::Warn, short_error(&e)),
        }
    }

    /// The editor's text is the journal's version `id` now.
    fn saved_as(&mut self, id: i64) {
        if let Some(o) = self.open.as_mut() {
            o.feedback_base = Some(id);
            if let Some(ed) = o.feedback.as_mut() {
                ed.dirty = false;
                ed.saved = true;
            }
        }
    }

    /// The id of the latest saved feedback version of the open session (`None`: none, or
    /// the journal cannot say).
    fn latest_feedback_id(&self) -> Option<i64> {
        let id = &self.open.as_ref()?.session_id;
        self.journal.feedback(id).ok().flatten().map(|f| f.id)
    }

    /// Whether a version newer than the one the editor started from was saved elsewhere.
    fn feedback_base_stale(&self) -> bool {
        let Some(o) = self.open.as_ref() else {
            return false;
        };
        matches!(self.journal.feedback(&o.session_id), Ok(Some(f)) if Some(f.id) != o.feedback_base)
    }

    // ----- a feedback edit that met a newer version saved elsewhere -----

    /// Ask the coach to settle a conflict: nothing was saved, the editor keeps the text.
    fn ask_conflict(
        &mut self,
        session_id: String,
        theirs: FeedbackVersion,
        then: Option<FeedbackEventKind>,
    ) {
        if let Some(ed) = self.open.as_mut().and_then(|o| o.feedback.as_mut()) {
            // Whatever the editor holds is not in the journal.
            ed.dirty = true;
        }
        self.pending_leave = None;
        self.modal = Some(Modal::Conflict(FeedbackConflict {
            session_id,
            theirs,
            then,
        }));
        self.say(
            Tone::Warn,
            "nothing saved: the feedback was changed elsewhere; k keeps mine, t takes theirs, b shows both",
        );
    }

    /// A key in the conflict prompt: `k` keep mine, `t` take theirs, `b` show both, Esc
    /// back to editing; other keys wait.
    fn on_conflict_key(&mut self, c: &FeedbackConflict, key: Key) -> Vec<Effect> {
        let open_here = self
            .open
            .as_ref()
            .is_some_and(|o| o.session_id == c.session_id && o.feedback.is_some());
        if !open_here {
            self.modal = None;
            return Vec::new();
        }
        match key.code {
            KeyCode::Char('k') | KeyCode::Char('K') => self.keep_mine(c),
            KeyCode::Char('t') | KeyCode::Char('T') => {
                self.modal = None;
                if let Some(o) = self.open.as_mut() {
                    let mut ed = TextEditor::new(&c.theirs.body);
                    ed.saved = true;
                    o.feedback = Some(ed);
                    o.feedback_base = Some(c.theirs.id);
                }
                let sent = if c.then.is_some() {
                    "; nothing was sent"
                } else {
                    ""
                };
                self.say(
                    Tone::Done,
                    format!("feedback: took the version saved elsewhere; yours was dropped{sent}"),
                );
                Vec::new()
            }
            KeyCode::Char('b') | KeyCode::Char('B') => {
                self.modal = None;
                let save = self.keymap.first(Action::SaveFeedback);
                if let Some(o) = self.open.as_mut() {
                    let mine = o
                        .feedback
                        .as_ref()
                        .map(TextEditor::text)
                        .unwrap_or_default();
                    let mut ed = TextEditor::new(&both_texts(&mine, &c.theirs));
                    ed.dirty = true;
                    ed.editing = true;
                    o.feedback = Some(ed);
                    o.feedback_base = Some(c.theirs.id);
                    o.verdict.follow();
                }
                self.focus = Focus::Verdict;
                self.say(
                    Tone::Info,
                    format!("both texts are in the editor: merge them, delete the === lines, {save} saves"),
                );
                Vec::new()
            }
            KeyCode::Esc => {
                self.modal = None;
                self.back_to_editing();
                let save = self.keymap.first(Action::SaveFeedback);
                self.say(
                    Tone::Info,
                    format!("nothing saved: your text is still here; {save} asks again"),
                );
                Vec::new()
            }
            _ => Vec::new(),
        }
    }

    fn back_to_editing(&mut self) {
        if let Some(o) = self.open.as_mut() {
            if let Some(ed) = o.feedback.as_mut() {
                ed.editing = true;
            }
            o.verdict.follow();
        }
        self.focus = Focus::Verdict;
    }

    /// Keep mine: save the editor's text over the version saved elsewhere (which stays in
    /// the journal's history), then send it on when it was on its way out.
    fn keep_mine(&mut self, c: &FeedbackConflict) -> Vec<Effect> {
        self.modal = None;
        let Some(text) = self.feedback_text() else {
            return Vec::new();
        };
        match self
            .journal
            .save_feedback_over(&c.session_id, &text, Some(c.theirs.id), now())
        {
            Ok(new) => {
                self.saved_as(new);
                self.say(
                    Tone::Done,
                    "feedback: yours saved over the version saved elsewhere (kept in the history)",
                );
                match c.then {
                    Some(FeedbackEventKind::Copied) => self.copy_feedback(),
                    Some(FeedbackEventKind::Exported) => self.export_feedback(),
                    _ => Vec::new(),
                }
            }
            Err(JournalError::FeedbackConflict { theirs, .. }) => {
                // Yet another save came meanwhile: ask again about that one.
                self.ask_conflict(c.session_id.clone(), *theirs, c.then);
                Vec::new()
            }
            Err(e) => {
                self.back_to_editing();
                self.say(Tone::Warn, short_error(&e));
                Vec::new()
            }
        }
    }

    fn mark_sent(&mut self, kind: FeedbackEventKind) -> bool {
        let Some(id) = self.open.as_ref().map(|o| o.session_id.clone()) else {
            return false;
        };
        let never_saved = matches!(self.journal.feedback(&id), Ok(None));
        // The text is saved (when it needs to be) and the sending recorded together; a
        // version saved elsewhere since the editor's makes it a conflict, not a send of
        // a text the journal no longer holds.
        let body = if self.unsaved() || never_saved || self.feedback_base_stale() {
            self.feedback_text()
        } else {
            None
        };
        let base = self.open.as_ref().and_then(|o| o.feedback_base);
        match self
            .journal
            .send_feedback_over(&id, body.as_deref(), base, kind, now())
        {
            Ok(saved) => {
                if let Some(new) = saved {
                    self.saved_as(new);
                }
                self.reload_grades();
                self.apply_session(&id, None);
                true
            }
            Err(JournalError::FeedbackConflict { theirs, .. }) => {
                self.ask_conflict(id, *theirs, Some(kind));
                false
            }
            Err(e) => {
                self.say(Tone::Warn, short_error(&e));
                false
            }
        }
    }

    fn copy_feedback(&mut self) -> Vec<Effect> {
        let Some(text) = self.feedback_text() else {
            return Vec::new();
        };
        if self.mark_sent(FeedbackEventKind::Copied) {
            self.say(Tone::Info, "copying the feedback");
            vec![Effect::Copy(text)]
        } else {
            Vec::new()
        }
    }

    /// Where `s` writes the feedback of a session.
    pub fn feedback_path(&self, session_id: &str) -> PathBuf {
        let name = format!("{}.txt", session_id.replace(['/', '\\'], "__"));
        match &self.feedback_dir {
            Some(d) => d.join(name),
            None => PathBuf::from(name),
        }
    }

    fn export_feedback(&mut self) -> Vec<Effect> {
        let (Some(text), Some(id)) = (
            self.feedback_text(),
            self.open.as_ref().map(|o| o.session_id.clone()),
        ) else {
            return Vec::new();
        };
        // A version saved elsewhere since: settle that before a file is written.
        if self.feedback_base_stale() {
            if let Ok(Some(theirs)) = self.journal.feedback(&id) {
                self.ask_conflict(id, theirs, Some(FeedbackEventKind::Exported));
                return Vec::new();
            }
        }
        vec![Effect::WriteFile {
            path: self.feedback_path(&id),
            text,
        }]
    }

    fn on_written(&mut self, r: Result<PathBuf, String>) {
        match r {
            Ok(path) => {
                if self.mark_sent(FeedbackEventKind::Exported) {
                    self.say(Tone::Done, format!("feedback saved to {}", path.display()));
                }
            }
            Err(e) => self.say(Tone::Warn, format!("feedback not saved: {e}")),
        }
    }

    fn on_editor(&mut self, r: Result<String, String>) {
        match r {
            Ok(text) => {
                if let Some(o) = self.open.as_mut() {
                    let changed = o.feedback.as_ref().map(TextEditor::text) != Some(text.clone());
                    let mut ed = TextEditor::new(&text);
                    ed.dirty = changed;
                    o.feedback = Some(ed);
                }
                self.save_feedback();
            }
            Err(e) => self.say(Tone::Warn, format!("editor: {e}")),
        }
    }

    // ----- the day's messages -----

    /// Problems in `config.toml` (the `[feedback]` table): kept for the start pane, and
    /// said on the status line.
    pub fn set_config_problems(&mut self, problems: Vec<String>) {
        if let Some(first) = problems.first() {
            let more = match problems.len() {
                1 => String::new(),
                n => format!(" (and {} more: see the start pane)", n - 1),
            };
            self.say(Tone::Warn, format!("{first}{more}"));
        }
        self.config_problems = problems;
    }

    /// Where the day's messages are written.
    pub fn day_path(&self, day: NaiveDate) -> PathBuf {
        let name = format!("day-{day}.txt");
        match &self.feedback_dir {
            Some(d) => d.join(name),
            None => PathBuf::from(name),
        }
    }

    /// A review the workstation holds for a session: the open one's, else the cached one.
    fn review_of(&mut self, id: &str) -> Option<Review> {
        if let Some(r) = self
            .open
            .as_ref()
            .filter(|o| o.session_id == id)
            .and_then(|o| o.review.clone())
        {
            return Some(r);
        }
        if let Some(r) = self.reviews.get(id) {
            return Some(r.clone());
        }
        let json = self.journal.cached_summary(id, ANALYSIS_VERSION).ok()??;
        let r: Review = serde_json::from_str(&json).ok()?;
        self.reviews.insert(id.to_string(), r.clone());
        Some(r)
    }

    /// The athlete's note of a revealed session, through the reveal permit (the embedded
    /// note of a file other than the open one is read from the file only when the session
    /// has no notes file).
    fn note_of(&mut self, id: &str) -> Option<String> {
        if let Some(Some(n)) = self
            .open
            .as_ref()
            .filter(|o| o.session_id == id)
            .and_then(|o| o.note.clone())
        {
            return Some(n);
        }
        let permit = self.journal.reveal(id, now()).ok()?;
        let act = self.roster.find_session(id).map(|(_, a)| a.clone())?;
        let embedded = if act.note_file.is_none() {
            crate::ingest::ingest_file(&act.path, None)
                .ok()
                .and_then(|s| s.note)
        } else {
            None
        };
        read_note(&permit, act.note_file.as_deref(), embedded.as_deref())
    }

    /// The day's messages: for the day of the open (else selected) session, one message per
    /// athlete (roster order) with that day's revealed sessions in start order; saved
    /// feedback as the coach edited it, a draft for the others. Written to
    /// `day-<date>.txt` in the feedback folder, then copied to the clipboard.
    pub fn export_day(&mut self) -> Vec<Effect> {
        // What is typed in the editor is saved first: it is the coach's text for its session.
        if self.unsaved() {
            self.save_feedback();
            if matches!(self.modal, Some(Modal::Conflict(_))) {
                // Saved elsewhere meanwhile: settled first, then the day goes out.
                return Vec::new();
            }
        }
        let Some(id) = self
            .open
            .as_ref()
            .map(|o| o.session_id.clone())
            .or_else(|| self.cursor.session.clone())
        else {
            self.say(
                Tone::Info,
                "open or select a session first: its day's messages are made",
            );
            return Vec::new();
        };
        let all = match self.journal.sessions(None) {
            Ok(v) => v,
            Err(e) => {
                self.say(Tone::Warn, short_error(&e));
                return Vec::new();
            }
        };
        let day_of = |e: &QueueEntry| crate::model::session::session_day(&e.session_id, e.start);
        let Some(day) = all.iter().find(|e| e.session_id == id).map(day_of) else {
            self.say(
                Tone::Info,
                "this session is still being read; try again in a moment",
            );
            return Vec::new();
        };
        let mut of_day: Vec<QueueEntry> = all.into_iter().filter(|e| day_of(e) == day).collect();
        of_day.sort_by(|a, b| (a.start, &a.session_id).cmp(&(b.start, &b.session_id)));
        let mut unreviewed = of_day.iter().filter(|e| !e.stage.is_revealed()).count();
        let athletes: Vec<(String, crate::model::AthleteProfile)> = self
            .roster
            .athletes
            .iter()
            .map(|a| (a.id.clone(), a.profile.clone()))
            .collect();
        let mut blocks = Vec::new();
        let mut messages = Vec::new();
        for (athlete, profile) in &athletes {
            let mut sessions = Vec::new();
            for e in of_day
                .iter()
                .filter(|e| &e.athlete == athlete && e.stage.is_revealed())
            {
                let Some(review) = self.review_of(&e.session_id) else {
                    // Not analysed under this version yet: left out like an unreviewed one.
                    unreviewed += 1;
                    continue;
                };
                let saved = self
                    .journal
                    .feedback(&e.session_id)
                    .ok()
                    .flatten()
                    .map(|f| f.body);
                let (grades, note) = if saved.is_some() {
                    (Default::default(), None)
                } else {
                    let grades = self
                        .journal
                        .review_state(&e.session_id)
                        .map(|s| crate::export::feedback::Grades::from_state(&s))
                        .unwrap_or_default();
                    (grades, self.note_of(&e.session_id))
                };
                let title = self.session_title(&e.session_id);
                let earlier = match (&saved, self.roster.athlete(athlete)) {
                    (None, Some(a)) => {
                        crate::context::comparison(&self.journal, a, &e.session_id).ok()
                    }
                    _ => None,
                };
                sessions.push((
                    e.session_id.clone(),
                    title,
                    review,
                    grades,
                    note,
                    saved,
                    earlier,
                ));
            }
            if sessions.is_empty() {
                continue;
            }
            let parts: Vec<crate::export::feedback::DayPart<'_>> = sessions
                .iter()
                .map(|(_, _, review, grades, note, saved, earlier)| match saved {
                    Some(text) => crate::export::feedback::DayPart::Saved(text),
                    None => crate::export::feedback::DayPart::Draft(
                        crate::export::feedback::DraftInput {
                            review,
                            profile,
                            grades: grades.clone(),
                            note: note.as_deref(),
                            // Ruler marks need the samples: only the open session's own
                            // draft has them.
                            marks: Vec::new(),
                            earlier: earlier.as_ref(),
                        },
                    ),
                })
                .collect();
            let message =
                crate::export::feedback::day_message(profile, &parts, &self.feedback_style);
            let titles: Vec<&str> = sessions.iter().map(|s| s.1.as_str()).collect();
            blocks.push(format!(
                "To {} | {day} | {}\n\n{}\n",
                profile.name,
                titles.join(", "),
                message.trim_end()
            ));
            messages.push(sessions.into_iter().map(|s| s.0).collect::<Vec<_>>());
        }
        if messages.is_empty() {
            self.say(
                Tone::Info,
                format!(
                    "{day}: no reviewed session yet ({}); nothing written",
                    count(unreviewed, "session", "sessions") + " not reviewed"
                ),
            );
            return Vec::new();
        }
        let text = blocks.join("\n----------------------------------------\n\n");
        let path = self.day_path(day);
        self.day_export = Some(DayExport {
            day,
            text: text.clone(),
            messages,
            unreviewed,
            path: None,
        });
        vec![Effect::WriteDay { path, text }]
    }

    /// Record that each message of the day left, one transaction per message.
    fn record_day(&mut self, kind: FeedbackEventKind) -> Option<String> {
        let messages = self.day_export.as_ref()?.messages.clone();
        let mut problem = None;
        for ids in &messages {
            let ids: Vec<&str> = ids.iter().map(String::as_str).collect();
            if let Err(e) = self.journal.record_feedback_events(&ids, kind, now()) {
                problem.get_or_insert_with(|| short_error(&e));
            }
        }
        self.reload_grades();
        for id in messages.iter().flatten() {
            self.apply_session(id, None);
        }
        problem
    }

    fn on_day_written(&mut self, r: Result<PathBuf, String>) -> Vec<Effect> {
        match r {
            Ok(path) => {
                let problem = self.record_day(FeedbackEventKind::Exported);
                let Some(d) = self.day_export.as_mut() else {
                    return Vec::new();
                };
                d.path = Some(path);
                let text = d.text.clone();
                if let Some(p) = problem {
                    self.say(Tone::Warn, format!("not recorded as sent: {p}"));
                }
                vec![Effect::Copy(text)]
            }
            Err(e) => {
                self.day_export = None;
                self.say(
                    Tone::Warn,
                    format!("the day's messages were not saved: {e}"),
                );
                Vec::new()
            }
        }
    }

    fn on_day_copied(&mut self, how: &str) {
        let problem = self.record_day(FeedbackEventKind::Copied);
        let Some(d) = self.day_export.take() else {
            return;
        };
        let sessions: usize = d.messages.iter().map(Vec::len).sum();
        let path = d
            .path
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_default();
        let text = format!(
            "{}: {} ({}) saved to {path} and {how}; {} of that day not reviewed yet",
            d.day,
            count(d.messages.len(), "message", "messages"),
            count(sessions, "session", "sessions"),
            count(d.unreviewed, "session", "sessions"),
        );
        match problem {
            Some(p) => self.say(Tone::Warn, format!("{text}; not recorded as sent: {p}")),
            None => self.say(Tone::Done, text),
        }
    }

    // ----- for the panes -----

    /// Title of a session for lists: the plan title, else sport and distance, else the file.
    pub fn session_title(&self, session_id: &str) -> String {
        let stem = session_id
            .split_once('/')
            .map(|(_, s)| s)
            .unwrap_or(session_id);
        let Some(r) = self.reviews.get(session_id) else {
            return stem.to_string();
        };
        if let Some(p) = &r.plan {
            return p.title.clone();
        }
        let units = self
            .roster
            .find_session(session_id)
            .map(|(a, _)| a.profile.units)
            .unwrap_or_default();
        match r.session.distance_m {
            Some(d) => format!("{} {}", r.session.sport, format_distance(d, units)),
            None => r.session.sport.clone(),
        }
    }
}

/// `1 message`, `2 messages`.
/// Both texts in one, for the coach to merge by hand: mine, then theirs, each under a
/// plain marker line, and a last marker line saying what to do.
pub fn both_texts(mine: &str, theirs: &FeedbackVersion) -> String {
    format!(
        "{BOTH_MINE}\n{}\n{BOTH_THEIRS} ({}) ===\n{}\n{BOTH_END}\n",
        mine.trim_end_matches('\n'),
        theirs.saved_at.format("%Y-%m-%d %H:%M UTC"),
        theirs.body.trim_end_matches('\n'),
    )
}

fn count(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// A journal error without the journal path (the status line is short).
fn short_error(e: &JournalError) -> String {
    let s = e.to_string();
    match s.split_once(": ") {
        Some((head, rest)) if head.contains(".sqlite") || head.contains('/') => rest.to_string(),
        _ => s,
    }
}
