//! Frame render benchmark: one frame of a 3-hour session at 200x60 (roster, chart with two
//! rulers, interval table) drawn into a `TestBackend`.

use std::hint::black_box;
use std::path::Path;

use chrono::{TimeZone, Utc};
use criterion::{criterion_group, criterion_main, Criterion};
use crossterm::event::{Event, KeyCode, KeyEvent, KeyModifiers};
use ratatui::backend::TestBackend;
use ratatui::Terminal;
use splitdesk::demo::fit_writer;
use splitdesk::demo::simulate::{simulate, SimInput};
use splitdesk::journal::Journal;
use splitdesk::model::Units;
use splitdesk::roster::{parse_profile, Roster};
use splitdesk::tui::app::{App, Effect, Focus, Options};
use splitdesk::tui::event::AppEvent;
use splitdesk::tui::keymap::KeyMap;
use splitdesk::tui::theme::Theme;
use splitdesk::tui::ui;
use splitdesk::worker::{run_job, Done};

const PROFILE: &str = "name = \"Bench Runner\"\nhr_max = 188\nhr_rest = 48\nthreshold_pace = \"4:10/km\"\n[paces]\neasy = \"5:20/km\"\nmarathon = \"4:30/km\"\n";
const PLAN: &str = "title = \"Long marathon-pace session\"\npurpose = \"Marathon pace on tired legs\"\nsteps = \"30:00 easy; 10 x 10:00 @ marathon / 3:00 jog; 20:00 easy\"\n";

fn build(root: &Path) {
    let dir = root.join("bench-runner");
    std::fs::create_dir_all(dir.join("plans")).expect("mkdir");
    std::fs::create_dir_all(dir.join("activities")).expect("mkdir");
    std::fs::write(dir.join("athlete.toml"), PROFILE).expect("write");
    let plan_path = dir.join("plans/2024-05-04-long.toml");
    std::fs::write(&plan_path, PLAN).expect("write");
    let plan = splitdesk::plan::load(&plan_path).expect("plan");
    let profile = parse_profile(PROFILE, "bench-runner", Units::Km).expect("profile");
    let mut input = SimInput::new(profile, plan, 5);
    input.start = Utc
        .with_ymd_and_hms(2024, 5, 4, 6, 30, 0)
        .single()
        .expect("date");
    let out = simulate(&input);
    std::fs::write(
        dir.join("activities/2024-05-04-long.fit"),
        fit_writer::write(&out.session),
    )
    .expect("write");
}

fn run(app: &mut App, effects: Vec<Effect>) {
    let mut q: std::collections::VecDeque<Effect> = effects.into();
    while let Some(e) = q.pop_front() {
        if let Effect::Submit { job, .. } = e {
            let done = Done {
                generation: job.generation,
                kind: job.kind,
                session_id: job.session_id(),
                outcome: run_job(&job),
            };
            q.extend(app.handle(AppEvent::Worker(done)));
        }
    }
}

fn key(app: &mut App, code: KeyCode) {
    let fx = app.handle(AppEvent::Input(Event::Key(KeyEvent::new(
        code,
        KeyModifiers::NONE,
    ))));
    run(app, fx);
}

fn bench_frame(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("tempdir");
    build(dir.path());
    let roster = Roster::open(dir.path()).expect("roster");
    let journal = Journal::open_in_memory().expect("journal");
    let mut app = App::new(
        roster,
        journal,
        Options {
            keymap: KeyMap::default(),
            theme: Theme::colour(),
            feedback_dir: None,
        },
    );
    app.size = (200, 60);
    let fx = app.start_scan();
    run(&mut app, fx);
    let fx = app.open_session("bench-runner/2024-05-04-long");
    run(&mut app, fx);
    while app.focus != Focus::Chart {
        key(&mut app, KeyCode::Tab);
    }
    let mut at = 0;
    for (a, b) in [(20, 60), (80, 140)] {
        while at < a {
            key(&mut app, KeyCode::Right);
            at += 1;
        }
        key(&mut app, KeyCode::Char('r'));
        while at < b {
            key(&mut app, KeyCode::Right);
            at += 1;
        }
        key(&mut app, KeyCode::Char('r'));
    }
    assert_eq!(app.open.as_ref().map(|o| o.rulers.len()), Some(2));
    let mut term = Terminal::new(TestBackend::new(200, 60)).expect("terminal");
    c.bench_function("frame_3h_session_200x60_two_rulers", |b| {
        b.iter(|| {
            term.draw(|f| ui::draw(f, black_box(&app))).expect("draw");
        })
    });
}

/// Start to the first usable frame with a warm journal on the demo roster: open the roster
/// and the journal (every session already analysed and cached), build the app (lists,
/// counts, the selected athlete's cached reviews) and draw the first frame at 160x48.
/// Process start and terminal set-up are not in this figure; see BENCHMARKS.md for the
/// whole-process measurement.
fn bench_startup(c: &mut Criterion) {
    let roster_dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let dir = tempfile::tempdir().expect("tempdir");
    let journal_path = dir.path().join("journal.sqlite");
    {
        // Warm the journal the way the workstation's scan does.
        let mut ws = splitdesk::workspace::Workspace::open(&roster_dir, Some(&journal_path))
            .expect("workspace");
        let ids: Vec<String> = ws
            .roster
            .athletes
            .iter()
            .flat_map(|a| a.activities.iter().map(|x| a.session_id(x)))
            .collect();
        for id in ids {
            // The demo roster holds one damaged file on purpose; it stays unanalysed.
            let _ = ws.refresh(&id, Utc::now());
        }
    }
    c.bench_function("startup_warm_journal_demo_first_frame_160x48", |b| {
        b.iter(|| {
            let ws = splitdesk::workspace::Workspace::open(&roster_dir, Some(&journal_path))
                .expect("workspace");
            let mut app = App::new(
                ws.roster,
                ws.journal,
                Options {
                    keymap: KeyMap::default(),
                    theme: Theme::colour(),
                    feedback_dir: None,
                },
            );
            app.size = (160, 48);
            let mut term = Terminal::new(TestBackend::new(160, 48)).expect("terminal");
            term.draw(|f| ui::draw(f, black_box(&app))).expect("draw");
            black_box(term);
        })
    });
}

criterion_group!(benches, bench_frame, bench_startup);
criterion_main!(benches);
