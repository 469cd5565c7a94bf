//! Roster discovery: layout, profiles, problems that never stop the listing.
//! Self-consistency tests on invented folders.

use std::fs;

use splitdesk::model::Units;
use splitdesk::roster::Roster;

fn write(path: &std::path::Path, text: &str) {
    if let Some(p) = path.parent() {
        fs::create_dir_all(p).unwrap();
    }
    fs::write(path, text).unwrap();
}

#[test]
fn discovers_athletes_activities_notes_and_plans() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path();
    write(
        &root.join("roster.toml"),
        "name = \"Harbour Striders\"\nunits = \"mi\"\n",
    );
    write(
        &root.join("bo-tamm/athlete.toml"),
        "name = \"Bo Tamm\"\nsex = \"male\"\nhr_max = 185\nhr_rest = 50\nthreshold_pace = \"4:00/km\"\nunits = \"km\"\n",
    );
    write(&root.join("bo-tamm/activities/2026-10-01-easy.fit"), "x");
    write(&root.join("bo-tamm/activities/2026-10-02-reps.tcx"), "x");
    write(&root.join("bo-tamm/activities/photo.jpg"), "x");
    write(
        &root.join("bo-tamm/notes/2026-10-02-reps.txt"),
        "legs heavy",
    );
    write(
        &root.join("bo-tamm/plans/2026-10-02-reps.toml"),
        "title = \"x\"",
    );
    write(&root.join("cy-ode/athlete.toml"), "name = \"Cy Ode\"\n");
    write(&root.join("cy-ode/activities/a.gpx"), "x");
    // broken profile: still listed, with a problem
    write(&root.join("di-vo/athlete.toml"), "hr_max = \"lots\"\n");
    // not an athlete folder
    write(&root.join("shared-docs/readme.txt"), "x");

    let r = Roster::open(root).unwrap();
    assert_eq!(r.name, "Harbour Striders");
    assert_eq!(r.units, Units::Mi);
    let ids: Vec<&str> = r.athletes.iter().map(|a| a.id.as_str()).collect();
    assert_eq!(ids, ["bo-tamm", "cy-ode", "di-vo"]);

    let bo = r.athlete("bo-tamm").unwrap();
    assert_eq!(bo.profile.units, Units::Km);
    assert_eq!(bo.activities.len(), 2);
    assert_eq!(bo.plan_files.len(), 1);
    let reps = &bo.activities[1];
    assert_eq!(bo.session_id(reps), "bo-tamm/2026-10-02-reps");
    assert!(reps.note_file.is_some());
    assert!(bo.activities[0].note_file.is_none());
    // cy-ode has no units: the roster default applies
    assert_eq!(r.athlete("cy-ode").unwrap().profile.units, Units::Mi);
    assert!(r.find_session("cy-ode/a").is_some());
    assert!(r.find_session("cy-ode/b").is_none());

    let msgs: Vec<String> = r.problems().iter().map(|p| p.to_string()).collect();
    assert_eq!(msgs.len(), 4, "{msgs:?}");
    assert!(msgs.iter().any(|m| m.contains("photo.jpg")));
    // A folder that is no athlete folder is named, not skipped silently.
    assert!(msgs.iter().any(|m| m.ends_with(
        "shared-docs: not an athlete folder (no athlete.toml, no activities folder); skipped"
    )));
    // A plan file that is not a plan is listed too (and kept on the athlete).
    assert!(msgs.iter().any(|m| m.ends_with(
        "2026-10-02-reps.toml: line 1, column 12: missing steps: add steps = \"...\" \
         (shorthand) or [[step]] tables"
    )));
    assert_eq!(bo.plan_problems().len(), 1);
    assert_eq!(r.athlete("di-vo").unwrap().profile_problems.len(), 1);
    assert!(msgs
        .iter()
        .any(|m| m.contains("di-vo") && m.contains("athlete.toml") && m.contains("line 1")));
}

#[test]
fn missing_roster_is_an_error_naming_the_path() {
    let e = Roster::open(std::path::Path::new("/no/such/roster")).unwrap_err();
    assert!(e.to_string().starts_with("/no/such/roster:"), "{e}");
}
