//! Structured FIT mutations: a few hundred damaged FIT files per run, made from our writer's
//! output by changing the *message structure* (field sizes, base types, field counts, message
//! numbers, values, architecture, truncation, duplicated or redefined definitions, reordered
//! records), then re-framing them with a correct header, data size and both CRCs so that the
//! reader cannot stop at the CRC check and has to walk the damaged messages. Every file must
//! give a clean error or a session that keeps the model's invariants (finite values, one value
//! per sample, time never going backwards); a panic, even one the reader catches itself
//! ("decoder crashed"), fails.
//!
//! Seeds are fixed: each run makes the same files. A failing file is written to
//! `target/fit-mutations/` to be kept under `tests/fuzz-regressions/fit/`.

mod fit_common;
mod fit_mutate;

#[path = "../fuzz/src/entry.rs"]
#[allow(dead_code)]
mod entry;

use fit_common::XorShift;
use fit_mutate::{bases, encode, fit_crc, mutate, parse, Fit, Rng};
use splitdesk::model::FileFormat;

/// Files per run.
const MUTANTS: usize = 400;

#[test]
fn crc_is_the_fit_sdk_crc() {
    // Source: the check value of CRC-16/ARC (poly 0x8005 reflected, init 0) for the ASCII
    // bytes "123456789" is 0xBB3D (CRC RevEng catalogue, "CRC-16/ARC").
    assert_eq!(fit_crc(0, b"123456789"), 0xBB3D);
    for b in bases() {
        assert_eq!(fit_crc(0, &b), 0, "a whole file with its CRC checks to 0");
        assert_eq!(fit_crc(0, &b[..12]), u16::from_le_bytes([b[12], b[13]]));
        assert_eq!(
            fit_crc(0, &b[..b.len() - 2]),
            splitdesk::ingest::fit::crc16(0, &b[..b.len() - 2])
        );
    }
}

#[test]
fn parse_and_encode_give_back_the_writers_bytes() {
    for b in bases() {
        let fit = parse(&b);
        assert!(fit.msgs.len() > 100);
        assert_eq!(encode(&fit, None), b);
    }
}

#[test]
fn mutated_files_give_a_clean_error_or_a_sound_session() {
    let bases = bases();
    let parsed: Vec<Fit> = bases.iter().map(|b| parse(b)).collect();
    let mut outcomes = [0usize; 2]; // [errors, sessions]
    let mut failures = Vec::new();
    for seed in 0..MUTANTS as u64 {
        let mut rng = Rng(XorShift(
            0x9E37_79B9_7F4A_7C15 ^ (seed + 1).wrapping_mul(0x2545),
        ));
        let mut fit = parsed[seed as usize % parsed.len()].clone();
        let mut cut = None;
        let count = 1 + rng.below(3);
        let what: Vec<String> = (0..count)
            .map(|_| mutate(&mut fit, &mut rng, &mut cut))
            .collect();
        let bytes = encode(&fit, cut);
        // The frame is sound: the reader has to look at the messages.
        assert_eq!(fit_crc(0, &bytes), 0);
        let outcome = std::panic::catch_unwind(|| {
            let r = splitdesk::ingest::ingest_bytes(&bytes, FileFormat::Fit, None);
            let ok = r.is_ok();
            entry::check_outcome(r);
            ok
        });
        match outcome {
            Ok(ok) => outcomes[usize::from(ok)] += 1,
            Err(_) => {
                let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("fit-mutations");
                std::fs::create_dir_all(&dir).unwrap();
                let path = dir.join(format!("mutant-{seed}.fit"));
                std::fs::write(&path, &bytes).unwrap();
                failures.push(format!(
                    "seed {seed}: {} ({})",
                    what.join("; "),
                    path.display()
                ));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The mutations reach both ends: some files still read, some are refused.
    let [errors, sessions] = outcomes;
    eprintln!("{MUTANTS} mutated files: {errors} refused, {sessions} read");
    assert!(
        errors >= MUTANTS / 10,
        "{errors} errors, {sessions} sessions"
    );
    assert!(
        sessions >= MUTANTS / 10,
        "{errors} errors, {sessions} sessions"
    );
}
