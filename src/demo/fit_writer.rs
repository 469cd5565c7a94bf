//! Writes a `model::Session` as a FIT activity file, from scratch, per the FIT protocol.
//!
//! Layout: a 14-byte header (size, protocol 2.0, profile version, data size, `.FIT`, header
//! CRC), then little-endian definition and data messages, then the CRC-16 of header and data.
//! Messages, in order: `file_id` (activity, manufacturer `development`), a timer `start` event,
//! the records with a timer `stop`/`start` pair around each pause, a timer `stop_all`, one
//! `lap` per device lap (or one lap over the whole session when there are none), `session`
//! and `activity`.
//!
//! FIT timestamps are whole seconds since 1989-12-31T00:00:00Z, so sample, pause and lap
//! times are rounded to the nearest second; samples that round onto the same second are
//! merged by the reader. A missing sample, a missing channel, or a value the field cannot
//! hold (negative distance, cadence above 255 strides/min, ...) is written as the field's
//! invalid value. The output depends only on the session: same session, same bytes.

use chrono::{DateTime, Utc};
use fitparser::profile::field_types::{LapTrigger, Sport as FitSport};

use crate::ingest::fit::{crc16, DEG_PER_SEMICIRCLE, FIT_EPOCH_UNIX_S};
use crate::model::{Channel, Session, Sport};

const PROFILE_VERSION: u16 = 2140;
const PROTOCOL_VERSION: u8 = 0x20;

// Base types.
const ENUM: u8 = 0x00;
const UINT8: u8 = 0x02;
const UINT16: u8 = 0x84;
const SINT32: u8 = 0x85;
const UINT32: u8 = 0x86;
const UINT32Z: u8 = 0x8C;
const BYTE: u8 = 0x0D;

// Local message types.
const L_FILE_ID: u8 = 0;
const L_EVENT: u8 = 1;
const L_RECORD: u8 = 2;
const L_LAP: u8 = 3;
const L_SESSION: u8 = 4;
const L_ACTIVITY: u8 = 5;
const L_CORRELATION: u8 = 6;

// Enum values from the FIT profile.
const EVENT_TIMER: u8 = 0;
const EVENT_LAP: u8 = 9;
const EVENT_SESSION: u8 = 8;
const EVENT_ACTIVITY: u8 = 26;
const TYPE_START: u8 = 0;
const TYPE_STOP: u8 = 1;
const TYPE_STOP_ALL: u8 = 4;
const LAP_TRIGGER_SESSION_END: u8 = 7;

/// Encoding choices beyond the default, for test files that exercise rarer FIT features.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct FitOptions {
    /// Write speed and distance only as the record's `compressed_speed_distance` field (8):
    /// 12-bit speed in 1/100 m/s and 12-bit distance in 1/16 m, wrapping every 256 m.
    pub compressed_speed_distance: bool,
    /// Write every timestamp as system time (seconds from power-on): the session's UTC times
    /// minus this many seconds. `Some` adds a `timestamp_correlation` message (162) that
    /// gives the offset back; see also `correlation`.
    pub system_time_offset: Option<u32>,
    /// With `system_time_offset`, whether to write the `timestamp_correlation` message.
    pub correlation: bool,
}

/// Encode `session` as FIT bytes.
pub fn write(session: &Session) -> Vec<u8> {
    write_with(session, FitOptions::default())
}

/// Encode `session` as FIT bytes with the given options (`write` is the default options).
pub fn write_with(session: &Session, opts: FitOptions) -> Vec<u8> {
    let shifted;
    let session = match opts.system_time_offset {
        Some(offset) => {
            let back = chrono::Duration::seconds(i64::from(offset));
            let mut s = session.clone();
            s.start -= back;
            for t in &mut s.time {
                *t -= back;
            }
            shifted = s;
            &shifted
        }
        None => session,
    };
    let mut w = Writer::default();
    let start = fit_time(session.start);
    let n = session.len();
    let rec_ts: Vec<u32> = (0..n).map(|i| sample_time(session, i)).collect();
    let first = rec_ts.first().copied().unwrap_or(start);
    let last = rec_ts.last().copied().unwrap_or(first);
    let at = |s: f64| offset_time(session.start, s);

    w.define(
        L_FILE_ID,
        0,
        &[
            (0, 1, ENUM),
            (1, 2, UINT16),
            (2, 2, UINT16),
            (3, 4, UINT32Z),
            (4, 4, UINT32),
        ],
    );
    w.data(L_FILE_ID);
    w.u8(4); // type: activity
    w.u16(255); // manufacturer: development
    w.u16(1); // product
    w.u32(0x5D15_0001); // serial number
    w.u32(first); // time_created

    w.define(L_EVENT, 21, &[(253, 4, UINT32), (0, 1, ENUM), (1, 1, ENUM)]);
    w.event(first, TYPE_START);

    // Timer events around pauses, merged with the records by (second, rank): a start goes
    // before a record of the same second, a stop after it.
    let mut events: Vec<(u32, u8, u8)> = Vec::new();
    for p in &session.pauses {
        events.push((at(p.from_s), 2, TYPE_STOP));
        events.push((at(p.to_s), 0, TYPE_START));
    }
    events.sort_by_key(|e| (e.0, e.1));
    let mut pending = events.into_iter().peekable();

    let speed_distance: &[(u8, u8, u8)] = if opts.compressed_speed_distance {
        &[(8, 3, BYTE)]
    } else {
        &[(5, 4, UINT32), (73, 4, UINT32)]
    };
    w.define(
        L_RECORD,
        20,
        &[
            &[(253, 4, UINT32), (0, 4, SINT32), (1, 4, SINT32)],
            speed_distance,
            &[
                (3, 1, UINT8),
                (4, 1, UINT8),
                (53, 1, UINT8),
                (78, 4, UINT32),
            ],
        ]
        .concat(),
    );
    let get = |c: &Option<Channel>, i: usize| c.as_ref().and_then(|c| c.get(i));
    for (i, &ts) in rec_ts.iter().enumerate() {
        while let Some(&(ets, rank, kind)) = pending.peek() {
            if (ets, rank) >= (ts, 1) {
                break;
            }
            w.event(ets, kind);
            pending.next();
        }
        w.data(L_RECORD);
        w.u32(ts);
        w.i32(get(&session.lat, i).and_then(|d| semicircles(d, 90.0)));
        w.i32(get(&session.lon, i).and_then(|d| semicircles(d, 180.0)));
        if opts.compressed_speed_distance {
            let speed = get(&session.speed, i)
                .and_then(|v| scaled_u32(v, 100.0, 0.0))
                .map_or(0xFFF, |v| v.min(0xFFE));
            let distance = get(&session.distance, i)
                .and_then(|d| scaled_u32(d, 16.0, 0.0))
                .map_or(0, |d| d & 0xFFF);
            let packed = speed | distance << 12;
            w.data.extend_from_slice(&packed.to_le_bytes()[..3]);
        } else {
            w.u32_opt(get(&session.distance, i).and_then(|d| scaled_u32(d, 100.0, 0.0)));
            w.u32_opt(get(&session.speed, i).and_then(|v| scaled_u32(v, 1000.0, 0.0)));
        }
        w.u8_opt(get(&session.hr, i).and_then(scaled_u8));
        let (cad, frac) = match get(&session.cadence, i).and_then(strides) {
            Some((c, f)) => (Some(c), Some(f)),
            None => (None, None),
        };
        w.u8_opt(cad);
        w.u8_opt(frac);
        w.u32_opt(get(&session.altitude, i).and_then(|a| scaled_u32(a, 5.0, 500.0)));
    }
    for (ets, _, kind) in pending {
        w.event(ets, kind);
    }
    w.event(last, TYPE_STOP_ALL);

    // Laps.
    w.define(
        L_LAP,
        19,
        &[
            SPAN_FIELDS.as_slice(),
            &[(24, 1, ENUM), (0, 1, ENUM), (1, 1, ENUM)],
        ]
        .concat(),
    );
    let whole = [(0.0, session.duration_s(), Some(LAP_TRIGGER_SESSION_END))];
    let laps: Vec<(f64, f64, Option<u8>)> = if session.laps.is_empty() {
        whole.to_vec()
    } else {
        session
            .laps
            .iter()
            .map(|l| {
                (
                    l.start_s,
                    l.end_s,
                    l.trigger.as_deref().and_then(lap_trigger),
                )
            })
            .collect()
    };
    for (k, &(from, to, trigger)) in laps.iter().enumerate() {
        let elapsed = (to - from).max(0.0);
        w.data(L_LAP);
        w.span(&Span {
            index: u16::try_from(k).unwrap_or(u16::MAX - 1),
            end: at(to),
            start: at(from),
            elapsed_s: elapsed,
            timer_s: timer_s(session, from, to),
            distance_m: lap_distance(session, from, to),
        });
        w.u8_opt(trigger);
        w.u8(EVENT_LAP);
        w.u8(TYPE_STOP);
    }

    w.define(
        L_SESSION,
        18,
        &[
            SPAN_FIELDS.as_slice(),
            &[
                (5, 1, ENUM),
                (6, 1, ENUM),
                (0, 1, ENUM),
                (1, 1, ENUM),
                (25, 2, UINT16),
                (26, 2, UINT16),
            ],
        ]
        .concat(),
    );
    w.data(L_SESSION);
    w.span(&Span {
        index: 0,
        end: last,
        start: first,
        elapsed_s: session.duration_s(),
        timer_s: session.timer_s(),
        distance_m: session.distance_m(),
    });
    w.u8(sport(&session.sport));
    w.u8(0); // sub_sport: generic
    w.u8(EVENT_SESSION);
    w.u8(TYPE_STOP);
    w.u16(0);
    w.u16(u16::try_from(laps.len()).unwrap_or(u16::MAX - 1));

    w.define(
        L_ACTIVITY,
        34,
        &[
            (253, 4, UINT32),
            (0, 4, UINT32),
            (1, 2, UINT16),
            (2, 1, ENUM),
            (3, 1, ENUM),
            (4, 1, ENUM),
        ],
    );
    w.data(L_ACTIVITY);
    w.u32(last);
    w.u32_opt(scaled_u32(session.timer_s(), 1000.0, 0.0));
    w.u16(1); // num_sessions
    w.u8(0); // type: manual
    w.u8(EVENT_ACTIVITY);
    w.u8(TYPE_STOP);

    if let (Some(offset), true) = (opts.system_time_offset, opts.correlation) {
        // timestamp_correlation: timestamp (253, UTC) and system_timestamp (1).
        w.define(L_CORRELATION, 162, &[(253, 4, UINT32), (1, 4, UINT32)]);
        w.data(L_CORRELATION);
        w.u32(last.saturating_add(offset));
        w.u32(last);
    }

    w.finish()
}

/// The fields lap and session messages start with (FIT profile): message_index (254),
/// timestamp (253), start_time (2), total_elapsed_time (7, ms), total_timer_time (8, ms),
/// total_distance (9, cm).
const SPAN_FIELDS: [(u8, u8, u8); 6] = [
    (254, 2, UINT16),
    (253, 4, UINT32),
    (2, 4, UINT32),
    (7, 4, UINT32),
    (8, 4, UINT32),
    (9, 4, UINT32),
];

/// The values of [`SPAN_FIELDS`].
struct Span {
    index: u16,
    end: u32,
    start: u32,
    elapsed_s: f64,
    timer_s: f64,
    distance_m: Option<f64>,
}

/// Message bytes plus the bookkeeping to frame them.
#[derive(Default)]
struct Writer {
    data: Vec<u8>,
}

impl Writer {
    fn define(&mut self, local: u8, global: u16, fields: &[(u8, u8, u8)]) {
        self.data.push(0x40 | local);
        self.data.push(0); // reserved
        self.data.push(0); // little-endian
        self.u16(global);
        self.data.push(fields.len() as u8);
        for &(num, size, base) in fields {
            self.data.extend_from_slice(&[num, size, base]);
        }
    }

    fn data(&mut self, local: u8) {
        self.data.push(local);
    }

    /// The values of [`SPAN_FIELDS`], in order.
    fn span(&mut self, s: &Span) {
        self.u16(s.index);
        self.u32(s.end);
        self.u32(s.start);
        self.u32_opt(scaled_u32(s.elapsed_s, 1000.0, 0.0));
        self.u32_opt(scaled_u32(s.timer_s, 1000.0, 0.0));
        self.u32_opt(s.distance_m.and_then(|d| scaled_u32(d, 100.0, 0.0)));
    }

    fn event(&mut self, ts: u32, kind: u8) {
        self.data(L_EVENT);
        self.u32(ts);
        self.u8(EVENT_TIMER);
        self.u8(kind);
    }

    fn u8(&mut self, v: u8) {
        self.data.push(v);
    }

    fn u8_opt(&mut self, v: Option<u8>) {
        self.u8(v.unwrap_or(0xFF));
    }

    fn u16(&mut self, v: u16) {
        self.data.extend_from_slice(&v.to_le_bytes());
    }

    fn u32(&mut self, v: u32) {
        self.data.extend_from_slice(&v.to_le_bytes());
    }

    fn u32_opt(&mut self, v: Option<u32>) {
        self.u32(v.unwrap_or(u32::MAX));
    }

    fn i32(&mut self, v: Option<i32>) {
        self.data
            .extend_from_slice(&v.unwrap_or(i32::MAX).to_le_bytes());
    }

    fn finish(self) -> Vec<u8> {
        let mut out = Vec::with_capacity(self.data.len() + 16);
        out.push(14);
        out.push(PROTOCOL_VERSION);
        out.extend_from_slice(&PROFILE_VERSION.to_le_bytes());
        out.extend_from_slice(&(self.data.len() as u32).to_le_bytes());
        out.extend_from_slice(b".FIT");
        let header_crc = crc16(0, &out);
        out.extend_from_slice(&header_crc.to_le_bytes());
        out.extend_from_slice(&self.data);
        let crc = crc16(0, &out);
        out.extend_from_slice(&crc.to_le_bytes());
        out
    }
}

/// Seconds since the FIT epoch, rounded to the nearest second and clamped to the valid range.
fn fit_time(t: DateTime<Utc>) -> u32 {
    let ms = t.timestamp_millis() - FIT_EPOCH_UNIX_S * 1000;
    let s = (ms as f64 / 1000.0).round();
    s.clamp(0.0, f64::from(u32::MAX - 1)) as u32
}

fn offset_time(start: DateTime<Utc>, s: f64) -> u32 {
    let ms = (s * 1000.0).round();
    if !ms.is_finite() || ms.abs() > 1e15 {
        return fit_time(start);
    }
    fit_time(start + chrono::Duration::milliseconds(ms as i64))
}

fn sample_time(session: &Session, i: usize) -> u32 {
    match session.time.get(i) {
        Some(&t) => fit_time(t),
        None => offset_time(session.start, session.t.get(i).copied().unwrap_or(0.0)),
    }
}

fn semicircles(deg: f64, limit: f64) -> Option<i32> {
    if !deg.is_finite() || deg.abs() > limit {
        return None;
    }
    let s = (deg / DEG_PER_SEMICIRCLE).round() as i64;
    // +180° is -180°; keep off the invalid value 0x7FFFFFFF.
    let s = if s >= 1 << 31 { s - (1 << 32) } else { s };
    Some(s.min(i64::from(i32::MAX - 1)) as i32)
}

/// `round((v + offset) * scale)` as a valid uint32, `None` when it does not fit.
fn scaled_u32(v: f64, scale: f64, offset: f64) -> Option<u32> {
    let x = ((v + offset) * scale).round();
    (x.is_finite() && x >= 0.0 && x < f64::from(u32::MAX)).then_some(x as u32)
}

fn scaled_u8(v: f64) -> Option<u8> {
    let x = v.round();
    (x.is_finite() && (0.0..255.0).contains(&x)).then_some(x as u8)
}

/// Steps per minute as FIT strides per minute: whole strides and 1/128 fractions.
fn strides(spm: f64) -> Option<(u8, u8)> {
    let x = (spm / 2.0 * 128.0).round();
    if !(0.0..255.0 * 128.0).contains(&x) {
        return None;
    }
    let x = x as u32;
    Some(((x / 128) as u8, (x % 128) as u8))
}

fn lap_trigger(name: &str) -> Option<u8> {
    (0..=254u8).find(|&v| {
        LapTrigger::is_named_variant(i64::from(v)) && LapTrigger::from(v).to_string() == name
    })
}

fn sport(sport: &Sport) -> u8 {
    let name = match sport {
        Sport::Unknown => return 0,
        other => other.label(),
    };
    (0..=254u8)
        .find(|&v| {
            FitSport::is_named_variant(i64::from(v)) && FitSport::from(v).to_string() == name
        })
        .unwrap_or(0)
}

/// Elapsed time in `from..to` minus the timer pauses overlapping it.
fn timer_s(session: &Session, from: f64, to: f64) -> f64 {
    let paused: f64 = session
        .pauses
        .iter()
        .map(|p| (p.to_s.min(to) - p.from_s.max(from)).max(0.0))
        .sum();
    (to - from - paused).max(0.0)
}

/// Distance covered between `from` and `to`: last present distance at or before each.
fn lap_distance(session: &Session, from: f64, to: f64) -> Option<f64> {
    let d = session.distance.as_ref()?;
    let at = |s: f64| {
        d.iter_present()
            .take_while(|&(i, _)| session.t.get(i).is_some_and(|&t| t <= s))
            .last()
            .map(|(_, v)| v)
    };
    let first = d.iter_present().next().map(|(_, v)| v)?;
    Some(at(to)? - at(from).unwrap_or(first))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scaling_helpers() {
        assert_eq!(semicircles(180.0, 180.0), Some(i32::MIN));
        assert_eq!(semicircles(-90.0, 90.0), Some(-(1 << 30)));
        assert_eq!(semicircles(91.0, 90.0), None);
        assert_eq!(strides(181.0), Some((90, 64)));
        assert_eq!(strides(-1.0), None);
        assert_eq!(scaled_u32(-1.0, 100.0, 0.0), None);
        assert_eq!(scaled_u32(12.345, 100.0, 0.0), Some(1235));
        assert_eq!(scaled_u32(-12.0, 5.0, 500.0), Some(2440));
        assert_eq!(lap_trigger("distance"), Some(2));
        assert_eq!(lap_trigger("bogus"), None);
        assert_eq!(sport(&Sport::Running), 1);
        assert_eq!(sport(&Sport::Walking), 11);
        assert_eq!(sport(&Sport::Unknown), 0);
    }

    #[test]
    fn empty_session_still_makes_a_valid_file() {
        let s = Session::empty(crate::model::FileFormat::Fit, DateTime::UNIX_EPOCH);
        let bytes = write(&s);
        assert_eq!(&bytes[8..12], b".FIT");
        assert_eq!(crc16(0, &bytes), 0);
        assert!(crate::ingest::fit::frame(&bytes).is_ok());
    }
}
