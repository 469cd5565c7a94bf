//! `splitdesk staff …` (who coaches on a shared journal, and whom) and `splitdesk journal
//! copy FROM TO` (moving a journal between SQLite and PostgreSQL, verified).

use std::path::Path;

use chrono::Utc;

use crate::journal::{self, copy::CopyReport, Journal};
use crate::roster::printable;
use crate::workspace::Workspace;

/// What `splitdesk staff` was asked to do.
pub enum StaffAction<'a> {
    Add(&'a str),
    List { json: bool },
    Remove(&'a str),
    Assign { athlete: &'a str, coach: &'a str },
    Unassign(&'a str),
}

/// Run a staff command on the workspace's journal; returns the exit code.
pub fn staff(ws: &mut Workspace, action: StaffAction<'_>) -> anyhow::Result<i32> {
    let shown = ws.journal.path().display().to_string();
    match action {
        StaffAction::Add(name) => {
            let added = ws.journal.staff_add(name, Utc::now())?;
            if added.returned {
                println!("{}: {} is on the staff again", shown, printable(name));
            } else {
                println!("{}: {} added to the staff", shown, printable(name));
            }
            match added.took_over_reviews {
                0 => {}
                1 => println!(
                    "  the review made before the journal had a staff is now {}'s",
                    printable(name)
                ),
                n => println!(
                    "  the {n} reviews made before the journal had a staff are now {}'s",
                    printable(name)
                ),
            }
        }
        StaffAction::Remove(name) => {
            ws.journal.staff_remove(name, Utc::now())?;
            println!(
                "{}: {} left the staff; their reviews stay in the journal and their athletes \
                 are unassigned",
                shown,
                printable(name)
            );
        }
        StaffAction::Assign { athlete, coach } => {
            if !ws.roster.athletes.iter().any(|a| a.id == athlete) {
                anyhow::bail!(
                    "{}: no athlete {} in the roster (an athlete id is the folder name, e.g. \
                     mara-lindqvist)",
                    ws.roster.root.display(),
                    printable(athlete)
                );
            }
            ws.journal.assign(athlete, Some(coach), Utc::now())?;
            println!(
                "{}: {} is coached by {}",
                shown,
                printable(athlete),
                printable(coach)
            );
        }
        StaffAction::Unassign(athlete) => {
            ws.journal.assign(athlete, None, Utc::now())?;
            println!("{}: {} has no coach assigned", shown, printable(athlete));
        }
        StaffAction::List { json } => {
            let staff = ws.journal.staff()?;
            if json {
                let list: Vec<_> = staff
                    .iter()
                    .map(|m| {
                        serde_json::json!({
                            "name": m.name,
                            "added_at": m.added_at,
                            "removed_at": m.removed_at,
                            "athletes": m.athletes,
                            "reviews": m.reviews,
                        })
                    })
                    .collect();
                crate::cli::out::json(&serde_json::json!({
                    "journal": shown,
                    "coaches": list,
                }))?;
            } else if staff.is_empty() {
                println!(
                    "{shown}: no staff: a single coach's journal. Add the first coach with \
                     `splitdesk staff add NAME` (the reviews made so far become theirs)."
                );
            } else {
                println!("{shown}: staff");
                for m in &staff {
                    let state = match m.removed_at {
                        Some(at) => format!("left {}", at.format("%Y-%m-%d")),
                        None => format!("since {}", m.added_at.format("%Y-%m-%d")),
                    };
                    let athletes = if m.athletes.is_empty() {
                        "no athletes assigned".to_string()
                    } else {
                        m.athletes
                            .iter()
                            .map(|a| printable(a))
                            .collect::<Vec<_>>()
                            .join(", ")
                    };
                    println!(
                        "  {}  ({state}; {}): {athletes}",
                        printable(&m.name),
                        crate::cli::out::count(m.reviews, "review", "reviews"),
                    );
                }
            }
        }
    }
    Ok(0)
}

/// `splitdesk agreement`: the named coaches' blind scores, compared pair by pair, of the
/// sessions whose blind grading the coach asking has completed (the blind rule: no
/// colleague's score of a session one has still to grade).
pub fn agreement(ws: &Workspace, only: &[String], json: bool) -> anyhow::Result<i32> {
    let (grades, held_back) = ws.journal.coach_grades_seen()?;
    let agreement = crate::analysis::agreement::staff_agreement(&grades, only)?;
    if json {
        let mut out = crate::cli::agreement_cmd::render_json(&agreement);
        if let Some(map) = out.as_object_mut() {
            map.insert("held_back_sessions".into(), serde_json::json!(held_back));
        }
        crate::cli::out::json(&out)?;
    } else {
        print!("{}", crate::cli::agreement_cmd::render_text(&agreement));
        if held_back > 0 {
            println!();
            println!(
                "Left out: {} graded by other coaches that you have not finished grading \
                 blind yourself (their scores stay hidden until you have).",
                crate::cli::out::count(held_back, "session", "sessions")
            );
        }
    }
    Ok(0)
}

/// Open a journal named on the command line: a `postgres://` address or a SQLite file.
fn open_location(location: &Path, for_reading: bool) -> anyhow::Result<Journal> {
    if let Some(url) = location.to_str().filter(|s| journal::names_a_server(s)) {
        return Ok(Journal::open_url(url)?);
    }
    if for_reading {
        if !location.exists() {
            anyhow::bail!("{}: no journal there", location.display());
        }
        Ok(Journal::open_read_only(location)?)
    } else {
        Ok(Journal::open(location)?)
    }
}

/// `splitdesk journal copy FROM TO`: every row into a new, empty journal, then verified.
pub fn copy(from: &Path, to: &Path, json: bool) -> anyhow::Result<i32> {
    let source = open_location(from, true)?;
    let to_is_file = to.to_str().is_none_or(|s| !journal::names_a_server(s));
    if to_is_file && std::fs::symlink_metadata(to).is_ok() {
        anyhow::bail!(
            "{}: the destination exists; copy into a new file (nothing was written)",
            to.display()
        );
    }
    let mut dest = open_location(to, false)?;
    let report = match journal::copy::copy_journal(&source, &mut dest) {
        Ok(r) => r,
        Err(e) => {
            drop(dest);
            if to_is_file {
                for suffix in ["", "-wal", "-shm", "-checked"] {
                    let mut p = to.as_os_str().to_os_string();
                    p.push(suffix);
                    let _ = std::fs::remove_file(std::path::PathBuf::from(p));
                }
            }
            return Err(e.into());
        }
    };
    print_copy(&source, &dest, &report, json)?;
    Ok(0)
}

fn print_copy(
    source: &Journal,
    dest: &Journal,
    report: &CopyReport,
    json: bool,
) -> anyhow::Result<()> {
    if json {
        let rows: serde_json::Map<String, serde_json::Value> = report
            .rows
            .iter()
            .map(|(t, n)| (t.clone(), serde_json::json!(n)))
            .collect();
        crate::cli::out::json(&serde_json::json!({
            "from": source.path(),
            "to": dest.path(),
            "verified": true,
            "rows": rows,
            "records_sha256": report.content_hash,
        }))?;
    } else {
        println!(
            "{} -> {}: copied and verified",
            source.path().display(),
            dest.path().display()
        );
        for (table, n) in &report.rows {
            println!("  {table:<18} {n:>8} rows, the same on both sides");
        }
        println!(
            "  grades, revisions and feedback: SHA-256 {} on both sides",
            report.content_hash
        );
    }
    Ok(())
}
