//! The binary's behaviour on bad input: one line per bad file, exit codes.

use assert_cmd::Command;

fn splitdesk() -> Command {
    let mut c = Command::cargo_bin("splitdesk").unwrap();
    c.env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml");
    c
}

#[test]
fn inspect_reports_each_bad_file_on_one_line_and_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let empty = dir.path().join("empty.fit");
    std::fs::write(&empty, b"").unwrap();
    let junk = dir.path().join("junk.txt");
    std::fs::write(&junk, b"hello, not a session").unwrap();
    let out = splitdesk()
        .arg("inspect")
        .arg(&empty)
        .arg(&junk)
        .arg(dir.path().join("missing.gpx"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 3, "{err}");
    assert!(lines[0].starts_with("error: ") && lines[0].contains("empty.fit: file is empty"));
    assert!(lines[1].contains("junk.txt: not a FIT, TCX or GPX file"));
    assert!(lines[2].contains("missing.gpx"));
}

#[test]
fn check_on_a_missing_roster_is_one_line_and_exit_2() {
    let out = splitdesk()
        .args(["check", "/no/such/roster"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1);
    assert!(err.starts_with("error: /no/such/roster:"));
}

#[test]
fn check_lists_unreadable_files_and_exits_1() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("ana-test");
    std::fs::create_dir_all(a.join("activities")).unwrap();
    std::fs::write(a.join("athlete.toml"), "name = \"Ana Test\"\n").unwrap();
    std::fs::write(a.join("activities/broken.gpx"), "<gpx><trk>").unwrap();
    let out = splitdesk()
        .arg("check")
        .arg(dir.path())
        .arg("--json")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["sessions"], 1);
    assert_eq!(v["readable"], 0);
    let problems = v["problems"].as_array().unwrap();
    assert_eq!(problems.len(), 1);
    assert!(problems[0]["path"]
        .as_str()
        .unwrap()
        .ends_with("broken.gpx"));
    assert_eq!(problems[0]["unreadable"], true);
}

#[test]
fn a_bad_config_file_is_one_line_naming_it() {
    let dir = tempfile::tempdir().unwrap();
    let cfg = dir.path().join("config.toml");
    std::fs::write(&cfg, "rooster = \"/x\"\n").unwrap();
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", &cfg)
        .args(["check", "/tmp"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("config.toml: line 1, column 1"), "{err}");
}
