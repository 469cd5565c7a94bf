//! The same simulated series written as FIT, TCX and GPX reads back equal within each
//! format's precision, through the full ingest path (decode, derive, flag), and the
//! `inspect` command reports it. Self-consistency tests on invented data.

mod xml_common;

use splitdesk::demo::{fit_writer, gpx_writer, tcx_writer};
use splitdesk::ingest::ingest_bytes;
use splitdesk::model::{ChannelKind, FileFormat, Session};
use xml_common::{assert_channel, simulated};

/// The shared simulated run with beat-to-beat wobble on HR, as a real sensor shows:
/// a perfectly smooth curve rounded to whole bpm would sit on one value for over a
/// minute and be flagged as a flat-lined sensor.
fn wobbly(pause: bool) -> Session {
    let mut s = simulated(pause);
    if let Some(hr) = s.hr.as_mut() {
        for (i, v) in hr.values.iter_mut().enumerate() {
            if let Some(x) = v.as_mut() {
                *x += 1.6 * (i as f64 * 0.9).sin();
            }
        }
    }
    s
}

fn all_formats(s: &Session) -> [(FileFormat, Session); 3] {
    let read = |f: FileFormat, bytes: Vec<u8>| ingest_bytes(&bytes, f, None).unwrap();
    [
        (FileFormat::Fit, read(FileFormat::Fit, fit_writer::write(s))),
        (FileFormat::Tcx, read(FileFormat::Tcx, tcx_writer::write(s))),
        (FileFormat::Gpx, read(FileFormat::Gpx, gpx_writer::write(s))),
    ]
}

#[test]
fn one_series_three_formats_read_back_equal() {
    let src = wobbly(true);
    let read = all_formats(&src);
    for (f, s) in &read {
        s.check_invariants().unwrap();
        assert_eq!(s.t, src.t, "{f}: sample times");
        assert_eq!(s.start, src.start, "{f}: start");
        assert_eq!(s.pauses.len(), 1, "{f}: pauses");
        assert!((s.pauses[0].from_s - 599.0).abs() <= 1.0, "{f}");
        assert!((s.pauses[0].to_s - 640.0).abs() <= 1.0, "{f}");
        // HR is whole bpm in every format; cadence whole strides in XML, 1/128 stride in FIT.
        assert_channel(&format!("{f} hr"), &s.hr, &rounded(&src.hr, 1.0), 0.0);
        assert_channel(&format!("{f} cadence"), &s.cadence, &src.cadence, 1.0);
        assert_channel(&format!("{f} altitude"), &s.altitude, &src.altitude, 0.2);
        assert_channel(&format!("{f} lat"), &s.lat, &src.lat, 1e-7);
        assert_channel(&format!("{f} lon"), &s.lon, &src.lon, 1e-7);
        assert_eq!(s.content_hash.len(), 64);
        assert!(s.flags.is_empty(), "{f}: {:?}", s.flags);
    }
    // FIT and TCX carry the recorded distance and speed.
    for (f, s) in &read[..2] {
        assert_channel(&format!("{f} distance"), &s.distance, &src.distance, 0.01);
        assert_channel(&format!("{f} speed"), &s.speed, &src.speed, 0.001);
        assert!(s.derived.is_empty(), "{f}");
    }
    // GPX has no distance: it is derived from the positions and marked so. Speed travels
    // in the track-point extension.
    let gpx = &read[2].1;
    assert_eq!(gpx.derived, vec![ChannelKind::Distance]);
    assert_channel("gpx speed", &gpx.speed, &src.speed, 0.001);
    // TCX and GPX carry the note; FIT has no note field.
    assert_eq!(read[1].1.note, src.note);
    assert_eq!(read[2].1.note, src.note);
}

fn rounded(ch: &Option<splitdesk::model::Channel>, step: f64) -> Option<splitdesk::model::Channel> {
    ch.as_ref().map(|c| {
        splitdesk::model::Channel::new(
            c.values
                .iter()
                .map(|v| v.map(|x| (x / step).round() * step))
                .collect(),
        )
    })
}

#[test]
fn inspect_reports_each_format_without_printing_the_note() {
    let src = wobbly(false);
    let dir = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for (ext, bytes) in [
        ("fit", fit_writer::write(&src)),
        ("tcx", tcx_writer::write(&src)),
        ("gpx", gpx_writer::write(&src)),
    ] {
        let p = dir.path().join(format!("run.{ext}"));
        std::fs::write(&p, bytes).unwrap();
        files.push(p);
    }
    let out = assert_cmd::Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .arg("inspect")
        .args(&files)
        .arg("--json")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert!(!stdout.contains("strides"), "the note must not be printed");
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let reports = v.as_array().unwrap();
    assert_eq!(reports.len(), 3);
    for (r, fmt) in reports.iter().zip(["fit", "tcx", "gpx"]) {
        assert_eq!(r["format"], fmt);
        assert_eq!(r["samples"], 1200);
        assert_eq!(r["start"], "2024-05-04T07:30:00Z");
        assert_eq!(r["duration_s"], 1199.0);
        assert_eq!(
            r["laps"].as_array().unwrap().len(),
            if fmt == "gpx" { 0 } else { 2 }
        );
        assert_eq!(r["flags"]["count"], 0);
    }
    assert_eq!(reports[0]["has_note"], false);
    assert_eq!(reports[1]["has_note"], true);
    // Speed never drops below 2.9 m/s in the simulated run: all of it is moving time.
    assert_eq!(reports[0]["moving_s"], 1199.0);
}
