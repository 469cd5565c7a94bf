//! Two processes writing one PostgreSQL journal at once (two workstations of a staff).
//!
//! - Grading race: two processes grade the same session at the same instant, each a whole
//!   grading action with its own values (all 4s + met against all 2s + missed), 20 rounds
//!   on a fresh session each, alternately before the reveal (blind grades) and after it
//!   (revisions). Neither process sees an error (writers take turns), and every final state
//!   is exactly one writer's whole action: never a mix of the two, never a part of one.
//! - Many small writes: two processes each save feedback versions, rulers and score
//!   revisions on the same session at once; every one of them is there afterwards and the
//!   revision chain has no gap (no lost read-modify-write).
//! - A write lock held elsewhere longer than the busy timeout fails a write with `Busy`,
//!   nothing saved; the write succeeds once the lock is released; reads never wait.
//!
//! The writers are this test binary itself, run as `child_worker --exact` with
//! `SPLITDESK_PGCON_CHILD_URL` set; they take commands on stdin and report on stdout.
//! Without that variable `child_worker` does nothing. Skipped with a message without
//! `SPLITDESK_TEST_PG_URL` (see tests/pg_support), except under `CI=true`.

mod pg_support;
mod pgcon_support;

use std::io::{BufRead, BufReader, Write};
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use pgcon_support::{marked, session, t, Db, MARK};
use splitdesk::journal::{Journal, JournalError, PurposeVerdict, ReviewStage, RevisionChange};

const URL_ENV: &str = "SPLITDESK_PGCON_CHILD_URL";
const WHO_ENV: &str = "SPLITDESK_PGCON_CHILD_WHO";

/// Work intervals of every session graded here.
const INTERVALS: u32 = 8;
const ROUNDS: usize = 20;
/// Writes of each kind per writer in the many-writes test.
const PER_WRITER: usize = 60;
/// The journal's advisory write lock key, "SPLD" (`WRITE_LOCK` in src/journal/pg.rs).
const WRITE_LOCK: i64 = 0x5350_4C44;

/// Writer `who`'s whole grading action: every interval's score and the verdict.
fn action(who: usize) -> (u8, PurposeVerdict) {
    if who == 0 {
        (4, PurposeVerdict::Met)
    } else {
        (2, PurposeVerdict::Missed)
    }
}

/// The grading already there in a revealed round (differs from both writers').
const BASE: (u8, PurposeVerdict) = (3, PurposeVerdict::Partly);

/// When writer `who` grades (the blind grades keep it: part of telling the actions apart).
fn when(who: usize) -> chrono::DateTime<chrono::Utc> {
    t(1000 + who as i64)
}

fn all(score: u8) -> Vec<(u32, u8)> {
    (1..=INTERVALS).map(|i| (i, score)).collect()
}

fn now_us() -> u128 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_micros())
        .unwrap_or(0)
}

fn wait_until_us(at: u128) {
    let now = now_us();
    if at > now {
        std::thread::sleep(Duration::from_micros((at - now) as u64));
    }
}

/// Score writer `who` uses for its `i`-th revision in the many-writes test: writer 0 uses
/// 1/2, writer 1 uses 4/5, so every call is a real change whatever the interleaving.
fn many_score(who: usize, i: usize) -> u8 {
    (if who == 0 { 1 + (i % 2) } else { 4 + (i % 2) }) as u8
}

/// The writer process. Does nothing unless started by a test below. Commands, one a line:
/// `grade SESSION AT_US` (grade the whole action at wall-clock microsecond AT_US) and
/// `many SESSION AT_US` (the many-writes work). Replies `ok SESSION START_US END_US` or
/// `err SESSION MESSAGE`.
#[test]
fn child_worker() {
    let Some(url) = std::env::var_os(URL_ENV) else {
        return;
    };
    let who: usize = std::env::var(WHO_ENV)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0);
    let mut j = match Journal::open_url(&url.to_string_lossy()) {
        Ok(j) => j,
        Err(e) => {
            println!("{MARK}err open {e}");
            return;
        }
    };
    println!("{MARK}ready");
    for line in std::io::stdin().lock().lines() {
        let Ok(line) = line else { break };
        let parts: Vec<&str> = line.split_whitespace().collect();
        let [cmd, sid, at] = parts.as_slice() else {
            println!("{MARK}err ? bad command {line:?}");
            continue;
        };
        let at: u128 = at.parse().unwrap_or(0);
        wait_until_us(at);
        let start = now_us();
        let result = match *cmd {
            "grade" => {
                let (score, verdict) = action(who);
                j.grade(sid, &all(score), Some(verdict), when(who))
            }
            "many" => many_writes(&mut j, sid, who),
            _ => {
                println!("{MARK}err {sid} unknown command {cmd}");
                continue;
            }
        };
        let end = now_us();
        match result {
            Ok(()) => println!("{MARK}ok {sid} {start} {end}"),
            Err(e) => println!("{MARK}err {sid} {e}"),
        }
    }
}

/// Writer `who`'s many small writes, each its own transaction.
fn many_writes(j: &mut Journal, sid: &str, who: usize) -> Result<(), JournalError> {
    for i in 0..PER_WRITER {
        let at = t(10 + i as i64);
        j.save_feedback(sid, &format!("writer {who} version {i}"), at)?;
        let from = (who * 10_000 + i) as f64;
        j.add_ruler(sid, from, from + 0.5, at)?;
        j.set_score(sid, 1, many_score(who, i), at)?;
    }
    Ok(())
}

/// Two writer processes, their stdin and their replies.
struct Writers {
    children: Vec<Child>,
    stdins: Vec<ChildStdin>,
    replies: mpsc::Receiver<(usize, String)>,
}

impl Writers {
    fn start(url: &str) -> Writers {
        let exe = std::env::current_exe().unwrap();
        let (tx, replies) = mpsc::channel();
        let mut children = Vec::new();
        let mut stdins = Vec::new();
        for who in 0..2 {
            let mut child = Command::new(&exe)
                .args(["child_worker", "--exact", "--nocapture", "--test-threads=1"])
                .env(URL_ENV, url)
                .env(WHO_ENV, who.to_string())
                .stdin(Stdio::piped())
                .stdout(Stdio::piped())
                .stderr(Stdio::inherit())
                .spawn()
                .unwrap();
            stdins.push(child.stdin.take().unwrap());
            let stdout = child.stdout.take().unwrap();
            let tx = tx.clone();
            std::thread::spawn(move || {
                for line in BufReader::new(stdout).lines() {
                    let Ok(line) = line else { break };
                    if let Some(text) = marked(&line) {
                        if tx.send((who, text.to_string())).is_err() {
                            break;
                        }
                    }
                }
            });
            children.push(child);
        }
        let w = Writers {
            children,
            stdins,
            replies,
        };
        for (who, text) in w.collect(2, Duration::from_secs(30)) {
            assert_eq!(text, "ready", "writer {who} did not start: {text}");
        }
        w
    }

    /// Send `cmd SESSION AT` to both writers, AT 40 ms from now, so both act at once.
    fn both(&mut self, cmd: &str, sid: &str) {
        let at = now_us() + 40_000;
        for stdin in &mut self.stdins {
            writeln!(stdin, "{cmd} {sid} {at}").unwrap();
            stdin.flush().unwrap();
        }
    }

    /// `n` replies, each `(writer, text)`.
    fn collect(&self, n: usize, timeout: Duration) -> Vec<(usize, String)> {
        (0..n)
            .map(|_| {
                self.replies
                    .recv_timeout(timeout)
                    .unwrap_or_else(|e| panic!("a writer stopped replying: {e:?}"))
            })
            .collect()
    }

    /// Both replies to one command: each writer's (start, end) in microseconds. Panics with
    /// the writer's message when either saw an error.
    fn both_ok(&self, sid: &str) -> [(u128, u128); 2] {
        let mut spans = [(0, 0); 2];
        let mut got = [false; 2];
        for (who, text) in self.collect(2, Duration::from_secs(60)) {
            let parts: Vec<&str> = text.split_whitespace().collect();
            match parts.as_slice() {
                ["ok", s, start, end] if *s == sid => {
                    spans[who] = (start.parse().unwrap(), end.parse().unwrap());
                    got[who] = true;
                }
                _ => panic!("{sid}: writer {who} saw an error: {text}"),
            }
        }
        assert_eq!(got, [true, true], "{sid}: a writer replied twice");
        spans
    }

    fn finish(mut self) {
        self.stdins.clear(); // end of input: the writers exit
        for mut child in self.children.drain(..) {
            let status = child.wait().unwrap();
            assert!(status.success(), "a writer exited with {status}");
        }
    }
}

impl Drop for Writers {
    fn drop(&mut self) {
        // Only when a test failed with writers still running.
        for child in &mut self.children {
            let _ = child.kill();
            let _ = child.wait();
        }
    }
}

/// Which writer's values these are, when they are one writer's.
fn writer_of(score: u8, verdict: PurposeVerdict) -> Option<usize> {
    (0..2).find(|&w| action(w) == (score, verdict))
}

/// A blind round: the session holds exactly one writer's whole action (every score, the
/// verdict and the time given, all that writer's). Returns the writer.
fn verify_blind(j: &Journal, sid: &str) -> usize {
    let st = j.review_state(sid).unwrap();
    let v = st
        .verdict
        .as_ref()
        .unwrap_or_else(|| panic!("{sid}: no verdict"));
    let w = writer_of(st.scores.first().map_or(0, |c| c.blind), v.blind)
        .unwrap_or_else(|| panic!("{sid}: not one writer's action: {st:?}"));
    let (score, verdict) = action(w);
    assert_eq!(st.scores.len(), INTERVALS as usize, "{sid}: {st:?}");
    for (k, c) in st.scores.iter().enumerate() {
        assert_eq!(c.interval, k as u32 + 1, "{sid}");
        assert_eq!((c.blind, c.current), (score, score), "{sid}: a mix: {st:?}");
        assert_eq!(c.given_at, when(w), "{sid}: a mix of times: {st:?}");
    }
    assert_eq!((v.blind, v.current), (verdict, verdict), "{sid}");
    assert_eq!(v.given_at, when(w), "{sid}");
    assert_eq!(st.stage, ReviewStage::Graded, "{sid}");
    assert!(j.revisions(sid).unwrap().is_empty(), "{sid}");
    w
}

/// The values one grading action after the reveal recorded: (scores by interval, verdict),
/// checking that each revision's old value is the value in force before it.
fn revised_action(
    sid: &str,
    revs: &[splitdesk::journal::Revision],
    before: (u8, PurposeVerdict),
) -> (Vec<u8>, Option<PurposeVerdict>) {
    let mut scores = vec![0u8; INTERVALS as usize];
    let mut verdict = None;
    for r in revs {
        match r.change {
            RevisionChange::Score { interval, old, new } => {
                assert_eq!(old, before.0, "{sid}: revision chain broken: {revs:?}");
                let slot = &mut scores[interval as usize - 1];
                assert_eq!(*slot, 0, "{sid}: interval {interval} twice in one action");
                *slot = new;
            }
            RevisionChange::Verdict { old, new } => {
                assert_eq!(old, before.1, "{sid}: verdict chain broken: {revs:?}");
                assert!(verdict.is_none(), "{sid}: verdict twice in one action");
                verdict = Some(new);
            }
        }
    }
    (scores, verdict)
}

/// A revealed round: the blind grades untouched; the revisions are the two writers' whole
/// actions one after the other, never interleaved, and what is in force is the later
/// writer's whole action. Returns the later writer.
fn verify_revealed(j: &Journal, sid: &str) -> usize {
    let st = j.review_state(sid).unwrap();
    assert!(st.revealed_at.is_some(), "{sid}");
    let per_action = INTERVALS as usize + 1;
    let revs = j.revisions(sid).unwrap();
    assert_eq!(revs.len(), 2 * per_action, "{sid}: {revs:?}");
    let (first_scores, first_verdict) = revised_action(sid, &revs[..per_action], BASE);
    let first = writer_of(first_scores[0], first_verdict.unwrap_or(BASE.1))
        .unwrap_or_else(|| panic!("{sid}: first action is no writer's: {revs:?}"));
    assert_eq!(
        first_scores,
        vec![action(first).0; INTERVALS as usize],
        "{sid}: a mix"
    );
    assert_eq!(first_verdict, Some(action(first).1), "{sid}");
    let (second_scores, second_verdict) = revised_action(sid, &revs[per_action..], action(first));
    let second = 1 - first;
    assert_eq!(
        second_scores,
        vec![action(second).0; INTERVALS as usize],
        "{sid}: a mix"
    );
    assert_eq!(second_verdict, Some(action(second).1), "{sid}");
    for r in &revs {
        let w = if r.at == when(0) { 0 } else { 1 };
        assert_eq!(r.at, when(w), "{sid}: {revs:?}");
    }
    assert!(
        revs[..per_action].iter().all(|r| r.at == when(first)),
        "{sid}: interleaved"
    );
    assert!(
        revs[per_action..].iter().all(|r| r.at == when(second)),
        "{sid}: interleaved"
    );
    let (score, verdict) = action(second);
    for c in &st.scores {
        assert_eq!((c.blind, c.current), (BASE.0, score), "{sid}: {st:?}");
    }
    let v = st.verdict.as_ref().unwrap();
    assert_eq!((v.blind, v.current), (BASE.1, verdict), "{sid}");
    second
}

#[test]
fn two_processes_grading_one_session_leave_one_whole_action() {
    let Some(db) = Db::fresh("pgcon_race") else {
        return;
    };
    let began = Instant::now();
    let mut j = db.open();
    let mut writers = Writers::start(&db.url);
    let mut wins = [0usize; 2];
    let mut overlapped = 0;
    let mut revealed_rounds = 0;
    for round in 0..ROUNDS {
        let sid = format!("race/r{round:02}");
        j.upsert_session(&session(&sid, round as u64 + 1, INTERVALS), t(0))
            .unwrap();
        let revealed = round % 2 == 1;
        if revealed {
            j.grade(&sid, &all(BASE.0), Some(BASE.1), t(1)).unwrap();
            j.reveal(&sid, t(2)).unwrap();
            revealed_rounds += 1;
        }
        writers.both("grade", &sid);
        let [a, b] = writers.both_ok(&sid);
        if a.0.max(b.0) < a.1.min(b.1) {
            overlapped += 1;
        }
        let last = if revealed {
            verify_revealed(&j, &sid)
        } else {
            verify_blind(&j, &sid)
        };
        wins[last] += 1;
    }
    writers.finish();
    // One review per session: the two writers never both started one.
    let report = j.check().unwrap();
    assert!(report.is_ok(), "{:?}", report.problems);
    assert_eq!(report.sessions, ROUNDS as u64);
    assert_eq!(report.reviews, ROUNDS as u64);
    assert_eq!(report.scores, (ROUNDS as u64) * u64::from(INTERVALS));
    assert_eq!(
        report.revisions,
        revealed_rounds * 2 * (u64::from(INTERVALS) + 1)
    );
    // The writers really raced: their grading calls ran at the same time (one waiting for
    // the other's write lock) in most rounds.
    assert!(overlapped >= 1, "the writers never ran at the same time");
    eprintln!(
        "pg grading race: {ROUNDS} rounds, calls overlapped in {overlapped}, last writer \
         0/1: {}/{}, {:.1} s",
        wins[0],
        wins[1],
        began.elapsed().as_secs_f64()
    );
}

#[test]
fn two_processes_saving_at_once_lose_nothing() {
    let Some(db) = Db::fresh("pgcon_many") else {
        return;
    };
    let began = Instant::now();
    let sid = "ines/tue-intervals";
    let mut j = db.open();
    j.upsert_session(&session(sid, 1, 1), t(0)).unwrap();
    j.grade(sid, &[(1, 3)], Some(PurposeVerdict::Met), t(1))
        .unwrap();
    j.reveal(sid, t(2)).unwrap();

    let mut writers = Writers::start(&db.url);
    writers.both("many", sid);
    let [a, b] = writers.both_ok(sid);
    writers.finish();
    assert!(
        a.0.max(b.0) < a.1.min(b.1),
        "the writers did not run at the same time: {a:?} {b:?}"
    );

    let hist = j.feedback_history(sid).unwrap();
    assert_eq!(hist.len(), 2 * PER_WRITER);
    let rulers = j.rulers(sid).unwrap();
    assert_eq!(rulers.len(), 2 * PER_WRITER);
    for who in 0..2 {
        for i in 0..PER_WRITER {
            let body = format!("writer {who} version {i}");
            assert!(hist.iter().any(|v| v.body == body), "lost: {body}");
            let from = (who * 10_000 + i) as f64;
            assert!(
                rulers
                    .iter()
                    .any(|r| r.from_s == from && r.to_s == from + 0.5),
                "lost: writer {who} ruler {i}"
            );
        }
    }
    // Each writer's own saves keep their order; the versions got increasing numbers.
    for who in 0..2 {
        let mine: Vec<&str> = hist
            .iter()
            .map(|v| v.body.as_str())
            .filter(|b| b.starts_with(&format!("writer {who} ")))
            .collect();
        let expected: Vec<String> = (0..PER_WRITER)
            .map(|i| format!("writer {who} version {i}"))
            .collect();
        assert_eq!(mine, expected, "writer {who}'s versions out of order");
    }
    // No lost read-modify-write: each revision's old value is the previous one's new value.
    let revs = j.revisions(sid).unwrap();
    assert_eq!(revs.len(), 2 * PER_WRITER);
    let mut prev = 3u8;
    for r in &revs {
        match r.change {
            RevisionChange::Score { interval, old, new } => {
                assert_eq!(interval, 1);
                assert_eq!(old, prev, "revision chain broken");
                assert_ne!(old, new);
                prev = new;
            }
            RevisionChange::Verdict { .. } => panic!("unexpected verdict revision"),
        }
    }
    let st = j.review_state(sid).unwrap();
    assert_eq!(st.scores[0].blind, 3, "blind score untouched");
    assert_eq!(st.scores[0].current, prev);
    let report = j.check().unwrap();
    assert!(report.is_ok(), "{:?}", report.problems);
    assert_eq!(report.feedback_versions, 2 * PER_WRITER as u64);
    assert_eq!(report.rulers, 2 * PER_WRITER as u64);
    assert_eq!(report.revisions, 2 * PER_WRITER as u64);
    eprintln!(
        "pg many writes: 2 writers x {} writes, {:.1} s",
        3 * PER_WRITER,
        began.elapsed().as_secs_f64()
    );
}

#[test]
fn a_write_lock_held_too_long_is_reported_as_busy() {
    let Some(db) = Db::fresh("pgcon_busy") else {
        return;
    };
    let sid = "ines/tue-intervals";
    let mut j = db.open();
    j.upsert_session(&session(sid, 1, INTERVALS), t(0)).unwrap();
    let timeout = Duration::from_millis(300);
    j.set_busy_timeout(timeout).unwrap();

    // Another workstation in the middle of a write: its transaction holds the lock.
    let mut other = pg_support::connect(&db.url).unwrap();
    let mut tx = other.transaction().unwrap();
    tx.execute("SELECT pg_advisory_xact_lock($1)", &[&WRITE_LOCK])
        .unwrap();

    let (score, verdict) = action(0);
    let began = Instant::now();
    let err = j
        .grade(sid, &all(score), Some(verdict), when(0))
        .unwrap_err();
    let waited = began.elapsed();
    assert!(matches!(err, JournalError::Busy { .. }), "{err:?}");
    assert!(err.to_string().contains("busy"), "{err}");
    assert!(
        waited >= timeout - Duration::from_millis(20) && waited < Duration::from_secs(3),
        "waited {waited:?} for a {timeout:?} timeout"
    );
    // The password never shows in the message.
    if let Ok(pw) = std::env::var("PGPASSWORD") {
        assert!(pw.is_empty() || !err.to_string().contains(&pw));
    }
    // Other kinds of write are refused the same way.
    let err = j.add_ruler(sid, 1.0, 2.0, t(5)).unwrap_err();
    assert!(matches!(err, JournalError::Busy { .. }), "{err:?}");

    // Nothing saved, and reading does not wait for the lock.
    let began = Instant::now();
    let st = j.review_state(sid).unwrap();
    assert!(
        began.elapsed() < timeout,
        "a read waited for the write lock"
    );
    assert_eq!(st.stage, ReviewStage::New);
    assert!(st.scores.is_empty() && st.verdict.is_none(), "{st:?}");
    assert!(j.rulers(sid).unwrap().is_empty());

    tx.rollback().unwrap();
    j.grade(sid, &all(score), Some(verdict), when(0)).unwrap();
    assert_eq!(verify_blind(&j, sid), 0);
    j.add_ruler(sid, 1.0, 2.0, t(5)).unwrap();
    assert_eq!(j.rulers(sid).unwrap().len(), 1);

    // A lock held only briefly is waited for: the write goes through once it is released.
    j.set_busy_timeout(Duration::from_secs(5)).unwrap();
    let (locked_tx, locked) = mpsc::channel();
    let release = std::thread::spawn(move || {
        let mut tx = other.transaction().unwrap();
        tx.execute("SELECT pg_advisory_xact_lock($1)", &[&WRITE_LOCK])
            .unwrap();
        locked_tx.send(()).unwrap();
        std::thread::sleep(Duration::from_millis(200));
        tx.commit().unwrap();
    });
    locked.recv().unwrap();
    let began = Instant::now();
    j.add_ruler(sid, 3.0, 4.0, t(6)).unwrap();
    let waited = began.elapsed();
    release.join().unwrap();
    assert!(
        waited >= Duration::from_millis(150),
        "the write did not wait for the lock ({waited:?})"
    );
    assert_eq!(j.rulers(sid).unwrap().len(), 2);
}

/// Poll `j.data_version()` every 50 ms until it differs from `from`; how long that took.
/// Fails after one second. With `nudge`, `j` also reads the journal before each look (as a
/// busy workstation would), which makes the client library take in what the server sent.
fn seen_within_a_second(j: &Journal, from: i64, what: &str, nudge: bool) -> Duration {
    let began = Instant::now();
    loop {
        if nudge {
            j.staff_size().unwrap();
        }
        if j.data_version().unwrap() != from {
            return began.elapsed();
        }
        assert!(
            began.elapsed() < Duration::from_secs(1),
            "{what}: not seen by the other connection within a second"
        );
        std::thread::sleep(Duration::from_millis(50));
    }
}

/// Two handles (two connections) on one journal: each change made through one is seen by
/// the other within a second, as exactly one change, and never by the handle that made it;
/// a refused write announces nothing.
fn changes_seen_elsewhere(tag: &str, nudge: bool) {
    let Some(db) = Db::fresh(tag) else {
        return;
    };
    let sid = "ines/tue-intervals";
    let mut a = db.open();
    let mut b = db.open();
    let (a0, b0) = (a.data_version().unwrap(), b.data_version().unwrap());
    let mut slowest = Duration::ZERO;
    let mut seen = |j: &Journal, from: i64, what: &str| {
        slowest = slowest.max(seen_within_a_second(j, from, what, nudge));
    };

    // Writes through `a` are seen by `b`, one change each, never by `a` itself.
    a.upsert_session(&session(sid, 1, INTERVALS), t(0)).unwrap();
    seen(&b, b0, "a new session");
    assert_eq!(b.data_version().unwrap(), b0 + 1);
    let (score, verdict) = action(0);
    a.grade(sid, &all(score), Some(verdict), when(0)).unwrap();
    seen(&b, b0 + 1, "a grading action");
    assert_eq!(
        b.data_version().unwrap(),
        b0 + 2,
        "one grading action, one change"
    );
    for k in 0..3 {
        a.add_ruler(sid, f64::from(k), f64::from(k) + 1.0, t(5))
            .unwrap();
        seen(&b, b0 + 2 + i64::from(k), "a ruler");
    }
    assert_eq!(b.data_version().unwrap(), b0 + 5);
    assert_eq!(
        a.data_version().unwrap(),
        a0,
        "a's own writes changed a's data version"
    );
    // What `b` reads after the change is the change.
    assert_eq!(b.rulers(sid).unwrap().len(), 3);
    assert_eq!(verify_blind(&b, sid), 0);

    // A refused write changes nothing and announces nothing: after it and one real write,
    // `b` has seen exactly one change.
    let err = a.save_feedback(sid, "before the reveal", t(6)).unwrap_err();
    assert!(!matches!(err, JournalError::Busy { .. }), "{err:?}");
    a.reveal(sid, t(7)).unwrap();
    seen(&b, b0 + 5, "the reveal");
    assert_eq!(
        b.data_version().unwrap(),
        b0 + 6,
        "a refused write was announced"
    );

    // And the other way round.
    b.save_feedback(sid, "steady work", t(8)).unwrap();
    seen(&a, a0, "feedback saved by b");
    assert_eq!(a.data_version().unwrap(), a0 + 1);
    assert_eq!(
        b.data_version().unwrap(),
        b0 + 6,
        "b's own write changed b's data version"
    );
    assert_eq!(a.feedback(sid).unwrap().unwrap().body, "steady work");
    eprintln!(
        "pg notifications ({}): 7 changes seen by the other connection, slowest after {} ms \
         (polled every 50 ms)",
        if nudge {
            "observer also reading"
        } else {
            "observer only polling"
        },
        slowest.as_millis()
    );
}

/// The check as stated: the observer does nothing but poll `data_version()`.
#[test]
fn a_change_made_elsewhere_is_seen_within_a_second() {
    changes_seen_elsewhere("pgcon_notify", false);
}

/// The same with an observer that also reads the journal between looks (a workstation
/// redrawing its screen): the counting itself (one per write, none for one's own, none for
/// a refused write) and the delay.
#[test]
fn a_change_made_elsewhere_is_seen_by_a_reading_workstation() {
    changes_seen_elsewhere("pgcon_notify_read", true);
}
