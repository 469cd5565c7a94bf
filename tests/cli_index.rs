//! `splitdesk index [ROSTER]`: a cold scan of a roster into its journal. The journal it
//! writes answers `queue`; a second scan reads nothing (every file unchanged); a file that
//! cannot be read is listed and recorded as unreadable; a changed file is read again.

use std::path::Path;

use assert_cmd::Command;
use splitdesk::analysis::review::ANALYSIS_VERSION;
use splitdesk::journal::Journal;

fn splitdesk() -> Command {
    let mut c = Command::cargo_bin("splitdesk").unwrap();
    c.env("SPLITDESK_CONFIG", "/nonexistent/splitdesk-config.toml");
    c
}

fn index(roster: &Path, journal: &Path) -> String {
    let out = splitdesk()
        .arg("index")
        .arg(roster)
        .arg("--journal")
        .arg(journal)
        .assert()
        .success();
    String::from_utf8(out.get_output().stdout.clone()).unwrap()
}

/// The counts of the summary line (files, analysed, unchanged, unreadable).
fn counts(stdout: &str) -> (usize, usize, usize, usize) {
    let line = stdout.lines().last().unwrap();
    let nums: Vec<usize> = line
        .split(", ")
        .take(4)
        .map(|part| {
            let word = part.rsplit(": ").next().unwrap();
            word.split(' ').next().unwrap().parse().unwrap()
        })
        .collect();
    (nums[0], nums[1], nums[2], nums[3])
}

#[test]
fn index_fills_the_journal_then_reads_nothing_and_lists_an_unreadable_file() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    let journal = dir.path().join("journal.db");
    let (_, summary) =
        splitdesk::demo::scale::write(2, 1, splitdesk::demo::scenario::DEFAULT_SEED, &roster, 2)
            .unwrap();
    let files = summary.sessions;
    // Demo week 6 of ansel-marchetti and dagny-holloway.
    assert_eq!(files, 8);
    let bad = roster.join("dagny-holloway-01/activities/2026-11-26-easy-run.fit");
    assert!(bad.is_file());
    std::fs::write(&bad, b"not a FIT file at all").unwrap();

    let first = index(&roster, &journal);
    assert_eq!(counts(&first), (files, files - 1, 0, 1), "{first}");
    let listed = first
        .lines()
        .find(|l| l.starts_with(&format!("{}: ", bad.display())))
        .unwrap_or_else(|| panic!("unreadable file not listed: {first}"));
    assert!(
        listed.len() > bad.display().to_string().len() + 2,
        "{listed}"
    );
    assert!(
        first.lines().last().unwrap().ends_with(" files/s"),
        "{first}"
    );

    {
        let j = Journal::open(&journal).unwrap();
        let sessions = j.sessions(None).unwrap();
        assert_eq!(sessions.len(), files);
        let bad_id = "dagny-holloway-01/2026-11-26-easy-run";
        assert!(j.unreadable(bad_id).unwrap().is_some());
        for s in sessions.iter().filter(|s| s.session_id != bad_id) {
            assert!(
                j.cached_summary(&s.session_id, ANALYSIS_VERSION)
                    .unwrap()
                    .is_some(),
                "{}",
                s.session_id
            );
            assert!(j.file_stat(&s.session_id).unwrap().is_some());
        }
    }

    // The same journal answers `queue`: every session, the unreadable one among them.
    let queue = splitdesk()
        .arg("--roster")
        .arg(&roster)
        .arg("--journal")
        .arg(&journal)
        .arg("queue")
        .assert()
        .success();
    let queue = String::from_utf8(queue.get_output().stdout.clone()).unwrap();
    assert!(
        queue.contains("ansel-marchetti-01/2026-11-29-race"),
        "{queue}"
    );
    assert!(
        queue.contains("dagny-holloway-01/2026-11-26-easy-run"),
        "{queue}"
    );

    // Nothing changed: nothing is read.
    let second = index(&roster, &journal);
    assert_eq!(counts(&second), (files, 0, files, 0), "{second}");

    // One file changed: that one is read again.
    let changed = roster.join("ansel-marchetti-01/activities/2026-11-29-race.fit");
    let mut bytes = std::fs::read(&changed).unwrap();
    bytes.extend_from_slice(&[0; 4]);
    std::fs::write(&changed, bytes).unwrap();
    let third = index(&roster, &journal);
    assert_eq!(counts(&third), (files, 1, files - 1, 0), "{third}");
}

#[test]
fn the_library_scan_reports_progress_up_to_every_file() {
    let dir = tempfile::tempdir().unwrap();
    let roster_dir = dir.path().join("roster");
    splitdesk::demo::scale::write(1, 1, 3, &roster_dir, 2).unwrap();
    let roster = splitdesk::roster::Roster::open(&roster_dir).unwrap();
    let mut journal = Journal::open(&dir.path().join("j.db")).unwrap();
    let mut seen = Vec::new();
    let report = splitdesk::cli::index_cmd::index(&roster, &mut journal, 3, |done, total| {
        seen.push((done, total))
    })
    .unwrap();
    let total = roster.activities().count();
    assert_eq!(report.files, total);
    assert_eq!(report.analysed, total);
    assert_eq!(seen.first(), Some(&(0, total)));
    assert_eq!(seen.last(), Some(&(total, total)));
    assert_eq!(journal.sessions(None).unwrap().len(), total);
}
