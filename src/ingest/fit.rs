//! FIT decoding on fitparser, with our own guards around its failure modes.
//!
//! Three steps:
//!
//! 1. [`frame`] checks the file header and both CRCs and cuts the bytes down to the first FIT
//!    file's declared length (header + data + 2-byte CRC). What follows (a chained second FIT
//!    file, junk, zero padding) is ignored. fitparser itself panics on a header that claims
//!    more bytes than the file has and, in debug builds, on short trailing bytes; it returns
//!    `Ok` with partial data on a truncated file. None of that reaches it after this step.
//! 2. [`check_messages`] walks the message stream the way fitparser will and rejects what
//!    would make it misbehave: a message running past the data section, a data message of an
//!    undefined local type, a developer field whose size is not a multiple of its base type
//!    (fitparser's size arithmetic can underflow there and panic). A normal field whose size
//!    is not a multiple of its base type makes fitparser `eprintln!` to the terminal and read
//!    the field as bytes; we do the same rewrite first (base type byte → `byte`, CRC redone on
//!    a private copy) so nothing is printed.
//! 3. fitparser's stream processor splits the messages and reads raw field values. We convert
//!    the messages we need ourselves, by global message number and field number: no per-field
//!    name strings, and `enhanced_speed`/`enhanced_altitude` can be told apart from the 16-bit
//!    `speed`/`altitude` (fitparser's profile decode expands both into the same field). Only
//!    developer `field_description` messages go through fitparser's profile decode (it needs
//!    them to read later developer fields). As a last resort the whole step runs inside
//!    `catch_unwind`; the default panic hook would still print the message in that case.
//!
//! Bytes after the first FIT file's CRC are not read; the session carries a warning saying
//! whether they were a chained second FIT file (only the first file is read, as before) or
//! something else.
//!
//! Timestamps are UTC seconds since the FIT epoch; local-time fields are never read.
//! Source: FIT SDK Profile, type `date_time`: "seconds since UTC 00:00 Dec 31 1989. If
//! date_time is < 0x10000000 then it is system time (seconds from device power on)". Such
//! system-time stamps are converted to UTC with the offset the file gives: a
//! `timestamp_correlation` message (162: `timestamp` 253 minus `system_timestamp` 1), else
//! `device_settings` (2) field 2 `time_offset` ("offset from system time", from memory of the
//! FIT SDK Profile). A file whose records all carry system time and that gives no offset is
//! refused; isolated system-time stamps among UTC ones are left to [`super::timeaxis`],
//! which drops them (they fall before 2000).
//!
//! Records are sorted stably by timestamp when the file has them out of order, and records
//! sharing a timestamp are merged into one sample (the first present value of each channel
//! wins), so `t` is strictly increasing. A record without a timestamp is skipped; two or more
//! records that all share one timestamp are refused (no time axis).
//! Compressed-timestamp headers are honoured. The record field `compressed_speed_distance`
//! (field 8) is decoded when the record has no plain speed or distance. Source: FIT SDK
//! Profile, record message: `compressed_speed_distance`, byte[3], components `speed` (12
//! bits, scale 100, m/s) and `distance` (12 bits, scale 16, m, accumulated), packed
//! little-endian from bit 0. The 12-bit distance wraps every 4096/16 = 256 m; it is
//! accumulated across wraps in file order, as the SDK's accumulator does.

use std::borrow::Cow;
use std::collections::HashMap;

use chrono::{DateTime, Utc};
use fitparser::de::{FitObject, FitStreamProcessor};
use fitparser::profile::field_types::{LapTrigger, Sport as FitSport};
use fitparser::Value;

use crate::model::{Channel, DeviceLap, FileFormat, Pause, Session, Sport};

use super::ParseError;

/// Seconds from the Unix epoch to the FIT epoch, 1989-12-31T00:00:00Z.
pub const FIT_EPOCH_UNIX_S: i64 = 631_065_600;

/// Degrees per semicircle: 180 / 2^31.
pub const DEG_PER_SEMICIRCLE: f64 = 180.0 / 2_147_483_648.0;

/// Global message numbers from the FIT profile.
mod mesg {
    pub const DEVICE_SETTINGS: u16 = 2;
    pub const SPORT: u16 = 12;
    pub const SESSION: u16 = 18;
    pub const LAP: u16 = 19;
    pub const RECORD: u16 = 20;
    pub const EVENT: u16 = 21;
    pub const TIMESTAMP_CORRELATION: u16 = 162;
    pub const FIELD_DESCRIPTION: u16 = 206;
}

/// `date_time` values below this are system time (seconds from device power-on), not UTC.
/// Source: FIT SDK Profile, type `date_time` (min value 0x10000000).
pub const SYSTEM_TIME_LIMIT: i64 = 0x1000_0000;

const TIMESTAMP: u8 = 253;

fn fit_err(reason: impl Into<String>) -> ParseError {
    ParseError::Fit(reason.into())
}

/// Decode FIT bytes into a raw session (no hash, no derived channels, no flags).
pub fn decode(bytes: &[u8]) -> Result<Session, ParseError> {
    let file = frame(bytes)?;
    let trailing = trailing_warning(bytes, file.len());
    let file = check_messages(file)?;
    let raw = std::panic::catch_unwind(|| read_messages(&file)).map_err(|panic| {
        let what = panic
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| panic.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown panic".into());
        fit_err(format!("decoder crashed: {what}"))
    })??;
    let mut session = build_session(raw)?;
    session.warnings.extend(trailing);
    Ok(session)
}

/// CRC-16 as the FIT protocol defines it (CRC-16/ARC, the algorithm of the FIT SDK's
/// `fit_crc.c` that fitparser also uses), continuing from `crc` (start with 0).
pub fn crc16(crc: u16, data: &[u8]) -> u16 {
    data.iter().fold(crc, |crc, &b| {
        let entry = CRC_TABLE
            .get(usize::from((crc ^ u16::from(b)) & 0xFF))
            .copied()
            .unwrap_or(0);
        (crc >> 8) ^ entry
    })
}

/// Byte-at-a-time table, built from the FIT SDK's 16-entry nibble table. Built at compile
/// time: an index out of range there is a compile error, never a panic at run time.
#[allow(clippy::indexing_slicing)]
const CRC_TABLE: [u16; 256] = {
    const NIBBLE: [u16; 16] = [
        0x0000, 0xCC01, 0xD801, 0x1400, 0xF001, 0x3C00, 0x2800, 0xE401, 0xA001, 0x6C00, 0x7800,
        0xB401, 0x5000, 0x9C01, 0x8801, 0x4400,
    ];
    let mut table = [0u16; 256];
    let mut i = 0;
    while i < 256 {
        // The SDK's two nibble steps applied to a zero CRC and byte i.
        let mut crc = NIBBLE[i & 0xF];
        crc = ((crc >> 4) & 0x0FFF) ^ NIBBLE[(crc & 0xF) as usize] ^ NIBBLE[i >> 4];
        table[i] = crc;
        i += 1;
    }
    table
};

fn u16_at(b: &[u8], i: usize) -> Option<u16> {
    Some(u16::from_le_bytes([*b.get(i)?, *b.get(i + 1)?]))
}

fn u32_at(b: &[u8], i: usize) -> Option<u32> {
    Some(u32::from_le_bytes(b.get(i..i + 4)?.try_into().ok()?))
}

/// Check the header and both CRCs; return the first FIT file's bytes (header, data, CRC).
///
/// The file CRC is taken over header and data. With a 14-byte header whose CRC is set, the
/// CRC of those 14 bytes is zero, so this equals the CRC over the data alone, which is what
/// fitparser checks in that case: the two agree on every valid file.
pub fn frame(bytes: &[u8]) -> Result<&[u8], ParseError> {
    let len = bytes.len();
    check_header(bytes.get(..len.min(14)).unwrap_or_default(), len as u64)?;
    let header_size = usize::from(bytes.first().copied().unwrap_or(0));
    let data_size = u32_at(bytes, 4).unwrap_or(0) as usize;
    let data_end = header_size.saturating_add(data_size);
    let Some(stored) = u16_at(bytes, data_end) else {
        return Err(fit_err("truncated: file CRC missing"));
    };
    let computed = crc16(0, bytes.get(..data_end).unwrap_or_default());
    if stored != computed {
        return Err(fit_err(format!(
            "file CRC mismatch (stored {stored:#06x}, computed {computed:#06x})"
        )));
    }
    bytes
        .get(..data_end + 2)
        .ok_or_else(|| fit_err("truncated: file CRC missing"))
}

/// Check a FIT file header (its first 12 or 14 bytes, `head`) against the file's total length,
/// before the body is read: header size byte, `.FIT` signature, header CRC when set, and a
/// declared data size that fits in the file.
///
/// Source: FIT protocol, "File Header" (header size 12 or 14; bytes 4..8 data size
/// little-endian; bytes 8..12 ".FIT"; bytes 12..14 header CRC, 0 when not computed).
pub fn check_header(head: &[u8], total_len: u64) -> Result<(), ParseError> {
    if total_len == 0 {
        return Err(fit_err("empty file"));
    }
    let header_size = head.first().copied().unwrap_or(0);
    if header_size != 12 && header_size != 14 {
        return Err(fit_err(format!(
            "bad header size {header_size} (expected 12 or 14)"
        )));
    }
    let header_size = usize::from(header_size);
    if total_len < header_size as u64 || head.len() < header_size {
        return Err(fit_err(format!(
            "truncated: {total_len} bytes, shorter than the {header_size}-byte header"
        )));
    }
    if head.get(8..12) != Some(b".FIT".as_slice()) {
        return Err(fit_err("no .FIT signature in the header"));
    }
    if header_size == 14 {
        let stored = u16_at(head, 12).unwrap_or(0);
        if stored != 0 && stored != crc16(0, head.get(..12).unwrap_or_default()) {
            return Err(fit_err("header CRC mismatch"));
        }
    }
    let data_size = u64::from(u32_at(head, 4).unwrap_or(0));
    let available = total_len - header_size as u64;
    if data_size > available {
        return Err(fit_err(format!(
            "truncated: header declares {data_size} data bytes, file has {available}"
        )));
    }
    Ok(())
}

/// What follows the first FIT file's CRC, as a warning: a chained FIT file (not read: only
/// the first file becomes the session, as before) or other bytes (ignored).
fn trailing_warning(bytes: &[u8], framed_len: usize) -> Option<String> {
    let rest = bytes.get(framed_len..).filter(|r| !r.is_empty())?;
    let chained = rest.len() >= 12
        && matches!(rest.first(), Some(12 | 14))
        && rest.get(8..12) == Some(b".FIT".as_slice());
    Some(if chained {
        format!(
            "a second FIT file ({} bytes) is chained after the first; only the first was read",
            rest.len()
        )
    } else {
        format!(
            "{} byte{} after the end of the FIT data were ignored",
            rest.len(),
            if rest.len() == 1 { "" } else { "s" }
        )
    })
}

/// Byte size of a FIT base type, as fitparser sizes it (unknown types count as one byte).
fn base_type_size(base: u8) -> usize {
    match base {
        0x83 | 0x84 | 0x8B => 2,
        0x85 | 0x86 | 0x88 | 0x8C => 4,
        0x89 | 0x8E | 0x8F | 0x90 => 8,
        _ => 1,
    }
}

/// What the pre-scan keeps of a definition message.
struct ScanDef {
    global: u16,
    /// Bytes of a data message after its one-byte header.
    size: usize,
    /// (field number, offset in the data message, size), for field descriptions.
    fields: Vec<(u8, usize, usize)>,
}

/// Walk every message of a framed FIT file the way fitparser will, and reject or repair what
/// would make it panic or print. Returns the file, copied only when a definition was rewritten.
pub fn check_messages(file: &[u8]) -> Result<Cow<'_, [u8]>, ParseError> {
    let header_size = usize::from(file.first().copied().unwrap_or(0));
    let data_end = file.len().saturating_sub(2);
    let mut defs: [Option<ScanDef>; 16] = Default::default();
    // Developer field (data index, field number) -> base type size, from field descriptions.
    let mut dev_types: HashMap<(u8, u8), usize> = HashMap::new();
    // Offsets of base-type bytes that fitparser would complain about.
    let mut patches: Vec<usize> = Vec::new();
    let mut pos = header_size;
    let take = |pos: usize, n: usize| -> Result<&[u8], ParseError> {
        pos.checked_add(n)
            .filter(|&end| end <= data_end)
            .and_then(|end| file.get(pos..end))
            .ok_or_else(|| {
                fit_err(format!(
                    "message at byte {pos} runs past the end of the data"
                ))
            })
    };
    while pos < data_end {
        let head = take(pos, 1)?.first().copied().unwrap_or(0);
        let msg_start = pos;
        pos += 1;
        if head & 0xC0 == 0x40 {
            // Definition message: reserved, architecture, global number, field count, fields.
            let &[_, arch, g0, g1, n_fields] = take(pos, 5)? else {
                return Err(fit_err(format!("short definition at byte {msg_start}")));
            };
            let global = if arch == 1 {
                u16::from_be_bytes([g0, g1])
            } else {
                u16::from_le_bytes([g0, g1])
            };
            let n_fields = usize::from(n_fields);
            pos += 5;
            let field_bytes = take(pos, 3 * n_fields)?;
            let mut fields = Vec::with_capacity(n_fields);
            let mut size = 0usize;
            for (k, f) in field_bytes.chunks_exact(3).enumerate() {
                let &[num, fsize, base] = f else { continue };
                let (fsize, base) = (usize::from(fsize), base & 0x9F);
                if fsize % base_type_size(base) != 0 {
                    patches.push(pos + 3 * k + 2);
                }
                fields.push((num, size, fsize));
                size += fsize;
            }
            pos += 3 * n_fields;
            if head & 0x20 != 0 {
                let n_dev = usize::from(take(pos, 1)?.first().copied().unwrap_or(0));
                pos += 1;
                for f in take(pos, 3 * n_dev)?.chunks_exact(3) {
                    let &[num, fsize, index] = f else { continue };
                    let fsize = usize::from(fsize);
                    if let Some(&bsize) = dev_types.get(&(index, num)) {
                        if fsize % bsize != 0 {
                            return Err(fit_err(format!(
                                "developer field {index}/{num}: size {fsize} is not a multiple of its type size {bsize}"
                            )));
                        }
                    }
                    size += fsize;
                }
                pos += 3 * n_dev;
            }
            if let Some(slot) = defs.get_mut(usize::from(head & 0x0F)) {
                *slot = Some(ScanDef {
                    global,
                    size,
                    fields,
                });
            }
        } else {
            let local = if head & 0x80 != 0 {
                (head >> 5) & 0x03
            } else {
                head & 0x0F
            };
            let Some(def) = defs.get(usize::from(local)).and_then(Option::as_ref) else {
                return Err(fit_err(format!(
                    "data message at byte {msg_start} uses undefined local type {local}"
                )));
            };
            let body = take(pos, def.size)?;
            if def.global == mesg::FIELD_DESCRIPTION {
                let byte_of = |num: u8| {
                    def.fields
                        .iter()
                        .find(|(n, _, s)| *n == num && *s >= 1)
                        .and_then(|&(_, off, _)| body.get(off).copied())
                };
                if let (Some(index), Some(num), Some(base)) = (byte_of(0), byte_of(1), byte_of(2)) {
                    dev_types.insert((index, num), base_type_size(base));
                }
            }
            pos += def.size;
        }
    }
    if patches.is_empty() {
        return Ok(Cow::Borrowed(file));
    }
    // Read such fields as raw bytes (fitparser's own fallback) without its eprintln, and redo
    // the file CRC so fitparser's check still passes on the copy.
    let mut copy = file.to_vec();
    for at in patches {
        if let Some(b) = copy.get_mut(at) {
            *b = 0x0D;
        }
    }
    let crc = crc16(0, copy.get(..data_end).unwrap_or_default()).to_le_bytes();
    if let Some(tail) = copy.get_mut(data_end..) {
        tail.copy_from_slice(&crc);
    }
    Ok(Cow::Owned(copy))
}

/// One record message, converted to SI.
#[derive(Debug, Clone, Default)]
struct Rec {
    /// Seconds since the FIT epoch.
    ts: i64,
    lat: Option<f64>,
    lon: Option<f64>,
    distance: Option<f64>,
    speed: Option<f64>,
    hr: Option<f64>,
    cadence: Option<f64>,
    altitude: Option<f64>,
}

impl Rec {
    /// Fill the channels this record lacks from `other`.
    fn fill_from(&mut self, other: &Rec) {
        for (mine, theirs) in [
            (&mut self.lat, other.lat),
            (&mut self.lon, other.lon),
            (&mut self.distance, other.distance),
            (&mut self.speed, other.speed),
            (&mut self.hr, other.hr),
            (&mut self.cadence, other.cadence),
            (&mut self.altitude, other.altitude),
        ] {
            if mine.is_none() {
                *mine = theirs;
            }
        }
    }
}

struct RawLap {
    ts: Option<i64>,
    start: Option<i64>,
    elapsed_s: Option<f64>,
    trigger: Option<u8>,
}

#[derive(Default)]
struct Raw {
    records: Vec<Rec>,
    /// (timestamp, event_type) of timer events, in file order.
    timer_events: Vec<(i64, u8)>,
    laps: Vec<RawLap>,
    session_sport: Option<u8>,
    sport_sport: Option<u8>,
    /// Seconds to add to a system-time stamp to make it UTC, when the file says.
    system_offset: Option<i64>,
}

/// The SDK's accumulator for a wrapping field: the first value as is, then each later value
/// adds its difference from the previous one modulo 2^bits.
#[derive(Default)]
struct Accumulator {
    last_raw: Option<u32>,
    total: u64,
}

impl Accumulator {
    fn add(&mut self, raw: u32, bits: u32) -> u64 {
        let mask = (1u32 << bits) - 1;
        let raw = raw & mask;
        self.total = match self.last_raw {
            None => u64::from(raw),
            Some(last) => self.total + u64::from(raw.wrapping_sub(last) & mask),
        };
        self.last_raw = Some(raw);
        self.total
    }
}

/// The three bytes of `compressed_speed_distance` as (12-bit speed, 12-bit distance) raw.
fn compressed_speed_distance(v: Option<&Value>) -> Option<(u32, u32)> {
    let Value::Array(items) = v? else {
        return None;
    };
    let byte = |i: usize| match items.get(i) {
        Some(Value::Byte(b) | Value::UInt8(b)) => Some(u32::from(*b)),
        _ => None,
    };
    let packed = byte(0)? | byte(1)? << 8 | byte(2)? << 16;
    Some((packed & 0xFFF, packed >> 12 & 0xFFF))
}

/// A raw numeric field value; arrays, strings and non-finite floats are not numbers here.
fn num(v: &Value) -> Option<f64> {
    let x = match *v {
        Value::Byte(x) | Value::Enum(x) | Value::UInt8(x) | Value::UInt8z(x) => f64::from(x),
        Value::SInt8(x) => f64::from(x),
        Value::SInt16(x) => f64::from(x),
        Value::UInt16(x) | Value::UInt16z(x) => f64::from(x),
        Value::SInt32(x) => f64::from(x),
        Value::UInt32(x) | Value::UInt32z(x) => f64::from(x),
        Value::SInt64(x) => x as f64,
        Value::UInt64(x) | Value::UInt64z(x) => x as f64,
        Value::Float32(x) => f64::from(x),
        Value::Float64(x) => x,
        _ => return None,
    };
    x.is_finite().then_some(x)
}

fn enum_u8(v: Option<&Value>) -> Option<u8> {
    let x = num(v?)?;
    (0.0..255.0).contains(&x).then_some(x as u8)
}

fn fit_time(v: Option<&Value>) -> Option<i64> {
    let x = num(v?)?;
    (0.0..=f64::from(u32::MAX)).contains(&x).then_some(x as i64)
}

/// Split the framed, checked file into messages with fitparser and keep what we need.
fn read_messages(file: &[u8]) -> Result<Raw, ParseError> {
    let mut processor = FitStreamProcessor::new();
    let mut raw = Raw::default();
    // Last full timestamp seen, the base for compressed-timestamp headers.
    let mut last_ts: Option<i64> = None;
    let mut distance_acc = Accumulator::default();
    let mut input = file;
    while !input.is_empty() {
        let (rest, object) = processor
            .deserialize_next(input)
            .map_err(|e| fit_err(format!("decoder: {e}")))?;
        input = rest;
        let msg = match object {
            FitObject::Crc(_) => break,
            FitObject::DataMessage(msg) => msg,
            FitObject::Header(_) | FitObject::DefinitionMessage(_) => continue,
        };
        let fields = msg.fields();
        let ts = match (fit_time(fields.get(&TIMESTAMP)), msg.time_offset()) {
            (Some(ts), _) => Some(ts),
            (None, Some(offset)) => last_ts.map(|base| {
                let offset = i64::from(offset);
                let mut ts = (base & !0x1F) + offset;
                if offset < base & 0x1F {
                    ts += 0x20;
                }
                ts
            }),
            (None, None) => None,
        };
        if ts.is_some() {
            last_ts = ts;
        }
        let f = |n: u8| fields.get(&n).and_then(num);
        match msg.global_message_number() {
            mesg::RECORD => {
                let Some(ts) = ts else { continue };
                let lat = f(0)
                    .map(|s| s * DEG_PER_SEMICIRCLE)
                    .filter(|d| d.abs() <= 90.0);
                let lon = f(1).map(|s| s * DEG_PER_SEMICIRCLE);
                let speed = f(73).or_else(|| f(6)).map(|v| v / 1000.0);
                let altitude = f(78).or_else(|| f(2)).map(|v| v / 5.0 - 500.0);
                let cadence = f(4).map(|c| 2.0 * (c + f(53).map_or(0.0, |x| x / 128.0)));
                let compressed = compressed_speed_distance(fields.get(&8))
                    .map(|(sp, d)| (f64::from(sp) / 100.0, distance_acc.add(d, 12) as f64 / 16.0));
                raw.records.push(Rec {
                    ts,
                    lat,
                    lon,
                    distance: f(5).map(|v| v / 100.0).or(compressed.map(|(_, d)| d)),
                    speed: speed.or(compressed.map(|(sp, _)| sp)),
                    hr: f(3),
                    cadence,
                    altitude,
                });
            }
            mesg::EVENT => {
                // event 0 = timer
                if let (Some(ts), Some(0), Some(kind)) =
                    (ts, enum_u8(fields.get(&0)), enum_u8(fields.get(&1)))
                {
                    raw.timer_events.push((ts, kind));
                }
            }
            mesg::LAP => raw.laps.push(RawLap {
                ts,
                start: fit_time(fields.get(&2)),
                elapsed_s: f(7).map(|v| v / 1000.0),
                trigger: enum_u8(fields.get(&24)),
            }),
            mesg::SESSION => {
                raw.session_sport = raw.session_sport.or(enum_u8(fields.get(&5)));
            }
            mesg::SPORT => {
                raw.sport_sport = raw.sport_sport.or(enum_u8(fields.get(&0)));
            }
            mesg::TIMESTAMP_CORRELATION => {
                if let (Some(utc), Some(system)) = (ts, fit_time(fields.get(&1))) {
                    if utc >= SYSTEM_TIME_LIMIT && system < SYSTEM_TIME_LIMIT {
                        raw.system_offset = Some(utc - system);
                    }
                }
            }
            mesg::DEVICE_SETTINGS => {
                let offset = match fields.get(&2) {
                    Some(Value::Array(items)) => items.first().and_then(num),
                    Some(v) => num(v),
                    None => None,
                };
                if let Some(offset) = offset.filter(|o| *o >= 1.0 && *o <= f64::from(u32::MAX)) {
                    raw.system_offset = raw.system_offset.or(Some(offset as i64));
                }
            }
            mesg::FIELD_DESCRIPTION => {
                // fitparser must see these to read later developer fields.
                processor
                    .decode_message(msg)
                    .map_err(|e| fit_err(format!("bad developer field description: {e}")))?;
            }
            _ => {}
        }
    }
    Ok(raw)
}

/// Convert system-time stamps (below [`SYSTEM_TIME_LIMIT`]) to UTC with the file's offset.
/// True when something was converted. Refused when every record is in system time and the
/// file gives no offset.
fn system_time_to_utc(raw: &mut Raw) -> Result<bool, ParseError> {
    let is_system = |ts: i64| ts < SYSTEM_TIME_LIMIT;
    let any = raw.records.iter().any(|r| is_system(r.ts));
    if !any {
        return Ok(false);
    }
    let Some(offset) = raw.system_offset else {
        if raw.records.iter().all(|r| is_system(r.ts)) {
            return Err(ParseError::TimeAxis(
                "the FIT timestamps count from device power-on (system time) and the file gives \
                 no offset to UTC"
                    .to_string(),
            ));
        }
        return Ok(false);
    };
    let fix = |ts: &mut i64| {
        if is_system(*ts) {
            *ts += offset;
        }
    };
    for r in &mut raw.records {
        fix(&mut r.ts);
    }
    for (ts, _) in &mut raw.timer_events {
        fix(ts);
    }
    for lap in &mut raw.laps {
        if let Some(ts) = lap.ts.as_mut() {
            fix(ts);
        }
        if let Some(ts) = lap.start.as_mut() {
            fix(ts);
        }
    }
    Ok(true)
}

fn utc(fit_s: i64) -> Result<DateTime<Utc>, ParseError> {
    DateTime::from_timestamp(fit_s + FIT_EPOCH_UNIX_S, 0)
        .ok_or_else(|| fit_err(format!("timestamp {fit_s} out of range")))
}

fn channel(recs: &[Rec], get: impl Fn(&Rec) -> Option<f64>) -> Option<Channel> {
    Channel::new(recs.iter().map(get).collect()).into_option()
}

fn build_session(mut raw: Raw) -> Result<Session, ParseError> {
    let converted = system_time_to_utc(&mut raw)?;
    let mut recs = raw.records;
    if recs
        .iter()
        .zip(recs.iter().skip(1))
        .any(|(a, b)| b.ts < a.ts)
    {
        recs.sort_by_key(|r| r.ts); // stable
    }
    if let (true, Some(first), Some(last)) = (recs.len() >= 2, recs.first(), recs.last()) {
        if first.ts == last.ts {
            return Err(ParseError::TimeAxis(
                super::timeaxis::one_timestamp_message(recs.len(), utc(first.ts)?),
            ));
        }
    }
    // Merge records sharing a timestamp into the first of them.
    let mut merged: Vec<Rec> = Vec::with_capacity(recs.len());
    for r in recs {
        match merged.last_mut() {
            Some(last) if last.ts == r.ts => last.fill_from(&r),
            _ => merged.push(r),
        }
    }
    let recs = merged;
    let Some(t0) = recs.first().map(|r| r.ts) else {
        return Err(fit_err("no records with a timestamp"));
    };
    let start = utc(t0)?;
    let mut session = Session::empty(FileFormat::Fit, start);
    session.t = recs.iter().map(|r| (r.ts - t0) as f64).collect();
    session.time = recs.iter().map(|r| utc(r.ts)).collect::<Result<_, _>>()?;
    session.lat = channel(&recs, |r| r.lat);
    session.lon = channel(&recs, |r| r.lon);
    session.distance = channel(&recs, |r| r.distance);
    session.speed = channel(&recs, |r| r.speed);
    session.hr = channel(&recs, |r| r.hr);
    session.cadence = channel(&recs, |r| r.cadence);
    session.altitude = channel(&recs, |r| r.altitude);

    let rel = |ts: i64| (ts - t0) as f64;

    // Timer stop (stop, stop_all, stop_disable, stop_disable_all) .. next start = pause.
    let mut events = raw.timer_events;
    events.sort_by_key(|e| e.0); // stable: same-second events keep file order
    let mut stopped_at: Option<i64> = None;
    for (ts, kind) in events {
        match kind {
            0 => {
                if let Some(from) = stopped_at.take() {
                    if ts > from && ts > t0 {
                        session.pauses.push(Pause {
                            from_s: rel(from).max(0.0),
                            to_s: rel(ts),
                        });
                    }
                }
            }
            1 | 4 | 8 | 9 => {
                stopped_at.get_or_insert(ts);
            }
            _ => {}
        }
    }

    for lap in raw.laps {
        let Some(start_ts) = lap.start.or_else(|| {
            let (ts, el) = (lap.ts?, lap.elapsed_s?);
            Some(ts - el.round() as i64)
        }) else {
            continue;
        };
        let start_s = rel(start_ts);
        let end_s = match (lap.elapsed_s, lap.ts) {
            (Some(el), _) => start_s + el,
            (None, Some(ts)) => rel(ts),
            (None, None) => continue,
        };
        let trigger = lap
            .trigger
            .filter(|&v| LapTrigger::is_named_variant(i64::from(v)))
            .map(|v| LapTrigger::from(v).to_string());
        session.laps.push(DeviceLap {
            start_s,
            end_s,
            trigger,
        });
    }

    if converted {
        session.warnings.push(
            "timestamps counted from device power-on were converted to UTC with the file's time offset"
                .to_string(),
        );
    }
    session.sport = match raw.session_sport.or(raw.sport_sport) {
        Some(v) if FitSport::is_named_variant(i64::from(v)) => {
            Sport::from_name(&FitSport::from(v).to_string())
        }
        _ => Sport::Unknown,
    };
    Ok(session)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crc_matches_the_fit_check_value() {
        // Source: CRC-16/ARC (poly 0x8005 reflected, init 0), the algorithm of the FIT SDK's
        // fit_crc.c; the catalogued check value for "123456789" is 0xBB3D.
        assert_eq!(crc16(0, b"123456789"), 0xBB3D);
        // Appending a CRC (little-endian) brings the CRC of the whole to zero.
        let mut data = b"splitdesk".to_vec();
        let c = crc16(0, &data);
        data.extend_from_slice(&c.to_le_bytes());
        assert_eq!(crc16(0, &data), 0);
    }

    #[test]
    fn frame_reports_specific_reasons() {
        let reason = |b: &[u8]| match frame(b) {
            Err(ParseError::Fit(r)) => r,
            other => panic!("expected an error, got {other:?}"),
        };
        assert_eq!(reason(&[]), "empty file");
        assert!(reason(&[13; 20]).starts_with("bad header size 13"));
        let mut h = vec![12u8, 0x10, 0, 0, 100, 0, 0, 0];
        h.extend_from_slice(b".FIT");
        h.extend_from_slice(&[0; 10]);
        assert_eq!(
            reason(&h),
            "truncated: header declares 100 data bytes, file has 10"
        );
        h[4] = 9;
        assert_eq!(reason(&h), "truncated: file CRC missing");
        h[4] = 6;
        assert!(reason(&h).starts_with("file CRC mismatch"));
    }

    #[test]
    fn odd_field_size_is_rewritten_to_bytes_quietly() {
        // file_id definition with field 1 (manufacturer, uint16) given 3 bytes, then one data
        // message. fitparser would eprintln! about it; we rewrite the base type first.
        let mut data = vec![0x40, 0, 0, 0, 0, 1, 1, 3, 0x84];
        data.extend_from_slice(&[0x00, 1, 2, 3]);
        let mut file = vec![14u8, 0x20, 0, 0, data.len() as u8, 0, 0, 0];
        file.extend_from_slice(b".FIT");
        file.extend_from_slice(&[0, 0]);
        file.extend_from_slice(&data);
        let crc = crc16(0, &file);
        file.extend_from_slice(&crc.to_le_bytes());
        let framed = frame(&file).unwrap();
        let checked = check_messages(framed).unwrap();
        assert!(matches!(checked, Cow::Owned(_)));
        assert_eq!(checked[14 + 8], 0x0D);
        assert_eq!(crc16(0, &checked), 0);
        // Valid file, but no records.
        assert_eq!(
            decode(&file),
            Err(ParseError::Fit("no records with a timestamp".into()))
        );
    }

    #[test]
    fn undefined_local_type_and_overrun_are_rejected() {
        let wrap = |data: &[u8]| {
            let mut file = vec![12u8, 0x10, 0, 0, data.len() as u8, 0, 0, 0];
            file.extend_from_slice(b".FIT");
            file.extend_from_slice(data);
            let crc = crc16(0, &file);
            file.extend_from_slice(&crc.to_le_bytes());
            file
        };
        let f = wrap(&[0x03, 1, 2]);
        assert!(
            matches!(decode(&f), Err(ParseError::Fit(r)) if r.contains("undefined local type 3"))
        );
        let f = wrap(&[0x40, 0, 0, 0, 0, 5, 1]);
        assert!(matches!(decode(&f), Err(ParseError::Fit(r)) if r.contains("runs past the end")));
    }
}
