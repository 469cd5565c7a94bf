//! The day's messages through the real binary: `export feedback --date D` gives one message
//! per athlete with the day's sessions in start order, one greeting and one sign-off in the
//! coach's voice from `config.toml`, saved (edited) feedback used as typed, and the day's
//! unreviewed sessions named on stderr. A mistake in `[feedback]` is one warning line.
//!
//! The roster is a copy of two athletes of the bundled demo roster (`demo-athletes/`), with
//! Mira's long run of 2026-11-29 moved to 2026-11-28 so that her day holds two sessions.

mod cli_support;

use cli_support::copy_dir;

use std::path::PathBuf;

const DAY: &str = "2026-11-28";
const TT: &str = "mira-castellan/2026-11-28-time-trial";
const LONG: &str = "mira-castellan/2026-11-28-long-run";
const DAGNY_TT: &str = "dagny-holloway/2026-11-28-time-trial";
const EDITED: &str =
    "Long run done and dusted: lovely patience in the first half (edited by hand).";

struct Env {
    _dir: tempfile::TempDir,
    roster: PathBuf,
    journal: PathBuf,
    config: PathBuf,
}

/// Two demo athletes; `config` is the text of config.toml.
fn env(config: &str) -> Option<Env> {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    if !demo.join("roster.toml").exists() {
        eprintln!("skipped: no demo-athletes/ roster in the tree");
        return None;
    }
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    std::fs::create_dir_all(&roster).unwrap();
    std::fs::copy(demo.join("roster.toml"), roster.join("roster.toml")).unwrap();
    for a in ["mira-castellan", "dagny-holloway"] {
        copy_dir(&demo.join(a), &roster.join(a));
    }
    // Mira's long run moves to the evening before (its UTC start is within a day of the
    // name's date, so the session counts for 2026-11-28), with its plan and note.
    let m = roster.join("mira-castellan");
    std::fs::rename(
        m.join("activities/2026-11-29-long-run.fit"),
        m.join("activities/2026-11-28-long-run.fit"),
    )
    .unwrap();
    let plan = std::fs::read_to_string(m.join("plans/2026-11-29-long-run.toml")).unwrap();
    assert!(plan.contains("date = 2026-11-29"), "{plan}");
    std::fs::write(
        m.join("plans/2026-11-28-long-run.toml"),
        plan.replace("date = 2026-11-29", "date = 2026-11-28"),
    )
    .unwrap();
    std::fs::remove_file(m.join("plans/2026-11-29-long-run.toml")).unwrap();
    std::fs::rename(
        m.join("notes/2026-11-29-long-run.txt"),
        m.join("notes/2026-11-28-long-run.txt"),
    )
    .unwrap();
    let config_path = dir.path().join("config.toml");
    std::fs::write(&config_path, config).unwrap();
    let journal = dir.path().join("coach/journal.sqlite");
    Some(Env {
        _dir: dir,
        roster,
        journal,
        config: config_path,
    })
}

impl Env {
    fn run(&self, args: &[&str]) -> (i32, String, String) {
        cli_support::run_with_config(&self.roster, &self.journal, &self.config, args)
    }

    fn ok(&self, args: &[&str]) -> (String, String) {
        let (code, out, err) = self.run(args);
        assert_eq!(code, 0, "{args:?}: {err}");
        (out, err)
    }

    /// Grade every work interval 4 and the verdict `met`, then read the notes (the reveal).
    fn review(&self, id: &str, work_intervals: usize) {
        let scores: Vec<String> = (1..=work_intervals).map(|n| format!("{n}=4")).collect();
        let mut args = vec!["grade", id, "--verdict", "met"];
        for s in &scores {
            args.push("--score");
            args.push(s);
        }
        self.ok(&args);
        self.ok(&["notes", id]);
    }

    fn feedback_events(&self) -> u64 {
        let (out, _) = self.ok(&["journal", "check", "--json"]);
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["feedback_events"].as_u64().unwrap()
    }
}

/// Work intervals to score per session, from `queue --json`.
fn work_intervals(e: &Env) -> std::collections::BTreeMap<String, usize> {
    let (out, _) = e.ok(&["queue", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    v.as_array()
        .unwrap()
        .iter()
        .map(|r| {
            (
                r["session"].as_str().unwrap().to_string(),
                r["work_intervals"].as_u64().unwrap() as usize,
            )
        })
        .collect()
}

fn warnings(err: &str) -> Vec<&str> {
    err.lines().filter(|l| l.starts_with("warning:")).collect()
}

const CONFIG: &str = r#"[feedback]
coach = "Sam Ostrander"
greeting = "Morning {name}!"
colour = "blue"
"#;

#[test]
fn a_day_with_two_sessions_is_one_message_with_one_greeting_and_one_sign_off() {
    let Some(e) = env(CONFIG) else { return };
    let n = work_intervals(&e);
    for id in [TT, LONG, DAGNY_TT] {
        assert!(n.contains_key(id), "{id} not in the queue: {n:?}");
    }
    // The bad key is one warning line on stderr; the rest of the table is used.
    let (_, err) = e.ok(&["queue"]);
    assert_eq!(
        warnings(&err),
        vec![
            "warning: config.toml [feedback] colour: unknown key (known: coach, greeting, \
             sign_off, length, format, phrases); ignored"
        ],
        "{err}"
    );

    e.review(TT, n[TT]);
    e.review(LONG, n[LONG]);
    // The coach's edited text for the long run is used as typed, never redrafted.
    let edited = e._dir.path().join("long.txt");
    std::fs::write(&edited, format!("{EDITED}\n")).unwrap();
    e.ok(&["feedback", LONG, "--set", edited.to_str().unwrap()]);
    let before = e.feedback_events();

    let (out, err) = e.ok(&["export", "feedback", "--date", DAY]);
    // Dagny's time trial of that day is not reviewed: named on stderr, left out.
    assert!(
        err.contains(&format!(
            "not reviewed yet, left out: {DAGNY_TT} (5km time trial; new)"
        )),
        "{err}"
    );
    assert!(
        err.contains(&format!(
            "{DAY}: 1 message for 2 reviewed sessions; 1 session of that day not reviewed yet"
        )),
        "{err}"
    );
    assert_eq!(warnings(&err).len(), 1, "{err}");
    assert!(!out.contains("Dagny"), "{out}");

    // One block: the header names both sessions in start order.
    let blocks: Vec<&str> = out
        .split("\n----------------------------------------\n")
        .collect();
    assert_eq!(blocks.len(), 1, "{out}");
    let mut lines = out.lines();
    assert_eq!(
        lines.next(),
        Some("To Mira Castellan | 2026-11-28 | 5km time trial, Long run"),
        "{out}"
    );
    assert_eq!(lines.next(), Some(""), "{out}");
    let message: Vec<&str> = lines.collect();
    let message_text = message.join("\n");
    // The edited feedback is in the message verbatim.
    assert!(
        message.contains(&EDITED),
        "the saved text is not used as typed:\n{message_text}"
    );
    // The time trial's draft is there too (it names its session).
    assert!(message_text.contains("5km time trial"), "{message_text}");
    // Both sessions were recorded as exported.
    assert_eq!(e.feedback_events(), before + 2);

    // JSON: one object per athlete, the sessions in start order, the same message.
    let (json, _) = e.ok(&["export", "feedback", "--date", DAY, "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let arr = v.as_array().unwrap();
    assert_eq!(arr.len(), 1, "{json}");
    assert_eq!(arr[0]["athlete"], "mira-castellan");
    assert_eq!(arr[0]["date"], DAY);
    assert_eq!(arr[0]["sessions"], serde_json::json!([TT, LONG]));
    assert_eq!(
        arr[0]["titles"],
        serde_json::json!(["5km time trial", "Long run"])
    );
    assert_eq!(arr[0]["saved"], serde_json::json!([LONG]));
    assert_eq!(
        arr[0]["message"].as_str().unwrap().trim_end(),
        message_text.trim_end()
    );
    assert_eq!(e.feedback_events(), before + 4);

    // Markdown: a heading per athlete, then the message.
    let (md, _) = e.ok(&["export", "feedback", "--date", DAY, "--format", "md"]);
    assert!(
        md.starts_with("## Mira Castellan — 5km time trial, Long run (2026-11-28)\n\n"),
        "{md}"
    );
    assert!(md.contains(EDITED), "{md}");

    // Without --date: one block per session, as before.
    let (out, _) = e.ok(&["export", "feedback", "--since", DAY]);
    let heads: Vec<&str> = out.lines().filter(|l| l.starts_with("To ")).collect();
    assert_eq!(
        heads,
        vec![
            "To Mira Castellan | 2026-11-28 | 5km time trial",
            "To Mira Castellan | 2026-11-28 | Long run",
        ],
        "{out}"
    );

    // Depends on the lead's `day_message`: one greeting first, the coach's name last.
    assert_eq!(
        message.first().copied(),
        Some("Morning Mira!"),
        "the first line is the greeting from [feedback]:\n{message_text}"
    );
    assert_eq!(
        message_text.matches("Morning Mira!").count(),
        1,
        "{message_text}"
    );
    assert!(!message_text.contains("Hi Mira"), "{message_text}");
    assert_eq!(
        message.iter().rev().find(|l| !l.trim().is_empty()).copied(),
        Some("Sam Ostrander"),
        "the coach's name signs off last:\n{message_text}"
    );
    assert_eq!(
        message_text.matches("Sam Ostrander").count(),
        1,
        "{message_text}"
    );
}

#[test]
fn a_day_with_nothing_reviewed_says_so() {
    let Some(e) = env("") else { return };
    let (out, err) = e.ok(&["export", "feedback", "--date", DAY]);
    assert!(out.is_empty(), "{out}");
    for id in [TT, LONG, DAGNY_TT] {
        assert!(
            err.contains(&format!("not reviewed yet, left out: {id} (")),
            "{err}"
        );
    }
    assert!(
        err.contains(&format!(
            "{DAY}: 0 messages for 0 reviewed sessions; 3 sessions of that day not reviewed yet"
        )),
        "{err}"
    );
    assert!(warnings(&err).is_empty(), "{err}");
}

#[test]
fn a_bad_feedback_value_is_one_warning_and_the_rest_is_used() {
    let config = "[feedback]\ncoach = \"Sam Ostrander\"\nlength = \"short\"\n\
                  [feedback.phrases]\nsign_off = \"See you Tuesday,\"\n";
    let Some(e) = env(config) else { return };
    let n = work_intervals(&e);
    e.review(TT, n[TT]);
    let (out, err) = e.ok(&[
        "export",
        "feedback",
        "--date",
        DAY,
        "--athlete",
        "mira-castellan",
    ]);
    assert_eq!(
        warnings(&err),
        vec![
            "warning: config.toml [feedback] length = \"short\": expected brief or full; \
             using full"
        ],
        "{err}"
    );
    assert!(
        out.starts_with("To Mira Castellan | 2026-11-28 | 5km time trial\n"),
        "{out}"
    );
    // Depends on the lead's draft: the sign-off and the coach's name from the config end it.
    let lines: Vec<&str> = out.lines().filter(|l| !l.trim().is_empty()).collect();
    assert_eq!(
        lines.get(lines.len().saturating_sub(2)..),
        Some(&["See you Tuesday,", "Sam Ostrander"][..]),
        "{out}"
    );
}
