//! What the commands say, through the real binary: a damaged file named only where it
//! concerns the command, JSON errors under `--json`, one line for a missing roster, a hint
//! for an athlete folder given as the roster, plural agreement, help for every flag, the
//! empty roster, and the queue table's columns.

mod cli_support;
mod roster_support;

use std::path::Path;

use cli_support::TempRoster;
use roster_support::{write_roster, EASY_ID, REPS_ID};

const DAMAGED: &str = "ivo-brant/activities/2026-11-02-broken.fit";
const LONG_STEM: &str = "2026-11-02-an-unusually-long-session-name-for-the-table";

/// The tiny roster plus a second athlete whose only file is cut short, and a session with
/// a long id.
fn write_with_damage(root: &Path) {
    write_roster(root);
    let ivo = root.join("ivo-brant");
    std::fs::create_dir_all(ivo.join("activities")).unwrap();
    let profile = std::fs::read_to_string(root.join("tova-renn/athlete.toml")).unwrap();
    std::fs::write(
        ivo.join("athlete.toml"),
        profile.replace("Tova Renn", "Ivo Brant"),
    )
    .unwrap();
    let whole = std::fs::read(root.join("tova-renn/activities/2026-11-03-reps.fit")).unwrap();
    std::fs::write(root.join(DAMAGED), &whole[..whole.len() / 2]).unwrap();
    std::fs::copy(
        root.join("tova-renn/activities/2026-11-01-easy.fit"),
        root.join(format!("tova-renn/activities/{LONG_STEM}.fit")),
    )
    .unwrap();
}

fn warnings_naming(stderr: &str, what: &str) -> usize {
    stderr
        .lines()
        .filter(|l| l.starts_with("warning:") && l.contains(what))
        .count()
}

#[test]
fn a_damaged_file_is_named_in_the_queue_once_and_not_to_unrelated_commands() {
    let e = TempRoster::new(write_with_damage);
    let (code, _, err) = e.run(&["queue"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(warnings_naming(&err, "2026-11-02-broken.fit"), 1, "{err}");

    // Another athlete's queue, grading an unrelated session, the bias check: not a word.
    for args in [
        &["queue", "--athlete", "tova-renn"][..],
        &["grade", EASY_ID, "--verdict", "met"][..],
        &["notes", EASY_ID][..],
        &["bias-check"][..],
        &["export", "intervals", "--csv"][..],
    ] {
        let (code, _, err) = e.run(args);
        assert_eq!(code, 0, "{args:?}: {err}");
        assert!(!err.contains("broken.fit"), "{args:?} said: {err}");
    }
    // `check` lists it (once) and fails.
    let (code, out, _) = e.run(&["check"]);
    assert_eq!(code, 1);
    assert_eq!(out.matches("2026-11-02-broken.fit").count(), 1, "{out}");
}

#[test]
fn notes_json_refuses_with_a_json_object_and_exit_3() {
    let e = TempRoster::new(write_roster);
    let (code, out, err) = e.run(&["notes", REPS_ID, "--json"]);
    assert_eq!(code, 3, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("JSON on stdout");
    assert_eq!(v["exit_code"], 3);
    assert_eq!(v["session"], REPS_ID);
    let missing = v["missing"].as_str().unwrap();
    assert!(missing.contains("purpose verdict not set"), "{missing}");
    let error = v["error"].as_str().unwrap();
    assert!(error.contains("notes stay hidden"), "{error}");
    // The human line stays on stderr.
    assert!(err.starts_with("error: "), "{err}");
}

#[test]
fn any_json_command_that_fails_prints_a_json_error() {
    let e = TempRoster::new(write_roster);
    for args in [
        &["notes", "tova-renn/no-such-run", "--json"][..],
        &[
            "grade",
            "tova-renn/no-such-run",
            "--verdict",
            "met",
            "--json",
        ][..],
        &["trends", "nobody", "--json"][..],
        &[
            "export",
            "feedback",
            "--since",
            "yesterday",
            "--format",
            "json",
        ][..],
    ] {
        let (code, out, err) = e.run(args);
        assert_eq!(code, 2, "{args:?}: {err}");
        let v: serde_json::Value =
            serde_json::from_str(&out).unwrap_or_else(|_| panic!("{args:?}: stdout {out:?}"));
        assert_eq!(v["exit_code"], 2, "{args:?}");
        let text = v["error"].as_str().unwrap();
        assert_eq!(format!("error: {text}\n"), err, "{args:?}");
    }
    // Without --json nothing goes to stdout.
    let (code, out, _) = e.run(&["notes", "tova-renn/no-such-run"]);
    assert_eq!((code, out.as_str()), (2, ""));
}

#[test]
fn a_missing_roster_is_one_line_naming_the_folder() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("no-roster-here");
    let out = cli_support::run(&missing, &dir.path().join("j.sqlite"), &["queue"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(err.lines().count(), 1, "{err}");
    assert_eq!(
        err.trim_end(),
        format!(
            "error: {}: no such folder (the roster is read from this folder)",
            missing.display()
        )
    );
}

#[test]
fn an_athlete_folder_as_roster_names_its_parent() {
    let e = TempRoster::new(write_roster);
    let athlete = e.roster.join("tova-renn");
    let parent = std::fs::canonicalize(&e.roster).unwrap();
    for args in [&["queue"][..], &["check"][..]] {
        let out = cli_support::run(&athlete, &e.journal, args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains("looks like an athlete folder"), "{err}");
        assert!(
            err.trim_end()
                .ends_with(&format!("--roster {}", parent.display())),
            "{err}"
        );
        assert!(!err.contains("0 athletes"));
    }
}

#[test]
fn counts_agree_in_number() {
    let e = TempRoster::new(write_roster);
    let out = e.ok(&["check"]);
    assert!(
        out.contains(": 1 athlete, 2 sessions, 2 readable, 0 problems"),
        "{out}"
    );
    e.ok(&["queue"]);
    e.ok(&["grade", EASY_ID, "--verdict", "met"]);
    let out = e.ok(&["journal", "check"]);
    assert!(out.contains("(schema "), "{out}");
    assert!(out.contains("2 sessions, 1 review, 0 scores"), "{out}");
    assert!(!out.contains("1 sessions"), "{out}");
}

#[test]
fn every_flag_of_export_feedback_has_help() {
    let e = TempRoster::new(write_roster);
    let help = e.ok(&["export", "feedback", "--help"]);
    let athlete = help
        .lines()
        .find(|l| l.trim_start().starts_with("--athlete"))
        .unwrap();
    assert!(athlete.contains("Only this athlete"), "{help}");
    // Every option line of every subcommand carries a description.
    for cmd in [
        &["queue", "--help"][..],
        &["grade", "--help"][..],
        &["notes", "--help"][..],
        &["bias-check", "--help"][..],
        &["export", "intervals", "--help"][..],
    ] {
        let help = e.ok(cmd);
        for l in help.lines().filter(|l| l.trim_start().starts_with("--")) {
            let rest = l.trim_start().split_once("  ").map(|(_, r)| r.trim());
            assert!(rest.is_some_and(|r| !r.is_empty()), "{cmd:?}: {l:?}");
        }
    }
}

#[test]
fn an_empty_roster_says_there_are_no_sessions() {
    let e = TempRoster::new(|root| std::fs::create_dir_all(root).unwrap());
    let out = e.ok(&["queue"]);
    assert_eq!(out, "no sessions in this roster: nothing to review\n");
    let out = e.ok(&["check"]);
    assert!(out.contains(": 0 athletes, 0 sessions, 0 readable, 0 problems"));
}

#[test]
fn queue_columns_line_up_on_long_session_ids() {
    let e = TempRoster::new(write_with_damage);
    let out = e.ok(&["queue"]);
    let lines: Vec<&str> = out.lines().collect();
    // The damaged file is in the queue too: it closes with the verdict alone.
    assert_eq!(lines.len(), 4, "{out}");
    assert!(out.contains("file cannot be read"), "{out}");
    let long_id = format!("tova-renn/{LONG_STEM}");
    assert!(out.contains(&format!("{long_id}  2026-11-0")), "{out}");
    // The date, stage and title columns start at the same character on every line.
    let starts = |needle: &str| -> Vec<usize> {
        lines
            .iter()
            .map(|l| {
                let at = l.find(needle).unwrap_or_else(|| panic!("{needle} in {l}"));
                l[..at].chars().count()
            })
            .collect()
    };
    let dates = starts("  2026-11-0");
    assert!(dates.iter().all(|&d| d == long_id.len()), "{out}");
    let stages = starts("  new  ");
    assert!(stages.windows(2).all(|w| w[0] == w[1]), "{out}");
    // No two cells run together.
    for l in &lines {
        let id = l.split_whitespace().next().unwrap();
        assert!(
            id == EASY_ID || id == REPS_ID || id == long_id || id == "ivo-brant/2026-11-02-broken",
            "{l}"
        );
    }
}

#[test]
fn analyze_and_plan_check_refuse_in_json_too() {
    let e = TempRoster::new(write_with_damage);
    let damaged = e.roster.join(DAMAGED);
    for args in [
        &["analyze", damaged.to_str().unwrap(), "--json"][..],
        &["plan", "check", "--line", "5 x @@ nonsense", "--json"][..],
    ] {
        let (code, out, err) = e.run(args);
        assert_eq!(code, 2, "{args:?}: {err}");
        let v: serde_json::Value =
            serde_json::from_str(&out).unwrap_or_else(|_| panic!("{args:?}: stdout {out:?}"));
        assert_eq!(v["exit_code"], 2);
        let text = v["error"].as_str().unwrap();
        assert!(err.contains(text), "{args:?}: {text} / {err}");
    }
}
