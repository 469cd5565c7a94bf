//! Remembering that a journal passed its integrity check, so an unchanged journal is not
//! read whole on every open.
//!
//! Opening a journal runs SQLite's `PRAGMA quick_check`, which reads every page: on a
//! club-sized journal (10,000 sessions, about 120 MB) that is most of a warm `queue`. After a
//! clean check, the journal's file identity is written beside it, in `<journal>-checked`
//! (next to SQLite's own `-wal` and `-shm` files). The next open skips the check when the
//! journal file and its write-ahead log still have exactly that identity: size, modification
//! and change times in nanoseconds, inode and device. Any write to either file changes its
//! change time, which no program can set back, so a journal that was written, damaged or
//! replaced since is checked again. A mark that cannot be read, or written (a read-only
//! folder), only means the check runs.

use std::fs;
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};

/// First line of the mark file; a mark of another format is never trusted.
const FORMAT: &str = "splitdesk journal check 1";

fn sibling(path: &Path, suffix: &str) -> PathBuf {
    let mut name = path.as_os_str().to_os_string();
    name.push(suffix);
    PathBuf::from(name)
}

/// Where the mark of the journal at `path` is kept.
pub fn mark_path(path: &Path) -> PathBuf {
    sibling(path, "-checked")
}

fn identity(meta: &fs::Metadata) -> String {
    format!(
        "{} {}.{:09} {}.{:09} {} {}",
        meta.len(),
        meta.mtime(),
        meta.mtime_nsec(),
        meta.ctime(),
        meta.ctime_nsec(),
        meta.ino(),
        meta.dev()
    )
}

/// The identity of the journal file and its write-ahead log as they are now; `None` when
/// the journal file cannot be looked at.
pub fn stamp(path: &Path) -> Option<String> {
    let main = fs::metadata(path).ok()?;
    // An empty log holds nothing: SQLite makes one afresh whenever a connection opens.
    let wal = match fs::metadata(sibling(path, "-wal")) {
        Ok(m) if m.len() == 0 => "none".to_string(),
        Ok(m) => identity(&m),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => "none".to_string(),
        Err(_) => return None,
    };
    Some(format!(
        "{FORMAT}\njournal {}\nlog {wal}\n",
        identity(&main)
    ))
}

/// Whether the journal at `path` passed a check while it had the identity `stamp`.
pub fn is_marked(path: &Path, stamp: &str) -> bool {
    fs::read_to_string(mark_path(path)).is_ok_and(|mark| mark == stamp)
}

/// A file changed less than this long ago is not marked: file times can be as coarse as a
/// clock tick, so a write right after the check could leave the identity unchanged.
const SETTLED: std::time::Duration = std::time::Duration::from_secs(2);

/// Whether the journal file and its log were last changed at least [`SETTLED`] ago.
fn settled(path: &Path) -> bool {
    let now = std::time::SystemTime::now();
    let old_enough = |p: &Path| match fs::metadata(p) {
        Ok(m) if m.len() == 0 => true,
        Ok(m) => {
            let changed = std::time::UNIX_EPOCH
                + std::time::Duration::new(
                    u64::try_from(m.ctime()).unwrap_or(u64::MAX / 2),
                    u32::try_from(m.ctime_nsec()).unwrap_or(0),
                );
            now.duration_since(changed).is_ok_and(|age| age >= SETTLED)
        }
        Err(e) => e.kind() == std::io::ErrorKind::NotFound,
    };
    old_enough(path) && old_enough(&sibling(path, "-wal"))
}

/// Remember that the journal passed a check while it had the identity `stamp`. Best effort:
/// a mark that cannot be written only means the next open checks again. Not marked while
/// the journal is still changing (see [`SETTLED`]).
pub fn mark(path: &Path, stamp: &str) {
    if !settled(path) {
        return;
    }
    let mark = mark_path(path);
    let tmp = sibling(path, "-checked.tmp");
    if fs::write(&tmp, stamp).is_ok() && fs::rename(&tmp, &mark).is_err() {
        let _ = fs::remove_file(&tmp);
    }
}

/// Forget the mark (the journal failed its check, or is about to be replaced).
pub fn clear(path: &Path) {
    let _ = fs::remove_file(mark_path(path));
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_write_to_the_journal_or_its_log_changes_the_stamp() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("j.sqlite");
        fs::write(&path, b"one").unwrap();
        let before = stamp(&path).unwrap();
        assert_eq!(stamp(&path).unwrap(), before, "nothing changed");
        // Just written: not marked yet.
        mark(&path, &before);
        assert!(!is_marked(&path, &before));
        // Settled: marked (the mark is written as the check would, bypassing the wait).
        fs::write(mark_path(&path), &before).unwrap();
        assert!(is_marked(&path, &before));
        // Same size, same content: the change time still moves.
        std::thread::sleep(std::time::Duration::from_millis(5));
        fs::write(&path, b"one").unwrap();
        let rewritten = stamp(&path).unwrap();
        assert_ne!(rewritten, before);
        assert!(!is_marked(&path, &rewritten));
        // An empty log beside it does not change the stamp; a log with content does.
        fs::write(sibling(&path, "-wal"), b"").unwrap();
        assert_eq!(stamp(&path).unwrap(), rewritten);
        fs::write(sibling(&path, "-wal"), b"frames").unwrap();
        assert_ne!(stamp(&path).unwrap(), rewritten);
        clear(&path);
        assert!(!is_marked(&path, &before));
        assert!(stamp(&dir.path().join("missing")).is_none());
    }
}
