//! Cross-check of our GPX reader against an independent one.
//!
//! The `gpx` crate (0.10, built on xml-rs) drops extensions, so heart rate and cadence are
//! checked against the session our writer was given instead.

// Source: gpx crate (crates.io), an independent GPX reader

mod xml_common;

use chrono::{DateTime, Utc};
use splitdesk::demo::gpx_writer;
use splitdesk::ingest::gpx as our_gpx;
use splitdesk::model::Session;
use xml_common::{assert_channel, simulated};

/// Points the outside reader sees, in file order: (lat, lon, time, elevation).
type Pt = (f64, f64, DateTime<Utc>, Option<f64>);

// Source: gpx crate (crates.io), an independent GPX reader
fn outside_points(bytes: &[u8]) -> (usize, Vec<Pt>) {
    let doc = gpx::read(bytes).unwrap();
    let mut segments = 0;
    let mut out = Vec::new();
    for trk in &doc.tracks {
        for seg in &trk.segments {
            segments += 1;
            for p in &seg.points {
                // Our reader skips points without a time; do the same here.
                let Some(t) = p.time else { continue };
                let t = DateTime::parse_from_rfc3339(&t.format().unwrap())
                    .unwrap()
                    .with_timezone(&Utc);
                out.push((p.point().y(), p.point().x(), t, p.elevation));
            }
        }
    }
    (segments, out)
}

fn assert_same_points(ours: &Session, theirs: &[Pt]) {
    assert_eq!(ours.len(), theirs.len(), "point count");
    for (i, (lat, lon, t, ele)) in theirs.iter().enumerate() {
        let (a, o) = ours.position(i).unwrap();
        assert!((a - lat).abs() < 1e-12, "lat[{i}]: ours {a}, theirs {lat}");
        assert!((o - lon).abs() < 1e-12, "lon[{i}]: ours {o}, theirs {lon}");
        assert_eq!(ours.time[i], *t, "time[{i}]");
        let e = ours.altitude.as_ref().and_then(|c| c.get(i));
        match (e, ele) {
            (Some(a), Some(b)) => assert!((a - b).abs() < 1e-12, "ele[{i}]: {a} vs {b}"),
            (None, None) => {}
            _ => panic!("ele[{i}]: ours {e:?}, theirs {ele:?}"),
        }
    }
}

#[test]
fn our_writer_output_agrees_with_the_gpx_crate() {
    let s = simulated(true);
    let bytes = gpx_writer::write(&s);
    let ours = our_gpx::decode(&bytes).unwrap();
    // Source: gpx crate (crates.io), an independent GPX reader
    let (segments, theirs) = outside_points(&bytes);
    assert_eq!(segments, 2, "one segment per stretch between pauses");
    assert_eq!(theirs.len(), 1160);
    assert_same_points(&ours, &theirs);
    // Extensions are invisible to the outside reader: compare with the writer's input.
    assert_channel("hr", &ours.hr, &s.hr, 0.5 + 1e-9);
    assert_channel("cadence", &ours.cadence, &s.cadence, 1.0 + 1e-9);
}

const HAND_WRITTEN: &str = r#"<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="hand" xmlns="http://www.topografix.com/GPX/1/1"
     xmlns:tp="http://www.garmin.com/xmlschemas/TrackPointExtension/v1">
  <trk>
    <name>one</name>
    <trkseg>
      <trkpt lat="-33.8567844" lon="151.2152967"><ele>5.25</ele><time>2023-11-05T21:00:00Z</time>
        <extensions><tp:TrackPointExtension><tp:hr>101</tp:hr></tp:TrackPointExtension></extensions></trkpt>
      <trkpt lat="-33.8568000" lon="151.2153100"><time>2023-11-05T21:00:01.500Z</time></trkpt>
    </trkseg>
    <trkseg>
      <trkpt lat="-33.8569" lon="151.2154"><ele>6</ele><time>2023-11-06T08:00:30+11:00</time></trkpt>
    </trkseg>
  </trk>
  <trk>
    <trkseg>
      <trkpt lat="-33.857" lon="151.2155"><ele>-1.5</ele><time>2023-11-05T21:01:00Z</time></trkpt>
      <trkpt lat="-33.8571" lon="151.2156"><ele>-2</ele><time>2023-11-05T21:01:02Z</time></trkpt>
    </trkseg>
  </trk>
</gpx>
"#;

#[test]
fn hand_written_fixture_agrees_with_the_gpx_crate() {
    let ours = our_gpx::decode(HAND_WRITTEN.as_bytes()).unwrap();
    // Source: gpx crate (crates.io), an independent GPX reader
    let (segments, theirs) = outside_points(HAND_WRITTEN.as_bytes());
    assert_eq!(segments, 3);
    assert_eq!(theirs.len(), 5);
    assert_same_points(&ours, &theirs);
    assert_eq!(ours.t, vec![0.0, 1.5, 30.0, 60.0, 62.0]);
    assert_eq!(ours.pauses.len(), 2);
    assert_eq!(
        ours.hr.unwrap().values,
        vec![Some(101.0), None, None, None, None]
    );
}
