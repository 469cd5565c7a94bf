//! Athlete notes in any common encoding: UTF-8 with or without a byte-order mark, UTF-16
//! with a mark or recognisable by its NUL pattern, else Latin-1 (Windows-1252) with a marker
//! that the text was converted. Notes that are not text are reported by `check`.

mod roster_support;

use assert_cmd::Command;
use roster_support::{write_roster, REPS_ID};
use splitdesk::ingest::note::{self, NoteEncoding};

const TEXT: &str = "Søndag: tung i beina, “vind” – 5° ute";

fn utf16(text: &str, big_endian: bool, bom: bool) -> Vec<u8> {
    let mut out = Vec::new();
    if bom {
        out.extend_from_slice(if big_endian { b"\xFE\xFF" } else { b"\xFF\xFE" });
    }
    for u in text.encode_utf16() {
        out.extend_from_slice(&if big_endian {
            u.to_be_bytes()
        } else {
            u.to_le_bytes()
        });
    }
    out
}

/// `TEXT` in Windows-1252 (ø = F8, “ ” = 93 94, – = 96, ° = B0).
fn windows_1252() -> Vec<u8> {
    b"S\xF8ndag: tung i beina, \x93vind\x94 \x96 5\xB0 ute".to_vec()
}

#[test]
fn every_common_encoding_decodes_to_the_same_text() {
    let cases: Vec<(Vec<u8>, NoteEncoding, bool)> = vec![
        (TEXT.as_bytes().to_vec(), NoteEncoding::Utf8, false),
        (
            [b"\xEF\xBB\xBF".as_slice(), TEXT.as_bytes()].concat(),
            NoteEncoding::Utf8Bom,
            false,
        ),
        (utf16(TEXT, false, true), NoteEncoding::Utf16Le, true),
        (utf16(TEXT, true, true), NoteEncoding::Utf16Be, true),
        (utf16(TEXT, false, false), NoteEncoding::Utf16Le, true),
        (utf16(TEXT, true, false), NoteEncoding::Utf16Be, true),
        (windows_1252(), NoteEncoding::Latin1, true),
    ];
    for (bytes, encoding, converted) in cases {
        let d = note::decode(&bytes);
        assert_eq!(d.text, TEXT, "{encoding:?}");
        assert_eq!(d.encoding, encoding);
        assert_eq!(d.converted, converted, "{encoding:?}");
        assert_eq!(d.problem, None, "{encoding:?}");
    }
}

#[test]
fn what_the_coach_sees_for_converted_and_damaged_notes() {
    assert_eq!(
        note::decode(&windows_1252()).display().unwrap(),
        format!("{TEXT}\n(converted from Latin-1)")
    );
    assert_eq!(
        note::decode(&utf16(TEXT, false, true)).display().unwrap(),
        format!("{TEXT}\n(converted from UTF-16)")
    );
    // A BOM is stripped silently.
    assert_eq!(note::decode(b"\xEF\xBB\xBFok\n").display().unwrap(), "ok\n");
    // A lone surrogate in UTF-16: the rest is shown, the damage named.
    let mut bad = utf16("ok ", false, true);
    bad.extend_from_slice(&0xD800u16.to_le_bytes());
    let d = note::decode(&bad);
    assert_eq!(d.problem.as_deref(), Some("1 unpaired UTF-16 surrogate"));
    assert_eq!(
        d.display().unwrap(),
        "ok \u{FFFD}\n(the note file could not be fully decoded: 1 unpaired UTF-16 surrogate)"
    );
    // Binary: nothing shown but the reason.
    let d = note::decode(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR");
    assert_eq!(d.encoding, NoteEncoding::Binary);
    assert_eq!(
        d.display().unwrap(),
        "(the note file could not be fully decoded: it holds NUL bytes and is not text)"
    );
    // Blank stays "no note".
    assert_eq!(note::decode(b"\xEF\xBB\xBF \n").display(), None);
}

fn splitdesk(roster: &std::path::Path, journal: &std::path::Path, args: &[&str]) -> (i32, String) {
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .env("EDITOR", "true")
        .arg("--roster")
        .arg(roster)
        .arg("--journal")
        .arg(journal)
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
    )
}

#[test]
fn a_latin1_note_shows_after_grading_with_a_marker() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    let journal = dir.path().join("coach/journal.sqlite");
    write_roster(&roster);
    std::fs::write(
        roster.join("tova-renn/notes/2026-11-03-reps.txt"),
        windows_1252(),
    )
    .unwrap();
    let run = |args: &[&str]| splitdesk(&roster, &journal, args);
    let (code, _) = run(&[
        "grade",
        REPS_ID,
        "--score",
        "1=4",
        "--score",
        "2=4",
        "--score",
        "3=3",
        "--score",
        "4=3",
        "--score",
        "5=2",
        "--verdict",
        "partly",
    ]);
    assert_eq!(code, 0);
    // Before: "(no note from the athlete)".
    let (code, out) = run(&["notes", REPS_ID]);
    assert_eq!(code, 0);
    assert_eq!(out, format!("{TEXT}\n(converted from Latin-1)\n"));
}

#[test]
fn check_reports_a_note_that_is_not_text_but_not_one_that_was_converted() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    let journal = dir.path().join("coach/journal.sqlite");
    write_roster(&roster);
    let notes = roster.join("tova-renn/notes");
    std::fs::write(notes.join("2026-11-03-reps.txt"), windows_1252()).unwrap();
    std::fs::write(
        notes.join("2026-11-01-easy.txt"),
        b"\x00\x01\x02\x03\xFF\x00\x10",
    )
    .unwrap();
    let (code, out) = splitdesk(&roster, &journal, &["check", roster.to_str().unwrap()]);
    // A bad note does not make the roster unreadable.
    assert_eq!(code, 0, "{out}");
    let easy = notes.join("2026-11-01-easy.txt");
    assert!(
        out.contains(&format!(
            "{}: the athlete's note cannot be decoded: it holds NUL bytes and is not text\n",
            easy.display()
        )),
        "{out}"
    );
    assert!(!out.contains("2026-11-03-reps.txt"), "{out}");
    // The note's text never appears (blind grading).
    assert!(!out.contains("vind"), "{out}");
}
