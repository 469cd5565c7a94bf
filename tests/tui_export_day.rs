//! The workstation's day key (`D`, action `export_day`): the day of the open session, one
//! message per athlete with that day's reviewed sessions in order, written to a file in the
//! feedback folder and copied; the status line counts messages, sessions and what is still
//! unreviewed. Also: `[feedback]` problems in config.toml show on the start pane.

mod tui_support;

use chrono::{TimeZone, Utc};
use crossterm::event::KeyCode;
use splitdesk::demo::fit_writer;
use splitdesk::demo::simulate::{simulate, SimInput};
use splitdesk::journal::Journal;
use splitdesk::model::Units;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Effect, Options};
use splitdesk::tui::event::AppEvent;
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use tui_support::*;

/// Ines's second session of 2024-03-04, in the evening.
const PM: &str = "ines-aldana/2024-03-04-shakeout";
/// Marco's session of the same day, left unreviewed.
const MARCO_DAY: &str = "marco-bell/2024-03-04-easy";
const EDITED: &str = "Shakeout: exactly as easy as it should be (typed by the coach).";

/// Write a simulated session (self-consistency data from our own simulator).
fn add_session(root: &std::path::Path, athlete: &str, stem: &str, plan: &str, hour: u32) {
    let dir = root.join(athlete);
    let plan_path = dir.join("plans").join(format!("{stem}.toml"));
    std::fs::create_dir_all(plan_path.parent().unwrap()).unwrap();
    std::fs::write(&plan_path, plan).unwrap();
    let plan = splitdesk::plan::load(&plan_path).unwrap();
    let profile_text = std::fs::read_to_string(dir.join("athlete.toml")).unwrap();
    let profile = splitdesk::roster::parse_profile(&profile_text, athlete, Units::Km).unwrap();
    let mut input = SimInput::new(profile, plan, 21 + u64::from(hour));
    input.start = Utc.with_ymd_and_hms(2024, 3, 4, hour, 0, 0).unwrap();
    let out = simulate(&input);
    std::fs::create_dir_all(dir.join("activities")).unwrap();
    std::fs::write(
        dir.join("activities").join(format!("{stem}.fit")),
        fit_writer::write(&out.session),
    )
    .unwrap();
}

fn day_app(dir: &std::path::Path) -> App {
    build_roster(dir);
    add_session(
        dir,
        "ines-aldana",
        "2024-03-04-shakeout",
        "title = \"Evening shakeout\"\npurpose = \"recovery\"\nsteps = \"20:00 easy\"\n",
        17,
    );
    add_session(
        dir,
        "marco-bell",
        "2024-03-04-easy",
        "title = \"Easy\"\npurpose = \"recovery\"\nsteps = \"30:00 easy\"\n",
        12,
    );
    let roster = Roster::open(dir).expect("roster");
    let mut app = App::new(
        roster,
        Journal::open_in_memory().expect("journal"),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: Some(dir.join("feedback-out")),
        },
    );
    app.size = (160, 48);
    let fx = app.start_scan();
    run_effects(&mut app, fx);
    app
}

#[test]
fn the_day_key_writes_and_copies_one_message_per_athlete() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = day_app(dir.path());
    // The interval session: scored, verdict, notes revealed (drafted at export).
    grade_and_reveal(&mut app);
    // The shakeout: no work intervals, the verdict is the grade; then its feedback is
    // saved as the coach typed it.
    let fx = app.open_session(PM);
    run_effects(&mut app, fx);
    assert_eq!(app.open.as_ref().unwrap().work_count(), 0);
    ch(&mut app, 'v');
    ch(&mut app, 'o');
    key(&mut app, KeyCode::Esc);
    assert!(app.open.as_ref().unwrap().revealed());
    app.journal
        .save_feedback(PM, &format!("{EDITED}\n"), Utc::now())
        .unwrap();

    // D: one file effect for the day of the open session.
    let fx = ch(&mut app, 'D');
    let (path, text) = match fx.as_slice() {
        [Effect::WriteDay { path, text }] => (path.clone(), text.clone()),
        other => panic!("{other:?}"),
    };
    assert_eq!(path, dir.path().join("feedback-out/day-2024-03-04.txt"));
    // One message: Ines's, both sessions in start order; Marco's unreviewed run is left out.
    assert!(
        text.starts_with("To Ines Aldana | 2024-03-04 | 5 x 3 min, Evening shakeout\n\n"),
        "{text}"
    );
    assert_eq!(
        text.lines().filter(|l| l.starts_with("To ")).count(),
        1,
        "{text}"
    );
    assert!(!text.contains("Marco"), "{text}");
    assert!(text.lines().any(|l| l == EDITED), "{text}");
    assert!(text.contains("5 x 3 min"), "{text}");

    // The event loop writes the file; then the copy, with the same text.
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(&path, &text).unwrap();
    let fx = app.handle(AppEvent::DayWritten(Ok(path.clone())));
    match fx.as_slice() {
        [Effect::Copy(copied)] => assert_eq!(copied, &text),
        other => panic!("{other:?}"),
    }
    app.handle(AppEvent::Copied("sent to the terminal (OSC 52)".into()));
    assert_eq!(
        message(&app),
        format!(
            "2024-03-04: 1 message (2 sessions) saved to {} and sent to the terminal (OSC 52); \
             1 session of that day not reviewed yet",
            path.display()
        )
    );
    // Each session is recorded as exported and copied.
    for id in [INTERVALS, PM] {
        let kinds: Vec<String> = app
            .journal
            .feedback_events(id)
            .unwrap()
            .iter()
            .map(|e| format!("{:?}", e.kind))
            .collect();
        assert_eq!(kinds, vec!["Exported", "Copied"], "{id}");
    }
    assert!(app.journal.feedback_events(MARCO_DAY).unwrap().is_empty());
    // The status line shows it.
    let shown = screen(&mut app, 200, 48);
    assert!(
        shown.contains("2024-03-04: 1 message (2 sessions) saved to"),
        "{shown}"
    );

    // Depends on the lead's `day_message`: one greeting, the default signature last.
    assert_eq!(text.matches("Hi Ines,").count(), 1, "{text}");
    assert_eq!(
        text.lines().rev().find(|l| !l.trim().is_empty()),
        Some("Coach"),
        "{text}"
    );
}

#[test]
fn the_day_key_needs_a_session_and_a_reviewed_one() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = day_app(dir.path());
    assert!(ch(&mut app, 'D').is_empty());
    assert!(message(&app).contains("open or select a session first"));
    open_intervals(&mut app);
    assert!(ch(&mut app, 'D').is_empty());
    assert_eq!(
        message(&app),
        "2024-03-04: no reviewed session yet (3 sessions not reviewed); nothing written"
    );
    assert!(!dir.path().join("feedback-out").exists());
}

#[test]
fn the_help_overlay_lists_the_day_key() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = day_app(dir.path());
    ch(&mut app, '?');
    let shown = screen(&mut app, 120, 40);
    assert!(
        shown.lines().any(|l| l.contains("D day's messages out")),
        "{shown}"
    );
    // A [keys] override moves it.
    let table: toml::Table = toml::from_str("export_day = \"ctrl-d\"").unwrap();
    let km = KeyMap::with_overrides(&table).unwrap();
    assert_eq!(km.label(splitdesk::tui::action::Action::ExportDay), "C-d");
}

#[test]
fn feedback_config_problems_show_on_the_start_pane_and_the_status_line() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = day_app(dir.path());
    let table: toml::Table =
        toml::from_str("coach = \"Sam\"\nlength = \"short\"\ncolour = 1\n").unwrap();
    let (style, problems) = splitdesk::export::feedback::style::from_table(&table);
    assert_eq!(style.signature(), "Sam");
    assert_eq!(problems.len(), 2, "{problems:?}");
    app.feedback_style = style;
    app.set_config_problems(problems);
    assert!(message(&app).starts_with("config.toml [feedback] colour: unknown key"));
    assert!(message(&app).ends_with("(and 1 more: see the start pane)"));
    let shown = screen(&mut app, 200, 48);
    assert!(
        shown.contains("! 2 problems in config.toml (the rest of it is used):"),
        "{shown}"
    );
    assert!(
        shown.contains(
            "config.toml [feedback] length = \"short\": expected brief or full; using full"
        ),
        "{shown}"
    );
}
