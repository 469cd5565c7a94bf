//! Every session can be closed in the workstation, and no feedback edit is lost silently:
//! the quick close of an easy run (the verdict alone), "seen" without a grade, the
//! verdict-only close of a session whose file cannot be read, and the question asked before
//! leaving a session with an unsaved feedback edit.
//!
//! First through `App::handle` (no terminal), then end to end: the real binary in tmux (its
//! own server socket, never the default one) on copies of demo sessions. Uses
//! `$SPLITDESK_E2E_BIN` when set, else the test build. Needs tmux: skipped with a message
//! when it is missing, except under `CI=true`, where that is a failure.

mod tmux_support;
mod tui_support;

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crossterm::event::KeyCode;
use splitdesk::journal::{Journal, ReviewStage};
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Focus, Leave, Modal, LEAVE_TITLE};
use tmux_support::{binary, copy_dir, need_tmux, run, Tmux};
use tui_support::*;

// ----- App::handle -----

const BROKEN: &str = "ines-aldana/2024-03-05-broken";
const BROKEN_NOTE: &str = "Watch froze at the first turn, sorry.";

/// The test roster plus an activity file that cannot be read (a truncated copy of the
/// interval session) with a note, every session scanned.
fn app_with_broken(dir: &Path) -> App {
    build_roster(dir);
    let acts = dir.join("ines-aldana/activities");
    let full = std::fs::read(acts.join("2024-03-04-intervals.fit")).unwrap();
    std::fs::write(acts.join("2024-03-05-broken.fit"), &full[..full.len() / 2]).unwrap();
    std::fs::create_dir_all(dir.join("ines-aldana/notes")).unwrap();
    std::fs::write(
        dir.join("ines-aldana/notes/2024-03-05-broken.txt"),
        format!("{BROKEN_NOTE}\n"),
    )
    .unwrap();
    scanned_app(
        Roster::open(dir).unwrap(),
        Journal::open_in_memory().unwrap(),
        Some(dir.join("feedback-out")),
    )
}

fn open(app: &mut App, id: &str) {
    let fx = app.open_session(id);
    run_effects(app, fx);
}

#[test]
fn an_easy_run_closes_with_the_verdict_alone() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open(&mut app, EASY);
    assert_eq!(app.open.as_ref().unwrap().work_count(), 0);
    ch(&mut app, '3');
    assert_eq!(
        message(&app),
        "no work intervals to score: give the purpose verdict (v)"
    );
    ch(&mut app, 'o');
    assert!(
        message(&app).contains("purpose verdict not set"),
        "{}",
        message(&app)
    );
    ch(&mut app, 'v');
    assert_eq!(
        message(&app),
        "purpose verdict: met · quick close: no work intervals, so the verdict is the blind grade; o reads the notes"
    );
    ch(&mut app, 'o');
    assert!(app.open.as_ref().unwrap().revealed());
    assert_eq!(
        app.journal.review_state(EASY).unwrap().stage,
        ReviewStage::Revealed
    );
    assert!(!app.queue.iter().any(|e| e.session_id == EASY));
}

#[test]
fn seen_takes_a_session_out_of_the_queue_and_back() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    assert_eq!(app.queue.len(), 3);
    open(&mut app, LONG);
    ch(&mut app, 'm');
    assert_eq!(
        message(&app),
        "marked seen: out of the queue, the notes stay hidden (m again brings it back) · 2 to review, 1 seen without a grade"
    );
    assert_eq!(app.seen_count, 1);
    assert!(!app.queue.iter().any(|e| e.session_id == LONG));
    // The status line counts it apart from the queue.
    let s = screen(&mut app, 160, 48);
    assert!(s.contains(" 2 to review · 1 seen "), "{s}");
    assert_eq!(
        app.journal.review_state(LONG).unwrap().stage,
        ReviewStage::Seen
    );
    assert!(
        app.open.as_ref().unwrap().note.is_none(),
        "note stays hidden"
    );
    // `]` goes on past it.
    ch(&mut app, ']');
    assert_eq!(app.open.as_ref().unwrap().session_id, INTERVALS);
    // From the roster: the session under the cursor.
    app.focus = Focus::Roster;
    app.cursor.athlete = Some("marco-bell".into());
    app.cursor.session = Some(LONG.into());
    ch(&mut app, 'm');
    assert_eq!(
        message(&app),
        "back in the queue · 3 to review, 0 seen without a grade"
    );
    assert!(app.queue.iter().any(|e| e.session_id == LONG));
}

#[test]
fn a_damaged_file_says_so_and_closes_with_the_verdict() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with_broken(dir.path());
    assert!(
        app.queue.iter().any(|e| e.session_id == BROKEN),
        "the damaged session is in the queue"
    );
    open(&mut app, BROKEN);
    let m = message(&app);
    assert!(
        m.starts_with(
            "the file cannot be read: v closes it with the purpose verdict alone, \
             then o reads the notes · FIT: truncated: header declares"
        ),
        "{m}"
    );
    assert!(!m.contains("still analysing"), "{m}");
    // The note stays hidden until the verdict.
    ch(&mut app, 'o');
    let m = message(&app);
    assert_eq!(
        m,
        "the file cannot be read: give the purpose verdict (v) first; it records that you saw this"
    );
    assert!(app.modal.is_none());
    assert!(app.open.as_ref().unwrap().note.is_none());
    let screen_text = screen(&mut app, 160, 48);
    assert!(!screen_text.contains(BROKEN_NOTE));
    // The verdict pane says what the coach can do.
    assert!(
        screen_text.contains("v closes this session with the purpose verdict alone"),
        "{screen_text}"
    );
    ch(&mut app, '4');
    assert!(
        message(&app).starts_with("the file cannot be read, so there is nothing to score"),
        "{}",
        message(&app)
    );
    ch(&mut app, 'v');
    assert_eq!(
        message(&app),
        "purpose verdict: met · closed with the verdict alone (the file cannot be read; noted); o reads the notes"
    );
    let st = app.journal.review_state(BROKEN).unwrap();
    assert!(st.unreadable_seen.unwrap().starts_with("FIT: truncated"));
    ch(&mut app, 'o');
    match &app.modal {
        Some(Modal::Notes(text)) => assert!(text.contains(BROKEN_NOTE), "{text}"),
        other => panic!("expected the note, got {other:?}"),
    }
    assert_eq!(
        app.journal.review_state(BROKEN).unwrap().stage,
        ReviewStage::Revealed
    );
    // Closed: the roster row shows its stage, no longer "unreadable".
    app.modal = None;
    let s = screen(&mut app, 160, 48);
    assert!(
        s.contains("Closed with the purpose verdict alone (met); o shows the notes."),
        "{s}"
    );
    let row = s
        .lines()
        .find(|l| l.contains("2024-03-05-broken") && l.contains("03-05"))
        .unwrap_or_else(|| panic!("{s}"));
    assert!(
        row.contains("revealed") && !row.contains("unreadable"),
        "{row}"
    );
}

/// An app on the revealed interval session with an unsaved inline feedback edit.
fn with_unsaved_edit(dir: &Path) -> App {
    let mut app = app_with(dir);
    grade_and_reveal(&mut app);
    ch(&mut app, 'f');
    key(&mut app, KeyCode::End);
    for c in " Kept or dropped?".chars() {
        ch(&mut app, c);
    }
    key(&mut app, KeyCode::Esc);
    assert!(app.unsaved());
    app
}

fn asked(app: &App) -> bool {
    matches!(&app.modal, Some(Modal::Message { title, .. }) if title == LEAVE_TITLE)
}

#[test]
fn leaving_with_an_unsaved_edit_asks_and_stay_keeps_it() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = with_unsaved_edit(dir.path());
    // `[` (the queue, backwards): asked, still here.
    ch(&mut app, '[');
    assert!(asked(&app));
    assert_eq!(app.pending_leave, Some(Leave::Open(LONG.into())));
    assert_eq!(app.open.as_ref().unwrap().session_id, INTERVALS);
    // Keys other than the answers wait.
    ch(&mut app, 'q');
    assert!(asked(&app));
    ch(&mut app, 'n');
    assert!(app.modal.is_none() && app.pending_leave.is_none());
    assert!(app.unsaved(), "the edit is still there");
    assert_eq!(
        message(&app),
        "stayed: the feedback edit is still not saved (C-s saves)"
    );
    assert!(app.journal.feedback(INTERVALS).unwrap().is_none());
    // The history view asks too.
    ch(&mut app, 't');
    assert!(asked(&app));
    key(&mut app, KeyCode::Esc);
    assert!(app.modal.is_none());
    // Enter on another session in the roster asks.
    app.focus = Focus::Roster;
    app.cursor.athlete = Some("ines-aldana".into());
    app.cursor.session = Some(EASY.into());
    key(&mut app, KeyCode::Enter);
    assert!(asked(&app));
    assert_eq!(app.pending_leave, Some(Leave::Open(EASY.into())));
    // `s` saves, then goes on.
    ch(&mut app, 's');
    assert!(app.modal.is_none());
    assert_eq!(app.open.as_ref().unwrap().session_id, EASY);
    let saved = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert!(saved.body.contains("Kept or dropped?"), "{}", saved.body);
}

#[test]
fn leaving_with_an_unsaved_edit_can_drop_it_on_purpose() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = with_unsaved_edit(dir.path());
    ch(&mut app, '[');
    assert!(asked(&app));
    ch(&mut app, 'y');
    assert_eq!(app.open.as_ref().unwrap().session_id, LONG);
    assert!(app.journal.feedback(INTERVALS).unwrap().is_none());
    // Reopening shows the draft, not the dropped edit.
    open(&mut app, INTERVALS);
    let text = app.open.as_ref().unwrap().feedback.as_ref().unwrap().text();
    assert!(!text.contains("Kept or dropped?"));
    // Quitting still asks its own question.
    let mut app = with_unsaved_edit(tempfile::tempdir().unwrap().path());
    ch(&mut app, 'q');
    assert_eq!(app.modal, Some(Modal::ConfirmQuit));
    // Enter on the open session itself does not leave it: no question, nothing lost.
    ch(&mut app, 'n');
    open(&mut app, INTERVALS);
    assert!(app.modal.is_none());
    assert!(app.unsaved());
}

// ----- the real binary in tmux -----

const ATHLETE: &str = "oren-falkner";
const EASY_RUN: &str = "oren-falkner/2026-10-19-easy-run";
const NEXT_EASY: &str = "oren-falkner/2026-10-23-easy-run";
const DAMAGED: &str = "oren-falkner/2026-11-06-easy-run";

/// A copy of one demo athlete holding only the activities named by `keep` (file stems),
/// and the workstation started on it in tmux at 160x48 with a fresh journal. The shell
/// writes the exit code to `exit-code` when the workstation ends.
fn start(dir: &Path, keep: &[&str]) -> (Tmux, PathBuf, PathBuf, PathBuf) {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = dir.join("roster");
    copy_dir(&demo.join(ATHLETE), &roster.join(ATHLETE));
    std::fs::copy(demo.join("roster.toml"), roster.join("roster.toml")).unwrap();
    let acts = roster.join(ATHLETE).join("activities");
    for e in std::fs::read_dir(&acts).unwrap().flatten() {
        let stem = e.path().file_stem().unwrap().to_string_lossy().into_owned();
        if !keep.contains(&stem.as_str()) {
            std::fs::remove_file(e.path()).unwrap();
        }
    }
    let journal = dir.join("coach/journal.sqlite");
    let done = dir.join("exit-code");
    let tmux = Tmux::new(dir.join("tmux.sock"), "close");
    let command = format!(
        "SPLITDESK_CONFIG=/nonexistent XDG_DATA_HOME='{}' '{}' --roster '{}' --journal '{}'",
        dir.join("data").display(),
        binary().display(),
        roster.display(),
        journal.display(),
    );
    tmux.new_session(
        160,
        48,
        &format!("{command}; echo $? > '{}'; sleep 30", done.display()),
    );
    (tmux, roster, journal, done)
}

fn quit(tmux: &Tmux, done: &Path) {
    tmux.keys(&["q"]);
    let start = Instant::now();
    while !done.exists() {
        assert!(
            start.elapsed() < Duration::from_secs(15),
            "the workstation did not quit; screen:\n{}",
            tmux.screen()
        );
        std::thread::sleep(Duration::from_millis(100));
    }
    assert_eq!(std::fs::read_to_string(done).unwrap().trim(), "0");
}

fn stage(roster: &Path, journal: &Path, id: &str) -> String {
    let out = run(roster, journal, &["grade", id, "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    v["stage"].as_str().unwrap().to_string()
}

#[test]
fn tmux_quick_review_of_an_easy_run() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, roster, journal, done) = start(dir.path(), &["2026-10-19-easy-run"]);
    tmux.wait_for("1 to review");
    tmux.keys(&["]"]);
    tmux.wait_for("[blind]");
    tmux.keys(&["v"]);
    tmux.wait_for("quick close: no work intervals");
    tmux.keys(&["o"]);
    tmux.wait_for("Done.");
    tmux.keys(&["Escape"]);
    tmux.wait_for("0 to review");
    quit(&tmux, &done);
    assert_eq!(stage(&roster, &journal, EASY_RUN), "revealed");
}

#[test]
fn tmux_damaged_file_close_out() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, roster, journal, done) = start(dir.path(), &["2026-11-06-easy-run"]);
    tmux.wait_for("1 to review");
    tmux.keys(&["]"]);
    let s = tmux.wait_for("the file cannot be read: v closes it with the purpose verdict alone");
    assert!(!s.contains("still analysing"), "{s}");
    assert!(!s.contains("Watch died"), "the note leaked:\n{s}");
    tmux.keys(&["o"]);
    let s = tmux.wait_for("give the purpose verdict (v) first");
    assert!(!s.contains("Watch died"), "the note leaked:\n{s}");
    tmux.keys(&["v"]);
    tmux.wait_for("closed with the verdict alone");
    tmux.keys(&["o"]);
    tmux.wait_for("Watch died. Charged now.");
    tmux.keys(&["Escape"]);
    quit(&tmux, &done);
    assert_eq!(stage(&roster, &journal, DAMAGED), "revealed");
}

#[test]
fn tmux_unsaved_edit_prompt_on_next_unreviewed() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, roster, journal, done) =
        start(dir.path(), &["2026-10-19-easy-run", "2026-10-23-easy-run"]);
    tmux.wait_for("2 to review");
    tmux.keys(&["]"]);
    tmux.wait_for("[blind]");
    tmux.keys(&["v", "o"]);
    tmux.wait_for("Done.");
    tmux.keys(&["Escape", "f", "End"]);
    tmux.wait_for("editing feedback");
    tmux.keys(&[
        "Enter", "P", "S", " ", "z", "e", "p", "h", "y", "r", "Escape",
    ]);
    tmux.wait_for("not saved yet");
    tmux.keys(&["]"]);
    let s = tmux.wait_for(LEAVE_TITLE);
    assert!(s.contains("The feedback edit is not saved."), "{s}");
    tmux.keys(&["n"]);
    tmux.wait_for("stayed: the feedback edit is still not saved");
    tmux.keys(&["]"]);
    tmux.wait_for(LEAVE_TITLE);
    tmux.keys(&["s"]);
    // The next session is open (the roster's open mark), the edit saved on the way.
    tmux.wait_for("•2026-10-23");
    quit(&tmux, &done);
    let out = run(&roster, &journal, &["feedback", EASY_RUN]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("PS zephyr"), "{text}");
    assert_eq!(stage(&roster, &journal, NEXT_EASY), "new");
}
