//! The coach's terminal is restored whatever ends the workstation: a panic in the middle
//! of a draw (made on purpose with `SPLITDESK_TEST_PANIC_IN_DRAW=1`), SIGTERM, and SIGHUP.
//! The real binary runs in tmux; after it ends, the same pane shows the main screen
//! (alternate screen left), a visible cursor, a terminal in canonical mode with echo
//! (`stty -a` run in the pane), and, after the panic, the panic message.
//!
//! Uses `$SPLITDESK_E2E_BIN` when set (`.ci/run` points it at the release build), else the
//! test build of the binary. Needs tmux: skipped with a message when it is missing, except
//! under `CI=true`, where that is a failure.

mod tmux_support;

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

use tmux_support::{binary, copy_dir, need_tmux, Tmux};

const ATHLETE: &str = "tobias-wrenfield";

/// A tmux format of the pane, e.g. `#{alternate_on}`.
fn format(tmux: &Tmux, f: &str) -> String {
    let out = tmux
        .cmd()
        .args(["display-message", "-p", "-t", &tmux.target, f])
        .output()
        .unwrap();
    String::from_utf8_lossy(&out.stdout).trim().to_string()
}

/// Press `key` until the screen shows `text` (a key pressed while the workstation is
/// still starting can go unseen on a busy machine).
fn press_until(tmux: &Tmux, key: &str, text: &str) -> String {
    let start = Instant::now();
    loop {
        tmux.keys(&[key]);
        let pressed = Instant::now();
        while pressed.elapsed() < Duration::from_secs(5) {
            let s = tmux.screen();
            if s.contains(text) {
                return s;
            }
            std::thread::sleep(Duration::from_millis(100));
        }
        assert!(
            start.elapsed() < Duration::from_secs(40),
            "timed out waiting for {text:?} after {key:?}; screen:\n{}",
            tmux.screen()
        );
    }
}

/// The workstation in a tmux pane of 120x40 on a copy of one demo athlete, `env` set for
/// it. When it ends, the pane's shell prints `exit=CODE`, the terminal modes (`stty -a`)
/// and `done`, then waits. Returns tmux and the file holding the workstation's pid.
fn start(dir: &Path, env: &str) -> (Tmux, PathBuf) {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = dir.join("roster");
    copy_dir(&demo.join(ATHLETE), &roster.join(ATHLETE));
    std::fs::copy(demo.join("roster.toml"), roster.join("roster.toml")).unwrap();
    let pid = dir.join("pid");
    let inner = dir.join("run.sh");
    std::fs::write(
        &inner,
        format!(
            "echo $$ > '{}'\nexec env RUST_BACKTRACE=0 SPLITDESK_CONFIG=/nonexistent XDG_DATA_HOME='{}' {env} '{}' --roster '{}' --journal '{}'\n",
            pid.display(),
            dir.join("data").display(),
            binary().display(),
            roster.display(),
            dir.join("journal.sqlite").display(),
        ),
    )
    .unwrap();
    let script = format!(
        "sh '{}'; echo exit=$?; stty -a; echo done; sleep 60",
        inner.display()
    );
    let mut tmux = Tmux::new(dir.join("tmux.sock"), "t");
    // The pane's text with wrapped lines joined.
    tmux.join_wrapped = true;
    tmux.new_session(120, 40, &script);
    (tmux, pid)
}

/// After the workstation ended: main screen, cursor visible, canonical mode with echo.
/// Returns the pane's text.
fn assert_restored(tmux: &Tmux) -> String {
    let s = tmux.wait_for("\ndone");
    assert_eq!(
        format(tmux, "#{alternate_on}"),
        "0",
        "still on the alternate screen:\n{s}"
    );
    assert_eq!(
        format(tmux, "#{cursor_flag}"),
        "1",
        "the cursor is hidden:\n{s}"
    );
    let modes: Vec<&str> = s.split_whitespace().collect();
    for m in ["icanon", "echo", "isig", "icrnl", "opost"] {
        assert!(modes.contains(&m), "{m} is off (raw mode left on):\n{s}");
        assert!(!modes.contains(&format!("-{m}").as_str()), "-{m}:\n{s}");
    }
    // The workstation's screen is gone: the pane shows the shell's lines.
    assert!(!s.contains("to review"), "{s}");
    s
}

fn signal(pid_file: &Path, sig: &str) {
    let pid = std::fs::read_to_string(pid_file).unwrap();
    // The shell's own `kill`: no procps needed.
    let ok = Command::new("sh")
        .args(["-c", &format!("kill {sig} {}", pid.trim())])
        .status()
        .unwrap()
        .success();
    assert!(ok, "kill {sig}");
}

#[test]
fn a_panic_in_the_middle_of_a_draw_restores_the_terminal_and_the_message_is_readable() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, _) = start(dir.path(), "SPLITDESK_TEST_PANIC_IN_DRAW=1");
    tmux.wait_for("to review");
    // Opening a session draws the frame that panics.
    press_until(&tmux, "]", "\ndone");
    let s = assert_restored(&tmux);
    assert!(s.contains("exit=101"), "{s}");
    let line = s
        .lines()
        .find(|l| l.contains("test panic in the middle of a draw"))
        .unwrap_or_else(|| panic!("no panic message:\n{s}"));
    assert_eq!(
        line.trim(),
        "test panic in the middle of a draw (SPLITDESK_TEST_PANIC_IN_DRAW=1)"
    );
    assert!(s.contains("panicked at"), "{s}");
}

/// With a session open, `sig` ends the workstation with exit code 0 and the terminal is
/// restored.
fn signal_restores_the_terminal(sig: &str) {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, pid) = start(dir.path(), "");
    tmux.wait_for("to review");
    press_until(&tmux, "]", "[blind]");
    signal(&pid, sig);
    let s = assert_restored(&tmux);
    assert!(s.contains("exit=0"), "{s}");
}

#[test]
fn sigterm_restores_the_terminal() {
    signal_restores_the_terminal("-TERM");
}

#[test]
fn sighup_restores_the_terminal() {
    signal_restores_the_terminal("-HUP");
}

#[test]
fn the_test_panic_is_inert_without_the_variable() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, _) = start(dir.path(), "SPLITDESK_TEST_PANIC_IN_DRAW=0");
    tmux.wait_for("to review");
    press_until(&tmux, "]", "[blind]");
    tmux.keys(&["q"]);
    let s = assert_restored(&tmux);
    assert!(s.contains("exit=0"), "{s}");
}
