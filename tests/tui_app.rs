//! `App::handle`: keys in, state and effects out; no terminal, no threads.

mod tui_support;

use crossterm::event::KeyCode;
use splitdesk::tui::app::{App, Effect, Focus, Modal};
use splitdesk::tui::event::AppEvent;
use splitdesk::tui::keymap::KeyMap;
use tui_support::*;

#[test]
fn scan_records_every_session_and_counts_unreviewed() {
    let dir = tempfile::tempdir().unwrap();
    let app = app_with(dir.path());
    assert_eq!(app.progress.total, 3);
    assert_eq!(app.progress.done, 3);
    assert_eq!(app.counts.get("ines-aldana"), Some(&2));
    assert_eq!(app.counts.get("marco-bell"), Some(&1));
    // The daily queue is oldest first.
    let ids: Vec<&str> = app.queue.iter().map(|e| e.session_id.as_str()).collect();
    assert_eq!(ids, vec![EASY, LONG, INTERVALS]);
}

#[test]
fn queue_opens_oldest_first_and_focuses_the_verdict() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    ch(&mut app, ']');
    let o = app.open.as_ref().expect("open");
    assert_eq!(o.session_id, EASY);
    assert_eq!(app.focus, Focus::Verdict);
    assert_eq!(o.selected_work, 0);
    assert!(o.analysed.is_some(), "series loaded for the chart");
    ch(&mut app, ']');
    assert_eq!(app.open.as_ref().unwrap().session_id, LONG);
    ch(&mut app, ']');
    assert_eq!(app.open.as_ref().unwrap().session_id, INTERVALS);
    ch(&mut app, ']');
    assert_eq!(app.open.as_ref().unwrap().session_id, INTERVALS);
    assert!(message(&app).contains("no later"));
    ch(&mut app, '[');
    assert_eq!(app.open.as_ref().unwrap().session_id, LONG);
}

#[test]
fn the_next_session_in_the_queue_is_read_ahead_and_opens_without_a_job() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    ch(&mut app, ']');
    assert_eq!(app.open.as_ref().unwrap().session_id, EASY);
    // Opening EASY read LONG, the next in the queue, ahead (the jobs ran in `ch`).
    assert_eq!(app.prefetched(), Some(LONG));
    let effects = app.handle(AppEvent::Input(crossterm::event::Event::Key(
        crossterm::event::KeyEvent::new(KeyCode::Char(']'), crossterm::event::KeyModifiers::NONE),
    )));
    let o = app.open.as_ref().expect("open");
    assert_eq!(o.session_id, LONG);
    assert!(o.analysed.is_some(), "drawn from memory at once");
    assert_eq!(
        o.chart.map(|c| c.duration),
        Some(o.analysed.as_ref().unwrap().session.duration_s())
    );
    // No job opens LONG; the one job asked for reads INTERVALS ahead.
    let jobs: Vec<(splitdesk::worker::JobKind, String)> = effects
        .iter()
        .filter_map(|e| match e {
            Effect::Submit { job, .. } => Some((job.kind, job.session_id())),
            _ => None,
        })
        .collect();
    assert_eq!(
        jobs,
        vec![(splitdesk::worker::JobKind::Prefetch, INTERVALS.to_string())]
    );
    run_effects(&mut app, effects);
    assert_eq!(app.prefetched(), Some(INTERVALS));
    // Opening something else drops the read-ahead it no longer needs; at most one is kept.
    ch(&mut app, '[');
    assert_eq!(app.open.as_ref().unwrap().session_id, EASY);
    assert_eq!(app.prefetched(), Some(LONG));
}

#[test]
fn scoring_commits_and_advances_to_the_next_work_interval() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    ch(&mut app, '4');
    ch(&mut app, '3');
    let o = app.open.as_ref().unwrap();
    assert_eq!(o.selected_work, 2);
    let state = app.journal.review_state(INTERVALS).unwrap();
    let scores: Vec<(u32, u8)> = state.scores.iter().map(|c| (c.interval, c.blind)).collect();
    assert_eq!(scores, vec![(1, 4), (2, 3)]);
    // Up goes back; a new score replaces the blind one before the reveal.
    key(&mut app, KeyCode::Up);
    ch(&mut app, '5');
    let state = app.journal.review_state(INTERVALS).unwrap();
    assert_eq!(state.scores[1].blind, 5);
    assert!(app.journal.revisions(INTERVALS).unwrap().is_empty());
    // At the last interval the selection stays.
    for _ in 0..6 {
        ch(&mut app, '3');
    }
    assert_eq!(app.open.as_ref().unwrap().selected_work, 4);
}

#[test]
fn verdict_cycles_met_partly_missed() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    let verdict = |app: &App| {
        app.journal
            .review_state(INTERVALS)
            .unwrap()
            .verdict
            .map(|v| v.current.as_str())
    };
    assert_eq!(verdict(&app), None);
    ch(&mut app, 'v');
    assert_eq!(verdict(&app), Some("met"));
    ch(&mut app, 'v');
    assert_eq!(verdict(&app), Some("partly"));
    ch(&mut app, 'v');
    assert_eq!(verdict(&app), Some("missed"));
    ch(&mut app, 'v');
    assert_eq!(verdict(&app), Some("met"));
}

#[test]
fn reveal_is_refused_with_what_is_missing_then_allowed() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    ch(&mut app, '3');
    ch(&mut app, 'o');
    let m = message(&app);
    assert!(
        m.contains("scores missing for work intervals 2, 3, 4, 5")
            && m.contains("purpose verdict not set"),
        "{m}"
    );
    assert!(app.modal.is_none());
    assert!(app.open.as_ref().unwrap().note.is_none());
    for c in ['3', '4', '4', '2'] {
        ch(&mut app, c);
    }
    ch(&mut app, 'o');
    assert!(message(&app).contains("purpose verdict not set"));
    ch(&mut app, 'v');
    ch(&mut app, 'o');
    match &app.modal {
        Some(Modal::Notes(text)) => assert!(text.contains(SECRET_NOTE)),
        other => panic!("expected the notes, got {other:?}"),
    }
    assert!(app.open.as_ref().unwrap().revealed());
    key(&mut app, KeyCode::Esc);
    assert!(app.modal.is_none());
    // The feedback draft is ready.
    let fb = app.open.as_ref().unwrap().feedback.as_ref().expect("draft");
    assert!(fb.text().starts_with("Hi Ines,"));
}

#[test]
fn a_score_changed_after_the_reveal_is_a_revision() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    grade_and_reveal(&mut app);
    // Select interval 2 and change 3 to 4.
    for _ in 0..5 {
        key(&mut app, KeyCode::Up);
    }
    key(&mut app, KeyCode::Down);
    ch(&mut app, '4');
    let state = app.journal.review_state(INTERVALS).unwrap();
    let cell = &state.scores[1];
    assert_eq!((cell.blind, cell.current), (3, 4));
    assert_eq!(app.journal.revisions(INTERVALS).unwrap().len(), 1);
    let o = app.open.as_ref().unwrap();
    assert_eq!(o.revisions.len(), 1);
    let (text, revised) = splitdesk::tui::panes::verdict::score_cell(o.state.as_ref(), 2);
    assert_eq!((text.as_str(), revised), ("3→4", true));
}

#[test]
fn rulers_are_marked_saved_and_cleared() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    key(&mut app, KeyCode::Tab); // verdict -> chart? (Tab order: roster, chart, verdict)
    while app.focus != Focus::Chart {
        key(&mut app, KeyCode::Tab);
    }
    for _ in 0..20 {
        key(&mut app, KeyCode::Right);
    }
    ch(&mut app, 'r');
    assert!(app.open.as_ref().unwrap().pending_ruler.is_some());
    for _ in 0..30 {
        key(&mut app, KeyCode::Right);
    }
    ch(&mut app, 'r');
    let o = app.open.as_ref().unwrap();
    assert!(o.pending_ruler.is_none());
    assert_eq!(o.rulers.len(), 1);
    assert!(o.rulers[0].to_s > o.rulers[0].from_s);
    assert_eq!(app.journal.rulers(INTERVALS).unwrap().len(), 1);
    // Reopening reloads them.
    let fx = app.open_session(EASY);
    run_effects(&mut app, fx);
    open_intervals(&mut app);
    assert_eq!(app.open.as_ref().unwrap().rulers.len(), 1);
    while app.focus != Focus::Chart {
        key(&mut app, KeyCode::Tab);
    }
    ch(&mut app, 'R');
    assert!(app.open.as_ref().unwrap().rulers.is_empty());
    assert!(app.journal.rulers(INTERVALS).unwrap().is_empty());
}

#[test]
fn feedback_is_refused_before_the_reveal_then_copied_and_exported() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    assert!(ch(&mut app, 'y').is_empty());
    assert!(message(&app).contains("after the reveal"));
    grade_and_reveal(&mut app);
    // Inline edit: f, type, Esc; quitting asks.
    ch(&mut app, 'f');
    key(&mut app, KeyCode::End);
    for c in " Great work!".chars() {
        ch(&mut app, c);
    }
    key(&mut app, KeyCode::Esc);
    assert!(app.unsaved());
    assert!(ch(&mut app, 'q').is_empty());
    assert_eq!(app.modal, Some(Modal::ConfirmQuit));
    ch(&mut app, 'n');
    assert!(app.modal.is_none());
    // Copy: saves, records the event, asks the loop to copy.
    let fx = ch(&mut app, 'y');
    match fx.as_slice() {
        [Effect::Copy(text)] => assert!(text.contains("Great work!")),
        other => panic!("{other:?}"),
    }
    assert!(!app.unsaved());
    let fb = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert!(fb.body.contains("Great work!"));
    assert_eq!(app.journal.feedback_events(INTERVALS).unwrap().len(), 1);
    // Export: a file effect; on success the event is recorded.
    let fx = ch(&mut app, 's');
    let path = match fx.as_slice() {
        [Effect::WriteFile { path, .. }] => path.clone(),
        other => panic!("{other:?}"),
    };
    assert!(path.ends_with("ines-aldana__2024-03-04-intervals.txt"));
    app.handle(AppEvent::FileWritten(Ok(path)));
    assert!(message(&app).contains("feedback saved to"));
    assert_eq!(app.journal.feedback_events(INTERVALS).unwrap().len(), 2);
    assert_eq!(
        app.journal.review_state(INTERVALS).unwrap().stage,
        splitdesk::journal::ReviewStage::FeedbackDone
    );
    assert!(matches!(ch(&mut app, 'q').as_slice(), [Effect::Quit]));
}

#[test]
fn roster_filter_and_unreviewed_toggle() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    ch(&mut app, '/');
    for c in "marco".chars() {
        ch(&mut app, c);
    }
    key(&mut app, KeyCode::Enter);
    let rows = app.roster_rows();
    assert_eq!(rows.len(), 2, "marco and his one session");
    key(&mut app, KeyCode::Char('/'));
    key(&mut app, KeyCode::Esc);
    assert!(app.filter.is_empty());
    grade_and_reveal(&mut app);
    app.focus = Focus::Roster;
    ch(&mut app, 'u');
    app.cursor.athlete = Some("ines-aldana".into());
    let has_intervals = app.roster_rows().iter().any(
        |r| matches!(r, splitdesk::tui::app::RosterRow::Session(s) if s.session_id == INTERVALS),
    );
    assert!(!has_intervals, "revealed sessions are hidden");
}

#[test]
fn key_overrides_from_config() {
    let table: toml::Table = toml::from_str("next_unreviewed = \"n\"").unwrap();
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    app.keymap = KeyMap::with_overrides(&table).unwrap();
    ch(&mut app, ']');
    assert!(app.open.is_none());
    ch(&mut app, 'n');
    assert_eq!(app.open.as_ref().unwrap().session_id, EASY);
}

#[test]
#[ignore = "writes the test roster to $SPLITDESK_TEST_ROSTER for trying the binary"]
fn write_test_roster() {
    write_roster_from_env();
}

/// A terminal that has gone away: every wait for input reports the hang-up.
struct DeadTerminal;

impl splitdesk::tui::Host for DeadTerminal {
    fn next_event(
        &mut self,
        _timeout: std::time::Duration,
    ) -> std::io::Result<Option<crossterm::event::Event>> {
        Err(splitdesk::tui::hung_up_error())
    }
    fn copy(&mut self, _text: &str) -> String {
        String::new()
    }
    fn edit(&mut self, text: &str) -> Result<String, String> {
        Ok(text.to_string())
    }
}

/// An app with an unsaved inline feedback edit ending in `tail`.
fn unsaved_edit(dir: &std::path::Path, tail: &str) -> App {
    let mut app = app_with(dir);
    grade_and_reveal(&mut app);
    ch(&mut app, 'f');
    key(&mut app, KeyCode::End);
    for c in tail.chars() {
        ch(&mut app, c);
    }
    key(&mut app, KeyCode::Esc);
    assert!(app.unsaved());
    app
}

fn run_loop(app: &mut App, stop: bool) -> anyhow::Result<()> {
    let mut terminal = ratatui::Terminal::new(ratatui::backend::TestBackend::new(160, 48)).unwrap();
    let worker = splitdesk::worker::Worker::for_machine();
    let stop = std::sync::atomic::AtomicBool::new(stop);
    splitdesk::tui::event_loop(&mut terminal, app, &worker, &mut DeadTerminal, &stop)
}

#[test]
fn a_hung_up_terminal_ends_the_loop_and_keeps_the_unsaved_feedback() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = unsaved_edit(dir.path(), " Kept after the hang-up.");
    run_loop(&mut app, false).unwrap();
    assert!(!app.unsaved());
    let fb = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert!(fb.body.contains("Kept after the hang-up."), "{}", fb.body);
}

#[test]
fn a_stop_signal_ends_the_loop_and_keeps_the_unsaved_feedback() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = unsaved_edit(dir.path(), " Kept after SIGTERM.");
    run_loop(&mut app, true).unwrap();
    let fb = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert!(fb.body.contains("Kept after SIGTERM."), "{}", fb.body);
}
