//! Frame render benchmark: one frame of a 3-hour session at 200x60 (roster, chart with two
//! rulers, interval table) drawn into a `TestBackend`; start to the first frame on the demo
//! roster; and, on a large roster (the demo athletes copied under new ids), a score key to
//! the next frame and `]` / `[` to the drawn session.
//!
//! The large roster's size: `SPLITDESK_BENCH_COPIES` copies of the six demo athletes
//! (default 6 copies, about 960 sessions; 60 copies give about 9,600). It is built in a
//! temporary folder, warmed (every session analysed into a journal file) and removed after.

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
        b.iter(|| start_and_draw(&roster_dir, &journal_path))
    });
}

/// Copy a folder and everything in it.
fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("mkdir");
    for entry in std::fs::read_dir(from).expect("read dir") {
        let entry = entry.expect("entry");
        let target = to.join(entry.file_name());
        if entry.file_type().expect("type").is_dir() {
            copy_dir(&entry.path(), &target);
        } else {
            std::fs::copy(entry.path(), &target).expect("copy");
        }
    }
}

/// The demo athletes copied `copies` times under new ids (`<id>-<k>`) into `root`.
fn big_roster(root: &Path, copies: usize) {
    std::fs::create_dir_all(root).expect("mkdir");
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    for entry in std::fs::read_dir(&demo).expect("demo roster") {
        let entry = entry.expect("entry");
        let name = entry.file_name().to_string_lossy().into_owned();
        if entry.file_type().expect("type").is_dir() {
            for k in 0..copies {
                copy_dir(&entry.path(), &root.join(format!("{name}-{k:03}")));
            }
        } else {
            std::fs::copy(entry.path(), root.join(&name)).expect("copy");
        }
    }
}

fn copies() -> usize {
    std::env::var("SPLITDESK_BENCH_COPIES")
        .ok()
        .and_then(|v| v.parse().ok())
        .filter(|&n| n > 0)
        .unwrap_or(6)
}

/// The app on the large roster with a warm journal (its own scan run to the end), 160x48.
fn big_app(root: &Path, journal: &Path) -> App {
    let open = || {
        let ws = splitdesk::workspace::Workspace::open(root, Some(journal)).expect("workspace");
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
        let fx = app.start_scan();
        run(&mut app, fx);
        app
    };
    // The first app warms the journal (a cold scan); the second starts warm.
    drop(open());
    open()
}

/// A score key (`3`) on the open session to the next frame, and `]` / `[` (the next or the
/// previous session in the queue) until that session is drawn with its series, on the
/// large roster with a warm journal. The background jobs run on this thread (no hop to a
/// worker), so the figures are the work a key costs, not the event loop's waits; for
/// `queue_step_to_drawn_session` that includes reading the following session ahead (a
/// second analysis, done by a worker in the real loop). `queue_step_read_ahead_to_drawn_session`
/// times only the key and the frame, the read-ahead running after the clock stops. Also:
/// start to the first frame, and the whole warm re-check on one thread.
fn bench_big_roster_keys(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("tempdir");
    let roster = dir.path().join("roster");
    big_roster(&roster, copies());
    let mut app = big_app(&roster, &dir.path().join("journal.sqlite"));
    let sessions = app.roster.activities().count();
    let mut term = Terminal::new(TestBackend::new(160, 48)).expect("terminal");
    // The queue's first session with work intervals to score.
    let with_work = app
        .queue
        .iter()
        .map(|e| e.session_id.clone())
        .collect::<Vec<_>>()
        .into_iter()
        .find(|id| {
            let fx = app.open_session(id);
            run(&mut app, fx);
            app.open.as_ref().is_some_and(|o| o.work_count() > 0)
        })
        .expect("a session with work intervals");
    eprintln!(
        "large roster: {sessions} sessions, {} in the queue; scoring {with_work}",
        app.queue.len()
    );
    let mut g = c.benchmark_group(format!("keys_{sessions}_sessions"));
    g.sample_size(30);
    g.bench_function("score_key_to_frame", |b| {
        b.iter(|| {
            key(&mut app, KeyCode::Char('3'));
            term.draw(|f| ui::draw(f, black_box(&app))).expect("draw");
        })
    });
    // `]` with the next session read ahead (the read-ahead job of the session it opens runs
    // after the clock stops, as it does on a worker while the coach reads): the key to the
    // drawn session with its series, from memory.
    g.bench_function("queue_step_read_ahead_to_drawn_session", |b| {
        b.iter_custom(|iters| {
            let mut took = std::time::Duration::ZERO;
            for _ in 0..iters {
                if app.prefetched().is_none() {
                    // The end of the queue: start again at its first session (untimed).
                    app.open = None;
                    let fx = app.handle(AppEvent::Input(Event::Key(KeyEvent::new(
                        KeyCode::Char(']'),
                        KeyModifiers::NONE,
                    ))));
                    run(&mut app, fx);
                }
                let t = std::time::Instant::now();
                let fx = app.handle(AppEvent::Input(Event::Key(KeyEvent::new(
                    KeyCode::Char(']'),
                    KeyModifiers::NONE,
                ))));
                term.draw(|f| ui::draw(f, black_box(&app))).expect("draw");
                took += t.elapsed();
                assert!(
                    app.open.as_ref().is_some_and(|o| o.analysed.is_some()),
                    "drawn from memory"
                );
                run(&mut app, fx);
            }
            took
        })
    });
    let mut forward = true;
    g.bench_function("queue_step_to_drawn_session", |b| {
        b.iter(|| {
            key(&mut app, KeyCode::Char(if forward { ']' } else { '[' }));
            forward = !forward;
            term.draw(|f| ui::draw(f, black_box(&app))).expect("draw");
        })
    });
    app.focus = Focus::Roster;
    g.bench_function("roster_cursor_down_to_frame", |b| {
        b.iter(|| {
            key(&mut app, KeyCode::Down);
            term.draw(|f| ui::draw(f, black_box(&app))).expect("draw");
        })
    });
    // Start to the first frame on the warm journal: open the roster and the journal, build
    // the app (the lists from the journal's columns), draw 160x48.
    let journal = dir.path().join("journal.sqlite");
    g.sample_size(10);
    g.bench_function("start_to_first_frame_160x48", |b| {
        b.iter(|| start_and_draw(&roster, &journal))
    });
    // The warm re-check after the first frame, all of it on this thread: the jobs asked
    // (one journal query), each job's `stat`, each result handled.
    g.bench_function("warm_recheck_every_session_one_thread", |b| {
        b.iter(|| {
            let fx = app.start_scan();
            run(&mut app, fx);
            assert_eq!(app.progress.done, app.progress.total);
        })
    });
    g.finish();
}

/// Open the roster and its journal, build the app and draw the first 160x48 frame: what a
/// start costs up to the first frame, in process.
fn start_and_draw(roster: &std::path::Path, journal: &std::path::Path) {
    let ws = splitdesk::workspace::Workspace::open(roster, Some(journal)).expect("workspace");
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
}

criterion_group!(benches, bench_frame, bench_startup, bench_big_roster_keys);
criterion_main!(benches);
