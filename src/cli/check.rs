//! `splitdesk check ROSTER`: read every file of a roster and list each problem: activity files
//! that cannot be read, and every profile and plan problem (`PATH: line L, column C: what`).

use std::path::Path;

use serde::Serialize;

use crate::ingest;
use crate::roster::Roster;

#[derive(Debug, Serialize)]
struct ProblemOut {
    path: String,
    problem: String,
    /// True when the file could not be read at all.
    unreadable: bool,
    /// True for a problem in an athlete's profile or plan files.
    profile_or_plan: bool,
}

#[derive(Debug, Serialize)]
struct CheckOut {
    roster: String,
    athletes: usize,
    sessions: usize,
    readable: usize,
    problems: Vec<ProblemOut>,
}

/// Exit 1 when any activity file is unreadable or a profile or plan has a problem, 0
/// otherwise (other problems, such as a stray file, are listed).
pub fn run(root: &Path, json: bool) -> anyhow::Result<i32> {
    let roster = Roster::open(root)?;
    let athlete_problems: Vec<crate::roster::Problem> =
        roster.athletes.iter().flat_map(|a| a.problems()).collect();
    let mut problems: Vec<ProblemOut> = roster
        .problems()
        .iter()
        .map(|p| ProblemOut {
            path: p.path.display().to_string(),
            problem: p.message.clone(),
            unreadable: false,
            profile_or_plan: athlete_problems.contains(p),
        })
        .collect();
    let total = roster.activities().count();
    let bar = super::progress_bar(total as u64, "reading");
    let mut readable = 0;
    for (athlete, act) in roster.activities() {
        match ingest::ingest_file(&act.path, Some(&athlete.profile)) {
            Ok(session) => {
                readable += 1;
                // What ingest worked around (dropped timestamps, trailing bytes): listed,
                // not failing.
                for w in &session.warnings {
                    problems.push(ProblemOut {
                        path: act.path.display().to_string(),
                        problem: w.clone(),
                        unreadable: false,
                        profile_or_plan: false,
                    });
                }
            }
            Err(e) => problems.push(ProblemOut {
                path: act.path.display().to_string(),
                problem: e.reason(),
                unreadable: true,
                profile_or_plan: false,
            }),
        }
        if let Some(note) = &act.note_file {
            if let Some(p) = ingest::note::problem(note) {
                problems.push(ProblemOut {
                    path: note.display().to_string(),
                    problem: p,
                    unreadable: false,
                    profile_or_plan: false,
                });
            }
        }
        bar.inc(1);
    }
    bar.finish_and_clear();
    let failing = problems.iter().any(|p| p.unreadable || p.profile_or_plan);
    let out = CheckOut {
        roster: roster.root.display().to_string(),
        athletes: roster.athletes.len(),
        sessions: total,
        readable,
        problems,
    };
    if json {
        crate::cli::out::json(&out)?;
    } else {
        for p in &out.problems {
            println!("{}: {}", p.path, p.problem);
        }
        use crate::cli::out::count;
        println!(
            "{}: {}, {}, {} readable, {}",
            out.roster,
            count(out.athletes, "athlete", "athletes"),
            count(out.sessions, "session", "sessions"),
            out.readable,
            count(out.problems.len(), "problem", "problems"),
        );
    }
    Ok(if failing { 1 } else { 0 })
}
