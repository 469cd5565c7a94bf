//! Mistakes in an athlete's profile and plan files warn instead of silently changing the
//! numbers: the rest of the profile is used, a broken plan leaves its session analysed without
//! it, a pace the profile lacks is named, `check` and `plan check` list every problem, and a
//! profile or plan change does not leave stale cached reviews. Invented roster (tests only).

mod roster_support;

use std::path::Path;

use assert_cmd::Command;
use chrono::Utc;
use roster_support::{write_roster, EASY_ID, REPS_ID};
use splitdesk::roster::Roster;
use splitdesk::workspace::{analyse_activity, Workspace, PLAN_NOT_USED};

fn splitdesk() -> Command {
    let mut c = Command::cargo_bin("splitdesk").unwrap();
    c.env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml");
    c
}

fn edit(path: &Path, from: &str, to: &str) {
    let text = std::fs::read_to_string(path).unwrap();
    assert!(text.contains(from), "{from:?} not in {}", path.display());
    std::fs::write(path, text.replace(from, to)).unwrap();
}

/// The test roster with a typo key and a bad pace in the profile, a plan naming a pace the
/// profile lacks and a plan file with a syntax error (the reps session's own plan).
fn broken_roster(root: &Path) {
    write_roster(root);
    let a = root.join("tova-renn");
    edit(&a.join("athlete.toml"), "hr_max = 190", "hr_mx = 190");
    edit(&a.join("athlete.toml"), "\"4:10/km\"", "\"4;10/km\"");
    std::fs::write(
        a.join("plans/2026-11-05-fartlek.toml"),
        "title = \"Fartlek\"\nsteps = \"10:00 easy; 6 x 1:00 @ 5kk / 1:00 jog\"\n",
    )
    .unwrap();
    std::fs::write(
        a.join("plans/2026-11-03-reps.toml"),
        "title = \"5k-pace repeats\"\nsteps = \"12:00 easy; 5 x 3:00 @ 5k / 2:00 jog\n",
    )
    .unwrap();
}

#[test]
fn check_lists_every_profile_and_plan_problem_one_line_each() {
    let dir = tempfile::tempdir().unwrap();
    broken_roster(dir.path());
    let out = splitdesk().arg("check").arg(dir.path()).output().unwrap();
    assert_eq!(out.status.code(), Some(1));
    let text = String::from_utf8(out.stdout).unwrap();
    let root = dir.path().join("tova-renn");
    let expect = [
        format!(
            "{}: line 4, column 1: unknown key \"hr_mx\"; did you mean \"hr_max\"? ignored",
            root.join("athlete.toml").display()
        ),
        format!(
            "{}: line 6, column 18: threshold_pace: expected a pace like \"4:10/km\" or \
             \"6:42/mi\", found \"4;10/km\"; ignored",
            root.join("athlete.toml").display()
        ),
        format!(
            "{}: line 2, column 46: invalid basic string, expected `\"`",
            root.join("plans/2026-11-03-reps.toml").display()
        ),
        format!(
            "{}: line 2, column 33: pace \"5kk\" is not in the athlete's profile (did you \
             mean \"5k\"?): targets at that pace are not judged",
            root.join("plans/2026-11-05-fartlek.toml").display()
        ),
    ];
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), expect.len() + 1, "{text}");
    for (line, want) in lines.iter().zip(&expect) {
        assert_eq!(line, want);
    }
    assert!(
        lines[4].ends_with("2 sessions, 2 readable, 4 problems"),
        "{text}"
    );
}

#[test]
fn check_passes_a_clean_roster() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let out = splitdesk().arg("check").arg(dir.path()).output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.ends_with("2 sessions, 2 readable, 0 problems\n"),
        "{text}"
    );
}

#[test]
fn the_rest_of_a_broken_profile_is_used() {
    let dir = tempfile::tempdir().unwrap();
    broken_roster(dir.path());
    let roster = Roster::open(dir.path()).unwrap();
    let a = roster.athlete("tova-renn").unwrap();
    assert_eq!(a.profile.name, "Tova Renn");
    assert_eq!(a.profile.hr_max, None);
    assert_eq!(a.profile.hr_rest, Some(50.0));
    assert_eq!(a.profile.threshold_speed_mps, None);
    assert!((a.profile.pace("5k").unwrap() - 1000.0 / 232.0).abs() < 1e-9);
    assert_eq!(a.profile_problems.len(), 2);
    assert_eq!(a.plan_problems().len(), 2);
    assert_eq!(a.problems().len(), 4);
    assert!(a.has_problems());
}

#[test]
fn plan_check_fails_on_a_pace_the_roster_athlete_lacks() {
    let dir = tempfile::tempdir().unwrap();
    broken_roster(dir.path());
    let plan = dir.path().join("tova-renn/plans/2026-11-05-fartlek.toml");
    let out = splitdesk()
        .args(["plan", "check"])
        .arg(&plan)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    let first = err.lines().next().unwrap();
    assert!(
        first.starts_with("error: ")
            && first.ends_with(
                "2026-11-05-fartlek.toml: line 2, column 33: pace \"5kk\" is not in the \
                 athlete's profile (did you mean \"5k\"?): targets at that pace are not judged"
            ),
        "{err}"
    );
    // The profile's own problems follow as notes (the threshold pace is one of them).
    assert!(
        err.contains("note: ") && err.contains("threshold_pace: expected a pace"),
        "{err}"
    );
}

#[test]
fn plan_check_with_an_athlete_checks_a_line_and_passes_known_paces() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let athlete = dir.path().join("tova-renn");
    let bad = splitdesk()
        .args([
            "plan",
            "check",
            "--line",
            "3 x 8:00 @ tempo / 2:00 jog",
            "--athlete",
        ])
        .arg(&athlete)
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(2));
    let err = String::from_utf8(bad.stderr).unwrap();
    assert_eq!(
        err.lines().next().unwrap(),
        "error: --line: line 1, column 12: pace \"tempo\" is not in the athlete's profile \
         (it has: 10k, 5k, easy, half, marathon, threshold): targets at that pace are not judged"
    );
    let ok = splitdesk()
        .args([
            "plan",
            "check",
            "--line",
            "3 x 8:00 @ threshold / 2:00 jog",
            "--athlete",
        ])
        .arg(athlete.join("athlete.toml"))
        .output()
        .unwrap();
    assert_eq!(ok.status.code(), Some(0));
    let text = String::from_utf8(ok.stdout).unwrap();
    assert!(text.contains("paces checked against"), "{text}");
    // Without an athlete the pace name cannot be checked and the plan is valid.
    let free = splitdesk()
        .args(["plan", "check", "--line", "3 x 8:00 @ tempo / 2:00 jog"])
        .output()
        .unwrap();
    assert_eq!(free.status.code(), Some(0));
}

#[test]
fn a_session_whose_plan_is_broken_is_analysed_without_it_and_says_why() {
    let dir = tempfile::tempdir().unwrap();
    broken_roster(dir.path());
    let roster = Roster::open(dir.path()).unwrap();
    let (athlete, act) = roster.find_session(REPS_ID).unwrap();
    let a = analyse_activity(athlete, act).expect("analysed without the plan");
    assert!(a.plan.is_none());
    assert!(a.review.plan.is_none());
    assert_eq!(
        a.review.interval_notes.first().map(String::as_str),
        Some(
            "plan not used: 2026-11-03-reps.toml: line 2, column 46: invalid basic string, \
             expected `\"`"
        )
    );
    assert!(a.review.interval_notes[0].starts_with(PLAN_NOT_USED));
    let f = a
        .review
        .findings
        .iter()
        .find(|f| f.code == "plan_not_used")
        .expect("finding");
    assert!(f
        .text
        .starts_with("Plan not used: 2026-11-03-reps.toml could not be read (line 2"));
    // The HR finding names the bad key instead of claiming the profile lacks the number.
    let hr = a
        .review
        .findings
        .iter()
        .find(|f| f.code == "no_hr_profile")
        .expect("no-HR finding");
    assert!(
        hr.text
            .contains("could not be read (athlete.toml line 4, column 1: unknown key \"hr_mx\""),
        "{}",
        hr.text
    );
    assert!(!hr.text.contains("lacks"), "{}", hr.text);
    // The athlete's feedback draft is about the running, not the coach's files.
    let input = splitdesk::export::feedback::DraftInput {
        review: &a.review,
        profile: &athlete.profile,
        grades: Default::default(),
        note: None,
        marks: Vec::new(),
        earlier: None,
    };
    let draft = splitdesk::export::feedback::draft(&input, &Default::default());
    assert!(
        !draft.contains("Plan not used") && !draft.contains("athlete.toml"),
        "{draft}"
    );
    // `analyze` on the file shows the same note instead of failing.
    let out = splitdesk().arg("analyze").arg(&act.path).output().unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("(plan not used: 2026-11-03-reps.toml: line 2, column 46:"),
        "{text}"
    );
}

#[test]
fn a_plan_pace_the_profile_lacks_is_a_finding_of_the_session() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let plan = dir.path().join("tova-renn/plans/2026-11-03-reps.toml");
    edit(&plan, "@ 5k", "@ 5kk");
    let roster = Roster::open(dir.path()).unwrap();
    let (athlete, act) = roster.find_session(REPS_ID).unwrap();
    let a = analyse_activity(athlete, act).unwrap();
    assert!(a.plan.is_some());
    let f = a
        .review
        .findings
        .iter()
        .find(|f| f.code == "plan_pace_unknown")
        .expect("finding");
    assert_eq!(
        f.text,
        "Plan 2026-11-03-reps.toml: pace \"5kk\" is not in the athlete's profile (did you mean \
         \"5k\"?): targets at that pace are not judged."
    );
    let work = a.review.work().next().unwrap();
    assert_eq!(work.target.as_deref(), Some("5kk (not in the profile)"));
}

#[test]
fn a_profile_or_plan_change_does_not_leave_a_stale_cached_review() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let jdir = tempfile::tempdir().unwrap();
    let journal = jdir.path().join("journal.sqlite");
    let sync = |journal: &Path| {
        let mut ws = Workspace::open(dir.path(), Some(journal)).unwrap();
        let r = ws.sync(Utc::now(), |_, _| {}).unwrap();
        (r.analysed, r.cached)
    };
    assert_eq!(sync(&journal), (2, 0));
    // Unchanged inputs: the cached reviews are used.
    assert_eq!(sync(&journal), (0, 2));
    // A plan edit: the new title must show, not the cached one.
    edit(
        &dir.path().join("tova-renn/plans/2026-11-03-reps.toml"),
        "5k-pace repeats",
        "Five at 5k pace",
    );
    assert_eq!(sync(&journal), (2, 0));
    let mut ws = Workspace::open(dir.path(), Some(&journal)).unwrap();
    let r = ws.refresh(REPS_ID, Utc::now()).unwrap();
    assert_eq!(r.plan.as_ref().unwrap().title, "Five at 5k pace");
    drop(ws);
    // A profile edit: load (TRIMP) goes away with the resting HR, and the finding says why.
    let easy_before = Workspace::open(dir.path(), Some(&journal))
        .unwrap()
        .refresh(EASY_ID, Utc::now())
        .unwrap();
    assert!(easy_before.trimp.is_some());
    edit(
        &dir.path().join("tova-renn/athlete.toml"),
        "hr_rest = 50",
        "hr_rst = 50",
    );
    let mut ws = Workspace::open(dir.path(), Some(&journal)).unwrap();
    let easy = ws.refresh(EASY_ID, Utc::now()).unwrap();
    assert_eq!(easy.trimp, None);
    assert!(easy
        .findings
        .iter()
        .any(|f| f.code == "no_hr_profile" && f.text.contains("\"hr_rst\"")));
}

#[test]
fn problem_lines_carry_no_control_characters() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    // A file name with an escape sequence and a bell in it, and a broken plan inside.
    let name = "2026-11-07-\u{1b}[2Jwipe\u{7}.toml";
    std::fs::write(
        dir.path().join("tova-renn/plans").join(name),
        "title = \"x\"\nsteps = \"3 x 1:00 @ 5k\u{1b}[31m\"\n",
    )
    .unwrap();
    let out = splitdesk().arg("check").arg(dir.path()).output().unwrap();
    assert_eq!(out.status.code(), Some(1));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("␛[2Jwipe␇.toml: line 2"), "{text:?}");
    assert!(
        !text.chars().any(|c| c.is_control() && c != '\n'),
        "{text:?}"
    );
    let roster = Roster::open(dir.path()).unwrap();
    for p in roster.athlete("tova-renn").unwrap().problems() {
        assert!(!p.to_string().chars().any(char::is_control), "{p}");
    }
}

#[test]
fn analyze_with_an_explicit_profile_uses_its_good_keys_and_warns_about_the_rest() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let profile = dir.path().join("elsewhere/athlete.toml");
    std::fs::create_dir_all(profile.parent().unwrap()).unwrap();
    std::fs::write(&profile, "name = \"Tova\"\nhr_max = 190\nhr_rset = 50\n").unwrap();
    let out = splitdesk()
        .arg("analyze")
        .arg(dir.path().join("tova-renn/activities/2026-11-01-easy.fit"))
        .arg("--athlete")
        .arg(&profile)
        .arg("--json")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(
        err.trim_end(),
        format!(
            "warning: {}: line 3, column 1: unknown key \"hr_rset\"; did you mean \"hr_rest\"? \
             ignored",
            profile.display()
        )
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    // hr_max was read (HR zones exist), hr_rest was not (no load).
    assert!(v["trimp"].is_null());
    assert_eq!(v["zones"]["hr"][4]["to_bpm"], 190.0);
}

#[test]
fn plan_files_are_checked_when_their_problems_are_asked_for() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let roster = Roster::open(dir.path()).unwrap();
    // Broken after the roster was opened: opening did not read it, the check does.
    let plan = dir.path().join("tova-renn/plans/2026-11-03-reps.toml");
    std::fs::write(&plan, "title = \"5k-pace repeats\n").unwrap();
    let a = roster.athlete("tova-renn").unwrap();
    assert!(a.has_problems());
    assert_eq!(a.plan_problems().len(), 1);
    let lines: Vec<String> = roster.problems().iter().map(|p| p.to_string()).collect();
    assert_eq!(
        lines,
        [format!(
            "{}: line 1, column 25: invalid basic string, expected `\"`",
            plan.display()
        )]
    );
}

#[test]
fn the_inputs_digest_follows_plan_edits_without_reading_the_plans() {
    let dir = tempfile::tempdir().unwrap();
    write_roster(dir.path());
    let digest = || {
        Roster::open(dir.path())
            .unwrap()
            .athlete("tova-renn")
            .unwrap()
            .inputs_digest
            .clone()
    };
    let first = digest();
    assert_eq!(digest(), first, "nothing changed");
    let plan = dir.path().join("tova-renn/plans/2026-11-03-reps.toml");
    // An edit in place that keeps the size: the times change.
    edit(&plan, "5k-pace repeats", "Five at 5k pace");
    let edited = digest();
    assert_ne!(edited, first);
    assert_eq!(digest(), edited);
    // A new plan file, then its removal.
    let extra = dir.path().join("tova-renn/plans/2026-11-05-easy.toml");
    std::fs::write(&extra, "title = \"Easy\"\nsteps = \"30:00 easy\"\n").unwrap();
    assert_ne!(digest(), edited);
    std::fs::remove_file(&extra).unwrap();
    assert_eq!(digest(), edited);
}
