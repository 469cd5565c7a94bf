//! Roster text made safe for a terminal.
//!
//! File and folder names and the text inside roster files (plan titles, purposes, athlete
//! names, notes, device strings) come from a shared folder and are untrusted: an escape
//! sequence in a file name could set the coach's clipboard (OSC 52), retitle the window or
//! restyle the screen, and a bidirectional override could make text read differently from
//! what it is. Before such text reaches a terminal or a workstation cell it goes through
//! [`printable`] (one line) or [`printable_text`] (may span lines). Each unsafe character is
//! replaced by a visible stand-in, so the coach sees that something was there:
//!
//! - C0 controls (U+0000 to U+001F, ESC included) become their Control Pictures symbol
//!   (ESC → `␛`, BEL → `␇`, CR → `␍`);
//! - DEL becomes `␡`;
//! - C1 controls (U+0080 to U+009F) and the bidirectional controls (U+061C, U+200E,
//!   U+200F, U+202A to U+202E, U+2066 to U+2069) become `�`.
//!
//! JSON and CSV keep the exact text: JSON escapes C0 itself and [`json_text`] escapes the
//! rest as `\uXXXX`, which a JSON reader turns back into the same characters.

use std::borrow::Cow;

/// Whether `c` must not reach a terminal as it is.
pub fn is_unsafe(c: char) -> bool {
    let u = u32::from(c);
    u < 0x20 || (0x7f..=0x9f).contains(&u) || is_bidi_control(c)
}

/// The bidirectional formatting characters: they reorder what follows them on screen.
fn is_bidi_control(c: char) -> bool {
    matches!(
        c,
        '\u{061C}' | '\u{200E}' | '\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}'
    )
}

/// The visible stand-in for an unsafe character.
fn stand_in(c: char) -> char {
    let u = u32::from(c);
    if u < 0x20 {
        char::from_u32(0x2400 + u).unwrap_or('\u{FFFD}')
    } else if u == 0x7f {
        '\u{2421}'
    } else {
        '\u{FFFD}'
    }
}

fn escape_with(s: &str, keep: impl Fn(char) -> bool) -> Cow<'_, str> {
    if !s.chars().any(|c| is_unsafe(c) && !keep(c)) {
        return Cow::Borrowed(s);
    }
    Cow::Owned(
        s.chars()
            .map(|c| {
                if is_unsafe(c) && !keep(c) {
                    stand_in(c)
                } else {
                    c
                }
            })
            .collect(),
    )
}

/// One line of roster text made safe for a terminal: every control character (line
/// breaks and tabs included) becomes a visible stand-in.
pub fn printable(s: &str) -> String {
    escape_with(s, |_| false).into_owned()
}

/// Roster text that may span lines (a note, feedback, a whole report) made safe for a
/// terminal: line feeds and tabs stay, every other control character becomes a visible
/// stand-in (a carriage return too: it could overwrite what the line showed).
pub fn printable_text(s: &str) -> Cow<'_, str> {
    escape_with(s, |c| c == '\n' || c == '\t')
}

/// Serialised JSON made safe for a terminal without changing what it says: DEL, C1 and
/// bidirectional controls (which JSON allows raw inside strings) become `\uXXXX` escapes.
/// C0 controls are already escaped by every JSON writer; outside strings JSON is ASCII, so
/// only string contents change, and a reader gets the exact same text back.
pub fn json_text(json: &str) -> Cow<'_, str> {
    if !json.chars().any(|c| is_unsafe(c) && c != '\n') {
        return Cow::Borrowed(json);
    }
    let mut out = String::with_capacity(json.len() + 16);
    for c in json.chars() {
        if is_unsafe(c) && c != '\n' {
            out.push_str(&format!("\\u{:04x}", u32::from(c)));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_are_visible() {
        assert_eq!(
            printable("a\u{1b}]52;c;SGVsbG8=\u{7}b"),
            "a␛]52;c;SGVsbG8=␇b"
        );
        assert_eq!(printable("x\ny\tz\r"), "x␊y␉z␍");
        assert_eq!(printable("del\u{7f}"), "del␡");
        assert_eq!(printable("c1\u{9b}31m"), "c1\u{FFFD}31m");
        assert_eq!(printable("evil\u{202E}txt.fit"), "evil\u{FFFD}txt.fit");
        assert_eq!(printable("iso\u{2066}x\u{2069}"), "iso\u{FFFD}x\u{FFFD}");
        assert_eq!(printable("Åsa Ørn — 5:00/km"), "Åsa Ørn — 5:00/km");
    }

    #[test]
    fn text_keeps_line_breaks_and_tabs() {
        assert_eq!(printable_text("a\nb\tc\u{1b}[2J\r"), "a\nb\tc␛[2J␍");
        assert!(matches!(printable_text("plain\n"), Cow::Borrowed(_)));
    }

    #[test]
    fn json_text_round_trips() {
        let v = serde_json::json!({ "name": "a\u{1b}b\u{9b}c\u{202E}d\u{7f}" });
        let raw = serde_json::to_string_pretty(&v).unwrap_or_default();
        let safe = json_text(&raw);
        assert!(!safe.chars().any(|c| is_unsafe(c) && c != '\n'), "{safe}");
        let back: serde_json::Value = serde_json::from_str(&safe).unwrap_or_default();
        assert_eq!(back, v);
    }
}
