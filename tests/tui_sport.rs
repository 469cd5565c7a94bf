//! A ride in the workstation: shown as a ride (no interval table, no scores), graded by the
//! purpose verdict alone, and the notes reveal after it (blind protocol with zero work
//! intervals).

mod tui_support;

use chrono::{TimeZone, Utc};
use crossterm::event::KeyCode;
use splitdesk::demo::simulate::{simulate, SimInput};
use splitdesk::demo::tcx_writer;
use splitdesk::model::{AthleteProfile, Sport};
use tui_support::*;

const RIDE: &str = "ines-aldana/2024-03-05-ride";

#[test]
fn a_ride_shows_as_a_ride_and_is_graded_by_the_verdict_alone() {
    let dir = tempfile::tempdir().unwrap();
    // A ride (the simulator's signals, labelled cycling) written as a TCX file, no plan.
    let mut input = SimInput::new(
        AthleteProfile::bare("ines-aldana"),
        SimInput::default().plan,
        5,
    );
    input.start = Utc.with_ymd_and_hms(2024, 3, 5, 7, 0, 0).single().unwrap();
    let mut out = simulate(&input);
    out.session.sport = Sport::Cycling;
    let path = dir
        .path()
        .join("ines-aldana/activities/2024-03-05-ride.tcx");
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(&path, tcx_writer::write(&out.session)).unwrap();
    std::fs::create_dir_all(dir.path().join("ines-aldana/notes")).unwrap();
    std::fs::write(
        dir.path().join("ines-aldana/notes/2024-03-05-ride.txt"),
        "Windy on the way back.\n",
    )
    .unwrap();

    let mut app = app_with(dir.path());
    let fx = app.open_session(RIDE);
    run_effects(&mut app, fx);
    assert_eq!(app.open.as_ref().unwrap().work_count(), 0);
    let text = screen(&mut app, 160, 48);
    assert!(text.contains("Chart · Cycling"), "{text}");
    assert!(text.contains("Cycling · 30:00"), "{text}");
    assert!(text.contains("no intervals to score"), "{text}");
    assert!(text.contains("Not a run: no running analysis"), "{text}");
    assert!(text.contains("km/h"), "{text}");
    assert!(!text.contains("Windy"), "{text}");
    // The verdict is the whole grade: set it, then the notes reveal.
    ch(&mut app, 'v');
    ch(&mut app, 'o');
    key(&mut app, KeyCode::Esc);
    let text = screen(&mut app, 160, 48);
    assert!(text.contains("Windy on the way back."), "{text}");
}
