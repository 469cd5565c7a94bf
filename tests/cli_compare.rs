//! `splitdesk compare SESSION [--json]` end to end on a copy of one demo athlete: the planted
//! repeat of a workout is found, the change is the difference of the two runs' means, and an
//! earlier run's note shows only once that run's own blind grading is done and read.

mod cli_support;

use cli_support::copy_dir;

use std::path::Path;

use cli_support::TempRoster;
use serde_json::Value;

const ATHLETE: &str = "ansel-marchetti";
const NOW: &str = "ansel-marchetti/2026-11-12-cruise-miles";
const THEN: &str = "ansel-marchetti/2026-10-22-cruise-miles";

fn roster() -> TempRoster {
    TempRoster::new(|root| {
        let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
        std::fs::create_dir_all(root).unwrap();
        std::fs::copy(demo.join("roster.toml"), root.join("roster.toml")).unwrap();
        copy_dir(&demo.join(ATHLETE), &root.join(ATHLETE));
    })
}

fn json(r: &TempRoster, args: &[&str]) -> Value {
    let (code, out, err) = r.run(args);
    assert_eq!(code, 0, "{args:?}: {err}");
    serde_json::from_str(&out).unwrap_or_else(|e| panic!("{e}: {out}"))
}

#[test]
fn the_repeat_of_a_workout_is_found_and_the_change_is_the_difference_of_the_means() {
    let r = roster();
    let c = json(&r, &["compare", NOW, "--json"]);
    assert_eq!(c["schema"], "splitdesk.compare/1");
    assert_eq!(c["matched_by"], "workout_shape");
    let runs = c["runs"].as_array().unwrap();
    let ids: Vec<&str> = runs
        .iter()
        .map(|r| r["session_id"].as_str().unwrap())
        .collect();
    assert!(ids.contains(&THEN), "{ids:?}");
    let last = runs.last().unwrap();
    assert_eq!(last["session_id"], NOW);
    assert_eq!(last["current"], true);
    let then = runs.iter().find(|r| r["session_id"] == THEN).unwrap();
    let change = c["changes"]
        .as_array()
        .unwrap()
        .iter()
        .find(|ch| ch["session_id"] == THEN)
        .unwrap();
    let diff =
        last["mean_pace_s_per_km"].as_f64().unwrap() - then["mean_pace_s_per_km"].as_f64().unwrap();
    assert!(
        (change["pace_s_per_km"].as_f64().unwrap() - diff).abs() < 1e-6,
        "{change} vs {diff}"
    );
    // The mean is the mean of the reps shown.
    let reps = last["reps"].as_array().unwrap();
    assert_eq!(reps.len(), 3, "3 x 1 mile");
    let mean = reps
        .iter()
        .map(|r| r["pace_s_per_km"].as_f64().unwrap())
        .sum::<f64>()
        / reps.len() as f64;
    assert!((mean - last["mean_pace_s_per_km"].as_f64().unwrap()).abs() < 1e-6);

    let (code, text, _) = r.run(&["compare", NOW]);
    assert_eq!(code, 0);
    assert!(
        text.contains("Same workout: 3 x 1 mi @ threshold / 1:30 jog"),
        "{text}"
    );
    assert!(text.contains("2026-10-22 2026-11-12\n"), "{text}");
    assert!(text.contains("The last column is this session"), "{text}");
    // The side-by-side tables fit 80 columns (the prose below them wraps in the terminal).
    let table = text.split("The last column").next().unwrap();
    assert!(table.lines().all(|l| l.chars().count() <= 80), "{text}");
}

#[test]
fn an_earlier_runs_note_shows_only_after_its_own_grading_and_reveal() {
    let r = roster();
    let c = json(&r, &["compare", NOW, "--json"]);
    assert_eq!(c["earlier_notes"], serde_json::json!([]));
    // Grading the session itself does not open the earlier run's note.
    let g = json(
        &r,
        &[
            "grade",
            NOW,
            "--score",
            "1=4",
            "--score",
            "2=4",
            "--score",
            "3=4",
            "--verdict",
            "met",
            "--json",
        ],
    );
    assert!(g.is_object());
    let (code, _, err) = r.run(&["notes", NOW]);
    assert_eq!(code, 0, "{err}");
    let c = json(&r, &["compare", NOW, "--json"]);
    assert_eq!(c["earlier_notes"], serde_json::json!([]));
    // Graded blind but not read: still hidden.
    let then = json(&r, &["compare", THEN, "--json"]);
    let n = then["runs"].as_array().unwrap().last().unwrap()["reps"]
        .as_array()
        .unwrap()
        .len();
    let mut args = vec!["grade".to_string(), THEN.to_string()];
    for k in 1..=n {
        args.push("--score".into());
        args.push(format!("{k}=3"));
    }
    args.extend(["--verdict".into(), "partly".into(), "--json".into()]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    json(&r, &args);
    let c = json(&r, &["compare", NOW, "--json"]);
    assert_eq!(c["earlier_notes"], serde_json::json!([]));
    // Read: now it shows, and it is that run's own note.
    let (code, _, err) = r.run(&["notes", THEN]);
    assert_eq!(code, 0, "{err}");
    let c = json(&r, &["compare", NOW, "--json"]);
    let notes = c["earlier_notes"].as_array().unwrap();
    assert_eq!(notes.len(), 1, "{c}");
    assert_eq!(notes[0]["session_id"], THEN);
    let file = std::fs::read_to_string(
        r.roster
            .join(ATHLETE)
            .join("notes/2026-10-22-cruise-miles.txt"),
    )
    .unwrap();
    assert_eq!(notes[0]["note"].as_str().unwrap().trim(), file.trim());
}

#[test]
fn an_unknown_session_is_one_line_naming_it() {
    let r = roster();
    let (code, out, err) = r.run(&["compare", "ansel-marchetti/no-such-run"]);
    assert_ne!(code, 0);
    assert!(out.is_empty());
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(err.contains("no-such-run"), "{err}");
}
