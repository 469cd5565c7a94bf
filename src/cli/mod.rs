//! Headless commands: human tables or `--json`, no terminal UI.
//!
//! Every command prints errors as one line `error: PATH: reason` on stderr and returns
//! a non-zero exit code; nothing here panics on bad input.

mod analyze;
mod check;
mod inspect;
pub mod plan_cmd;
mod review_text;

use std::path::PathBuf;

use clap::{Parser, Subcommand};

/// splitdesk: the running coach's daily review, in the terminal.
#[derive(Debug, Parser)]
#[command(name = "splitdesk", version, about, long_about = None)]
pub struct Cli {
    /// Roster folder (default: the config file's `roster`, else the bundled demo roster).
    #[arg(long, global = true, value_name = "DIR")]
    pub roster: Option<PathBuf>,
    /// Journal database (default: one per roster in the platform data directory).
    #[arg(long, global = true, value_name = "PATH")]
    pub journal: Option<PathBuf>,
    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Read recorded session files and print what they hold.
    Inspect {
        /// FIT, TCX or GPX files.
        #[arg(required = true, value_name = "FILE")]
        files: Vec<PathBuf>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Read every file of a roster and list each problem (exit 1 if a file is unreadable).
    Check {
        /// Roster folder (default: --roster, the config file, else the demo roster).
        #[arg(value_name = "ROSTER")]
        dir: Option<PathBuf>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// The objective review of one session: interval table, recoveries, trends, findings.
    Analyze {
        /// A FIT, TCX or GPX file (inside a roster, its athlete and plan are found).
        #[arg(value_name = "FILE")]
        file: PathBuf,
        /// The athlete's profile (`athlete.toml`), when the file is not in a roster.
        #[arg(long, value_name = "ATHLETE_TOML")]
        athlete: Option<PathBuf>,
        /// A plan file to analyse the session against.
        #[arg(long, value_name = "PLAN_TOML", conflicts_with = "plan_line")]
        plan: Option<PathBuf>,
        /// A one-line plan in shorthand.
        #[arg(long, value_name = "TEXT")]
        plan_line: Option<String>,
        /// Print the JSON contract (`splitdesk.analysis/1`) instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Planned workouts.
    #[command(subcommand)]
    Plan(PlanCommand),
}

#[derive(Debug, Subcommand)]
pub enum PlanCommand {
    /// Print the expanded interval sequence of a plan file or a shorthand line, or the error.
    Check {
        /// A plan file (`<athlete>/plans/<date>-<slug>.toml`).
        #[arg(
            value_name = "FILE",
            required_unless_present = "line",
            conflicts_with = "line"
        )]
        file: Option<PathBuf>,
        /// A one-line plan in shorthand, e.g. "12:00 easy; 5 x 3:00 @ half / 2:00 jog; 8:00 easy".
        #[arg(long, value_name = "TEXT")]
        line: Option<String>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
}

/// Run a parsed command line; returns the process exit code.
pub fn run(cli: Cli) -> anyhow::Result<i32> {
    let config = crate::config::load()?;
    match cli.command {
        None => crate::tui::run(
            &crate::config::resolve_roster(cli.roster.as_deref(), &config),
            cli.journal.as_deref(),
            &config,
        ),
        Some(Command::Inspect { files, json }) => inspect::run(&files, json),
        Some(Command::Check { dir, json }) => {
            let root = dir
                .unwrap_or_else(|| crate::config::resolve_roster(cli.roster.as_deref(), &config));
            check::run(&root, json)
        }
        Some(Command::Analyze {
            file,
            athlete,
            plan,
            plan_line,
            json,
        }) => analyze::run(
            &file,
            athlete.as_deref(),
            plan.as_deref(),
            plan_line.as_deref(),
            json,
        ),
        Some(Command::Plan(PlanCommand::Check { file, line, json })) => {
            plan_cmd::run_check(file.as_deref(), line.as_deref(), json)
        }
    }
}

/// A progress bar on stderr; invisible when stderr is not a terminal.
pub(crate) fn progress_bar(len: u64, what: &str) -> indicatif::ProgressBar {
    let bar = indicatif::ProgressBar::with_draw_target(
        Some(len),
        indicatif::ProgressDrawTarget::stderr(),
    );
    if let Ok(style) =
        indicatif::ProgressStyle::with_template("{msg} [{bar:30}] {pos}/{len} {elapsed}")
    {
        bar.set_style(style.progress_chars("=> "));
    }
    bar.set_message(what.to_string());
    bar
}
