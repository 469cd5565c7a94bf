//! The fuzz targets' entry points (`entry`, shared with `tests/fuzz_regressions.rs`) and a
//! replay driver for builds without libFuzzer.

#[path = "entry.rs"]
pub mod entry;

use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// Run `f` on every file named on the command line (folders: every file inside, sorted).
/// A panic aborts with the panic message, as under libFuzzer.
pub fn replay(f: fn(&[u8])) -> ExitCode {
    let mut files: Vec<PathBuf> = Vec::new();
    for arg in std::env::args_os().skip(1) {
        collect(Path::new(&arg), &mut files);
    }
    if files.is_empty() {
        eprintln!("usage: TARGET FILE_OR_FOLDER...");
        return ExitCode::from(2);
    }
    for path in &files {
        match std::fs::read(path) {
            Ok(bytes) => {
                f(&bytes);
                println!("ok {}", path.display());
            }
            Err(e) => {
                eprintln!("{}: {e}", path.display());
                return ExitCode::FAILURE;
            }
        }
    }
    ExitCode::SUCCESS
}

fn collect(path: &Path, out: &mut Vec<PathBuf>) {
    if path.is_dir() {
        let mut inner: Vec<PathBuf> = std::fs::read_dir(path)
            .map(|rd| rd.filter_map(|e| e.ok().map(|e| e.path())).collect())
            .unwrap_or_default();
        inner.sort();
        for p in inner {
            collect(&p, out);
        }
    } else {
        out.push(path.to_path_buf());
    }
}
