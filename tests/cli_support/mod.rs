//! Running the real binary from a test: `$SPLITDESK_E2E_BIN` when set (`.ci/run` points it
//! at the release build), else the test build, always with no config file.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The binary under test.
pub fn binary() -> PathBuf {
    std::env::var_os("SPLITDESK_E2E_BIN")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_BIN_EXE_splitdesk")))
}

/// Run the binary on `roster` and `journal` with `args`, no config file.
pub fn run(roster: &Path, journal: &Path, args: &[&str]) -> Output {
    Command::new(binary())
        .env("SPLITDESK_CONFIG", "/nonexistent")
        .arg("--roster")
        .arg(roster)
        .arg("--journal")
        .arg(journal)
        .args(args)
        .output()
        .unwrap()
}

/// Run the binary on `roster` and `journal` with the config file `config` and
/// `EDITOR=true`: exit code (-1 when ended by a signal), stdout, stderr.
pub fn run_with_config(
    roster: &Path,
    journal: &Path,
    config: &Path,
    args: &[&str],
) -> (i32, String, String) {
    let out = Command::new(binary())
        .env("SPLITDESK_CONFIG", config)
        .env("EDITOR", "true")
        .arg("--roster")
        .arg(roster)
        .arg("--journal")
        .arg(journal)
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A roster in a temporary folder with a fresh journal beside it (under `coach/`).
pub struct TempRoster {
    _dir: tempfile::TempDir,
    pub roster: PathBuf,
    pub journal: PathBuf,
}

impl TempRoster {
    /// `write` fills the roster folder.
    pub fn new(write: impl FnOnce(&Path)) -> Self {
        let dir = tempfile::tempdir().unwrap();
        let roster = dir.path().join("roster");
        write(&roster);
        let journal = dir.path().join("coach/journal.sqlite");
        TempRoster {
            _dir: dir,
            roster,
            journal,
        }
    }

    /// Run the binary here: exit code (-1 when ended by a signal), stdout, stderr.
    /// `EDITOR=true`, so a command that would open an editor returns at once.
    pub fn run(&self, args: &[&str]) -> (i32, String, String) {
        run_with_config(
            &self.roster,
            &self.journal,
            Path::new("/nonexistent/config.toml"),
            args,
        )
    }

    /// Run the binary here, require exit code 0 and return stdout.
    pub fn ok(&self, args: &[&str]) -> String {
        let (code, out, err) = self.run(args);
        assert_eq!(code, 0, "{args:?}: {err}");
        out
    }
}

/// Copy a folder and everything in it.
pub fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        let p = e.path();
        if p.is_dir() {
            copy_dir(&p, &to.join(e.file_name()));
        } else {
            std::fs::copy(&p, to.join(e.file_name())).unwrap();
        }
    }
}
