//! End to end: the real binary in tmux on a copy of part of the demo roster with a fresh
//! journal. Open the next unreviewed session, try to reveal the notes (refused), score every
//! work interval, set the verdict, reveal (the note appears), copy and save the feedback,
//! quit; then the headless commands show what was done.
//!
//! Uses `$SPLITDESK_E2E_BIN` when set (`.ci/run` points it at the release build), else the
//! test build of the binary. Needs tmux: skipped with a message when it is missing, except
//! under `CI=true`, where that is a failure.

mod tmux_support;

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use tmux_support::{binary, copy_dir, need_tmux, run, running, Tmux};

const ATHLETE: &str = "tobias-wrenfield";
const SESSION: &str = "tobias-wrenfield/2026-10-20-hill-repeats";
const NOTE_START: &str = "Hills: all eight done";

/// A copy of one demo athlete in `dir`, and the workstation started on it in a detached
/// tmux session of 160x48 with a fresh journal. `wrap` gets the command line of the
/// binary and returns the shell script tmux runs.
fn start(dir: &Path, wrap: impl FnOnce(&str) -> String) -> (Tmux, PathBuf, PathBuf) {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = dir.join("roster");
    copy_dir(&demo.join(ATHLETE), &roster.join(ATHLETE));
    std::fs::copy(demo.join("roster.toml"), roster.join("roster.toml")).unwrap();
    let journal = dir.join("coach/journal.sqlite");
    let data = dir.join("data");
    let tmux = Tmux::new(dir.join("tmux.sock"), "e2e");
    let command = format!(
        "SPLITDESK_CONFIG=/nonexistent XDG_DATA_HOME='{}' '{}' --roster '{}' --journal '{}'",
        data.display(),
        binary().display(),
        roster.display(),
        journal.display(),
    );
    let script = wrap(&command);
    tmux.new_session(160, 48, &script);
    (tmux, roster, journal)
}

#[test]
fn workstation_leaves_when_its_terminal_is_killed() {
    if !need_tmux() || !Path::new("/proc/self/stat").exists() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let pid_file = dir.path().join("pid");
    let (tmux, _, _) = start(dir.path(), |command| {
        format!("echo $$ > '{}'; exec env {command}", pid_file.display())
    });
    tmux.wait_for("to review");
    let pid = std::fs::read_to_string(&pid_file)
        .unwrap()
        .trim()
        .to_string();
    assert!(running(&pid), "the workstation is not running");
    // Open a session so the chart and workers are live, then take the terminal away.
    tmux.keys(&["]"]);
    tmux.wait_for("[blind]");
    let _ = tmux.cmd().arg("kill-server").status();
    let start = Instant::now();
    while running(&pid) {
        assert!(
            start.elapsed() < Duration::from_secs(10),
            "the workstation kept running after its terminal was killed"
        );
        std::thread::sleep(Duration::from_millis(100));
    }
}

#[test]
fn coach_reviews_a_session_blind_in_the_real_binary() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let done = dir.path().join("exit-code");
    let (tmux, roster, journal) = start(dir.path(), |command| {
        format!("{command}; echo $? > '{}'; sleep 30", done.display())
    });

    tmux.wait_for("to review");
    // The daily queue: the oldest unreviewed session opens blind, verdict pane focused.
    tmux.keys(&["]"]);
    let s = tmux.wait_for("[blind]");
    assert!(s.contains("Hill repeats"), "{s}");
    tmux.wait_for("scores 0/8");
    // Reveal before grading: refused, and the note is nowhere on screen.
    tmux.keys(&["o"]);
    let s = tmux.wait_for("notes stay hidden until grading is complete");
    assert!(
        s.contains("scores missing for work intervals 1, 2, 3"),
        "{s}"
    );
    assert!(
        !s.contains(NOTE_START),
        "the note leaked before grading:\n{s}"
    );
    // Score the eight repeats (each digit moves to the next), then the verdict.
    tmux.keys(&["4", "4", "4", "3", "4", "3", "3", "4"]);
    let s = tmux.wait_for("scores 8/8");
    assert!(!s.contains(NOTE_START), "{s}");
    tmux.keys(&["v"]);
    tmux.keys(&["o"]);
    let s = tmux.wait_for(NOTE_START);
    assert!(s.contains("notes revealed"), "{s}");
    // Copy (inside tmux: tmux's buffer and OSC 52) and save the feedback draft.
    tmux.keys(&["Escape", "y"]);
    tmux.wait_for("feedback put in tmux's buffer");
    tmux.keys(&["s"]);
    let s = tmux.wait_for("feedback saved to");
    assert!(s.contains("feedback done") || s.contains("saved"), "{s}");
    tmux.keys(&["q"]);
    let start = Instant::now();
    while !done.exists() {
        assert!(
            start.elapsed() < Duration::from_secs(15),
            "the workstation did not quit"
        );
        std::thread::sleep(Duration::from_millis(100));
    }
    assert_eq!(std::fs::read_to_string(&done).unwrap().trim(), "0");

    // The headless commands see what the coach did.
    let run = |args: &[&str]| run(&roster, &journal, args);
    let notes = run(&["notes", SESSION]);
    assert_eq!(notes.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&notes.stdout).starts_with(NOTE_START));
    let exported = run(&["export", "feedback", "--athlete", ATHLETE]);
    let text = String::from_utf8_lossy(&exported.stdout);
    assert!(text.contains("Hi Tobias,"), "{text}");
    assert_eq!(text.matches("To Tobias").count(), 1, "{text}");
    let grades = run(&["grade", SESSION, "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&grades.stdout).unwrap();
    assert_eq!(v["blind_scores"]["4"], 3);
    assert_eq!(v["verdict"], "met");
    assert_eq!(v["stage"], "feedback done");
}
