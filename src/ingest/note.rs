//! Decoding the athlete's note files (`notes/<stem>.txt`), whatever editor wrote them.
//!
//! Order of the checks:
//! 1. a UTF-8 byte-order mark: stripped, the rest read as UTF-8;
//! 2. a UTF-16 byte-order mark (`FF FE` little-endian, `FE FF` big-endian): read as UTF-16;
//! 3. no mark, but the NUL pattern of UTF-16 text (mostly ASCII, so one byte of most pairs
//!    is zero: the odd bytes for little-endian, the even bytes for big-endian): read as
//!    UTF-16 of that order;
//! 4. valid UTF-8 (no NUL bytes): as is;
//! 5. other bytes with a NUL: not text (a problem, nothing shown);
//! 6. anything else: read as Windows-1252, the Windows superset of Latin-1 (bytes
//!    0xA0-0xFF are the Latin-1 characters, 0x80-0x9F the Windows punctuation such as
//!    curly quotes; the five unassigned ones keep their Latin-1 control code).
//!
//! Source: Unicode Standard ch. 23.8 (byte order marks EF BB BF, FF FE, FE FF); the
//! Windows-1252 table is the one published by the WHATWG Encoding Standard (index
//! windows-1252). Text that had to be converted carries a marker when shown, so the coach
//! knows it was not read exactly as written.

use std::path::Path;

/// Note files larger than this are not read (a note is a few lines; 1 MiB is a book).
pub const MAX_NOTE_BYTES: u64 = 1024 * 1024;

/// How a note's bytes were read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoteEncoding {
    Utf8,
    /// UTF-8 with a byte-order mark (stripped).
    Utf8Bom,
    Utf16Le,
    Utf16Be,
    /// Windows-1252 / Latin-1 (the fallback).
    Latin1,
    /// Not text.
    Binary,
}

/// A decoded note.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DecodedNote {
    /// The text (empty when the bytes are not text).
    pub text: String,
    pub encoding: NoteEncoding,
    /// True when the text was converted from another encoding than UTF-8.
    pub converted: bool,
    /// Why (part of) the note could not be decoded, when it could not.
    pub problem: Option<String>,
}

impl DecodedNote {
    /// The text as shown to the coach after the reveal: the text, then (trailing blank lines
    /// removed) a short marker line when it was converted or could not be fully decoded. `None` when there is nothing to
    /// show (blank text and no problem).
    pub fn display(&self) -> Option<String> {
        let text = self.text.trim_end();
        let marker = match (&self.problem, self.encoding) {
            (Some(p), _) => Some(format!("(the note file could not be fully decoded: {p})")),
            (None, NoteEncoding::Latin1) => Some("(converted from Latin-1)".to_string()),
            (None, NoteEncoding::Utf16Le | NoteEncoding::Utf16Be) => {
                Some("(converted from UTF-16)".to_string())
            }
            (None, _) => None,
        };
        match marker {
            _ if text.trim().is_empty() && self.problem.is_none() => None,
            Some(m) if text.trim().is_empty() => Some(m),
            Some(m) => Some(format!("{text}\n{m}")),
            // Unconverted text is returned exactly as read (BOM aside).
            None => Some(self.text.clone()),
        }
    }
}

/// Decode a note's bytes (see the module rules).
pub fn decode(bytes: &[u8]) -> DecodedNote {
    if let Some(rest) = bytes.strip_prefix(b"\xEF\xBB\xBF") {
        return match std::str::from_utf8(rest) {
            Ok(s) => note(s.to_string(), NoteEncoding::Utf8Bom, false, None),
            Err(e) => note(
                String::from_utf8_lossy(rest).into_owned(),
                NoteEncoding::Utf8Bom,
                false,
                Some(format!(
                    "marked as UTF-8 but byte {} is not UTF-8",
                    e.valid_up_to() + 3
                )),
            ),
        };
    }
    if let Some(rest) = bytes.strip_prefix(b"\xFF\xFE") {
        return utf16(rest, false);
    }
    if let Some(rest) = bytes.strip_prefix(b"\xFE\xFF") {
        return utf16(rest, true);
    }
    if let Some(big_endian) = utf16_without_bom(bytes) {
        return utf16(bytes, big_endian);
    }
    if bytes.contains(&0) {
        return note(
            String::new(),
            NoteEncoding::Binary,
            false,
            Some("it holds NUL bytes and is not text".to_string()),
        );
    }
    match std::str::from_utf8(bytes) {
        Ok(s) => note(s.to_string(), NoteEncoding::Utf8, false, None),
        Err(_) => note(
            bytes.iter().map(|&b| windows_1252(b)).collect(),
            NoteEncoding::Latin1,
            true,
            None,
        ),
    }
}

/// Read and decode a note file, at most [`MAX_NOTE_BYTES`]. `Err` with a one-line reason
/// when it cannot be read or is too large.
pub fn read_file(path: &Path) -> Result<DecodedNote, String> {
    match super::read_capped(path, MAX_NOTE_BYTES) {
        Ok(bytes) => Ok(decode(&bytes)),
        Err(super::CappedReadError::NotAFile) => Err("not a regular file".to_string()),
        Err(super::CappedReadError::TooLarge(_)) => Err(format!(
            "note file is larger than {} KiB",
            MAX_NOTE_BYTES / 1024
        )),
        Err(super::CappedReadError::Io(e)) => Err(e.to_string()),
    }
}

/// What `check` reports about a note file: `None` when it reads (converted or not), else the
/// reason. The note's text is never part of the message (blind grading).
pub fn problem(path: &Path) -> Option<String> {
    match read_file(path) {
        Ok(d) => d
            .problem
            .map(|p| format!("the athlete's note cannot be decoded: {p}")),
        Err(e) => Some(format!("the athlete's note cannot be read: {e}")),
    }
}

fn note(
    text: String,
    encoding: NoteEncoding,
    converted: bool,
    problem: Option<String>,
) -> DecodedNote {
    DecodedNote {
        text,
        encoding,
        converted,
        problem,
    }
}

/// UTF-16 units of `bytes` in the given order; a trailing odd byte and unpaired surrogates
/// are problems (replaced by U+FFFD in the text).
fn utf16(bytes: &[u8], big_endian: bool) -> DecodedNote {
    let units = bytes.chunks_exact(2).map(|p| match p {
        [a, b] if big_endian => u16::from_be_bytes([*a, *b]),
        [a, b] => u16::from_le_bytes([*a, *b]),
        _ => 0xFFFD,
    });
    let mut text = String::with_capacity(bytes.len() / 2);
    let mut bad = 0usize;
    for c in char::decode_utf16(units) {
        match c {
            Ok(c) => text.push(c),
            Err(_) => {
                bad += 1;
                text.push(char::REPLACEMENT_CHARACTER);
            }
        }
    }
    let mut problems = Vec::new();
    if bad > 0 {
        problems.push(format!(
            "{bad} unpaired UTF-16 surrogate{}",
            if bad == 1 { "" } else { "s" }
        ));
    }
    if bytes.len() % 2 == 1 {
        problems.push("UTF-16 text with an odd number of bytes".to_string());
    }
    let encoding = if big_endian {
        NoteEncoding::Utf16Be
    } else {
        NoteEncoding::Utf16Le
    };
    let problem = (!problems.is_empty()).then(|| problems.join("; "));
    note(text, encoding, true, problem)
}

/// `Some(big_endian)` when BOM-less bytes look like UTF-16: an even length of at least four
/// bytes, and in the first 1024 bytes at least 40% of the pairs have a zero in one position
/// almost none (under 5%) in the other.
fn utf16_without_bom(bytes: &[u8]) -> Option<bool> {
    if bytes.len() < 4 || bytes.len() % 2 == 1 {
        return None;
    }
    let head = bytes.get(..bytes.len().min(1024)).unwrap_or_default();
    let pairs = head.len() / 2;
    let (mut zero_even, mut zero_odd) = (0usize, 0usize);
    for p in head.chunks_exact(2) {
        if let [a, b] = p {
            zero_even += usize::from(*a == 0);
            zero_odd += usize::from(*b == 0);
        }
    }
    let many = |k: usize| k * 10 >= pairs * 4;
    let few = |k: usize| k * 20 < pairs;
    if many(zero_odd) && few(zero_even) {
        Some(false)
    } else if many(zero_even) && few(zero_odd) {
        Some(true)
    } else {
        None
    }
}

/// One Windows-1252 byte as a character.
/// Source: WHATWG Encoding Standard, index windows-1252 (0x80-0x9F; the rest is Latin-1).
fn windows_1252(b: u8) -> char {
    const HIGH: [char; 32] = [
        '\u{20AC}', '\u{81}', '\u{201A}', '\u{192}', '\u{201E}', '\u{2026}', '\u{2020}',
        '\u{2021}', '\u{2C6}', '\u{2030}', '\u{160}', '\u{2039}', '\u{152}', '\u{8D}', '\u{17D}',
        '\u{8F}', '\u{90}', '\u{2018}', '\u{2019}', '\u{201C}', '\u{201D}', '\u{2022}', '\u{2013}',
        '\u{2014}', '\u{2DC}', '\u{2122}', '\u{161}', '\u{203A}', '\u{153}', '\u{9D}', '\u{17E}',
        '\u{178}',
    ];
    match b {
        0x80..=0x9F => HIGH
            .get(usize::from(b - 0x80))
            .copied()
            .unwrap_or(char::REPLACEMENT_CHARACTER),
        _ => char::from(b),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_1252_punctuation_and_latin1_letters() {
        let d = decode(b"Caf\xE9 \x93fast\x94 \x80");
        assert_eq!(d.text, "Café “fast” €");
        assert_eq!(d.encoding, NoteEncoding::Latin1);
        assert!(d.converted);
    }
}
