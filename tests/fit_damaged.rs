//! Damaged FIT files: each must come back as an error (never a panic, never `Ok` with part
//! of the data), and trailing bytes after a valid file must not stop it from decoding.

mod fit_common;

use std::time::Instant;

use fit_common::{fit_file, session, XorShift};
use splitdesk::demo::fit_writer;
use splitdesk::ingest::fit::{self, crc16};
use splitdesk::ingest::ParseError;
use splitdesk::model::Session;

fn good() -> (Vec<u8>, Session) {
    let bytes = fit_writer::write(&session(600, true));
    let decoded = fit::decode(&bytes).unwrap();
    (bytes, decoded)
}

fn reason(bytes: &[u8]) -> String {
    match fit::decode(bytes) {
        Err(ParseError::Fit(r)) => {
            assert!(
                !r.contains("decoder crashed"),
                "validation let a panic through: {r}"
            );
            r
        }
        Err(other) => panic!("expected ParseError::Fit, got {other:?}"),
        Ok(s) => panic!("expected an error, got a session of {} samples", s.len()),
    }
}

#[test]
fn empty_file() {
    assert_eq!(reason(&[]), "empty file");
    assert_eq!(
        splitdesk::ingest::decode(&[], splitdesk::model::FileFormat::Fit),
        Err(ParseError::Empty)
    );
}

#[test]
fn truncated_at_many_points() {
    let (bytes, _) = good();
    let mut cuts: Vec<usize> = (0..bytes.len()).step_by(97).collect();
    cuts.extend([1, 11, 12, 13, 14, 15, bytes.len() - 2, bytes.len() - 1]);
    for cut in cuts {
        let r = reason(&bytes[..cut]);
        assert!(
            r.starts_with("truncated") || r == "empty file" || r.starts_with("no .FIT"),
            "cut at {cut}: {r}"
        );
    }
    assert!(reason(&bytes[..bytes.len() - 2]).contains("CRC missing"));
}

#[test]
fn flipped_bytes_are_caught() {
    let (bytes, _) = good();
    for at in (0..bytes.len()).step_by(13).chain([bytes.len() - 1]) {
        let mut bad = bytes.clone();
        bad[at] ^= 0x5A;
        let r = reason(&bad);
        if at >= 14 {
            assert!(
                r.starts_with("file CRC mismatch") || r.starts_with("truncated"),
                "flip at {at}: {r}"
            );
        }
    }
}

#[test]
fn trailing_bytes_are_ignored() {
    let (bytes, decoded) = good();
    let mut rng = XorShift(0x5EED);
    let mut tails: Vec<Vec<u8>> = vec![vec![0], vec![0; 5], vec![0; 11], vec![0; 100]];
    tails.push(rng.bytes(3));
    tails.push(rng.bytes(1000));
    tails.push(bytes.clone()); // a chained second FIT file
    tails.push(bytes[..40].to_vec()); // the start of one
    for tail in tails {
        let mut f = bytes.clone();
        f.extend_from_slice(&tail);
        let mut got = fit::decode(&f).unwrap();
        // The data is read as before; what follows the CRC is named in one warning.
        let chained = tail.len() >= 12 && tail[8..12] == *b".FIT";
        let want = if chained {
            format!(
                "a second FIT file ({} bytes) is chained after the first; only the first was read",
                tail.len()
            )
        } else {
            format!(
                "{} byte{} after the end of the FIT data were ignored",
                tail.len(),
                if tail.len() == 1 { "" } else { "s" }
            )
        };
        assert_eq!(got.warnings, vec![want], "tail of {} bytes", tail.len());
        got.warnings.clear();
        assert_eq!(got, decoded, "tail of {} bytes", tail.len());
    }
}

#[test]
fn header_claiming_more_bytes_than_exist() {
    let (mut bytes, _) = good();
    let declared = (bytes.len() as u32) * 3;
    bytes[4..8].copy_from_slice(&declared.to_le_bytes());
    let hcrc = crc16(0, &bytes[..12]);
    bytes[12..14].copy_from_slice(&hcrc.to_le_bytes());
    let r = reason(&bytes);
    assert_eq!(
        r,
        format!(
            "truncated: header declares {declared} data bytes, file has {}",
            bytes.len() - 14
        )
    );
    // Same with a 12-byte header.
    let mut small = fit_file(&[0x40, 0, 0, 0, 0, 0]);
    small[4] = 200;
    assert!(reason(&small).starts_with("truncated: header declares 200 data bytes"));
    // A header size fitparser would index past.
    assert!(reason(&[1, 2, 3, 4, 5]).starts_with("bad header size 1"));
}

#[test]
fn random_bytes() {
    let mut rng = XorShift(42);
    for len in [1usize, 2, 11, 12, 13, 14, 15, 64, 1000, 65_536] {
        for _ in 0..20 {
            reason(&rng.bytes(len));
        }
    }
}

#[test]
fn random_messages_inside_valid_framing_never_crash() {
    // Random message bytes with correct header and CRC reach the message checks and
    // fitparser itself: any outcome but a crash is acceptable.
    let mut rng = XorShift(7);
    for round in 0..300 {
        let len = 1 + (rng.next_u64() % 400) as usize;
        let mut body = rng.bytes(len);
        if round % 2 == 0 {
            body[0] = 0x40 | (body[0] & 0x2F); // start with a definition
        }
        if let Err(ParseError::Fit(r)) = fit::decode(&fit_file(&body)) {
            assert!(!r.contains("decoder crashed"), "round {round}: {r}");
        }
    }
    // Mutate a real file's messages and fix its CRC.
    let (bytes, _) = good();
    for round in 0..300 {
        let mut f = bytes[..bytes.len() - 2].to_vec();
        for _ in 0..1 + round % 4 {
            let at = 14 + (rng.next_u64() as usize) % (f.len() - 14);
            f[at] = rng.next_u64() as u8;
        }
        let crc = crc16(0, &f);
        f.extend_from_slice(&crc.to_le_bytes());
        if let Err(ParseError::Fit(r)) = fit::decode(&f) {
            assert!(!r.contains("decoder crashed"), "round {round}: {r}");
        }
    }
}

#[test]
fn fifty_megabytes_of_junk_fail_fast() {
    let mut junk = XorShift(0xBAD).bytes(50 * 1024 * 1024);
    let t = Instant::now();
    reason(&junk);
    let plain = t.elapsed();
    // Now with a valid header declaring all of it: the file CRC has to read everything.
    junk[..12].copy_from_slice(&[12, 0x10, 0, 0, 0, 0, 0, 0, b'.', b'F', b'I', b'T']);
    let size = (junk.len() - 14) as u32;
    junk[4..8].copy_from_slice(&size.to_le_bytes());
    let t = Instant::now();
    assert!(reason(&junk).starts_with("file CRC mismatch"));
    println!(
        "50 MB junk: {plain:?} without a header, {:?} with one",
        t.elapsed()
    );
}
