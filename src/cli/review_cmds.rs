//! The daily review from the shell: queue, grade, notes, feedback, exports, bias check,
//! journal maintenance. Every command works on a roster and its journal.

use crate::model::session::session_day;
use std::collections::BTreeMap;
use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{bail, Context};
use chrono::{NaiveDate, Utc};
use serde::Serialize;

use crate::analysis::review::{Review, ANALYSIS_VERSION};
use crate::export::feedback::{DayPart, DraftInput, FeedbackStyle, Grades};
use crate::journal::{
    self, FeedbackEventKind, JournalError, PurposeVerdict, QueueEntry, SummaryBrief,
};
use crate::workspace::Workspace;

/// Exit code when the blind protocol refuses (notes asked for before grading is complete).
pub const EXIT_BLIND: i32 = 3;

/// A file the sync could not read or analyse, with the session it belongs to (when the
/// message names a roster file).
#[derive(Debug, Clone)]
pub struct SyncProblem {
    pub session: Option<String>,
    pub athlete: Option<String>,
    pub text: String,
}

/// What a command is about, for the sync problems worth saying to it.
#[derive(Debug, Clone, Copy)]
pub enum Concern<'a> {
    /// Every session (the queue of the whole roster).
    All,
    /// One athlete's sessions.
    Athlete(&'a str),
    /// One session.
    Session(&'a str),
    /// Nothing a sync problem changes.
    Nothing,
}

impl SyncProblem {
    fn concerns(&self, c: Concern<'_>) -> bool {
        match c {
            Concern::All => true,
            Concern::Athlete(a) => self.athlete.as_deref() == Some(a),
            Concern::Session(id) => self.session.as_deref() == Some(id),
            Concern::Nothing => false,
        }
    }
}

/// Say the sync problems that concern the command, once each, on stderr.
pub fn say_sync_problems(problems: &[SyncProblem], concern: Concern<'_>) {
    for p in problems.iter().filter(|p| p.concerns(concern)) {
        eprintln!("warning: {}", p.text);
    }
}

/// Open the workspace and bring the journal up to date with the roster (progress on stderr):
/// every session, or for a command about one athlete alone (`only`), that athlete's (the
/// roster is then read for that athlete only: [`Workspace::open_only`]).
/// The files that could not be read are handed back, not printed: each command says the
/// ones that concern it ([`say_sync_problems`]).
pub fn open_synced(
    roster: &Path,
    journal: Option<&Path>,
    only: Option<&str>,
    coach: Option<&str>,
) -> anyhow::Result<(Workspace, Vec<SyncProblem>)> {
    let mut ws = open_only_noting_read_only(roster, journal, only)?;
    ws.act_as(coach)?;
    let total = ws
        .roster
        .activities()
        .filter(|(a, _)| only.is_none_or(|id| a.id == id))
        .count() as u64;
    let bar = super::progress_bar(total, "analysing");
    let report = ws.sync_only(only, Utc::now(), |done, _| bar.set_position(done as u64))?;
    bar.finish_and_clear();
    // The sync names the session of each problem: no search of the roster per problem.
    let problems = report
        .problems
        .into_iter()
        .zip(report.failed.iter())
        .map(|(text, id)| SyncProblem {
            session: Some(id.clone()),
            athlete: id.split_once('/').map(|(a, _)| a.to_string()),
            text,
        })
        .collect();
    let failed = report.failed;
    record_unreadable_sessions(&mut ws, failed)?;
    Ok((ws, problems))
}

/// Keep in the journal every roster session whose file cannot be read (`failed`: the sync's
/// failures; the others are in the journal already), with the reason, so that it shows in
/// the queue and the coach can close it with the verdict alone.
fn record_unreadable_sessions(ws: &mut Workspace, failed: Vec<String>) -> anyhow::Result<()> {
    for id in failed {
        if ws.journal.session_hash(&id)?.is_none() {
            // Any other failure was said by the sync already; only the journal's own stops.
            match refresh_or_unreadable(ws, &id) {
                Err(e) if e.downcast_ref::<JournalError>().is_some() => return Err(e),
                _ => {}
            }
        }
    }
    Ok(())
}

/// Bring one session up to date in the journal. When its file cannot be read, the session
/// is kept in the journal as unreadable and the reason (one line, without the path) is
/// returned: such a session closes with the purpose verdict alone.
fn refresh_or_unreadable(ws: &mut Workspace, id: &str) -> anyhow::Result<Option<String>> {
    use crate::workspace::WorkspaceError;
    match ws.refresh(id, Utc::now()) {
        Ok(_) => Ok(None),
        Err(WorkspaceError::Ingest(e)) => {
            let reason = e.reason();
            let (athlete, act) = ws.find(id)?;
            let record =
                journal::unreadable_record(id, &athlete.id.clone(), &act.path.clone(), Utc::now());
            match ws.journal.record_unreadable(&record, &reason, Utc::now()) {
                // A read-only journal keeps the mark in its copy only: fine for this run.
                Ok(_) | Err(JournalError::ReadOnly { .. }) => Ok(Some(reason)),
                Err(e) => Err(e.into()),
            }
        }
        Err(e) => Err(e.into()),
    }
}

/// Open the workspace; when the journal cannot be written, say so once on stderr (reading
/// commands then work on it as it is; a write is refused with its own message).
pub fn open_noting_read_only(roster: &Path, journal: Option<&Path>) -> anyhow::Result<Workspace> {
    open_only_noting_read_only(roster, journal, None)
}

/// [`open_noting_read_only`] with only athlete `only` read from the roster when it is `Some`.
fn open_only_noting_read_only(
    roster: &Path,
    journal: Option<&Path>,
    only: Option<&str>,
) -> anyhow::Result<Workspace> {
    let ws = Workspace::open_only(roster, journal, only)?;
    if let Some(reason) = ws.journal.read_only() {
        eprintln!(
            "note: {}: the journal is read-only ({reason}); it is read as it is and nothing \
             will be saved in it",
            ws.journal.path().display()
        );
    }
    Ok(ws)
}

/// The plan title, or sport and distance, of a reviewed session. A session that is not a
/// run names its sport beside the plan title ("Easy spin (cycling)").
pub fn title(r: &Review) -> String {
    title_of(
        r.plan.as_ref().map(|p| p.title.as_str()),
        r.running,
        &r.session.sport,
        r.session.distance_m,
        crate::model::Units::parse(&r.units).unwrap_or_default(),
    )
}

/// [`title`] from its parts: the plan title, whether the session is a run, the sport, the
/// distance (m) and the athlete's units.
fn title_of(
    plan_title: Option<&str>,
    running: bool,
    sport: &str,
    distance_m: Option<f64>,
    u: crate::model::Units,
) -> String {
    let sport: String = sport.chars().filter(|c| !c.is_control()).collect();
    match plan_title {
        Some(p) if !running => format!("{p} ({sport})"),
        Some(p) => p.to_string(),
        None => match distance_m {
            Some(d) => format!("{sport} {:.1} {}", d / u.metres(), u.label()),
            None => sport,
        },
    }
}

#[derive(Debug, Serialize)]
struct QueueOut {
    session: String,
    athlete: String,
    start: String,
    title: String,
    stage: &'static str,
    content_changed: bool,
    /// The sport the file names (`running`, `cycling`, `unknown`, ...).
    sport: String,
    /// Work intervals to score (0 for another sport: the purpose verdict is the grade).
    work_intervals: usize,
    /// Why the session's file cannot be read (`null` when it can): such a session closes
    /// with the purpose verdict alone.
    file_unreadable: Option<String>,
}

/// The queue line of a session from the journal's columns alone, when its cached summary is
/// current (made under the athlete's present inputs) and holds the title's facts.
fn queue_out_cached(ws: &Workspace, e: &QueueEntry, brief: &SummaryBrief) -> Option<QueueOut> {
    if e.file_unreadable.is_some() || !ws.synced_current(&e.session_id) {
        return None;
    }
    let athlete = ws.roster.athlete(&e.athlete)?;
    if brief.inputs_digest.as_deref() != Some(athlete.inputs_digest.as_str()) {
        return None;
    }
    let sport = brief.sport.as_deref()?;
    let running = brief.running?;
    let work_intervals = brief.work_intervals? as usize;
    Some(QueueOut {
        sport: sport.chars().filter(|c| !c.is_control()).collect(),
        work_intervals,
        session: e.session_id.clone(),
        athlete: e.athlete.clone(),
        start: e.start.to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
        title: title_of(
            brief.plan_title.as_deref(),
            running,
            sport,
            brief.distance_m,
            athlete.profile.units,
        ),
        stage: e.stage.label(),
        content_changed: e.content_changed,
        file_unreadable: None,
    })
}

fn queue_out(ws: &mut Workspace, e: &QueueEntry) -> QueueOut {
    let review = if e.file_unreadable.is_some() {
        None
    } else {
        ws.refresh(&e.session_id, Utc::now()).ok()
    };
    let title = match (&review, &e.file_unreadable) {
        (Some(r), _) => title(r),
        (None, Some(why)) => format!("file cannot be read: {why}"),
        (None, None) => String::new(),
    };
    let sport = review
        .as_ref()
        .map(|r| {
            r.session
                .sport
                .chars()
                .filter(|c| !c.is_control())
                .collect()
        })
        .unwrap_or_default();
    let work_intervals = review.as_ref().map_or(0, |r| r.work().count());
    QueueOut {
        sport,
        work_intervals,
        session: e.session_id.clone(),
        athlete: e.athlete.clone(),
        start: e.start.to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
        title,
        stage: e.stage.label(),
        content_changed: e.content_changed,
        file_unreadable: e.file_unreadable.clone(),
    }
}

/// `splitdesk queue [--athlete A] [--json]`: sessions not yet reviewed, oldest first.
///
/// From the journal alone: one list of the sessions and one query of the title facts; a
/// session whose cached summary is not current by the columns is refreshed as before.
pub fn queue(ws: &mut Workspace, athlete: Option<&str>, json: bool) -> anyhow::Result<i32> {
    // Newest first; the queue is oldest first.
    let mut all = ws.journal.sessions(athlete)?;
    all.reverse();
    let any = all.len();
    let seen = all
        .iter()
        .filter(|e| e.stage == journal::ReviewStage::Seen)
        .count();
    let briefs = ws.journal.summary_briefs(athlete, ANALYSIS_VERSION)?;
    let rows: Vec<QueueOut> = all
        .iter()
        .filter(|e| e.stage.is_unreviewed())
        .map(|e| {
            briefs
                .get(&e.session_id)
                .and_then(|b| queue_out_cached(ws, e, b))
                .unwrap_or_else(|| queue_out(ws, e))
        })
        .collect();
    if json {
        crate::cli::out::json(&rows)?;
        return Ok(0);
    }
    if rows.is_empty() {
        match (any, athlete) {
            (0, Some(a)) => println!("no sessions for {a}: nothing to review"),
            (0, None) => println!("no sessions in this roster: nothing to review"),
            _ => println!("nothing to review"),
        }
    } else {
        print!("{}", queue_table(&rows));
    }
    if seen > 0 {
        println!(
            "({} marked seen without a grade, not listed; `splitdesk seen SESSION --undo` brings one back)",
            plural(seen, "session", "sessions")
        );
    }
    Ok(0)
}

/// The queue as a table: each column as wide as its longest cell (characters, not bytes),
/// two spaces between columns, the title last and unpadded.
fn queue_table(rows: &[QueueOut]) -> String {
    let chars = |s: &str| s.chars().count();
    let id_w = rows.iter().map(|r| chars(&r.session)).max().unwrap_or(0);
    let stage_w = rows.iter().map(|r| chars(r.stage)).max().unwrap_or(0);
    let mut out = String::new();
    for r in rows {
        let grade = if r.work_intervals == 0 {
            "  [verdict only]"
        } else {
            ""
        };
        let line = format!(
            "{:<id_w$}  {:<10}  {:<stage_w$}  {}{grade}",
            r.session,
            r.start.get(..10).unwrap_or(""),
            r.stage,
            r.title
        );
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// Parse `N=S` score arguments.
pub fn parse_scores(args: &[String]) -> anyhow::Result<Vec<(u32, u8)>> {
    args.iter()
        .map(|a| {
            let (n, s) = a
                .split_once('=')
                .with_context(|| format!("--score {a:?}: expected N=S, e.g. 2=4"))?;
            let n: u32 = n
                .trim()
                .parse()
                .with_context(|| format!("--score {a:?}: {n:?} is not a work-interval number"))?;
            let s: u8 = s
                .trim()
                .parse()
                .ok()
                .filter(|s| (1..=5).contains(s))
                .with_context(|| format!("--score {a:?}: the score must be 1-5"))?;
            Ok((n, s))
        })
        .collect()
}

#[derive(Debug, Serialize)]
struct GradeOut {
    session: String,
    stage: &'static str,
    scores: BTreeMap<u32, u8>,
    blind_scores: BTreeMap<u32, u8>,
    verdict: Option<&'static str>,
    blind_verdict: Option<&'static str>,
    revisions: usize,
    missing: String,
}

fn grade_out(ws: &Workspace, id: &str) -> anyhow::Result<GradeOut> {
    let st = ws.journal.review_state(id)?;
    Ok(GradeOut {
        session: id.to_string(),
        stage: st.stage.label(),
        scores: st.scores.iter().map(|c| (c.interval, c.current)).collect(),
        blind_scores: st.scores.iter().map(|c| (c.interval, c.blind)).collect(),
        verdict: st.verdict.as_ref().map(|v| v.current.as_str()),
        blind_verdict: st.verdict.as_ref().map(|v| v.blind.as_str()),
        revisions: ws.journal.revisions(id)?.len(),
        missing: st.missing.to_string(),
    })
}

/// A refused write, said once: the journal's reason and that nothing of the action was kept.
fn nothing_saved(e: JournalError) -> anyhow::Error {
    let text = e.to_string();
    if text.contains("nothing was saved") {
        anyhow::anyhow!(text)
    } else {
        anyhow::anyhow!("{text}; nothing was saved")
    }
}

/// `splitdesk grade SESSION --score N=S ... --verdict V`.
pub fn grade(
    ws: &mut Workspace,
    id: &str,
    scores: &[(u32, u8)],
    verdict: Option<&str>,
    json: bool,
) -> anyhow::Result<i32> {
    let unreadable = refresh_or_unreadable(ws, id)?;
    let verdict = match verdict {
        Some(v) => Some(PurposeVerdict::parse(v).with_context(|| {
            format!("--verdict {v:?}: expected met, partly or missed; nothing was saved")
        })?),
        None => None,
    };
    if let (Some(why), false) = (&unreadable, scores.is_empty()) {
        bail!(
            "{id}: the file cannot be read ({why}), so it has no work intervals to score; \
             close it with the purpose verdict alone (--verdict met|partly|missed); nothing was saved"
        );
    }
    // Checked as a whole, then written in one transaction: all of it or nothing.
    ws.journal
        .grade(id, scores, verdict, Utc::now())
        .map_err(nothing_saved)?;
    let out = grade_out(ws, id)?;
    if json {
        crate::cli::out::json(&out)?;
    } else {
        let scores: Vec<String> = out
            .scores
            .iter()
            .map(|(k, v)| match out.blind_scores.get(k) {
                Some(b) if b != v => format!("{k}={b}→{v}"),
                _ => format!("{k}={v}"),
            })
            .collect();
        println!(
            "{id}: {}; scores {}; verdict {}",
            out.stage,
            if scores.is_empty() {
                "none".into()
            } else {
                scores.join(" ")
            },
            match (out.blind_verdict, out.verdict) {
                (Some(b), Some(v)) if b != v => format!("{b}→{v}"),
                (_, Some(v)) => v.to_string(),
                _ => "not set".into(),
            }
        );
        if out.missing != journal::Missing::default().to_string() {
            println!("still needed before the notes: {}", out.missing);
        }
        if let Some(line) = close_line(ws, id)? {
            println!("{line}");
        }
    }
    Ok(0)
}

/// After a verdict-only grade: what it closed and what comes next, in one line.
fn close_line(ws: &Workspace, id: &str) -> anyhow::Result<Option<String>> {
    let st = ws.journal.review_state(id)?;
    if st.revealed_at.is_some() || !st.missing.is_empty() || st.work_intervals != Some(0) {
        return Ok(None);
    }
    Ok(Some(match &st.unreadable_seen {
        Some(why) => format!(
            "closed with the verdict alone: the file cannot be read ({why}), and the verdict \
             records that you saw this; the notes can be read now (splitdesk notes {id})"
        ),
        None => format!(
            "quick close: no work intervals, so the purpose verdict is the whole blind grade; \
             the notes can be read now (splitdesk notes {id})"
        ),
    }))
}

/// `splitdesk notes SESSION`: the athlete's note, once grading is complete (else exit 3).
pub fn notes(ws: &mut Workspace, id: &str, json: bool) -> anyhow::Result<i32> {
    let unreadable = refresh_or_unreadable(ws, id)?;
    let permit = match ws.journal.reveal(id, Utc::now()) {
        Ok(p) => p,
        Err(JournalError::NotYetGraded { missing, .. }) => {
            let st = ws.journal.review_state(id)?;
            let message = match (&unreadable, st.work_intervals) {
                (Some(why), _) => format!(
                    "{id}: the file cannot be read ({why}); the notes stay hidden until \
                     you give the purpose verdict, which records that you saw this \
                     (splitdesk grade {id} --verdict met|partly|missed)"
                ),
                (None, Some(0)) => format!(
                    "{id}: notes stay hidden until grading is complete: {missing} \
                     (no work intervals: splitdesk grade {id} --verdict met|partly|missed closes it)"
                ),
                _ => format!("{id}: notes stay hidden until grading is complete: {missing}"),
            };
            eprintln!("error: {message}");
            if json {
                crate::cli::out::json_error(
                    &message,
                    EXIT_BLIND,
                    serde_json::json!({ "session": id, "missing": missing.to_string() }),
                )?;
            }
            return Ok(EXIT_BLIND);
        }
        Err(e) => return Err(e.into()),
    };
    let (_, act) = ws.find(id)?;
    let act = act.clone();
    // The note embedded in the file (TCX Notes / GPX desc) counts too.
    let embedded = crate::ingest::ingest_file(&act.path, None)
        .ok()
        .and_then(|s| s.note);
    let note = journal::read_note(&permit, act.note_file.as_deref(), embedded.as_deref());
    // On a staff journal the colleagues' blind grades come with the notes: under the same
    // rule, once this coach's own blind grading is complete.
    let colleagues = if ws.journal.coach().is_empty() {
        Vec::new()
    } else {
        ws.journal.colleague_grades(id)?
    };
    if json {
        let mut out = serde_json::Map::new();
        out.insert("session".into(), serde_json::json!(id));
        out.insert("note".into(), serde_json::json!(note));
        if !ws.journal.coach().is_empty() {
            let list: Vec<serde_json::Value> = colleagues
                .iter()
                .map(|c| {
                    serde_json::json!({
                        "coach": c.coach,
                        "scores": c.scores.iter()
                            .map(|(i, s)| serde_json::json!({"interval": i, "score": s}))
                            .collect::<Vec<_>>(),
                        "verdict": c.verdict.map(|v| v.as_str()),
                        "revealed": c.revealed,
                    })
                })
                .collect();
            out.insert("colleagues".into(), serde_json::Value::Array(list));
        }
        let out = serde_json::Value::Object(out);
        crate::cli::out::json(&out)?;
    } else {
        match note {
            Some(n) => println!("{}", n.trim_end()),
            None => println!("(no note from the athlete)"),
        }
        if !colleagues.is_empty() {
            println!();
            println!("Colleagues' blind grades (shown now that yours are complete):");
            for c in &colleagues {
                let scores: Vec<String> =
                    c.scores.iter().map(|(i, s)| format!("{i}={s}")).collect();
                let verdict = c.verdict.map_or("no verdict yet".to_string(), |v| {
                    format!("verdict {}", v.as_str())
                });
                println!(
                    "  {}: {}; {verdict}",
                    crate::roster::printable(&c.coach),
                    if scores.is_empty() {
                        "no scores yet".to_string()
                    } else {
                        scores.join(" ")
                    }
                );
            }
        }
    }
    Ok(0)
}

/// `splitdesk seen SESSION [--undo]`: mark a session as looked at without a grade (out of
/// the queue, notes hidden), or bring it back.
pub fn seen(ws: &mut Workspace, id: &str, undo: bool, json: bool) -> anyhow::Result<i32> {
    refresh_or_unreadable(ws, id)?;
    let result = if undo {
        ws.journal.unmark_seen(id, Utc::now())
    } else {
        ws.journal.mark_seen(id, Utc::now())
    };
    let changed = match result {
        Ok(c) => c,
        Err(JournalError::AlreadyRevealed { .. }) => bail!(
            "{id}: the notes are revealed already, so the session is reviewed; \
             nothing to mark (nothing was saved)"
        ),
        Err(e) => return Err(nothing_saved(e)),
    };
    let st = ws.journal.review_state(id)?;
    if json {
        crate::cli::out::json(&serde_json::json!({
            "session": id,
            "seen": st.seen_at.is_some(),
            "changed": changed,
            "stage": st.stage.label(),
        }))?;
        return Ok(0);
    }
    match (undo, changed) {
        (false, true) => println!(
            "{id}: marked seen without a grade; it is out of the queue and its notes stay \
             hidden (undo: splitdesk seen {id} --undo)"
        ),
        (false, false) => println!("{id}: already marked seen; nothing changed"),
        (true, true) => println!("{id}: back in the queue ({})", st.stage.label()),
        (true, false) => println!("{id}: was not marked seen; nothing changed"),
    }
    Ok(0)
}

/// The draft for a session, after the reveal: from its review, the coach's grades and the
/// athlete's note.
pub fn draft_for(ws: &mut Workspace, id: &str, style: &FeedbackStyle) -> anyhow::Result<String> {
    let review = ws.refresh(id, Utc::now())?;
    let state = ws.journal.review_state(id)?;
    if state.revealed_at.is_none() {
        bail!("{id}: the draft is written after the reveal: grade the session blind and read the notes first (splitdesk notes {id})");
    }
    let (note, marks) = note_and_marks(ws, id)?;
    let earlier = earlier_runs(ws, id);
    let (athlete, _) = ws.find(id)?;
    let profile = athlete.profile.clone();
    let input = DraftInput {
        review: &review,
        profile: &profile,
        grades: Grades::from_state(&state),
        note: note.as_deref(),
        marks,
        earlier: earlier.as_ref(),
    };
    Ok(crate::export::feedback::draft(&input, style))
}

/// The session beside its earlier runs of the same workout, for the draft; `None` when the
/// journal cannot say (the draft then leaves the comparison out).
fn earlier_runs(ws: &Workspace, id: &str) -> Option<crate::analysis::earlier::Comparison> {
    let (athlete, _) = ws.find(id).ok()?;
    crate::context::comparison(&ws.journal, athlete, id).ok()
}

/// The athlete's note (through the reveal permit: the session must be revealed) and the
/// coach's ruler marks fitted on the cleaned samples. The file is analysed again only when
/// there are marks; otherwise it is read for an embedded note alone.
fn note_and_marks(
    ws: &mut Workspace,
    id: &str,
) -> anyhow::Result<(Option<String>, Vec<crate::analysis::ruler::RulerFit>)> {
    // Revealed already: this only hands back the permit to read the note.
    let permit = ws.journal.reveal(id, Utc::now())?;
    let rulers = ws.journal.rulers(id)?;
    let (athlete, act) = ws.find(id)?;
    let (embedded, marks) = if rulers.is_empty() {
        let note = crate::ingest::ingest_file(&act.path, None)
            .ok()
            .and_then(|s| s.note);
        (note, Vec::new())
    } else {
        match crate::workspace::analyse_activity(athlete, act) {
            Ok(a) => {
                let marks = rulers
                    .iter()
                    .map(|r| crate::analysis::ruler::fit_window(&a.session, r.from_s, r.to_s))
                    .collect();
                (a.session.note, marks)
            }
            Err(_) => (None, Vec::new()),
        }
    };
    let note_file = act.note_file.clone();
    let note = journal::read_note(&permit, note_file.as_deref(), embedded.as_deref());
    Ok((note, marks))
}

/// The feedback to send: the saved text, else the draft.
fn current_feedback(
    ws: &mut Workspace,
    id: &str,
    style: &FeedbackStyle,
) -> anyhow::Result<(String, bool)> {
    match ws.journal.feedback(id) {
        Ok(Some(v)) => Ok((v.body, true)),
        Ok(None) | Err(JournalError::NotRevealed { .. }) => Ok((draft_for(ws, id, style)?, false)),
        Err(e) => Err(e.into()),
    }
}

/// Open `$EDITOR` (or `$VISUAL`, else `vi`) on `text`; returns the edited text.
pub fn edit_in_editor(text: &str) -> anyhow::Result<String> {
    let editor = std::env::var("VISUAL")
        .or_else(|_| std::env::var("EDITOR"))
        .unwrap_or_else(|_| "vi".to_string());
    let mut file = tempfile::Builder::new()
        .prefix("splitdesk-feedback-")
        .suffix(".txt")
        .tempfile()
        .context("temporary file for the editor")?;
    file.write_all(text.as_bytes())?;
    file.flush()?;
    let mut parts = editor.split_whitespace();
    let program = parts.next().unwrap_or("vi");
    let status = std::process::Command::new(program)
        .args(parts)
        .arg(file.path())
        .status()
        .with_context(|| format!("could not start the editor {editor:?}"))?;
    if !status.success() {
        bail!("the editor {editor:?} exited with {status}; feedback left unchanged");
    }
    std::fs::read_to_string(file.path()).context("reading the edited feedback")
}

/// What `splitdesk feedback` should do.
pub enum FeedbackAction {
    Show,
    Draft,
    Set(PathBuf),
    Edit,
}

/// `splitdesk feedback SESSION [--draft | --set FILE | --edit]`.
pub fn feedback(
    ws: &mut Workspace,
    id: &str,
    action: FeedbackAction,
    json: bool,
    style: &FeedbackStyle,
) -> anyhow::Result<i32> {
    let text = match action {
        FeedbackAction::Draft => draft_for(ws, id, style)?,
        FeedbackAction::Show => current_feedback(ws, id, style)?.0,
        FeedbackAction::Set(path) => {
            let text =
                std::fs::read_to_string(&path).with_context(|| path.display().to_string())?;
            ws.journal.save_feedback(id, &text, Utc::now())?;
            text
        }
        FeedbackAction::Edit => {
            // Fail before the editor opens when the notes are not revealed yet.
            if ws.journal.review_state(id)?.revealed_at.is_none() {
                bail!("{id}: feedback is written after the reveal: grade the session and read the notes first (splitdesk notes {id})");
            }
            let (current, _) = current_feedback(ws, id, style)?;
            let edited = edit_in_editor(&current)?;
            ws.journal.save_feedback(id, &edited, Utc::now())?;
            edited
        }
    };
    if json {
        crate::cli::out::json(&serde_json::json!({ "session": id, "feedback": text }))?;
    } else {
        print!("{text}");
        if !text.ends_with('\n') {
            println!();
        }
    }
    Ok(0)
}

/// The sessions whose file can be read; each one left out is named on stderr (its feedback
/// has no analysis to draft from).
fn without_unreadable(entries: Vec<QueueEntry>) -> Vec<QueueEntry> {
    entries
        .into_iter()
        .filter(|e| match &e.file_unreadable {
            Some(why) => {
                eprintln!(
                    "left out: {} (the file cannot be read: {why}; save its feedback with splitdesk feedback {} --set FILE)",
                    e.session_id, e.session_id
                );
                false
            }
            None => true,
        })
        .collect()
}

/// Which sessions an export covers.
#[derive(Debug, Default, Clone)]
pub struct Filter {
    pub athlete: Option<String>,
    pub date: Option<NaiveDate>,
    pub since: Option<NaiveDate>,
}

impl Filter {
    fn keeps(&self, e: &QueueEntry) -> bool {
        let day = session_day(&e.session_id, e.start);
        self.athlete.as_ref().is_none_or(|a| &e.athlete == a)
            && self.date.is_none_or(|d| day == d)
            && self.since.is_none_or(|d| day >= d)
    }
}

/// Parse a `YYYY-MM-DD` flag.
pub fn parse_date(flag: &str, s: &str) -> anyhow::Result<NaiveDate> {
    NaiveDate::parse_from_str(s, "%Y-%m-%d")
        .with_context(|| format!("{flag} {s:?}: expected a date like 2026-11-03"))
}

#[derive(Debug, Serialize)]
struct FeedbackBlock {
    session: String,
    athlete: String,
    name: String,
    date: String,
    title: String,
    feedback: String,
    saved: bool,
}

/// `splitdesk export feedback [--date D | --athlete A | --since D] [--format text|md|json]`.
/// Only sessions whose notes were revealed (the review is done); the saved text, else the draft.
pub fn export_feedback(
    ws: &mut Workspace,
    filter: &Filter,
    format: &str,
    style: &FeedbackStyle,
) -> anyhow::Result<i32> {
    if !matches!(format, "text" | "md" | "json") {
        bail!("--format {format:?}: expected text, md or json");
    }
    let mut style = style.clone();
    if format == "md" {
        style.format = crate::export::feedback::Format::Markdown;
    }
    let style = &style;
    if let Some(day) = filter.date {
        return export_day(ws, filter, day, format, style);
    }
    let entries: Vec<QueueEntry> = ws
        .journal
        .sessions(None)?
        .into_iter()
        .rev()
        .filter(|e| filter.keeps(e) && e.stage.is_revealed())
        .collect();
    let entries = without_unreadable(entries);
    let mut blocks = Vec::new();
    let mut not_recorded = false;
    for e in &entries {
        let review = ws.refresh(&e.session_id, Utc::now())?;
        let (text, saved) = current_feedback(ws, &e.session_id, style)?;
        let name = ws
            .roster
            .athlete(&e.athlete)
            .map(|a| a.profile.name.clone())
            .unwrap_or_else(|| e.athlete.clone());
        blocks.push(FeedbackBlock {
            session: e.session_id.clone(),
            athlete: e.athlete.clone(),
            name,
            date: session_day(&e.session_id, e.start).to_string(),
            title: title(&review),
            feedback: text,
            saved,
        });
        match ws.journal.record_feedback_event(
            &e.session_id,
            FeedbackEventKind::Exported,
            Utc::now(),
        ) {
            Ok(()) => {}
            Err(JournalError::ReadOnly { .. }) => not_recorded = true,
            Err(e) => return Err(e.into()),
        }
    }
    match format {
        "json" => crate::cli::out::json(&blocks)?,
        "md" => {
            for b in &blocks {
                println!("## {} — {} ({})\n", b.name, b.title, b.date);
                println!("{}\n", b.feedback.trim_end());
            }
        }
        _ => {
            for (k, b) in blocks.iter().enumerate() {
                if k > 0 {
                    println!("\n----------------------------------------\n");
                }
                println!("To {} | {} | {}\n", b.name, b.date, b.title);
                println!("{}", b.feedback.trim_end());
            }
        }
    }
    if not_recorded {
        eprintln!(
            "note: {}: this export was not recorded as sent (nothing can be saved there)",
            ws.journal.path().display()
        );
    }
    if blocks.is_empty() {
        eprintln!("no reviewed sessions match (feedback is exported once the notes were revealed)");
    }
    Ok(0)
}

/// One athlete's message for a day, as `export feedback --date` prints it.
#[derive(Debug, Serialize)]
struct DayBlock {
    athlete: String,
    name: String,
    date: String,
    /// The sessions in the message, in start order.
    sessions: Vec<String>,
    titles: Vec<String>,
    /// Sessions whose saved (edited) feedback was used as it is; the others were drafted.
    saved: Vec<String>,
    message: String,
}

/// What one session of the day brings to the message.
struct DaySession {
    id: String,
    title: String,
    review: Review,
    grades: Grades,
    note: Option<String>,
    marks: Vec<crate::analysis::ruler::RulerFit>,
    /// The session beside its earlier runs of the same workout (when the journal has it).
    earlier: Option<crate::analysis::earlier::Comparison>,
    saved: Option<String>,
}

/// A revealed session's part of the day: its saved feedback, else what its draft is made
/// of (the review, the grades in force, the note read through the reveal permit).
fn day_session(ws: &mut Workspace, id: &str) -> anyhow::Result<DaySession> {
    let review = ws.refresh(id, Utc::now())?;
    let title = title(&review);
    let saved = match ws.journal.feedback(id) {
        Ok(v) => v.map(|v| v.body),
        Err(JournalError::NotRevealed { .. }) => None,
        Err(e) => return Err(e.into()),
    };
    let state = ws.journal.review_state(id)?;
    let (note, marks) = if saved.is_some() {
        (None, Vec::new())
    } else {
        note_and_marks(ws, id)?
    };
    let earlier = match saved {
        Some(_) => None,
        None => earlier_runs(ws, id),
    };
    Ok(DaySession {
        id: id.to_string(),
        title,
        review,
        grades: Grades::from_state(&state),
        note,
        marks,
        earlier,
        saved,
    })
}

/// `splitdesk export feedback --date D`: one message per athlete (roster order) with the
/// day's revealed sessions in start order; saved feedback is used as the coach edited it,
/// the other sessions are drafted. The sessions of the day not reviewed yet are named on
/// stderr. Each message is recorded as exported in one transaction.
fn export_day(
    ws: &mut Workspace,
    filter: &Filter,
    day: NaiveDate,
    format: &str,
    style: &FeedbackStyle,
) -> anyhow::Result<i32> {
    let mut entries: Vec<QueueEntry> = ws
        .journal
        .sessions(None)?
        .into_iter()
        .filter(|e| filter.keeps(e))
        .collect();
    entries.sort_by(|a, b| (a.start, &a.session_id).cmp(&(b.start, &b.session_id)));
    let (pending, done): (Vec<QueueEntry>, Vec<QueueEntry>) =
        entries.into_iter().partition(|e| !e.stage.is_revealed());
    let done = without_unreadable(done);
    // Athletes in roster order; any the roster no longer lists after them, by id.
    let mut athletes: Vec<String> = ws
        .roster
        .athletes
        .iter()
        .map(|a| a.id.clone())
        .filter(|id| done.iter().any(|e| &e.athlete == id))
        .collect();
    let mut strays: Vec<String> = done
        .iter()
        .map(|e| e.athlete.clone())
        .filter(|a| !athletes.contains(a))
        .collect();
    strays.sort();
    strays.dedup();
    athletes.extend(strays);

    let mut blocks = Vec::new();
    let mut not_recorded = false;
    for athlete in &athletes {
        let mut sessions = Vec::new();
        for e in done.iter().filter(|e| &e.athlete == athlete) {
            sessions.push(day_session(ws, &e.session_id)?);
        }
        let profile = match ws.roster.athlete(athlete) {
            Some(a) => a.profile.clone(),
            None => match sessions.first() {
                Some(s) => ws.find(&s.id)?.0.profile.clone(),
                None => continue,
            },
        };
        let parts: Vec<DayPart<'_>> = sessions
            .iter()
            .map(|s| match &s.saved {
                Some(text) => DayPart::Saved(text),
                None => DayPart::Draft(DraftInput {
                    review: &s.review,
                    profile: &profile,
                    grades: s.grades.clone(),
                    note: s.note.as_deref(),
                    marks: s.marks.clone(),
                    earlier: s.earlier.as_ref(),
                }),
            })
            .collect();
        let message = crate::export::feedback::day_message(&profile, &parts, style);
        let ids: Vec<&str> = sessions.iter().map(|s| s.id.as_str()).collect();
        match ws
            .journal
            .record_feedback_events(&ids, FeedbackEventKind::Exported, Utc::now())
        {
            Ok(()) => {}
            Err(JournalError::ReadOnly { .. }) => not_recorded = true,
            Err(e) => return Err(e.into()),
        }
        blocks.push(DayBlock {
            athlete: athlete.clone(),
            name: profile.name.clone(),
            date: day.to_string(),
            sessions: sessions.iter().map(|s| s.id.clone()).collect(),
            titles: sessions.iter().map(|s| s.title.clone()).collect(),
            saved: sessions
                .iter()
                .filter(|s| s.saved.is_some())
                .map(|s| s.id.clone())
                .collect(),
            message,
        });
    }
    match format {
        "json" => crate::cli::out::json(&blocks)?,
        "md" => {
            for b in &blocks {
                println!("## {} — {} ({})\n", b.name, b.titles.join(", "), b.date);
                println!("{}\n", b.message.trim_end());
            }
        }
        _ => {
            for (k, b) in blocks.iter().enumerate() {
                if k > 0 {
                    println!("\n----------------------------------------\n");
                }
                println!("To {} | {} | {}\n", b.name, b.date, b.titles.join(", "));
                println!("{}", b.message.trim_end());
            }
        }
    }
    if not_recorded {
        eprintln!(
            "note: {}: this export was not recorded as sent (nothing can be saved there)",
            ws.journal.path().display()
        );
    }
    for e in &pending {
        let title = ws
            .refresh(&e.session_id, Utc::now())
            .map(|r| title(&r))
            .unwrap_or_default();
        eprintln!(
            "not reviewed yet, left out: {} ({title}; {})",
            e.session_id,
            e.stage.label()
        );
    }
    let sessions: usize = blocks.iter().map(|b| b.sessions.len()).sum();
    eprintln!(
        "{day}: {} for {sessions} reviewed {}; {} of that day not reviewed yet",
        plural(blocks.len(), "message", "messages"),
        if sessions == 1 { "session" } else { "sessions" },
        plural(pending.len(), "session", "sessions"),
    );
    Ok(0)
}

fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// `splitdesk export intervals [--athlete A] [--since D] --csv`: one row per interval.
pub fn export_intervals(ws: &mut Workspace, filter: &Filter) -> anyhow::Result<i32> {
    // A session whose file cannot be read has no intervals: it has no rows (the queue and
    // `check` name it).
    let entries: Vec<QueueEntry> = ws
        .journal
        .sessions(None)?
        .into_iter()
        .rev()
        .filter(|e| filter.keeps(e) && e.file_unreadable.is_none())
        .collect();
    let mut w = csv::Writer::from_writer(std::io::stdout().lock());
    w.write_record([
        "session",
        "athlete",
        "date",
        "title",
        "index",
        "kind",
        "work_number",
        "source",
        "start_s",
        "end_s",
        "duration_s",
        "distance_m",
        "avg_pace_s_per_km",
        "hill_adjusted_pace_s_per_km",
        "avg_hr",
        "max_hr",
        "end_hr",
        "avg_cadence_spm",
        "relative_intensity",
        "first_half_pace_s_per_km",
        "second_half_pace_s_per_km",
        "decoupling_pct",
        "target",
        "in_target_pct",
        "target_hit",
        "blind_score",
        "score",
    ])?;
    let opt = |v: Option<f64>| v.map(|x| format!("{x:.3}")).unwrap_or_default();
    for e in &entries {
        let review = ws.refresh(&e.session_id, Utc::now())?;
        let state = ws.journal.review_state(&e.session_id)?;
        let scores: BTreeMap<u32, (u8, u8)> = state
            .scores
            .iter()
            .map(|c| (c.interval, (c.blind, c.current)))
            .collect();
        for m in &review.intervals {
            let sc = m.work_number.and_then(|n| scores.get(&(n as u32)));
            // The journal's rule is a score of 1-5; anything else (a hand-edited journal) is
            // left out of the CSV with a warning rather than passed on silently.
            let sc = sc.map(|&(blind, current)| {
                let keep = |what: &str, v: u8| {
                    if (1..=5).contains(&v) || (what == "current" && v == blind) {
                        Some(v)
                    } else {
                        eprintln!(
                            "warning: {}: work interval {}: the journal holds {what} score {v}, \
                             outside 1-5; left empty in the export",
                            crate::roster::printable(&e.session_id),
                            m.work_number.unwrap_or(0)
                        );
                        None
                    }
                };
                let ok = |v: u8| Some(v).filter(|v| (1..=5).contains(v));
                let (b, c) = (keep("blind", blind), keep("current", current));
                (b.and(ok(blind)), c.and(ok(current)))
            });
            w.write_record([
                e.session_id.clone(),
                e.athlete.clone(),
                session_day(&e.session_id, e.start).to_string(),
                title(&review),
                m.index.to_string(),
                m.kind.clone(),
                m.work_number.map(|n| n.to_string()).unwrap_or_default(),
                m.source.clone(),
                format!("{:.1}", m.start_s),
                format!("{:.1}", m.end_s),
                format!("{:.1}", m.duration_s),
                opt(m.distance_m),
                opt(m.avg_pace_s_per_km),
                opt(m.hill_adjusted_pace_s_per_km),
                opt(m.avg_hr),
                opt(m.max_hr),
                opt(m.end_hr),
                opt(m.avg_cadence_spm),
                opt(m.relative_intensity),
                opt(m.first_half_pace_s_per_km),
                opt(m.second_half_pace_s_per_km),
                opt(m.decoupling_pct),
                m.target.clone().unwrap_or_default(),
                opt(m.in_target_pct),
                m.target_hit.map(|h| h.to_string()).unwrap_or_default(),
                sc.and_then(|s| s.0)
                    .map(|v| v.to_string())
                    .unwrap_or_default(),
                sc.and_then(|s| s.1)
                    .map(|v| v.to_string())
                    .unwrap_or_default(),
            ])?;
        }
    }
    w.flush()?;
    Ok(0)
}

/// Chart size for `export chart`, pixels (PNG) or user units (SVG).
pub const CHART_SIZE: (u32, u32) = (1200, 520);

/// `splitdesk export chart SESSION --out FILE.svg|FILE.png`.
pub fn export_chart(ws: &mut Workspace, id: &str, out: &Path) -> anyhow::Result<i32> {
    let ext = out
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    if !matches!(ext.as_deref(), Some("svg") | Some("png")) {
        bail!("{}: the chart is written as .svg or .png", out.display());
    }
    let (athlete, act) = ws.find(id)?;
    let (athlete, act) = (athlete.clone(), act.clone());
    let analysed = crate::workspace::analyse_activity(&athlete, &act)?;
    ws.record(&analysed, Utc::now())?;
    let rulers: Vec<(f64, f64)> = ws
        .journal
        .rulers(id)?
        .iter()
        .map(|r| (r.from_s, r.to_s))
        .collect();
    let model = crate::export::chart::model(
        &analysed.session,
        &analysed.review,
        &rulers,
        athlete.profile.units,
    );
    let (w, h) = CHART_SIZE;
    let bytes = if ext.as_deref() == Some("svg") {
        crate::export::chart::svg(&model, w, h).into_bytes()
    } else {
        crate::export::chart::png(&model, w, h)
            .map_err(|e| anyhow::anyhow!("{}: {e}", out.display()))?
    };
    std::fs::write(out, bytes).with_context(|| out.display().to_string())?;
    println!(
        "{}: chart of {id} ({})",
        out.display(),
        crate::cli::out::count(rulers.len(), "ruler", "rulers")
    );
    Ok(0)
}

/// `splitdesk bias-check [--athlete A] [--json]`.
pub fn bias_check(ws: &mut Workspace, athlete: Option<&str>, json: bool) -> anyhow::Result<i32> {
    let mut cases = Vec::new();
    for input in ws.journal.bias_inputs()? {
        if athlete.is_some_and(|a| a != input.athlete) {
            continue;
        }
        // Revealed already: the permit is granted without changing anything.
        let tone = match ws.journal.reveal(&input.session_id, Utc::now()) {
            Ok(permit) => {
                let act = ws.find(&input.session_id).ok().map(|(_, a)| a.clone());
                let embedded = act
                    .as_ref()
                    .and_then(|a| crate::ingest::ingest_file(&a.path, None).ok())
                    .and_then(|s| s.note);
                journal::read_note(
                    &permit,
                    act.as_ref().and_then(|a| a.note_file.as_deref()),
                    embedded.as_deref(),
                )
                .map(|n| crate::bias::tone(&n))
            }
            Err(_) => None,
        };
        cases.push(crate::bias::BiasCase { input, tone });
    }
    let seen: Vec<String> = ws
        .journal
        .seen_sessions(athlete)?
        .into_iter()
        .map(|e| e.athlete)
        .collect();
    let report = crate::bias::report_with_seen(&cases, &seen);
    if json {
        crate::cli::out::json(&report)?;
    } else {
        // On a staff journal the check is of this coach's own grades.
        if !ws.journal.coach().is_empty() {
            println!(
                "{}'s grades (each coach's bias check is their own):",
                crate::roster::printable(ws.journal.coach())
            );
        }
        println!("overall: {}", report.overall.text);
        for (a, s) in &report.athletes {
            println!("  {a}: {}", s.text);
        }
        println!(
            "(tone is a simple word-list measure of the athlete's note; see `splitdesk bias-check --help`)"
        );
    }
    Ok(0)
}

/// `splitdesk journal backup FILE`.
pub fn journal_backup(ws: &Workspace, dest: &Path) -> anyhow::Result<i32> {
    ws.journal.backup_outside_roster(dest, &ws.roster.root)?;
    println!(
        "{}: backup of {} written",
        dest.display(),
        ws.journal.path().display()
    );
    Ok(0)
}

/// `splitdesk journal check`: exit 1 when SQLite reports a problem.
pub fn journal_check(ws: &Workspace, json: bool) -> anyhow::Result<i32> {
    let r = ws.journal.check()?;
    if json {
        crate::cli::out::json(&serde_json::json!({
            "journal": ws.journal.path(),
            "ok": r.is_ok(),
            "problems": r.problems,
            "cache_problems": r.cache_problems,
            "schema_version": r.schema_version,
            "sessions": r.sessions,
            "reviews": r.reviews,
            "scores": r.scores,
            "revisions": r.revisions,
            "feedback_versions": r.feedback_versions,
            "feedback_events": r.feedback_events,
            "rulers": r.rulers,
        }))?;
    } else {
        use crate::cli::out::count;
        if let Some(tls) = ws.journal.server_tls()? {
            println!(
                "{}: a journal on a PostgreSQL server, connection {}",
                ws.journal.path().display(),
                if tls {
                    "encrypted (TLS)"
                } else {
                    "not encrypted (sslmode=require insists on TLS)"
                }
            );
        }
        println!(
            "{}: {} (schema {}; {}, {}, {}, {}, {}, {})",
            ws.journal.path().display(),
            if r.is_ok() { "ok" } else { "PROBLEMS" },
            r.schema_version,
            count(r.sessions, "session", "sessions"),
            count(r.reviews, "review", "reviews"),
            count(r.scores, "score", "scores"),
            count(r.revisions, "revision", "revisions"),
            count(r.feedback_versions, "feedback version", "feedback versions"),
            count(r.rulers, "ruler", "rulers"),
        );
        for p in &r.problems {
            println!("  {p}");
        }
        for p in &r.cache_problems {
            println!("  {}", crate::roster::printable(p));
        }
    }
    Ok(if r.is_ok() { 0 } else { 1 })
}
