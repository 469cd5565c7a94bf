//! FIT details: compressed speed and distance decoded (distance accumulated across its 256 m
//! wrap), bytes after the end of the data named in a warning, and what `check` says about
//! broken activity files.

mod cli_support;
mod fit_common;
mod fitdecode_support;
mod roster_support;

use cli_support::TempRoster;
use splitdesk::demo::fit_writer::{self, FitOptions};
use splitdesk::ingest;
use splitdesk::model::{ChannelKind, FileFormat};

#[test]
fn compressed_speed_and_distance_are_decoded_across_distance_wraps() {
    let mut s = fit_common::session(900, false);
    // No positions, so nothing could stand in for the missing distance.
    s.lat = None;
    s.lon = None;
    let bytes = fit_writer::write_with(
        &s,
        FitOptions {
            compressed_speed_distance: true,
            ..FitOptions::default()
        },
    );
    let got = ingest::ingest_bytes(&bytes, FileFormat::Fit, None).unwrap();
    // Before: no distance and no speed at all.
    assert!(got.derived.is_empty(), "{:?}", got.derived);
    let want_d = s.distance.as_ref().unwrap();
    let got_d = got.distance.as_ref().expect("distance decoded");
    let want_v = s.speed.as_ref().unwrap();
    let got_v = got.speed.as_ref().expect("speed decoded");
    assert_eq!(got.len(), s.len());
    let total = want_d.get(s.len() - 1).unwrap();
    assert!(
        total > 2000.0,
        "the run crosses several 256 m wraps: {total}"
    );
    for i in 0..s.len() {
        // Distance to 1/16 m, speed to 1/100 m/s (the field's resolution).
        let (w, g) = (want_d.get(i).unwrap(), got_d.get(i).unwrap());
        assert!(
            (w - g).abs() <= 1.0 / 32.0 + 1e-9,
            "distance at {i}: {w} vs {g}"
        );
        let (w, g) = (want_v.get(i).unwrap(), got_v.get(i).unwrap());
        assert!((w - g).abs() <= 0.005 + 1e-9, "speed at {i}: {w} vs {g}");
    }
    assert!(!got.derived.contains(&ChannelKind::Distance));
}

#[test]
fn compressed_speed_and_distance_agree_with_fitdecode() {
    let Some(python) = fitdecode_support::python() else {
        return;
    };
    let mut s = fit_common::session(900, false);
    s.lat = None;
    s.lon = None;
    let bytes = fit_writer::write_with(
        &s,
        FitOptions {
            compressed_speed_distance: true,
            ..FitOptions::default()
        },
    );
    let ours = ingest::fit::decode(&bytes).unwrap();
    let theirs = fitdecode_support::fitdecode_bytes(&python, &bytes);
    // Source: fitdecode (PyPI), an independent FIT decoder, which expands the components of
    // compressed_speed_distance and accumulates the distance.
    let recs = theirs["records"].as_array().unwrap();
    assert_eq!(recs.len(), ours.len());
    for (i, r) in recs.iter().enumerate() {
        fitdecode_support::same(
            "distance",
            fitdecode_support::at(&ours.distance, i),
            &r["distance"],
            1e-9,
        );
        fitdecode_support::same(
            "speed",
            fitdecode_support::at(&ours.speed, i),
            &r["speed"],
            1e-9,
        );
    }
}

fn roster() -> TempRoster {
    TempRoster::new(roster_support::write_roster)
}

fn activity(r: &TempRoster, name: &str) -> std::path::PathBuf {
    r.roster.join("tova-renn/activities").join(name)
}

#[test]
fn check_names_trailing_bytes_without_failing_and_the_session_still_reads() {
    let r = roster();
    let reps = activity(&r, "2026-11-03-reps.fit");
    let mut bytes = std::fs::read(&reps).unwrap();
    bytes.extend_from_slice(b"garbage");
    std::fs::write(&reps, &bytes).unwrap();
    let (code, out, _) = r.run(&["check", r.roster.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}");
    // Before: nothing was said.
    assert!(
        out.contains(&format!(
            "{}: 7 bytes after the end of the FIT data were ignored\n",
            reps.display()
        )),
        "{out}"
    );
    assert!(out.contains("2 sessions, 2 readable"), "{out}");
    // The review says it too, where the coach reads the findings.
    let (code, out, _) = r.run(&["analyze", reps.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.contains("While reading the file: 7 bytes after the end of the FIT data were ignored."),
        "{out}"
    );
}

#[test]
fn a_huge_file_in_the_roster_is_listed_by_check_and_queue_still_works() {
    let r = roster();
    let huge = activity(&r, "2026-11-05-run.fit");
    std::fs::File::create(&huge)
        .unwrap()
        .set_len(2 * 1024 * 1024 * 1024)
        .unwrap();
    let (code, out, _) = r.run(&["check", r.roster.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains(&format!(
            "{}: file is 2.0 GiB (2147483648 bytes), above the 64.0 MiB limit for activity \
             files (raise [ingest] max_file_mb in config.toml to read it)\n",
            huge.display()
        )),
        "{out}"
    );
    let (code, out, _) = r.run(&["queue"]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("2026-11-03-reps"), "{out}");
}
