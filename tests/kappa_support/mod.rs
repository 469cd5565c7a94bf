//! scikit-learn's `cohen_kappa_score` (PyPI), an independent implementation of weighted
//! kappa, through tests/kappa_check.py, for the cross-checks of the agreement tests.
//! Skipped with a message without `SPLITDESK_PYTHON` or without scikit-learn there.

use std::io::Write;
use std::process::{Command, Stdio};

/// scikit-learn's kappa of each case (`{"a": [..], "b": [..], "weights": ..}`), `None`
/// for a case it cannot compute; `None` as a whole when the check is skipped (said on
/// stdout).
pub fn sklearn_kappas(cases: Vec<serde_json::Value>) -> Option<Vec<Option<f64>>> {
    let Some(python) = std::env::var("SPLITDESK_PYTHON")
        .ok()
        .filter(|p| !p.is_empty())
    else {
        println!("skipped: set SPLITDESK_PYTHON to a Python with scikit-learn installed");
        return None;
    };
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/kappa_check.py");
    let mut child = Command::new(&python)
        .arg(script)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(serde_json::Value::Array(cases).to_string().as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    if out.status.code() == Some(3) {
        println!("skipped: scikit-learn is not installed for {python}");
        return None;
    }
    assert!(
        out.status.success(),
        "kappa_check.py failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    Some(serde_json::from_slice(&out.stdout).unwrap())
}
