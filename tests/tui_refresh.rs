//! The workstation does not show stale grades: a score written by another process (here a
//! second journal connection, as a `grade` command in another terminal would) appears on
//! the open session without a key press, through the real event loop.

mod tui_support;

use std::sync::atomic::AtomicBool;
use std::time::Duration;

use chrono::Utc;
use crossterm::event::Event;
use splitdesk::journal::Journal;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Options};
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use tui_support::{build_roster, open_intervals, run_effects, INTERVALS};

/// A terminal on which nothing is typed: on its first wait another process grades
/// interval 1 (and, with `all`, the rest and the verdict); after a few quiet waits it hangs
/// up, which ends the loop.
struct QuietTerminal {
    other: Journal,
    waits: usize,
    all: bool,
}

impl splitdesk::tui::Host for QuietTerminal {
    fn next_event(&mut self, _timeout: Duration) -> std::io::Result<Option<Event>> {
        self.waits += 1;
        if self.waits == 1 {
            self.other.set_score(INTERVALS, 1, 4, Utc::now()).unwrap();
            if self.all {
                for (n, s) in [(2, 3), (3, 3), (4, 4), (5, 2)] {
                    self.other.set_score(INTERVALS, n, s, Utc::now()).unwrap();
                }
                self.other
                    .set_verdict(
                        INTERVALS,
                        splitdesk::journal::PurposeVerdict::Met,
                        Utc::now(),
                    )
                    .unwrap();
            }
        }
        if self.waits > 3 {
            return Err(splitdesk::tui::hung_up_error());
        }
        Ok(None)
    }
    fn copy(&mut self, _text: &str) -> String {
        String::new()
    }
    fn edit(&mut self, text: &str) -> Result<String, String> {
        Ok(text.to_string())
    }
}

fn text(term: &ratatui::Terminal<ratatui::backend::TestBackend>) -> String {
    let buf = term.backend().buffer();
    let mut out = String::new();
    for y in 0..buf.area.height {
        for x in 0..buf.area.width {
            out.push_str(buf.cell((x, y)).map_or(" ", |c| c.symbol()));
        }
        out.push('\n');
    }
    out
}

/// The app on a file journal with the interval session open, and the loop run against a
/// terminal on which another process grades. Returns the last frame.
fn run(all: bool) -> (App, String) {
    let dir = tempfile::tempdir().unwrap();
    build_roster(dir.path());
    let path = dir.path().join("journal.sqlite");
    let mut app = App::new(
        Roster::open(dir.path()).unwrap(),
        Journal::open(&path).unwrap(),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    );
    app.size = (160, 48);
    let fx = app.start_scan();
    run_effects(&mut app, fx);
    open_intervals(&mut app);
    let before = tui_support::screen(&mut app, 160, 48);
    assert!(before.contains("scores 0/5"), "{before}");
    let mut host = QuietTerminal {
        other: Journal::open(&path).unwrap(),
        waits: 0,
        all,
    };
    let mut term = ratatui::Terminal::new(ratatui::backend::TestBackend::new(160, 48)).unwrap();
    let worker = splitdesk::worker::Worker::for_machine();
    splitdesk::tui::event_loop(
        &mut term,
        &mut app,
        &worker,
        &mut host,
        &AtomicBool::new(false),
    )
    .unwrap();
    let screen = text(&term);
    (app, screen)
}

#[test]
fn a_score_written_by_another_process_appears_without_a_key_press() {
    let (app, screen) = run(false);
    assert!(screen.contains("scores 1/5"), "{screen}");
    let state = app.open.as_ref().unwrap().state.as_ref().unwrap();
    let one = state.scores.iter().find(|s| s.interval == 1).unwrap();
    assert_eq!((one.blind, one.current), (4, 4));
}

#[test]
fn grading_completed_elsewhere_unlocks_the_reveal_here() {
    let (app, screen) = run(true);
    assert!(screen.contains("scores 5/5"), "{screen}");
    // Completing the grades does not reveal the notes by itself.
    assert!(!screen.contains(tui_support::SECRET_NOTE), "{screen}");
    assert!(!app.open.as_ref().unwrap().revealed());
}
