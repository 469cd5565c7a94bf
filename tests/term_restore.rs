//! The coach's terminal is restored whatever ends the workstation: a panic in the middle
//! of a draw (made on purpose with `SPLITDESK_TEST_PANIC_IN_DRAW=1`), SIGTERM, and SIGHUP.
//! The real binary runs in tmux; after it ends, the same pane shows the main screen
//! (alternate screen left), a visible cursor, a terminal in canonical mode with echo
//! (`stty -a` run in the pane), and, after the panic, the panic message.
//!
//! Uses `$SPLITDESK_E2E_BIN` when set (`.ci/run` points it at the release build), else the
//! test build of the binary. Needs tmux: skipped with a message when it is missing, except
//! under `CI=true`, where that is a failure.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

const ATHLETE: &str = "tobias-wrenfield";

fn binary() -> PathBuf {
    std::env::var_os("SPLITDESK_E2E_BIN")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_BIN_EXE_splitdesk")))
}

/// Skip (or, under `CI=true`, fail) without tmux.
fn need_tmux() -> bool {
    let ok = Command::new("tmux")
        .arg("-V")
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false);
    if ok {
        return true;
    }
    assert!(
        std::env::var("CI").as_deref() != Ok("true"),
        "tmux is missing under CI=true; .ci/run installs it"
    );
    eprintln!("skipped: tmux is not installed");
    false
}

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap().flatten() {
        let p = e.path();
        let dest = to.join(e.file_name());
        if p.is_dir() {
            copy_dir(&p, &dest);
        } else {
            std::fs::copy(&p, &dest).unwrap();
        }
    }
}

struct Tmux {
    socket: PathBuf,
}

impl Tmux {
    fn cmd(&self) -> Command {
        let mut c = Command::new("tmux");
        c.arg("-S").arg(&self.socket);
        c
    }

    fn keys(&self, keys: &[&str]) {
        for k in keys {
            let ok = self
                .cmd()
                .args(["send-keys", "-t", "t", k])
                .status()
                .unwrap()
                .success();
            assert!(ok, "send-keys {k}");
            std::thread::sleep(Duration::from_millis(150));
        }
    }

    /// The pane's text, wrapped lines joined.
    fn screen(&self) -> String {
        let out = self
            .cmd()
            .args(["capture-pane", "-p", "-J", "-t", "t"])
            .output()
            .unwrap();
        String::from_utf8_lossy(&out.stdout).into_owned()
    }

    /// A tmux format of the pane, e.g. `#{alternate_on}`.
    fn format(&self, f: &str) -> String {
        let out = self
            .cmd()
            .args(["display-message", "-p", "-t", "t", f])
            .output()
            .unwrap();
        String::from_utf8_lossy(&out.stdout).trim().to_string()
    }

    /// Press `key` until the screen shows `text` (a key pressed while the workstation is
    /// still starting can go unseen on a busy machine).
    fn press_until(&self, key: &str, text: &str) -> String {
        let start = Instant::now();
        loop {
            self.keys(&[key]);
            let pressed = Instant::now();
            while pressed.elapsed() < Duration::from_secs(5) {
                let s = self.screen();
                if s.contains(text) {
                    return s;
                }
                std::thread::sleep(Duration::from_millis(100));
            }
            assert!(
                start.elapsed() < Duration::from_secs(40),
                "timed out waiting for {text:?} after {key:?}; screen:\n{}",
                self.screen()
            );
        }
    }

    fn wait_for(&self, text: &str) -> String {
        let start = Instant::now();
        loop {
            let s = self.screen();
            if s.contains(text) {
                return s;
            }
            assert!(
                start.elapsed() < Duration::from_secs(30),
                "timed out waiting for {text:?}; screen:\n{s}"
            );
            std::thread::sleep(Duration::from_millis(100));
        }
    }
}

impl Drop for Tmux {
    fn drop(&mut self) {
        let _ = self.cmd().arg("kill-server").status();
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
    let tmux = Tmux {
        socket: dir.join("tmux.sock"),
    };
    let ok = tmux
        .cmd()
        .args([
            "new-session",
            "-d",
            "-s",
            "t",
            "-x",
            "120",
            "-y",
            "40",
            "sh",
            "-c",
        ])
        .arg(&script)
        .status()
        .unwrap()
        .success();
    assert!(ok, "tmux new-session");
    (tmux, pid)
}

/// After the workstation ended: main screen, cursor visible, canonical mode with echo.
/// Returns the pane's text.
fn assert_restored(tmux: &Tmux) -> String {
    let s = tmux.wait_for("\ndone");
    assert_eq!(
        tmux.format("#{alternate_on}"),
        "0",
        "still on the alternate screen:\n{s}"
    );
    assert_eq!(
        tmux.format("#{cursor_flag}"),
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
    tmux.press_until("]", "\ndone");
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

#[test]
fn sigterm_restores_the_terminal() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, pid) = start(dir.path(), "");
    tmux.wait_for("to review");
    tmux.press_until("]", "[blind]");
    signal(&pid, "-TERM");
    let s = assert_restored(&tmux);
    assert!(s.contains("exit=0"), "{s}");
}

#[test]
fn sighup_restores_the_terminal() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, pid) = start(dir.path(), "");
    tmux.wait_for("to review");
    tmux.press_until("]", "[blind]");
    signal(&pid, "-HUP");
    let s = assert_restored(&tmux);
    assert!(s.contains("exit=0"), "{s}");
}

#[test]
fn the_test_panic_is_inert_without_the_variable() {
    if !need_tmux() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let (tmux, _) = start(dir.path(), "SPLITDESK_TEST_PANIC_IN_DRAW=0");
    tmux.wait_for("to review");
    tmux.press_until("]", "[blind]");
    tmux.keys(&["q"]);
    let s = assert_restored(&tmux);
    assert!(s.contains("exit=0"), "{s}");
}
