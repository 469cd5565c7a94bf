//! Keys and background results update only what changed (the session's row, its athlete's
//! count, the queue, the seen count), never re-reading every list: after a scan, scores, the
//! verdict, the reveal and marking a session seen, the lists the workstation holds are
//! exactly what re-reading the whole journal gives.

mod tui_support;

use std::collections::BTreeMap;

use splitdesk::journal::{Journal, QueueEntry, ReviewStage};
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, SessionRow};
use tui_support::{
    app_with, ch, grade_and_reveal, run_effects, scanned_app, EASY, INTERVALS, LONG,
};

type Lists = (
    Vec<(String, Vec<SessionRow>)>,
    BTreeMap<String, usize>,
    Vec<QueueEntry>,
    usize,
);

fn lists(app: &App) -> Lists {
    let mut rows: Vec<(String, Vec<SessionRow>)> = app
        .rows
        .iter()
        .map(|(k, v)| (k.clone(), v.clone()))
        .collect();
    rows.sort_by(|a, b| a.0.cmp(&b.0));
    (rows, app.counts.clone(), app.queue.clone(), app.seen_count)
}

/// The lists as held, then as re-read whole: they must agree.
fn assert_same_as_reread(app: &mut App) -> Lists {
    let held = lists(app);
    app.refresh_lists();
    assert_eq!(held, lists(app));
    held
}

fn queue_ids(l: &Lists) -> Vec<&str> {
    l.2.iter().map(|e| e.session_id.as_str()).collect()
}

fn stage(l: &Lists, id: &str) -> Option<ReviewStage> {
    l.0.iter()
        .flat_map(|(_, rs)| rs)
        .find(|r| r.session_id == id)
        .and_then(|r| r.stage)
}

#[test]
fn grading_revealing_and_marking_seen_update_the_lists_in_place() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    let scanned = assert_same_as_reread(&mut app);
    assert_eq!(queue_ids(&scanned), [EASY, LONG, INTERVALS]);
    assert_eq!(scanned.1.get("ines-aldana"), Some(&2));

    grade_and_reveal(&mut app);
    let graded = assert_same_as_reread(&mut app);
    assert_eq!(stage(&graded, INTERVALS), Some(ReviewStage::Revealed));
    assert_eq!(queue_ids(&graded), [EASY, LONG]);
    assert_eq!(graded.1.get("ines-aldana"), Some(&1));

    let fx = app.open_session(EASY);
    run_effects(&mut app, fx);
    ch(&mut app, 'm');
    let seen = assert_same_as_reread(&mut app);
    assert_eq!(stage(&seen, EASY), Some(ReviewStage::Seen));
    assert_eq!(queue_ids(&seen), [LONG]);
    assert_eq!(seen.1.get("ines-aldana"), None);
    assert_eq!(seen.3, 1);

    // Back in the queue, in date order.
    ch(&mut app, 'm');
    let back = assert_same_as_reread(&mut app);
    assert_eq!(queue_ids(&back), [EASY, LONG]);
    assert_eq!(back.3, 0);
    // Rows stay newest first.
    let ines = &back.0.iter().find(|(a, _)| a == "ines-aldana").unwrap().1;
    let ids: Vec<&str> = ines.iter().map(|r| r.session_id.as_str()).collect();
    assert_eq!(ids, [INTERVALS, EASY]);
}

#[test]
fn a_scan_with_an_unreadable_file_fills_the_lists_in_place() {
    let dir = tempfile::tempdir().unwrap();
    tui_support::build_roster(dir.path());
    let broken = "marco-bell/2024-03-05-broken";
    std::fs::write(
        dir.path()
            .join("marco-bell/activities/2024-03-05-broken.fit"),
        b"not a fit file at all",
    )
    .unwrap();
    let mut app = scanned_app(
        Roster::open(dir.path()).unwrap(),
        Journal::open_in_memory().unwrap(),
        None,
    );
    assert_eq!(app.progress.failed, 1);
    let l = assert_same_as_reread(&mut app);
    let marco = &l.0.iter().find(|(a, _)| a == "marco-bell").unwrap().1;
    let ids: Vec<(&str, bool)> = marco
        .iter()
        .map(|r| (r.session_id.as_str(), r.failed))
        .collect();
    assert_eq!(ids, [(broken, true), (LONG, false)]);
    assert_eq!(l.1.get("marco-bell"), Some(&2));
    assert_eq!(queue_ids(&l), [EASY, LONG, INTERVALS, broken]);
}

#[test]
fn the_roster_pane_shows_every_digit_of_an_unreviewed_count() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    app.counts.insert("marco-bell".to_string(), 1020);
    app.counts.insert("ines-aldana".to_string(), 12345);
    let text = tui_support::screen(&mut app, 160, 48);
    let line = |name: &str| {
        text.lines()
            .find(|l| l.contains(name))
            .unwrap_or_else(|| panic!("{name} in\n{text}"))
            .to_string()
    };
    assert!(line("Marco Bell").contains(" 1020│"), "{text}");
    assert!(line("Ines Aldana").contains(" 12345│"), "{text}");
}
