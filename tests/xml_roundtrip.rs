//! Round trips through our own TCX and GPX writers and readers.

mod xml_common;

use splitdesk::demo::{gpx_writer, tcx_writer};
use splitdesk::ingest::{self, gpx, tcx};
use splitdesk::model::{FileFormat, Pause, Sport};
use xml_common::{assert_channel, simulated, HR_GAPS};

// Written precision: lat/lon 7 decimals, altitude 1, distance 2, speed 3, HR whole bpm,
// cadence whole strides (one foot), so steps are off by at most 1.
const POS_TOL: f64 = 0.5e-7 + 1e-12;
const ALT_TOL: f64 = 0.05 + 1e-9;
const DIST_TOL: f64 = 0.005 + 1e-9;
const SPEED_TOL: f64 = 0.0005 + 1e-9;
const HR_TOL: f64 = 0.5 + 1e-9;
const CAD_TOL: f64 = 1.0 + 1e-9;

#[test]
fn tcx_round_trip() {
    let s = simulated(false);
    let bytes = tcx_writer::write(&s);
    assert_eq!(ingest::sniff(&bytes), Some(FileFormat::Tcx));
    let r = tcx::decode(&bytes).unwrap();
    r.check_invariants().unwrap();
    assert_eq!(r.format, FileFormat::Tcx);
    assert_eq!(r.sport, Sport::Running);
    assert_eq!(r.start, s.start);
    assert_eq!(r.len(), 1200);
    assert_eq!(r.t, s.t);
    assert_eq!(r.time, s.time);
    assert_channel("lat", &r.lat, &s.lat, POS_TOL);
    assert_channel("lon", &r.lon, &s.lon, POS_TOL);
    assert_channel("altitude", &r.altitude, &s.altitude, ALT_TOL);
    assert_channel("distance", &r.distance, &s.distance, DIST_TOL);
    assert_channel("speed", &r.speed, &s.speed, SPEED_TOL);
    assert_channel("hr", &r.hr, &s.hr, HR_TOL);
    assert_channel("cadence", &r.cadence, &s.cadence, CAD_TOL);
    for i in HR_GAPS {
        assert_eq!(r.hr.as_ref().unwrap().values[i], None);
    }
    // Cadence comes back as twice a whole stride count.
    assert!(r
        .cadence
        .as_ref()
        .unwrap()
        .iter_present()
        .all(|(_, c)| c % 2.0 == 0.0));
    assert_eq!(r.laps, s.laps);
    assert!(r.pauses.is_empty());
    assert_eq!(r.note.as_deref(), Some("Easy 20' & strides <felt good>"));
}

#[test]
fn gpx_round_trip() {
    let s = simulated(false);
    let bytes = gpx_writer::write(&s);
    assert_eq!(ingest::sniff(&bytes), Some(FileFormat::Gpx));
    let r = gpx::decode(&bytes).unwrap();
    r.check_invariants().unwrap();
    assert_eq!(r.format, FileFormat::Gpx);
    assert_eq!(r.sport, Sport::Running);
    assert_eq!(r.t, s.t);
    assert_eq!(r.time, s.time);
    assert_channel("lat", &r.lat, &s.lat, POS_TOL);
    assert_channel("lon", &r.lon, &s.lon, POS_TOL);
    assert_channel("altitude", &r.altitude, &s.altitude, ALT_TOL);
    assert_channel("speed", &r.speed, &s.speed, SPEED_TOL);
    assert_channel("hr", &r.hr, &s.hr, HR_TOL);
    assert_channel("cadence", &r.cadence, &s.cadence, CAD_TOL);
    // GPX carries no distance and no laps.
    assert!(r.distance.is_none());
    assert!(r.laps.is_empty());
    assert!(r.pauses.is_empty());
    assert_eq!(r.note.as_deref(), Some("Easy 20' & strides <felt good>"));
}

#[test]
fn pauses_survive_both_formats() {
    let s = simulated(true);
    assert_eq!(s.len(), 1160);
    let want = vec![Pause {
        from_s: 599.0,
        to_s: 640.0,
    }];

    let tcx_bytes = tcx_writer::write(&s);
    let text = String::from_utf8(tcx_bytes.clone()).unwrap();
    assert_eq!(
        text.matches("<Track>").count(),
        3,
        "lap 1 split at the pause"
    );
    let r = tcx::decode(&tcx_bytes).unwrap();
    assert_eq!(r.t, s.t);
    assert_eq!(r.pauses, want);
    // Lap 1 holds the pause: TotalTimeSeconds is timer time (800 - 41), and the reader adds
    // the pause back to find the elapsed end.
    assert!(text.contains("<TotalTimeSeconds>759.000</TotalTimeSeconds>"));
    assert_eq!(r.laps, s.laps);
    assert_channel("hr", &r.hr, &s.hr, HR_TOL);

    let gpx_bytes = gpx_writer::write(&s);
    let text = String::from_utf8(gpx_bytes.clone()).unwrap();
    assert_eq!(text.matches("<trkseg>").count(), 2);
    let r = gpx::decode(&gpx_bytes).unwrap();
    assert_eq!(r.t, s.t);
    assert_eq!(r.pauses, want);
    assert!((r.timer_s() - (1199.0 - 41.0)).abs() < 1e-9);
}

#[test]
fn writers_are_deterministic() {
    let a = simulated(true);
    let b = simulated(true);
    assert_eq!(tcx_writer::write(&a), tcx_writer::write(&b));
    assert_eq!(gpx_writer::write(&a), gpx_writer::write(&b));
}

#[test]
fn writer_formats_numbers_and_times() {
    let mut s = simulated(false);
    // A fractional timestamp is written with milliseconds.
    s.time[1] += chrono::Duration::milliseconds(250);
    s.t[1] += 0.25;
    let tcx = String::from_utf8(tcx_writer::write(&s)).unwrap();
    assert!(tcx.contains("<Id>2024-05-04T07:30:00Z</Id>"));
    assert!(tcx.contains("<Time>2024-05-04T07:30:01.250Z</Time>"));
    assert!(tcx.contains("<LatitudeDegrees>52.3702165</LatitudeDegrees>"));
    assert!(tcx.contains("<LongitudeDegrees>4.8951679</LongitudeDegrees>"));
    assert!(tcx.contains("<AltitudeMeters>12.0</AltitudeMeters>"));
    assert!(tcx.contains("<DistanceMeters>0.00</DistanceMeters>"));
    assert!(tcx.contains("<ns3:Speed>3.200</ns3:Speed>"));
    // 170 steps/min = 85 strides.
    assert!(tcx.contains("<ns3:RunCadence>85</ns3:RunCadence>"));
    assert!(tcx.contains("<Notes>Easy 20' &amp; strides &lt;felt good&gt;</Notes>"));
    assert!(tcx.contains(r#"<Activity Sport="Running">"#));
    let r = tcx::decode(tcx.as_bytes()).unwrap();
    assert_eq!(r.t[1], 1.25);

    let gpx = String::from_utf8(gpx_writer::write(&s)).unwrap();
    assert!(gpx.contains(r#"creator="splitdesk""#));
    assert!(gpx.contains(r#"<trkpt lat="52.3702165" lon="4.8951679">"#));
    assert!(gpx.contains("<gpxtpx:cad>85</gpxtpx:cad>"));
    assert!(gpx.contains("<type>running</type>"));
    assert!(gpx.contains("<time>2024-05-04T07:30:01.250Z</time>"));
}
