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
