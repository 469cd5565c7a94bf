//! The load-spike caution through the real binary on the bundled demo roster: `trends`
//! lists the planted spike day, `analyze` of that day's file carries the caution in its
//! findings, and the feedback draft does not repeat it. Skipped (with a message) when the
//! roster is not in the tree.

use std::path::PathBuf;

use assert_cmd::Command;

fn demo_roster() -> Option<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    dir.join("roster.toml").exists().then_some(dir)
}

fn run(
    roster: &std::path::Path,
    journal: &std::path::Path,
    args: &[&str],
) -> (i32, String, String) {
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .arg("--roster")
        .arg(roster)
        .arg("--journal")
        .arg(journal)
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn the_planted_spike_shows_in_trends_and_analyze_but_not_in_the_draft() {
    let Some(roster) = demo_roster() else {
        eprintln!("skipped: no demo-athletes/ roster in the tree");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let journal = dir.path().join("journal.sqlite");
    // Planted: oren-falkner's load jumps in week 5; 2026-11-19 took the ratio to about 1.59.
    // `--weeks 520` keeps the scenario in the window whatever today's date.
    let (code, out, err) = run(
        &roster,
        &journal,
        &["trends", "oren-falkner", "--weeks", "520"],
    );
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("CAUTION 2026-11-19 ratio 1.59")
            && out.contains("oren-falkner/2026-11-19-tempo"),
        "{out}"
    );
    assert!(out.contains("not medical advice"), "{out}");
    let (code, out, err) = run(
        &roster,
        &journal,
        &["trends", "oren-falkner", "--weeks", "520", "--json"],
    );
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let spikes = v["load_spikes"].as_array().unwrap();
    assert!(
        spikes
            .iter()
            .any(|d| d["date"] == "2026-11-19"
                && d["sessions"][0] == "oren-falkner/2026-11-19-tempo"),
        "{spikes:?}"
    );

    let file = roster.join("oren-falkner/activities/2026-11-19-tempo.fit");
    let file = file.to_str().unwrap();
    let (code, out, err) = run(&roster, &journal, &["analyze", file, "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let f = v["findings"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["code"] == "load_spike")
        .unwrap_or_else(|| panic!("{}", v["findings"]));
    assert_eq!(f["severity"], "caution");
    let text = f["text"].as_str().unwrap();
    assert!(
        text.contains("1.59") && text.contains("Impellizzeri"),
        "{text}"
    );
    assert!(text.contains("not medical advice"), "{text}");
    // A file of an ordinary day carries none.
    let calm = roster.join("oren-falkner/activities/2026-10-26-easy-run.fit");
    let (code, out, err) = run(
        &roster,
        &journal,
        &["analyze", calm.to_str().unwrap(), "--json"],
    );
    assert_eq!(code, 0, "{err}");
    assert!(!out.contains("load_spike"), "{out}");

    // The draft is in the coach's words: the caution is not repeated verbatim. Drafts are
    // written after the blind grading and the reveal.
    let id = "oren-falkner/2026-11-19-tempo";
    let (code, out, err) = run(&roster, &journal, &["queue", "--json"]);
    assert_eq!(code, 0, "{err}");
    let q: serde_json::Value = serde_json::from_str(&out).unwrap();
    let n = q
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["session"] == id)
        .and_then(|e| e["work_intervals"].as_u64())
        .unwrap_or_else(|| panic!("{out}"));
    let mut grade = vec![
        "grade".to_string(),
        id.to_string(),
        "--verdict".into(),
        "met".into(),
    ];
    for k in 1..=n {
        grade.push("--score".into());
        grade.push(format!("{k}=4"));
    }
    let grade: Vec<&str> = grade.iter().map(String::as_str).collect();
    let (code, _, err) = run(&roster, &journal, &grade);
    assert_eq!(code, 0, "{err}");
    let (code, _, err) = run(&roster, &journal, &["notes", id]);
    assert_eq!(code, 0, "{err}");
    let (code, out, err) = run(
        &roster,
        &journal,
        &["feedback", "oren-falkner/2026-11-19-tempo", "--draft"],
    );
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("Hi Oren"), "{out}");
    assert!(
        !out.contains("acute/chronic") && !out.contains("Training load rose"),
        "{out}"
    );
}
