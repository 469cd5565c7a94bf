//! A journal on a full disk: the command says "the disk is full; nothing was saved" once,
//! in plain words (no SQLite code), and nothing of the grade is kept.
//!
//! The full disk is a tiny tmpfs mounted in a private mount namespace (`unshare -m`), which
//! needs root (or the capability); elsewhere the test is skipped with a message. The same
//! message is checked without root in the journal's unit tests (`max_page_count`).
//!
//! Also: `export intervals` warns about a score outside the journal's 1-5 rule (a
//! hand-edited journal) instead of passing it on silently.

mod cli_support;
mod tui_support;

use std::process::Command;

use cli_support::binary;
use tui_support::{build_roster, INTERVALS};

fn q(p: &std::path::Path) -> String {
    format!("'{}'", p.display().to_string().replace('\'', r"'\''"))
}

#[test]
fn a_full_disk_says_so_plainly_and_saves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let saved = dir.path().join("journal.sqlite");
    let coach = dir.path().join("coach");
    std::fs::create_dir_all(&coach).unwrap();
    // A warm journal made on the normal disk.
    let warm = Command::new(binary())
        .env("SPLITDESK_CONFIG", "/nonexistent")
        .arg("--roster")
        .arg(&roster)
        .arg("--journal")
        .arg(&saved)
        .arg("queue")
        .output()
        .unwrap();
    assert_eq!(warm.status.code(), Some(0), "{warm:?}");
    let size = std::fs::metadata(&saved).unwrap().len();
    let tmpfs_kib = size / 1024 + 256;
    let journal = coach.join("journal.sqlite");
    let (out, err, code, after) = (
        dir.path().join("out"),
        dir.path().join("err"),
        dir.path().join("code"),
        dir.path().join("after"),
    );
    let run = |args: &str| {
        format!(
            "SPLITDESK_CONFIG=/nonexistent {} --roster {} --journal {} {args}",
            q(&binary()),
            q(&roster),
            q(&journal)
        )
    };
    let script = format!(
        "mount -t tmpfs -o size={tmpfs_kib}k tmpfs {coach} || exit 77
cp {saved} {journal}
dd if=/dev/zero of={coach}/fill bs=1024 2>/dev/null
{grade} >{out} 2>{err}; echo $? >{code}
rm -f {coach}/fill
{state} >{after} 2>&1",
        coach = q(&coach),
        saved = q(&saved),
        journal = q(&journal),
        grade = run(&format!(
            "grade {INTERVALS} --score 1=4 --score 2=3 --score 3=4 --score 4=4 --score 5=2 --verdict met"
        )),
        out = q(&out),
        err = q(&err),
        code = q(&code),
        state = run(&format!("grade {INTERVALS} --json")),
        after = q(&after),
    );
    let status = Command::new("unshare")
        .args(["-m", "sh", "-c", &script])
        .status();
    match status {
        Ok(s) if s.code() == Some(77) || s.code() == Some(1) && !code.exists() => {
            eprintln!("skipped: cannot mount a tmpfs here (needs root)");
            return;
        }
        Ok(_) => {}
        Err(e) => {
            eprintln!("skipped: unshare is not available: {e}");
            return;
        }
    }
    let code = std::fs::read_to_string(&code).unwrap();
    let err = std::fs::read_to_string(&err).unwrap();
    eprintln!("coach sees: {err}");
    assert_eq!(code.trim(), "2", "{err}");
    assert_eq!(
        err.matches("the disk is full; nothing was saved").count(),
        1,
        "{err}"
    );
    assert!(!err.contains("4874") && !err.contains("disk I/O"), "{err}");
    let after = std::fs::read_to_string(&after).unwrap();
    let v: serde_json::Value =
        serde_json::from_str(&after).unwrap_or_else(|e| panic!("{e}: {after}"));
    assert_eq!(v["scores"], serde_json::json!({}), "{after}");
    assert_eq!(v["verdict"], serde_json::Value::Null, "{after}");
}

#[test]
fn export_warns_about_a_score_outside_the_rule() {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("coach/journal.sqlite");
    let run = |args: &[&str]| {
        Command::new(binary())
            .env("SPLITDESK_CONFIG", "/nonexistent")
            .arg("--roster")
            .arg(&roster)
            .arg("--journal")
            .arg(&journal)
            .args(args)
            .output()
            .unwrap()
    };
    let out = run(&[
        "grade", INTERVALS, "--score", "1=4", "--score", "2=3", "--score", "3=4",
    ]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    // A hand edit that breaks the rule (the CHECK constraint switched off).
    let c = rusqlite::Connection::open(&journal).unwrap();
    c.execute_batch(
        "PRAGMA ignore_check_constraints = ON;
         UPDATE score SET score = 9 WHERE interval_no = 2;",
    )
    .unwrap();
    drop(c);
    let out = run(&["export", "intervals", "--csv"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.matches("outside 1-5").count(), 1, "{err}");
    assert!(
        err.contains(&format!(
            "{INTERVALS}: work interval 2: the journal holds blind score 9"
        )),
        "{err}"
    );
    let csv = String::from_utf8_lossy(&out.stdout);
    assert!(!csv.contains(",9,9"), "{csv}");
    let work2: Vec<&str> = csv
        .lines()
        .filter(|l| l.starts_with(INTERVALS) && l.contains(",work,2,"))
        .collect();
    assert_eq!(work2.len(), 1, "{csv}");
    assert!(work2[0].ends_with(",,"), "{}", work2[0]);
}
