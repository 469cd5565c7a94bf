//! The one way the headless commands print human text.
//!
//! Everything a text command prints can hold roster text (file and folder names, plan
//! titles and purposes, athlete names, notes, device strings, error messages that embed
//! paths). [`Safe`] passes it through [`crate::roster::printable_text`] on its way to the
//! terminal, so no escape sequence from the roster reaches the coach's terminal. Inside
//! `cli`, `print!`, `println!`, `eprint!` and `eprintln!` are this module's macros (defined
//! in `cli/mod.rs` before the command modules), so a new command is safe without thinking
//! about it. JSON goes through [`json`] (exact text, unsafe characters as `\uXXXX`); CSV is
//! written unchanged.

use std::io::{self, Write};

use crate::roster::{json_text, printable_text};

/// How a [`Safe`] writer treats what passes through it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Human text: unsafe characters become visible stand-ins; line feeds and tabs stay.
    Text,
    /// Serialised JSON: unsafe characters inside strings become `\uXXXX` escapes.
    Json,
}

/// A writer that makes text safe for a terminal before it reaches `inner`. Bytes that are
/// not UTF-8 are shown as `�`; a character split across two writes is kept until it is whole.
pub struct Safe<W: Write> {
    inner: W,
    mode: Mode,
    pending: Vec<u8>,
}

impl<W: Write> Safe<W> {
    pub fn new(inner: W, mode: Mode) -> Safe<W> {
        Safe {
            inner,
            mode,
            pending: Vec::new(),
        }
    }

    fn emit(&mut self, text: &str) -> io::Result<()> {
        match self.mode {
            Mode::Text => self.inner.write_all(printable_text(text).as_bytes()),
            Mode::Json => self.inner.write_all(json_text(text).as_bytes()),
        }
    }

    /// Write out every whole character held; with `all`, also a broken tail (as `�`).
    fn drain(&mut self, all: bool) -> io::Result<()> {
        let pending = std::mem::take(&mut self.pending);
        let mut rest: &[u8] = &pending;
        while !rest.is_empty() {
            match std::str::from_utf8(rest) {
                Ok(s) => {
                    self.emit(s)?;
                    rest = &[];
                }
                Err(e) => {
                    let (good, bad) = rest.split_at(e.valid_up_to());
                    if let Ok(s) = std::str::from_utf8(good) {
                        self.emit(s)?;
                    }
                    match e.error_len() {
                        Some(n) => {
                            self.emit("\u{FFFD}")?;
                            rest = bad.get(n..).unwrap_or(&[]);
                        }
                        None if all => {
                            self.emit("\u{FFFD}")?;
                            rest = &[];
                        }
                        None => {
                            self.pending = bad.to_vec();
                            rest = &[];
                        }
                    }
                }
            }
        }
        Ok(())
    }
}

impl<W: Write> Write for Safe<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.pending.extend_from_slice(buf);
        self.drain(false)?;
        Ok(buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        self.drain(true)?;
        self.inner.flush()
    }
}

impl<W: Write> Drop for Safe<W> {
    fn drop(&mut self) {
        let _ = self.flush();
    }
}

/// Standard output for human text.
pub fn stdout() -> Safe<io::StdoutLock<'static>> {
    Safe::new(io::stdout().lock(), Mode::Text)
}

/// Standard error for human text.
pub fn stderr() -> Safe<io::StderrLock<'static>> {
    Safe::new(io::stderr().lock(), Mode::Text)
}

/// Print formatted human text to stdout (what `print!` is inside `cli`). Like `print!`, a
/// closed pipe is not an error worth a panic; it is ignored.
pub fn print_text(args: std::fmt::Arguments<'_>) {
    let _ = stdout().write_fmt(args);
}

/// Print formatted human text to stderr (what `eprint!` is inside `cli`).
pub fn eprint_text(args: std::fmt::Arguments<'_>) {
    let _ = stderr().write_fmt(args);
}

/// Print a value as pretty JSON and a line feed: the exact text, safe for a terminal.
pub fn json<T: serde::Serialize + ?Sized>(value: &T) -> anyhow::Result<()> {
    let mut out = Safe::new(io::stdout().lock(), Mode::Json);
    serde_json::to_writer_pretty(&mut out, value)?;
    writeln!(out)?;
    out.flush()?;
    Ok(())
}

/// A refusal as JSON on stdout, for a command run with `--json`: `{"error": MESSAGE,
/// "exit_code": CODE}` plus the fields of `extra` (an object). The process still exits with
/// `code`; the one-line `error:` text goes to stderr as without `--json`.
pub fn json_error(message: &str, code: i32, extra: serde_json::Value) -> anyhow::Result<()> {
    let mut doc = serde_json::Map::new();
    doc.insert("error".into(), serde_json::Value::from(message));
    doc.insert("exit_code".into(), serde_json::Value::from(code));
    if let serde_json::Value::Object(more) = extra {
        for (k, v) in more {
            doc.entry(k).or_insert(v);
        }
    }
    json(&serde_json::Value::Object(doc))
}

/// An error and its causes on one line, `outer: cause: cause`, leaving out a cause whose
/// text the line already ends with (errors that name their source in their own message).
pub fn error_text(e: &anyhow::Error) -> String {
    let mut line = String::new();
    for cause in e.chain() {
        let text = cause.to_string();
        if line.is_empty() {
            line = text;
        } else if !line.ends_with(&text) {
            line.push_str(": ");
            line.push_str(&text);
        }
    }
    line
}

/// The English plural for CLI counts: `1 athlete`, `2 athletes`, `0 sessions`.
pub fn count<N: std::fmt::Display + PartialEq + From<u8>>(n: N, one: &str, many: &str) -> String {
    let word = if n == N::from(1) { one } else { many };
    format!("{n} {word}")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn through(mode: Mode, chunks: &[&[u8]]) -> String {
        let mut buf = Vec::new();
        {
            let mut w = Safe::new(&mut buf, mode);
            for c in chunks {
                let _ = w.write_all(c);
            }
        }
        String::from_utf8(buf).unwrap_or_default()
    }

    #[test]
    fn text_is_escaped_even_when_split() {
        let s = through(
            Mode::Text,
            &[b"a\x1b]52;c;SGVsbG8=\x07\n", b"\xc3", b"\xa9\xff"],
        );
        assert_eq!(s, "a␛]52;c;SGVsbG8=␇\né\u{FFFD}");
    }

    #[test]
    fn error_text_names_a_cause_once() {
        let io = std::io::Error::new(std::io::ErrorKind::NotFound, "gone");
        let e = anyhow::Error::new(io).context("a.fit: gone");
        assert_eq!(error_text(&e), "a.fit: gone");
        let io = std::io::Error::new(std::io::ErrorKind::NotFound, "gone");
        let e = anyhow::Error::new(io).context("a.fit");
        assert_eq!(error_text(&e), "a.fit: gone");
    }

    #[test]
    fn count_agrees_in_number() {
        assert_eq!(count(1, "athlete", "athletes"), "1 athlete");
        assert_eq!(count(0, "athlete", "athletes"), "0 athletes");
        assert_eq!(count(2, "session", "sessions"), "2 sessions");
    }

    #[test]
    fn json_keeps_the_exact_text() {
        let s = through(Mode::Json, &["{\"a\": \"x\u{9b}y\u{202e}\"}\n".as_bytes()]);
        assert_eq!(s, "{\"a\": \"x\\u009by\\u202e\"}\n");
    }
}
