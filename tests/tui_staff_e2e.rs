//! Two coaches of a staff, each at a workstation of their own (the real binary in tmux), on
//! one PostgreSQL journal: the colleague's "reviewing now" mark shows up on the other
//! workstation without a key press, each grades blind, one coach's reveal shows nothing to
//! the other, and the colleague's grades come only after one's own grading (`notes`).
//!
//! Needs tmux and a PostgreSQL server (`SPLITDESK_TEST_PG_URL`, see DEVELOPERS.md); skipped
//! with a message without them, except under `CI=true`.

mod tmux_support;

#[path = "pg_support/mod.rs"]
mod pg_support;

use std::path::Path;
use std::process::Output;

use tmux_support::{binary, copy_dir, need_tmux, Tmux};

const ATHLETE: &str = "tobias-wrenfield";
const SESSION: &str = "tobias-wrenfield/2026-10-20-hill-repeats";
const NOTE_START: &str = "Hills: all eight done";

/// Run the binary on the roster and the server journal, as `coach` when given.
fn cli(roster: &Path, url: &str, coach: Option<&str>, args: &[&str]) -> Output {
    let mut c = std::process::Command::new(binary());
    c.env("SPLITDESK_CONFIG", "/nonexistent")
        .env_remove("SPLITDESK_JOURNAL")
        .env_remove("SPLITDESK_COACH")
        .arg("--roster")
        .arg(roster)
        .arg("--journal")
        .arg(url);
    if let Some(name) = coach {
        c.arg("--as").arg(name);
    }
    c.args(args).output().expect("run splitdesk")
}

fn workstation(dir: &Path, roster: &Path, url: &str, coach: &str, width: u16) -> Tmux {
    let tmux = Tmux::new(dir.join(format!("{coach}.sock")), coach);
    let command = format!(
        "SPLITDESK_CONFIG=/nonexistent XDG_DATA_HOME='{}' '{}' --roster '{}' --journal '{}' \
         --as '{coach}'; sleep 30",
        dir.join("data").display(),
        binary().display(),
        roster.display(),
        url,
    );
    let height = if width >= 160 { 48 } else { 24 };
    tmux.new_session(width, height, &command);
    tmux
}

#[test]
fn two_workstations_on_one_server_journal_keep_each_coach_blind() {
    if !need_tmux() {
        return;
    }
    let Some(url) = pg_support::fresh_database("tui_staff_e2e") else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = dir.path().join("roster");
    copy_dir(&demo.join(ATHLETE), &roster.join(ATHLETE));
    std::fs::copy(demo.join("roster.toml"), roster.join("roster.toml")).unwrap();
    for name in ["Ana", "Ben"] {
        let out = cli(&roster, &url, None, &["staff", "add", name]);
        assert!(out.status.success(), "{out:?}");
    }

    let ana = workstation(dir.path(), &roster, &url, "Ana", 160);
    let ben = workstation(dir.path(), &roster, &url, "Ben", 160);
    ana.wait_for_all(
        &["coach Ana", "to review"],
        tmux_support::WAIT,
        tmux_support::POLL,
    );
    ben.wait_for_all(
        &["coach Ben", "to review"],
        tmux_support::WAIT,
        tmux_support::POLL,
    );

    // Ana opens the oldest unreviewed session; Ben's roster marks it without a key press.
    ana.keys(&["]"]);
    let s = ana.wait_for("[blind]");
    assert!(s.contains("Hill repeats"), "{s}");
    // (At 80x24 the session is below the visible rows: the pane's foot says so.)
    let s = ben.wait_for("◆");
    assert!(
        s.contains("Ana reviewing") || s.contains("another coach reviewing now"),
        "{s}"
    );

    // Ana grades the eight repeats and the verdict, and reveals the note.
    ana.keys(&["4", "4", "4", "3", "4", "3", "3", "4"]);
    ana.wait_for("scores 8/8");
    ana.keys(&["v", "o"]);
    ana.wait_for(NOTE_START);

    // Ben opens the same session: told Ana has it open, and he sees none of her grading.
    ben.keys(&["]"]);
    let s = ben.wait_for("[blind]");
    assert!(s.contains("Ana is reviewing this session now too"), "{s}");
    let s = ben.wait_for("scores 0/8");
    assert!(
        !s.contains(NOTE_START),
        "Ana's reveal showed Ben the note:\n{s}"
    );
    ben.keys(&["o"]);
    let s = ben.wait_for("notes stay hidden until grading is complete");
    assert!(!s.contains(NOTE_START), "{s}");

    // Headless, as Ben: the note and Ana's grades stay hidden until his own are complete.
    let notes = cli(&roster, &url, Some("Ben"), &["notes", SESSION]);
    assert_ne!(notes.status.code(), Some(0), "{notes:?}");
    let text = String::from_utf8_lossy(&notes.stdout);
    assert!(
        !text.contains(NOTE_START) && !text.contains("Ana"),
        "{text}"
    );

    // Ben grades (other values) and reveals: the note, and Ana's blind grades beside his.
    ben.keys(&["2", "3", "2", "3", "2", "3", "2", "3", "v", "o"]);
    ben.wait_for(NOTE_START);
    let notes = cli(&roster, &url, Some("Ben"), &["notes", SESSION]);
    assert_eq!(notes.status.code(), Some(0), "{notes:?}");
    let text = String::from_utf8_lossy(&notes.stdout);
    assert!(text.contains(NOTE_START), "{text}");
    assert!(
        text.contains("Ana: 1=4 2=4 3=4 4=3 5=4 6=3 7=3 8=4; verdict met"),
        "{text}"
    );

    // The head coach's calibration, asked as Ana (who has graded the session too): both
    // coaches' blind scores of the eight repeats.
    let agreement = cli(&roster, &url, Some("Ana"), &["agreement", "--json"]);
    assert!(agreement.status.success(), "{agreement:?}");
    let json: serde_json::Value = serde_json::from_slice(&agreement.stdout).unwrap();
    assert_eq!(json["pairs"][0]["items"], 8, "{json}");

    ana.keys(&["q"]);
    ben.keys(&["q"]);
    pg_support::drop_database(&url);
}
