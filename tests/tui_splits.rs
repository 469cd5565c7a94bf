//! The verdict pane shows a race's finish time, splits and halves, at 80x24 too.

mod tui_support;

use std::path::{Path, PathBuf};

use splitdesk::journal::Journal;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Options};
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use tui_support::{ch, run_effects, screen};

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        let target = to.join(e.file_name());
        if e.file_type().unwrap().is_dir() {
            copy_dir(&e.path(), &target);
        } else {
            std::fs::copy(e.path(), target).unwrap();
        }
    }
}

/// An app on a copy of one demo athlete, every session scanned, `id` open.
fn app_on(dir: &Path, id: &str) -> App {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let athlete = id.split('/').next().unwrap();
    std::fs::copy(demo.join("roster.toml"), dir.join("roster.toml")).unwrap();
    copy_dir(&demo.join(athlete), &dir.join(athlete));
    let mut app = App::new(
        Roster::open(dir).unwrap(),
        Journal::open_in_memory().unwrap(),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    );
    app.size = (80, 24);
    let fx = app.start_scan();
    run_effects(&mut app, fx);
    let fx = app.open_session(id);
    run_effects(&mut app, fx);
    app
}

/// The rows of the verdict pane on screen (from its title to its bottom border).
fn verdict_rows(text: &str) -> String {
    text.lines()
        .skip_while(|l| !l.contains("Verdict"))
        .take_while(|l| !l.starts_with('╰'))
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn a_race_shows_its_finish_time_and_splits_at_80x24() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_on(dir.path(), "tobias-wrenfield/2026-11-29-race");
    let review = app.open.as_ref().unwrap().review.clone().unwrap();
    let sp = review.splits.clone().unwrap();
    // The numbers on screen are the analysis's, rounded to the second.
    let finish = splitdesk::model::units::format_clock(sp.time_s);
    let first = splitdesk::model::units::format_clock(sp.splits[0].time_s);
    let tenth = splitdesk::model::units::format_clock(sp.splits[9].time_s);
    assert_eq!(
        (finish.as_str(), first.as_str(), tenth.as_str()),
        ("31:11", "3:08", "3:05")
    );
    let text = verdict_rows(&screen(&mut app, 80, 24));
    assert!(
        text.contains("Finish 31:11 · 10.00 km · first half 15:36, second half 15:35"),
        "{text}"
    );
    assert!(text.contains("Splits/km 1 3:08  2 3:07"), "{text}");
    // All ten, wrapped to the width, and still the grading below; the findings at the
    // end of the pane's document.
    assert!(text.contains("10 3:05"), "{text}");
    assert!(text.contains("Grading"), "{text}");
    assert!(text.contains("▶  1 work"), "{text}");
    ch(&mut app, 'G');
    let text = verdict_rows(&screen(&mut app, 80, 24));
    assert!(text.contains("Findings"), "{text}");
}

#[test]
fn a_time_trial_in_miles_shows_miles_and_the_part_left() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_on(dir.path(), "dagny-holloway/2026-11-28-time-trial");
    let text = verdict_rows(&screen(&mut app, 80, 24));
    assert!(
        text.contains("Finish 30:17 · 3.11 mi · first half 15:11, second half 15:06"),
        "{text}"
    );
    assert!(
        text.contains("Splits/mi 1 9:47  2 9:45  3 9:45  0.11 mi 1:00"),
        "{text}"
    );
}

#[test]
fn other_sessions_show_no_splits_block() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_on(dir.path(), "tobias-wrenfield/2026-11-28-easy-run");
    let review = app.open.as_ref().unwrap().review.clone().unwrap();
    assert_ne!(review.kind, splitdesk::analysis::kind::SessionKind::Race);
    // The analysis has splits for it (the whole run), the pane keeps them for races.
    assert!(review.splits.is_some());
    let text = verdict_rows(&screen(&mut app, 120, 40));
    assert!(!text.contains("Finish"), "{text}");
    assert!(!text.contains("Splits/"), "{text}");
}

#[test]
fn a_short_or_narrow_pane_wraps_the_splits_and_scrolls_to_the_rest() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_on(dir.path(), "tobias-wrenfield/2026-11-29-race");
    // 40 columns: the splits wrap over rows, words never split, none left out.
    app.size = (40, 24);
    let text = verdict_rows(&screen(&mut app, 40, 24));
    assert!(text.contains("Finish 31:11 · 10.00 km"), "{text}");
    assert!(text.contains("Splits/km 1 3:08  2 3:07  3 3:06"), "{text}");
    assert!(text.contains("  4 3:07  5 3:07  6 3:07  7 3:08"), "{text}");
    assert!(text.contains("  8 3:06  9 3:08  10 3:05"), "{text}");
    assert!(!text.contains('…'), "{text}");
    // The grading and the findings are further down: the end of the document shows them.
    ch(&mut app, 'G');
    let text = verdict_rows(&screen(&mut app, 40, 24));
    assert!(text.contains("Findings"), "{text}");
    // 60x20: the finish row, then the rest by scrolling.
    app.size = (60, 20);
    ch(&mut app, 'g');
    let text = verdict_rows(&screen(&mut app, 60, 20));
    assert!(text.contains("Finish 31:11 · 10.00 km"), "{text}");
    ch(&mut app, 'G');
    let text = verdict_rows(&screen(&mut app, 60, 20));
    assert!(text.contains("Findings"), "{text}");
}
