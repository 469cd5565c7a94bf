//! Leaving when the terminal goes away.
//!
//! When the terminal is closed under the workstation (a closed window, a dropped SSH link,
//! `tmux kill-server`), the kernel hangs the terminal up: reads return end-of-file at once
//! and forever. crossterm's reader then loops inside its own `poll` without returning, so
//! the event loop never gets to see the SIGHUP flag and the process would spin on the dead
//! terminal. A small watcher thread notices instead: either the stop flag (set by SIGHUP,
//! SIGTERM or SIGINT) or a hang-up reported by `poll(2)` on standard input. It sets the
//! stop flag so an event loop that is still running leaves in the normal way, then gives it
//! [`GRACE`] to do so before it ends the process itself.
//!
//! Ending the process from the watcher loses nothing: every grade and feedback edit is
//! committed to the journal as it is made, and SQLite rolls back a transaction that a
//! background worker had open (the same guarantee as a kill).

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// How long the event loop has to leave on its own once a stop was requested.
pub const GRACE: Duration = Duration::from_millis(1500);

/// How often the watcher looks, at most.
const TICK: Duration = Duration::from_millis(200);

/// Exit status when the process is ended by the watcher: 128 + SIGHUP, as a shell reports a
/// process ended by a hang-up.
pub const HANGUP_EXIT: i32 = 129;

/// Whether `fd` reports a hang-up or an error, waiting up to `timeout`. Nothing is read:
/// the poll asks for no events, so only the conditions the kernel always reports (hang-up,
/// error, invalid descriptor) can end it early.
#[cfg(unix)]
pub fn hung_up(fd: i32, timeout: Duration) -> bool {
    let mut pfd = libc::pollfd {
        fd,
        events: 0,
        revents: 0,
    };
    let ms = i32::try_from(timeout.as_millis()).unwrap_or(i32::MAX);
    // SAFETY: `pfd` is a valid, exclusively borrowed pollfd and the count is 1.
    let n = unsafe { libc::poll(&mut pfd, 1, ms) };
    n > 0 && pfd.revents & (libc::POLLHUP | libc::POLLERR | libc::POLLNVAL) != 0
}

#[cfg(not(unix))]
pub fn hung_up(_fd: i32, timeout: Duration) -> bool {
    std::thread::sleep(timeout);
    false
}

/// The watcher thread; dropping it (after the event loop has returned) stops it. The
/// thread is not joined: it notices within one [`TICK`] and ends by itself, and quitting
/// should not wait for it.
pub struct Watcher {
    finished: Arc<AtomicBool>,
}

impl Watcher {
    /// Watch `fd` (the terminal's input) and `stop`. On a hang-up, `stop` is set; once
    /// `stop` has been set for [`GRACE`] without the watcher being dropped, `on_stuck` runs
    /// (in the workstation: restore what can be restored and end the process).
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
                let mut stop_seen: Option<Instant> = None;
                while !done.load(Ordering::SeqCst) {
                    if stop_seen.is_none() && hung_up(fd, TICK) {
                        stop.store(true, Ordering::SeqCst);
                        // A hung-up descriptor reports at once: do not spin on it.
                        std::thread::sleep(TICK);
                    }
                    if done.load(Ordering::SeqCst) {
                        return;
                    }
                    if stop.load(Ordering::SeqCst) {
                        let since = *stop_seen.get_or_insert_with(Instant::now);
                        if since.elapsed() >= GRACE {
                            on_stuck();
                            return;
                        }
                        std::thread::sleep(TICK);
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
