//! The fuzz targets' inputs as ordinary tests, on stable: every seed under `fuzz/corpus/` and
//! every input a fuzzer ever failed on (`tests/fuzz-regressions/<target>/`) goes through the
//! same entry point as the fuzzer (`fuzz/src/entry.rs`, included below), which panics on a
//! panic inside splitdesk or on a result that breaks its invariants (see FUZZING.md).
//!
//! The seed corpus is written by our own writers: `cargo test --test fuzz_regressions --
//! --ignored write_seed_corpus` rewrites it.

mod fit_common;

#[path = "../fuzz/src/entry.rs"]
#[allow(dead_code)]
mod entry;

use std::path::{Path, PathBuf};

use splitdesk::demo::{fit_writer, gpx_writer, tcx_writer};
use splitdesk::model::{Session, Sport};

type Target = (&'static str, fn(&[u8]));

const TARGETS: [Target; 8] = [
    ("fit", entry::fit),
    ("tcx", entry::tcx),
    ("gpx", entry::gpx),
    ("plan_toml", entry::plan_toml),
    ("plan_line", entry::plan_line),
    ("profile", entry::profile),
    ("analysis", entry::analysis),
    ("journal_cache", entry::journal_cache),
];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The files directly inside `dir`, sorted; none when it does not exist.
fn files(dir: &Path) -> Vec<PathBuf> {
    let mut out: Vec<PathBuf> = match std::fs::read_dir(dir) {
        Ok(rd) => rd
            .map(|e| e.unwrap().path())
            .filter(|p| p.is_file() && !is_readme(p))
            .collect(),
        Err(_) => Vec::new(),
    };
    out.sort();
    out
}

fn is_readme(p: &Path) -> bool {
    p.file_name().is_some_and(|n| n == "README.md")
}

fn run_dir(target: &str, f: fn(&[u8]), dir: &Path) -> usize {
    let inputs = files(dir);
    for path in &inputs {
        let bytes = std::fs::read(path).unwrap();
        let outcome = std::panic::catch_unwind(|| f(&bytes));
        assert!(
            outcome.is_ok(),
            "{target}: {} made the entry point panic (replay: cargo run --manifest-path \
             fuzz/Cargo.toml --no-default-features --bin {target} -- {})",
            path.display(),
            path.display()
        );
    }
    inputs.len()
}

#[test]
fn every_seed_passes_its_target() {
    for (target, f) in TARGETS {
        let dir = root().join("fuzz/corpus").join(target);
        let n = run_dir(target, f, &dir);
        assert!(n >= 3, "{target}: only {n} seeds in {}", dir.display());
    }
}

#[test]
fn every_saved_fuzz_failure_passes_its_target() {
    let mut total = 0;
    for (target, f) in TARGETS {
        total += run_dir(
            target,
            f,
            &root().join("tests/fuzz-regressions").join(target),
        );
    }
    // The folder's README lists what each saved input found.
    assert!(root().join("tests/fuzz-regressions/README.md").is_file());
    eprintln!("{total} saved fuzz inputs replayed");
}

/// The ingest seeds decode to the sessions they were written from (so the fuzzer starts from
/// files that reach the deep parts of each reader, not from inputs rejected at the door).
#[test]
fn ingest_seeds_decode() {
    for (dir, format) in [
        ("fit", splitdesk::model::FileFormat::Fit),
        ("tcx", splitdesk::model::FileFormat::Tcx),
        ("gpx", splitdesk::model::FileFormat::Gpx),
    ] {
        for path in files(&root().join("fuzz/corpus").join(dir)) {
            let bytes = std::fs::read(&path).unwrap();
            let s = splitdesk::ingest::ingest_bytes(&bytes, format, None)
                .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            assert!(s.len() >= 20, "{}: {} samples", path.display(), s.len());
        }
    }
}

// ----- the seed corpus -----

/// Small sessions for the ingest seeds: a run with every channel, a pause and laps; a run
/// without positions (GPX: without altitude) and without laps; a ride with holes in the heart
/// rate. `samples` keeps the XML seeds near 30 KB.
fn seed_sessions(samples: usize, gps_always: bool) -> Vec<(&'static str, Session)> {
    // The pause of `fit_common::session` starts at 600 s: keep it in the longest session.
    let full = fit_common::session(samples.max(640), true);
    let full = if samples < 640 {
        cut(full, samples)
    } else {
        full
    };
    let mut bare = fit_common::session(samples * 2 / 3, false);
    if !gps_always {
        bare.lat = None;
        bare.lon = None;
    }
    bare.pauses.clear();
    bare.laps.clear();
    let mut ride = fit_common::session(samples / 2, true);
    ride.sport = Sport::Cycling;
    if let Some(hr) = ride.hr.as_mut() {
        for (i, v) in hr.values.iter_mut().enumerate() {
            if i % 7 == 3 {
                *v = None;
            }
        }
    }
    vec![
        ("run-full", full),
        ("run-no-gps", bare),
        ("ride-holes", ride),
    ]
}

/// The first `n` samples of a session, with its laps and pauses cut to them.
fn cut(mut s: Session, n: usize) -> Session {
    let n = n.min(s.len());
    s.t.truncate(n);
    s.time.truncate(n);
    for ch in [
        &mut s.distance,
        &mut s.speed,
        &mut s.hr,
        &mut s.cadence,
        &mut s.altitude,
        &mut s.lat,
        &mut s.lon,
    ]
    .into_iter()
    .flatten()
    {
        ch.values.truncate(n);
    }
    let end = s.duration_s();
    s.pauses.retain(|p| p.to_s <= end);
    s.laps.retain(|l| l.start_s < end);
    if let Some(last) = s.laps.last_mut() {
        last.end_s = end;
    }
    s
}

fn write(dir: &Path, name: &str, bytes: &[u8]) {
    std::fs::create_dir_all(dir).unwrap();
    std::fs::write(dir.join(name), bytes).unwrap();
}

const STEP_TABLES: &str = r#"title = "Half-marathon rhythm"
purpose = "Rhythm at half pace."
date = 2026-10-20

[[step]]
duration = "12:00"
pace = "easy"

[[step]]
repeat = 5
recovery = { duration = "2:00", mode = "jog" }

[[step.work]]
duration = "3:00"
pace = "half"

[[step.work]]
duration = "1:00"
pace = "5k"

[[step]]
repeat = 4
distance = "200m"
pace = "4:00/km"
tolerance = 2

[step.recovery]
distance = "200m"
mode = "walk"

[[step]]
duration = "8:00"
pace = "easy"
"#;

#[test]
#[ignore = "rewrites fuzz/corpus; run by hand"]
fn write_seed_corpus() {
    let corpus = root().join("fuzz/corpus");
    for (name, s) in seed_sessions(700, false) {
        let bytes = fit_writer::write(&s);
        write(&corpus.join("fit"), &format!("{name}.fit"), &bytes);
    }
    for (name, s) in seed_sessions(45, false) {
        let bytes = tcx_writer::write(&s);
        write(&corpus.join("tcx"), &format!("{name}.tcx"), &bytes);
    }
    for (name, s) in seed_sessions(60, true) {
        let bytes = gpx_writer::write(&s);
        write(&corpus.join("gpx"), &format!("{name}.gpx"), &bytes);
    }

    // Plans, profiles and plan lines from the demo roster.
    let demo = root().join("demo-athletes");
    let plans = [
        "mira-castellan/plans/2026-10-27-intervals.toml",
        "mira-castellan/plans/2026-11-07-tempo.toml",
        "mira-castellan/plans/2026-11-03-short-reps.toml",
        "mira-castellan/plans/2026-10-25-long-run.toml",
        "ansel-marchetti/plans/2026-10-22-cruise-miles.toml",
    ];
    let mut lines = Vec::new();
    for rel in plans {
        let text = std::fs::read_to_string(demo.join(rel)).unwrap();
        let name = Path::new(rel).file_name().unwrap().to_str().unwrap();
        write(&corpus.join("plan_toml"), name, text.as_bytes());
        let plan = splitdesk::plan::parse_toml(&text, Some(name)).unwrap();
        lines.push(splitdesk::plan::describe_line(&plan.steps));
    }
    // The same plan as `[[step]]` tables.
    write(
        &corpus.join("plan_toml"),
        "step-tables.toml",
        STEP_TABLES.as_bytes(),
    );
    splitdesk::plan::parse_toml(STEP_TABLES, None).unwrap();
    lines.push("12:00 easy; 5 x (3:00 @ half, 1:00 @ 5k) / 2:00 jog; 8:00 easy".into());
    lines.push("10:00 easy; 3 x 1mi @ 6:10-6:20/mi / 400m walk; 2km easy".into());
    for (k, line) in lines.iter().enumerate() {
        write(
            &corpus.join("plan_line"),
            &format!("line-{k}.txt"),
            line.as_bytes(),
        );
    }
    for athlete in ["mira-castellan", "ansel-marchetti", "dagny-holloway"] {
        let text = std::fs::read(demo.join(athlete).join("athlete.toml")).unwrap();
        write(&corpus.join("profile"), &format!("{athlete}.toml"), &text);
    }
    write(
        &corpus.join("profile"),
        "zones.toml",
        format!(
            "{}\n[[hr_zones]]\nname = \"easy\"\nfrom = 120\nto = 150\n",
            entry::PROFILE_TOML
        )
        .as_bytes(),
    );

    // The analysis target reads bytes with `arbitrary`: a few deterministic byte patterns
    // of different lengths.
    let mut rng = fit_common::XorShift(0xF022);
    for (k, len) in [600usize, 3000, 12000].into_iter().enumerate() {
        let mut bytes = rng.bytes(len);
        // Mostly 1-s steps: keep the step byte of each 9-byte sample small.
        for chunk in bytes.iter_mut().skip(12).step_by(9) {
            *chunk %= 200;
        }
        write(
            &corpus.join("analysis"),
            &format!("pattern-{k}.bin"),
            &bytes,
        );
    }

    // The journal's cached rows: a real cached review, as text (mode 0) and stored in the
    // journal (mode 1), and a review JSON with a byte that is not UTF-8 (mode 5).
    let (_, s) = &seed_sessions(200, false)[0];
    let bytes = fit_writer::write(s);
    let session =
        splitdesk::ingest::ingest_bytes(&bytes, splitdesk::model::FileFormat::Fit, None).unwrap();
    let review = splitdesk::analysis::analyze(
        &session,
        None,
        &splitdesk::model::AthleteProfile::bare("seed"),
    );
    let json = serde_json::to_vec(&review).unwrap();
    for (mode, name) in [
        (0u8, "review-text"),
        (1, "review-row"),
        (3, "review-row-reopen"),
    ] {
        let mut input = vec![mode];
        input.extend_from_slice(&json);
        write(
            &corpus.join("journal_cache"),
            &format!("{name}.bin"),
            &input,
        );
    }
    let mut bad = vec![5u8];
    bad.extend_from_slice(&json);
    if let Some(at) = bad.iter().position(|&b| b == b':') {
        bad.insert(at + 1, 0xFF);
    }
    write(
        &corpus.join("journal_cache"),
        "review-row-bad-utf8.bin",
        &bad,
    );
}
