//! The binary without a terminal: one line, exit 2.

mod tui_support;

use assert_cmd::Command;

#[test]
fn without_a_terminal_the_workstation_says_so_and_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let roster = tui_support::build_roster(&dir.path().join("roster"));
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml")
        .arg("--roster")
        .arg(&roster)
        .arg("--journal")
        .arg(dir.path().join("j.sqlite"))
        .write_stdin("")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(
        err,
        "error: the workstation needs a terminal; use the headless commands (splitdesk --help)\n"
    );
    assert!(out.stdout.is_empty());
}
