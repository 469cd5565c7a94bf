//! Render snapshots on `TestBackend` at 80x24 and 160x48, and the blind protocol on screen:
//! the athlete's note is nowhere in the buffer before the reveal, and there after it.

mod tui_support;

use crossterm::event::KeyCode;
use ratatui::backend::TestBackend;
use ratatui::Terminal;
use splitdesk::tui::app::{App, Focus};
use splitdesk::tui::ui;
use tui_support::*;

const SIZES: [(u16, u16); 2] = [(80, 24), (160, 48)];

/// Draw the app at a size and return the screen as text, one line per row.
fn screen(app: &mut App, w: u16, h: u16) -> String {
    app.size = (w, h);
    let mut term = Terminal::new(TestBackend::new(w, h)).expect("terminal");
    term.draw(|f| ui::draw(f, app)).expect("draw");
    let buf = term.backend().buffer().clone();
    let mut out = String::new();
    for y in 0..h {
        let mut line = String::new();
        for x in 0..w {
            if let Some(c) = buf.cell((x, y)) {
                line.push_str(c.symbol());
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

fn snap(name: &str, app: &mut App) {
    for (w, h) in SIZES {
        let text = screen(app, w, h);
        insta::assert_snapshot!(format!("{name}_{w}x{h}"), text);
    }
}

#[test]
fn roster() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    key(&mut app, KeyCode::Down);
    snap("roster", &mut app);
}

#[test]
fn chart_with_two_rulers() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    while app.focus != Focus::Chart {
        key(&mut app, KeyCode::Tab);
    }
    let marks = [(10, 18), (30, 45)];
    let mut at = 0;
    for (a, b) in marks {
        while at < a {
            key(&mut app, KeyCode::Right);
            at += 1;
        }
        ch(&mut app, 'r');
        while at < b {
            key(&mut app, KeyCode::Right);
            at += 1;
        }
        ch(&mut app, 'r');
    }
    assert_eq!(app.open.as_ref().unwrap().rulers.len(), 2);
    snap("chart_two_rulers", &mut app);
}

#[test]
fn verdict_blind() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    ch(&mut app, '4');
    ch(&mut app, '3');
    snap("verdict_blind", &mut app);
}

#[test]
fn verdict_refused_reveal() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    for c in ['4', '3', '3'] {
        ch(&mut app, c);
    }
    ch(&mut app, 'o');
    for (w, h) in SIZES {
        let text = screen(&mut app, w, h);
        assert!(
            text.contains("notes stay hidden until grading is complete"),
            "{text}"
        );
        assert!(
            !text.contains("Legs felt") && !text.contains("stomach"),
            "{text}"
        );
    }
    snap("verdict_refused", &mut app);
}

#[test]
fn verdict_revealed_with_a_revision() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    grade_and_reveal(&mut app);
    for _ in 0..5 {
        key(&mut app, KeyCode::Up);
    }
    key(&mut app, KeyCode::Down);
    ch(&mut app, '4');
    key(&mut app, KeyCode::Up);
    for (w, h) in SIZES {
        let text = screen(&mut app, w, h);
        assert!(text.contains("3→4"), "{text}");
    }
    snap("verdict_revealed_revision", &mut app);
}

#[test]
fn help_overlay() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    ch(&mut app, '?');
    snap("help", &mut app);
}

#[test]
fn the_note_is_absent_before_the_reveal_and_present_after() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    let words = ["Legs felt like lead", "stomach was off", "third one"];
    let check_absent = |app: &mut App, when: &str| {
        for (w, h) in [(80, 24), (120, 40), (160, 48), (200, 60)] {
            let text = screen(app, w, h);
            for word in words {
                assert!(
                    !text.contains(word),
                    "{when} at {w}x{h}: {word:?} on screen"
                );
            }
        }
    };
    check_absent(&mut app, "opened");
    for c in ['3', '3', '4', '4', '2'] {
        ch(&mut app, c);
    }
    ch(&mut app, 'o');
    check_absent(&mut app, "verdict missing");
    // The note is not held in the app either.
    assert!(app.open.as_ref().unwrap().note.is_none());
    ch(&mut app, 'v');
    check_absent(&mut app, "graded, not revealed");
    ch(&mut app, 'o');
    let popup = screen(&mut app, 160, 48);
    assert!(popup.contains(SECRET_NOTE), "{popup}");
    key(&mut app, KeyCode::Esc);
    let pane = screen(&mut app, 160, 48);
    assert!(pane.contains(SECRET_NOTE), "{pane}");
}

#[test]
fn ascii_mode_has_no_box_drawing() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    app.theme.ascii = true;
    let text = screen(&mut app, 120, 40);
    assert!(text.is_ascii(), "{text}");
}

#[path = "history_support/mod.rs"]
mod history_support;

/// The history view on a planted series: four steady weeks, then a sharp rise in load, and
/// best efforts from which critical speed can be fitted.
#[test]
fn history_view_with_a_load_jump() {
    use splitdesk::analysis::history::{build, HistoryParams};
    use splitdesk::tui::app::{HistoryView, View};
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    ch(&mut app, 't');
    assert_eq!(app.view, View::History);
    assert!(app.history.is_some(), "built when the view opens");
    let mut loads = vec![40.0; 28];
    loads.extend([150.0; 7]);
    let mut sums: Vec<_> = loads
        .iter()
        .enumerate()
        .map(|(k, &l)| history_support::with_load(k as i64 + 1, l))
        .collect();
    sums[29].best_efforts = history_support::with_efforts(
        30,
        &[
            (180.0, 1000.0),
            (360.0, 1900.0),
            (720.0, 3650.0),
            (1200.0, 5900.0),
        ],
    )
    .best_efforts;
    let h = build(
        &sums,
        &history_support::profile(),
        &HistoryParams::default(),
        history_support::day(35),
    );
    assert_eq!(h.cautions.len(), 1);
    let view = HistoryView::new(
        app.cursor.athlete.clone().unwrap(),
        sums,
        history_support::profile(),
        history_support::day(35),
    );
    assert_eq!(view.history.cautions, h.cautions);
    app.history = Some(view);
    for (w, hgt) in SIZES {
        let text = screen(&mut app, w, hgt);
        assert!(text.contains("CAUTION: Training load rose"), "{text}");
        assert!(text.contains("critical speed"), "{text}");
        assert!(text.contains("W14"), "latest week label: {text}");
        assert!(text.contains("to 2026-W14"), "week range: {text}");
    }
    let big = screen(&mut app, 160, 48);
    assert!(big.contains("not medical advice"), "{big}");
    assert!(big.contains("Riegel"), "{big}");
    assert!(big.contains("line 5 %"), "{big}");
    snap("history_load_jump", &mut app);
    // The window holds every week of data (five); zoomed in to three weeks, going back a
    // week moves the bars.
    ch(&mut app, '+');
    assert_eq!(app.history.as_ref().unwrap().window.shown_weeks(), 3);
    key(&mut app, KeyCode::Left);
    assert_eq!(
        app.history.as_ref().unwrap().window.end,
        history_support::day(28)
    );
    let back = screen(&mut app, 160, 48);
    assert!(back.contains("to 2026-W13"), "{back}");
}

#[test]
fn the_status_line_counts_the_start_up_scan_at_80x24() {
    let dir = tempfile::tempdir().unwrap();
    build_roster(dir.path());
    let roster = splitdesk::roster::Roster::open(dir.path()).expect("roster");
    let journal = splitdesk::journal::Journal::open_in_memory().expect("journal");
    let mut app = App::new(
        roster,
        journal,
        splitdesk::tui::app::Options {
            keymap: splitdesk::tui::keymap::KeyMap::default(),
            theme: splitdesk::tui::theme::Theme::plain(),
            feedback_dir: None,
        },
    );
    // The status line is the row above the footer.
    let status = |app: &mut App| {
        screen(app, 80, 24)
            .lines()
            .nth(22)
            .unwrap_or("")
            .to_string()
    };
    assert!(
        status(&mut app).ends_with("reading the roster"),
        "{}",
        status(&mut app)
    );
    let mut jobs = app.start_scan();
    assert_eq!(jobs.len(), 3);
    assert!(
        status(&mut app).ends_with("analysing 0/3"),
        "{}",
        status(&mut app)
    );
    let first = jobs.remove(0);
    run_effects(&mut app, vec![first]);
    assert!(
        status(&mut app).ends_with("analysing 1/3"),
        "{}",
        status(&mut app)
    );
    run_effects(&mut app, jobs);
    assert!(
        status(&mut app).ends_with("3 to review"),
        "{}",
        status(&mut app)
    );
}
