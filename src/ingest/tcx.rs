//! TCX decoding with quick-xml's streaming reader.
//!
//! Reads `TrainingCenterDatabase > Activities > Activity > Lap > Track > Trackpoint`.
//! Elements are matched by local name, whatever their namespace prefix.
//!
//! Rules:
//! - Only the **first** `Activity` is read; later ones (a second activity, or the later legs
//!   of a multi-sport session) are checked for well-formedness and otherwise ignored.
//! - A trackpoint without a valid `Time` is skipped. Samples are sorted by time (stable).
//! - Each `Lap` becomes a [`DeviceLap`]: start is the lap's `StartTime` (or, without one, its
//!   first trackpoint) relative to the first sample, clamped at 0; end is the later of
//!   `start + TotalTimeSeconds + pauses inside the lap` (`TotalTimeSeconds` is timer time)
//!   and the lap's last trackpoint, clamped so laps never overlap the next lap. `TriggerMethod` becomes the lowercase trigger. Laps with no extent are
//!   dropped.
//! - Within one lap, consecutive `Track` elements mean the recording stopped and resumed:
//!   the gap from the last point of one track to the first point of the next becomes a
//!   [`Pause`](crate::model::Pause). A new lap starting a new track is not a pause.
//! - Cadence, in steps per minute (both feet): the activity-extension `RunCadence` counts
//!   one foot, so steps = 2 x `RunCadence`. The plain `Cadence` element is also per foot
//!   for foot sports (`Running`, and files whose sport is unknown), so steps = 2 x
//!   `Cadence`; for other sports (`Biking`, `Other`) it is kept as recorded (revolutions per
//!   minute). `RunCadence` wins when a point has both.
//! - `Activity > Notes` (trimmed, predefined entities resolved) becomes the note.
//! - Speed comes from the extension `Speed` (m/s); it is never derived here.

use chrono::{DateTime, Utc};
use quick_xml::events::BytesStart;

use crate::model::{DeviceLap, FileFormat, Session, Sport};

use super::xml::{self, Handler};
use super::ParseError;

/// Decode TCX bytes into a raw session (no hash, no derived channels, no flags).
pub fn decode(bytes: &[u8]) -> Result<Session, ParseError> {
    let mut h = TcxHandler::default();
    xml::walk(bytes, "TrainingCenterDatabase", &mut h).map_err(ParseError::Tcx)?;
    h.finish()
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Tag {
    Activity,
    Lap,
    Track,
    Trackpoint,
    Time,
    Position,
    Lat,
    Lon,
    Altitude,
    Distance,
    HeartRate,
    Value,
    Cadence,
    RunCadence,
    Speed,
    Notes,
    TotalTime,
    Trigger,
    Other,
}

#[derive(Debug, Clone, Default)]
struct Point {
    time: Option<DateTime<Utc>>,
    lat: Option<f64>,
    lon: Option<f64>,
    altitude: Option<f64>,
    distance: Option<f64>,
    hr: Option<f64>,
    cadence: Option<f64>,
    run_cadence: Option<f64>,
    speed: Option<f64>,
}

#[derive(Debug, Clone, Default)]
struct RawLap {
    start: Option<DateTime<Utc>>,
    total_s: Option<f64>,
    trigger: Option<String>,
    first: Option<DateTime<Utc>>,
    last: Option<DateTime<Utc>>,
    /// Seconds of pauses (track breaks) inside this lap.
    paused_s: f64,
}

#[derive(Debug, Default)]
struct TcxHandler {
    /// An `Activity` element has been seen.
    seen_activity: bool,
    /// Inside the first `Activity`.
    active: bool,
    sport: Sport,
    note: Option<String>,
    points: Vec<Point>,
    current: Option<Point>,
    laps: Vec<RawLap>,
    /// Time of the last kept point of the current lap, set when a new `Track` opens in a
    /// lap that already has points: a pause starts there.
    pending_gap: Option<DateTime<Utc>>,
    pauses: Vec<(DateTime<Utc>, DateTime<Utc>)>,
    skipped_no_time: usize,
}

impl Handler for TcxHandler {
    type Tag = Tag;

    fn classify(&self, local: &[u8]) -> Tag {
        match local {
            b"Activity" => Tag::Activity,
            b"Lap" => Tag::Lap,
            b"Track" => Tag::Track,
            b"Trackpoint" => Tag::Trackpoint,
            b"Time" => Tag::Time,
            b"Position" => Tag::Position,
            b"LatitudeDegrees" => Tag::Lat,
            b"LongitudeDegrees" => Tag::Lon,
            b"AltitudeMeters" => Tag::Altitude,
            b"DistanceMeters" => Tag::Distance,
            b"HeartRateBpm" => Tag::HeartRate,
            b"Value" => Tag::Value,
            b"Cadence" => Tag::Cadence,
            b"RunCadence" => Tag::RunCadence,
            b"Speed" => Tag::Speed,
            b"Notes" => Tag::Notes,
            b"TotalTimeSeconds" => Tag::TotalTime,
            b"TriggerMethod" => Tag::Trigger,
            _ => Tag::Other,
        }
    }

    fn start(&mut self, stack: &[Tag], e: &BytesStart<'_>) -> Result<(), String> {
        let Some(tag) = xml::parent(stack, 0) else {
            return Ok(());
        };
        if tag == Tag::Activity {
            if !self.seen_activity {
                self.seen_activity = true;
                self.active = true;
                if let Some(s) = xml::attr_str(e, b"Sport")? {
                    self.sport = Sport::from_name(&s);
                }
            }
            return Ok(());
        }
        if !self.active {
            return Ok(());
        }
        match tag {
            Tag::Lap => {
                let start = xml::attr_str(e, b"StartTime")?.and_then(|s| xml::parse_time(&s));
                self.laps.push(RawLap {
                    start,
                    ..RawLap::default()
                });
                self.pending_gap = None;
            }
            Tag::Track => {
                if let Some(lap) = self.laps.last() {
                    if lap.first.is_some() {
                        self.pending_gap = self.points.last().and_then(|p| p.time);
                    }
                }
            }
            Tag::Trackpoint => self.current = Some(Point::default()),
            _ => {}
        }
        Ok(())
    }

    fn end(&mut self, stack: &[Tag], text: &str) -> Result<(), String> {
        let Some(tag) = xml::parent(stack, 0) else {
            return Ok(());
        };
        if !self.active {
            return Ok(());
        }
        let up1 = xml::parent(stack, 1);
        match tag {
            Tag::Activity => self.active = false,
            Tag::Notes if up1 == Some(Tag::Activity) => self.note = xml::note(text),
            Tag::TotalTime if up1 == Some(Tag::Lap) => {
                if let Some(lap) = self.laps.last_mut() {
                    lap.total_s = xml::parse_num(text).filter(|v| *v >= 0.0);
                }
            }
            Tag::Trigger if up1 == Some(Tag::Lap) => {
                if let Some(lap) = self.laps.last_mut() {
                    let t = text.trim().to_ascii_lowercase();
                    lap.trigger = (!t.is_empty()).then_some(t);
                }
            }
            Tag::Trackpoint => self.finish_point(),
            _ => self.point_field(stack, tag, up1, text),
        }
        Ok(())
    }
}

impl TcxHandler {
    fn point_field(&mut self, stack: &[Tag], tag: Tag, up1: Option<Tag>, text: &str) {
        let Some(p) = self.current.as_mut() else {
            return;
        };
        let in_point = up1 == Some(Tag::Trackpoint);
        match tag {
            Tag::Time if in_point => p.time = xml::parse_time(text),
            Tag::Altitude if in_point => p.altitude = xml::parse_num(text),
            Tag::Distance if in_point => p.distance = xml::parse_num(text),
            Tag::Cadence if in_point => p.cadence = xml::parse_num(text),
            Tag::Lat if up1 == Some(Tag::Position) => p.lat = xml::parse_num(text),
            Tag::Lon if up1 == Some(Tag::Position) => p.lon = xml::parse_num(text),
            Tag::Value
                if up1 == Some(Tag::HeartRate)
                    && xml::parent(stack, 2) == Some(Tag::Trackpoint) =>
            {
                p.hr = xml::parse_num(text)
            }
            // Extension values: anywhere below the trackpoint (`Extensions > TPX > Speed`).
            Tag::Speed => p.speed = xml::parse_num(text),
            Tag::RunCadence => p.run_cadence = xml::parse_num(text),
            _ => {}
        }
    }

    fn finish_point(&mut self) {
        let Some(p) = self.current.take() else {
            return;
        };
        let Some(time) = p.time else {
            self.skipped_no_time += 1;
            return;
        };
        if let Some(from) = self.pending_gap.take() {
            if time > from {
                self.pauses.push((from, time));
                if let Some(lap) = self.laps.last_mut() {
                    lap.paused_s += xml::secs_between(from, time);
                }
            }
        }
        if let Some(lap) = self.laps.last_mut() {
            lap.first = Some(lap.first.map_or(time, |f| f.min(time)));
            lap.last = Some(lap.last.map_or(time, |l| l.max(time)));
        }
        self.points.push(p);
    }

    fn finish(mut self) -> Result<Session, ParseError> {
        if !self.seen_activity {
            return Err(ParseError::Tcx("no Activity element".into()));
        }
        if self.points.is_empty() {
            if self.skipped_no_time > 0 {
                return Err(ParseError::Tcx(format!(
                    "none of {} trackpoints has a valid Time",
                    self.skipped_no_time
                )));
            }
            return Err(ParseError::NoSamples);
        }
        // Every kept point has a time; sort_by_key is stable.
        self.points.sort_by_key(|p| p.time);
        let Some(start) = self.points.first().and_then(|p| p.time) else {
            return Err(ParseError::NoSamples);
        };
        let mut s = Session::empty(FileFormat::Tcx, start);
        s.sport = self.sport;
        s.note = self.note;

        // RunCadence and, for foot sports, plain Cadence count one foot.
        let double_plain = xml::is_foot_sport(&s.sport);
        let samples: Vec<(DateTime<Utc>, xml::TrackSample)> = self
            .points
            .iter()
            .map(|p| {
                let cadence = match (p.run_cadence, p.cadence) {
                    (Some(rc), _) => Some(2.0 * rc),
                    (None, Some(c)) if double_plain => Some(2.0 * c),
                    (None, c) => c,
                };
                let sample = xml::TrackSample {
                    lat: p.lat,
                    lon: p.lon,
                    altitude: p.altitude,
                    distance: p.distance,
                    speed: p.speed,
                    hr: p.hr,
                    cadence,
                };
                (p.time.unwrap_or(start), sample)
            })
            .collect();
        xml::fill_track(&mut s, &samples);
        s.laps = build_laps(&self.laps, start);
        s.pauses = xml::build_pauses(&self.pauses, start);
        Ok(s)
    }
}

fn build_laps(raw: &[RawLap], start: DateTime<Utc>) -> Vec<DeviceLap> {
    let rel = |t: DateTime<Utc>| xml::secs_between(start, t);
    let mut laps: Vec<DeviceLap> = raw
        .iter()
        .filter_map(|l| {
            let begin = l.start.or(l.first)?;
            let start_s = rel(begin).max(0.0);
            let by_total = l.total_s.map(|d| start_s + d + l.paused_s);
            let by_points = l.last.map(rel);
            let end_s = match (by_total, by_points) {
                (Some(a), Some(b)) => a.max(b),
                (a, b) => a.or(b)?,
            };
            Some(DeviceLap {
                start_s,
                end_s,
                trigger: l.trigger.clone(),
            })
        })
        .collect();
    laps.sort_by(|a, b| a.start_s.total_cmp(&b.start_s));
    // Each lap ends no later than the next one starts.
    let starts: Vec<f64> = laps.iter().skip(1).map(|l| l.start_s).collect();
    for (lap, next_start) in laps.iter_mut().zip(starts) {
        if lap.end_s > next_start {
            lap.end_s = next_start;
        }
    }
    laps.retain(|l| l.end_s > l.start_s);
    laps
}
