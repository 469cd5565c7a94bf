//! GPX decoding with quick-xml's streaming reader.
//!
//! Reads `gpx > trk > trkseg > trkpt` (GPX 1.0 and 1.1). Elements and attributes are matched
//! by local name, whatever their namespace prefix. Waypoints and routes are ignored.
//!
//! Rules:
//! - All tracks and segments join into one series, sorted by time (stable).
//! - A track point without a valid `time` is skipped; a file whose points all lack one is
//!   an error. A point whose `lat`/`lon` are missing or out of range keeps its other values
//!   with no position.
//! - Every break between segments (and between tracks) is a [`Pause`](crate::model::Pause) from the last timed
//!   point before the break to the first timed point after it, when that gap is positive.
//! - Extensions below a point, by local name: `hr` or `heartrate` (bpm), `cad` or `cadence`,
//!   `speed` (m/s; GPX 1.0's `speed` element is read the same way). Track-point-extension
//!   cadence counts one foot, so for foot sports (running, walking, and files that name no
//!   sport) steps per minute = 2 x cadence; for other sports it is kept as recorded.
//! - The note is the first track's `desc`, else the metadata `desc` (trimmed). The sport is
//!   the first track's `type`.
//! - Distance is never read (GPX has none); speed only from an extension.

use chrono::{DateTime, Utc};
use quick_xml::events::BytesStart;

use crate::model::{FileFormat, Session, Sport};

use super::xml::{self, Handler};
use super::ParseError;

/// Decode GPX bytes into a raw session (no hash, no derived channels, no flags).
pub fn decode(bytes: &[u8]) -> Result<Session, ParseError> {
    let mut h = GpxHandler::default();
    xml::walk(bytes, "gpx", &mut h).map_err(ParseError::Gpx)?;
    h.finish()
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Tag {
    Metadata,
    Trk,
    Trkseg,
    Trkpt,
    Ele,
    Time,
    Desc,
    Type,
    Hr,
    Cad,
    Speed,
    Other,
}

#[derive(Debug, Clone, Default)]
struct Point {
    time: Option<DateTime<Utc>>,
    lat: Option<f64>,
    lon: Option<f64>,
    ele: Option<f64>,
    hr: Option<f64>,
    cad: Option<f64>,
    speed: Option<f64>,
}

#[derive(Debug, Default)]
struct GpxHandler {
    points: Vec<Point>,
    current: Option<Point>,
    /// Time of the last kept point when a new segment opens: a pause starts there.
    pending_gap: Option<DateTime<Utc>>,
    pauses: Vec<(DateTime<Utc>, DateTime<Utc>)>,
    trk_desc: Option<String>,
    meta_desc: Option<String>,
    sport: Option<Sport>,
    track_points: usize,
}

impl Handler for GpxHandler {
    type Tag = Tag;

    fn classify(&self, local: &[u8]) -> Tag {
        match local {
            b"metadata" => Tag::Metadata,
            b"trk" => Tag::Trk,
            b"trkseg" => Tag::Trkseg,
            b"trkpt" => Tag::Trkpt,
            b"ele" => Tag::Ele,
            b"time" => Tag::Time,
            b"desc" => Tag::Desc,
            b"type" => Tag::Type,
            b"hr" | b"heartrate" => Tag::Hr,
            b"cad" | b"cadence" => Tag::Cad,
            b"speed" => Tag::Speed,
            _ => Tag::Other,
        }
    }

    fn start(&mut self, stack: &[Tag], e: &BytesStart<'_>) -> Result<(), String> {
        match xml::parent(stack, 0) {
            Some(Tag::Trkseg) => {
                if let Some(last) = self.points.last() {
                    self.pending_gap = last.time;
                }
            }
            Some(Tag::Trkpt) => {
                self.track_points += 1;
                self.current = Some(Point {
                    lat: xml::attr_num(e, b"lat")?,
                    lon: xml::attr_num(e, b"lon")?,
                    ..Point::default()
                });
            }
            _ => {}
        }
        Ok(())
    }

    fn end(&mut self, stack: &[Tag], text: &str) -> Result<(), String> {
        let Some(tag) = xml::parent(stack, 0) else {
            return Ok(());
        };
        let up1 = xml::parent(stack, 1);
        match tag {
            Tag::Trkpt => self.finish_point(),
            Tag::Desc if up1 == Some(Tag::Trk) => {
                if self.trk_desc.is_none() {
                    self.trk_desc = xml::note(text);
                }
            }
            Tag::Desc if up1 == Some(Tag::Metadata) => self.meta_desc = xml::note(text),
            Tag::Type if up1 == Some(Tag::Trk) => {
                if self.sport.is_none() && !text.trim().is_empty() {
                    self.sport = Some(Sport::from_name(text));
                }
            }
            _ => {
                if let Some(p) = self.current.as_mut() {
                    let in_point = up1 == Some(Tag::Trkpt);
                    match tag {
                        Tag::Time if in_point => p.time = xml::parse_time(text),
                        Tag::Ele if in_point => p.ele = xml::parse_num(text),
                        // Extension values anywhere below the point.
                        Tag::Hr => p.hr = xml::parse_num(text),
                        Tag::Cad => p.cad = xml::parse_num(text),
                        Tag::Speed => p.speed = xml::parse_num(text),
                        _ => {}
                    }
                }
            }
        }
        Ok(())
    }
}

impl GpxHandler {
    fn finish_point(&mut self) {
        let Some(p) = self.current.take() else {
            return;
        };
        let Some(time) = p.time else {
            return;
        };
        if let Some(from) = self.pending_gap.take() {
            if time > from {
                self.pauses.push((from, time));
            }
        }
        self.points.push(p);
    }

    fn finish(mut self) -> Result<Session, ParseError> {
        if self.points.is_empty() {
            if self.track_points > 0 {
                return Err(ParseError::Gpx(format!(
                    "none of {} track points has a valid time",
                    self.track_points
                )));
            }
            return Err(ParseError::NoSamples);
        }
        self.points.sort_by_key(|p| p.time);
        let Some(start) = self.points.first().and_then(|p| p.time) else {
            return Err(ParseError::NoSamples);
        };
        let mut s = Session::empty(FileFormat::Gpx, start);
        s.sport = self.sport.unwrap_or_default();
        s.note = self.trk_desc.or(self.meta_desc);

        // GPX extensions count cadence per foot for foot sports.
        let factor = if xml::is_foot_sport(&s.sport) {
            2.0
        } else {
            1.0
        };
        let samples: Vec<(DateTime<Utc>, xml::TrackSample)> = self
            .points
            .iter()
            .map(|p| {
                let sample = xml::TrackSample {
                    lat: p.lat,
                    lon: p.lon,
                    altitude: p.ele,
                    distance: None,
                    speed: p.speed,
                    hr: p.hr,
                    cadence: p.cad.map(|c| c * factor),
                };
                (p.time.unwrap_or(start), sample)
            })
            .collect();
        xml::fill_track(&mut s, &samples);
        s.pauses = xml::build_pauses(&self.pauses, start);
        Ok(s)
    }
}
