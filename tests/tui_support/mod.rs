//! A tiny roster for the workstation tests: simulated sessions written as FIT files, athlete
//! profiles, plan files and one notes file with a recognisable sentence.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

use chrono::{TimeZone, Utc};
use crossterm::event::{Event, KeyCode, KeyEvent, KeyModifiers};
use splitdesk::demo::fit_writer;
use splitdesk::demo::simulate::{simulate, SimInput};
use splitdesk::journal::Journal;
use splitdesk::model::AthleteProfile;
use splitdesk::model::Units;
use splitdesk::roster::parse_profile;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Effect, Options};
use splitdesk::tui::event::AppEvent;
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use splitdesk::worker::run_job;

/// The athlete's note on the interval session: must never be on screen before the reveal.
pub const SECRET_NOTE: &str = "Legs felt like lead after the third one, stomach was off.";

/// The interval session's id.
pub const INTERVALS: &str = "ines-aldana/2024-03-04-intervals";
/// The easy run's id.
pub const EASY: &str = "ines-aldana/2024-03-02-easy";
/// The other athlete's long run.
pub const LONG: &str = "marco-bell/2024-03-03-long";

const INES: &str = r#"name = "Ines Aldana"
sex = "female"
birth_year = 1991
hr_max = 190
hr_rest = 50
threshold_pace = "4:10/km"
units = "km"
[paces]
easy = "5:15/km"
marathon = "4:35/km"
10k = "4:02/km"
5k = "3:50/km"
"#;

const MARCO: &str = r#"name = "Marco Bell"
sex = "male"
birth_year = 1984
hr_max = 184
hr_rest = 52
threshold_pace = "6:50/mi"
units = "mi"
[paces]
easy = "8:45/mi"
marathon = "7:30/mi"
"#;

fn write(path: &Path, text: impl AsRef<[u8]>) {
    if let Some(d) = path.parent() {
        std::fs::create_dir_all(d).expect("mkdir");
    }
    std::fs::write(path, text).expect("write");
}

#[allow(clippy::too_many_arguments)]
fn session(
    root: &Path,
    athlete: &str,
    profile_text: &str,
    stem: &str,
    plan_text: &str,
    with_plan_file: bool,
    start_hour: (i32, u32, u32, u32),
    seed: u64,
) {
    let dir = root.join(athlete);
    let plan_path = dir.join("plans").join(format!("{stem}.toml"));
    write(&plan_path, plan_text);
    let plan = splitdesk::plan::load(&plan_path).expect("plan");
    if !with_plan_file {
        std::fs::remove_file(&plan_path).expect("rm plan");
    }
    let profile: AthleteProfile = parse_profile(profile_text, athlete, Units::Km).expect("profile");
    let mut input = SimInput::new(profile, plan, seed);
    let (y, m, d, h) = start_hour;
    input.start = Utc
        .with_ymd_and_hms(y, m, d, h, 0, 0)
        .single()
        .expect("date");
    let out = simulate(&input);
    write(
        &dir.join("activities").join(format!("{stem}.fit")),
        fit_writer::write(&out.session),
    );
}

/// Build the roster in `root` (two athletes, three sessions). Returns the root.
pub fn build_roster(root: &Path) -> PathBuf {
    write(&root.join("roster.toml"), "name = \"Test club\"\n");
    write(&root.join("ines-aldana/athlete.toml"), INES);
    write(&root.join("marco-bell/athlete.toml"), MARCO);
    session(
        root,
        "ines-aldana",
        INES,
        "2024-03-04-intervals",
        "title = \"5 x 3 min\"\npurpose = \"Speed endurance: hold 5k pace on every repeat\"\nsteps = \"10:00 easy; 5 x 3:00 @ 5k / 2:00 jog; 8:00 easy\"\n",
        true,
        (2024, 3, 4, 7),
        7,
    );
    write(
        &root.join("ines-aldana/notes/2024-03-04-intervals.txt"),
        format!("{SECRET_NOTE}\n"),
    );
    session(
        root,
        "ines-aldana",
        INES,
        "2024-03-02-easy",
        "title = \"Easy\"\npurpose = \"recovery\"\nsteps = \"40:00 easy\"\n",
        false,
        (2024, 3, 2, 8),
        3,
    );
    session(
        root,
        "marco-bell",
        MARCO,
        "2024-03-03-long",
        "title = \"Long run\"\npurpose = \"Aerobic endurance at easy pace\"\nsteps = \"60:00 easy\"\n",
        true,
        (2024, 3, 3, 9),
        11,
    );
    root.to_path_buf()
}

/// Write the test roster to `$SPLITDESK_TEST_ROSTER` (for trying the binary by hand).
pub fn write_roster_from_env() {
    if let Ok(dir) = std::env::var("SPLITDESK_TEST_ROSTER") {
        build_roster(Path::new(&dir));
    }
}

/// An app on a fresh test roster with an in-memory journal, every session scanned.
pub fn app_with(dir: &std::path::Path) -> App {
    build_roster(dir);
    let roster = Roster::open(dir).expect("roster");
    let journal = Journal::open_in_memory().expect("journal");
    scanned_app(roster, journal, Some(dir.join("feedback-out")))
}

/// An app on `roster` and `journal` (default keys, plain theme, 160x48), every session
/// scanned.
pub fn scanned_app(roster: Roster, journal: Journal, feedback_dir: Option<PathBuf>) -> App {
    let mut app = App::new(
        roster,
        journal,
        Options {
            keymap: KeyMap::default(),
            theme: Theme::plain(),
            feedback_dir,
        },
    );
    app.size = (160, 48);
    let effects = app.start_scan();
    run_effects(&mut app, effects);
    app
}

/// Carry out effects synchronously (jobs run on this thread).
pub fn run_effects(app: &mut App, effects: Vec<Effect>) -> Vec<Effect> {
    let mut other = Vec::new();
    let mut queue: std::collections::VecDeque<Effect> = effects.into();
    while let Some(e) = queue.pop_front() {
        match e {
            Effect::Submit { job, .. } => {
                let done = splitdesk::worker::Done {
                    generation: job.generation,
                    kind: job.kind,
                    session_id: job.session_id(),
                    outcome: run_job(&job),
                };
                queue.extend(app.handle(AppEvent::Worker(done)));
            }
            Effect::DropStaleOpens(_) => {}
            e => other.push(e),
        }
    }
    other
}

pub fn key(app: &mut App, code: KeyCode) -> Vec<Effect> {
    let e = app.handle(AppEvent::Input(Event::Key(KeyEvent::new(
        code,
        KeyModifiers::NONE,
    ))));
    run_effects(app, e)
}

pub fn ch(app: &mut App, c: char) -> Vec<Effect> {
    key(app, KeyCode::Char(c))
}

pub fn message(app: &App) -> String {
    app.message
        .as_ref()
        .map(|m| m.text.clone())
        .unwrap_or_default()
}

pub fn open_intervals(app: &mut App) {
    let fx = app.open_session(INTERVALS);
    run_effects(app, fx);
    let o = app.open.as_ref().expect("open");
    assert_eq!(o.work_count(), 5, "five work intervals found");
}

pub fn grade_and_reveal(app: &mut App) {
    open_intervals(app);
    for c in ['3', '3', '4', '4', '2'] {
        ch(app, c);
    }
    ch(app, 'v');
    ch(app, 'o');
    key(app, KeyCode::Esc);
}

/// Draw the app at a size and return the screen as text, one line per row.
pub fn screen(app: &mut App, w: u16, h: u16) -> String {
    app.size = (w, h);
    let mut term =
        ratatui::Terminal::new(ratatui::backend::TestBackend::new(w, h)).expect("terminal");
    term.draw(|f| splitdesk::tui::ui::draw(f, app))
        .expect("draw");
    let buf = term.backend().buffer().clone();
    let mut out = String::new();
    for y in 0..h {
        for x in 0..w {
            if let Some(c) = buf.cell((x, y)) {
                out.push_str(c.symbol());
            }
        }
        out.push('\n');
    }
    out
}

// ----- reading the verdict pane -----

/// The verdict pane's inner rows on screen (between its borders).
pub fn pane_rows(text: &str) -> Vec<String> {
    let lines: Vec<&str> = text.lines().collect();
    let Some(top) = lines.iter().position(|l| l.contains("╭ Verdict")) else {
        return Vec::new();
    };
    let at = lines[top].find("╭ Verdict").unwrap_or(0);
    let col = lines[top][..at].chars().count();
    lines[top + 1..]
        .iter()
        .take_while(|l| l.chars().nth(col).is_none_or(|c| c != '╰'))
        .map(|l| {
            let chars: Vec<char> = l.chars().skip(col + 1).collect();
            let end = chars.iter().rposition(|c| *c == '│').unwrap_or(chars.len());
            chars[..end]
                .iter()
                .collect::<String>()
                .trim_end()
                .to_string()
        })
        .collect()
}

/// Every row of the verdict document, read by scrolling it page by page from the top.
pub fn whole_document(app: &mut App) -> Vec<String> {
    let (w, h) = app.size;
    ch(app, 'g');
    let mut rows: Vec<Option<String>> = Vec::new();
    let mut pages = 0;
    loop {
        let top = app.open.as_ref().unwrap().verdict.scroll;
        for (i, r) in pane_rows(&screen(app, w, h)).into_iter().enumerate() {
            if rows.len() <= top + i {
                rows.resize(top + i + 1, None);
            }
            rows[top + i] = Some(r);
        }
        key(app, KeyCode::PageDown);
        pages += 1;
        let after = app.open.as_ref().unwrap().verdict.scroll;
        if after == top || pages > 200 {
            break;
        }
    }
    assert!(rows.iter().all(Option::is_some), "every row was shown");
    rows.into_iter().flatten().collect()
}

/// Words joined by single spaces.
pub fn words(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}
