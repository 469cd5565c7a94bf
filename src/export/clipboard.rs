//! Copy text to the clipboard: the OSC 52 terminal escape (works over SSH and inside tmux,
//! where the terminal allows it) plus a native helper when one is on `PATH`
//! (`wl-copy`, `xclip`, `xsel`, `pbcopy`, `clip.exe`).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// The OSC 52 escape that asks the terminal to put `text` on the system clipboard.
pub fn osc52(text: &str) -> String {
    format!("\x1b]52;c;{}\x07", base64(text.as_bytes()))
}

/// Standard base64 with padding (RFC 4648 §4).
pub fn base64(bytes: &[u8]) -> String {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk.first().copied().unwrap_or(0),
            chunk.get(1).copied().unwrap_or(0),
            chunk.get(2).copied().unwrap_or(0),
        ];
        let [b0, b1, b2] = b;
        let n = (u32::from(b0) << 16) | (u32::from(b1) << 8) | u32::from(b2);
        for k in 0..4 {
            if k <= chunk.len() {
                let idx = ((n >> (18 - 6 * k)) & 63) as usize;
                out.push(ALPHABET.get(idx).map_or('=', |&c| char::from(c)));
            } else {
                out.push('=');
            }
        }
    }
    out
}

/// A native clipboard helper found on `PATH`: program and arguments.
pub fn native_helper() -> Option<(PathBuf, Vec<&'static str>)> {
    let wayland = std::env::var_os("WAYLAND_DISPLAY").is_some();
    let x11 = std::env::var_os("DISPLAY").is_some();
    let candidates: [(&str, Vec<&'static str>, bool); 5] = [
        ("wl-copy", vec![], wayland),
        ("xclip", vec!["-selection", "clipboard"], x11),
        ("xsel", vec!["--clipboard", "--input"], x11),
        ("pbcopy", vec![], cfg!(target_os = "macos")),
        ("clip.exe", vec![], true),
    ];
    candidates
        .into_iter()
        .filter(|(_, _, usable)| *usable)
        .find_map(|(name, args, _)| find_on_path(name).map(|p| (p, args)))
}

fn find_on_path(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .map(|d| d.join(name))
        .find(|p| is_executable(p))
}

fn is_executable(p: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::metadata(p)
            .map(|m| m.is_file() && m.permissions().mode() & 0o111 != 0)
            .unwrap_or(false)
    }
    #[cfg(not(unix))]
    {
        p.is_file()
    }
}

/// How the text was copied.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CopyReport {
    /// The OSC 52 escape was written to the terminal.
    pub osc52: bool,
    /// The native helper used, if any.
    pub native: Option<String>,
}

impl std::fmt::Display for CopyReport {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match (&self.native, self.osc52) {
            (Some(n), true) => write!(f, "terminal (OSC 52) and {n}"),
            (Some(n), false) => f.write_str(n),
            (None, true) => f.write_str("terminal (OSC 52)"),
            (None, false) => f.write_str("nowhere"),
        }
    }
}

/// Copy `text`: write the OSC 52 escape to `terminal` and feed a native helper if one is
/// found. The helper runs detached so a slow one never holds up the caller.
pub fn copy(text: &str, terminal: &mut impl Write) -> CopyReport {
    let osc52 = terminal
        .write_all(osc52(text).as_bytes())
        .and_then(|_| terminal.flush())
        .is_ok();
    let native = native_helper().and_then(|(prog, args)| {
        let name = prog
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        let mut child = Command::new(&prog)
            .args(&args)
            .stdin(Stdio::piped())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .ok()?;
        let mut stdin = child.stdin.take()?;
        let body = text.to_string();
        std::thread::spawn(move || {
            let _ = stdin.write_all(body.as_bytes());
            drop(stdin);
            let _ = child.wait();
        });
        Some(name)
    });
    CopyReport { osc52, native }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_rfc4648_vectors() {
        // RFC 4648 §10 test vectors.
        for (input, want) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(input.as_bytes()), want);
        }
        assert_eq!(osc52("hi"), "\x1b]52;c;aGk=\x07");
    }
}
