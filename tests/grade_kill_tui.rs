//! The workstation's scoring keys are all-or-nothing actions: the real binary runs in tmux,
//! the coach scores the five work intervals and cycles the verdict with a burst of keys, and
//! the workstation is killed with SIGKILL at a random moment of the burst. After *every* kill
//! the journal holds the grades after some whole number of those keys (each key's action
//! wholly saved or not at all), in order.
//!
//! Uses `$SPLITDESK_E2E_BIN` when set (`.ci/run` points it at the release build), else the
//! test build of the binary. Needs tmux: skipped with a message when it is missing, except
//! under `CI=true`, where that is a failure.

mod rng_support;
mod tmux_support;
mod tui_support;

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

use rng_support::Rng;
use splitdesk::journal::Journal;
use tmux_support::{binary, need_tmux, run, running, Tmux};
use tui_support::{build_roster, EASY, INTERVALS, LONG};

/// The waits here: up to 40 s each, looking every 50 ms.
const WAIT: Duration = Duration::from_secs(40);
const POLL: Duration = Duration::from_millis(50);

/// Blind scores by interval and the blind verdict.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Grades {
    scores: Vec<(u32, u8)>,
    verdict: Option<&'static str>,
    revisions: usize,
}

fn grades(journal: &Path) -> Grades {
    let j = Journal::open(journal).unwrap();
    let st = j.review_state(INTERVALS).unwrap();
    Grades {
        scores: st.scores.iter().map(|c| (c.interval, c.blind)).collect(),
        verdict: st.verdict.as_ref().map(|v| v.blind.as_str()),
        revisions: j.revisions(INTERVALS).unwrap().len(),
    }
}

/// The states after each whole key of `keys` (digits score the next interval from the
/// first, `v` cycles the verdict), starting from `old`; index k is after k keys.
fn prefix_states(old: &Grades, keys: &[&str]) -> Vec<Grades> {
    let mut out = vec![old.clone()];
    let mut g = old.clone();
    let mut next_interval = 1u32;
    for k in keys {
        if *k == "v" {
            g.verdict = Some(match g.verdict {
                None | Some("missed") => "met",
                Some("met") => "partly",
                _ => "missed",
            });
        } else {
            let s: u8 = k.parse().unwrap();
            match g.scores.iter_mut().find(|(i, _)| *i == next_interval) {
                Some(cell) => cell.1 = s,
                None => {
                    g.scores.push((next_interval, s));
                    g.scores.sort();
                }
            }
            next_interval += 1;
        }
        out.push(g.clone());
    }
    out
}

#[test]
fn killed_workstation_keeps_whole_keystrokes_only() {
    if !need_tmux() || !Path::new("/proc/self/stat").exists() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("coach/journal.sqlite");
    let cli = |args: &[&str]| {
        let out = run(&roster, &journal, args);
        assert_eq!(out.status.code(), Some(0), "{args:?}: {out:?}");
    };
    // Review the two older sessions, so `]` (next in the queue) opens the interval session.
    for id in [EASY, LONG] {
        cli(&["grade", id, "--verdict", "met"]);
        cli(&["notes", id]);
    }
    let mut tmux = Tmux::new(dir.path().join("tmux.sock"), "keep");
    let pid_file = dir.path().join("pid");
    let mut rng = Rng(0x7E37_2026);
    let mut current = grades(&journal);
    let mut landed = vec![0usize; 7];
    let started = Instant::now();
    let rounds = 20u32;
    // A session that outlives the rounds keeps the tmux server up between them.
    let ok = tmux
        .cmd()
        .args(["new-session", "-d", "-s", "keep", "sleep", "600"])
        .status()
        .unwrap()
        .success();
    assert!(ok, "tmux new-session keep");
    for round in 0..rounds {
        let name = format!("r{round}");
        let _ = std::fs::remove_file(&pid_file);
        let script = format!(
            "echo $$ > '{}'; exec env SPLITDESK_CONFIG=/nonexistent XDG_DATA_HOME='{}' '{}' --roster '{}' --journal '{}'",
            pid_file.display(),
            dir.path().join("data").display(),
            binary().display(),
            roster.display(),
            journal.display(),
        );
        tmux.target = name.clone();
        tmux.new_session(160, 48, &script);
        tmux.wait_for_all(&["to review"], WAIT, POLL);
        tmux.burst(&["]"]);
        tmux.wait_for_all(&["5 x 3 min", "scores "], WAIT, POLL);
        let pid = std::fs::read_to_string(&pid_file)
            .unwrap()
            .trim()
            .to_string();
        let scores: Vec<String> = (0..5).map(|_| (1 + rng.below(5)).to_string()).collect();
        let mut keys: Vec<&str> = scores.iter().map(String::as_str).collect();
        keys.push("v");
        let states = prefix_states(&current, &keys);
        // The burst, then SIGKILL somewhere in it (or just after it).
        tmux.burst(&keys);
        std::thread::sleep(Duration::from_micros(rng.below(120_000)));
        let killed = Command::new("kill")
            .args(["-KILL", &pid])
            .status()
            .unwrap()
            .success();
        assert!(killed, "kill {pid}");
        let wait = Instant::now();
        while running(&pid) {
            assert!(wait.elapsed() < Duration::from_secs(10), "pid {pid} lives");
            std::thread::sleep(Duration::from_millis(20));
        }
        let _ = tmux
            .cmd()
            .args(["kill-session", "-t", &name])
            .stderr(std::process::Stdio::null())
            .status();
        let after = grades(&journal);
        let Some(k) = states.iter().position(|s| *s == after) else {
            panic!(
                "round {round}: the journal holds a state no whole number of keys gives\n keys: {keys:?}\n states: {states:#?}\n got: {after:?}"
            );
        };
        assert_eq!(after.revisions, 0, "blind grading makes no revisions");
        if let Some(n) = landed.get_mut(k) {
            *n += 1;
        }
        current = after;
        assert!(
            started.elapsed() < Duration::from_secs(150),
            "the kill rounds take far too long"
        );
    }
    eprintln!("{rounds} kill rounds; whole keys saved before the kill: {landed:?}");
}
