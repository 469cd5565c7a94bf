//! The daily review from the shell, end to end through the real binary on a tiny roster:
//! queue, blind grading, notes, revisions, feedback, exports, bias check, journal upkeep.

mod cli_support;
mod roster_support;

use cli_support::TempRoster;
use roster_support::{write_roster, EASY_ID, NOTE_MARKER, REPS_ID};

type Env = TempRoster;

fn env() -> Env {
    TempRoster::new(write_roster)
}

fn work_count(env: &Env) -> usize {
    let out = env.ok(&[
        "analyze",
        env.roster
            .join("tova-renn/activities/2026-11-03-reps.fit")
            .to_str()
            .unwrap(),
        "--json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    v["intervals"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|i| i["kind"] == "work")
        .count()
}

#[test]
fn queue_is_oldest_first_and_shows_plan_titles() {
    let e = env();
    let v: serde_json::Value = serde_json::from_str(&e.ok(&["queue", "--json"])).unwrap();
    let rows = v.as_array().unwrap();
    assert_eq!(rows.len(), 2);
    assert_eq!(rows[0]["session"], EASY_ID);
    assert_eq!(rows[1]["session"], REPS_ID);
    assert_eq!(rows[1]["title"], "5k-pace repeats");
    assert_eq!(rows[1]["stage"], "new");
    // the journal lives where we said, never inside the roster
    assert!(e.journal.exists());
    assert!(!walk_has_sqlite(&e.roster));
}

fn walk_has_sqlite(dir: &std::path::Path) -> bool {
    std::fs::read_dir(dir).unwrap().flatten().any(|x| {
        let p = x.path();
        if p.is_dir() {
            walk_has_sqlite(&p)
        } else {
            p.extension().is_some_and(|e| e == "sqlite")
        }
    })
}

#[test]
fn notes_stay_hidden_from_every_command_until_grading_is_complete() {
    let e = env();
    let n = work_count(&e);
    assert_eq!(n, 5, "the plan has five repeats");
    let check_hidden = |e: &Env| {
        for args in [
            vec!["queue"],
            vec!["queue", "--json"],
            vec!["feedback", REPS_ID],
            vec!["feedback", REPS_ID, "--draft", "--json"],
            vec!["export", "feedback", "--format", "json"],
            vec!["export", "intervals", "--csv"],
            vec!["bias-check", "--json"],
        ] {
            let (_, out, err) = e.run(&args);
            assert!(
                !out.contains(NOTE_MARKER) && !err.contains(NOTE_MARKER),
                "{args:?} leaked the note"
            );
        }
        let (code, out, err) = e.run(&["notes", REPS_ID]);
        assert_eq!(code, 3);
        assert!(out.is_empty());
        assert!(!err.contains(NOTE_MARKER));
        assert_eq!(err.lines().count(), 1, "{err}");
        err
    };
    let err = check_hidden(&e);
    assert!(
        err.contains("scores missing for work intervals 1, 2, 3, 4, 5"),
        "{err}"
    );
    assert!(err.contains("purpose verdict not set"), "{err}");

    e.ok(&[
        "grade", REPS_ID, "--score", "1=4", "--score", "2=4", "--score", "3=3",
    ]);
    let err = check_hidden(&e);
    assert!(
        err.contains("scores missing for work intervals 4, 5"),
        "{err}"
    );
    e.ok(&["grade", REPS_ID, "--score", "4=3", "--score", "5=2"]);
    let err = check_hidden(&e);
    assert!(
        err.contains("purpose verdict not set") && !err.contains("scores missing"),
        "{err}"
    );
    // feedback cannot be saved before the reveal
    let (code, _, err) = e.run(&["feedback", REPS_ID, "--edit"]);
    assert_ne!(code, 0);
    assert!(err.contains("after the reveal"), "{err}");

    e.ok(&["grade", REPS_ID, "--verdict", "partly"]);
    let note = e.ok(&["notes", REPS_ID]);
    assert!(note.contains(NOTE_MARKER), "{note}");
    assert!(note.starts_with("Felt awful"));
}

#[test]
fn revision_after_reveal_keeps_the_blind_grade_and_bias_check_reports_it() {
    let e = env();
    e.ok(&[
        "grade",
        REPS_ID,
        "--score",
        "1=4",
        "--score",
        "2=4",
        "--score",
        "3=4",
        "--score",
        "4=4",
        "--score",
        "5=4",
        "--verdict",
        "met",
    ]);
    e.ok(&["notes", REPS_ID]);
    // the note says "awful": the coach marks two reps down after reading it
    let v: serde_json::Value = serde_json::from_str(&e.ok(&[
        "grade", REPS_ID, "--score", "4=2", "--score", "5=3", "--json",
    ]))
    .unwrap();
    assert_eq!(v["blind_scores"]["4"], 4);
    assert_eq!(v["scores"]["4"], 2);
    assert_eq!(v["scores"]["5"], 3);
    assert_eq!(v["revisions"], 2);
    assert_eq!(v["stage"], "revealed");

    let b: serde_json::Value = serde_json::from_str(&e.ok(&["bias-check", "--json"])).unwrap();
    assert_eq!(b["overall"]["reviews"], 1);
    assert_eq!(b["overall"]["changed"], 1);
    assert_eq!(b["overall"]["mean_shift"], -3.0);
    assert_eq!(b["overall"]["with_tone"], 1, "down after a negative note");
    assert_eq!(b["athletes"]["tova-renn"]["changed"], 1);
}

#[test]
fn feedback_export_and_interval_csv() {
    let e = env();
    let args: Vec<String> = (1..=5).map(|k| format!("{k}=4")).collect();
    let mut grade = vec!["grade", REPS_ID, "--verdict", "met"];
    for a in &args {
        grade.push("--score");
        grade.push(a);
    }
    e.ok(&grade);
    e.ok(&["notes", REPS_ID]);
    let draft = e.ok(&["feedback", REPS_ID, "--draft"]);
    assert!(draft.starts_with("Hi Tova,"), "{draft}");
    assert!(draft.contains("5k-pace repeats"));
    // The verdict sentence and a sign-off (the draft's wording is checked in
    // tests/feedback_drafts.rs).
    assert!(
        draft.contains("This one did exactly what it was meant to."),
        "{draft}"
    );
    assert!(draft.trim_end().ends_with("Coach"), "{draft}");
    assert!(
        draft.contains("/km"),
        "paces in the athlete's units: {draft}"
    );

    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("fb.txt");
    std::fs::write(&f, "Great work today, Tova.\n").unwrap();
    e.ok(&["feedback", REPS_ID, "--set", f.to_str().unwrap()]);
    assert_eq!(e.ok(&["feedback", REPS_ID]), "Great work today, Tova.\n");

    let text = e.ok(&["export", "feedback", "--date", "2026-11-03"]);
    assert_eq!(
        text.matches("To Tova Renn").count(),
        1,
        "one block per session: {text}"
    );
    assert!(text.contains("Great work today"));
    let md = e.ok(&[
        "export",
        "feedback",
        "--athlete",
        "tova-renn",
        "--format",
        "md",
    ]);
    assert!(md.starts_with("## Tova Renn"), "{md}");
    // exported: the session now counts as feedback done
    let q: serde_json::Value = serde_json::from_str(&e.ok(&["queue", "--json"])).unwrap();
    assert_eq!(q.as_array().unwrap().len(), 1, "only the easy run is left");

    // CSV parses with the csv crate and round-trips the analysis numbers
    let csv_text = e.ok(&["export", "intervals", "--csv"]);
    let mut rdr = csv::Reader::from_reader(csv_text.as_bytes());
    let headers = rdr.headers().unwrap().clone();
    let rows: Vec<csv::StringRecord> = rdr.records().map(|r| r.unwrap()).collect();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let analysis: serde_json::Value = serde_json::from_str(
        &e.ok(&[
            "analyze",
            e.roster
                .join("tova-renn/activities/2026-11-03-reps.fit")
                .to_str()
                .unwrap(),
            "--json",
        ]),
    )
    .unwrap();
    let reps: Vec<&csv::StringRecord> = rows
        .iter()
        .filter(|r| &r[col("session")] == REPS_ID)
        .collect();
    let ivs = analysis["intervals"].as_array().unwrap();
    assert_eq!(reps.len(), ivs.len());
    for (r, iv) in reps.iter().zip(ivs) {
        let pace: f64 = r[col("avg_pace_s_per_km")].parse().unwrap();
        assert!((pace - iv["avg_pace_s_per_km"].as_f64().unwrap()).abs() < 1e-3);
        if iv["kind"] == "work" {
            assert_eq!(&r[col("blind_score")], "4");
        }
    }
}

#[test]
fn journal_check_and_backup() {
    let e = env();
    // `journal check` takes the journal as it is (no sync first): a command that syncs has
    // recorded the roster's sessions.
    e.ok(&["queue"]);
    let v: serde_json::Value =
        serde_json::from_str(&e.ok(&["journal", "check", "--json"])).unwrap();
    assert_eq!(v["ok"], true);
    assert_eq!(v["sessions"], 2);
    let dir = tempfile::tempdir().unwrap();
    let copy = dir.path().join("copy.sqlite");
    e.ok(&["journal", "backup", copy.to_str().unwrap()]);
    assert!(splitdesk::journal::Journal::open(&copy).is_ok());
    // never overwrites
    let (code, _, err) = e.run(&["journal", "backup", copy.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(err.contains("already exists"), "{err}");
}

#[test]
fn completions_and_man_page_come_from_the_cli_definition() {
    let e = env();
    let bash = e.ok(&["completions", "bash"]);
    assert!(bash.contains("splitdesk") && bash.contains("bias-check"));
    let man = e.ok(&["man"]);
    assert!(
        man.contains(".TH splitdesk"),
        "{}",
        &man[..200.min(man.len())]
    );
}

#[test]
fn chart_export_as_svg_and_png_with_rulers() {
    let e = env();
    e.ok(&["queue"]); // creates the journal and records the sessions
    {
        let mut j = splitdesk::journal::Journal::open(&e.journal).unwrap();
        let now = chrono::Utc::now();
        j.add_ruler(REPS_ID, 60.0, 600.0, now).unwrap();
        j.add_ruler(REPS_ID, 900.0, 1500.0, now).unwrap();
    }
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("c.svg");
    let out = e.ok(&["export", "chart", REPS_ID, "--out", svg.to_str().unwrap()]);
    assert!(out.contains("2 rulers"), "{out}");
    // Source: quick-xml (crates.io), a general-purpose XML reader: the SVG is well-formed.
    let text = std::fs::read_to_string(&svg).unwrap();
    let mut reader = quick_xml::Reader::from_str(&text);
    let (mut elements, mut rulers) = (0, 0);
    loop {
        match reader.read_event().unwrap() {
            quick_xml::events::Event::Eof => break,
            quick_xml::events::Event::Start(x) | quick_xml::events::Event::Empty(x) => {
                elements += 1;
                if x.attributes()
                    .flatten()
                    .any(|a| a.key.as_ref() == b"class" && a.value.as_ref() == b"ruler")
                {
                    rulers += 1;
                }
            }
            _ => {}
        }
    }
    assert!(elements > 20);
    assert_eq!(rulers, 4, "pace and HR line for each of two rulers");
    assert!(text.contains("ruler 1:") && text.contains("ruler 2:"));

    let png = dir.path().join("c.png");
    e.ok(&["export", "chart", REPS_ID, "--out", png.to_str().unwrap()]);
    // Source: the `image` crate (crates.io), an independent PNG decoder.
    let img = image::open(&png).unwrap();
    assert_eq!((img.width(), img.height()), (1200, 520));

    let (code, _, err) = e.run(&["export", "chart", REPS_ID, "--out", "x.jpg"]);
    assert_eq!(code, 2);
    assert!(err.contains(".svg or .png"), "{err}");
}

#[test]
fn the_draft_comes_after_the_reveal_and_answers_the_note() {
    let e = env();
    // Before the blind grading is complete no draft can be made.
    let (code, out, err) = e.run(&["feedback", REPS_ID, "--draft"]);
    assert_ne!(code, 0, "{out}");
    assert!(
        err.contains("the draft is written after the reveal"),
        "{err}"
    );
    assert!(!out.contains(NOTE_MARKER) && !err.contains(NOTE_MARKER));
    let n = work_count(&e);
    let mut grade = vec![
        "grade".to_string(),
        REPS_ID.into(),
        "--verdict".into(),
        "met".into(),
    ];
    for k in 1..=n {
        grade.push("--score".into());
        grade.push(format!("{k}={}", if k == 2 { 5 } else { 4 }));
    }
    let grade: Vec<&str> = grade.iter().map(String::as_str).collect();
    e.ok(&grade);
    // Graded but not revealed: still no draft.
    let (code, _, err) = e.run(&["feedback", REPS_ID, "--draft"]);
    assert_ne!(code, 0);
    assert!(err.contains("after the reveal"), "{err}");
    e.ok(&["notes", REPS_ID]);
    let draft = e.ok(&["feedback", REPS_ID, "--draft"]);
    // The coach's best rep is praised by number; the note gets a reply (the note text
    // itself is not quoted back).
    assert!(draft.contains("Rep 2 was the pick of the set."), "{draft}");
    assert!(!draft.contains(NOTE_MARKER), "{draft}");
    let replies = [
        "Thanks for the note.",
        "Glad",
        "You said",
        "You felt",
        "You mentioned",
    ];
    assert!(replies.iter().any(|r| draft.contains(r)), "{draft}");
}
