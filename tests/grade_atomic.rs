//! A `grade` command is one action: all of it is saved or none of it.
//!
//! - A command refused halfway (an interval the session does not have, after valid ones)
//!   leaves nothing behind, before and after the reveal.
//! - The real binary is killed with SIGKILL at random moments while it grades five intervals
//!   and the verdict; after *every* kill the journal holds exactly the old grades or exactly
//!   the new ones, never a mix, and after the reveal never a part of the revisions.

mod cli_support;
mod rng_support;
mod tui_support;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use cli_support::binary;
use rng_support::Rng;
use splitdesk::journal::Journal;
use tui_support::{build_roster, INTERVALS};

struct Setup {
    _dir: tempfile::TempDir,
    roster: PathBuf,
    journal: PathBuf,
}

fn setup() -> Setup {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("coach/journal.sqlite");
    Setup {
        _dir: dir,
        roster,
        journal,
    }
}

fn cmd(s: &Setup, args: &[&str]) -> Command {
    let mut c = Command::new(binary());
    c.env("SPLITDESK_CONFIG", "/nonexistent")
        .arg("--roster")
        .arg(&s.roster)
        .arg("--journal")
        .arg(&s.journal)
        .args(args);
    c
}

fn run(s: &Setup, args: &[&str]) -> Output {
    cmd(s, args).output().unwrap()
}

/// What the journal holds for the session: per interval (blind, current), the verdict
/// (blind, current), the number of revisions, revealed or not.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Grades {
    scores: Vec<(u32, u8, u8)>,
    verdict: Option<(String, String)>,
    revisions: usize,
    revealed: bool,
}

fn grades(journal: &Path) -> Grades {
    let j = Journal::open(journal).unwrap();
    let st = j.review_state(INTERVALS).unwrap();
    Grades {
        scores: st
            .scores
            .iter()
            .map(|c| (c.interval, c.blind, c.current))
            .collect(),
        verdict: st
            .verdict
            .as_ref()
            .map(|v| (v.blind.as_str().to_string(), v.current.as_str().to_string())),
        revisions: j.revisions(INTERVALS).unwrap().len(),
        revealed: st.revealed_at.is_some(),
    }
}

/// `grade` arguments for five scores and a verdict.
fn grade_args(scores: [u8; 5], verdict: &str) -> Vec<String> {
    let mut a = vec!["grade".to_string(), INTERVALS.to_string()];
    for (k, s) in scores.iter().enumerate() {
        a.push("--score".into());
        a.push(format!("{}={s}", k + 1));
    }
    a.push("--verdict".into());
    a.push(verdict.into());
    a
}

fn as_refs(v: &[String]) -> Vec<&str> {
    v.iter().map(String::as_str).collect()
}

#[test]
fn a_refused_grade_saves_nothing() {
    let s = setup();
    // Valid scores first, then an interval the session does not have (it has five).
    let out = run(
        &s,
        &[
            "grade",
            INTERVALS,
            "--score",
            "1=4",
            "--score",
            "2=3",
            "--score",
            "99=1",
            "--verdict",
            "met",
        ],
    );
    assert_eq!(out.status.code(), Some(2), "{out:?}");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("no work interval 99"), "{err}");
    assert!(err.contains("nothing was saved"), "{err}");
    assert_eq!(
        grades(&s.journal),
        Grades {
            scores: vec![],
            verdict: None,
            revisions: 0,
            revealed: false
        }
    );

    // Complete the blind grading and reveal; then a refused revision leaves no revision.
    let args = grade_args([3, 3, 4, 4, 2], "partly");
    assert_eq!(run(&s, &as_refs(&args)).status.code(), Some(0));
    assert_eq!(run(&s, &["notes", INTERVALS]).status.code(), Some(0));
    let before = grades(&s.journal);
    assert!(before.revealed);
    let out = run(
        &s,
        &[
            "grade",
            INTERVALS,
            "--score",
            "1=5",
            "--verdict",
            "met",
            "--score",
            "6=2",
        ],
    );
    assert_eq!(out.status.code(), Some(2), "{out:?}");
    assert_eq!(grades(&s.journal), before);
    // A bad verdict word is refused before anything is written, too.
    let out = run(
        &s,
        &["grade", INTERVALS, "--score", "1=5", "--verdict", "great"],
    );
    assert_eq!(out.status.code(), Some(2), "{out:?}");
    assert_eq!(grades(&s.journal), before);
}

const VERDICTS: [&str; 3] = ["met", "partly", "missed"];

/// Five scores and a verdict that differ from `old` in every place.
fn next_grades(round: u64) -> ([u8; 5], &'static str) {
    let base = (round % 5) as u8;
    let scores = [0u8, 1, 2, 3, 4].map(|k| (base + k) % 5 + 1);
    (scores, VERDICTS[(round % 3) as usize])
}

/// What the journal must hold after a completed `grade` of `scores`/`verdict` over `old`.
fn expected_after(old: &Grades, scores: [u8; 5], verdict: &str) -> Grades {
    if !old.revealed {
        return Grades {
            scores: (1..=5u32).zip(scores).map(|(i, s)| (i, s, s)).collect(),
            verdict: Some((verdict.to_string(), verdict.to_string())),
            revisions: 0,
            revealed: false,
        };
    }
    let mut revisions = old.revisions;
    let new_scores = old
        .scores
        .iter()
        .zip(scores)
        .map(|(&(i, b, c), s)| {
            if c != s {
                revisions += 1;
            }
            (i, b, s)
        })
        .collect();
    let verdict = old.verdict.as_ref().map(|(b, c)| {
        if c != verdict {
            revisions += 1;
        }
        (b.clone(), verdict.to_string())
    });
    Grades {
        scores: new_scores,
        verdict,
        revisions,
        revealed: true,
    }
}

#[test]
fn killed_grade_leaves_old_or_new_never_a_mix() {
    let s = setup();
    // Warm the journal (every session analysed and cached) so each run is quick.
    assert_eq!(run(&s, &["queue"]).status.code(), Some(0));
    // How long an uninterrupted grade takes on this machine now: the kill delays spread
    // over it (most of the run is start-up; the write is at the end).
    // The median of three runs, started as the killed ones are (the last one's grades are the starting state).
    let (scores, verdict) = next_grades(0);
    let mut times: Vec<Duration> = (0..3)
        .map(|_| {
            let began = Instant::now();
            let status = cmd(&s, &as_refs(&grade_args(scores, verdict)))
                .stdout(Stdio::null())
                .stderr(Stdio::null())
                .status()
                .unwrap();
            assert_eq!(status.code(), Some(0));
            began.elapsed()
        })
        .collect();
    times.sort();
    let full = times[1];
    let mut current = grades(&s.journal);
    assert_eq!(
        current,
        expected_after(
            &Grades {
                scores: vec![],
                verdict: None,
                revisions: 0,
                revealed: false,
            },
            scores,
            verdict
        )
    );

    let mut rng = Rng(0x6AD3_2026);
    let mut landed = [0usize; 2]; // rounds that ended in the old / the new state
    let started = Instant::now();
    let rounds = 80u64;
    for round in 1..=rounds {
        // Half way through: reveal, so the second half writes revisions.
        if round == rounds / 2 {
            assert_eq!(run(&s, &["notes", INTERVALS]).status.code(), Some(0));
            current = grades(&s.journal);
            assert!(current.revealed);
        }
        let (scores, verdict) = next_grades(round);
        let new = expected_after(&current, scores, verdict);
        let mut child = cmd(&s, &as_refs(&grade_args(scores, verdict)))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        // Spread kills from 30% to 110% of an uninterrupted run (most of it is start-up;
        // the write comes last).
        let span = full.as_micros() as u64;
        let delay = span * 3 / 10 + rng.below(span * 8 / 10);
        let deadline = Instant::now() + Duration::from_micros(delay);
        let mut finished = false;
        while Instant::now() < deadline {
            if let Some(_status) = child.try_wait().unwrap() {
                finished = true;
                break;
            }
            std::thread::sleep(Duration::from_micros(300));
        }
        if !finished {
            child.kill().unwrap(); // SIGKILL
        }
        child.wait().unwrap();
        let after = grades(&s.journal);
        if after == current {
            landed[0] += 1;
        } else if after == new {
            landed[1] += 1;
            current = new;
        } else {
            panic!(
                "round {round}: a partial grade was saved\n old: {current:?}\n new: {new:?}\n got: {after:?}"
            );
        }
        assert!(
            started.elapsed() < Duration::from_secs(120),
            "the kill rounds take far too long"
        );
    }
    eprintln!(
        "{rounds} kill rounds: {} left the old grades, {} the new ones ({:.1?} per uninterrupted grade)",
        landed[0], landed[1], full
    );
    // Both outcomes happen, so the kills did land on both sides of the commit.
    assert!(landed[0] > 0 && landed[1] > 0, "{landed:?}");
}
