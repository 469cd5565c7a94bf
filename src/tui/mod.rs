//! The workstation: a keyboard-driven terminal UI over the roster and the journal.
//!
//! [`run`] sets up the terminal (restored on every exit path: normal quit, error, panic via
//! a panic hook, SIGTERM/SIGHUP via a `signal-hook` flag the event loop checks, and a
//! terminal that hangs up: see [`hangup`]), starts the background workers and runs the
//! event loop. The loop is generic over the ratatui
//! backend and a [`Host`] (terminal events, clipboard, editor), so the whole app can run on
//! a `TestBackend`.
//!
//! State and update live in [`app`]; drawing in [`ui`] and [`panes`] (pure functions of
//! `&App`); keys in [`keymap`] and [`action`].

pub mod action;
pub mod app;
pub mod editor;
pub mod event;
pub mod hangup;
pub mod keymap;
pub mod panes;
pub mod theme;
pub mod ui;

use std::collections::VecDeque;
use std::io::{self, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

use crossterm::event::{DisableBracketedPaste, EnableBracketedPaste, Event};
use crossterm::terminal::{
    disable_raw_mode, enable_raw_mode, EnterAlternateScreen, LeaveAlternateScreen,
};
use crossterm::{cursor, execute};
use ratatui::backend::{Backend, CrosstermBackend};
use ratatui::Terminal;

use crate::config::Config;
use crate::worker::{JobKind, Worker};
use crate::workspace::Workspace;

use app::{App, Effect, Options};
use event::AppEvent;
use keymap::KeyMap;
use theme::Theme;

/// The message when there is no terminal to draw on.
pub const NOT_A_TERMINAL: &str =
    "error: the workstation needs a terminal; use the headless commands (splitdesk --help)";

/// Test only: with this variable set to `1` the workstation panics in the middle of
/// drawing the first frame that shows an open session (the frame is built, not yet
/// flushed), so a test can check that the terminal is restored after a panic. Read once
/// when the workstation starts; without it nothing changes.
pub const PANIC_IN_DRAW_ENV: &str = "SPLITDESK_TEST_PANIC_IN_DRAW";

/// What the test panic says.
pub const PANIC_IN_DRAW_MESSAGE: &str = "test panic in the middle of a draw";

static PANIC_IN_DRAW: AtomicBool = AtomicBool::new(false);

/// Draw one frame (and, under [`PANIC_IN_DRAW_ENV`], panic once a session is open).
fn draw_frame(frame: &mut ratatui::Frame, app: &App) {
    ui::draw(frame, app);
    if app.open.is_some() && PANIC_IN_DRAW.load(Ordering::Relaxed) {
        panic!("{PANIC_IN_DRAW_MESSAGE} ({PANIC_IN_DRAW_ENV}=1)");
    }
}

/// Where `s` writes feedback files: `<data dir>/feedback`, if the platform has one.
pub fn default_feedback_dir() -> Option<PathBuf> {
    directories::ProjectDirs::from("", "", "splitdesk").map(|d| d.data_dir().join("feedback"))
}

/// Open the workstation on a roster. Returns the process exit code (2 without a terminal).
pub fn run(
    roster_dir: &Path,
    journal: Option<&Path>,
    coach: Option<&str>,
    config: &Config,
) -> anyhow::Result<i32> {
    if !io::stdin().is_terminal() || !io::stdout().is_terminal() {
        eprintln!("{NOT_A_TERMINAL}");
        return Ok(2);
    }
    let keymap = KeyMap::with_overrides(&config.keys)?;
    let journal = crate::config::resolve_journal(journal, config);
    let mut ws = Workspace::open(roster_dir, journal.as_deref())?;
    ws.act_as(coach)?;
    let options = Options {
        keymap,
        theme: Theme::from_env(),
        feedback_dir: default_feedback_dir(),
    };
    let mut app = App::new(ws.roster, ws.journal, options);
    let (style, style_problems) = config.feedback_style();
    app.feedback_style = style;
    app.problems.extend(style_problems.iter().cloned());
    app.set_config_problems(style_problems);

    let term_flag = Arc::new(AtomicBool::new(false));
    for sig in [
        signal_hook::consts::SIGTERM,
        signal_hook::consts::SIGHUP,
        signal_hook::consts::SIGINT,
    ] {
        // Only sets a flag: async-signal-safe. The loop sees it within one poll interval.
        signal_hook::flag::register(sig, Arc::clone(&term_flag))?;
    }
    PANIC_IN_DRAW.store(
        std::env::var_os(PANIC_IN_DRAW_ENV).is_some_and(|v| v == "1"),
        Ordering::Relaxed,
    );
    install_panic_hook();
    // A terminal that goes away must not leave the process spinning (see `hangup`).
    let watcher = hangup::Watcher::spawn(libc::STDIN_FILENO, Arc::clone(&term_flag), || {
        restore_terminal();
        std::process::exit(hangup::HANGUP_EXIT);
    })?;
    let guard = TerminalGuard::enter()?;
    let mut terminal = Terminal::new(CrosstermBackend::new(io::stdout()))?;
    terminal.clear()?;
    let worker = Worker::for_machine();
    let mut host = CrosstermHost::default();
    let result = event_loop(&mut terminal, &mut app, &worker, &mut host, &term_flag);
    drop(watcher);
    drop(worker);
    // ratatui's Terminal shows the cursor when dropped and reports a failure with
    // `eprintln!`, which panics when stderr is a terminal that has gone away.
    if terminal.show_cursor().is_err() {
        std::mem::forget(terminal);
    } else {
        drop(terminal);
    }
    drop(guard);
    result.map(|()| 0)
}

/// Restores the terminal when dropped.
struct TerminalGuard;

impl TerminalGuard {
    fn enter() -> io::Result<TerminalGuard> {
        let guard = TerminalGuard;
        enter_terminal()?;
        Ok(guard)
    }
}

/// Whether the terminal is in the workstation's modes (raw, alternate screen, hidden
/// cursor): set on entering, cleared by the first [`restore_terminal`].
static TERMINAL_TAKEN: AtomicBool = AtomicBool::new(false);

/// Raw mode, alternate screen, bracketed paste, hidden cursor.
fn enter_terminal() -> io::Result<()> {
    TERMINAL_TAKEN.store(true, Ordering::SeqCst);
    enable_raw_mode()?;
    execute!(
        io::stdout(),
        EnterAlternateScreen,
        EnableBracketedPaste,
        cursor::Hide
    )
}

impl Drop for TerminalGuard {
    fn drop(&mut self) {
        restore_terminal();
    }
}

/// Leave raw mode and the alternate screen. Only the first call after entering does
/// anything: leaving the alternate screen a second time would move the cursor back to
/// where it was saved on entering, and what was printed since (the panic message, after
/// the panic hook restored the terminal) would be overwritten.
pub fn restore_terminal() {
    if !TERMINAL_TAKEN.swap(false, Ordering::SeqCst) {
        return;
    }
    let _ = disable_raw_mode();
    let _ = execute!(
        io::stdout(),
        DisableBracketedPaste,
        LeaveAlternateScreen,
        cursor::Show
    );
}

fn install_panic_hook() {
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        restore_terminal();
        previous(info);
    }));
}

/// The outside world the event loop talks to besides the backend.
pub trait Host {
    /// The next terminal event, waiting at most `timeout`.
    fn next_event(&mut self, timeout: Duration) -> io::Result<Option<Event>>;
    /// Copy text to the clipboard; says how.
    fn copy(&mut self, text: &str) -> String;
    /// Let the coach edit `text` in an external editor; the edited text.
    fn edit(&mut self, text: &str) -> Result<String, String>;
}

/// The real terminal.
#[derive(Debug, Default)]
pub struct CrosstermHost {
    /// crossterm may hold more parsed events from its last read: ask it before waiting.
    maybe_buffered: bool,
}

/// The error [`Host::next_event`] gives when the terminal has gone away.
pub fn hung_up_error() -> io::Error {
    io::Error::new(io::ErrorKind::BrokenPipe, "the terminal hung up")
}

impl Host for CrosstermHost {
    /// Waits with our own `poll(2)` on the terminal and asks crossterm only when there is
    /// input (or a resize may be pending): crossterm's reader loops forever on a terminal
    /// that hung up, so the hang-up must be seen before it reads (see [`hangup`]).
    fn next_event(&mut self, timeout: Duration) -> io::Result<Option<Event>> {
        let fd = libc::STDIN_FILENO;
        if self.maybe_buffered {
            if hangup::hung_up(fd, Duration::ZERO) {
                return Err(hung_up_error());
            }
        } else if hangup::wait_input(fd, timeout) == hangup::Input::HungUp {
            return Err(hung_up_error());
        }
        // Zero timeout: returns what is buffered or readable now, and pending resizes.
        if crossterm::event::poll(Duration::ZERO)? {
            self.maybe_buffered = true;
            crossterm::event::read().map(Some)
        } else {
            self.maybe_buffered = false;
            Ok(None)
        }
    }

    fn copy(&mut self, text: &str) -> String {
        let mut out = io::stdout();
        crate::export::clipboard::copy(text, &mut out).to_string()
    }

    fn edit(&mut self, text: &str) -> Result<String, String> {
        edit_in_editor(text)
    }
}

/// Suspend the terminal, run `$VISUAL`/`$EDITOR` (else `vi`) on a temporary file holding
/// `text`, restore the terminal and return the edited text.
pub fn edit_in_editor(text: &str) -> Result<String, String> {
    let editor = std::env::var("VISUAL")
        .ok()
        .filter(|s| !s.trim().is_empty())
        .or_else(|| {
            std::env::var("EDITOR")
                .ok()
                .filter(|s| !s.trim().is_empty())
        })
        .unwrap_or_else(|| "vi".to_string());
    let path = std::env::temp_dir().join(format!("splitdesk-feedback-{}.txt", std::process::id()));
    std::fs::write(&path, text).map_err(|e| format!("{}: {e}", path.display()))?;
    restore_terminal();
    let mut parts = editor.split_whitespace();
    let status = match parts.next() {
        Some(prog) => std::process::Command::new(prog)
            .args(parts)
            .arg(&path)
            .status()
            .map_err(|e| format!("{editor}: {e}")),
        None => Err("no editor".to_string()),
    };
    let _ = enter_terminal();
    let result = match status {
        Ok(s) if s.success() => {
            std::fs::read_to_string(&path).map_err(|e| format!("{}: {e}", path.display()))
        }
        Ok(s) => Err(format!("{editor} exited with {s}; text unchanged")),
        Err(e) => Err(e),
    };
    let _ = std::fs::remove_file(&path);
    result
}

/// Write a feedback file, creating its folder.
fn write_file(path: &Path, text: &str) -> Result<PathBuf, String> {
    if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    }
    std::fs::write(path, text).map_err(|e| format!("{}: {e}", path.display()))?;
    Ok(std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf()))
}

/// The event loop: draw when something changed, feed terminal events and worker results to
/// the app, carry out its effects. Returns when the app quits or `stop` is set.
pub fn event_loop<B: Backend, H: Host>(
    terminal: &mut Terminal<B>,
    app: &mut App,
    worker: &Worker,
    host: &mut H,
    stop: &AtomicBool,
) -> anyhow::Result<()>
where
    B::Error: Send + Sync + 'static,
{
    let r = run_loop(terminal, app, worker, host, stop);
    // However the loop ended: other coaches no longer see this session as reviewed here.
    app.stop_reviewing();
    r
}

fn run_loop<B: Backend, H: Host>(
    terminal: &mut Terminal<B>,
    app: &mut App,
    worker: &Worker,
    host: &mut H,
    stop: &AtomicBool,
) -> anyhow::Result<()>
where
    B::Error: Send + Sync + 'static,
{
    let size = terminal.size()?;
    app.size = (size.width, size.height);
    terminal.draw(|f| draw_frame(f, app))?;
    let first = app.start_scan();
    if carry_out(first, app, worker, host, terminal)? {
        return Ok(());
    }
    terminal.draw(|f| draw_frame(f, app))?;
    let mut last_draw = Instant::now();
    // Something changed that is not on the screen yet.
    let mut owed = false;
    loop {
        if stop.load(Ordering::SeqCst) {
            app.save_before_exit();
            return Ok(());
        }
        let mut changed = false;
        // A change the coach is waiting for (a key, the open session's result): drawn at
        // once. Scan progress alone is drawn at most once per `SCAN_FRAME`.
        let mut urgent = false;
        let mut effects = Vec::new();
        let mut drained = 0;
        while let Some(done) = worker.try_recv() {
            if done.kind == JobKind::Open
                || app
                    .open
                    .as_ref()
                    .is_some_and(|o| o.session_id == done.session_id)
            {
                urgent = true;
            }
            effects.extend(app.handle(AppEvent::Worker(done)));
            changed = true;
            drained += 1;
            if drained >= 64 {
                break;
            }
        }
        let timeout = if drained >= 64 {
            Duration::ZERO
        } else {
            wait_for_input(app.busy(), owed || changed, last_draw.elapsed())
        };
        let event = match host.next_event(timeout) {
            Ok(event) => event,
            Err(e) => {
                // The terminal is gone (or unreadable): keep what the coach typed.
                app.save_before_exit();
                if e.kind() == io::ErrorKind::BrokenPipe {
                    return Ok(());
                }
                return Err(e.into());
            }
        };
        match event {
            Some(ev) => {
                effects.extend(app.handle(AppEvent::Input(ev)));
                changed = true;
                urgent = true;
            }
            None => {
                // Grades written by another process show up without a key press.
                if app.poll_journal() {
                    changed = true;
                    urgent = true;
                }
                if changed || app.busy() {
                    effects.extend(app.handle(AppEvent::Tick));
                }
            }
        }
        if carry_out(effects, app, worker, host, terminal)? {
            return Ok(());
        }
        owed |= changed;
        if owed && (urgent || !app.busy() || last_draw.elapsed() >= SCAN_FRAME) {
            terminal.draw(|f| draw_frame(f, app))?;
            last_draw = Instant::now();
            owed = false;
        }
    }
}

/// While results are awaited the loop looks for them this often: a finished result waits
/// at most this long to be handled (a key wakes the loop at once whatever the wait).
pub const RESULT_POLL: Duration = Duration::from_millis(4);

/// Scan progress alone is drawn at most this often.
pub const SCAN_FRAME: Duration = Duration::from_millis(50);

/// Idle: how long the loop sleeps waiting for a key (other processes' writes to the journal
/// show up within this).
pub const IDLE_WAIT: Duration = Duration::from_millis(400);

/// How long the event loop waits for input: briefly while background work is awaited (so
/// its result is drawn as soon as it arrives, not after a long wait), until the owed frame
/// is due when a draw is held back, else [`IDLE_WAIT`] (no spinning when idle).
pub fn wait_for_input(busy: bool, owed: bool, since_draw: Duration) -> Duration {
    if busy {
        RESULT_POLL
    } else if owed {
        SCAN_FRAME.saturating_sub(since_draw)
    } else {
        IDLE_WAIT
    }
}

/// Carry out effects (and the effects they lead to). `true` when the app quits.
fn carry_out<B: Backend, H: Host>(
    effects: Vec<Effect>,
    app: &mut App,
    worker: &Worker,
    host: &mut H,
    terminal: &mut Terminal<B>,
) -> anyhow::Result<bool>
where
    B::Error: Send + Sync + 'static,
{
    let mut queue: VecDeque<Effect> = effects.into();
    let mut redraw = false;
    while let Some(e) = queue.pop_front() {
        match e {
            Effect::Quit => return Ok(true),
            Effect::Submit { job, urgent } => worker.submit(job, urgent),
            Effect::DropStaleOpens(g) => {
                worker.retain(|j| j.kind == JobKind::Scan || j.generation >= g)
            }
            Effect::Copy(text) => {
                let how = host.copy(&text);
                queue.extend(app.handle(AppEvent::Copied(how)));
                redraw = true;
            }
            Effect::OpenEditor(text) => {
                let r = host.edit(&text);
                terminal.clear()?;
                queue.extend(app.handle(AppEvent::EditorDone(r)));
                redraw = true;
            }
            Effect::WriteFile { path, text } => {
                let r = write_file(&path, &text);
                queue.extend(app.handle(AppEvent::FileWritten(r)));
                redraw = true;
            }
            Effect::WriteDay { path, text } => {
                let r = write_file(&path, &text);
                queue.extend(app.handle(AppEvent::DayWritten(r)));
                redraw = true;
            }
        }
    }
    if redraw {
        terminal.draw(|f| draw_frame(f, app))?;
    }
    let _ = io::stdout().flush();
    Ok(false)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_loop_waits_briefly_only_while_results_are_awaited() {
        // A result awaited: looked for within a few milliseconds, never after a long wait.
        assert_eq!(
            wait_for_input(true, false, Duration::ZERO),
            Duration::from_millis(4)
        );
        assert_eq!(
            wait_for_input(true, true, Duration::from_secs(1)),
            Duration::from_millis(4)
        );
        // Idle: a long wait, so an idle workstation does not spin.
        assert_eq!(
            wait_for_input(false, false, Duration::ZERO),
            Duration::from_millis(400)
        );
        // A held-back frame is drawn when due.
        assert_eq!(
            wait_for_input(false, true, Duration::from_millis(20)),
            Duration::from_millis(30)
        );
        assert_eq!(
            wait_for_input(false, true, Duration::from_millis(80)),
            Duration::ZERO
        );
    }
}
