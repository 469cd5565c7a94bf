//! `splitdesk plan check FILE | --line TEXT [--athlete PATH]`: parse a plan and print its
//! expanded sequence. When the athlete is known (`--athlete`, or a plan file inside a roster
//! athlete folder) every named pace is checked against the athlete's profile.

use std::io::Write;
use std::path::Path;

use serde::Serialize;

use crate::model::{AthleteProfile, ExpectedInterval, Plan, Units};
use crate::plan::{self, PlanError, PlanFileError};
use crate::roster::{printable, read_profile, ProfileProblem, Roster};

#[derive(Serialize)]
struct CheckOutput<'a> {
    plan: &'a Plan,
    expanded: Vec<ExpectedInterval>,
}

/// One line `error: ...`; a person at a terminal also gets the line with a caret under it.
fn report(message: &str, snippet: Option<String>) {
    use std::io::IsTerminal;
    let mut err = super::out::stderr();
    let _ = writeln!(err, "error: {}", printable(message));
    if !std::io::stderr().is_terminal() {
        return;
    }
    if let Some(s) = snippet {
        for l in s.lines() {
            let _ = writeln!(err, "  | {l}");
        }
    }
}

/// Parse the plan in `file` (a TOML plan file) or `line` (shorthand) and print the expanded
/// sequence, or with `json` the plan and its expanded sequence as JSON, to stdout.
///
/// Returns the exit code: 0 when the plan is valid; 2 after printing
/// `error: PATH: LINE:COL: ...` (or `error: LINE:COL: ...` for `--line`) to stderr, or when
/// neither or both of `file` and `line` are given.
/// The athlete a plan is checked against: its profile, the file it came from, and what is
/// wrong in that file.
struct KnownAthlete {
    profile: AthleteProfile,
    profile_path: std::path::PathBuf,
    problems: Vec<ProfileProblem>,
}

/// The athlete folder a plan file sits in (`<athlete>/plans/<file>.toml` with an
/// `athlete.toml` beside `plans/`).
fn athlete_dir_of_plan(file: &Path) -> Option<std::path::PathBuf> {
    let canon = std::fs::canonicalize(file).ok()?;
    let plans = canon.parent()?;
    if plans.file_name()? != "plans" {
        return None;
    }
    let dir = plans.parent()?;
    dir.join("athlete.toml")
        .is_file()
        .then(|| dir.to_path_buf())
}

/// Read the athlete of an athlete folder or `athlete.toml`; inside a roster, with the roster's
/// units.
fn load_athlete(path: &Path) -> anyhow::Result<KnownAthlete> {
    let (dir, profile_path) = if path.is_dir() {
        (path.to_path_buf(), path.join("athlete.toml"))
    } else {
        let dir = path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_else(|| std::path::PathBuf::from("."));
        (dir, path.to_path_buf())
    };
    let canon_dir = std::fs::canonicalize(&dir).unwrap_or(dir);
    let id = canon_dir
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "athlete".to_string());
    let in_roster = canon_dir
        .parent()
        .and_then(|root| Roster::open(root).ok())
        .and_then(|r| r.athletes.into_iter().find(|a| a.id == id));
    if let Some(a) = in_roster {
        if profile_path
            .file_name()
            .is_some_and(|n| n == "athlete.toml")
        {
            return Ok(KnownAthlete {
                profile_path: a.profile_path(),
                profile: a.profile,
                problems: a.profile_problems,
            });
        }
    }
    let text = crate::ingest::read_text_file(&profile_path)
        .map_err(|e| anyhow::anyhow!("{}: {e}", printable(&profile_path.display().to_string())))?;
    let report = read_profile(&text, &id, Units::Km);
    Ok(KnownAthlete {
        profile: report.profile,
        profile_path,
        problems: report.problems,
    })
}

/// Parse the plan in `file` (a TOML plan file) or `line` (shorthand) and print the expanded
/// sequence, or with `json` the plan and its expanded sequence as JSON, to stdout. With an
/// athlete (`athlete`, or the roster athlete folder `file` sits in) a pace name the
/// athlete's profile does not have is an error too.
///
/// Returns the exit code: 0 when the plan is valid; 2 after printing
/// `error: PATH: line L, column C: ...` lines to stderr for a pace the profile lacks, or
/// `error: PATH: LINE:COL: ...` (or `error: LINE:COL: ...` for `--line`) for a plan that does
/// not parse, or when neither or both of `file` and `line` are given.
pub fn run_check(
    file: Option<&Path>,
    line: Option<&str>,
    athlete: Option<&Path>,
    json: bool,
) -> anyhow::Result<i32> {
    let known = match (athlete, file.and_then(athlete_dir_of_plan)) {
        (Some(a), _) => Some(load_athlete(a)?),
        (None, Some(dir)) => Some(load_athlete(&dir)?),
        (None, None) => None,
    };
    let mut source_text = String::new();
    let parsed: Result<Plan, (String, Option<String>)> = match (file, line) {
        (Some(path), None) => match crate::ingest::read_text_file(path) {
            Err(source) => Err((
                PlanFileError::Io {
                    path: path.to_path_buf(),
                    source,
                }
                .to_string(),
                None,
            )),
            Ok(text) => {
                source_text.clone_from(&text);
                let name = path.file_name().and_then(|n| n.to_str());
                plan::parse_toml(&text, name).map_err(|source: PlanError| {
                    let snippet = source.snippet(&text);
                    (
                        PlanFileError::Parse {
                            path: path.to_path_buf(),
                            source,
                        }
                        .to_string(),
                        snippet,
                    )
                })
            }
        },
        (None, Some(text)) => {
            source_text = text.to_string();
            plan::parse_line(text)
                .map(|steps| Plan {
                    title: "Plan from --line".to_string(),
                    purpose: String::new(),
                    date: None,
                    steps,
                })
                .map_err(|e| (e.to_string(), e.snippet(text)))
        }
        _ => Err((
            "give a plan FILE or --line TEXT (one of them)".to_string(),
            None,
        )),
    };
    let plan = match parsed {
        Ok(p) => p,
        Err((message, snippet)) => {
            report(&message, snippet);
            if json {
                super::out::json_error(&message, 2, serde_json::Value::Null)?;
            }
            return Ok(2);
        }
    };
    if let Some(k) = &known {
        let unknown = plan::unknown_paces(&plan, &k.profile, &source_text);
        if !unknown.is_empty() {
            let at = match file {
                Some(p) => format!("{}: ", p.display()),
                None => "--line: ".to_string(),
            };
            let messages: Vec<String> = unknown
                .iter()
                .map(|u| format!("{at}{}", u.message(&k.profile)))
                .collect();
            for m in &messages {
                report(m, None);
            }
            if json {
                super::out::json_error(
                    &messages.join("; "),
                    2,
                    serde_json::json!({ "errors": messages }),
                )?;
            }
            let mut err = super::out::stderr();
            for p in &k.problems {
                let _ = writeln!(
                    err,
                    "note: {}",
                    printable(&format!("{}: {p}", k.profile_path.display()))
                );
            }
            return Ok(2);
        }
    }
    if json {
        let doc = CheckOutput {
            plan: &plan,
            expanded: plan.expand(),
        };
        super::out::json(&doc)?;
    } else {
        let mut out = super::out::stdout();
        write!(out, "{}", plan::format_expanded(&plan, None))?;
        if file.is_some() {
            writeln!(out, "\nas shorthand: {}", plan::describe_line(&plan.steps))?;
        }
        if let Some(k) = &known {
            writeln!(
                out,
                "paces checked against {}",
                printable(&k.profile_path.display().to_string())
            )?;
        }
    }
    Ok(0)
}
