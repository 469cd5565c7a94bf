//! Differential test of our FIT message reader against fitparser.
//!
//! Reference: fitparser (crates.io, the FIT decoder splitdesk used before its own reader).
//! `ingest::fit::reference::decode_with_fitparser` frames the file the same way, lets
//! fitparser's stream processor split the messages and read the raw field values, and feeds
//! them to the same conversion as `ingest::fit::decode`. For every file here both must give
//! exactly the same session, or errors of the same kind; where the error comes from our own
//! checks (framing, CRC, message layout) the text must match too.
//!
//! Files: every FIT file of the demo roster, the fuzz seed corpus, the synthetic sessions the
//! FIT tests use (with compressed speed/distance and system-time variants), hand-made files
//! (big-endian definitions, compressed timestamps, odd field sizes, invalid values, arrays,
//! floats, strings, developer fields), a few hundred structurally mutated files
//! (`fit_mutate`, as in `fit_mutations.rs`) and files with random bytes changed inside a
//! correct frame (as in `fit_damaged.rs`).

mod fit_common;
mod fit_mutate;

use std::path::{Path, PathBuf};

use fit_common::{fit_file, XorShift};
use fit_mutate::{encode, mutate, parse, Rng};
use splitdesk::demo::fit_writer::{self, FitOptions};
use splitdesk::ingest::fit::{self, crc16, reference::decode_with_fitparser};
use splitdesk::ingest::ParseError;
use splitdesk::model::Session;

/// Reference errors that come from fitparser itself (its text is not ours to match).
fn from_fitparser(reason: &str) -> bool {
    reason.starts_with("decoder:") || reason.starts_with("bad developer field description")
}

/// Short form of an outcome for failure messages (sessions are long).
fn brief(r: &Result<Session, ParseError>) -> String {
    match r {
        Ok(s) => format!("a session of {} samples", s.len()),
        Err(e) => format!("{e:?}"),
    }
}

/// Compare both decoders on one file; `None` when they agree, else what differs.
fn differs(bytes: &[u8]) -> Option<String> {
    let ours = fit::decode(bytes);
    let theirs = decode_with_fitparser(bytes);
    let same = match (&ours, &theirs) {
        (Ok(a), Ok(b)) => a == b,
        (Err(ParseError::Fit(a)), Err(ParseError::Fit(b))) => a == b || from_fitparser(b),
        (Err(a), Err(b)) => a == b,
        // The one deliberate difference: our reader takes only the three bytes it needs from
        // a `field_description` (developer data index, field number, base type) and does not
        // refuse the whole file when the rest of the description is malformed, as fitparser's
        // profile decode does.
        (Ok(_), Err(ParseError::Fit(b))) => b.starts_with("bad developer field description"),
        _ => false,
    };
    (!same).then(|| format!("ours: {}; fitparser path: {}", brief(&ours), brief(&theirs)))
}

/// Check a named set of files; return (sessions read, errors) and collect the differences.
fn check(
    files: impl IntoIterator<Item = (String, Vec<u8>)>,
    failures: &mut Vec<String>,
) -> (usize, usize) {
    let mut counts = (0, 0);
    for (name, bytes) in files {
        if let Some(d) = differs(&bytes) {
            failures.push(format!("{name}: {d}"));
        }
        match fit::decode(&bytes) {
            Ok(_) => counts.0 += 1,
            Err(_) => counts.1 += 1,
        }
    }
    counts
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn fit_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    entries.sort();
    for p in entries {
        if p.is_dir() {
            fit_files(&p, out);
        } else if p.extension().is_some_and(|e| e.eq_ignore_ascii_case("fit")) {
            out.push(p);
        }
    }
}

fn demo_files() -> Vec<(String, Vec<u8>)> {
    let mut paths = Vec::new();
    fit_files(&root().join("demo-athletes"), &mut paths);
    fit_files(&root().join("fuzz/corpus/fit"), &mut paths);
    paths
        .into_iter()
        .map(|p| (p.display().to_string(), std::fs::read(&p).unwrap()))
        .collect()
}

/// The synthetic sessions of the FIT tests, through our writer with each of its options.
fn writer_files() -> Vec<(String, Vec<u8>)> {
    let mut out = Vec::new();
    for (name, secs, altitude, gps) in [
        ("run", 700, true, true),
        ("bare", 240, false, false),
        ("short", 3, true, true),
    ] {
        let mut s = fit_common::session(secs, altitude);
        if !gps {
            s.lat = None;
            s.lon = None;
        }
        let start = (s.start.timestamp() - fit::FIT_EPOCH_UNIX_S) as u32;
        for (opt, opts) in [
            ("plain", FitOptions::default()),
            (
                "compressed",
                FitOptions {
                    compressed_speed_distance: true,
                    ..FitOptions::default()
                },
            ),
            (
                "system-time",
                FitOptions {
                    system_time_offset: Some(start - 1000),
                    correlation: true,
                    ..FitOptions::default()
                },
            ),
            (
                "system-time-no-offset",
                FitOptions {
                    system_time_offset: Some(start - 1000),
                    correlation: false,
                    ..FitOptions::default()
                },
            ),
        ] {
            out.push((format!("{name}-{opt}"), fit_writer::write_with(&s, opts)));
        }
    }
    out
}

fn definition(local: u8, global: u16, big_endian: bool, fields: &[(u8, u8, u8)]) -> Vec<u8> {
    let mut m = vec![0x40 | local, 0, u8::from(big_endian)];
    if big_endian {
        m.extend_from_slice(&global.to_be_bytes());
    } else {
        m.extend_from_slice(&global.to_le_bytes());
    }
    m.push(fields.len() as u8);
    for f in fields {
        m.extend_from_slice(&[f.0, f.1, f.2]);
    }
    m
}

/// A definition with developer fields (number, size, developer data index).
fn definition_dev(
    local: u8,
    global: u16,
    fields: &[(u8, u8, u8)],
    dev: &[(u8, u8, u8)],
) -> Vec<u8> {
    let mut m = definition(local, global, false, fields);
    m[0] |= 0x20;
    m.push(dev.len() as u8);
    for d in dev {
        m.extend_from_slice(&[d.0, d.1, d.2]);
    }
    m
}

const TS: u32 = 1_000_000_000;

/// Records with one field each of many base types and sizes, valid and invalid values.
fn hand_made() -> Vec<(String, Vec<u8>)> {
    let mut out = Vec::new();
    // Every base type (and two unknown ones) as heart rate (field 3), and as speed (6), with
    // sizes of one element, two elements and an odd size; values valid, invalid and zero.
    let bases = [
        0x00u8,
        0x01,
        0x02,
        0x83,
        0x84,
        0x85,
        0x86,
        0x07,
        0x88,
        0x89,
        0x0A,
        0x8B,
        0x8C,
        0x0D,
        0x8E,
        0x8F,
        0x90,
        0x11,
        0xE7,
        0x04,
        0x84 & 0x7F,
    ];
    for &base in &bases {
        for field in [3u8, 6, 8, 73] {
            for size in [0u8, 1, 2, 3, 4, 8, 16] {
                for big in [false, true] {
                    let mut m = definition(0, 20, big, &[(253, 4, 0x86), (field, size, base)]);
                    for (k, fill) in [0x01u8, 0xFF, 0x00, 0x7F, 0x80, 0x42].iter().enumerate() {
                        m.push(0);
                        let t = TS + k as u32;
                        m.extend_from_slice(&if big {
                            t.to_be_bytes()
                        } else {
                            t.to_le_bytes()
                        });
                        let mut bytes = vec![*fill; usize::from(size)];
                        if let Some(last) = bytes.last_mut() {
                            *last = fill.wrapping_add(k as u8);
                        }
                        if let Some(first) = bytes.first_mut() {
                            *first = fill.wrapping_mul(3);
                        }
                        m.extend_from_slice(&bytes);
                    }
                    out.push((
                        format!("record field {field} base {base:#04x} size {size} big {big}"),
                        fit_file(&m),
                    ));
                }
            }
        }
    }
    // The same field number twice: the later valid value wins, an invalid later one does not.
    for (second, name) in [(0xFFu8, "invalid"), (150, "valid")] {
        let mut m = definition(0, 20, false, &[(253, 4, 0x86), (3, 1, 0x02), (3, 1, 0x02)]);
        for k in 0..3u32 {
            m.push(0);
            m.extend_from_slice(&(TS + k).to_le_bytes());
            m.extend_from_slice(&[120, second]);
        }
        out.push((format!("duplicate heart rate, second {name}"), fit_file(&m)));
    }
    // Float timestamps, a string timestamp, a timestamp array.
    for (base, size) in [(0x88u8, 4u8), (0x89, 8), (0x07, 4), (0x86, 8), (0x8C, 4)] {
        let mut m = definition(0, 20, false, &[(253, size, base), (3, 1, 0x02)]);
        for k in 0..4u32 {
            m.push(0);
            let mut ts = match base {
                0x88 => (TS as f32 + k as f32 * 64.0).to_le_bytes().to_vec(),
                0x89 => (f64::from(TS) + f64::from(k)).to_le_bytes().to_vec(),
                0x07 => b"abc\0".to_vec(),
                _ => (TS + k).to_le_bytes().to_vec(),
            };
            ts.resize(usize::from(size), 0x20);
            m.extend_from_slice(&ts);
            m.push(100 + k as u8);
        }
        out.push((
            format!("timestamp base {base:#04x} size {size}"),
            fit_file(&m),
        ));
    }
    // Compressed timestamps across a rollover, on records, laps and events.
    let mut m = definition(0, 20, false, &[(253, 4, 0x86), (3, 1, 0x02)]);
    m.push(0);
    m.extend_from_slice(&(TS + 30).to_le_bytes());
    m.push(100);
    m.extend_from_slice(&definition(1, 20, false, &[(3, 1, 0x02)]));
    for off in [31u8, 2, 5, 5, 1] {
        m.push(0x80 | (1 << 5) | off);
        m.push(110 + off);
    }
    m.extend_from_slice(&definition(2, 21, false, &[(0, 1, 0x00), (1, 1, 0x00)]));
    for (off, kind) in [(9u8, 4u8), (12, 0)] {
        m.push(0x80 | (2 << 5) | off);
        m.extend_from_slice(&[0, kind]);
    }
    m.extend_from_slice(&definition(
        3,
        19,
        false,
        &[(2, 4, 0x86), (7, 4, 0x86), (24, 1, 0x00)],
    ));
    m.push(0x80 | (3 << 5) | 20);
    m.extend_from_slice(&(TS + 30).to_le_bytes());
    m.extend_from_slice(&5000u32.to_le_bytes());
    m.push(1);
    out.push(("compressed timestamps".into(), fit_file(&m)));
    // System time with a device_settings time_offset: scalar, array, array with an invalid
    // first element, big-endian.
    for (name, size, first, big) in [
        ("scalar", 4u8, 700_000_000u32, false),
        ("array", 8, 700_000_000, false),
        ("array, first invalid", 8, u32::MAX, false),
        ("big-endian", 4, 700_000_000, true),
        ("zero", 4, 0, false),
    ] {
        let mut m = definition(0, 2, big, &[(2, size, 0x86)]);
        m.push(0);
        for k in 0..usize::from(size / 4) {
            let v = if k == 0 { first } else { 650_000_000 };
            m.extend_from_slice(&if big {
                v.to_be_bytes()
            } else {
                v.to_le_bytes()
            });
        }
        m.extend_from_slice(&definition(1, 20, false, &[(253, 4, 0x86), (3, 1, 0x02)]));
        for k in 0..3u32 {
            m.push(1);
            m.extend_from_slice(&(1000 + k).to_le_bytes());
            m.push(100);
        }
        out.push((format!("device_settings time_offset {name}"), fit_file(&m)));
    }
    // Developer fields: described, described after the definition, undescribed, odd size.
    let description = |index: u8, num: u8, base: u8| {
        let mut m = definition(5, 206, false, &[(0, 1, 0x02), (1, 1, 0x02), (2, 1, 0x02)]);
        m.push(5);
        m.extend_from_slice(&[index, num, base]);
        m
    };
    let records = |m: &mut Vec<u8>, dev_bytes: usize| {
        for k in 0..3u32 {
            m.push(0);
            m.extend_from_slice(&(TS + k).to_le_bytes());
            m.push(120);
            m.extend(std::iter::repeat_n(0x11, dev_bytes));
        }
    };
    let rec_def =
        |dev: &[(u8, u8, u8)]| definition_dev(0, 20, &[(253, 4, 0x86), (3, 1, 0x02)], dev);
    for (name, base, size, before) in [
        ("described uint16", 0x84u8, 2u8, true),
        ("described later", 0x84, 2, false),
        ("odd size", 0x84, 3, true),
        ("odd size described later", 0x84, 3, false),
        ("string", 0x07, 5, true),
    ] {
        let mut m = Vec::new();
        if before {
            m.extend_from_slice(&description(0, 1, base));
        }
        m.extend_from_slice(&rec_def(&[(1, size, 0)]));
        if !before {
            m.extend_from_slice(&description(0, 1, base));
        }
        records(&mut m, usize::from(size));
        out.push((format!("developer field {name}"), fit_file(&m)));
    }
    let mut m = rec_def(&[(1, 2, 0)]);
    records(&mut m, 2);
    out.push(("developer field undescribed".into(), fit_file(&m)));
    // The odd-size file of fit_quiet.rs.
    let mut m = vec![0x40, 0, 0, 20, 0, 3, 253, 4, 0x86, 3, 3, 0x84, 4, 1, 0x02];
    m.extend_from_slice(&[0, 0, 0, 0, 0x40, 1, 2, 3, 88]);
    out.push(("odd field size".into(), fit_file(&m)));
    out
}

#[test]
fn our_reader_matches_fitparser_on_real_and_hand_made_files() {
    let mut failures = Vec::new();
    let demo = demo_files();
    assert!(demo.len() >= 100, "{} demo FIT files", demo.len());
    let (read, _) = check(demo, &mut failures);
    assert!(read >= 100, "{read} read");
    check(writer_files(), &mut failures);
    let (read, errors) = check(hand_made(), &mut failures);
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    eprintln!("hand-made files: {read} read, {errors} refused");
    assert!(read > 1000 && errors >= 5, "{read} read, {errors} refused");
}

/// Mutated files per run (fixed seeds).
const MUTANTS: u64 = 600;

#[test]
fn our_reader_matches_fitparser_on_mutated_files() {
    let mut bases = fit_mutate::bases();
    // A few demo files as bases too (our writer's output, 14-byte headers).
    let demo = demo_files();
    bases.extend(
        demo.iter()
            .filter(|(n, b)| n.contains("demo-athletes") && b.first() == Some(&14))
            .step_by(15)
            .map(|(_, b)| b.clone()),
    );
    let parsed: Vec<_> = bases.iter().map(|b| parse(b)).collect();
    let mut failures = Vec::new();
    let mut files = Vec::new();
    for seed in 0..MUTANTS {
        let mut rng = Rng(XorShift(
            0x5851_F42D_4C95_7F2D ^ (seed + 1).wrapping_mul(0x9E37),
        ));
        let mut fit = parsed[seed as usize % parsed.len()].clone();
        let mut cut = None;
        let what: Vec<String> = (0..1 + rng.below(3))
            .map(|_| mutate(&mut fit, &mut rng, &mut cut))
            .collect();
        files.push((
            format!("seed {seed} ({})", what.join("; ")),
            encode(&fit, cut),
        ));
    }
    let (read, errors) = check(files, &mut failures);
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    eprintln!("{MUTANTS} mutated files: {read} read, {errors} refused");
    assert!(
        read >= MUTANTS as usize / 10 && errors >= MUTANTS as usize / 10,
        "{read} read, {errors} refused"
    );
}

#[test]
fn our_reader_matches_fitparser_on_damaged_bytes() {
    let good = fit_writer::write(&fit_common::session(400, true));
    let mut rng = XorShift(0xD1FF);
    let mut files = Vec::new();
    // Random bytes changed inside the messages, CRC redone.
    for round in 0..300 {
        let mut f = good[..good.len() - 2].to_vec();
        for _ in 0..1 + round % 4 {
            let at = 14 + (rng.next_u64() as usize) % (f.len() - 14);
            f[at] = rng.next_u64() as u8;
        }
        let crc = crc16(0, &f);
        f.extend_from_slice(&crc.to_le_bytes());
        files.push((format!("flipped round {round}"), f));
    }
    // Random message bytes inside a valid frame.
    for round in 0..200 {
        let len = 1 + (rng.next_u64() % 400) as usize;
        let mut body = rng.bytes(len);
        if round % 2 == 0 {
            body[0] = 0x40 | (body[0] & 0x2F);
        }
        files.push((format!("random round {round}"), fit_file(&body)));
    }
    // Truncations and trailing bytes (framing errors and warnings).
    for cut in [0, 1, 11, 13, 14, 15, 100, good.len() - 2, good.len() - 1] {
        files.push((format!("cut at {cut}"), good[..cut].to_vec()));
    }
    let mut chained = good.clone();
    chained.extend_from_slice(&good);
    files.push(("chained".into(), chained));
    let mut padded = good.clone();
    padded.extend_from_slice(&[0; 7]);
    files.push(("padded".into(), padded));
    let mut failures = Vec::new();
    let (read, errors) = check(files, &mut failures);
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    eprintln!("damaged files: {read} read, {errors} refused");
    assert!(read >= 50 && errors >= 50, "{read} read, {errors} refused");
}
