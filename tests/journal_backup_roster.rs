//! `journal backup DEST` never writes the private journal into the roster folder (which may
//! be shared with athletes), however DEST is spelled: directly, through `..`, through a
//! symbolic link to a folder inside the roster, or as a dangling link pointing into it.

mod cli_support;

use cli_support::run;
use std::path::{Path, PathBuf};

#[test]
fn backup_inside_the_roster_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    std::fs::create_dir_all(roster.join("ines/activities")).unwrap();
    std::fs::write(roster.join("ines/athlete.toml"), "name = \"Ines\"\n").unwrap();
    let journal = dir.path().join("coach/journal.sqlite");
    let outside = dir.path().join("elsewhere");
    std::fs::create_dir_all(&outside).unwrap();
    std::os::unix::fs::symlink(roster.join("ines"), outside.join("into-roster")).unwrap();
    std::os::unix::fs::symlink(
        roster.join("ines/bk-link.sqlite"),
        outside.join("dangling.sqlite"),
    )
    .unwrap();

    let inside: Vec<PathBuf> = vec![
        roster.join("bk.sqlite"),
        roster.join("ines/activities/bk.sqlite"),
        dir.path().join("elsewhere/../roster/bk.sqlite"),
        outside.join("into-roster/bk.sqlite"),
    ];
    for dest in &inside {
        let out = run(
            &roster,
            &journal,
            &["journal", "backup", dest.to_str().unwrap()],
        );
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{}: {out:?}", dest.display());
        assert!(
            err.contains("must not be written inside the roster folder"),
            "{}: {err}",
            dest.display()
        );
        assert!(!dest.exists(), "{} was written", dest.display());
    }
    // A dangling link is an existing name: refused without following it.
    let dest = outside.join("dangling.sqlite");
    let out = run(
        &roster,
        &journal,
        &["journal", "backup", dest.to_str().unwrap()],
    );
    assert_eq!(out.status.code(), Some(2), "{out:?}");
    assert!(!roster.join("ines/bk-link.sqlite").exists());

    // Outside the roster it works.
    let dest = outside.join("bk.sqlite");
    let out = run(
        &roster,
        &journal,
        &["journal", "backup", dest.to_str().unwrap()],
    );
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    assert!(splitdesk::journal::Journal::open_read_only(&dest).is_ok());
    // Nothing was left in the roster folder by any attempt.
    let mut names = Vec::new();
    for e in walk(&roster) {
        names.push(e);
    }
    names.sort();
    assert_eq!(names, vec![roster.join("ines/athlete.toml")], "{names:?}");
}

fn walk(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).unwrap().flatten() {
        let p = e.path();
        if p.is_dir() {
            out.extend(walk(&p));
        } else {
            out.push(p);
        }
    }
    out
}
