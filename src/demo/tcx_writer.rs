//! Writes a `model::Session` as a TCX file.
//!
//! Deterministic: the same session always gives the same bytes. Layout:
//! one `Activity` (`Sport` is `Running`, `Biking` for cycling, `Other` otherwise) whose `Id`
//! is the start time, one `Lap` per device lap (one lap over everything when the session has
//! none), each with its trackpoints. A sample belongs to the last lap starting at or before
//! it (samples before the first lap go to the first lap). Inside a lap, a timer pause starts
//! a new `Track`, which the reader turns back into a pause.
//!
//! Trackpoint values: `Time` (RFC 3339 UTC, whole seconds, or milliseconds when fractional),
//! `Position` (7 decimals, only when both halves are present), `AltitudeMeters` (1 decimal),
//! `DistanceMeters` (2 decimals), `HeartRateBpm` (whole bpm), and the activity extension's
//! `Speed` (3 decimals, m/s) and `RunCadence` (steps / 2, whole). For cycling, cadence goes in
//! the plain `Cadence` element unchanged. `TotalTimeSeconds` is the lap's timer time (elapsed
//! minus pauses inside the lap). Notes come from `session.note`.

use std::io;

use chrono::{DateTime, SecondsFormat, Utc};
use quick_xml::events::{BytesDecl, BytesEnd, BytesStart, BytesText, Event};
use quick_xml::Writer;

use crate::model::{DeviceLap, Session, Sport};

const NS_TCX: &str = "http://www.garmin.com/xmlschemas/TrainingCenterDatabase/v2";
const NS_AX: &str = "http://www.garmin.com/xmlschemas/ActivityExtension/v2";
const NS_XSI: &str = "http://www.w3.org/2001/XMLSchema-instance";
const SCHEMA_LOCATION: &str = "http://www.garmin.com/xmlschemas/TrainingCenterDatabase/v2 \
     http://www.garmin.com/xmlschemas/TrainingCenterDatabasev2.xsd";

/// Encode `session` as TCX bytes.
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

/// RFC 3339 UTC with whole seconds, or milliseconds when the time has a fraction.
pub(crate) fn format_time(t: DateTime<Utc>) -> String {
    if t.timestamp_subsec_nanos() == 0 {
        t.to_rfc3339_opts(SecondsFormat::Secs, true)
    } else {
        t.to_rfc3339_opts(SecondsFormat::Millis, true)
    }
}

/// Fixed decimals, never `-0.000`.
pub(crate) fn fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s[1..].bytes().all(|b| b == b'0' || b == b'.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// A whole number for schema fields typed `unsignedByte`.
pub(crate) fn byte(v: f64) -> String {
    format!("{}", v.round().clamp(0.0, 255.0) as u32)
}

/// `<name>text</name>`, with `&`, `<` and `>` escaped.
pub(crate) fn text_elem<W: io::Write>(w: &mut Writer<W>, name: &str, text: &str) -> io::Result<()> {
    w.write_event(Event::Start(BytesStart::new(name)))?;
    // Escape only `&`, `<` and `>`: quotes need no escaping in text.
    let escaped = quick_xml::escape::partial_escape(text);
    w.write_event(Event::Text(BytesText::from_escaped(escaped)))?;
    w.write_event(Event::End(BytesEnd::new(name)))
}

fn open<W: io::Write>(w: &mut Writer<W>, name: &str) -> io::Result<()> {
    w.write_event(Event::Start(BytesStart::new(name)))
}

fn close<W: io::Write>(w: &mut Writer<W>, name: &str) -> io::Result<()> {
    w.write_event(Event::End(BytesEnd::new(name)))
}

fn sport_name(s: &Sport) -> &'static str {
    match s {
        Sport::Running => "Running",
        Sport::Cycling => "Biking",
        _ => "Other",
    }
}

fn trigger_name(t: Option<&str>) -> &'static str {
    match t.map(|s| s.to_ascii_lowercase()).as_deref() {
        Some("distance") => "Distance",
        Some("location") => "Location",
        Some("time") => "Time",
        Some("heartrate" | "heart_rate" | "hr") => "HeartRate",
        _ => "Manual",
    }
}

/// The laps to write: the session's, sorted, or one lap over the whole session.
fn laps_of(session: &Session) -> Vec<DeviceLap> {
    if session.laps.is_empty() {
        return vec![DeviceLap {
            start_s: 0.0,
            end_s: session.duration_s(),
            trigger: None,
        }];
    }
    let mut laps = session.laps.clone();
    laps.sort_by(|a, b| a.start_s.total_cmp(&b.start_s));
    laps
}

fn at(session: &Session, secs: f64) -> DateTime<Utc> {
    let us = (secs * 1e6).round() as i64;
    session.start + chrono::Duration::microseconds(us)
}

fn write_doc<W: io::Write>(w: &mut Writer<W>, s: &Session) -> io::Result<()> {
    w.write_event(Event::Decl(BytesDecl::new("1.0", Some("UTF-8"), None)))?;
    let root = BytesStart::new("TrainingCenterDatabase").with_attributes([
        ("xmlns", NS_TCX),
        ("xmlns:ns3", NS_AX),
        ("xmlns:xsi", NS_XSI),
        ("xsi:schemaLocation", SCHEMA_LOCATION),
    ]);
    w.write_event(Event::Start(root))?;
    open(w, "Activities")?;
    w.write_event(Event::Start(
        BytesStart::new("Activity").with_attributes([("Sport", sport_name(&s.sport))]),
    ))?;
    text_elem(w, "Id", &format_time(s.start))?;

    let laps = laps_of(s);
    // Sample ranges per lap.
    let mut bounds = Vec::with_capacity(laps.len() + 1);
    bounds.push(0usize);
    for lap in laps.iter().skip(1) {
        bounds.push(s.t.partition_point(|&t| t < lap.start_s));
    }
    bounds.push(s.len());
    for (lap, (lo, hi)) in laps.iter().zip(bounds.iter().zip(bounds.iter().skip(1))) {
        write_lap(w, s, lap, *lo..*hi.max(lo))?;
    }

    if let Some(note) = s.note.as_deref() {
        text_elem(w, "Notes", note)?;
    }
    close(w, "Activity")?;
    close(w, "Activities")?;
    close(w, "TrainingCenterDatabase")
}

fn write_lap<W: io::Write>(
    w: &mut Writer<W>,
    s: &Session,
    lap: &DeviceLap,
    range: std::ops::Range<usize>,
) -> io::Result<()> {
    let start = format_time(at(s, lap.start_s));
    w.write_event(Event::Start(
        BytesStart::new("Lap").with_attributes([("StartTime", start.as_str())]),
    ))?;
    let paused: f64 = s
        .pauses
        .iter()
        .map(|p| (p.to_s.min(lap.end_s) - p.from_s.max(lap.start_s)).max(0.0))
        .sum();
    let timer = (lap.end_s - lap.start_s - paused).max(0.0);
    text_elem(w, "TotalTimeSeconds", &fixed(timer, 3))?;
    let lap_dist = s.distance.as_ref().map_or(0.0, |d| {
        let first = range.clone().find_map(|i| d.get(i));
        let last = range.clone().rev().find_map(|i| d.get(i));
        match (first, last) {
            (Some(a), Some(b)) => (b - a).max(0.0),
            _ => 0.0,
        }
    });
    text_elem(w, "DistanceMeters", &fixed(lap_dist, 2))?;
    text_elem(w, "Calories", "0")?;
    text_elem(w, "Intensity", "Active")?;
    text_elem(w, "TriggerMethod", trigger_name(lap.trigger.as_deref()))?;

    let mut track_open = false;
    for i in range {
        let split = super::pause_between(s, i);
        if track_open && split {
            close(w, "Track")?;
            track_open = false;
        }
        if !track_open {
            open(w, "Track")?;
            track_open = true;
        }
        write_point(w, s, i)?;
    }
    if track_open {
        close(w, "Track")?;
    }
    close(w, "Lap")
}

fn write_point<W: io::Write>(w: &mut Writer<W>, s: &Session, i: usize) -> io::Result<()> {
    open(w, "Trackpoint")?;
    let time = s
        .time
        .get(i)
        .copied()
        .unwrap_or_else(|| at(s, s.t.get(i).copied().unwrap_or(0.0)));
    text_elem(w, "Time", &format_time(time))?;
    if let Some((lat, lon)) = s.position(i) {
        open(w, "Position")?;
        text_elem(w, "LatitudeDegrees", &fixed(lat, 7))?;
        text_elem(w, "LongitudeDegrees", &fixed(lon, 7))?;
        close(w, "Position")?;
    }
    let get = |c: &Option<crate::model::Channel>| c.as_ref().and_then(|c| c.get(i));
    if let Some(v) = get(&s.altitude) {
        text_elem(w, "AltitudeMeters", &fixed(v, 1))?;
    }
    if let Some(v) = get(&s.distance) {
        text_elem(w, "DistanceMeters", &fixed(v, 2))?;
    }
    if let Some(v) = get(&s.hr) {
        open(w, "HeartRateBpm")?;
        text_elem(w, "Value", &byte(v))?;
        close(w, "HeartRateBpm")?;
    }
    let cadence = get(&s.cadence);
    let cycling = s.sport == Sport::Cycling;
    if let (Some(c), true) = (cadence, cycling) {
        text_elem(w, "Cadence", &byte(c))?;
    }
    let speed = get(&s.speed);
    let run_cadence = cadence.filter(|_| !cycling);
    if speed.is_some() || run_cadence.is_some() {
        open(w, "Extensions")?;
        open(w, "ns3:TPX")?;
        if let Some(v) = speed {
            text_elem(w, "ns3:Speed", &fixed(v, 3))?;
        }
        if let Some(c) = run_cadence {
            text_elem(w, "ns3:RunCadence", &byte(c / 2.0))?;
        }
        close(w, "ns3:TPX")?;
        close(w, "Extensions")?;
    }
    close(w, "Trackpoint")
}
