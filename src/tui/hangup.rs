//! Leaving when the terminal goes away.
//!
//! When the terminal is closed under the workstation (a closed window, a dropped SSH link,
//! `tmux kill-server`), the kernel hangs the terminal up: reads return end-of-file at once
//! and forever, and crossterm's reader then loops inside its own `poll` without returning.
//! Two guards keep the process from spinning on the dead terminal:
//!
//! - the event loop waits for input with [`wait_input`] (our own `poll(2)`) and only then
//!   asks crossterm for the event, so a hang-up while waiting is seen by the loop, which
//!   saves an unsaved feedback edit and leaves in the normal way;
//! - a [`Watcher`] thread covers the short window in which the loop is already inside
//!   crossterm: when it sees the hang-up and the loop has not left after [`GRACE`], it
//!   ends the process. Grades are committed as they are typed and SQLite rolls back a
//!   transaction a background worker had open (as after a kill); an inline feedback edit
//!   not yet saved is lost only in that rare case.
//!
//! Signals (SIGTERM, SIGINT, SIGHUP sent by hand) only set the loop's stop flag: while
//! `$EDITOR` runs, the loop leaves once the editor has closed.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::Duration;

/// How long the event loop has to leave on its own once the terminal hung up.
pub const GRACE: Duration = Duration::from_millis(1500);

/// How long the watcher waits in one `poll`.
const TICK: Duration = Duration::from_millis(200);

/// Exit status when the process is ended by the watcher: 128 + SIGHUP, as a shell reports a
/// process ended by a hang-up.
pub const HANGUP_EXIT: i32 = 129;

/// What [`wait_input`] saw.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Input {
    /// Bytes to read.
    Ready,
    /// Nothing within the timeout (or a signal interrupted the wait).
    Quiet,
    /// The terminal hung up (or the descriptor is in error).
    HungUp,
}

fn poll_one(fd: i32, events: i16, timeout: Duration) -> Option<i16> {
    let mut pfd = libc::pollfd {
        fd,
        events,
        revents: 0,
    };
    let ms = i32::try_from(timeout.as_millis()).unwrap_or(i32::MAX);
    // SAFETY: `pfd` is a valid, exclusively borrowed pollfd and the count is 1.
    let n = unsafe { libc::poll(&mut pfd, 1, ms) };
    (n > 0).then_some(pfd.revents)
}

const TROUBLE: i16 = libc::POLLHUP | libc::POLLERR | libc::POLLNVAL;

/// Wait up to `timeout` for input on `fd` without reading it.
pub fn wait_input(fd: i32, timeout: Duration) -> Input {
    match poll_one(fd, libc::POLLIN, timeout) {
        Some(r) if r & TROUBLE != 0 => Input::HungUp,
        Some(r) if r & libc::POLLIN != 0 => Input::Ready,
        _ => Input::Quiet,
    }
}

/// Whether `fd` reports a hang-up or an error, waiting up to `timeout`. Nothing is read:
/// the poll asks for no events, so only the conditions the kernel always reports (hang-up,
/// error, invalid descriptor) can end it early.
pub fn hung_up(fd: i32, timeout: Duration) -> bool {
    poll_one(fd, 0, timeout).is_some_and(|r| r & TROUBLE != 0)
}

/// The watcher thread; dropping it (after the event loop has returned) stops it. The
/// thread is not joined: it notices within one [`TICK`] and ends by itself, and quitting
/// should not wait for it.
pub struct Watcher {
    finished: Arc<AtomicBool>,
}

impl Watcher {
    /// Watch `fd` (the terminal's input). On a hang-up, `stop` is set; if the watcher is
    /// still not dropped [`GRACE`] later, `on_stuck` runs (in the workstation: restore what
    /// can be restored and end the process).
    pub fn spawn(
        fd: i32,
        stop: Arc<AtomicBool>,
        on_stuck: impl FnOnce() + Send + 'static,
    ) -> std::io::Result<Watcher> {
        let finished = Arc::new(AtomicBool::new(false));
        let done = Arc::clone(&finished);
        std::thread::Builder::new()
            .name("splitdesk-hangup".into())
            .spawn(move || {
                while !done.load(Ordering::SeqCst) {
                    if hung_up(fd, TICK) {
                        stop.store(true, Ordering::SeqCst);
                        std::thread::sleep(GRACE);
                        if !done.load(Ordering::SeqCst) {
                            on_stuck();
                        }
                        return;
                    }
                }
            })?;
        Ok(Watcher { finished })
    }
}

impl Drop for Watcher {
    fn drop(&mut self) {
        self.finished.store(true, Ordering::SeqCst);
    }
}

#[cfg(all(test, unix))]
mod tests {
    use super::*;
    use std::sync::mpsc;
    use std::time::Instant;

    /// A pipe whose write end is closed reports a hang-up on its read end (POSIX poll(2)).
    fn hung_pipe() -> i32 {
        let mut fds = [0i32; 2];
        // SAFETY: `fds` has room for the two descriptors pipe(2) writes.
        let rc = unsafe { libc::pipe(fds.as_mut_ptr()) };
        assert_eq!(rc, 0);
        // SAFETY: closing the write end we own.
        unsafe { libc::close(fds[1]) };
        fds[0]
    }

    #[test]
    fn closed_pipe_reads_as_hung_up_and_open_one_does_not() {
        // Source: POSIX.1-2017 poll(2): POLLHUP "shall be set ... when the device has been
        // disconnected", and for a FIFO/pipe when no process holds it open for writing.
        let fd = hung_pipe();
        assert!(hung_up(fd, Duration::from_millis(10)));
        let mut fds = [0i32; 2];
        // SAFETY: as above.
        assert_eq!(unsafe { libc::pipe(fds.as_mut_ptr()) }, 0);
        assert!(!hung_up(fds[0], Duration::from_millis(10)));
        // SAFETY: closing descriptors we own.
        unsafe {
            libc::close(fd);
            libc::close(fds[0]);
            libc::close(fds[1]);
        }
    }

    #[test]
    fn waiting_for_input_tells_ready_quiet_and_hung_up() {
        // Source: POSIX.1-2017 poll(2), as above; a pipe stands in for the terminal.
        let mut fds = [0i32; 2];
        // SAFETY: `fds` has room for the two descriptors pipe(2) writes.
        assert_eq!(unsafe { libc::pipe(fds.as_mut_ptr()) }, 0);
        assert_eq!(wait_input(fds[0], Duration::from_millis(10)), Input::Quiet);
        // SAFETY: writing one byte from a valid buffer to the pipe we own.
        assert_eq!(unsafe { libc::write(fds[1], b"q".as_ptr().cast(), 1) }, 1);
        assert_eq!(wait_input(fds[0], Duration::from_millis(10)), Input::Ready);
        // SAFETY: closing descriptors we own.
        unsafe {
            libc::close(fds[1]);
            libc::close(fds[0]);
        }
        let fd = hung_pipe();
        assert_eq!(wait_input(fd, Duration::from_millis(10)), Input::HungUp);
        // SAFETY: closing a descriptor we own.
        unsafe { libc::close(fd) };
    }

    #[test]
    fn a_stop_by_signal_alone_never_ends_the_process() {
        // An open pipe never hangs up: the stop flag (as SIGTERM sets it) is left to the loop.
        let mut fds = [0i32; 2];
        // SAFETY: as above.
        assert_eq!(unsafe { libc::pipe(fds.as_mut_ptr()) }, 0);
        let stop = Arc::new(AtomicBool::new(true));
        let (tx, rx) = mpsc::channel::<()>();
        let w = Watcher::spawn(fds[0], Arc::clone(&stop), move || {
            let _ = tx.send(());
        })
        .unwrap();
        assert!(rx.recv_timeout(GRACE + Duration::from_millis(700)).is_err());
        drop(w);
        // SAFETY: closing descriptors we own.
        unsafe {
            libc::close(fds[0]);
            libc::close(fds[1]);
        }
    }

    #[test]
    fn hang_up_sets_stop_then_gives_up_after_the_grace() {
        let fd = hung_pipe();
        let stop = Arc::new(AtomicBool::new(false));
        let (tx, rx) = mpsc::channel();
        let started = Instant::now();
        let w = Watcher::spawn(fd, Arc::clone(&stop), move || {
            let _ = tx.send(started.elapsed());
        })
        .unwrap();
        let waited = rx.recv_timeout(Duration::from_secs(10)).unwrap();
        assert!(stop.load(Ordering::SeqCst));
        assert!(waited >= GRACE, "gave up after {waited:?}");
        drop(w);
        // SAFETY: closing a descriptor we own.
        unsafe { libc::close(fd) };
    }

    #[test]
    fn a_loop_that_leaves_in_time_is_not_ended() {
        let fd = hung_pipe();
        let stop = Arc::new(AtomicBool::new(false));
        let (tx, rx) = mpsc::channel::<()>();
        let w = Watcher::spawn(fd, Arc::clone(&stop), move || {
            let _ = tx.send(());
        })
        .unwrap();
        // The event loop sees the flag and returns; the watcher is dropped.
        while !stop.load(Ordering::SeqCst) {
            std::thread::sleep(Duration::from_millis(5));
        }
        drop(w);
        assert!(rx.recv_timeout(GRACE + Duration::from_millis(500)).is_err());
        // SAFETY: closing a descriptor we own.
        unsafe { libc::close(fd) };
    }
}
