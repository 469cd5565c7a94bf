//! A coaching staff from the shell, end to end through the real binary on a copy of one demo
//! athlete, on a SQLite journal file and on a PostgreSQL database (when a test server is
//! named; see `pg_support`):
//!
//! - blind per coach: coach B sees nothing of coach A's grades, feedback or the athlete's
//!   note from any command before B's own blind grading is complete; then `notes` shows the
//!   note and A's blind grades;
//! - who is acting: no coach on a staff journal, an unknown coach, names with control
//!   characters, the last coach;
//! - `journal copy` SQLite → PostgreSQL → SQLite, verified with one hash on both hops, and
//!   refused into anything that exists;
//! - a password in a `postgres://` address never printed;
//! - the journal and the coach from `$SPLITDESK_JOURNAL`, `$SPLITDESK_COACH` and the config
//!   file, and which wins.
//!
//! Invented data throughout (self-consistency tests): the notes are rewritten to hold marker
//! words, and the scores are chosen to be recognisable.

mod cli_support;
mod engines;

use std::path::{Path, PathBuf};
use std::process::Command;

use cli_support::{binary, copy_dir};
use engines::pg_support;
use serde_json::Value;

const ATHLETE: &str = "ansel-marchetti";
/// The session both coaches grade (3 x 1 mile: three work intervals).
const NOW: &str = "ansel-marchetti/2026-11-12-cruise-miles";
/// An earlier run of the same workout, graded and revealed by coach A only.
const THEN: &str = "ansel-marchetti/2026-10-22-cruise-miles";

/// Words that appear only in the athlete's notes of NOW and THEN.
const NOTE_NOW: &str = "quokkamarmalade";
const NOTE_THEN: &str = "tapirlantern";
/// Coach A's saved feedback of NOW.
const A_FEEDBACK: &str = "UNIQUE-A-FEEDBACK";
/// Coach A's blind grades of NOW and THEN, as `grade` and `notes` print them.
const A_NOW_SCORES: &str = "1=5 2=1 3=5";
const A_THEN_SCORES: &str = "1=4 2=1 3=5";

/// Everything of coach A's (and the athlete's notes) that coach B must not see before
/// grading: none of these strings may appear in any of B's output.
const SECRETS: [&str; 6] = [
    NOTE_NOW,
    NOTE_THEN,
    A_FEEDBACK,
    A_NOW_SCORES,
    A_THEN_SCORES,
    // A's verdict of both sessions (B gives another one).
    "verdict missed",
];

/// A temporary copy of one demo athlete with marker words in two notes, and a journal
/// location (a SQLite file or a PostgreSQL URL).
struct Club {
    dir: tempfile::TempDir,
    roster: PathBuf,
    journal: String,
}

/// The roster: the demo roster file and one athlete, notes of NOW and THEN rewritten.
fn write_roster(root: &Path) {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    std::fs::create_dir_all(root).unwrap();
    std::fs::copy(demo.join("roster.toml"), root.join("roster.toml")).unwrap();
    copy_dir(&demo.join(ATHLETE), &root.join(ATHLETE));
    let notes = root.join(ATHLETE).join("notes");
    std::fs::write(
        notes.join("2026-11-12-cruise-miles.txt"),
        format!("Cruise miles. Second one quick, {NOTE_NOW} after.\n"),
    )
    .unwrap();
    std::fs::write(
        notes.join("2026-10-22-cruise-miles.txt"),
        format!("Cruise miles, even. {NOTE_THEN}.\n"),
    )
    .unwrap();
}

impl Club {
    /// A roster copy and the journal location of the current engine (see `engines`).
    fn new(place: &engines::Place) -> Club {
        let dir = tempfile::tempdir().unwrap();
        let roster = dir.path().join("roster");
        write_roster(&roster);
        let journal = match (place.file(), place.url()) {
            (Some(f), _) => f.display().to_string(),
            (None, Some(u)) => u.to_string(),
            (None, None) => unreachable!("a place is a file or a server"),
        };
        Club {
            dir,
            roster,
            journal,
        }
    }

    /// Run `splitdesk --roster R --journal J [--as COACH] ARGS` with no config file.
    fn run(&self, coach: Option<&str>, args: &[&str]) -> (i32, String, String) {
        let mut full: Vec<&str> = vec!["--journal", &self.journal];
        if let Some(c) = coach {
            full.extend(["--as", c]);
        }
        full.extend(args);
        sd(&self.roster, &[], &full)
    }

    /// [`Club::run`] requiring exit code 0; returns stdout.
    fn ok(&self, coach: Option<&str>, args: &[&str]) -> String {
        let (code, out, err) = self.run(coach, args);
        assert_eq!(code, 0, "{coach:?} {args:?}: {err}");
        out
    }

    fn json(&self, coach: Option<&str>, args: &[&str]) -> Value {
        let out = self.ok(coach, args);
        serde_json::from_str(&out).unwrap_or_else(|e| panic!("{args:?}: {e}: {out}"))
    }

    /// The journal's counts (`journal check --json`), to see that nothing was written.
    fn counts(&self) -> Value {
        let mut v = self.json(None, &["journal", "check", "--json"]);
        v.as_object_mut().unwrap().remove("journal");
        v
    }
}

/// Run the binary on `roster` with `env` (`SPLITDESK_CONFIG` defaults to no config file;
/// `SPLITDESK_JOURNAL` and `SPLITDESK_COACH` are unset unless given) and `args`: exit code
/// (-1 when ended by a signal), stdout, stderr.
fn sd(roster: &Path, env: &[(&str, &str)], args: &[&str]) -> (i32, String, String) {
    let mut c = Command::new(binary());
    c.env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .env("EDITOR", "true")
        .env_remove("SPLITDESK_JOURNAL")
        .env_remove("SPLITDESK_COACH")
        .env_remove("VISUAL");
    for (k, v) in env {
        c.env(k, v);
    }
    let out = c.arg("--roster").arg(roster).args(args).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn grade_args<'a>(
    session: &'a str,
    scores: &'a [&'a str],
    verdict: Option<&'a str>,
) -> Vec<&'a str> {
    let mut a = vec!["grade", session];
    for s in scores {
        a.extend(["--score", s]);
    }
    if let Some(v) = verdict {
        a.extend(["--verdict", v]);
    }
    a
}

/// A staff of A and B; A grades NOW and THEN blind, reveals both, saves and exports
/// feedback of NOW. Checks on the way that A's own output does hold the secrets (so their
/// absence from B's output means something).
fn a_reviews(club: &Club) {
    club.ok(None, &["staff", "add", "A"]);
    club.ok(None, &["staff", "add", "B"]);
    let out = club.ok(
        Some("A"),
        &grade_args(NOW, &["1=5", "2=1", "3=5"], Some("missed")),
    );
    assert!(
        out.contains(&format!(
            "{NOW}: graded; scores {A_NOW_SCORES}; verdict missed"
        )),
        "{out}"
    );
    let out = club.ok(Some("A"), &["notes", NOW]);
    assert!(out.contains(NOTE_NOW), "{out}");
    // A revises one score after reading the note: kept beside the blind grade.
    let out = club.ok(Some("A"), &["grade", NOW, "--score", "2=2"]);
    assert!(
        out.contains(&format!(
            "{NOW}: revealed; scores 1=5 2=1→2 3=5; verdict missed"
        )),
        "{out}"
    );
    club.ok(
        Some("A"),
        &grade_args(THEN, &["1=4", "2=1", "3=5"], Some("missed")),
    );
    assert!(club.ok(Some("A"), &["notes", THEN]).contains(NOTE_THEN));
    let fb = club.dir.path().join("a-feedback.txt");
    std::fs::write(
        &fb,
        format!("{A_FEEDBACK}: hold back on the second mile.\n"),
    )
    .unwrap();
    club.ok(Some("A"), &["feedback", NOW, "--set", fb.to_str().unwrap()]);
    assert!(club.ok(Some("A"), &["feedback", NOW]).contains(A_FEEDBACK));
    let out = club.ok(Some("A"), &["export", "feedback", "--athlete", ATHLETE]);
    assert!(out.contains(A_FEEDBACK), "{out}");
    // A's earlier run's note shows in A's comparison.
    assert!(club.ok(Some("A"), &["compare", NOW]).contains(NOTE_THEN));
    let v = club.json(Some("A"), &["bias-check", "--json"]);
    assert_eq!(v["overall"]["reviews"], 2, "{v}");
}

/// `what` printed none of the secrets, on stdout or stderr.
fn assert_no_secret(what: &str, out: &str, err: &str) {
    for s in SECRETS {
        assert!(
            !out.contains(s) && !err.contains(s),
            "{what} shows {s:?}:\n--- stdout\n{out}\n--- stderr\n{err}"
        );
    }
}

/// Every command that could show grades, verdicts, notes or feedback of NOW or THEN, run as
/// coach B before B graded either.
fn b_sees_nothing(club: &Club) {
    let b = Some("B");
    let backup = club.dir.path().join("backup-by-b.sqlite");
    let chart = club.dir.path().join("chart-by-b.svg");
    let commands: Vec<(Vec<&str>, Option<i32>)> = vec![
        (vec!["queue"], Some(0)),
        (vec!["queue", "--json"], Some(0)),
        (vec!["queue", "--athlete", ATHLETE], Some(0)),
        (vec!["grade", NOW], Some(0)),
        (vec!["grade", NOW, "--json"], Some(0)),
        (vec!["grade", THEN], Some(0)),
        (vec!["notes", NOW], Some(3)),
        (vec!["notes", NOW, "--json"], Some(3)),
        (vec!["notes", THEN], Some(3)),
        (vec!["feedback", NOW], Some(2)),
        (vec!["feedback", NOW, "--json"], Some(2)),
        (vec!["feedback", NOW, "--draft"], Some(2)),
        (vec!["feedback", THEN], Some(2)),
        (vec!["export", "feedback"], Some(0)),
        (vec!["export", "feedback", "--format", "json"], Some(0)),
        (vec!["export", "feedback", "--format", "md"], Some(0)),
        (vec!["export", "feedback", "--date", "2026-11-12"], Some(0)),
        (
            vec![
                "export",
                "feedback",
                "--date",
                "2026-10-22",
                "--format",
                "json",
            ],
            Some(0),
        ),
        (vec!["export", "intervals", "--csv"], Some(0)),
        (vec!["week", NOW], Some(0)),
        (vec!["week", NOW, "--json"], Some(0)),
        (vec!["week", ATHLETE, "--date", "2026-10-22"], Some(0)),
        (vec!["compare", NOW], Some(0)),
        (vec!["compare", NOW, "--json"], Some(0)),
        (vec!["compare", THEN, "--json"], Some(0)),
        (vec!["trends", ATHLETE], Some(0)),
        (vec!["trends", ATHLETE, "--json"], Some(0)),
        (vec!["bias-check"], Some(0)),
        (vec!["bias-check", "--json"], Some(0)),
        (vec!["agreement"], Some(0)),
        (vec!["agreement", "--json"], Some(0)),
        (vec!["journal", "check"], Some(0)),
        (vec!["journal", "check", "--json"], Some(0)),
        (vec!["staff", "list"], Some(0)),
        (vec!["staff", "list", "--json"], Some(0)),
        (vec!["seen", NOW], Some(0)),
        (vec!["seen", NOW, "--undo", "--json"], Some(0)),
        (vec!["journal", "backup", backup.to_str().unwrap()], Some(0)),
        (
            vec!["export", "chart", NOW, "--out", chart.to_str().unwrap()],
            Some(0),
        ),
    ];
    for (args, code) in &commands {
        let (got, out, err) = club.run(b, args);
        assert_no_secret(&format!("B: {args:?}"), &out, &err);
        if let Some(code) = code {
            assert_eq!(got, *code, "B: {args:?}\n{out}\n{err}");
        }
    }

    let svg = std::fs::read_to_string(&chart).unwrap();
    assert_no_secret("B: the chart's SVG", &svg, "");

    // What those commands say, looked at closely.
    let q = club.json(b, &["queue", "--json"]);
    for id in [NOW, THEN] {
        let row = q
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["session"] == id)
            .unwrap_or_else(|| panic!("{id} is in B's queue: {q}"));
        assert_eq!(row["stage"], "new", "{row}");
    }
    let g = club.json(b, &["grade", NOW, "--json"]);
    assert_eq!(g["stage"], "new");
    assert_eq!(g["scores"], serde_json::json!({}));
    assert_eq!(g["blind_scores"], serde_json::json!({}));
    assert_eq!(g["verdict"], Value::Null);
    assert_eq!(g["revisions"], 0);
    assert_eq!(
        g["missing"],
        "scores missing for work intervals 1, 2, 3; purpose verdict not set"
    );
    let (_, out, err) = club.run(b, &["notes", NOW, "--json"]);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains("notes stay hidden until grading is complete"),
        "{err}"
    );
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["exit_code"], 3, "{v}");
    let (_, _, err) = club.run(b, &["feedback", NOW]);
    assert!(
        err.contains("the draft is written after the reveal"),
        "{err}"
    );
    assert_eq!(
        club.json(b, &["export", "feedback", "--format", "json"]),
        serde_json::json!([])
    );
    // The interval CSV: B's score columns are empty on every row of every session.
    let (_, csv_text, _) = club.run(b, &["export", "intervals", "--csv"]);
    let mut rdr = csv::Reader::from_reader(csv_text.as_bytes());
    let headers = rdr.headers().unwrap().clone();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let (blind, score, session) = (col("blind_score"), col("score"), col("session"));
    let mut now_rows = 0;
    for r in rdr.records() {
        let r = r.unwrap();
        assert_eq!((&r[blind], &r[score]), ("", ""), "{r:?}");
        now_rows += usize::from(&r[session] == NOW);
    }
    assert!(now_rows >= 3, "NOW's intervals are in the CSV: {csv_text}");
    let c = club.json(b, &["compare", NOW, "--json"]);
    assert_eq!(c["earlier_notes"], serde_json::json!([]), "{c}");
    let v = club.json(b, &["bias-check", "--json"]);
    assert_eq!(v["overall"]["reviews"], 0, "{v}");
    // The agreement as B, who has graded neither of A's sessions: both are left out, no
    // score of A's shown, and B is told why.
    let v = club.json(b, &["agreement", "--json"]);
    assert_eq!(v["pairs"], serde_json::json!([]), "{v}");
    assert_eq!(v["coaches"], serde_json::json!([]), "{v}");
    assert_eq!(v["held_back_sessions"], 2, "{v}");
    let text = club.ok(b, &["agreement"]);
    assert!(
        text.contains(
            "Left out: 2 sessions graded by other coaches that you have not finished grading \
             blind yourself"
        ),
        "{text}"
    );
    // A's reveal did not reveal for B: marking seen is B's own, and undone.
    let out = club.ok(b, &["seen", NOW]);
    assert!(out.contains("marked seen without a grade"), "{out}");
    let v = club.json(b, &["seen", NOW, "--undo", "--json"]);
    assert_eq!(
        (v["seen"].clone(), v["stage"].clone()),
        (false.into(), "new".into())
    );
}

#[test]
fn coach_b_sees_nothing_of_coach_a_before_grading_and_then_the_note_and_a_s_grades() {
    engines::both("cli_blind_per_coach", || {
        let place = engines::place();
        let club = Club::new(&place);
        a_reviews(&club);
        b_sees_nothing(&club);
        let b = Some("B");

        // Part of B's grading: still hidden, from notes as from the rest.
        let out = club.ok(b, &["grade", NOW, "--score", "1=2"]);
        assert_no_secret("B: grade NOW 1=2", &out, "");
        assert!(
            out.contains(&format!("{NOW}: grading; scores 1=2; verdict not set")),
            "{out}"
        );
        let (code, out, err) = club.run(b, &["notes", NOW]);
        assert_eq!(code, 3, "{err}");
        assert_no_secret("B: notes NOW (part graded)", &out, &err);
        assert!(
            err.contains("scores missing for work intervals 2, 3; purpose verdict not set"),
            "{err}"
        );
        let out = club.ok(b, &grade_args(NOW, &["2=3", "3=2"], None));
        assert_no_secret("B: grade NOW (scores complete)", &out, "");
        let (code, out, err) = club.run(b, &["notes", NOW]);
        assert_eq!(code, 3, "the verdict is missing still: {err}");
        assert_no_secret("B: notes NOW (no verdict)", &out, &err);
        for args in [
            vec!["queue"],
            vec!["agreement"],
            vec!["export", "intervals", "--csv"],
        ] {
            let (_, out, err) = club.run(b, &args);
            assert_no_secret(&format!("B (part graded): {args:?}"), &out, &err);
        }

        // B's blind grading complete: the note, and A's blind grades beside it.
        let out = club.ok(b, &["grade", NOW, "--verdict", "partly"]);
        assert!(
            out.contains(&format!(
                "{NOW}: graded; scores 1=2 2=3 3=2; verdict partly"
            )),
            "{out}"
        );
        assert_no_secret("B: grade NOW (complete)", &out, "");
        let out = club.ok(b, &["notes", NOW]);
        assert!(out.contains(NOTE_NOW), "{out}");
        assert!(
            out.contains("Colleagues' blind grades (shown now that yours are complete):\n  A: 1=5 2=1 3=5; verdict missed\n"),
            "{out}"
        );
        assert!(
            !out.contains(A_FEEDBACK) && !out.contains(NOTE_THEN),
            "{out}"
        );
        let v = club.json(b, &["notes", NOW, "--json"]);
        assert!(v["note"].as_str().unwrap().contains(NOTE_NOW));
        assert_eq!(
            v["colleagues"],
            serde_json::json!([{
                "coach": "A",
                "scores": [
                    {"interval": 1, "score": 5},
                    {"interval": 2, "score": 1},
                    {"interval": 3, "score": 5}
                ],
                "verdict": "missed",
                "revealed": true
            }])
        );
        // B's bias check counts B's one review, without revisions (A's is A's).
        let v = club.json(b, &["bias-check", "--json"]);
        assert_eq!(
            (
                v["overall"]["reviews"].clone(),
                v["overall"]["changed"].clone()
            ),
            (1.into(), 0.into()),
            "{v}"
        );
        let v = club.json(Some("A"), &["bias-check", "--json"]);
        assert_eq!(
            (
                v["overall"]["reviews"].clone(),
                v["overall"]["changed"].clone()
            ),
            (2.into(), 1.into()),
            "{v}"
        );
        // A sees B's blind grades now (A's own grading was complete long ago).
        let out = club.ok(Some("A"), &["notes", NOW]);
        assert!(out.contains("  B: 1=2 2=3 3=2; verdict partly\n"), "{out}");

        // Still B's own: A's feedback is A's (B's is a draft of B's grades), and THEN stays
        // hidden from B, whose grading of it has not begun.
        let fb = club.ok(b, &["feedback", NOW]);
        assert!(!fb.contains(A_FEEDBACK), "{fb}");
        assert!(!fb.trim().is_empty());
        let out = club.ok(b, &["export", "feedback", "--format", "json"]);
        assert!(!out.contains(A_FEEDBACK) && out.contains(NOW), "{out}");
        for args in [
            vec!["compare", NOW],
            vec!["compare", NOW, "--json"],
            vec!["grade", THEN],
        ] {
            let (_, out, err) = club.run(b, &args);
            assert!(
                !out.contains(NOTE_THEN) && !out.contains(A_THEN_SCORES),
                "B: {args:?} shows THEN: {out}{err}"
            );
        }
        let (code, _, err) = club.run(b, &["notes", THEN]);
        assert_eq!(code, 3, "{err}");
        // The agreement: the pair on NOW's three intervals, each scored 2+ apart.
        let v = club.json(b, &["agreement", "--json"]);
        let pair = &v["pairs"][0];
        assert_eq!(
            (pair["coach_a"].clone(), pair["coach_b"].clone()),
            ("A".into(), "B".into())
        );
        assert_eq!(pair["items"], 3, "{v}");
        let wide = pair["wide_disagreements"].as_array().unwrap();
        let got: Vec<(u64, u64, u64)> = wide
            .iter()
            .map(|w| {
                assert_eq!(w["session_id"], NOW);
                (
                    w["interval_no"].as_u64().unwrap(),
                    w["score_a"].as_u64().unwrap(),
                    w["score_b"].as_u64().unwrap(),
                )
            })
            .collect();
        assert_eq!(got, [(1, 5, 2), (2, 1, 3), (3, 5, 2)]);
        // The staff report never shows an athlete's note or a coach's feedback.
        for args in [vec!["agreement"], vec!["agreement", "--json"]] {
            let (_, out, err) = club.run(b, &args);
            for s in [NOTE_NOW, NOTE_THEN, A_FEEDBACK] {
                assert!(!out.contains(s) && !err.contains(s), "{args:?}: {out}");
            }
        }
    });
}

/// A coach who has not finished grading a session (or not begun) must not see a colleague's
/// blind scores of it from `agreement` either: the wide-disagreement list names scores.
#[test]
fn agreement_hides_colleague_scores_of_a_session_the_coach_has_not_finished() {
    engines::both("cli_agreement_blind", || {
        let place = engines::place();
        let club = Club::new(&place);
        a_reviews(&club);
        club.ok(None, &["staff", "add", "C"]);
        // C scores THEN far from A, not yet complete (no verdict).
        club.ok(Some("C"), &grade_args(THEN, &["1=1", "2=4", "3=2"], None));
        for coach in ["B", "C"] {
            for args in [vec!["agreement"], vec!["agreement", "--json"]] {
                let (_, out, err) = club.run(Some(coach), &args);
                assert!(
                    !out.contains(THEN) && !out.contains("A 4,"),
                    "{coach}: {args:?} shows A's blind scores of THEN:\n{out}{err}"
                );
            }
        }
    });
}

#[test]
fn review_commands_on_a_staff_journal_need_a_known_coach() {
    engines::both("cli_staff_needs_coach", || {
        let place = engines::place();
        let club = Club::new(&place);
        club.ok(None, &["queue"]);
        club.ok(None, &["staff", "add", "A"]);
        club.ok(None, &["staff", "add", "B"]);
        let before = club.counts();
        let fb = club.dir.path().join("fb.txt");
        std::fs::write(&fb, "x\n").unwrap();
        let fb = fb.to_str().unwrap();
        let commands: Vec<Vec<&str>> = vec![
            vec!["queue"],
            vec!["queue", "--json"],
            vec!["grade", NOW, "--score", "1=3"],
            vec!["notes", NOW],
            vec!["seen", NOW],
            vec!["feedback", NOW],
            vec!["feedback", NOW, "--set", fb],
            vec!["export", "feedback"],
            vec!["export", "intervals", "--csv"],
            vec!["bias-check"],
            vec!["compare", NOW],
            vec!["trends", ATHLETE],
            vec!["week", NOW],
            vec!["agreement"],
        ];
        for args in &commands {
            let (code, out, err) = club.run(None, args);
            assert_eq!(code, 2, "{args:?}: {out}{err}");
            assert!(
                err.contains(
                    "this journal is shared by a staff of 2 coaches; say which one you are \
                     with `name` under [coach] in the config file, $SPLITDESK_COACH, or --as NAME"
                ),
                "{args:?}: {err}"
            );
            // An unknown coach, by flag or by variable.
            let (code, out, err) = club.run(Some("Zed"), args);
            assert_eq!(code, 2, "{args:?}: {out}{err}");
            assert!(
                err.contains("coach \"Zed\" is not on this journal's staff (2 coaches)"),
                "{args:?}: {err}"
            );
        }
        let (code, _, err) = sd(
            &club.roster,
            &[("SPLITDESK_COACH", "Zed")],
            &["--journal", &club.journal, "queue"],
        );
        assert_eq!(code, 2);
        assert!(err.contains("coach \"Zed\" is not on"), "{err}");
        assert_eq!(club.counts(), before, "a refused command wrote nothing");
        // The staff's own commands and the journal's upkeep need no coach.
        for args in [vec!["staff", "list"], vec!["journal", "check"]] {
            club.ok(None, &args);
        }
        // A coach who left can act no more.
        club.ok(None, &["staff", "remove", "B"]);
        let (code, _, err) = club.run(Some("B"), &["queue"]);
        assert_eq!(code, 2);
        assert!(
            err.contains("coach \"B\" is not on this journal's staff"),
            "{err}"
        );
        club.ok(Some("A"), &["queue"]);
    });
}

/// A character that must never reach the terminal raw.
fn is_raw_control(c: char) -> bool {
    (c.is_control() && c != '\n') || ('\u{202a}'..='\u{202e}').contains(&c)
}

#[test]
fn coach_names_with_control_characters_are_refused() {
    engines::both("cli_staff_bad_names", || {
        let place = engines::place();
        let club = Club::new(&place);
        for name in [
            "Ann\u{1b}[31m",
            "Bo\nb",
            "Cy\u{7}",
            "\u{202e}Dee",
            "Eve\u{9b}",
        ] {
            let (code, out, err) = club.run(None, &["staff", "add", name]);
            assert_eq!(code, 2, "{name:?}: {out}{err}");
            assert!(
                err.contains("cannot be a coach name: a coach name cannot hold control characters"),
                "{name:?}: {err}"
            );
            assert!(!err.chars().any(is_raw_control), "{name:?}: {err:?}");
            assert!(!out.chars().any(is_raw_control), "{name:?}: {out:?}");
        }
        // Nothing was added: still a single coach's journal.
        let v = club.json(None, &["staff", "list", "--json"]);
        assert_eq!(v["coaches"], serde_json::json!([]), "{v}");
        // Acting as such a name on a staff journal is an unknown coach, said safely.
        club.ok(None, &["staff", "add", "A"]);
        let (code, _, err) = club.run(Some("Ann\u{1b}[31m"), &["queue"]);
        assert_eq!(code, 2);
        assert!(err.contains("is not on this journal's staff"), "{err}");
        assert!(!err.chars().any(is_raw_control), "{err:?}");
    });
}

#[test]
fn the_last_coach_cannot_be_removed() {
    engines::both("cli_staff_last_coach", || {
        let place = engines::place();
        let club = Club::new(&place);
        club.ok(None, &["staff", "add", "A"]);
        let (code, _, err) = club.run(None, &["staff", "remove", "A"]);
        assert_eq!(code, 2);
        assert!(
            err.contains("coach \"A\" is the last coach of the staff and cannot be removed; add another coach first"),
            "{err}"
        );
        club.ok(None, &["staff", "add", "B"]);
        let out = club.ok(None, &["staff", "remove", "A"]);
        assert!(out.contains("A left the staff"), "{out}");
        let (code, _, err) = club.run(None, &["staff", "remove", "B"]);
        assert_eq!(code, 2, "{err}");
        let v = club.json(None, &["staff", "list", "--json"]);
        let active: Vec<&str> = v["coaches"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|c| c["removed_at"].is_null())
            .map(|c| c["name"].as_str().unwrap())
            .collect();
        assert_eq!(active, ["B"]);
    });
}

/// The SHA-256 in `journal copy`'s text, checking the lines around it.
fn copied_hash(out: &str, from: &str, to: &str) -> String {
    let first = out.lines().next().unwrap_or("");
    assert_eq!(
        first,
        format!("{from} -> {to}: copied and verified"),
        "{out}"
    );
    let line = out
        .lines()
        .find(|l| l.starts_with("  grades, revisions and feedback: SHA-256 "))
        .unwrap_or_else(|| panic!("no hash line: {out}"));
    let hash = line
        .trim_start_matches("  grades, revisions and feedback: SHA-256 ")
        .trim_end_matches(" on both sides");
    assert_eq!(hash.len(), 64, "{line}");
    assert!(hash.chars().all(|c| c.is_ascii_hexdigit()), "{line}");
    hash.to_string()
}

fn file_bytes(p: &Path) -> Vec<u8> {
    std::fs::read(p).unwrap()
}

#[test]
fn journal_copy_to_the_server_and_back_is_verified_with_one_hash() {
    // SQLite file → PostgreSQL → SQLite file: a server is needed for the middle hop.
    let Some(url) = pg_support::fresh_database("cli_copy_hops") else {
        return;
    };
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let club = {
            let d = tempfile::tempdir().unwrap();
            let roster = d.path().join("roster");
            write_roster(&roster);
            let journal = d.path().join("club.sqlite").display().to_string();
            Club {
                dir: d,
                roster,
                journal,
            }
        };
        a_reviews(&club);
        club.ok(
            Some("B"),
            &grade_args(NOW, &["1=2", "2=3", "3=2"], Some("partly")),
        );
        let sqlite = club.journal.clone();
        let back = club.dir.path().join("back.sqlite").display().to_string();
        let back_json = club.dir.path().join("back2.sqlite").display().to_string();

        let out = club.ok(None, &["journal", "copy", &sqlite, &url]);
        let there = copied_hash(&out, &sqlite, &url);
        assert!(out.contains(" rows, the same on both sides"), "{out}");
        let out = club.ok(None, &["journal", "copy", &url, &back]);
        let again = copied_hash(&out, &url, &back);
        assert_eq!(there, again, "the same SHA-256 on both hops");
        let v = club.json(None, &["journal", "copy", &url, &back_json, "--json"]);
        assert_eq!(v["verified"], true);
        assert_eq!(v["records_sha256"], there.as_str());
        assert_eq!(v["rows"]["coach"], 2, "{v}");

        // Each copy answers as the original: B's notes with A's blind grades, A's feedback.
        for journal in [&url, &back] {
            let (code, out, err) = sd(
                &club.roster,
                &[],
                &["--journal", journal, "--as", "B", "notes", NOW],
            );
            assert_eq!(code, 0, "{journal}: {err}");
            assert!(
                out.contains("  A: 1=5 2=1 3=5; verdict missed\n"),
                "{journal}: {out}"
            );
            let (code, out, err) = sd(
                &club.roster,
                &[],
                &["--journal", journal, "--as", "A", "feedback", NOW],
            );
            assert_eq!(code, 0, "{journal}: {err}");
            assert!(out.contains(A_FEEDBACK), "{journal}: {out}");
        }

        // Into something that exists: refused, nothing written.
        let before = file_bytes(Path::new(&back));
        let (code, out, err) = club.run(None, &["journal", "copy", &sqlite, &back]);
        assert_eq!(code, 2, "{out}{err}");
        assert!(
            err.contains(&format!(
                "{back}: the destination exists; copy into a new file (nothing was written)"
            )),
            "{err}"
        );
        assert_eq!(file_bytes(Path::new(&back)), before);
        let counts = |j: &str| {
            let (code, out, err) = sd(
                &club.roster,
                &[],
                &["--journal", j, "journal", "check", "--json"],
            );
            assert_eq!(code, 0, "{err}");
            let mut v: Value = serde_json::from_str(&out).unwrap();
            v.as_object_mut().unwrap().remove("journal");
            v
        };
        let server_before = counts(&url);
        let (code, out, err) = club.run(None, &["journal", "copy", &back, &url]);
        assert_eq!(code, 2, "{out}{err}");
        assert!(err.starts_with(&format!("error: {url}: ")), "{err}");
        // (What it says is checked in
        // `a_copy_into_a_server_journal_with_a_staff_says_it_is_not_empty`.)
        assert_eq!(counts(&url), server_before);
        // A server journal copied into the same server database: refused too.
        let (code, _, err) = club.run(None, &["journal", "copy", &url, &url]);
        assert_eq!(code, 2, "{err}");
        assert_eq!(counts(&url), server_before);
    }));
    pg_support::drop_database(&url);
    if let Err(p) = result {
        std::panic::resume_unwind(p);
    }
}

/// Copy a journal made by `make` (on a roster copy) into a fresh server database, then copy
/// it there again: the second copy is refused with the emptiness message, nothing written.
fn copy_twice_into_the_server(tag: &str, make: impl Fn(&Club)) {
    let Some(url) = pg_support::fresh_database(tag) else {
        return;
    };
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let d = tempfile::tempdir().unwrap();
        let roster = d.path().join("roster");
        write_roster(&roster);
        let journal = d.path().join("club.sqlite").display().to_string();
        let club = Club {
            dir: d,
            roster,
            journal,
        };
        make(&club);
        let source = club.journal.clone();
        club.ok(None, &["journal", "copy", &source, &url]);
        let (code, out, err) = club.run(None, &["journal", "copy", &source, &url]);
        assert_eq!(code, 2, "{out}{err}");
        assert!(
            err.contains(&format!("{url}: the destination already holds "))
                && err.contains("copy into a new, empty journal (nothing was written)"),
            "{err}"
        );
    }));
    pg_support::drop_database(&url);
    if let Err(p) = result {
        std::panic::resume_unwind(p);
    }
}

#[test]
fn a_copy_into_a_non_empty_server_journal_says_so() {
    copy_twice_into_the_server("cli_copy_twice_single", |club| {
        club.ok(None, &grade_args(NOW, &["1=3"], None));
    });
}

#[test]
fn a_copy_into_a_server_journal_with_a_staff_says_it_is_not_empty() {
    copy_twice_into_the_server("cli_copy_twice_staff", |club| {
        club.ok(None, &["staff", "add", "A"]);
        club.ok(Some("A"), &grade_args(NOW, &["1=3"], None));
    });
}

#[test]
fn journal_copy_into_an_existing_file_is_refused_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    write_roster(&roster);
    let a = dir.path().join("a.sqlite").display().to_string();
    let b = dir.path().join("b.sqlite").display().to_string();
    for j in [&a, &b] {
        let (code, _, err) = sd(&roster, &[], &["--journal", j, "queue"]);
        assert_eq!(code, 0, "{err}");
    }
    let before = file_bytes(Path::new(&b));
    let (code, out, err) = sd(&roster, &[], &["journal", "copy", &a, &b]);
    assert_eq!(code, 2, "{out}{err}");
    assert!(
        err.contains("the destination exists; copy into a new file (nothing was written)"),
        "{err}"
    );
    assert_eq!(file_bytes(Path::new(&b)), before);
    // A missing source: refused, and no destination file is made.
    let missing = dir.path().join("none.sqlite").display().to_string();
    let new = dir.path().join("new.sqlite");
    let (code, _, err) = sd(
        &roster,
        &[],
        &["journal", "copy", &missing, new.to_str().unwrap()],
    );
    assert_eq!(code, 2);
    assert!(err.contains("no journal there"), "{err}");
    assert!(!new.exists());
}

const PASSWORD: &str = "Wr0ng-pa55word-XYZZY";

/// Every way a `postgres://` address with a password reaches the program, on `host_port`;
/// none may print the password. Returns the stderr texts (for the caller's checks).
fn password_never_printed(host_port: &str) -> Vec<String> {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    write_roster(&roster);
    let url = format!("postgres://splitdesk:{PASSWORD}@{host_port}/sdtest_no_such_db");
    let file = dir.path().join("j.sqlite").display().to_string();
    let (code, _, err) = sd(&roster, &[], &["--journal", &file, "queue"]);
    assert_eq!(code, 0, "{err}");
    let config = dir.path().join("config.toml");
    std::fs::write(
        &config,
        format!("[journal]\nurl = \"{url}\"\n\n[coach]\nname = \"A\"\n"),
    )
    .unwrap();
    let config = config.display().to_string();
    let backup = dir.path().join("backup.sqlite").display().to_string();
    let copy_to = dir.path().join("copy.sqlite").display().to_string();
    let commands: Vec<Vec<&str>> = vec![
        vec!["queue"],
        vec!["queue", "--json"],
        vec!["grade", NOW, "--score", "1=3"],
        vec!["staff", "add", "A"],
        vec!["staff", "list", "--json"],
        vec!["agreement"],
        vec!["journal", "check", "--json"],
        vec!["journal", "backup", &backup],
    ];
    let mut errors = Vec::new();
    let mut check = |what: &str, env: &[(&str, &str)], args: &[&str]| {
        let (code, out, err) = sd(&roster, env, args);
        assert_ne!(code, 0, "{what} {args:?}: {out}");
        assert!(
            !out.contains(PASSWORD) && !err.contains(PASSWORD),
            "{what} {args:?} printed the password:\n{out}\n{err}"
        );
        assert!(
            err.contains("postgres://splitdesk@"),
            "{what} {args:?}: {err}"
        );
        errors.push(err);
    };
    for args in &commands {
        let mut full = vec!["--journal", url.as_str()];
        full.extend(args);
        check("--journal", &[], &full);
        check("$SPLITDESK_JOURNAL", &[("SPLITDESK_JOURNAL", &url)], args);
        check(
            "config [journal] url",
            &[("SPLITDESK_CONFIG", &config)],
            args,
        );
        // A wrong PGPASSWORD is not printed either (the address holds none).
        let bare = format!("postgres://splitdesk@{host_port}/sdtest_no_such_db");
        let mut full = vec!["--journal", bare.as_str()];
        full.extend(args);
        let (code, out, err) = sd(&roster, &[("PGPASSWORD", PASSWORD)], &full);
        assert_ne!(code, 0, "PGPASSWORD {args:?}: {out}");
        assert!(!out.contains(PASSWORD) && !err.contains(PASSWORD), "{err}");
    }
    check("copy from", &[], &["journal", "copy", &url, &copy_to]);
    check("copy to", &[], &["journal", "copy", &file, &url]);
    check(
        "copy to --json",
        &[],
        &["journal", "copy", &file, &url, "--json"],
    );
    assert!(!Path::new(&copy_to).exists());
    errors
}

#[test]
fn a_password_in_the_address_is_never_printed_when_nothing_listens() {
    // Port 1 on the loopback: connection refused at once.
    let errors = password_never_printed("127.0.0.1:1");
    assert!(
        errors
            .iter()
            .all(|e| e.contains("cannot connect to the journal server")),
        "{errors:?}"
    );
}

#[test]
fn a_wrong_password_in_the_address_is_never_printed() {
    let Some(server) = pg_support::server_url() else {
        return;
    };
    let host_port = {
        let after = server.split_once("://").unwrap().1;
        let host = after.split(['/', '?']).next().unwrap();
        host.rsplit_once('@').map_or(host, |(_, h)| h).to_string()
    };
    let errors = password_never_printed(&host_port);
    // An address holding a password is refused before any connection, saying why.
    assert!(
        errors.iter().all(|e| e.contains(
            "the address holds a password; take it out and put it in \
                                 PGPASSWORD or the password file"
        )),
        "{errors:?}"
    );
}

/// The test server's password, as its password file holds it (the line for its host).
fn server_password() -> Option<String> {
    let file = std::env::var("PGPASSFILE").ok()?;
    let text = std::fs::read_to_string(file).ok()?;
    text.lines()
        .map(pg_support::split_fields)
        .find(|f| f.len() >= 5)
        .and_then(|f| f.into_iter().nth(4))
        .filter(|p| p.len() >= 8)
}

#[test]
fn a_right_password_in_the_address_is_refused_and_never_printed() {
    let Some(url) = pg_support::fresh_database("cli_password_ok") else {
        return;
    };
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let Some(password) = server_password() else {
            panic!("the test server's password file (PGPASSFILE) has no password line");
        };
        // The test URL has no password: put it in (postgres://user@host → user:pw@host).
        let with = url.replacen("@", &format!(":{password}@"), 1);
        assert!(with.contains(&password) && with.starts_with("postgres://"));
        let dir = tempfile::tempdir().unwrap();
        let roster = dir.path().join("roster");
        write_roster(&roster);
        let backup = dir.path().join("b.sqlite").display().to_string();
        let copy = dir.path().join("c.sqlite").display().to_string();
        let copy2 = dir.path().join("d.sqlite").display().to_string();
        // No other source of the password: what works, works with the address's.
        let env = [("PGPASSFILE", "/nonexistent"), ("PGPASSWORD", "")];
        let j = with.as_str();
        let runs: Vec<Vec<&str>> = vec![
            vec!["--journal", j, "queue"],
            vec!["--journal", j, "staff", "add", "A"],
            vec!["--journal", j, "staff", "list"],
            vec!["--journal", j, "staff", "list", "--json"],
            vec!["--journal", j, "--as", "A", "grade", NOW, "--score", "1=3"],
            vec!["--journal", j, "--as", "A", "queue", "--json"],
            vec!["--journal", j, "journal", "check"],
            vec!["--journal", j, "journal", "check", "--json"],
            vec!["--journal", j, "journal", "backup", &backup],
            vec!["--journal", j, "agreement"],
            vec!["journal", "copy", j, &copy],
            vec!["journal", "copy", j, &copy2, "--json"],
        ];
        for args in &runs {
            let (code, out, err) = sd(&roster, &env, args);
            // A password in the address is refused (it would show on a command line or in a
            // config file), said with the address without it.
            assert!(
                code != 0
                    && err.contains("postgres://splitdesk@")
                    && err.contains("the address holds a password"),
                "{code}: {}",
                err.replace(&password, "<PASSWORD>")
            );
            assert!(
                !out.contains(&password) && !err.contains(&password),
                "{:?} printed the password",
                args.iter()
                    .map(|a| a.replace(&password, "<PASSWORD>"))
                    .collect::<Vec<_>>()
            );
        }
    }));
    pg_support::drop_database(&url);
    if let Err(p) = result {
        std::panic::resume_unwind(p);
    }
}

/// A libpq key=value connection string (which PostgreSQL's own tools accept) is not a
/// `postgres://` address: it must not become a SQLite file named after it, and its password
/// must not be printed as that file's name.
#[test]
fn a_key_value_connection_string_is_not_taken_for_a_file_name() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    write_roster(&roster);
    let conn = format!("host=127.0.0.1 port=1 user=splitdesk password={PASSWORD} dbname=x");
    let mut c = Command::new(binary());
    let out = c
        .current_dir(dir.path())
        .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .env_remove("SPLITDESK_JOURNAL")
        .arg("--roster")
        .arg(&roster)
        .args(["--journal", &conn, "journal", "check"])
        .output()
        .unwrap();
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(!text.contains(PASSWORD), "{text}");
    let made: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains(PASSWORD))
        .collect();
    assert!(made.is_empty(), "{made:?}");
}

/// The blind scores `grade NOW --json` shows for whoever the program acts as.
fn acting_scores(roster: &Path, env: &[(&str, &str)], args: &[&str]) -> Value {
    let mut full: Vec<&str> = args.to_vec();
    full.extend(["grade", NOW, "--json"]);
    let (code, out, err) = sd(roster, env, &full);
    assert_eq!(code, 0, "{env:?} {args:?}: {err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    v["blind_scores"].clone()
}

#[test]
fn the_journal_and_the_coach_come_from_the_flag_the_variable_or_the_config() {
    engines::both("cli_staff_env_config", || {
        let place = engines::place();
        let club = Club::new(&place);
        club.ok(None, &["staff", "add", "A"]);
        club.ok(None, &["staff", "add", "B"]);
        club.ok(Some("A"), &["grade", NOW, "--score", "1=4"]);
        club.ok(Some("B"), &["grade", NOW, "--score", "1=2"]);
        let a = serde_json::json!({"1": 4});
        let b = serde_json::json!({"1": 2});
        let j = club.journal.as_str();
        let roster = club.roster.as_path();
        let other = club.dir.path().join("other.sqlite").display().to_string();

        // $SPLITDESK_JOURNAL selects the journal; --journal wins over it.
        let env = [("SPLITDESK_JOURNAL", j)];
        let (code, out, err) = sd(roster, &env, &["staff", "list"]);
        assert_eq!(code, 0, "{err}");
        assert!(
            out.starts_with(&format!("{j}: staff\n")) && out.contains("  B  ("),
            "{out}"
        );
        let (code, out, err) = sd(roster, &env, &["--journal", &other, "staff", "list"]);
        assert_eq!(code, 0, "{err}");
        assert!(out.starts_with(&format!("{other}: no staff")), "{out}");
        // $SPLITDESK_COACH picks the coach; --as wins over it.
        let env = [("SPLITDESK_JOURNAL", j), ("SPLITDESK_COACH", "B")];
        assert_eq!(acting_scores(roster, &env, &[]), b);
        assert_eq!(acting_scores(roster, &env, &["--as", "A"]), a);

        // The config file: [journal] url (or path) and [coach] name.
        let config = club.dir.path().join("config.toml");
        let key = if j.starts_with("postgres://") {
            "url"
        } else {
            "path"
        };
        std::fs::write(
            &config,
            format!("[journal]\n{key} = \"{j}\"\n\n[coach]\nname = \"B\"\n"),
        )
        .unwrap();
        let cfg = config.to_str().unwrap();
        let env = [("SPLITDESK_CONFIG", cfg)];
        assert_eq!(acting_scores(roster, &env, &[]), b);
        assert_eq!(acting_scores(roster, &env, &["--as", "A"]), a);
        let env = [("SPLITDESK_CONFIG", cfg), ("SPLITDESK_COACH", "A")];
        assert_eq!(acting_scores(roster, &env, &[]), a);
        // The variable's journal wins over the config's.
        let env = [
            ("SPLITDESK_CONFIG", cfg),
            ("SPLITDESK_JOURNAL", other.as_str()),
        ];
        let (code, out, err) = sd(roster, &env, &["staff", "list"]);
        assert_eq!(code, 0, "{err}");
        assert!(out.starts_with(&format!("{other}: no staff")), "{out}");
        // A grade through the config's journal and coach lands as B's.
        let (code, _, err) = sd(
            roster,
            &[("SPLITDESK_CONFIG", cfg)],
            &["grade", NOW, "--score", "2=5"],
        );
        assert_eq!(code, 0, "{err}");
        assert_eq!(
            club.json(Some("B"), &["grade", NOW, "--json"])["blind_scores"],
            serde_json::json!({"1": 2, "2": 5})
        );
        assert_eq!(
            club.json(Some("A"), &["grade", NOW, "--json"])["blind_scores"],
            a
        );
    });
}
