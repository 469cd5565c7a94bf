//! Copy text to the clipboard: the OSC 52 terminal escape (works over SSH where the
//! terminal allows it), tmux's buffer when running inside tmux (which by default ignores an
//! application's OSC 52), plus a native helper when one is on `PATH` (`wl-copy`, `xclip`,
//! `xsel`, `pbcopy`, `clip.exe`). The report says which of these happened.

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

/// What was done with the text. Only a native helper copies for certain; the OSC 52
/// escape is a request the terminal may ignore (tmux does by default), and tmux's buffer
/// reaches the system clipboard only where tmux can pass it on.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CopyReport {
    /// The OSC 52 escape was written to the terminal.
    pub osc52: bool,
    /// Inside tmux (`$TMUX` set): the text was loaded into tmux's paste buffer.
    pub tmux: bool,
    /// The native helper used, if any.
    pub native: Option<String>,
}

impl CopyReport {
    /// Whether the text is known to be on a clipboard (a native helper took it).
    pub fn copied(&self) -> bool {
        self.native.is_some()
    }
}

impl std::fmt::Display for CopyReport {
    /// What was done, most certain first: `copied with xclip`, `put in tmux's buffer`,
    /// `sent to the terminal (OSC 52)`, joined with "and".
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mut done: Vec<String> = Vec::new();
        if let Some(n) = &self.native {
            done.push(format!("copied with {n}"));
        }
        if self.tmux {
            done.push("put in tmux's buffer".to_string());
        }
        if self.osc52 {
            done.push("sent to the terminal (OSC 52)".to_string());
        }
        if done.is_empty() {
            f.write_str("not copied: no clipboard helper found and the terminal took no text")
        } else {
            f.write_str(&done.join(" and "))
        }
    }
}

/// How long tmux may take to load its buffer before the copy reports it as not done.
const TMUX_WAIT: std::time::Duration = std::time::Duration::from_secs(2);

/// Run `tmux ARGS` with `text` on stdin; true when it exits with success in time.
fn tmux_load(tmux: &Path, args: &[&str], text: &str) -> bool {
    let Ok(mut child) = Command::new(tmux)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
    else {
        return false;
    };
    if let Some(mut stdin) = child.stdin.take() {
        let _ = stdin.write_all(text.as_bytes());
    }
    let start = std::time::Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(status)) => return status.success(),
            Ok(None) if start.elapsed() < TMUX_WAIT => {
                std::thread::sleep(std::time::Duration::from_millis(5));
            }
            _ => {
                let _ = child.kill();
                let _ = child.wait();
                return false;
            }
        }
    }
}

/// Inside tmux, hand the text to tmux: `tmux load-buffer -w -` (the `-w` also passes it to
/// the outer terminal's clipboard where tmux can), else plain `load-buffer -` for a tmux
/// older than 3.2, which has no `-w`.
fn to_tmux(text: &str) -> bool {
    if std::env::var_os("TMUX").is_none_or(|v| v.is_empty()) {
        return false;
    }
    let Some(tmux) = find_on_path("tmux") else {
        return false;
    };
    tmux_load(&tmux, &["load-buffer", "-w", "-"], text)
        || tmux_load(&tmux, &["load-buffer", "-"], text)
}

/// Copy `text`: write the OSC 52 escape to `terminal`, inside tmux load it into tmux's
/// buffer, and feed a native helper if one is found. The helper runs detached so a slow
/// one never holds up the caller; tmux is waited for (briefly) so the report is true.
pub fn copy(text: &str, terminal: &mut impl Write) -> CopyReport {
    let osc52 = terminal
        .write_all(osc52(text).as_bytes())
        .and_then(|_| terminal.flush())
        .is_ok();
    let tmux = to_tmux(text);
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
    CopyReport {
        osc52,
        tmux,
        native,
    }
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

    #[test]
    fn the_report_says_what_was_done_and_only_a_helper_copies() {
        let r = |osc52, tmux, native: Option<&str>| CopyReport {
            osc52,
            tmux,
            native: native.map(String::from),
        };
        assert_eq!(
            r(true, false, None).to_string(),
            "sent to the terminal (OSC 52)"
        );
        assert!(!r(true, true, None).copied());
        assert_eq!(
            r(true, true, None).to_string(),
            "put in tmux's buffer and sent to the terminal (OSC 52)"
        );
        assert_eq!(
            r(true, false, Some("xclip")).to_string(),
            "copied with xclip and sent to the terminal (OSC 52)"
        );
        assert!(r(false, false, Some("xclip")).copied());
        assert!(r(false, false, None).to_string().starts_with("not copied"));
    }
}
