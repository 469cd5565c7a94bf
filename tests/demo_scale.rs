//! `splitdesk demo --athletes N --weeks W`: a scale roster for benchmarks. A small one opens
//! as a roster, holds the expected number of sessions, every activity file distinct, and
//! every session analyses (the damaged ones are the scenario's truncated files).

use std::collections::BTreeSet;

use assert_cmd::Command;
use sha2::{Digest, Sha256};
use splitdesk::demo::scale;
use splitdesk::demo::scenario::{last_day, DEFAULT_SEED};

fn splitdesk() -> Command {
    let mut c = Command::cargo_bin("splitdesk").unwrap();
    c.env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml");
    c
}

#[test]
fn a_small_scale_roster_opens_with_distinct_sessions_that_analyse() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("scale");
    let assert = splitdesk()
        .args(["demo", "--athletes", "3", "--weeks", "2", "--out"])
        .arg(&out)
        .assert()
        .success();
    let stdout = String::from_utf8(assert.get_output().stdout.clone()).unwrap();

    let expected = scale::scenario(3, 2, DEFAULT_SEED);
    let sessions: usize = expected.athletes.iter().map(|a| a.sessions.len()).sum();
    // Demo weeks 5 and 6 of ansel-marchetti, dagny-holloway and keziah-brandt (id order).
    assert_eq!(sessions, 26);
    assert!(
        stdout.contains("3 athletes, 26 sessions"),
        "summary line: {stdout}"
    );

    let roster = splitdesk::roster::Roster::open(&out).unwrap();
    let ids: Vec<&str> = roster.athletes.iter().map(|a| a.id.as_str()).collect();
    assert_eq!(
        ids,
        [
            "ansel-marchetti-01",
            "dagny-holloway-01",
            "keziah-brandt-01"
        ]
    );
    assert!(roster.problems().is_empty(), "{:?}", roster.problems());
    let mut hashes = BTreeSet::new();
    let mut analysed = 0;
    for (athlete, act) in roster.activities() {
        let bytes = std::fs::read(&act.path).unwrap();
        hashes.insert(Sha256::digest(&bytes).to_vec());
        let a = splitdesk::workspace::analyse_activity(athlete, act)
            .unwrap_or_else(|e| panic!("{}: {e}", act.path.display()));
        assert!(a.session.duration_s() > 600.0, "{}", act.path.display());
        analysed += 1;
    }
    assert_eq!(analysed, 26);
    assert_eq!(hashes.len(), 26, "every activity file is distinct");

    // A second run replaces the roster (it is marked as written by `splitdesk demo`).
    splitdesk()
        .args(["demo", "--athletes", "3", "--weeks", "2", "--out"])
        .arg(&out)
        .assert()
        .success();
}

#[test]
fn more_weeks_than_the_demo_repeat_it_back_in_time_under_new_ids() {
    let s = scale::scenario(8, 13, 7);
    assert_eq!(s.athletes.len(), 8);
    // Copies 1 and 2: the first two demo athletes (id order) have a second copy.
    assert!(s.athletes.iter().any(|a| a.id == "ansel-marchetti-02"));
    assert!(s.athletes.iter().any(|a| a.id == "dagny-holloway-02"));
    assert!(!s.athletes.iter().any(|a| a.id == "keziah-brandt-02"));
    let first = last_day() - chrono::Duration::days(13 * 7 - 1);
    for a in &s.athletes {
        let mut stems = BTreeSet::new();
        for sess in &a.sessions {
            assert!(
                sess.date >= first && sess.date <= last_day(),
                "{}",
                sess.date
            );
            assert!(stems.insert(sess.stem()), "duplicate {}", sess.stem());
        }
        // 13 weeks: every one of them has at least one run.
        let weeks: BTreeSet<i64> = a
            .sessions
            .iter()
            .map(|x| (x.date - first).num_days() / 7)
            .collect();
        assert_eq!(weeks.len(), 13, "{}", a.id);
    }
    // Two copies of the same demo athlete have the same sessions but different seeds.
    let one = s.athlete("ansel-marchetti-01").unwrap();
    let two = s.athlete("ansel-marchetti-02").unwrap();
    assert_eq!(one.sessions.len(), two.sessions.len());
    let (a1, s1) = (one, &one.sessions[0]);
    let (a2, s2) = (two, &two.sessions[0]);
    assert_ne!(
        s.sim_input(a1, s1).unwrap().seed,
        s.sim_input(a2, s2).unwrap().seed
    );
}
