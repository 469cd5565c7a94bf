//! The workstation shows the load-spike caution with the findings of the session whose day
//! took the ratio to the caution band (the planted spike of the demo roster), and keeps it
//! out of the review the feedback draft is built from. Skipped (with a message) when the
//! demo roster is not in the tree.

mod tui_support;

use std::path::{Path, PathBuf};

use splitdesk::journal::Journal;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Options};
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use tui_support::{run_effects, screen};

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

#[test]
fn the_spike_session_shows_the_caution_in_the_verdict_pane() {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    if !demo.join("roster.toml").exists() {
        eprintln!("skipped: no demo-athletes/ roster in the tree");
        return;
    }
    // Only the load-jump athlete, to keep the scan short.
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(demo.join("roster.toml"), dir.path().join("roster.toml")).unwrap();
    copy_dir(&demo.join("oren-falkner"), &dir.path().join("oren-falkner"));
    let mut app = App::new(
        Roster::open(dir.path()).unwrap(),
        Journal::open_in_memory().unwrap(),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    );
    app.size = (160, 48);
    let fx = app.start_scan();
    run_effects(&mut app, fx);

    // Planted: 2026-11-19 took the ratio to about 1.59.
    let fx = app.open_session("oren-falkner/2026-11-19-tempo");
    run_effects(&mut app, fx);
    let o = app.open.as_ref().unwrap();
    let f = o
        .load_spike
        .as_ref()
        .expect("the spike session carries the caution");
    assert_eq!(f.code, "load_spike");
    assert!(
        f.text.contains("1.59") && f.text.contains("not medical advice"),
        "{}",
        f.text
    );
    // Not in the review itself: the feedback draft is built from it.
    assert!(o
        .review
        .as_ref()
        .unwrap()
        .findings
        .iter()
        .all(|f| f.code != "load_spike"));
    let text = screen(&mut app, 160, 48);
    assert!(
        text.contains("Training load rose sharply on 2026-11-19"),
        "{text}"
    );

    // An ordinary day carries none.
    let fx = app.open_session("oren-falkner/2026-10-26-easy-run");
    run_effects(&mut app, fx);
    assert!(app.open.as_ref().unwrap().load_spike.is_none());
    let text = screen(&mut app, 160, 48);
    assert!(!text.contains("Training load rose sharply"), "{text}");
}
