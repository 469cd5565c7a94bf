//! A journal that cannot be written (the file read-only, or its folder) still serves every
//! reading command: queue, notes of a revealed session, exports, trends, `journal check` and
//! `journal backup` elsewhere. Each says once that the journal is read-only; a write (a new
//! grade) is refused with a plain sentence and nothing is saved. The file is never changed.
//!
//! File permissions do not bind root, so under root the commands run as the user `nobody`
//! (`setpriv`); without `setpriv` under root the test is skipped with a message.

mod cli_support;
mod tui_support;

use std::os::unix::fs::PermissionsExt;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use cli_support::binary;
use tui_support::{build_roster, INTERVALS};

fn is_root() -> bool {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("Uid:"))
                .map(|l| l.split_whitespace().nth(1) == Some("0"))
        })
        .unwrap_or(false)
}

fn have_setpriv() -> bool {
    Command::new("setpriv")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success())
}

fn chmod(p: &Path, mode: u32) {
    std::fs::set_permissions(p, std::fs::Permissions::from_mode(mode)).unwrap();
}

struct Env {
    _dir: tempfile::TempDir,
    root_dir: PathBuf,
    roster: PathBuf,
    coach: PathBuf,
    journal: PathBuf,
    as_other: bool,
}

impl Env {
    /// The command, run as `nobody` when this test runs as root.
    fn cmd(&self, args: &[&str]) -> Command {
        let mut c = if self.as_other {
            let mut c = Command::new("setpriv");
            c.args(["--reuid=65534", "--regid=65534", "--clear-groups"])
                .arg(binary());
            c
        } else {
            Command::new(binary())
        };
        c.env("SPLITDESK_CONFIG", "/nonexistent")
            .env("HOME", &self.root_dir)
            .arg("--roster")
            .arg(&self.roster)
            .arg("--journal")
            .arg(&self.journal)
            .args(args);
        c
    }

    fn run(&self, args: &[&str]) -> Output {
        self.cmd(args).output().unwrap()
    }
}

fn hash(p: &Path) -> String {
    splitdesk::ingest::hash::sha256_hex(&std::fs::read(p).unwrap())
}

/// A reviewed roster and its journal, written by this user.
fn env() -> Option<Env> {
    let as_other = is_root();
    if as_other && !have_setpriv() {
        eprintln!("skipped: running as root without setpriv, so file permissions cannot bind");
        return None;
    }
    let dir = tempfile::tempdir().unwrap();
    let root_dir = dir.path().to_path_buf();
    chmod(&root_dir, 0o755);
    let roster = build_roster(&root_dir.join("roster"));
    let coach = root_dir.join("coach");
    let journal = coach.join("journal.sqlite");
    let e = Env {
        _dir: dir,
        root_dir,
        roster,
        coach,
        journal,
        as_other: false,
    };
    let ok = |args: &[&str]| {
        let out = e.run(args);
        assert_eq!(out.status.code(), Some(0), "{args:?}: {out:?}");
    };
    ok(&[
        "grade",
        INTERVALS,
        "--score",
        "1=3",
        "--score",
        "2=3",
        "--score",
        "3=4",
        "--score",
        "4=4",
        "--score",
        "5=2",
        "--verdict",
        "partly",
    ]);
    ok(&["notes", INTERVALS]);
    let fb = e.root_dir.join("fb.txt");
    std::fs::write(&fb, "Well held.\n").unwrap();
    ok(&["feedback", INTERVALS, "--set", fb.to_str().unwrap()]);
    chmod(&fb, 0o644);
    Some(Env { as_other, ..e })
}

fn reading_commands_work(e: &Env, why: &str) {
    let before = hash(&e.journal);
    let backup = e.root_dir.join(format!("backups-{}", why.len()));
    std::fs::create_dir_all(&backup).unwrap();
    chmod(&backup, 0o777);
    let backup_file = backup.join("bk.sqlite");
    let cases: Vec<Vec<String>> = vec![
        vec!["queue".into()],
        vec!["notes".into(), INTERVALS.into()],
        vec!["grade".into(), INTERVALS.into(), "--json".into()],
        vec!["export".into(), "intervals".into(), "--csv".into()],
        vec!["export".into(), "feedback".into()],
        vec!["trends".into(), "ines-aldana".into()],
        vec!["journal".into(), "check".into()],
        vec![
            "journal".into(),
            "backup".into(),
            backup_file.to_string_lossy().into_owned(),
        ],
    ];
    for args in &cases {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = e.run(&args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(0), "{why}: {args:?}: {out:?}");
        assert_eq!(
            err.matches("the journal is read-only").count(),
            1,
            "{why}: {args:?}: {err}"
        );
        assert!(err.contains(why), "{why}: {args:?}: {err}");
        if args[0] == "notes" {
            assert!(String::from_utf8_lossy(&out.stdout).contains(tui_support::SECRET_NOTE));
        }
        if args[0] == "export" && args[1] == "feedback" {
            assert!(String::from_utf8_lossy(&out.stdout).contains("Well held."));
        }
    }
    let copy = splitdesk::journal::Journal::open_read_only(&backup_file).unwrap();
    assert_eq!(copy.review_state(INTERVALS).unwrap().scores.len(), 5);

    // A write is refused in plain words; nothing saved.
    let out = e.run(&["grade", INTERVALS, "--score", "1=5"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{out:?}");
    assert!(
        err.contains(&format!(
            "the journal is read-only ({why}); nothing was saved"
        )),
        "{err}"
    );
    assert_eq!(hash(&e.journal), before, "{why}: the journal file changed");
}

#[test]
fn a_read_only_journal_file_serves_reading_commands() {
    let Some(e) = env() else { return };
    chmod(&e.journal, 0o444);
    chmod(&e.coach, 0o777);
    reading_commands_work(&e, "the file is read-only");
}

#[test]
fn a_journal_in_a_read_only_folder_serves_reading_commands() {
    let Some(e) = env() else { return };
    if e.as_other {
        // Owned by root: `nobody` may write the file but not the folder.
        chmod(&e.journal, 0o666);
        chmod(&e.coach, 0o755);
    } else {
        chmod(&e.coach, 0o555);
    }
    reading_commands_work(&e, "its folder cannot be written");
    chmod(&e.coach, 0o755);
}
