//! Hand-written TCX and GPX fixtures: namespaces, laps, tracks, segments, offsets, missing
//! channels, notes, wrong roots, entity tricks and broken XML.

use chrono::{TimeZone, Utc};
use splitdesk::ingest::{self, gpx, tcx, ParseError};
use splitdesk::model::{DeviceLap, FileFormat, Pause, Sport};

fn tcx_err(bytes: &[u8]) -> String {
    match tcx::decode(bytes) {
        Err(ParseError::Tcx(m)) => m,
        other => panic!("expected a TCX error, got {other:?}"),
    }
}

fn gpx_err(bytes: &[u8]) -> String {
    match gpx::decode(bytes) {
        Err(ParseError::Gpx(m)) => m,
        other => panic!("expected a GPX error, got {other:?}"),
    }
}

/// Prefixed namespaces everywhere, two laps, a lap with two tracks, a `+02:00` offset and
/// fractional seconds, a trackpoint without time, no altitude at all, a missing HR value,
/// plain `Cadence` and `RunCadence`, entities in the note, and a second activity to ignore.
const TCX_PREFIXED: &str = r#"<?xml version="1.0" encoding="UTF-8"?>
<tcx:TrainingCenterDatabase xmlns:tcx="http://www.garmin.com/xmlschemas/TrainingCenterDatabase/v2"
    xmlns:x="http://www.garmin.com/xmlschemas/ActivityExtension/v2">
  <tcx:Activities>
    <tcx:Activity Sport="Running">
      <tcx:Id>2024-06-01T08:00:00Z</tcx:Id>
      <tcx:Lap StartTime="2024-06-01T10:00:00+02:00">
        <tcx:TotalTimeSeconds>2.5</tcx:TotalTimeSeconds>
        <tcx:DistanceMeters>999</tcx:DistanceMeters>
        <tcx:Cadence>99</tcx:Cadence>
        <tcx:TriggerMethod>Manual</tcx:TriggerMethod>
        <tcx:Track>
          <tcx:Trackpoint>
            <tcx:Time>2024-06-01T10:00:00+02:00</tcx:Time>
            <tcx:Position>
              <tcx:LatitudeDegrees>45.5</tcx:LatitudeDegrees>
              <tcx:LongitudeDegrees>-73.25</tcx:LongitudeDegrees>
            </tcx:Position>
            <tcx:DistanceMeters>0</tcx:DistanceMeters>
            <tcx:HeartRateBpm><tcx:Value>140</tcx:Value></tcx:HeartRateBpm>
            <tcx:Cadence>80</tcx:Cadence>
          </tcx:Trackpoint>
          <tcx:Trackpoint>
            <tcx:Position>
              <tcx:LatitudeDegrees>1</tcx:LatitudeDegrees>
              <tcx:LongitudeDegrees>1</tcx:LongitudeDegrees>
            </tcx:Position>
            <tcx:HeartRateBpm><tcx:Value>1</tcx:Value></tcx:HeartRateBpm>
          </tcx:Trackpoint>
          <tcx:Trackpoint>
            <tcx:Time>2024-06-01T08:00:01.500Z</tcx:Time>
            <tcx:Position>
              <tcx:LatitudeDegrees>45.50001</tcx:LatitudeDegrees>
              <tcx:LongitudeDegrees>-73.25001</tcx:LongitudeDegrees>
            </tcx:Position>
            <tcx:DistanceMeters>4.5</tcx:DistanceMeters>
            <tcx:Extensions>
              <x:TPX><x:Speed>3.0</x:Speed><x:RunCadence>86</x:RunCadence></x:TPX>
            </tcx:Extensions>
          </tcx:Trackpoint>
        </tcx:Track>
      </tcx:Lap>
      <tcx:Lap StartTime="2024-06-01T08:00:02.5Z">
        <tcx:TotalTimeSeconds>4</tcx:TotalTimeSeconds>
        <tcx:TriggerMethod>Distance</tcx:TriggerMethod>
        <tcx:Track>
          <tcx:Trackpoint>
            <tcx:Time>2024-06-01T04:00:03-04:00</tcx:Time>
            <tcx:DistanceMeters>7.5</tcx:DistanceMeters>
            <tcx:HeartRateBpm><tcx:Value>150</tcx:Value></tcx:HeartRateBpm>
          </tcx:Trackpoint>
        </tcx:Track>
        <tcx:Track>
          <tcx:Trackpoint>
            <tcx:Time>2024-06-01T08:00:10Z</tcx:Time>
            <tcx:DistanceMeters>9</tcx:DistanceMeters>
            <tcx:HeartRateBpm><tcx:Value>151</tcx:Value></tcx:HeartRateBpm>
          </tcx:Trackpoint>
        </tcx:Track>
        <tcx:Notes>lap note, not the session note</tcx:Notes>
      </tcx:Lap>
      <tcx:Notes>
        Hills &amp; drills &lt;3 &#x2713;
      </tcx:Notes>
    </tcx:Activity>
    <tcx:Activity Sport="Biking">
      <tcx:Id>2024-06-02T08:00:00Z</tcx:Id>
      <tcx:Lap StartTime="2024-06-02T08:00:00Z">
        <tcx:TotalTimeSeconds>1</tcx:TotalTimeSeconds>
        <tcx:Track>
          <tcx:Trackpoint><tcx:Time>2024-06-02T08:00:00Z</tcx:Time></tcx:Trackpoint>
        </tcx:Track>
      </tcx:Lap>
      <tcx:Notes>second activity</tcx:Notes>
    </tcx:Activity>
  </tcx:Activities>
</tcx:TrainingCenterDatabase>
"#;

#[test]
fn tcx_prefixes_laps_tracks_offsets_and_missing_channels() {
    let s = tcx::decode(TCX_PREFIXED.as_bytes()).unwrap();
    s.check_invariants().unwrap();
    assert_eq!(s.format, FileFormat::Tcx);
    assert_eq!(s.sport, Sport::Running);
    assert_eq!(s.start, Utc.with_ymd_and_hms(2024, 6, 1, 8, 0, 0).unwrap());
    // The point without Time is skipped; the second activity is ignored.
    assert_eq!(s.t, vec![0.0, 1.5, 3.0, 10.0]);
    assert_eq!(
        s.lat.as_ref().unwrap().values,
        vec![Some(45.5), Some(45.50001), None, None]
    );
    assert_eq!(
        s.lon.as_ref().unwrap().values,
        vec![Some(-73.25), Some(-73.25001), None, None]
    );
    assert_eq!(
        s.hr.as_ref().unwrap().values,
        vec![Some(140.0), None, Some(150.0), Some(151.0)]
    );
    assert_eq!(
        s.distance.as_ref().unwrap().values,
        vec![Some(0.0), Some(4.5), Some(7.5), Some(9.0)]
    );
    assert_eq!(
        s.speed.as_ref().unwrap().values,
        vec![None, Some(3.0), None, None]
    );
    // Running: plain Cadence 80 and RunCadence 86 are both one foot.
    assert_eq!(
        s.cadence.as_ref().unwrap().values,
        vec![Some(160.0), Some(172.0), None, None]
    );
    // No AltitudeMeters anywhere: absent, not a channel of Nones.
    assert!(s.altitude.is_none());
    assert_eq!(
        s.laps,
        vec![
            DeviceLap {
                start_s: 0.0,
                end_s: 2.5,
                trigger: Some("manual".into())
            },
            // 2.5 + 4 s timer + 7 s pause between the two tracks = 13.5.
            DeviceLap {
                start_s: 2.5,
                end_s: 13.5,
                trigger: Some("distance".into())
            },
        ]
    );
    assert_eq!(
        s.pauses,
        vec![Pause {
            from_s: 3.0,
            to_s: 10.0
        }]
    );
    assert_eq!(s.note.as_deref(), Some("Hills & drills <3 \u{2713}"));
}

#[test]
fn tcx_unprefixed_default_namespace_and_cycling_cadence() {
    let doc = r#"<?xml version="1.0"?>
<TrainingCenterDatabase xmlns="http://www.garmin.com/xmlschemas/TrainingCenterDatabase/v2">
 <Activities><Activity Sport="Biking"><Id>2024-06-01T08:00:00Z</Id>
  <Lap StartTime="2024-06-01T08:00:00Z"><TotalTimeSeconds>1</TotalTimeSeconds>
   <Track>
    <Trackpoint><Time>2024-06-01T08:00:00Z</Time><AltitudeMeters>3.5</AltitudeMeters><Cadence>90</Cadence></Trackpoint>
    <Trackpoint><Time>2024-06-01T08:00:01Z</Time><AltitudeMeters>3.7</AltitudeMeters><Cadence>91</Cadence></Trackpoint>
   </Track>
  </Lap>
  <Notes>   </Notes>
 </Activity></Activities>
</TrainingCenterDatabase>"#;
    let s = tcx::decode(doc.as_bytes()).unwrap();
    assert_eq!(s.sport, Sport::Cycling);
    // Not a foot sport: cadence kept as recorded.
    assert_eq!(s.cadence.unwrap().values, vec![Some(90.0), Some(91.0)]);
    assert_eq!(s.altitude.unwrap().values, vec![Some(3.5), Some(3.7)]);
    assert!(s.hr.is_none() && s.lat.is_none() && s.distance.is_none() && s.speed.is_none());
    // A blank note is no note.
    assert_eq!(s.note, None);
    assert_eq!(s.laps.len(), 1);
    assert_eq!(s.laps[0].end_s, 1.0);
}

#[test]
fn tcx_samples_are_sorted_stably() {
    let doc = r#"<TrainingCenterDatabase><Activities><Activity Sport="Running">
  <Lap><Track>
   <Trackpoint><Time>2024-06-01T08:00:05Z</Time><HeartRateBpm><Value>105</Value></HeartRateBpm></Trackpoint>
   <Trackpoint><Time>2024-06-01T08:00:00Z</Time><HeartRateBpm><Value>100</Value></HeartRateBpm></Trackpoint>
   <Trackpoint><Time>2024-06-01T08:00:05Z</Time><HeartRateBpm><Value>106</Value></HeartRateBpm></Trackpoint>
  </Track></Lap>
 </Activity></Activities></TrainingCenterDatabase>"#;
    let s = tcx::decode(doc.as_bytes()).unwrap();
    assert_eq!(s.t, vec![0.0, 5.0, 5.0]);
    assert_eq!(
        s.hr.unwrap().values,
        vec![Some(100.0), Some(105.0), Some(106.0)]
    );
    // A lap without StartTime or TotalTimeSeconds spans its trackpoints.
    assert_eq!(s.laps.len(), 1);
    assert_eq!((s.laps[0].start_s, s.laps[0].end_s), (0.0, 5.0));
    assert_eq!(s.laps[0].trigger, None);
}

/// Two tracks, three segments, `+01:00` offsets, fractional seconds, a point without time,
/// extensions under several prefixes and names, metadata note as fallback.
const GPX_MULTI: &str = r#"<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="hand" xmlns="http://www.topografix.com/GPX/1/1"
     xmlns:ns3="http://www.garmin.com/xmlschemas/TrackPointExtension/v1"
     xmlns:o="urn:example:other">
  <metadata><desc>Metadata &amp; more</desc><time>2024-07-01T05:00:00Z</time></metadata>
  <wpt lat="1" lon="1"><time>2024-07-01T04:00:00Z</time></wpt>
  <trk>
    <name>Morning</name>
    <type>running</type>
    <trkseg>
      <trkpt lat="47.1" lon="8.5"><ele>410.5</ele><time>2024-07-01T07:00:00+01:00</time>
        <extensions><ns3:TrackPointExtension><ns3:hr>130</ns3:hr><ns3:cad>84</ns3:cad></ns3:TrackPointExtension></extensions>
      </trkpt>
      <trkpt lat="47.1001" lon="8.5001"><ele>411</ele><time>2024-07-01T07:00:01.25+01:00</time>
        <extensions><ns3:TrackPointExtension><ns3:cad>85</ns3:cad></ns3:TrackPointExtension></extensions>
      </trkpt>
      <trkpt lat="47.2" lon="8.6"><ele>999</ele></trkpt>
    </trkseg>
    <trkseg>
      <trkpt lat="47.1002" lon="8.5002"><time>2024-07-01T06:00:20Z</time>
        <extensions><o:heartrate>135</o:heartrate><o:cadence>86</o:cadence><o:speed>3.1</o:speed></extensions>
      </trkpt>
    </trkseg>
  </trk>
  <trk>
    <type>cycling</type>
    <trkseg>
      <trkpt lat="47.1003" lon="8.5003"><ele>412</ele><time>2024-07-01T06:01:00Z</time></trkpt>
    </trkseg>
  </trk>
</gpx>
"#;

#[test]
fn gpx_tracks_segments_offsets_extensions() {
    let s = gpx::decode(GPX_MULTI.as_bytes()).unwrap();
    s.check_invariants().unwrap();
    assert_eq!(s.format, FileFormat::Gpx);
    assert_eq!(s.sport, Sport::Running, "first track's type");
    assert_eq!(s.start, Utc.with_ymd_and_hms(2024, 7, 1, 6, 0, 0).unwrap());
    assert_eq!(s.t, vec![0.0, 1.25, 20.0, 60.0]);
    assert_eq!(
        s.lat.as_ref().unwrap().values,
        vec![Some(47.1), Some(47.1001), Some(47.1002), Some(47.1003)]
    );
    assert_eq!(
        s.lon.as_ref().unwrap().values,
        vec![Some(8.5), Some(8.5001), Some(8.5002), Some(8.5003)]
    );
    assert_eq!(
        s.altitude.as_ref().unwrap().values,
        vec![Some(410.5), Some(411.0), None, Some(412.0)]
    );
    assert_eq!(
        s.hr.as_ref().unwrap().values,
        vec![Some(130.0), None, Some(135.0), None]
    );
    // Running: one-foot cadence doubled.
    assert_eq!(
        s.cadence.as_ref().unwrap().values,
        vec![Some(168.0), Some(170.0), Some(172.0), None]
    );
    assert_eq!(
        s.speed.as_ref().unwrap().values,
        vec![None, None, Some(3.1), None]
    );
    assert!(s.distance.is_none());
    // Segment break and track break are both pauses.
    assert_eq!(
        s.pauses,
        vec![
            Pause {
                from_s: 1.25,
                to_s: 20.0
            },
            Pause {
                from_s: 20.0,
                to_s: 60.0
            },
        ]
    );
    assert_eq!(s.note.as_deref(), Some("Metadata & more"));
}

#[test]
fn gpx_track_desc_wins_and_unknown_sport() {
    let doc = r#"<gpx version="1.0" creator="x"><metadata><desc>meta</desc></metadata>
<trk><desc> Tempo, felt &quot;heavy&quot; </desc><trkseg>
<trkpt lat="10" lon="20"><time>2024-07-01T06:00:00Z</time><extensions><cad>80</cad></extensions></trkpt>
<trkpt lat="200" lon="20"><time>2024-07-01T06:00:01Z</time></trkpt>
</trkseg></trk></gpx>"#;
    let s = gpx::decode(doc.as_bytes()).unwrap();
    assert_eq!(s.note.as_deref(), Some("Tempo, felt \"heavy\""));
    assert_eq!(s.sport, Sport::Unknown);
    // No sport named: cadence is taken as one foot.
    assert_eq!(s.cadence.unwrap().values, vec![Some(160.0), None]);
    // Latitude 200 is out of range: no position there.
    assert_eq!(s.lat.unwrap().values, vec![Some(10.0), None]);
    assert!(s.hr.is_none() && s.altitude.is_none() && s.speed.is_none());
    assert!(s.pauses.is_empty());
}

#[test]
fn gpx_without_times_is_an_error() {
    let doc = r#"<gpx version="1.1" creator="x"><trk><trkseg>
<trkpt lat="1" lon="2"><ele>3</ele></trkpt><trkpt lat="1" lon="2"/></trkseg></trk></gpx>"#;
    assert_eq!(
        gpx_err(doc.as_bytes()),
        "none of 2 track points has a valid time"
    );
    let empty = r#"<gpx version="1.1" creator="x"><trk/></gpx>"#;
    assert_eq!(gpx::decode(empty.as_bytes()), Err(ParseError::NoSamples));
}

#[test]
fn tcx_without_activity_or_times() {
    let courses = r#"<TrainingCenterDatabase><Courses><Course><Track>
<Trackpoint><Time>2024-01-01T00:00:00Z</Time></Trackpoint></Track></Course></Courses></TrainingCenterDatabase>"#;
    assert_eq!(tcx_err(courses.as_bytes()), "no Activity element");
    let no_time = r#"<TrainingCenterDatabase><Activities><Activity Sport="Running"><Lap><Track>
<Trackpoint><HeartRateBpm><Value>120</Value></HeartRateBpm></Trackpoint>
<Trackpoint><Time>not a time</Time></Trackpoint></Track></Lap></Activity></Activities></TrainingCenterDatabase>"#;
    assert_eq!(
        tcx_err(no_time.as_bytes()),
        "none of 2 trackpoints has a valid Time"
    );
}

#[test]
fn wrong_root_elements() {
    let foo = br#"<?xml version="1.0"?><foo><bar/></foo>"#;
    assert_eq!(
        tcx_err(foo),
        "root element is <foo>, expected <TrainingCenterDatabase>"
    );
    assert_eq!(gpx_err(foo), "root element is <foo>, expected <gpx>");
    // Each format refuses the other.
    assert_eq!(
        tcx_err(GPX_MULTI.as_bytes()),
        "root element is <gpx>, expected <TrainingCenterDatabase>"
    );
    assert_eq!(
        gpx_err(TCX_PREFIXED.as_bytes()),
        "root element is <TrainingCenterDatabase>, expected <gpx>"
    );
    // Not XML at all.
    assert_eq!(gpx_err(b"just some text"), "no <gpx> root element");
    // Empty input is caught before the XML readers.
    assert_eq!(ingest::decode(b"", FileFormat::Tcx), Err(ParseError::Empty));
}

const LAUGHS_DTD: &str = r#"<?xml version="1.0"?>
<!DOCTYPE lolz [
 <!ENTITY lol "lol">
 <!ENTITY lol1 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">
 <!ENTITY lol2 "&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;">
 <!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">
 <!ENTITY lol4 "&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;">
 <!ENTITY lol5 "&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;">
 <!ENTITY lol6 "&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;">
 <!ENTITY lol7 "&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;">
 <!ENTITY lol8 "&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;">
 <!ENTITY lol9 "&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;">
]>"#;

#[test]
fn billion_laughs_is_refused_quickly() {
    let tcx_doc = format!(
        r#"{LAUGHS_DTD}
<TrainingCenterDatabase><Activities><Activity Sport="Running"><Lap><Track>
<Trackpoint><Time>2024-01-01T00:00:00Z</Time></Trackpoint></Track></Lap>
<Notes>&lol9;</Notes></Activity></Activities></TrainingCenterDatabase>"#
    );
    let gpx_doc = format!(
        r#"{LAUGHS_DTD}
<gpx version="1.1" creator="x"><trk><desc>&lol9;</desc><trkseg>
<trkpt lat="1" lon="2"><time>2024-01-01T00:00:00Z</time></trkpt></trkseg></trk></gpx>"#
    );
    let e = tcx_err(tcx_doc.as_bytes());
    assert!(
        e.starts_with("undefined entity &lol9; (custom entities are never expanded)"),
        "{e}"
    );
    assert!(e.contains("line 16"), "{e}");
    let e = gpx_err(gpx_doc.as_bytes());
    assert!(e.starts_with("undefined entity &lol9;"), "{e}");

    // Declared but unused entities do no harm: the DOCTYPE is skipped, never interpreted.
    let unused = format!(
        r#"{LAUGHS_DTD}
<gpx version="1.1" creator="x"><trk><desc>plain &amp; simple</desc><trkseg>
<trkpt lat="1" lon="2"><time>2024-01-01T00:00:00Z</time></trkpt></trkseg></trk></gpx>"#
    );
    let s = gpx::decode(unused.as_bytes()).unwrap();
    assert_eq!(s.note.as_deref(), Some("plain & simple"));
    assert_eq!(s.len(), 1);
}

#[test]
fn external_entity_is_not_fetched_or_expanded() {
    let doc = r#"<?xml version="1.0"?>
<!DOCTYPE gpx [ <!ENTITY xxe SYSTEM "file:///etc/passwd"> ]>
<gpx version="1.1" creator="x"><trk><desc>&xxe;</desc></trk></gpx>"#;
    let e = gpx_err(doc.as_bytes());
    assert!(e.starts_with("undefined entity &xxe;"), "{e}");
}

#[test]
fn malformed_xml_names_the_problem() {
    // Mismatched end tag.
    let doc = "<gpx version=\"1.1\">\n<trk>\n<trkseg></trk>\n</gpx>";
    let e = gpx_err(doc.as_bytes());
    assert!(e.starts_with("malformed XML at line 3"), "{e}");
    assert!(e.contains("trkseg"), "{e}");

    // Truncated mid-file.
    let full = TCX_PREFIXED.as_bytes();
    let cut = &full[..TCX_PREFIXED.find("<tcx:Extensions>").unwrap()];
    let e = tcx_err(cut);
    assert_eq!(e, "truncated: input ends inside <Trackpoint>");

    // Truncated inside a tag.
    let e = tcx_err(&full[..TCX_PREFIXED.find("Sport=").unwrap() + 3]);
    assert!(e.starts_with("malformed XML at line 5, column 5"), "{e}");
    assert!(e.contains("not closed"), "{e}");

    // A bare ampersand.
    let doc = r#"<gpx><trk><desc>salt & pepper</desc></trk></gpx>"#;
    assert!(gpx_err(doc.as_bytes()).starts_with("malformed XML at line 1"));

    // Unclosed comment.
    let doc = "<gpx><!-- never ends";
    assert!(gpx_err(doc.as_bytes()).contains("comment"));

    // Two roots.
    let doc = r#"<gpx version="1.1"></gpx><gpx version="1.1"></gpx>"#;
    assert!(gpx_err(doc.as_bytes()).starts_with("second root element <gpx>"));

    // Invalid UTF-8 in text.
    let mut doc = b"<gpx><trk><desc>".to_vec();
    doc.extend_from_slice(&[0xff, 0xfe]);
    doc.extend_from_slice(b"</desc></trk></gpx>");
    assert!(gpx_err(&doc).starts_with("bad text"));
}

#[test]
fn sniffing_finds_prefixed_roots() {
    assert_eq!(
        ingest::sniff(TCX_PREFIXED.as_bytes()),
        Some(FileFormat::Tcx)
    );
    assert_eq!(ingest::sniff(GPX_MULTI.as_bytes()), Some(FileFormat::Gpx));
    let s = ingest::decode(GPX_MULTI.as_bytes(), FileFormat::Gpx).unwrap();
    assert_eq!(s.len(), 4);
}

#[test]
fn byte_order_mark_crlf_and_cdata() {
    let mut doc = vec![0xEF, 0xBB, 0xBF];
    doc.extend_from_slice(
        b"<?xml version=\"1.0\"?>\r\n<gpx version=\"1.1\" creator=\"x\">\r\n<trk><desc><![CDATA[5 x 1k <fast> & smooth]]></desc>\r\n<trkseg><trkpt lat=\"1\" lon=\"2\"><time>\r\n 2024-01-01T00:00:00Z\r\n</time></trkpt></trkseg></trk></gpx>\r\n",
    );
    let s = gpx::decode(&doc).unwrap();
    assert_eq!(s.len(), 1);
    assert_eq!(s.start, Utc.with_ymd_and_hms(2024, 1, 1, 0, 0, 0).unwrap());
    assert_eq!(s.note.as_deref(), Some("5 x 1k <fast> & smooth"));
}
