//! Driving the real binary in tmux: each test runs its own tmux server on a socket in its
//! temporary folder (never the user's server), sends keys and reads the pane's text.
//! Needs tmux: `need_tmux` skips with a message when it is missing, except under `CI=true`,
//! where that is a failure.
#![allow(dead_code)]

#[path = "../cli_support/mod.rs"]
mod cli_support;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

#[allow(unused_imports)]
pub use cli_support::{binary, run};

/// How long `Tmux::wait_for` waits for a text, and how often it looks.
pub const WAIT: Duration = Duration::from_secs(30);
pub const POLL: Duration = Duration::from_millis(100);

/// Skip (or, under `CI=true`, fail) without tmux.
pub fn need_tmux() -> bool {
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

/// Copy the folder `from` (recursively) to `to`.
pub fn copy_dir(from: &Path, to: &Path) {
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

/// Whether process `pid` is still running (a zombie left for a parent that does not reap
/// counts as ended).
pub fn running(pid: &str) -> bool {
    match std::fs::read_to_string(format!("/proc/{pid}/stat")) {
        Ok(stat) => !stat
            .rsplit_once(')')
            .is_some_and(|(_, rest)| rest.trim_start().starts_with('Z')),
        Err(_) => false,
    }
}

/// A tmux server on its own socket, and the session (`target`) the methods act on. The
/// server is killed when this is dropped.
pub struct Tmux {
    pub socket: PathBuf,
    pub target: String,
    /// Capture the pane with wrapped lines joined (`capture-pane -J`).
    pub join_wrapped: bool,
}

impl Tmux {
    pub fn new(socket: PathBuf, target: &str) -> Self {
        Tmux {
            socket,
            target: target.to_string(),
            join_wrapped: false,
        }
    }

    /// A tmux command on this server.
    pub fn cmd(&self) -> Command {
        let mut c = Command::new("tmux");
        c.arg("-S").arg(&self.socket);
        c
    }

    /// Start the detached session `target` of `width`x`height` running `sh -c script`.
    pub fn new_session(&self, width: u16, height: u16, script: &str) {
        let ok = self
            .cmd()
            .args(["new-session", "-d", "-s", &self.target])
            .args(["-x", &width.to_string(), "-y", &height.to_string()])
            .args(["sh", "-c", script])
            .status()
            .unwrap()
            .success();
        assert!(ok, "tmux new-session {}", self.target);
    }

    /// Send `keys` one at a time, 150 ms apart.
    pub fn keys(&self, keys: &[&str]) {
        for k in keys {
            let ok = self
                .cmd()
                .args(["send-keys", "-t", &self.target, k])
                .status()
                .unwrap()
                .success();
            assert!(ok, "send-keys {k}");
            std::thread::sleep(Duration::from_millis(150));
        }
    }

    /// Send `keys` in one burst (a single `send-keys`).
    pub fn burst(&self, keys: &[&str]) {
        let ok = self
            .cmd()
            .args(["send-keys", "-t", &self.target])
            .args(keys)
            .status()
            .unwrap()
            .success();
        assert!(ok, "send-keys {keys:?}");
    }

    /// The pane's text.
    pub fn screen(&self) -> String {
        let mut c = self.cmd();
        c.args(["capture-pane", "-p"]);
        if self.join_wrapped {
            c.arg("-J");
        }
        let out = c.args(["-t", &self.target]).output().unwrap();
        String::from_utf8_lossy(&out.stdout).into_owned()
    }

    /// Wait until the screen shows `text` (or fail with the screen): up to `WAIT`, looking
    /// every `POLL`.
    pub fn wait_for(&self, text: &str) -> String {
        self.wait_for_all(&[text], WAIT, POLL)
    }

    /// Wait until the screen shows every one of `texts` (or fail with the screen): up to
    /// `limit`, looking every `poll`.
    pub fn wait_for_all(&self, texts: &[&str], limit: Duration, poll: Duration) -> String {
        let start = Instant::now();
        loop {
            let s = self.screen();
            if texts.iter().all(|t| s.contains(t)) {
                return s;
            }
            assert!(
                start.elapsed() < limit,
                "timed out waiting for {texts:?}; screen:\n{s}"
            );
            std::thread::sleep(poll);
        }
    }
}

impl Drop for Tmux {
    fn drop(&mut self) {
        let _ = self.cmd().arg("kill-server").stderr(Stdio::null()).status();
    }
}
