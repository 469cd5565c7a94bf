//! Text from a shared roster cannot reach the coach's terminal as escape sequences: an
//! athlete folder, an activity file and a note file named with an OSC 52 sequence (which
//! would set the clipboard), a plan title, purpose, note and athlete name holding escape
//! sequences, C1 controls and bidirectional overrides. Every text command prints them with
//! visible stand-ins; JSON keeps the exact text; the workstation shows no control character
//! in any cell. Invented roster (tests only).

mod roster_support;

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use splitdesk::journal::Journal;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Options};
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;

/// Sets the clipboard to "Hello" in a terminal that honours OSC 52.
const OSC52: &str = "\u{1b}]52;c;SGVsbG8=\u{7}";
/// The same as the coach now sees it.
const OSC52_SHOWN: &str = "␛]52;c;SGVsbG8=␇";

fn athlete_id() -> String {
    format!("tova{OSC52}renn")
}

fn reps_stem() -> String {
    format!("2026-11-03-reps{OSC52}")
}

fn reps_id() -> String {
    format!("{}/{}", athlete_id(), reps_stem())
}

/// The roster of `roster_support` made hostile. Returns the reps activity file.
fn hostile_roster(root: &Path) -> PathBuf {
    roster_support::write_roster(root);
    let a = root.join(athlete_id());
    std::fs::rename(root.join("tova-renn"), &a).unwrap();
    let acts = a.join("activities");
    let reps = acts.join(format!("{}.fit", reps_stem()));
    std::fs::rename(acts.join("2026-11-03-reps.fit"), &reps).unwrap();
    std::fs::rename(
        acts.join("2026-11-01-easy.fit"),
        acts.join("2026-11-01-easy\u{202e}nur.fit"),
    )
    .unwrap();
    std::fs::remove_file(a.join("notes/2026-11-03-reps.txt")).unwrap();
    std::fs::write(
        a.join(format!("notes/{}.txt", reps_stem())),
        format!("Felt {OSC52}awful\u{1b}[2J, legs\u{9b}31m like lead.\u{202e} zebraflute\r\n"),
    )
    .unwrap();
    std::fs::write(
        a.join("plans/2026-11-03-reps.toml"),
        "title = \"5k\\u001b]0;owned\\u0007 repeats\"\n\
         purpose = \"Hold 5k pace\\u001b[31m on every repeat\\u202e\"\n\
         steps = \"12:00 easy; 5 x 3:00 @ 5k / 2:00 jog; 8:00 easy\"\n",
    )
    .unwrap();
    let profile = a.join("athlete.toml");
    let text = std::fs::read_to_string(&profile).unwrap();
    std::fs::write(
        &profile,
        text.replace(
            "name = \"Tova Renn\"",
            "name = \"Tova\\u001b[5m Renn\\u009b\"",
        ),
    )
    .unwrap();
    reps
}

/// The first unsafe character in `s`, if any: C0 other than line feed and tab, DEL, C1,
/// or a bidirectional control.
fn unsafe_char(s: &str) -> Option<char> {
    s.chars().find(|&c| {
        let u = u32::from(c);
        (u < 0x20 && c != '\n' && c != '\t')
            || (0x7f..=0x9f).contains(&u)
            || matches!(c, '\u{061C}' | '\u{200E}' | '\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
    })
}

struct Run {
    code: Option<i32>,
    stdout: String,
    stderr: String,
}

fn run(root: &Path, journal: &Path, args: &[&str]) -> Run {
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml")
        .arg("--roster")
        .arg(root)
        .arg("--journal")
        .arg(journal)
        .args(args)
        .output()
        .unwrap();
    // Raw bytes: a stray ESC or BEL must not hide in lossy decoding.
    for (what, bytes) in [("stdout", &out.stdout), ("stderr", &out.stderr)] {
        assert!(
            !bytes.iter().any(|&b| b == 0x1b || b == 0x07 || b == b'\r'),
            "{args:?} {what} holds a raw control byte: {:?}",
            String::from_utf8_lossy(bytes)
        );
    }
    let r = Run {
        code: out.status.code(),
        stdout: String::from_utf8(out.stdout).unwrap(),
        stderr: String::from_utf8(out.stderr).unwrap(),
    };
    for s in [&r.stdout, &r.stderr] {
        assert_eq!(unsafe_char(s), None, "{args:?}: {s:?}");
    }
    r
}

#[test]
fn text_commands_show_roster_text_with_visible_stand_ins() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    let reps = hostile_roster(&root);
    let journal = dir.path().join("journal.sqlite");
    let id = reps_id();

    let q = run(&root, &journal, &["queue"]);
    assert_eq!(q.code, Some(0), "{}", q.stderr);
    assert!(
        q.stdout.contains(&format!(
            "tova{OSC52_SHOWN}renn/2026-11-03-reps{OSC52_SHOWN}"
        )),
        "{}",
        q.stdout
    );
    assert!(q.stdout.contains("5k␛]0;owned␇ repeats"), "{}", q.stdout);
    assert!(
        q.stdout.contains("2026-11-01-easy\u{FFFD}nur"),
        "{}",
        q.stdout
    );

    let c = run(&root, &journal, &["check", root.to_str().unwrap()]);
    assert!(c.stdout.contains("2 sessions, 2 readable"), "{}", c.stdout);

    let a = run(&root, &journal, &["analyze", reps.to_str().unwrap()]);
    assert_eq!(a.code, Some(0), "{}", a.stderr);
    assert!(
        a.stdout
            .contains("Purpose: Hold 5k pace␛[31m on every repeat\u{FFFD}"),
        "{}",
        a.stdout
    );

    let inspect = run(&root, &journal, &["inspect", reps.to_str().unwrap()]);
    assert_eq!(inspect.code, Some(0), "{}", inspect.stderr);

    // Grading refused halfway names the session: still safe.
    let g = run(&root, &journal, &["grade", &id, "--score", "1=3"]);
    assert_eq!(g.code, Some(0), "{}", g.stderr);
    assert!(
        g.stdout.starts_with(&format!("tova{OSC52_SHOWN}renn/")),
        "{}",
        g.stdout
    );
    let n = run(&root, &journal, &["notes", &id]);
    assert_eq!(n.code, Some(3));
    assert!(n.stderr.contains("notes stay hidden"), "{}", n.stderr);
    let g = run(
        &root,
        &journal,
        &[
            "grade",
            &id,
            "--score",
            "2=3",
            "--score",
            "3=4",
            "--score",
            "4=4",
            "--score",
            "5=2",
            "--verdict",
            "met",
        ],
    );
    assert_eq!(g.code, Some(0), "{}", g.stderr);

    let n = run(&root, &journal, &["notes", &id]);
    assert_eq!(n.code, Some(0), "{}", n.stderr);
    assert_eq!(
        n.stdout,
        format!("Felt {OSC52_SHOWN}awful␛[2J, legs\u{FFFD}31m like lead.\u{FFFD} zebraflute\n")
    );
    for args in [
        vec!["feedback", id.as_str(), "--draft"],
        vec!["export", "feedback"],
        vec!["export", "feedback", "--format", "md"],
        vec!["bias-check"],
        vec!["trends", athlete_id().leak()],
        vec!["journal", "check"],
    ] {
        let r = run(&root, &journal, &args);
        assert_eq!(r.code, Some(0), "{args:?}: {}", r.stderr);
    }
    let plan = root.join(athlete_id()).join("plans/2026-11-03-reps.toml");
    let p = run(&root, &journal, &["plan", "check", plan.to_str().unwrap()]);
    assert_eq!(p.code, Some(0), "{}", p.stderr);

    // An error that embeds a roster path.
    let missing = format!("{id}x");
    let e = run(&root, &journal, &["grade", &missing, "--score", "1=3"]);
    assert_eq!(e.code, Some(2));
    assert!(e.stderr.starts_with("error: "), "{}", e.stderr);
    assert!(e.stderr.contains("no session"), "{}", e.stderr);
    let gone = root.join(athlete_id()).join("activities/gone.fit");
    let e = run(&root, &journal, &["inspect", gone.to_str().unwrap()]);
    assert_ne!(e.code, Some(0));
    assert!(
        e.stderr
            .contains(&format!("tova{OSC52_SHOWN}renn/activities/gone.fit")),
        "{}",
        e.stderr
    );
}

#[test]
fn json_keeps_the_exact_text() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    hostile_roster(&root);
    let journal = dir.path().join("journal.sqlite");
    let q = run(&root, &journal, &["queue", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&q.stdout).unwrap();
    let sessions: Vec<&str> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["session"].as_str().unwrap())
        .collect();
    assert!(sessions.contains(&reps_id().as_str()), "{sessions:?}");
    assert!(sessions.contains(&format!("{}/2026-11-01-easy\u{202e}nur", athlete_id()).as_str()));
    let titles: Vec<&str> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["title"].as_str().unwrap())
        .collect();
    assert!(
        titles.contains(&"5k\u{1b}]0;owned\u{7} repeats"),
        "{titles:?}"
    );
    let c = run(
        &root,
        &journal,
        &["check", "--json", root.to_str().unwrap()],
    );
    let v: serde_json::Value = serde_json::from_str(&c.stdout).unwrap();
    assert_eq!(v["sessions"], 2);
}

/// Every cell of a frame: no control or bidirectional character.
fn assert_clean(app: &mut App, w: u16, h: u16, what: &str) {
    app.size = (w, h);
    let mut term = ratatui::Terminal::new(ratatui::backend::TestBackend::new(w, h)).unwrap();
    term.draw(|f| splitdesk::tui::ui::draw(f, app)).unwrap();
    let buf = term.backend().buffer().clone();
    let mut screen = String::new();
    for y in 0..h {
        for x in 0..w {
            let sym = buf.cell((x, y)).unwrap().symbol();
            assert_eq!(
                unsafe_char(sym),
                None,
                "{what}: cell ({x},{y}) holds {sym:?}"
            );
            screen.push_str(sym);
        }
        screen.push('\n');
    }
    assert!(
        screen.contains("␛"),
        "{what}: the stand-in is visible:\n{screen}"
    );
}

#[test]
fn the_workstation_shows_no_control_character_in_any_cell() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    hostile_roster(&root);
    let roster = Roster::open(&root).unwrap();
    let mut app = App::new(
        roster,
        Journal::open_in_memory().unwrap(),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    );
    app.size = (160, 48);
    let fx = app.start_scan();
    tui_support::run_effects(&mut app, fx);
    assert_clean(&mut app, 160, 48, "roster");
    let fx = app.open_session(&reps_id());
    tui_support::run_effects(&mut app, fx);
    assert_clean(&mut app, 160, 48, "session open");
    for c in ['3', '3', '4', '4', '2', 'v', 'o'] {
        tui_support::ch(&mut app, c);
    }
    assert!(app.open.is_some());
    assert_clean(&mut app, 160, 48, "notes revealed");
    assert_clean(&mut app, 80, 24, "small");
}

mod tui_support;

/// The catch-all pass over a frame: whatever a pane wrote into a cell, no control or
/// bidirectional character is flushed to the terminal.
#[test]
fn the_last_pass_over_the_frame_scrubs_every_cell() {
    use ratatui::buffer::Buffer;
    use ratatui::layout::Rect;
    let mut buf = Buffer::empty(Rect::new(0, 0, 4, 1));
    buf[(0, 0)].set_symbol("\u{1b}");
    buf[(1, 0)].set_symbol("a\u{202e}");
    buf[(2, 0)].set_symbol("\u{9b}");
    buf[(3, 0)].set_symbol("é");
    splitdesk::tui::ui::scrub(&mut buf);
    let syms: Vec<&str> = (0..4).map(|x| buf[(x, 0)].symbol()).collect();
    assert_eq!(syms, ["␛", "a", "\u{FFFD}", "é"]);
}
