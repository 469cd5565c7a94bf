#!/usr/bin/env python3
"""Time from process start to the workstation's first usable frame, whole process.

Runs the release binary on a pseudo-terminal (Python's standard `pty` module) of 160x48,
answers the terminal queries it sends, and takes the time from spawning the process to the
moment the frame's last line (the footer with the key hints) has been written. Then quits
with `q`. The journal is warmed first by one run of the workstation that waits until the
background scan is done, so every run measured starts with every session cached.

Usage: python3 benches/first_frame.py [BINARY] [ROSTER] [RUNS]
Defaults: target/release/splitdesk, demo-athletes, 30.
"""

import fcntl
import os
import pty
import select
import statistics
import struct
import sys
import tempfile
import termios
import time

ROWS, COLS = 48, 160
# Text of the footer, the frame's last line: once it is out, the frame is complete.
FOOTER = b"help"
# Shown in the status line while the background scan runs ("analysing 12/161").
SCANNING = b"analysing "


def spawn(binary, roster, journal):
    pid, fd = pty.fork()
    if pid == 0:
        # Size the terminal before the program starts, so its first frame is 160x48.
        fcntl.ioctl(0, termios.TIOCSWINSZ, struct.pack("HHHH", ROWS, COLS, 0, 0))
        env = dict(os.environ)
        env["SPLITDESK_CONFIG"] = "/nonexistent"
        env["TERM"] = "xterm-256color"
        os.execve(binary, [binary, "--roster", roster, "--journal", journal], env)
    fcntl.ioctl(fd, termios.TIOCSWINSZ, struct.pack("HHHH", ROWS, COLS, 0, 0))
    return pid, fd


def pump(fd, buf, deadline):
    """Read what is there (answering cursor-position queries); False at end of file."""
    left = deadline - time.monotonic()
    if left <= 0:
        return True
    r, _, _ = select.select([fd], [], [], min(left, 0.05))
    if not r:
        return True
    try:
        chunk = os.read(fd, 65536)
    except OSError:
        return False
    if not chunk:
        return False
    if b"\x1b[6n" in chunk:
        os.write(fd, b"\x1b[1;1R")
    buf.extend(chunk)
    return True


def quit_and_reap(pid, fd):
    try:
        os.write(fd, b"q")
    except OSError:
        pass
    deadline = time.monotonic() + 5
    buf = bytearray()
    while time.monotonic() < deadline:
        done, _ = os.waitpid(pid, os.WNOHANG)
        if done:
            break
        pump(fd, buf, deadline)
    else:
        os.kill(pid, 9)
        os.waitpid(pid, 0)
    os.close(fd)


def warm(binary, roster, journal):
    pid, fd = spawn(binary, roster, journal)
    buf = bytearray()
    deadline = time.monotonic() + 300
    seen_scan = False
    quiet_since = None
    while time.monotonic() < deadline:
        if not pump(fd, buf, deadline):
            break
        if SCANNING in buf:
            seen_scan = True
            quiet_since = None
            del buf[:]
        elif seen_scan or len(buf) > 0:
            quiet_since = quiet_since or time.monotonic()
            if time.monotonic() - quiet_since > 3:
                break
    quit_and_reap(pid, fd)


def first_frame(binary, roster, journal):
    start = time.monotonic()
    pid, fd = spawn(binary, roster, journal)
    buf = bytearray()
    deadline = start + 10
    took = None
    while time.monotonic() < deadline:
        if not pump(fd, buf, deadline):
            break
        if FOOTER in buf:
            took = time.monotonic() - start
            break
    quit_and_reap(pid, fd)
    return took


def main():
    binary = sys.argv[1] if len(sys.argv) > 1 else "target/release/splitdesk"
    roster = sys.argv[2] if len(sys.argv) > 2 else "demo-athletes"
    runs = int(sys.argv[3]) if len(sys.argv) > 3 else 30
    with tempfile.TemporaryDirectory() as tmp:
        journal = os.path.join(tmp, "journal.sqlite")
        warm(binary, roster, journal)
        times = []
        for _ in range(runs):
            t = first_frame(binary, roster, journal)
            if t is None:
                print("no frame within 10 s", file=sys.stderr)
                return 1
            times.append(t * 1000)
        times.sort()
        p95 = times[min(len(times) - 1, int(round(0.95 * (len(times) - 1))))]
        print(
            f"first usable frame, {runs} runs: median {statistics.median(times):.1f} ms, "
            f"p95 {p95:.1f} ms, min {times[0]:.1f} ms, max {times[-1]:.1f} ms"
        )
    return 0


if __name__ == "__main__":
    sys.exit(main())
