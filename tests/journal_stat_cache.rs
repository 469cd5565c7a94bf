//! The journal remembers each activity file's path, size and modification time beside its
//! content hash. A warm command knows an unchanged file from one `stat`, without reading it:
//! the file's bytes are swapped for garbage of the same size and the old modification time
//! is put back, and `queue` still shows the cached review (it never read the garbage). A new
//! modification time makes it read the file again; the same bytes under a new time only
//! update the stat. The workstation's scan jobs follow the same rule.

mod cli_support;
mod tui_support;

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, SystemTime};

use cli_support::run;
use splitdesk::journal::{FileStat, Journal};
use splitdesk::roster::Roster;
use splitdesk::worker::{run_job, Job, JobKind, Outcome};
use tui_support::{build_roster, INTERVALS};

fn activity(roster: &Path) -> PathBuf {
    roster.join("ines-aldana/activities/2024-03-04-intervals.fit")
}

/// Overwrite `path` with `bytes`, then set its modification time to `mtime`.
fn write_with_mtime(path: &Path, bytes: &[u8], mtime: SystemTime) {
    std::fs::write(path, bytes).unwrap();
    let f = std::fs::OpenOptions::new().write(true).open(path).unwrap();
    f.set_modified(mtime).unwrap();
}

/// The queue entry of the interval session: (title, work intervals).
fn queue_entry(roster: &Path, journal: &Path) -> (String, u64, String) {
    let out = run(roster, journal, &["queue", "--json"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let e = v
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["session"] == INTERVALS)
        .unwrap()
        .clone();
    (
        e["title"].as_str().unwrap_or("").to_string(),
        e["work_intervals"].as_u64().unwrap_or(0),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn an_unchanged_stat_means_the_file_is_not_read() {
    let dir = tempfile::tempdir().unwrap();
    let roster = build_roster(&dir.path().join("roster"));
    let journal = dir.path().join("coach/journal.sqlite");
    let (title, n, _) = queue_entry(&roster, &journal);
    assert_eq!((title.as_str(), n), ("5 x 3 min", 5));

    let file = activity(&roster);
    let original = std::fs::read(&file).unwrap();
    let mtime = std::fs::metadata(&file).unwrap().modified().unwrap();
    let stat = FileStat::of(&file).unwrap();
    {
        let j = Journal::open(&journal).unwrap();
        assert_eq!(j.file_stat(INTERVALS).unwrap(), Some(stat.clone()));
    }

    // Garbage of the same size under the same modification time: not read, cached review used.
    let garbage = vec![0xA5u8; original.len()];
    write_with_mtime(&file, &garbage, mtime);
    assert_eq!(FileStat::of(&file), Some(stat.clone()));
    let (title, n, err) = queue_entry(&roster, &journal);
    assert_eq!((title.as_str(), n), ("5 x 3 min", 5), "{err}");
    assert!(!err.contains("2024-03-04-intervals"), "{err}");

    // A new modification time: read again, and the garbage is found out.
    let later = mtime + Duration::from_secs(60);
    write_with_mtime(&file, &garbage, later);
    let (title, _, err) = queue_entry(&roster, &journal);
    assert!(err.contains("2024-03-04-intervals.fit"), "{err}");
    assert_ne!(title, "5 x 3 min");

    // The original bytes back under yet another time: same hash as the cached summary...
    // the session is analysed afresh once (the garbage replaced it), then only the stat moves.
    let latest = mtime + Duration::from_secs(120);
    write_with_mtime(&file, &original, latest);
    let (title, n, _) = queue_entry(&roster, &journal);
    assert_eq!((title.as_str(), n), ("5 x 3 min", 5));
    let recorded = Journal::open(&journal)
        .unwrap()
        .file_stat(INTERVALS)
        .unwrap();
    assert_eq!(recorded, FileStat::of(&file));
    // Touch only (same bytes, new time): the hash matches, the stat is updated.
    let touched = mtime + Duration::from_secs(180);
    write_with_mtime(&file, &original, touched);
    let (title, _, _) = queue_entry(&roster, &journal);
    assert_eq!(title, "5 x 3 min");
    let recorded = Journal::open(&journal)
        .unwrap()
        .file_stat(INTERVALS)
        .unwrap();
    assert_eq!(recorded, FileStat::of(&file));
    assert_ne!(recorded, Some(stat));
}

#[test]
fn a_scan_job_trusts_the_stat_and_reports_a_new_one() {
    let dir = tempfile::tempdir().unwrap();
    let root = build_roster(&dir.path().join("roster"));
    let roster = Roster::open(&root).unwrap();
    let (athlete, act) = roster.find_session(INTERVALS).unwrap();
    let file = act.path.clone();
    let original = std::fs::read(&file).unwrap();
    let hash = splitdesk::ingest::hash::sha256_hex(&original);
    let mtime = std::fs::metadata(&file).unwrap().modified().unwrap();
    let job = |stat: Option<FileStat>| Job {
        generation: 1,
        kind: JobKind::Scan,
        athlete: Arc::new(athlete.clone()),
        activity: act.clone(),
        cached_hash: Some(hash.clone()),
        cached_stat: stat,
    };
    let stat = FileStat::of(&file);
    // Garbage, same size and time: unchanged without reading.
    write_with_mtime(&file, &vec![0u8; original.len()], mtime);
    assert!(matches!(run_job(&job(stat.clone())), Outcome::Unchanged));
    // Without a recorded stat the garbage is read, hashed and analysed (and fails).
    assert!(matches!(run_job(&job(None)), Outcome::Failed(..)));
    // The original bytes under a new time: same hash, the new stat is reported.
    write_with_mtime(&file, &original, mtime + Duration::from_secs(5));
    match run_job(&job(stat.clone())) {
        Outcome::Restat(s) => assert_eq!(Some(s), FileStat::of(&file)),
        other => panic!("expected a new stat, got {other:?}"),
    }
}
