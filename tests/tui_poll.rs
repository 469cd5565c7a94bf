//! Writes by another process reach the workstation through `App::poll_journal` (SQLite's
//! `data_version`): two handles on one journal file, one changing it as a `grade`, `notes`
//! or `feedback --set` command would, the App polling. Grades, verdict, stage, the note,
//! the feedback and the roster counts follow; unsaved edits here are kept.

mod tui_support;

use chrono::Utc;
use crossterm::event::KeyCode;
use splitdesk::journal::{Journal, PurposeVerdict, ReviewStage};
use splitdesk::roster::Roster;
use splitdesk::tui::app::App;
use tui_support::{build_roster, ch, key, open_intervals, scanned_app, INTERVALS, SECRET_NOTE};

fn app_on_file(dir: &std::path::Path) -> (App, Journal) {
    build_roster(dir);
    let path = dir.join("journal.sqlite");
    let mut app = scanned_app(
        Roster::open(dir).unwrap(),
        Journal::open(&path).unwrap(),
        None,
    );
    open_intervals(&mut app);
    (app, Journal::open(&path).unwrap())
}

fn state(app: &App) -> &splitdesk::journal::ReviewState {
    app.open.as_ref().unwrap().state.as_ref().unwrap()
}

fn feedback_text(app: &App) -> String {
    app.open.as_ref().unwrap().feedback.as_ref().unwrap().text()
}

#[test]
fn grades_verdict_stage_note_feedback_and_counts_follow_the_other_handle() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, mut other) = app_on_file(dir.path());
    assert!(!app.poll_journal(), "nothing changed yet");
    assert_eq!(app.counts.get("ines-aldana"), Some(&2));
    assert_eq!(state(&app).stage, ReviewStage::New);

    // Graded blind elsewhere.
    other
        .grade(
            INTERVALS,
            &[(1, 3), (2, 3), (3, 4), (4, 4), (5, 2)],
            Some(PurposeVerdict::Met),
            Utc::now(),
        )
        .unwrap();
    assert!(app.poll_journal());
    assert_eq!(state(&app).stage, ReviewStage::Graded);
    assert_eq!(
        state(&app).verdict.as_ref().map(|v| v.current),
        Some(PurposeVerdict::Met)
    );
    let scores: Vec<u8> = state(&app).scores.iter().map(|c| c.current).collect();
    assert_eq!(scores, vec![3, 3, 4, 4, 2]);
    assert!(app.open.as_ref().unwrap().note.is_none());
    // Graded is still unreviewed until the notes are read.
    assert_eq!(app.counts.get("ines-aldana"), Some(&2));

    // The notes read elsewhere (`splitdesk notes`): revealed here, the note shows, the
    // athlete's count drops.
    other.reveal(INTERVALS, Utc::now()).unwrap();
    assert!(app.poll_journal());
    assert!(app.open.as_ref().unwrap().revealed());
    let note = app.open.as_ref().unwrap().note.clone().flatten().unwrap();
    assert!(note.contains(SECRET_NOTE), "{note}");
    assert_eq!(app.counts.get("ines-aldana"), Some(&1));
    let draft = feedback_text(&app);

    // A revision elsewhere: the verdict in force changes, the blind one stays; the draft
    // (nothing saved yet) is rebuilt from the grades in force.
    other
        .set_verdict(INTERVALS, PurposeVerdict::Missed, Utc::now())
        .unwrap();
    assert!(app.poll_journal());
    let v = state(&app).verdict.clone().unwrap();
    assert_eq!(
        (v.blind, v.current),
        (PurposeVerdict::Met, PurposeVerdict::Missed)
    );
    assert_eq!(app.open.as_ref().unwrap().revisions.len(), 1);
    assert_ne!(
        feedback_text(&app),
        draft,
        "the draft follows the revised verdict"
    );

    // Feedback saved elsewhere (`feedback --set`) replaces what is shown.
    other
        .save_feedback(INTERVALS, "Saved from the shell.\n", Utc::now())
        .unwrap();
    assert!(app.poll_journal());
    assert_eq!(feedback_text(&app), "Saved from the shell.\n");
    assert!(app.open.as_ref().unwrap().feedback.as_ref().unwrap().saved);
    assert!(!app.poll_journal(), "seen once");
}

#[test]
fn unsaved_edits_here_are_not_overwritten_by_a_save_elsewhere() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, mut other) = app_on_file(dir.path());
    for c in ['3', '3', '4', '4', '2'] {
        ch(&mut app, c);
    }
    ch(&mut app, 'v');
    ch(&mut app, 'o');
    key(&mut app, KeyCode::Esc);
    assert!(app.open.as_ref().unwrap().revealed());
    // Edit inline, leave the editor with the change unsaved.
    ch(&mut app, 'f');
    key(&mut app, KeyCode::End);
    for c in " Mine.".chars() {
        ch(&mut app, c);
    }
    key(&mut app, KeyCode::Esc);
    assert!(app.unsaved());
    let mine = feedback_text(&app);
    other
        .save_feedback(INTERVALS, "Saved from the shell.\n", Utc::now())
        .unwrap();
    assert!(app.poll_journal());
    assert_eq!(feedback_text(&app), mine);
    assert!(app.unsaved());
}
