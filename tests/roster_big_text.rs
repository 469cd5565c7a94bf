//! The coach's small text files (profile, plans, `roster.toml`) are read within a size cap:
//! a huge plan file is refused from its size alone and listed by `check`; the rest of the
//! roster still works.

mod cli_support;
mod roster_support;

use cli_support::TempRoster;
use splitdesk::ingest::{read_text_file, TEXT_FILE_MAX_BYTES};

#[test]
fn a_huge_text_file_is_refused_from_its_size() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("2026-11-05-huge.toml");
    // Sparse: 2 GiB on paper, nothing on disk. Before the cap, this was read whole.
    std::fs::File::create(&path)
        .unwrap()
        .set_len(2 * 1024 * 1024 * 1024)
        .unwrap();
    let err = read_text_file(&path).unwrap_err();
    assert_eq!(
        err.to_string(),
        "file is 2.0 GiB (2147483648 bytes), above the 1.0 MiB limit for profiles, plans and settings"
    );
    // Exactly at the cap is still read.
    let at_cap = dir.path().join("at-cap.toml");
    std::fs::write(&at_cap, vec![b'#'; TEXT_FILE_MAX_BYTES as usize]).unwrap();
    assert_eq!(
        read_text_file(&at_cap).unwrap().len() as u64,
        TEXT_FILE_MAX_BYTES
    );
    // A folder is not a text file.
    assert_eq!(
        read_text_file(dir.path()).unwrap_err().to_string(),
        "not a regular file"
    );
}

#[test]
fn check_lists_a_huge_plan_and_the_queue_still_works() {
    let r = TempRoster::new(roster_support::write_roster);
    let huge = r.roster.join("tova-renn/plans/2026-11-05-huge.toml");
    std::fs::File::create(&huge)
        .unwrap()
        .set_len(2 * 1024 * 1024 * 1024)
        .unwrap();
    let (_, out, _) = r.run(&["check", r.roster.to_str().unwrap()]);
    assert!(
        out.contains(&format!(
            "{}: file is 2.0 GiB (2147483648 bytes), above the 1.0 MiB limit",
            huge.display()
        )),
        "{out}"
    );
    let out = r.ok(&["queue"]);
    assert!(out.contains("2026-11-03-reps"), "{out}");
}
