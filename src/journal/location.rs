//! Where a roster's journal lives, and the rule that it never lives inside the roster.

use std::path::{Component, Path, PathBuf};

use super::error::JournalError;
use crate::ingest::hash::sha256_hex;

/// Environment variable that replaces the platform data directory (used by tests).
pub const DATA_DIR_ENV: &str = "SPLITDESK_DATA_DIR";

/// The default journal file of a roster:
/// `<data dir>/journals/<roster name>-<first 16 hex of sha256(canonical roster path)>.sqlite`.
///
/// The data dir is `$SPLITDESK_DATA_DIR` when set and non-empty, else the platform data
/// directory (`directories`). `None` when neither is known (no home directory).
pub fn default_path(roster_root: &Path) -> Option<PathBuf> {
    let data_dir = match std::env::var_os(DATA_DIR_ENV) {
        Some(d) if !d.is_empty() => PathBuf::from(d),
        _ => directories::ProjectDirs::from("", "", "splitdesk")?
            .data_dir()
            .to_path_buf(),
    };
    Some(default_path_in(&data_dir, roster_root))
}

/// [`default_path`] with an explicit data directory.
pub fn default_path_in(data_dir: &Path, roster_root: &Path) -> PathBuf {
    let canonical = canonical_lenient(roster_root);
    let name: String = canonical
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c.to_ascii_lowercase()
            } else {
                '-'
            }
        })
        .collect();
    let name = if name.trim_matches('-').is_empty() {
        "roster".to_string()
    } else {
        name
    };
    let hash = sha256_hex(canonical.to_string_lossy().as_bytes());
    data_dir
        .join("journals")
        .join(format!("{name}-{}.sqlite", hash.get(..16).unwrap_or(&hash)))
}

/// Refuse a journal path inside the roster folder (which may be synced to athletes).
/// Symbolic links and `..` are resolved as far as the paths exist.
pub fn check_outside_roster(journal: &Path, roster_root: &Path) -> Result<(), JournalError> {
    let j = canonical_lenient(journal);
    let r = canonical_lenient(roster_root);
    if j.starts_with(&r) {
        return Err(JournalError::InsideRoster {
            path: journal.to_path_buf(),
            roster: roster_root.to_path_buf(),
        });
    }
    Ok(())
}

/// Canonicalize the longest existing ancestor and append the rest, normalising `.` and `..`.
fn canonical_lenient(path: &Path) -> PathBuf {
    let abs = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    let mut existing = abs.as_path();
    let mut rest: Vec<Component<'_>> = Vec::new();
    loop {
        if let Ok(c) = existing.canonicalize() {
            let mut out = c;
            for comp in rest.iter().rev() {
                match comp {
                    Component::ParentDir => {
                        out.pop();
                    }
                    Component::CurDir => {}
                    other => out.push(other.as_os_str()),
                }
            }
            return out;
        }
        match (existing.parent(), existing.components().next_back()) {
            (Some(parent), Some(last)) => {
                rest.push(last);
                existing = parent;
            }
            _ => return abs,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn default_path_shape() {
        let dir = tempfile::tempdir().unwrap();
        let roster = dir.path().join("My Roster");
        std::fs::create_dir(&roster).unwrap();
        let p = default_path_in(Path::new("/data"), &roster);
        let name = p.file_name().unwrap().to_string_lossy().into_owned();
        assert!(p.starts_with("/data/journals"));
        assert!(name.starts_with("my-roster-"), "{name}");
        assert!(name.ends_with(".sqlite"));
        assert_eq!(name.len(), "my-roster-".len() + 16 + ".sqlite".len());
        // Same roster through a different spelling gives the same file.
        let other = default_path_in(Path::new("/data"), &dir.path().join("./My Roster/."));
        assert_eq!(p, other);
    }

    #[test]
    fn inside_roster_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let roster = dir.path().join("roster");
        std::fs::create_dir(&roster).unwrap();
        assert!(matches!(
            check_outside_roster(&roster.join("ines/j.sqlite"), &roster),
            Err(JournalError::InsideRoster { .. })
        ));
        assert!(matches!(
            check_outside_roster(&dir.path().join("x/../roster/j.sqlite"), &roster),
            Err(JournalError::InsideRoster { .. })
        ));
        assert!(check_outside_roster(&dir.path().join("roster-journal.sqlite"), &roster).is_ok());
    }
}
