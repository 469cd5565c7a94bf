//! Writes a `model::Session` as a GPX file.
//!
//! Deterministic: the same session always gives the same bytes. GPX 1.1, creator
//! `splitdesk`, one `trk` with `name` (sport and start time), `desc` (the note) and `type`
//! (the sport label), and one `trkseg` per continuous stretch between timer pauses (the
//! reader turns segment breaks back into pauses).
//!
//! Each `trkpt` carries `lat`/`lon` (7 decimals), `ele` (1 decimal), `time` (RFC 3339 UTC,
//! milliseconds only when fractional) and the track-point extension with `hr` (whole bpm),
//! `cad` (steps / 2 for foot sports, whole) and `speed` (3 decimals, m/s).
//!
//! GPX cannot hold a point without a position, distance, or laps: samples without a
//! position are left out, and distance and laps are not written.

use std::io;

use quick_xml::events::{BytesDecl, BytesEnd, BytesStart, Event};
use quick_xml::Writer;

use super::tcx_writer::{byte, fixed, format_time, text_elem};
use crate::model::{Session, Sport};

const NS_GPX: &str = "http://www.topografix.com/GPX/1/1";
const NS_TPX: &str = "http://www.garmin.com/xmlschemas/TrackPointExtension/v2";
const NS_XSI: &str = "http://www.w3.org/2001/XMLSchema-instance";
const SCHEMA_LOCATION: &str =
    "http://www.topografix.com/GPX/1/1 http://www.topografix.com/GPX/1/1/gpx.xsd \
     http://www.garmin.com/xmlschemas/TrackPointExtension/v2 \
     http://www.garmin.com/xmlschemas/TrackPointExtensionv2.xsd";

/// Encode `session` as GPX bytes.
pub fn write(session: &Session) -> Vec<u8> {
    let mut w = Writer::new_with_indent(Vec::new(), b' ', 2);
    // Writing into a Vec<u8> cannot fail: the only errors quick-xml's writer reports are the
    // underlying sink's I/O errors.
    if write_doc(&mut w, session).is_err() {
        return Vec::new();
    }
    let mut out = w.into_inner();
    out.push(b'\n');
    out
}

fn write_doc<W: io::Write>(w: &mut Writer<W>, s: &Session) -> io::Result<()> {
    w.write_event(Event::Decl(BytesDecl::new("1.0", Some("UTF-8"), None)))?;
    let root = BytesStart::new("gpx").with_attributes([
        ("version", "1.1"),
        ("creator", "splitdesk"),
        ("xmlns", NS_GPX),
        ("xmlns:gpxtpx", NS_TPX),
        ("xmlns:xsi", NS_XSI),
        ("xsi:schemaLocation", SCHEMA_LOCATION),
    ]);
    w.write_event(Event::Start(root))?;
    w.write_event(Event::Start(BytesStart::new("metadata")))?;
    text_elem(w, "time", &format_time(s.start))?;
    w.write_event(Event::End(BytesEnd::new("metadata")))?;

    w.write_event(Event::Start(BytesStart::new("trk")))?;
    let name = format!("{} {}", s.sport.label(), format_time(s.start));
    text_elem(w, "name", &name)?;
    if let Some(note) = s.note.as_deref() {
        text_elem(w, "desc", note)?;
    }
    text_elem(w, "type", s.sport.label())?;

    // The reader's rule: cadence of foot sports (and unnamed ones) is written per foot.
    let foot = matches!(s.sport, Sport::Running | Sport::Walking | Sport::Unknown);
    let factor = if foot { 2.0 } else { 1.0 };
    let mut seg_open = false;
    for i in 0..s.len() {
        let Some((lat, lon)) = s.position(i) else {
            continue;
        };
        let split = super::pause_between(s, i);
        if seg_open && split {
            w.write_event(Event::End(BytesEnd::new("trkseg")))?;
            seg_open = false;
        }
        if !seg_open {
            w.write_event(Event::Start(BytesStart::new("trkseg")))?;
            seg_open = true;
        }
        let (lat, lon) = (fixed(lat, 7), fixed(lon, 7));
        w.write_event(Event::Start(
            BytesStart::new("trkpt")
                .with_attributes([("lat", lat.as_str()), ("lon", lon.as_str())]),
        ))?;
        let get = |c: &Option<crate::model::Channel>| c.as_ref().and_then(|c| c.get(i));
        if let Some(v) = get(&s.altitude) {
            text_elem(w, "ele", &fixed(v, 1))?;
        }
        if let Some(t) = s.time.get(i) {
            text_elem(w, "time", &format_time(*t))?;
        }
        let (hr, cad, speed) = (get(&s.hr), get(&s.cadence), get(&s.speed));
        if hr.is_some() || cad.is_some() || speed.is_some() {
            w.write_event(Event::Start(BytesStart::new("extensions")))?;
            w.write_event(Event::Start(BytesStart::new("gpxtpx:TrackPointExtension")))?;
            if let Some(v) = hr {
                text_elem(w, "gpxtpx:hr", &byte(v))?;
            }
            if let Some(v) = cad {
                text_elem(w, "gpxtpx:cad", &byte(v / factor))?;
            }
            if let Some(v) = speed {
                text_elem(w, "gpxtpx:speed", &fixed(v, 3))?;
            }
            w.write_event(Event::End(BytesEnd::new("gpxtpx:TrackPointExtension")))?;
            w.write_event(Event::End(BytesEnd::new("extensions")))?;
        }
        w.write_event(Event::End(BytesEnd::new("trkpt")))?;
    }
    if seg_open {
        w.write_event(Event::End(BytesEnd::new("trkseg")))?;
    }
    w.write_event(Event::End(BytesEnd::new("trk")))?;
    w.write_event(Event::End(BytesEnd::new("gpx")))
}
