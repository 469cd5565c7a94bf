//! `splitdesk plan check FILE | --line TEXT`: parse a plan and print its expanded sequence.

use std::io::Write;
use std::path::Path;

use serde::Serialize;

use crate::model::{ExpectedInterval, Plan};
use crate::plan::{self, PlanError, PlanFileError};

#[derive(Serialize)]
struct CheckOutput<'a> {
    plan: &'a Plan,
    expanded: Vec<ExpectedInterval>,
}

/// One line `error: ...`; a person at a terminal also gets the line with a caret under it.
fn report(message: &str, snippet: Option<String>) {
    use std::io::IsTerminal;
    let mut err = std::io::stderr().lock();
    let _ = writeln!(err, "error: {message}");
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
pub fn run_check(file: Option<&Path>, line: Option<&str>, json: bool) -> anyhow::Result<i32> {
    let parsed: Result<Plan, (String, Option<String>)> = match (file, line) {
        (Some(path), None) => match std::fs::read_to_string(path) {
            Err(source) => Err((
                PlanFileError::Io {
                    path: path.to_path_buf(),
                    source,
                }
                .to_string(),
                None,
            )),
            Ok(text) => {
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
        (None, Some(text)) => plan::parse_line(text)
            .map(|steps| Plan {
                title: "Plan from --line".to_string(),
                purpose: String::new(),
                date: None,
                steps,
            })
            .map_err(|e| (e.to_string(), e.snippet(text))),
        _ => Err((
            "give a plan FILE or --line TEXT (one of them)".to_string(),
            None,
        )),
    };
    let plan = match parsed {
        Ok(p) => p,
        Err((message, snippet)) => {
            report(&message, snippet);
            return Ok(2);
        }
    };
    let mut out = std::io::stdout().lock();
    if json {
        let doc = CheckOutput {
            plan: &plan,
            expanded: plan.expand(),
        };
        serde_json::to_writer_pretty(&mut out, &doc)?;
        writeln!(out)?;
    } else {
        write!(out, "{}", plan::format_expanded(&plan, None))?;
        if file.is_some() {
            writeln!(out, "\nas shorthand: {}", plan::describe_line(&plan.steps))?;
        }
    }
    Ok(0)
}
