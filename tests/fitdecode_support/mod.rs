//! Running the fitdecode (PyPI) cross-check script and comparing its values with ours.
//!
//! Runs `$SPLITDESK_PYTHON tests/fitdecode_check.py FILE`. Without `SPLITDESK_PYTHON` the
//! checks are skipped with a message, except under `CI=true`, where that is a failure.

#![allow(dead_code)]

use std::path::Path;
use std::process::Command;

use serde_json::Value;
use splitdesk::model::Channel;

/// The Python with fitdecode installed, or `None` (skip) outside CI.
pub fn python() -> Option<String> {
    match std::env::var("SPLITDESK_PYTHON") {
        Ok(p) if !p.is_empty() => Some(p),
        _ => {
            if std::env::var("CI").is_ok_and(|v| v == "true") {
                panic!("SPLITDESK_PYTHON is not set; CI needs the fitdecode cross-check");
            }
            println!("skipped: set SPLITDESK_PYTHON to a Python with fitdecode installed");
            None
        }
    }
}

/// What fitdecode reads from the FIT file at `path` (see tests/fitdecode_check.py).
pub fn fitdecode_file(python: &str, path: &Path) -> Value {
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fitdecode_check.py");
    let out = Command::new(python).arg(script).arg(path).output().unwrap();
    assert!(
        out.status.success(),
        "fitdecode failed on {}: {}",
        path.display(),
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

/// What fitdecode reads from FIT bytes (written to a temporary file).
pub fn fitdecode_bytes(python: &str, bytes: &[u8]) -> Value {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("check.fit");
    std::fs::write(&path, bytes).unwrap();
    fitdecode_file(python, &path)
}

/// Our value and fitdecode's agree within `tol`, or are both missing.
pub fn same(what: &str, ours: Option<f64>, theirs: &Value, tol: f64) {
    match (ours, theirs.as_f64()) {
        (Some(a), Some(b)) => assert!((a - b).abs() <= tol, "{what}: ours {a}, fitdecode {b}"),
        (None, None) => {}
        (a, _) => panic!("{what}: ours {a:?}, fitdecode {theirs}"),
    }
}

/// Sample `i` of an optional channel.
pub fn at(c: &Option<Channel>, i: usize) -> Option<f64> {
    c.as_ref().and_then(|c| c.get(i))
}
