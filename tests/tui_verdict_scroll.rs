//! The verdict pane is one scrollable document: on the demo roster every finding of every
//! session can be reached by scrolling at 80x24, the feedback draft's last line after the
//! reveal too, and the selected interval stays in view. Snapshots of the longest demo set,
//! scrolled to the end, before and after the reveal, at three sizes.

mod tui_support;

use std::path::PathBuf;

use crossterm::event::KeyCode;
use splitdesk::journal::Journal;
use splitdesk::roster::{printable, Roster};
use splitdesk::tui::app::{App, Focus, Options};
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use tui_support::{ch, key, pane_rows, run_effects, screen, whole_document, words};

/// The demo set with the most intervals (8 hill repeats with their recoveries).
const LONGEST: &str = "tobias-wrenfield/2026-11-10-hill-repeats";

const SIZES: [(u16, u16); 3] = [(80, 24), (120, 36), (160, 48)];

/// An app on the demo roster (in place; nothing is written to it) with an in-memory
/// journal, at `size`, nothing scanned yet.
fn demo_app(size: (u16, u16)) -> App {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let mut app = App::new(
        Roster::open(&demo).expect("demo roster"),
        Journal::open_in_memory().expect("journal"),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    );
    app.size = size;
    app
}

fn open(app: &mut App, id: &str) {
    let fx = app.open_session(id);
    run_effects(app, fx);
    assert_eq!(app.focus, Focus::Verdict, "{id}");
}

/// The pane's bottom border line.
fn pane_bottom(text: &str) -> String {
    let lines: Vec<&str> = text.lines().collect();
    let top = lines.iter().position(|l| l.contains("Verdict")).unwrap();
    lines[top + 1..]
        .iter()
        .find(|l| l.contains('╰') && l.contains('╯'))
        .map(|l| l.to_string())
        .unwrap_or_default()
}

#[test]
fn every_finding_of_every_demo_session_is_reachable_at_80x24() {
    let mut app = demo_app((80, 24));
    let fx = app.start_scan();
    run_effects(&mut app, fx);
    let ids: Vec<String> = app
        .roster
        .athletes
        .iter()
        .flat_map(|a| a.activities.iter().map(|x| a.session_id(x)))
        .collect();
    assert!(ids.len() > 100, "the demo roster has its sessions");
    let mut checked = 0;
    for id in &ids {
        open(&mut app, id);
        let o = app.open.as_ref().unwrap();
        let Some(review) = o.review.clone() else {
            continue;
        };
        let findings: Vec<String> = o
            .load_spike
            .iter()
            .chain(&review.findings)
            .map(|f| printable(&f.text))
            .collect();
        let doc = words(&whole_document(&mut app).join(" "));
        for f in &findings {
            assert!(
                doc.contains(&words(f)),
                "{id}: {f:?} not reachable in\n{doc}"
            );
            checked += 1;
        }
        // Every interval row is there too (the last one, the cool-down, often cut before).
        if let Some(last) = review.intervals.last() {
            let clock = splitdesk::model::units::format_clock(last.start_s);
            assert!(doc.contains(&clock), "{id}: last interval row missing");
        }
    }
    assert!(checked > 100, "findings checked: {checked}");
}

/// Score every work interval, set the verdict and reveal the notes.
fn grade_and_reveal(app: &mut App) {
    let n = app.open.as_ref().unwrap().work_count();
    for _ in 0..n {
        ch(app, '3');
    }
    ch(app, 'v');
    ch(app, 'o');
    key(app, KeyCode::Esc);
    assert!(app.open.as_ref().unwrap().revealed(), "revealed");
}

#[test]
fn the_longest_set_scrolled_to_the_end_before_and_after_the_reveal() {
    let mut app = demo_app((80, 24));
    open(&mut app, LONGEST);
    let o = app.open.as_ref().unwrap();
    assert_eq!(o.work_count(), 8, "eight hill repeats");
    for (w, h) in SIZES {
        app.size = (w, h);
        ch(&mut app, 'G');
        let text = screen(&mut app, w, h);
        let rows = pane_rows(&text).join("\n");
        // The end of the document is on screen: the findings' last line.
        let last = app.open.as_ref().unwrap().review.as_ref().unwrap();
        let last_finding = last.findings.last().map(|f| printable(&f.text));
        if let Some(f) = last_finding {
            let tail: Vec<&str> = f.split_whitespace().rev().take(2).collect();
            assert!(rows.contains(tail[0]), "{rows}");
        }
        insta::assert_snapshot!(format!("longest_blind_end_{w}x{h}"), rows);
    }
    grade_and_reveal(&mut app);
    for (w, h) in SIZES {
        app.size = (w, h);
        ch(&mut app, 'G');
        let text = screen(&mut app, w, h);
        let rows = pane_rows(&text).join("\n");
        insta::assert_snapshot!(format!("longest_revealed_end_{w}x{h}"), rows);
    }
}

#[test]
fn the_drafts_sign_off_is_reachable_after_the_reveal_at_80x24() {
    let mut app = demo_app((80, 24));
    open(&mut app, LONGEST);
    grade_and_reveal(&mut app);
    let o = app.open.as_ref().unwrap();
    let draft = o.feedback.as_ref().expect("a draft").lines.clone();
    let last = draft
        .iter()
        .rev()
        .find(|l| !l.trim().is_empty())
        .expect("a last line")
        .clone();
    // Not on screen before scrolling: the pane is too short for the whole document.
    let first = words(&pane_rows(&screen(&mut app, 80, 24)).join(" "));
    assert!(!first.contains(&words(&last)), "{first}");
    ch(&mut app, 'G');
    let text = screen(&mut app, 80, 24);
    let end = words(&pane_rows(&text).join(" "));
    assert!(end.contains(&words(&last)), "{last:?} not in\n{text}");
    // The scroll position shows in the border, ending at the last row.
    let bottom = pane_bottom(&text);
    let pos = bottom
        .split_whitespace()
        .find(|w| w.contains('/') && w.contains('-'))
        .unwrap_or_else(|| panic!("no position in {bottom:?}"));
    let (range, total) = pos.split_once('/').unwrap();
    assert_eq!(range.split_once('-').unwrap().1, total, "{bottom}");
    // Home goes back to the top.
    ch(&mut app, 'g');
    let text = screen(&mut app, 80, 24);
    assert!(pane_bottom(&text).contains(" 1-"), "{text}");
}

#[test]
fn the_selected_interval_stays_in_view_at_80x24() {
    let mut app = demo_app((80, 24));
    open(&mut app, LONGEST);
    let n = app.open.as_ref().unwrap().work_count();
    for i in 0..n {
        let rows = pane_rows(&screen(&mut app, 80, 24));
        let want = format!("▶ {:>2} ", i + 1);
        assert!(
            rows.iter().any(|r| r.starts_with(&want)),
            "interval {} not in view:\n{}",
            i + 1,
            rows.join("\n")
        );
        key(&mut app, KeyCode::Down);
    }
    // After scrolling away, moving the selection brings it back.
    ch(&mut app, 'g');
    key(&mut app, KeyCode::Up);
    let rows = pane_rows(&screen(&mut app, 80, 24));
    let want = format!("▶ {:>2} ", n - 1);
    assert!(
        rows.iter().any(|r| r.starts_with(&want)),
        "{}",
        rows.join("\n")
    );
}

#[test]
fn the_editor_cursor_stays_in_view_at_80x24() {
    let mut app = demo_app((80, 24));
    open(&mut app, LONGEST);
    grade_and_reveal(&mut app);
    ch(&mut app, 'f');
    let lines = app
        .open
        .as_ref()
        .unwrap()
        .feedback
        .as_ref()
        .unwrap()
        .lines
        .len();
    for _ in 0..lines {
        key(&mut app, KeyCode::Down);
    }
    key(&mut app, KeyCode::End);
    for c in "Zq".chars() {
        ch(&mut app, c);
    }
    let ed = app.open.as_ref().unwrap().feedback.as_ref().unwrap();
    assert_eq!(ed.row, lines - 1);
    assert!(ed.lines[ed.row].ends_with("Zq"));
    let rows = pane_rows(&screen(&mut app, 80, 24)).join("\n");
    assert!(rows.contains("Zq"), "{rows}");
}

#[test]
fn the_table_keeps_its_columns_apart_on_a_long_run() {
    // A run over an hour: its clock cells take seven characters.
    let mut app = demo_app((80, 24));
    let long = app
        .roster
        .athletes
        .iter()
        .flat_map(|a| a.activities.iter().map(|x| a.session_id(x)))
        .find(|id| id.ends_with("long-run"))
        .unwrap();
    open(&mut app, &long);
    for (w, h) in SIZES {
        let rows = pane_rows(&screen(&mut app, w, h));
        let table: Vec<&String> = rows
            .iter()
            .skip_while(|r| !r.contains("# kind"))
            .skip(1)
            .take_while(|r| !r.starts_with("Grading"))
            .collect();
        assert!(!table.is_empty(), "{}", rows.join("\n"));
        for r in table {
            // Two clocks never touch: every `m:ss` or `h:mm:ss` cell stands alone.
            for word in r.split_whitespace() {
                assert!(word.matches(':').count() <= 2, "{w}x{h}: {r}");
            }
        }
    }
}
