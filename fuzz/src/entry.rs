//! The fuzz targets' entry points: one function per target, taking the raw input bytes.
//!
//! Shared by the libFuzzer binaries (`fuzz/fuzz_targets/*.rs`) and by the stable test
//! `tests/fuzz_regressions.rs`, which replays the seed corpus and every saved crash input
//! through exactly these functions. Each function panics only when splitdesk misbehaves:
//! a panic inside splitdesk, or a result that breaks one of the invariants checked here
//! (a session whose channels disagree in length or carry a non-finite value, a time axis that
//! goes backwards, a plan that its own one-line description does not read back).

use std::path::PathBuf;
use std::sync::{Mutex, OnceLock};

use arbitrary::Unstructured;
use chrono::{DateTime, Duration, TimeZone, Utc};

use splitdesk::analysis::review::{Review, ANALYSIS_VERSION};
use splitdesk::ingest;
use splitdesk::journal::{Journal, SessionRecord, SummaryCache};
use splitdesk::model::{
    AthleteProfile, Channel, DeviceLap, FileFormat, Pause, Plan, Session, Sport, Units,
};

/// The largest input any target reads in full (libFuzzer's `-max_len` is smaller).
pub const MAX_INPUT: usize = 1 << 20;

/// Largest session the analysis target builds.
pub const MAX_SAMPLES: usize = 5000;

/// A full profile (paces, HR bounds, threshold), as a roster athlete would have.
pub const PROFILE_TOML: &str = r#"name = "Fuzz Athlete"
sex = "female"
birth_year = 1990
hr_max = 195
hr_rest = 50
threshold_pace = "4:00/km"
units = "km"

[paces]
easy = "5:10/km"
marathon = "4:25/km"
half = "4:08/km"
10k = "3:55/km"
5k = "3:45/km"
"#;

/// Plans the analysis target chooses from (shorthand as in the demo roster's plans).
const PLAN_LINES: [&str; 5] = [
    "15:00 easy; 6 x 3:00 @ 5k / 1:30 jog; 10:00 easy",
    "15:00 easy; 4 x 1km @ threshold ±6 / 2:00 jog; 10:00 easy",
    "15:00 easy; 8 x 200m @ 2:50-3:00/km / 200m walk; 10:00 easy",
    "15:00 easy; work 5km; 10:00 easy",
    "1:00:00 easy",
];

fn full_profile() -> AthleteProfile {
    ingest_profile(PROFILE_TOML)
}

fn ingest_profile(text: &str) -> AthleteProfile {
    splitdesk::roster::read_profile(text, "fuzz-athlete", Units::Km).profile
}

// ----- ingest -----

/// FIT bytes through the public ingest entry.
pub fn fit(data: &[u8]) {
    ingest_as(data, FileFormat::Fit);
}

/// TCX bytes through the public ingest entry.
pub fn tcx(data: &[u8]) {
    ingest_as(data, FileFormat::Tcx);
}

/// GPX bytes through the public ingest entry.
pub fn gpx(data: &[u8]) {
    ingest_as(data, FileFormat::Gpx);
}

fn ingest_as(data: &[u8], format: FileFormat) {
    if data.len() > MAX_INPUT {
        return;
    }
    let profile = full_profile();
    // As a roster file with the right extension...
    check_outcome(ingest::ingest_bytes(data, format, Some(&profile)));
    // ...and as one whose format is found from the content alone.
    if let Some(sniffed) = ingest::detect_format(None, data) {
        if sniffed != format {
            check_outcome(ingest::ingest_bytes(data, sniffed, None));
        }
    }
}

/// A clean error, or a session that keeps its invariants. The FIT reader's last-resort
/// `catch_unwind` ("decoder crashed") counts as a failure: that panic was not prevented.
pub fn check_outcome(outcome: Result<Session, ingest::ParseError>) {
    match outcome {
        Ok(session) => check_session(&session),
        Err(e) => {
            let text = e.to_string();
            assert!(!text.contains("decoder crashed"), "{text}");
            assert!(!text.is_empty());
        }
    }
}

/// The invariants every ingested session keeps (model::Session's documentation).
pub fn check_session(s: &Session) {
    let n = s.len();
    assert!(n > 0, "an ingested session has samples");
    assert_eq!(s.time.len(), n, "one absolute time per sample");
    assert!(
        s.t.iter().all(|t| t.is_finite()),
        "elapsed times are finite"
    );
    assert!(
        s.t.windows(2).all(|w| w[0] <= w[1]),
        "elapsed time never goes backwards"
    );
    assert_eq!(s.t.first().copied(), Some(0.0), "time starts at 0");
    for (name, ch) in [
        ("distance", &s.distance),
        ("speed", &s.speed),
        ("hr", &s.hr),
        ("cadence", &s.cadence),
        ("altitude", &s.altitude),
        ("lat", &s.lat),
        ("lon", &s.lon),
    ] {
        if let Some(ch) = ch {
            assert_eq!(ch.len(), n, "{name}: one value per sample");
            assert!(
                ch.iter_present().all(|(_, v)| v.is_finite()),
                "{name}: finite values only"
            );
        }
    }
    for f in &s.flags {
        assert!(
            f.from_s.is_finite() && f.to_s.is_finite(),
            "flag bounds finite"
        );
    }
    for p in &s.pauses {
        assert!(
            p.from_s.is_finite() && p.to_s.is_finite(),
            "pause bounds finite"
        );
    }
    for l in &s.laps {
        assert!(
            l.start_s.is_finite() && l.end_s.is_finite(),
            "lap bounds finite"
        );
    }
    assert!(s.duration_s().is_finite());
    assert!(s.timer_s().is_finite());
    if let Some(d) = s.distance_m() {
        assert!(
            d.is_finite() && d >= 0.0,
            "distance finite and not negative"
        );
    }
}

// ----- plans and profiles -----

/// The plan TOML parser, with the error rendering a coach sees.
pub fn plan_toml(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let profile = full_profile();
    for name in [None, Some("2026-10-27-intervals.toml")] {
        match splitdesk::plan::parse_toml(text, name) {
            Ok(plan) => {
                let _ = splitdesk::plan::format_expanded(&plan, Some(&profile));
                let _ = splitdesk::plan::format_expanded(&plan, None);
                for u in splitdesk::plan::unknown_paces(&plan, &profile, text) {
                    let _ = u.message(&profile);
                }
                let _ = splitdesk::plan::describe_line(&plan.steps);
            }
            Err(e) => {
                let _ = e.to_string();
                let _ = e.located();
                let _ = e.snippet(text);
            }
        }
    }
}

/// The one-line plan shorthand. A parsed line's own description must parse back to the same
/// steps (the workstation writes plans back in that form).
pub fn plan_line(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match splitdesk::plan::parse_line(text) {
        Ok(steps) => {
            let line = splitdesk::plan::describe_line(&steps);
            let again = splitdesk::plan::parse_line(&line);
            assert!(
                again.is_ok(),
                "the description {line:?} of {text:?} does not parse: {again:?}"
            );
            let profile = full_profile();
            let plan = Plan {
                title: String::new(),
                purpose: String::new(),
                date: None,
                steps,
            };
            let _ = splitdesk::plan::format_expanded(&plan, Some(&profile));
            let _ = splitdesk::plan::unknown_paces(&plan, &profile, text);
        }
        Err(e) => {
            let _ = e.to_string();
            let _ = e.located();
            let _ = e.snippet(text);
        }
    }
}

/// The athlete profile loader (lenient and strict), from a string.
pub fn profile(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    for units in [Units::Km, Units::Mi] {
        let report = splitdesk::roster::read_profile(text, "fuzz-athlete", units);
        let p = &report.profile;
        for v in [p.hr_max, p.hr_rest, p.threshold_speed_mps]
            .into_iter()
            .flatten()
        {
            assert!(v.is_finite(), "profile numbers are finite");
        }
        for (name, v) in &p.paces {
            assert!(v.is_finite() && *v > 0.0, "pace {name} is a positive speed");
        }
        for z in p.hr_zones.iter().flatten() {
            assert!(z.from.is_finite() && z.to.is_finite(), "zone bounds finite");
        }
        for problem in &report.problems {
            let _ = problem.to_string();
        }
        if let Err(e) = splitdesk::roster::parse_profile(text, "fuzz-athlete", units) {
            let _ = e.to_string();
        }
    }
}

// ----- analysis -----

/// A bounded session built from the input (at most [`MAX_SAMPLES`] samples, finite values),
/// cleaned as ingest cleans, then the whole review as the workspace runs it.
pub fn analysis(data: &[u8]) {
    let mut u = Unstructured::new(data);
    let Ok(built) = arbitrary_session(&mut u) else {
        return;
    };
    let Some((mut session, plan_choice, full)) = built else {
        return;
    };
    ingest::derive::fill_derived(&mut session);
    let profile = if full {
        full_profile()
    } else {
        AthleteProfile::bare("fuzz-athlete")
    };
    session.flags = ingest::clean::flag(&session, Some(&profile));
    let plan = plan_choice
        .and_then(|k| PLAN_LINES.get(k))
        .and_then(|line| splitdesk::plan::parse_line(line).ok())
        .map(|steps| Plan {
            title: "fuzz".into(),
            purpose: "fuzz".into(),
            date: None,
            steps,
        });
    let review = splitdesk::analysis::analyze(&session, plan.as_ref(), &profile);
    // The journal caches the review as JSON and reads it back.
    let json = serde_json::to_string(&review).expect("a review serialises");
    let back: Result<Review, _> = serde_json::from_str(&json);
    assert!(back.is_ok(), "a cached review reads back: {back:?}");
}

type Built = Option<(Session, Option<usize>, bool)>;

fn arbitrary_session(u: &mut Unstructured<'_>) -> arbitrary::Result<Built> {
    let sport = match u.int_in_range(0u8..=5)? {
        0 | 1 => Sport::Running,
        2 => Sport::Unknown,
        3 => Sport::Walking,
        4 => Sport::Cycling,
        _ => Sport::Other("orienteering".into()),
    };
    let plan_choice = match u.int_in_range(0u8..=5)? {
        0 => None,
        k => Some(usize::from(k - 1)),
    };
    let full = u.arbitrary::<bool>()?;
    // Which channels exist, and how often a sample inside one is missing.
    let mask: u8 = u.arbitrary()?;
    let gap_every = u.int_in_range(0u16..=400)?;
    let wanted = usize::from(u.int_in_range(1u16..=MAX_SAMPLES as u16)?);
    // Every sample reads about 9 bytes: do not invent samples the input does not hold.
    let n = wanted.min(u.len() / 9 + 1).min(MAX_SAMPLES);
    let start = Utc
        .timestamp_opt(1_790_000_000 + i64::from(u.arbitrary::<u16>()?), 0)
        .single()
        .unwrap_or_else(|| DateTime::<Utc>::from_timestamp(0, 0).unwrap_or_default());

    let mut t = Vec::with_capacity(n);
    let mut speed = Vec::with_capacity(n);
    let mut dist = Vec::with_capacity(n);
    let mut hr = Vec::with_capacity(n);
    let mut cad = Vec::with_capacity(n);
    let mut alt = Vec::with_capacity(n);
    let mut lat = Vec::with_capacity(n);
    let mut lon = Vec::with_capacity(n);
    let (mut now, mut d, mut la, mut lo) = (0.0f64, 0.0f64, 45.0f64, 7.0f64);
    for i in 0..n {
        let step: u8 = u.arbitrary()?;
        if i > 0 {
            now += match step {
                0..=199 => 1.0,
                200..=253 => f64::from(step - 200) * 0.5,
                254 => 0.0,
                _ => 600.0,
            };
        }
        t.push(now);
        let missing = gap_every > 0 && i % usize::from(gap_every) == usize::from(gap_every) / 2;
        let v = f64::from(u.arbitrary::<u16>()?) / 6000.0; // 0 to 10.9 m/s
        let jump: u8 = u.arbitrary()?;
        d += v * 1.0
            + if jump > 250 {
                f64::from(jump) * 4.0
            } else {
                0.0
            };
        let h: u8 = u.arbitrary()?;
        let c: u8 = u.arbitrary()?;
        let a = f64::from(u.arbitrary::<i16>()?) / 20.0;
        let (dla, dlo) = (u.arbitrary::<i8>()?, u.arbitrary::<i8>()?);
        la = (la + f64::from(dla) * 1e-5).clamp(-89.0, 89.0);
        lo = (lo + f64::from(dlo) * 1e-5).clamp(-179.0, 179.0);
        let keep = |x: f64| if missing { None } else { Some(x) };
        speed.push(keep(v));
        dist.push(keep(d));
        hr.push(if h == 0 { None } else { keep(f64::from(h)) });
        cad.push(keep(f64::from(c)));
        alt.push(keep(a));
        lat.push(keep(la));
        lon.push(keep(lo));
    }
    let time = t
        .iter()
        .map(|s| start + Duration::milliseconds((s * 1000.0) as i64))
        .collect();
    let channel =
        |bit: u8, values: Vec<Option<f64>>| (mask & (1 << bit) != 0).then(|| Channel::new(values));
    let end = now;
    let mut pauses = Vec::new();
    let mut laps = Vec::new();
    for _ in 0..u.int_in_range(0u8..=3)? {
        let a = f64::from(u.arbitrary::<u16>()?) % (end + 1.0);
        let b = (a + f64::from(u.arbitrary::<u8>()?)).min(end);
        pauses.push(Pause { from_s: a, to_s: b });
    }
    pauses.sort_by(|x, y| x.from_s.total_cmp(&y.from_s));
    let mut lap_start = 0.0;
    for _ in 0..u.int_in_range(0u8..=8)? {
        let len = f64::from(u.arbitrary::<u16>()?) % (end + 1.0);
        let lap_end = (lap_start + len).min(end);
        laps.push(DeviceLap {
            start_s: lap_start,
            end_s: lap_end,
            trigger: Some("manual".into()),
        });
        lap_start = lap_end;
    }
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = sport;
    s.t = t;
    s.time = time;
    s.speed = channel(0, speed);
    s.distance = channel(1, dist);
    s.hr = channel(2, hr);
    s.cadence = channel(3, cad);
    s.altitude = channel(4, alt);
    if mask & (1 << 5) != 0 {
        s.lat = Some(Channel::new(lat));
        s.lon = Some(Channel::new(lon));
    }
    s.pauses = pauses;
    s.laps = laps;
    s.content_hash = "0".repeat(64);
    Ok(Some((s, plan_choice, full)))
}

// ----- the journal's cached rows -----

struct CacheJournal {
    journal: Journal,
    raw: rusqlite::Connection,
    path: PathBuf,
    _dir: tempfile::TempDir,
}

const SESSION_ID: &str = "fuzz-athlete/2026-11-01-long-run";
const CONTENT_HASH: &str = "ab54a98ceb1f0ad2d0b3d8f6d3b1f2a5ab54a98ceb1f0ad2d0b3d8f6d3b1f2a5";

fn cache_journal() -> Option<&'static Mutex<CacheJournal>> {
    static J: OnceLock<Option<Mutex<CacheJournal>>> = OnceLock::new();
    J.get_or_init(|| {
        let dir = if std::path::Path::new("/dev/shm").is_dir() {
            tempfile::tempdir_in("/dev/shm").ok()?
        } else {
            tempfile::tempdir().ok()?
        };
        let path = dir.path().join("journal.sqlite");
        let mut journal = Journal::open(&path).ok()?;
        let record = SessionRecord {
            session_id: SESSION_ID.into(),
            athlete_id: "fuzz-athlete".into(),
            file_path: PathBuf::from("/roster/fuzz-athlete/activities/2026-11-01-long-run.fit"),
            content_hash: CONTENT_HASH.into(),
            start: Utc.timestamp_opt(1_790_000_000, 0).single()?,
            summary: Some(SummaryCache {
                json: "{}".into(),
                analysis_version: ANALYSIS_VERSION,
                work_intervals: 0,
                card: None,
            }),
        };
        journal.upsert_session(&record, Utc::now()).ok()?;
        let raw = rusqlite::Connection::open(&path).ok()?;
        raw.pragma_update(None, "synchronous", "OFF").ok()?;
        Some(Mutex::new(CacheJournal {
            journal,
            raw,
            path,
            _dir: dir,
        }))
    })
    .as_ref()
}

/// The journal reading its own cached rows. The first byte picks what the rest is:
/// * even: the text of a cached summary, deserialised into a `Review` as the workspace does;
/// * odd: raw bytes stored as the session's cached summary (as a damaged cache would hold
///   them, text or blob), then read through the journal's public API: the cached summary, the
///   queue, the review state and `journal check`; with bit 1 set the journal is also opened
///   again from the file. Grades must stay reachable whatever the cache holds.
pub fn journal_cache(data: &[u8]) {
    let Some((&mode, rest)) = data.split_first() else {
        return;
    };
    if mode % 2 == 0 {
        let _ = serde_json::from_slice::<Review>(rest);
        if let Ok(text) = std::str::from_utf8(rest) {
            let _ = serde_json::from_str::<serde_json::Value>(text);
        }
        return;
    }
    let Some(cell) = cache_journal() else {
        return;
    };
    let Ok(mut guard) = cell.lock() else {
        return;
    };
    let cj = &mut *guard;
    let stored = if mode & 4 != 0 {
        cj.raw.execute(
            "UPDATE session SET summary_json = ?1 WHERE session_id = ?2",
            rusqlite::params![rest, SESSION_ID],
        )
    } else {
        // Stored as TEXT whatever the bytes (invalid UTF-8 included), as a damaged file would.
        cj.raw.execute(
            "UPDATE session SET summary_json = CAST(?1 AS TEXT) WHERE session_id = ?2",
            rusqlite::params![rest, SESSION_ID],
        )
    };
    if stored.is_err() {
        return;
    }
    if let Ok(Some(json)) = cj.journal.cached_summary(SESSION_ID, ANALYSIS_VERSION) {
        let _ = serde_json::from_str::<Review>(&json);
    }
    // A damaged cache row is derived data: every read of the coach's own data still works.
    let _ = cj.journal.session_hash(SESSION_ID);
    assert!(cj.journal.sessions(None).is_ok(), "sessions");
    assert!(cj.journal.unreviewed(None).is_ok(), "unreviewed");
    assert!(cj.journal.review_state(SESSION_ID).is_ok(), "review state");
    assert!(cj.journal.revisions(SESSION_ID).is_ok(), "revisions");
    assert!(cj.journal.feedback(SESSION_ID).is_ok(), "feedback");
    assert!(cj.journal.check().is_ok(), "journal check");
    if mode & 2 != 0 {
        if let Ok(again) = Journal::open(&cj.path) {
            assert!(
                again.review_state(SESSION_ID).is_ok(),
                "review state, reopened"
            );
            assert!(again.check().is_ok(), "journal check, reopened");
        }
    }
}
