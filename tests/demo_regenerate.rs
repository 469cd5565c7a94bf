//! The committed `demo-athletes/` is exactly what `splitdesk demo` writes with the default
//! seed: same file list, same bytes. Also: the command replaces a previous demo roster and
//! refuses a folder that is not one.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::Instant;

use assert_cmd::Command;
use splitdesk::demo::roster_writer::MARKER;

const HOW_TO_FIX: &str = "demo-athletes/ is out of date with the generator: run \
     `rm -rf demo-athletes && cargo run --release -- demo --out demo-athletes` and commit it";

fn splitdesk() -> Command {
    let mut c = Command::cargo_bin("splitdesk").unwrap();
    c.env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml");
    c
}

/// Every file under `root`, relative path -> bytes.
fn files(root: &Path) -> BTreeMap<PathBuf, Vec<u8>> {
    fn walk(root: &Path, dir: &Path, out: &mut BTreeMap<PathBuf, Vec<u8>>) {
        for entry in std::fs::read_dir(dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                walk(root, &path, out);
            } else {
                let rel = path.strip_prefix(root).unwrap().to_path_buf();
                out.insert(rel, std::fs::read(&path).unwrap());
            }
        }
    }
    let mut out = BTreeMap::new();
    walk(root, root, &mut out);
    out
}

#[test]
fn regenerating_gives_the_committed_folder_byte_for_byte() {
    let committed_root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let committed = files(&committed_root);
    assert!(!committed.is_empty(), "{HOW_TO_FIX}");

    // Write into a folder that holds a previous demo roster with a stale athlete: the
    // command must replace it (the stale athlete disappears).
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("demo");
    std::fs::create_dir_all(out.join("old-runner/activities")).unwrap();
    std::fs::write(out.join("old-runner/athlete.toml"), "name = \"Old\"\n").unwrap();
    std::fs::write(out.join("old-runner/activities/x.fit"), b"x").unwrap();
    std::fs::write(
        out.join("roster.toml"),
        format!("{MARKER}\nname = \"Old\"\n"),
    )
    .unwrap();

    let started = Instant::now();
    let result = splitdesk()
        .arg("demo")
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    println!("regeneration took {:.1} s", started.elapsed().as_secs_f64());
    assert_eq!(
        result.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    let stdout = String::from_utf8(result.stdout).unwrap();
    assert_eq!(stdout.lines().count(), 1, "{stdout}");
    assert!(stdout.contains("6 athletes"), "{stdout}");

    let fresh = files(&out);
    let missing: Vec<_> = committed
        .keys()
        .filter(|k| !fresh.contains_key(*k))
        .collect();
    let extra: Vec<_> = fresh
        .keys()
        .filter(|k| !committed.contains_key(*k))
        .collect();
    let differ: Vec<_> = committed
        .iter()
        .filter(|(k, v)| fresh.get(*k).is_some_and(|f| f != *v))
        .map(|(k, _)| k)
        .collect();
    assert!(
        missing.is_empty() && extra.is_empty() && differ.is_empty(),
        "{HOW_TO_FIX}\nonly committed: {missing:?}\nonly generated: {extra:?}\ndiffer: {differ:?}"
    );
}

#[test]
fn refuses_a_folder_that_is_not_a_demo_roster() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("thesis.txt"), "keep me").unwrap();
    let result = splitdesk()
        .arg("demo")
        .arg("--out")
        .arg(dir.path())
        .output()
        .unwrap();
    assert_eq!(result.status.code(), Some(2));
    let err = String::from_utf8(result.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("error: ") && err.contains("not a demo roster"),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(dir.path().join("thesis.txt")).unwrap(),
        "keep me"
    );
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}
