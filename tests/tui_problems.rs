//! Profile and plan problems on the workstation at 80x24: a marker and the problem lines on the
//! athlete in the roster pane, the profile problem and "plan not used" on the open session.

mod tui_support;

use splitdesk::journal::Journal;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Options};
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use tui_support::*;

/// The test roster with a typo in Ines's profile and her interval plan broken.
fn broken_app(dir: &std::path::Path) -> App {
    build_roster(dir);
    let profile = dir.join("ines-aldana/athlete.toml");
    let text = std::fs::read_to_string(&profile).unwrap();
    std::fs::write(&profile, text.replace("hr_max = 190", "hr_mx = 190")).unwrap();
    std::fs::write(
        dir.join("ines-aldana/plans/2024-03-04-intervals.toml"),
        "title = \"5 x 3 min\"\nsteps = \"10:00 easy; 5 x 3:00 @ 5k / 2:00 jgo; 8:00 easy\n",
    )
    .unwrap();
    let roster = Roster::open(dir).expect("roster");
    let mut app = App::new(
        roster,
        Journal::open_in_memory().expect("journal"),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    );
    let fx = app.start_scan();
    run_effects(&mut app, fx);
    app
}

/// The workstation on the roster at `dir` with its journal file at `journal`, not yet scanned.
fn app_on_journal(dir: &std::path::Path, journal: &std::path::Path) -> App {
    App::new(
        Roster::open(dir).expect("roster"),
        Journal::open_for_roster(journal, dir).expect("journal"),
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir: None,
        },
    )
}

#[test]
fn the_athlete_carries_a_marker_and_its_problems_in_the_roster_pane() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = broken_app(dir.path());
    app.cursor.athlete = Some("ines-aldana".into());
    let text = screen(&mut app, 80, 24);
    let ines = text
        .lines()
        .find(|l| l.contains("Ines Aldana") && !l.contains("files"))
        .unwrap_or_else(|| panic!("{text}"));
    assert!(ines.contains(" !"), "{text}");
    let marco = text.lines().find(|l| l.contains("Marco Bell")).unwrap();
    assert!(!marco.contains('!'), "{text}");
    assert!(text.contains("! 2 file problems:"), "{text}");
    // In full (wrapped) in the pane beside the roster.
    for part in [
        "! Problems in Ines Aldana's files",
        "athlete.toml: line 4, column 1: unknown key",
        "\"hr_mx\"; did you mean \"hr_max\"? ignored",
        "2024-03-04-intervals.toml: line 2, column 57:",
        "invalid basic string, expected `\"`",
    ] {
        assert!(text.contains(part), "{part:?} in\n{text}");
    }
}

#[test]
fn a_session_with_a_broken_plan_opens_without_it_and_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = broken_app(dir.path());
    let fx = app.open_session(INTERVALS);
    run_effects(&mut app, fx);
    let o = app.open.as_ref().expect("open");
    assert!(o.load_error.is_none(), "{:?}", o.load_error);
    let review = o.review.as_ref().expect("the session is analysed");
    assert!(review.plan.is_none());
    let text = screen(&mut app, 80, 24);
    assert!(
        text.contains("! athlete.toml line 4, column 1: unknown key"),
        "{text}"
    );
    assert!(
        text.contains("plan not used: 2024-03-04-intervals.toml: line 2, column 57:"),
        "{text}"
    );
}

#[test]
fn the_start_up_scan_re_analyses_sessions_after_a_plan_edit() {
    let dir = tempfile::tempdir().unwrap();
    let jdir = tempfile::tempdir().unwrap();
    let journal = jdir.path().join("journal.sqlite");
    build_roster(dir.path());
    let scan = || {
        let mut app = app_on_journal(dir.path(), &journal);
        let fx = app.start_scan();
        run_effects(&mut app, fx);
        app.journal
            .cached_summary(INTERVALS, splitdesk::analysis::review::ANALYSIS_VERSION)
            .unwrap()
            .expect("summary")
    };
    assert!(scan().contains("\"title\":\"5 x 3 min\""));
    let plan = dir
        .path()
        .join("ines-aldana/plans/2024-03-04-intervals.toml");
    let text = std::fs::read_to_string(&plan).unwrap();
    std::fs::write(&plan, text.replace("5 x 3 min", "Five threes")).unwrap();
    let after = scan();
    assert!(after.contains("\"title\":\"Five threes\""), "{after}");
}

/// A damaged activity file is read once: a later start knows it from its stat, still counts
/// and lists it as unreadable, and writes nothing to the journal for it.
#[test]
fn a_damaged_file_is_known_from_its_stat_on_a_warm_start() {
    let dir = tempfile::tempdir().unwrap();
    let jdir = tempfile::tempdir().unwrap();
    let journal = jdir.path().join("journal.sqlite");
    build_roster(dir.path());
    let damaged = std::fs::read_dir(dir.path().join("marco-bell/activities"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| p.to_string_lossy().contains("2024-03-03-long"))
        .unwrap();
    let bytes = std::fs::read(&damaged).unwrap();
    std::fs::write(&damaged, &bytes[..bytes.len() / 2]).unwrap();
    let start = || app_on_journal(dir.path(), &journal);
    let mut first = start();
    let fx = first.start_scan();
    run_effects(&mut first, fx);
    assert_eq!(first.progress.failed, 1);
    let line = first
        .problems
        .iter()
        .find(|p| p.contains("2024-03-03-long"))
        .cloned()
        .expect("the damaged file is listed");
    drop(first);

    let wal = jdir.path().join("journal.sqlite-wal");
    let len = |p: &std::path::Path| std::fs::metadata(p).map(|m| m.len()).unwrap_or(0);
    let mut second = start();
    let before = (len(&journal), len(&wal));
    let fx = second.start_scan();
    let job = fx
        .iter()
        .find_map(|e| match e {
            splitdesk::tui::app::Effect::Submit { job, .. } if job.session_id() == LONG => {
                Some(job.clone())
            }
            _ => None,
        })
        .expect("a re-check job for the damaged file");
    assert!(
        job.cached_stat.is_some(),
        "the damaged file's stat was kept"
    );
    assert!(matches!(
        splitdesk::worker::run_job(&job),
        splitdesk::worker::Outcome::Unchanged
    ));
    run_effects(&mut second, fx);
    assert_eq!(second.progress.failed, 1);
    assert!(second.problems.contains(&line), "{:?}", second.problems);
    assert_eq!((len(&journal), len(&wal)), before, "nothing written");
}
