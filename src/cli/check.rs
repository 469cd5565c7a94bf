//! `splitdesk check ROSTER`: read every file of a roster and list each problem.

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
}

#[derive(Debug, Serialize)]
struct CheckOut {
    roster: String,
    athletes: usize,
    sessions: usize,
    readable: usize,
    problems: Vec<ProblemOut>,
}

/// Exit 1 when any activity file is unreadable, 0 otherwise (other problems are listed).
pub fn run(root: &Path, json: bool) -> anyhow::Result<i32> {
    let roster = Roster::open(root)?;
    let mut problems: Vec<ProblemOut> = roster
        .problems
        .iter()
        .map(|p| ProblemOut {
            path: p.path.display().to_string(),
            problem: p.message.clone(),
            unreadable: false,
        })
        .collect();
    let total = roster.activities().count();
    let bar = super::progress_bar(total as u64, "reading");
    let mut readable = 0;
    for (athlete, act) in roster.activities() {
        match ingest::ingest_file(&act.path, Some(&athlete.profile)) {
            Ok(_) => readable += 1,
            Err(e) => problems.push(ProblemOut {
                path: act.path.display().to_string(),
                problem: match &e {
                    ingest::IngestError::Io { source, .. } => source.to_string(),
                    ingest::IngestError::Parse { source, .. } => source.to_string(),
                },
                unreadable: true,
            }),
        }
        bar.inc(1);
    }
    bar.finish_and_clear();
    let unreadable = problems.iter().any(|p| p.unreadable);
    let out = CheckOut {
        roster: roster.root.display().to_string(),
        athletes: roster.athletes.len(),
        sessions: total,
        readable,
        problems,
    };
    if json {
        println!("{}", serde_json::to_string_pretty(&out)?);
    } else {
        for p in &out.problems {
            println!("{}: {}", p.path, p.problem);
        }
        println!(
            "{}: {} athletes, {} sessions, {} readable, {} problem{}",
            out.roster,
            out.athletes,
            out.sessions,
            out.readable,
            out.problems.len(),
            if out.problems.len() == 1 { "" } else { "s" }
        );
    }
    Ok(if unreadable { 1 } else { 0 })
}
