//! Roster entries that cannot be used are listed with their reason, never skipped
//! silently: an athlete folder without athlete.toml (its sessions stay listed), names that
//! are not UTF-8, a folder named like an activity file, dangling and looping links, links
//! leading outside the roster (never followed), and a link to an athlete folder (the
//! athlete is listed once). `check` prints each; the workstation shows them. Invented
//! roster (tests only).

mod roster_support;

use std::ffi::OsStr;
use std::os::unix::ffi::OsStrExt;
use std::os::unix::fs::symlink;
use std::path::Path;

use assert_cmd::Command;
use roster_support::write_roster;
use splitdesk::roster::{Roster, NO_PROFILE};

/// The test roster plus one broken entry of each kind; `outside` is a folder beside the
/// roster holding a readable FIT file, a profile and a note.
fn messy_roster(root: &Path, outside: &Path) {
    write_roster(root);
    let tova = root.join("tova-renn");
    let acts = tova.join("activities");
    let easy = acts.join("2026-11-01-easy.fit");
    std::fs::create_dir_all(outside.join("athlete/activities")).unwrap();
    std::fs::copy(&easy, outside.join("out.fit")).unwrap();
    std::fs::copy(&easy, outside.join("athlete/activities/2026-11-01-x.fit")).unwrap();
    std::fs::write(
        outside.join("plan.toml"),
        "title = \"x\"\nsteps = \"10:00 easy\"\n",
    )
    .unwrap();
    std::fs::write(outside.join("note.txt"), "secret from outside\n").unwrap();

    // An athlete folder without athlete.toml: its session must not vanish.
    std::fs::create_dir_all(root.join("sam-ode/activities")).unwrap();
    std::fs::copy(&easy, root.join("sam-ode/activities/2026-11-02-easy.fit")).unwrap();
    // A stray folder.
    std::fs::create_dir_all(root.join("docs")).unwrap();
    // Names that are not UTF-8.
    std::fs::copy(
        &easy,
        acts.join(OsStr::from_bytes(b"2026-11-04-\xffrun.fit")),
    )
    .unwrap();
    std::fs::create_dir_all(root.join(OsStr::from_bytes(b"j\xf6rn/activities"))).unwrap();
    // A folder named like an activity file.
    std::fs::create_dir_all(acts.join("2026-11-06-dir.fit")).unwrap();
    // Dangling and looping links.
    symlink("nowhere.fit", acts.join("2026-11-07-gone.fit")).unwrap();
    symlink("2026-11-08-loop.fit", acts.join("2026-11-08-loop.fit")).unwrap();
    // Links out of the roster: an activity, a plan, a note, a whole athlete folder.
    symlink(outside.join("out.fit"), acts.join("2026-11-09-out.fit")).unwrap();
    symlink(
        outside.join("plan.toml"),
        tova.join("plans/2026-11-09-out.toml"),
    )
    .unwrap();
    symlink(
        outside.join("note.txt"),
        tova.join("notes/2026-11-01-easy.txt"),
    )
    .unwrap();
    symlink(outside.join("athlete"), root.join("ext-athlete")).unwrap();
    // A link to an athlete folder inside the roster, and a second link to one file.
    symlink("tova-renn", root.join("tova")).unwrap();
    symlink("2026-11-01-easy.fit", acts.join("2026-11-10-again.fit")).unwrap();
}

fn problems(roster: &Roster) -> Vec<String> {
    roster
        .problems()
        .iter()
        .map(|p| {
            let path = p.path.strip_prefix(&roster.root).unwrap_or(&p.path);
            format!("{}: {}", path.display(), p.message)
        })
        .collect()
}

/// The exact lines the coach reads (paths relative to the roster; `OUT` is the outside folder).
fn expected(outside: &Path) -> Vec<String> {
    let out = std::fs::canonicalize(outside).unwrap();
    let o = out.display();
    vec![
        "docs: not an athlete folder (no athlete.toml, no activities folder); skipped".into(),
        format!("ext-athlete: a symbolic link to {o}/athlete, outside the roster; not followed"),
        "j\u{FFFD}rn: the folder name is not valid UTF-8 (shown here with �); rename it; skipped"
            .into(),
        "tova: the same folder as ROOT/tova-renn (a symbolic link to it); listed once".into(),
        format!("sam-ode: {NO_PROFILE}"),
        format!("tova-renn/plans/2026-11-09-out.toml: a symbolic link to {o}/plan.toml, outside the roster; not followed"),
        "tova-renn/activities/2026-11-04-\u{FFFD}run.fit: the file name is not valid UTF-8 (shown here with �); rename it; skipped".into(),
        "tova-renn/activities/2026-11-06-dir.fit: a folder, not an activity file; skipped".into(),
        "tova-renn/activities/2026-11-07-gone.fit: a symbolic link to nowhere.fit, which does not exist; skipped".into(),
        "tova-renn/activities/2026-11-08-loop.fit: a symbolic link that loops back on itself; skipped".into(),
        format!("tova-renn/activities/2026-11-09-out.fit: a symbolic link to {o}/out.fit, outside the roster; not followed"),
        "tova-renn/activities/2026-11-10-again.fit: the same file as ROOT/tova-renn/activities/2026-11-01-easy.fit (a symbolic link to it); listed once".into(),
        format!("tova-renn/notes/2026-11-01-easy.txt: a symbolic link to {o}/note.txt, outside the roster; not followed"),
    ]
}

fn sorted(mut v: Vec<String>) -> Vec<String> {
    v.sort();
    v
}

#[test]
fn every_unused_entry_is_a_problem_with_its_reason() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    let outside = dir.path().join("outside");
    messy_roster(&root, &outside);
    let roster = Roster::open(&root).unwrap();
    let ids: Vec<&str> = roster.athletes.iter().map(|a| a.id.as_str()).collect();
    assert_eq!(ids, ["sam-ode", "tova-renn"]);
    let sam = roster.athlete("sam-ode").unwrap();
    assert_eq!(
        sam.activities.len(),
        1,
        "the sessions of a folder without a profile stay"
    );
    assert!(sam.has_problems());
    let tova = roster.athlete("tova-renn").unwrap();
    let stems: Vec<&str> = tova.activities.iter().map(|a| a.stem.as_str()).collect();
    assert_eq!(stems, ["2026-11-01-easy", "2026-11-03-reps"]);
    assert_eq!(
        tova.activities[0].note_file, None,
        "a note outside the roster is not read"
    );
    assert_eq!(
        tova.plan_files.len(),
        1,
        "a plan outside the roster is not read"
    );
    let root_shown = root.display().to_string();
    let want: Vec<String> = expected(&outside)
        .into_iter()
        .map(|l| l.replace("ROOT", &root_shown))
        .collect();
    assert_eq!(sorted(problems(&roster)), sorted(want));
}

#[test]
fn check_lists_them_and_the_queue_keeps_the_unprofiled_session() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    let outside = dir.path().join("outside");
    messy_roster(&root, &outside);
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml")
        .arg("check")
        .arg(&root)
        .output()
        .unwrap();
    // A folder without a profile counts as a profile problem.
    assert_eq!(out.status.code(), Some(1));
    let text = String::from_utf8(out.stdout).unwrap();
    let root_shown = root.display().to_string();
    for line in expected(&outside) {
        let line = format!("{root_shown}/{}", line.replace("ROOT", &root_shown));
        assert!(
            text.lines().any(|l| l == line),
            "missing {line:?} in\n{text}"
        );
    }
    assert!(
        text.contains(": 2 athletes, 3 sessions, 3 readable, 13 problems"),
        "{text}"
    );
    assert!(!text.contains("secret from outside"));

    let journal = dir.path().join("journal.sqlite");
    let q = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml")
        .arg("--roster")
        .arg(&root)
        .arg("--journal")
        .arg(&journal)
        .arg("queue")
        .output()
        .unwrap();
    let text = String::from_utf8(q.stdout).unwrap();
    assert!(text.contains("sam-ode/2026-11-02-easy"), "{text}");
    assert_eq!(text.lines().count(), 3, "{text}");
}

#[test]
fn the_workstation_shows_the_roster_problems() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    let outside = dir.path().join("outside");
    messy_roster(&root, &outside);
    let roster = Roster::open(&root).unwrap();
    let mut app = splitdesk::tui::app::App::new(
        roster,
        splitdesk::journal::Journal::open_in_memory().unwrap(),
        splitdesk::tui::app::Options {
            keymap: splitdesk::tui::keymap::KeyMap::default(),
            theme: splitdesk::tui::theme::Theme::plain(),
            feedback_dir: None,
        },
    );
    let fx = app.start_scan();
    tui_support::run_effects(&mut app, fx);
    let s = tui_support::screen(&mut app, 200, 60);
    assert!(
        s.contains("! 12 roster entries not used (splitdesk check lists them):"),
        "{s}"
    );
    assert!(s.contains("docs: not an athlete folder"), "{s}");
    assert!(
        s.contains("tova-renn/activities/2026-11-08-loop.fit: a symbolic link that loops"),
        "{s}"
    );
    // The athlete without a profile is listed, with its problem under the cursor.
    assert!(s.contains("sam-ode"), "{s}");
    assert!(
        s.contains("no athlete.toml: its sessions are listed"),
        "{s}"
    );
}

mod tui_support;
