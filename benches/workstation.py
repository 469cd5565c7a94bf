#!/usr/bin/env python3
"""The workstation on a club-sized roster, whole process: start to first frame, start to
"scan done", and peak memory, cold (fresh journal) and warm (every session cached).

Makes a big roster in a temporary folder under /tmp (deleted at the end), starts the real
binary in tmux (its own server socket, 160x48), and polls `tmux capture-pane` every few
milliseconds:

- first frame: the footer's key hints ("help") are on the screen;
- scan done: the status line's right end no longer says "analysing N/M" and says
  "N to review" (the background check of every session is over);
- memory: /proc/PID/status of the binary, VmHWM (peak resident set) and VmRSS, sampled
  while the scan runs and read once more just before quitting with `q`.

The cold run starts on a fresh journal (every file read and analysed); each warm run starts
again on the journal the cold run left (every file unchanged: one `stat` each).

The roster is, by default, the demo athletes copied under new ids with hard links
(`--copies 60`: 9,660 sessions, no extra disk space, made in well under a second); with
`--athletes N --weeks W` it is `splitdesk demo --out DIR --athletes N --weeks W` instead
(distinct files: 50 x 40 gives 8,934 sessions, 1.1 GB, about 30 s to write).

Usage:
    cargo build --release
    python3 benches/workstation.py [--binary target/release/splitdesk] [--copies 60]
        [--athletes N --weeks W] [--warm-runs 3] [--skip-cold --journal J --roster R]

Needs tmux. Prints one line per run and a summary; exits non-zero when a run times out.
"""

import argparse
import os
import re
import shlex
import shutil
import subprocess
import sys
import tempfile
import time

ROWS, COLS = 48, 160
FOOTER = "help"
SCANNING = "analysing "
DONE = re.compile(r"\d+ to review")
HERE = os.path.dirname(os.path.abspath(__file__))
DEMO = os.path.join(os.path.dirname(HERE), "demo-athletes")


def copy_tree(src, dst):
    os.makedirs(dst, exist_ok=True)
    for name in os.listdir(src):
        s, d = os.path.join(src, name), os.path.join(dst, name)
        if os.path.isdir(s):
            copy_tree(s, d)
        else:
            try:
                os.link(s, d)
            except OSError:
                shutil.copy2(s, d)


def copied_roster(root, copies):
    """The demo athletes copied `copies` times each under new ids (as benches/warm.rs)."""
    roster = os.path.join(root, "roster")
    os.makedirs(roster)
    shutil.copy(os.path.join(DEMO, "roster.toml"), os.path.join(roster, "roster.toml"))
    for name in sorted(os.listdir(DEMO)):
        path = os.path.join(DEMO, name)
        if not os.path.isdir(path):
            continue
        for c in range(1, copies + 1):
            copy_tree(path, os.path.join(roster, f"{name}-c{c}"))
    return roster


def count_sessions(roster):
    n = 0
    for _, _, files in os.walk(roster):
        n += sum(1 for f in files if f.lower().endswith((".fit", ".tcx", ".gpx")))
    return n


class Tmux:
    """One tmux server on its own socket; each run gets a new one (a server being killed
    can refuse the next session on the same socket)."""

    serial = 0

    def __init__(self, socket):
        Tmux.serial += 1
        self.socket = f"{socket}-{Tmux.serial}"

    def run(self, *args, check=True):
        return subprocess.run(
            ["tmux", "-L", self.socket, *args],
            check=check,
            stdout=subprocess.PIPE,
            stderr=subprocess.DEVNULL,
            text=True,
        )

    def screen(self):
        r = self.run("capture-pane", "-p", "-t", "bench", check=False)
        return r.stdout if r.returncode == 0 else ""

    def kill(self):
        self.run("kill-server", check=False)
        base = os.environ.get("TMUX_TMPDIR", "/tmp")
        path = os.path.join(base, f"tmux-{os.getuid()}", self.socket)
        try:
            os.remove(path)
        except OSError:
            pass


def status(pid):
    """(VmHWM, VmRSS) of a process in MB, or None when it is gone."""
    try:
        with open(f"/proc/{pid}/status") as f:
            text = f.read()
    except OSError:
        return None
    vals = {}
    for line in text.splitlines():
        key, _, rest = line.partition(":")
        if key in ("VmHWM", "VmRSS"):
            vals[key] = int(rest.split()[0]) / 1024.0
    return vals.get("VmHWM", 0.0), vals.get("VmRSS", 0.0)


def one_run(binary, roster, journal, socket, timeout):
    """Start the workstation, wait for its first frame and the end of its scan, quit.

    Returns (first_frame_s, scan_done_s, peak_rss_mb, last_rss_mb)."""
    tmux = Tmux(socket)
    env = "SPLITDESK_CONFIG=/nonexistent NO_COLOR=1 TERM=xterm-256color"
    q = shlex.quote
    cmd = f"exec env {env} {q(binary)} --roster {q(roster)} --journal {q(journal)}"
    start = time.monotonic()
    tmux.run("new-session", "-d", "-s", "bench", "-x", str(COLS), "-y", str(ROWS), cmd)
    pid = int(tmux.run("list-panes", "-t", "bench", "-F", "#{pane_pid}").stdout.split()[0])
    first = done = None
    peak = rss = 0.0
    last_mem = 0.0
    try:
        while time.monotonic() - start < timeout:
            s = tmux.screen()
            now = time.monotonic() - start
            if first is None and FOOTER in s:
                first = now
            if first is not None and SCANNING not in s and DONE.search(s):
                done = now
            if now - last_mem > 0.05 or done is not None:
                m = status(pid)
                if m is None:
                    break
                peak, rss = max(peak, m[0]), m[1]
                last_mem = now
            if done is not None:
                break
            time.sleep(0.003 if first is None else 0.02)
    finally:
        m = status(pid)
        if m is not None:
            peak, rss = max(peak, m[0]), m[1]
        tmux.run("send-keys", "-t", "bench", "q", check=False)
        deadline = time.monotonic() + 10
        while time.monotonic() < deadline and os.path.exists(f"/proc/{pid}"):
            time.sleep(0.02)
        tmux.kill()
    return first, done, peak, rss


def tmux_overhead(socket, runs=5):
    """Median time from `tmux new-session` to a trivial program's output on the screen (the
    tmux server's start and the polling): subtracted from nothing, printed beside the
    figures so they can be read net of it."""
    times = []
    for _ in range(runs):
        tmux = Tmux(socket)
        start = time.monotonic()
        tmux.run("new-session", "-d", "-s", "bench", "-x", str(COLS), "-y", str(ROWS),
                 "printf 'ready: %s' help; sleep 5")
        while time.monotonic() - start < 10:
            if "ready: help" in tmux.screen():
                break
            time.sleep(0.003)
        times.append(time.monotonic() - start)
        tmux.kill()
    return sorted(times)[len(times) // 2]


def fmt(t):
    return "timed out" if t is None else f"{t * 1000:.0f} ms"


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--binary", default=os.path.join(os.path.dirname(HERE), "target/release/splitdesk"))
    ap.add_argument("--copies", type=int, default=60)
    ap.add_argument("--athletes", type=int)
    ap.add_argument("--weeks", type=int)
    ap.add_argument("--warm-runs", type=int, default=3)
    ap.add_argument("--timeout", type=float, default=600.0)
    ap.add_argument("--skip-cold", action="store_true", help="reuse --journal as it is")
    ap.add_argument("--roster", help="use this roster instead of making one")
    ap.add_argument("--journal", help="use this journal (with --skip-cold: warm runs only)")
    args = ap.parse_args()
    if shutil.which("tmux") is None:
        print("tmux is needed", file=sys.stderr)
        return 2
    binary = os.path.abspath(args.binary)
    socket = f"splitdesk-bench-{os.getpid()}"
    tmp = tempfile.mkdtemp(prefix="splitdesk-workstation-", dir="/tmp")
    failed = False
    try:
        t0 = time.monotonic()
        if args.roster:
            roster = os.path.abspath(args.roster)
        elif args.athletes or args.weeks:
            roster = os.path.join(tmp, "roster")
            cmd = [binary, "demo", "--out", roster]
            if args.athletes:
                cmd += ["--athletes", str(args.athletes)]
            if args.weeks:
                cmd += ["--weeks", str(args.weeks)]
            subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
        else:
            roster = copied_roster(tmp, args.copies)
        sessions = count_sessions(roster)
        print(f"roster: {sessions} activity files ({time.monotonic() - t0:.1f} s to make): {roster}")
        print(f"tmux start to a trivial program's first output (included in every figure): "
              f"{tmux_overhead(socket) * 1000:.0f} ms")
        journal = os.path.abspath(args.journal) if args.journal else os.path.join(tmp, "journal.sqlite")
        if not args.skip_cold:
            for suffix in ("", "-wal", "-shm"):
                if os.path.exists(journal + suffix):
                    os.remove(journal + suffix)
            first, done, peak, rss = one_run(binary, roster, journal, socket, args.timeout)
            rate = f", {sessions / done:.0f} files/s" if done else ""
            print(
                f"cold (fresh journal): first frame {fmt(first)}, scan done {fmt(done)}{rate}, "
                f"peak RSS {peak:.0f} MB (RSS at the end {rss:.0f} MB)"
            )
            failed |= done is None
        warm = []
        for k in range(args.warm_runs):
            first, done, peak, rss = one_run(binary, roster, journal, socket, args.timeout)
            print(
                f"warm run {k + 1}: first frame {fmt(first)}, scan done {fmt(done)}, "
                f"peak RSS {peak:.0f} MB"
            )
            failed |= done is None
            warm.append((first, done, peak))
        ok = [w for w in warm if w[0] is not None and w[1] is not None]
        if ok:
            firsts = sorted(w[0] for w in ok)
            dones = sorted(w[1] for w in ok)
            print(
                f"warm, {len(ok)} runs, {sessions} files: first frame median "
                f"{firsts[len(firsts) // 2] * 1000:.0f} ms; scan done median "
                f"{dones[len(dones) // 2] * 1000:.0f} ms; background re-check after the first "
                f"frame median {sorted(d - f for f, d, _ in ok)[len(ok) // 2] * 1000:.0f} ms; "
                f"peak RSS max {max(w[2] for w in ok):.0f} MB"
            )
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
