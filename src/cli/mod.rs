//! Headless commands: human tables or `--json`, no terminal UI.
//!
//! Every command prints errors as one line `error: PATH: reason` on stderr and returns
//! a non-zero exit code; nothing here panics on bad input.

// Inside `cli`, the printing macros write through `out::Safe`: roster text in human output
// cannot carry escape sequences to the coach's terminal (see `out`). They shadow std's
// macros for every module declared below.
macro_rules! print {
    ($($arg:tt)*) => { $crate::cli::out::print_text(::std::format_args!($($arg)*)) };
}
macro_rules! println {
    () => { $crate::cli::out::print_text(::std::format_args!("\n")) };
    ($($arg:tt)*) => {
        $crate::cli::out::print_text(::std::format_args!("{}\n", ::std::format_args!($($arg)*)))
    };
}
#[allow(unused_macros)]
macro_rules! eprint {
    ($($arg:tt)*) => { $crate::cli::out::eprint_text(::std::format_args!($($arg)*)) };
}
macro_rules! eprintln {
    () => { $crate::cli::out::eprint_text(::std::format_args!("\n")) };
    ($($arg:tt)*) => {
        $crate::cli::out::eprint_text(::std::format_args!("{}\n", ::std::format_args!($($arg)*)))
    };
}

pub mod agreement_cmd;
mod analyze;
mod check;
mod compare_cmd;
mod demo_cmd;
pub mod index_cmd;
mod inspect;
pub mod out;
pub mod plan_cmd;
mod review_cmds;
mod review_text;
mod staff_cmd;
mod trends_cmd;
mod week_cmd;

use std::path::PathBuf;

use clap::{Parser, Subcommand};

/// splitdesk: the running coach's daily review, in the terminal.
#[derive(Debug, Parser)]
#[command(name = "splitdesk", version, about, long_about = None)]
pub struct Cli {
    /// Roster folder (default: the config file's `roster`, else the bundled demo roster).
    #[arg(long, global = true, value_name = "DIR")]
    pub roster: Option<PathBuf>,
    /// Journal: a SQLite file, or a PostgreSQL server shared by a staff
    /// (postgres://user@host/database; the password from PGPASSWORD or the password file).
    /// Default: $SPLITDESK_JOURNAL, the config file, else one file per roster in the
    /// platform data directory.
    #[arg(long, global = true, value_name = "PATH|URL")]
    pub journal: Option<PathBuf>,
    /// On a journal shared by a staff: the coach you are (default: $SPLITDESK_COACH, else
    /// `name` under [coach] in the config file).
    #[arg(long = "as", global = true, value_name = "COACH")]
    pub as_coach: Option<String>,
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
    /// Scan the roster into its journal on every core (a cold start made ahead); files
    /// unchanged since the last scan are not read.
    Index {
        /// Roster folder (default: --roster, the config file, else the demo roster).
        #[arg(value_name = "ROSTER")]
        dir: Option<PathBuf>,
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
    /// Sessions not yet reviewed, oldest first (the daily queue).
    Queue {
        /// Only this athlete (id, e.g. mara-lindqvist).
        #[arg(long)]
        athlete: Option<String>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Grade a session blind: a score 1-5 per work interval and the purpose verdict.
    /// After the notes were revealed, a change is kept as a revision beside the blind grade.
    Grade {
        /// Session id: <athlete-id>/<activity-file-stem>.
        session: String,
        /// Work interval N gets score S (1-5); repeat for each interval, e.g. --score 1=4 --score 2=3.
        #[arg(long = "score", value_name = "N=S")]
        scores: Vec<String>,
        /// Did the session serve its purpose: met, partly or missed.
        #[arg(long, value_name = "met|partly|missed")]
        verdict: Option<String>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// The athlete's note, once every work interval is scored and the verdict set (exit 3 before).
    Notes {
        /// Session id: <athlete-id>/<activity-file-stem>.
        session: String,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Mark a session seen: looked at, no grade. It leaves the queue and its notes stay
    /// hidden; counted apart in the queue and the bias check. --undo brings it back.
    Seen {
        /// Session id: <athlete-id>/<activity-file-stem>.
        session: String,
        /// Bring the session back to the queue.
        #[arg(long)]
        undo: bool,
        #[arg(long)]
        json: bool,
    },
    /// The feedback for a session: the saved text, or the draft built from the findings.
    Feedback {
        /// Session id: <athlete-id>/<activity-file-stem>.
        session: String,
        /// Print the draft built from the findings (ignoring saved text).
        #[arg(long, conflicts_with_all = ["set", "edit"])]
        draft: bool,
        /// Save the feedback text from FILE (after the reveal).
        #[arg(long, value_name = "FILE", conflicts_with = "edit")]
        set: Option<PathBuf>,
        /// Edit the feedback in $EDITOR and save it (after the reveal).
        #[arg(long)]
        edit: bool,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Feedback, interval tables and charts, ready to paste or attach.
    #[command(subcommand)]
    Export(ExportCommand),
    /// How often and how far grades moved after reading the notes, against the notes' tone.
    /// Tone is a simple word-list measure (positive minus negative words, negations flip).
    BiasCheck {
        /// Only this athlete (id, e.g. mara-lindqvist).
        #[arg(long)]
        athlete: Option<String>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// The session beside its earlier runs of the same workout: per-rep pace, heart rate,
    /// relative intensity and recovery trough side by side, the change in words and the
    /// pace at a fixed heart rate across them (from the journal; no file is read again).
    Compare {
        /// A session id (`athlete-id/file-stem`).
        session: String,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// An athlete's history: weekly volume, load, efficiency, long runs, best efforts,
    /// critical speed and predicted race times.
    Trends {
        /// Athlete id, e.g. mara-lindqvist.
        athlete: String,
        /// ISO weeks to show, the current one last (default 12).
        #[arg(long)]
        weeks: Option<u32>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// The week around a session or a day: each day's sessions, planned sessions missed,
    /// sessions without a plan, the week's load against the four weeks before.
    Week {
        /// A session id (<athlete-id>/<activity-file-stem>) or an athlete id.
        #[arg(value_name = "SESSION|ATHLETE")]
        what: String,
        /// The day to centre an athlete's week on (YYYY-MM-DD; default today).
        #[arg(long)]
        date: Option<String>,
        /// Print JSON (`splitdesk.week/1`) instead of text.
        #[arg(long)]
        json: bool,
    },
    /// The coach's journal: backup, integrity check, copy between SQLite and PostgreSQL.
    #[command(subcommand)]
    Journal(JournalCommand),
    /// A coaching staff sharing one journal: its coaches and whom each coaches.
    #[command(subcommand)]
    Staff(StaffCommand),
    /// How closely the staff's coaches agree in their blind interval scores: weighted
    /// kappa (quadratic weights) per pair and overall, and the intervals scored 2+ apart.
    Agreement {
        /// Only these coaches (repeat: --coach A --coach B; default: every coach).
        #[arg(long = "coach", value_name = "NAME")]
        coaches: Vec<String>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Print shell completions (bash, zsh, fish, elvish, powershell).
    Completions { shell: clap_complete::Shell },
    /// Write the demo roster (an invented club, six invented athletes) into a folder.
    Demo {
        /// Output folder: new, empty, or a previous demo roster (which is replaced).
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// Simulation seed; the same seed gives byte-identical files.
        #[arg(long, default_value_t = crate::demo::scenario::DEFAULT_SEED)]
        seed: u64,
        /// Write a scale roster for benchmarks instead: this many athletes (copies of the
        /// demo athletes under new ids; 6 when only --weeks is given).
        #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..=crate::demo::scale::MAX_ATHLETES as u64))]
        athletes: Option<u64>,
        /// Scale roster: this many weeks, ending on the demo's last day (6 when only
        /// --athletes is given).
        #[arg(long, value_name = "W", value_parser = clap::value_parser!(u32).range(1..=crate::demo::scale::MAX_WEEKS as i64))]
        weeks: Option<u32>,
    },
    /// Print the man page (roff) generated from this command line.
    Man,
}

#[derive(Debug, Subcommand)]
pub enum ExportCommand {
    /// Feedback of reviewed sessions, one block per session; with --date, one message per
    /// athlete holding the sessions of that day in order.
    Feedback {
        /// The day's messages (YYYY-MM-DD): one per athlete, that day's sessions in order.
        #[arg(long, conflicts_with = "since")]
        date: Option<String>,
        /// Only this athlete (id, e.g. mara-lindqvist).
        #[arg(long)]
        athlete: Option<String>,
        /// Sessions from this day on (YYYY-MM-DD).
        #[arg(long)]
        since: Option<String>,
        #[arg(long, default_value = "text", value_name = "text|md|json")]
        format: String,
    },
    /// One CSV row per interval with the analysis columns and the scores.
    Intervals {
        /// Only this athlete (id, e.g. mara-lindqvist).
        #[arg(long)]
        athlete: Option<String>,
        /// Sessions from this day on (YYYY-MM-DD).
        #[arg(long)]
        since: Option<String>,
        /// CSV output (the only format).
        #[arg(long, required = true)]
        csv: bool,
    },
    /// The session's pace and HR traces with interval bands and the coach's rulers.
    Chart {
        /// Session id: <athlete-id>/<activity-file-stem>.
        session: String,
        /// Output file: .svg or .png.
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
    },
}

#[derive(Debug, Subcommand)]
pub enum JournalCommand {
    /// Copy the journal to a new SQLite FILE (never overwrites): SQLite's online backup, or
    /// for a server journal a verified copy.
    Backup { file: PathBuf },
    /// Copy every record of journal FROM into TO, a new SQLite file or an empty PostgreSQL
    /// database, and verify it (row counts and a hash of grades, revisions and feedback).
    Copy {
        /// The journal to copy: a SQLite file or a postgres:// address.
        from: PathBuf,
        /// Where to: a new SQLite file or a postgres:// address of an empty database.
        to: PathBuf,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Run SQLite's integrity checks and count what the journal holds.
    Check {
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
}

#[derive(Debug, Subcommand)]
pub enum StaffCommand {
    /// Add a coach to the staff (the first one added takes over the reviews made so far).
    Add { name: String },
    /// List the coaches, whom each coaches and how many reviews each began.
    List {
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Take a coach off the staff (their reviews stay; their athletes become unassigned).
    Remove { name: String },
    /// Assign an athlete (id, e.g. mara-lindqvist) to a coach of the staff.
    Assign { athlete: String, coach: String },
    /// Leave an athlete without an assigned coach.
    Unassign { athlete: String },
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
        /// Check pace names against this athlete (an athlete folder or its athlete.toml).
        /// A plan file inside a roster athlete folder is checked against its athlete anyway.
        #[arg(long, value_name = "PATH")]
        athlete: Option<PathBuf>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
}

/// Whether the command line asked for JSON (`--json`, or `--format json` for an export).
fn wants_json(cmd: Option<&Command>) -> bool {
    match cmd {
        Some(
            Command::Inspect { json, .. }
            | Command::Check { json, .. }
            | Command::Analyze { json, .. }
            | Command::Queue { json, .. }
            | Command::Grade { json, .. }
            | Command::Notes { json, .. }
            | Command::Feedback { json, .. }
            | Command::BiasCheck { json, .. }
            | Command::Trends { json, .. }
            | Command::Compare { json, .. }
            | Command::Week { json, .. }
            | Command::Plan(PlanCommand::Check { json, .. })
            | Command::Journal(JournalCommand::Check { json })
            | Command::Journal(JournalCommand::Copy { json, .. })
            | Command::Staff(StaffCommand::List { json })
            | Command::Agreement { json, .. },
        ) => *json,
        Some(Command::Export(ExportCommand::Feedback { format, .. })) => format == "json",
        _ => false,
    }
}

/// Run a parsed command line; returns the process exit code. With `--json`, a command that
/// fails also prints its error as a JSON object on stdout (see [`out::json_error`]); the
/// error line on stderr and the exit code stay as they are.
pub fn run(cli: Cli) -> anyhow::Result<i32> {
    let json = wants_json(cli.command.as_ref());
    let result = run_command(cli);
    if json {
        if let Err(e) = &result {
            out::json_error(&out::error_text(e), 2, serde_json::Value::Null)?;
        }
    }
    result
}

fn run_command(cli: Cli) -> anyhow::Result<i32> {
    let config = crate::config::load()?;
    crate::ingest::set_limits(config.ingest_limits());
    match cli.command {
        None => crate::tui::run(
            &crate::config::resolve_roster(cli.roster.as_deref(), &config),
            cli.journal.as_deref(),
            crate::config::resolve_coach(cli.as_coach.as_deref(), &config).as_deref(),
            &config,
        ),
        Some(Command::Inspect { files, json }) => inspect::run(&files, json),
        Some(Command::Check { dir, json }) => {
            let root = dir
                .unwrap_or_else(|| crate::config::resolve_roster(cli.roster.as_deref(), &config));
            check::run(&root, json)
        }
        Some(Command::Index { dir }) => {
            let root = dir
                .unwrap_or_else(|| crate::config::resolve_roster(cli.roster.as_deref(), &config));
            let journal = crate::config::resolve_journal(cli.journal.as_deref(), &config);
            index_cmd::run(&root, journal.as_deref())
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
        Some(Command::Plan(PlanCommand::Check {
            file,
            line,
            athlete,
            json,
        })) => plan_cmd::run_check(file.as_deref(), line.as_deref(), athlete.as_deref(), json),
        Some(Command::Completions { shell }) => {
            let mut cmd = <Cli as clap::CommandFactory>::command();
            clap_complete::generate(shell, &mut cmd, "splitdesk", &mut std::io::stdout());
            Ok(0)
        }
        Some(Command::Demo {
            out,
            seed,
            athletes,
            weeks,
        }) => {
            let scale = (athletes.is_some() || weeks.is_some()).then(|| demo_cmd::Scale {
                athletes: athletes.map_or(6, |n| n as usize),
                weeks: weeks.unwrap_or(6),
            });
            demo_cmd::run(&out, seed, scale)
        }
        Some(Command::Man) => {
            let cmd = <Cli as clap::CommandFactory>::command();
            clap_mangen::Man::new(cmd).render(&mut std::io::stdout())?;
            Ok(0)
        }
        Some(cmd) => {
            let roster = crate::config::resolve_roster(cli.roster.as_deref(), &config);
            let journal = crate::config::resolve_journal(cli.journal.as_deref(), &config);
            let coach = crate::config::resolve_coach(cli.as_coach.as_deref(), &config);
            let (style, problems) = config.feedback_style();
            for p in &problems {
                eprintln!("warning: {p}");
            }
            run_with_journal(cmd, &roster, journal.as_deref(), coach.as_deref(), &style)
        }
    }
}

/// The commands that need the roster's journal.
fn run_with_journal(
    cmd: Command,
    roster: &std::path::Path,
    journal: Option<&std::path::Path>,
    coach: Option<&str>,
    style: &crate::export::feedback::FeedbackStyle,
) -> anyhow::Result<i32> {
    use review_cmds as rc;
    // Copying names both journals itself.
    if let Command::Journal(JournalCommand::Copy { from, to, json }) = &cmd {
        return staff_cmd::copy(from, to, *json);
    }
    // Checking and backing up the journal take it as it is: no sync first, so they work
    // whatever the roster or the analysis cache hold. The staff list is about the staff,
    // not one coach: no coach needed. The agreement between coaches shows blind scores, so
    // it is asked for as a coach, and shows only what that coach may see.
    match &cmd {
        Command::Journal(jc) => {
            let ws = rc::open_noting_read_only(roster, journal)?;
            return match jc {
                JournalCommand::Backup { file } => rc::journal_backup(&ws, file),
                JournalCommand::Check { json } => rc::journal_check(&ws, *json),
                JournalCommand::Copy { from, to, json } => staff_cmd::copy(from, to, *json),
            };
        }
        Command::Staff(sc) => {
            let mut ws = rc::open_noting_read_only(roster, journal)?;
            let action = match sc {
                StaffCommand::Add { name } => staff_cmd::StaffAction::Add(name),
                StaffCommand::List { json } => staff_cmd::StaffAction::List { json: *json },
                StaffCommand::Remove { name } => staff_cmd::StaffAction::Remove(name),
                StaffCommand::Assign { athlete, coach } => {
                    staff_cmd::StaffAction::Assign { athlete, coach }
                }
                StaffCommand::Unassign { athlete } => staff_cmd::StaffAction::Unassign(athlete),
            };
            return staff_cmd::staff(&mut ws, action);
        }
        Command::Agreement { coaches, json } => {
            let mut ws = rc::open_noting_read_only(roster, journal)?;
            ws.act_as(coach)?;
            return staff_cmd::agreement(&ws, coaches, *json);
        }
        _ => {}
    }
    // `trends` is about one athlete: only its folder is read and its sessions synced.
    let only = match &cmd {
        Command::Trends { athlete, .. } => Some(athlete.as_str()),
        _ => None,
    };
    let (mut ws, damaged) = rc::open_synced(roster, journal, only, coach)?;
    // Files that cannot be read are named where they matter: in the queue, and to a
    // command about their session or athlete; `check` lists every one.
    let concern = match &cmd {
        Command::Queue { athlete: None, .. } => rc::Concern::All,
        Command::Queue {
            athlete: Some(a), ..
        }
        | Command::Trends { athlete: a, .. } => rc::Concern::Athlete(a),
        Command::Grade { session, .. }
        | Command::Notes { session, .. }
        | Command::Feedback { session, .. }
        | Command::Compare { session, .. }
        | Command::Export(ExportCommand::Chart { session, .. }) => rc::Concern::Session(session),
        Command::Week { what, .. } => match week_cmd::target(what) {
            week_cmd::Target::Session(s) => rc::Concern::Session(s),
            week_cmd::Target::Athlete(a) => rc::Concern::Athlete(a),
        },
        _ => rc::Concern::Nothing,
    };
    rc::say_sync_problems(&damaged, concern);
    match cmd {
        Command::Queue { athlete, json } => rc::queue(&mut ws, athlete.as_deref(), json),
        Command::Grade {
            session,
            scores,
            verdict,
            json,
        } => {
            let scores = rc::parse_scores(&scores)?;
            rc::grade(&mut ws, &session, &scores, verdict.as_deref(), json)
        }
        Command::Notes { session, json } => rc::notes(&mut ws, &session, json),
        Command::Seen {
            session,
            undo,
            json,
        } => rc::seen(&mut ws, &session, undo, json),
        Command::Feedback {
            session,
            draft,
            set,
            edit,
            json,
        } => {
            let action = match (draft, set, edit) {
                (true, _, _) => rc::FeedbackAction::Draft,
                (_, Some(f), _) => rc::FeedbackAction::Set(f),
                (_, _, true) => rc::FeedbackAction::Edit,
                _ => rc::FeedbackAction::Show,
            };
            rc::feedback(&mut ws, &session, action, json, style)
        }
        Command::Export(ExportCommand::Feedback {
            date,
            athlete,
            since,
            format,
        }) => {
            let filter = rc::Filter {
                athlete,
                date: date.map(|d| rc::parse_date("--date", &d)).transpose()?,
                since: since.map(|d| rc::parse_date("--since", &d)).transpose()?,
            };
            rc::export_feedback(&mut ws, &filter, &format, style)
        }
        Command::Export(ExportCommand::Intervals { athlete, since, .. }) => {
            let filter = rc::Filter {
                athlete,
                date: None,
                since: since.map(|d| rc::parse_date("--since", &d)).transpose()?,
            };
            rc::export_intervals(&mut ws, &filter)
        }
        Command::Export(ExportCommand::Chart { session, out }) => {
            rc::export_chart(&mut ws, &session, &out)
        }
        Command::BiasCheck { athlete, json } => rc::bias_check(&mut ws, athlete.as_deref(), json),
        Command::Trends {
            athlete,
            weeks,
            json,
        } => trends_cmd::run(&mut ws, &athlete, weeks, json),
        Command::Compare { session, json } => compare_cmd::run(&ws, &session, json),
        Command::Week { what, date, json } => {
            let date = date.map(|d| rc::parse_date("--date", &d)).transpose()?;
            week_cmd::run(&ws, &what, date, json)
        }
        _ => Ok(0),
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
