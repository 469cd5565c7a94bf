//! FIT decoding: our own framing, CRC check and message reader.
//!
//! Two steps:
//!
//! 1. [`frame`] checks the file header and both CRCs and cuts the bytes down to the first FIT
//!    file's declared length (header + data + 2-byte CRC). What follows (a chained second FIT
//!    file, junk, zero padding) is ignored.
//! 2. One pass over the messages (`read_messages`): definition messages (architecture, field
//!    definitions, developer field definitions), data messages with normal and
//!    compressed-timestamp headers, and the raw values of only the fields the conversion uses,
//!    kept by global message number and field number in a fixed set of slots. No hash map and
//!    no allocation per data message; developer field values are skipped by size.
//!    `enhanced_speed`/`enhanced_altitude` are told apart from the 16-bit `speed`/`altitude`.
//!    Refused: a message running past the data section, a data message of an undefined local
//!    type, a developer field whose size is not a multiple of its base type, a developer
//!    field used before its `field_description`.
//!
//! Raw values are read as fitparser (crates.io) reads them, which this module used before:
//! a type's invalid value (FIT protocol, table "FIT Base Types": 0xFF, 0x7F, 0xFFFF, 0x7FFF,
//! 0xFFFFFFFF, 0x7FFFFFFF, 0 for the `z` types, non-finite floats) makes a field absent, an
//! array is valid when any element is, a later valid field of the same number replaces an
//! earlier one, and a field whose size is not a multiple of its base type is read as bytes.
//! `tests/fit_reader_vs_fitparser.rs` checks that both give the same sessions; the fitparser
//! path is kept for that test only, in [`reference`].
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

use chrono::{DateTime, Utc};
use fitparser::profile::field_types::{LapTrigger, Sport as FitSport};

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

#[doc(hidden)]
pub mod reference;

/// Decode FIT bytes into a raw session (no hash, no derived channels, no flags).
pub fn decode(bytes: &[u8]) -> Result<Session, ParseError> {
    let file = frame(bytes)?;
    let trailing = trailing_warning(bytes, file.len());
    let raw = read_messages(file)?;
    let mut session = build_session(raw)?;
    session.warnings.extend(trailing);
    Ok(session)
}

/// CRC-16 as the FIT protocol defines it (CRC-16/ARC, the algorithm of the FIT SDK's
/// `fit_crc.c` that fitparser also uses), continuing from `crc` (start with 0). Eight bytes
/// per step with eight tables (the usual "slicing-by-8" of a table-driven CRC), then the
/// rest a byte at a time.
pub fn crc16(mut crc: u16, data: &[u8]) -> u16 {
    let [t0, t1, t2, t3, t4, t5, t6, t7] = &CRC_TABLES;
    let mut chunks = data.chunks_exact(8);
    for chunk in &mut chunks {
        let &[b0, b1, b2, b3, b4, b5, b6, b7] = chunk else {
            continue;
        };
        let [x0, x1] = (crc ^ u16::from_le_bytes([b0, b1])).to_le_bytes();
        crc = lookup(t7, x0)
            ^ lookup(t6, x1)
            ^ lookup(t5, b2)
            ^ lookup(t4, b3)
            ^ lookup(t3, b4)
            ^ lookup(t2, b5)
            ^ lookup(t1, b6)
            ^ lookup(t0, b7);
    }
    for &b in chunks.remainder() {
        crc = (crc >> 8) ^ lookup(t0, crc.to_le_bytes()[0] ^ b);
    }
    crc
}

/// A table entry; a `u8` index is always in range (the fallback is never taken).
#[inline(always)]
fn lookup(table: &[u16; 256], i: u8) -> u16 {
    table.get(usize::from(i)).copied().unwrap_or(0)
}

/// `CRC_TABLES[0]` is the byte-at-a-time table, built from the FIT SDK's 16-entry nibble
/// table; `CRC_TABLES[k]` is a byte followed by `k` zero bytes. Built at compile time: an
/// index out of range there is a compile error, never a panic at run time.
#[allow(clippy::indexing_slicing)]
const CRC_TABLES: [[u16; 256]; 8] = {
    const NIBBLE: [u16; 16] = [
        0x0000, 0xCC01, 0xD801, 0x1400, 0xF001, 0x3C00, 0x2800, 0xE401, 0xA001, 0x6C00, 0x7800,
        0xB401, 0x5000, 0x9C01, 0x8801, 0x4400,
    ];
    let mut tables = [[0u16; 256]; 8];
    let mut i = 0;
    while i < 256 {
        // The SDK's two nibble steps applied to a zero CRC and byte i.
        let mut crc = NIBBLE[i & 0xF];
        crc = ((crc >> 4) & 0x0FFF) ^ NIBBLE[(crc & 0xF) as usize] ^ NIBBLE[i >> 4];
        tables[0][i] = crc;
        i += 1;
    }
    let mut k = 1;
    while k < 8 {
        let mut i = 0;
        while i < 256 {
            let prev = tables[k - 1][i];
            tables[k][i] = (prev >> 8) ^ tables[0][(prev & 0xFF) as usize];
            i += 1;
        }
        k += 1;
    }
    tables
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

/// FIT base type numbers (after masking with 0x9F) that need special handling.
/// Source: FIT protocol, table "FIT Base Types".
const BASE_UINT8: u8 = 0x02;
const BASE_STRING: u8 = 0x07;
const BASE_BYTE: u8 = 0x0D;

/// The base type a field is read as: a size that is not a multiple of the type's size makes
/// the field a byte array (fitparser's fallback, kept so results do not change).
fn effective_base(base: u8, size: usize) -> u8 {
    let base = base & 0x9F;
    if !size.is_multiple_of(base_type_size(base)) {
        BASE_BYTE
    } else {
        base
    }
}

/// How a kept field's value is read.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Kind {
    /// A single number; an array is no number.
    Num,
    /// The first element of an array, or the single value (`device_settings.time_offset`).
    First,
    /// Three bytes packed little-endian (`record.compressed_speed_distance`).
    Packed3,
}

/// Number of number slots in [`Fields`]; slot 0 is the timestamp (field 253) of any message.
const SLOTS: usize = 11;

/// Where the value of field `field` of global message `global` is kept, and how it is read;
/// `None` for the fields no conversion uses.
fn slot_of(global: u16, field: u8) -> Option<(usize, Kind)> {
    if field == TIMESTAMP {
        return Some((0, Kind::Num));
    }
    let slot = match (global, field) {
        (mesg::RECORD, 0..=6) => usize::from(field) + 1,
        (mesg::RECORD, 8) => return Some((0, Kind::Packed3)),
        (mesg::RECORD, 53) => 8,
        (mesg::RECORD, 73) => 9,
        (mesg::RECORD, 78) => 10,
        (mesg::EVENT, 0 | 1) => usize::from(field) + 1,
        (mesg::LAP, 2) => 1,
        (mesg::LAP, 7) => 2,
        (mesg::LAP, 24) => 3,
        (mesg::SESSION, 5) | (mesg::SPORT, 0) | (mesg::TIMESTAMP_CORRELATION, 1) => 1,
        (mesg::DEVICE_SETTINGS, 2) => return Some((1, Kind::First)),
        _ => return None,
    };
    Some((slot, Kind::Num))
}

/// The raw values of the fields one data message gives that the conversion uses, by slot
/// (see [`slot_of`]). A field that is absent or invalid is `None`.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
struct Fields {
    nums: [Option<f64>; SLOTS],
    packed: Option<u32>,
}

impl Fields {
    /// Keep a value read for field `field` of message `global` (a later value of the same
    /// field replaces an earlier one).
    fn set(&mut self, global: u16, field: u8, value: Option<f64>) {
        if let Some((slot, Kind::Num | Kind::First)) = slot_of(global, field) {
            if let Some(s) = self.nums.get_mut(slot) {
                *s = value;
            }
        }
    }

    fn set_packed(&mut self, value: Option<u32>) {
        self.packed = value;
    }

    /// The number kept for field `field` of message `global`.
    fn get(&self, global: u16, field: u8) -> Option<f64> {
        match slot_of(global, field)? {
            (slot, Kind::Num | Kind::First) => self.nums.get(slot).copied().flatten(),
            (_, Kind::Packed3) => None,
        }
    }
}

/// Bytes of one element in file order, as a little-endian array of `N` bytes.
fn le<const N: usize>(b: &[u8], big_endian: bool) -> [u8; N] {
    let mut a = [0u8; N];
    if let Some(s) = b.get(..N) {
        a.copy_from_slice(s);
    }
    if big_endian {
        a.reverse();
    }
    a
}

/// One element of base type `base` at the start of `b`: whether it is valid (not the type's
/// invalid value, a finite float) and its value.
/// Source: FIT protocol, table "FIT Base Types" (invalid value per type).
fn element(b: &[u8], base: u8, big_endian: bool) -> (bool, f64) {
    let byte = b.first().copied().unwrap_or(0);
    match base {
        0x00 | BASE_UINT8 | BASE_BYTE => (byte != 0xFF, f64::from(byte)),
        0x01 => (byte != 0x7F, f64::from(byte as i8)),
        0x0A => (byte != 0, f64::from(byte)),
        0x83 => {
            let x = i16::from_le_bytes(le(b, big_endian));
            (x != 0x7FFF, f64::from(x))
        }
        0x84 => {
            let x = u16::from_le_bytes(le(b, big_endian));
            (x != 0xFFFF, f64::from(x))
        }
        0x8B => {
            let x = u16::from_le_bytes(le(b, big_endian));
            (x != 0, f64::from(x))
        }
        0x85 => {
            let x = i32::from_le_bytes(le(b, big_endian));
            (x != 0x7FFF_FFFF, f64::from(x))
        }
        0x86 => {
            let x = u32::from_le_bytes(le(b, big_endian));
            (x != 0xFFFF_FFFF, f64::from(x))
        }
        0x8C => {
            let x = u32::from_le_bytes(le(b, big_endian));
            (x != 0, f64::from(x))
        }
        0x88 => {
            let x = f64::from(f32::from_le_bytes(le(b, big_endian)));
            (x.is_finite(), x)
        }
        0x89 => {
            let x = f64::from_le_bytes(le(b, big_endian));
            (x.is_finite(), x)
        }
        0x8E => {
            let x = i64::from_le_bytes(le(b, big_endian));
            (x != i64::MAX, x as f64)
        }
        0x8F => {
            let x = u64::from_le_bytes(le(b, big_endian));
            (x != u64::MAX, x as f64)
        }
        0x90 => {
            let x = u64::from_le_bytes(le(b, big_endian));
            (x != 0, x as f64)
        }
        // Unknown base types are read as uint8.
        _ => (byte != 0xFF, f64::from(byte)),
    }
}

/// A field of a definition that the conversion uses.
#[derive(Clone, Copy, Debug)]
struct Wanted {
    /// Offset in the data message after its header byte.
    offset: usize,
    size: usize,
    /// Base type as read (see [`effective_base`]).
    base: u8,
    slot: usize,
    kind: Kind,
}

/// Read one kept field of a data message into `out`. A field whose value is invalid as a
/// whole (every element invalid, no element, a string that is not UTF-8) leaves `out` as it
/// was, so that an earlier valid value of the same field number stays.
fn read_field(body: &[u8], w: &Wanted, big_endian: bool, out: &mut Fields) {
    let Some(bytes) = w
        .offset
        .checked_add(w.size)
        .and_then(|end| body.get(w.offset..end))
    else {
        return;
    };
    // A valid field that is no number clears the slot.
    let mut set = |value: Option<f64>| match w.kind {
        Kind::Packed3 => out.packed = None,
        Kind::Num | Kind::First => {
            if let Some(s) = out.nums.get_mut(w.slot) {
                *s = value;
            }
        }
    };
    if w.base == BASE_STRING {
        let text = bytes.split(|&b| b == 0).next().unwrap_or_default();
        if std::str::from_utf8(text).is_ok() {
            set(None);
        }
        return;
    }
    let step = base_type_size(w.base);
    let mut elements = bytes.chunks_exact(step);
    match bytes.len() / step {
        0 => {}
        1 => {
            let (valid, x) = element(bytes, w.base, big_endian);
            if valid {
                set((w.kind != Kind::Packed3).then_some(x));
            }
        }
        count => {
            if !elements.any(|e| element(e, w.base, big_endian).0) {
                return;
            }
            // Byte elements are kept as they are; other invalid elements are no number.
            let kept = |i: usize| {
                let e = bytes.get(i * step..)?;
                let (valid, x) = element(e, w.base, big_endian);
                (valid || w.base == BASE_BYTE).then_some(x)
            };
            match w.kind {
                Kind::Num => set(None),
                Kind::First => set(kept(0)),
                Kind::Packed3 => {
                    let bytes_like =
                        w.base == BASE_BYTE || w.base == BASE_UINT8 || !known_base_type(w.base);
                    out.packed = if bytes_like && count >= 3 {
                        match (kept(0), kept(1), kept(2)) {
                            (Some(a), Some(b), Some(c)) => {
                                Some(a as u32 | (b as u32) << 8 | (c as u32) << 16)
                            }
                            _ => None,
                        }
                    } else {
                        None
                    };
                }
            }
        }
    }
}

/// The base types of the FIT protocol (after masking with 0x9F); others read as uint8.
fn known_base_type(base: u8) -> bool {
    matches!(
        base,
        0x00 | 0x01
            | 0x02
            | 0x07
            | 0x0A
            | 0x0D
            | 0x83
            | 0x84
            | 0x85
            | 0x86
            | 0x88
            | 0x89
            | 0x8B
            | 0x8C
            | 0x8E
            | 0x8F
            | 0x90
    )
}

/// A developer field of a definition: (developer data index, field number, size).
type DevField = (u8, u8, usize);

/// What the reader keeps of a definition message. The vectors are reused when a local type
/// is defined again.
#[derive(Default)]
struct Def {
    defined: bool,
    global: u16,
    big_endian: bool,
    /// Bytes of a data message after its one-byte header.
    size: usize,
    wanted: Vec<Wanted>,
    dev: Vec<DevField>,
    /// For `field_description`: offsets of the first field numbered 0, 1 and 2 with at least
    /// one byte (developer data index, field number, base type).
    desc: [Option<usize>; 3],
}

/// Developer field descriptions seen so far: (developer data index, field number, size of
/// its base type). Few per file: a linear search.
#[derive(Default)]
struct Descriptions(Vec<(u8, u8, usize)>);

impl Descriptions {
    fn get(&self, index: u8, num: u8) -> Option<usize> {
        self.0
            .iter()
            .find(|(i, n, _)| *i == index && *n == num)
            .map(|&(_, _, size)| size)
    }

    fn insert(&mut self, index: u8, num: u8, size: usize) {
        match self.0.iter_mut().find(|(i, n, _)| *i == index && *n == num) {
            Some(e) => e.2 = size,
            None => self.0.push((index, num, size)),
        }
    }
}

fn dev_size_error(index: u8, num: u8, size: usize, type_size: usize) -> ParseError {
    fit_err(format!(
        "developer field {index}/{num}: size {size} is not a multiple of its type size {type_size}"
    ))
}

/// Walk every message of a framed FIT file once: definitions, data messages with normal
/// and compressed-timestamp headers, and the raw values of the fields the conversion uses.
///
/// Refused: a message running past the data section, a data message of an undefined local
/// type, a developer field whose size is not a multiple of its base type's size, and a
/// developer field that is used before its `field_description` (the file is still walked to
/// its end first, so a structural fault later in the file is the one reported). Developer
/// field values themselves are skipped by size.
fn read_messages(file: &[u8]) -> Result<Raw, ParseError> {
    let header_size = usize::from(file.first().copied().unwrap_or(0));
    let data_end = file.len().saturating_sub(2);
    let mut defs: [Def; 16] = Default::default();
    let mut descriptions = Descriptions::default();
    let mut undescribed: Option<ParseError> = None;
    let mut convert = Converter::default();
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
            let big_endian = arch == 1;
            let global = if big_endian {
                u16::from_be_bytes([g0, g1])
            } else {
                u16::from_le_bytes([g0, g1])
            };
            let n_fields = usize::from(n_fields);
            pos += 5;
            let field_bytes = take(pos, 3 * n_fields)?;
            let Some(def) = defs.get_mut(usize::from(head & 0x0F)) else {
                continue; // unreachable: the local type has four bits
            };
            def.defined = false;
            def.global = global;
            def.big_endian = big_endian;
            def.wanted.clear();
            def.dev.clear();
            def.desc = [None; 3];
            let mut size = 0usize;
            for f in field_bytes.chunks_exact(3) {
                let &[num, fsize, base] = f else { continue };
                let fsize = usize::from(fsize);
                if let Some((slot, kind)) = slot_of(global, num) {
                    def.wanted.push(Wanted {
                        offset: size,
                        size: fsize,
                        base: effective_base(base, fsize),
                        slot,
                        kind,
                    });
                }
                if global == mesg::FIELD_DESCRIPTION && fsize >= 1 {
                    if let Some(d) = def.desc.get_mut(usize::from(num)) {
                        d.get_or_insert(size);
                    }
                }
                size += fsize;
            }
            pos += 3 * n_fields;
            if head & 0x20 != 0 {
                let n_dev = usize::from(take(pos, 1)?.first().copied().unwrap_or(0));
                pos += 1;
                for f in take(pos, 3 * n_dev)?.chunks_exact(3) {
                    let &[num, fsize, index] = f else { continue };
                    let fsize = usize::from(fsize);
                    if let Some(bsize) = descriptions.get(index, num) {
                        if !fsize.is_multiple_of(bsize) {
                            return Err(dev_size_error(index, num, fsize, bsize));
                        }
                    }
                    def.dev.push((index, num, fsize));
                    size += fsize;
                }
                pos += 3 * n_dev;
            }
            def.size = size;
            def.defined = true;
        } else {
            let (local, time_offset) = if head & 0x80 != 0 {
                ((head >> 5) & 0x03, Some(head & 0x1F))
            } else {
                (head & 0x0F, None)
            };
            let Some(def) = defs.get(usize::from(local)).filter(|d| d.defined) else {
                return Err(fit_err(format!(
                    "data message at byte {msg_start} uses undefined local type {local}"
                )));
            };
            let body = take(pos, def.size)?;
            for &(index, num, fsize) in &def.dev {
                match descriptions.get(index, num) {
                    Some(bsize) if !fsize.is_multiple_of(bsize) => {
                        return Err(dev_size_error(index, num, fsize, bsize));
                    }
                    Some(_) => {}
                    None => {
                        undescribed.get_or_insert_with(|| {
                            fit_err(format!(
                                "data message at byte {msg_start} uses developer field \
                                 {index}/{num} before its description"
                            ))
                        });
                    }
                }
            }
            if def.global == mesg::FIELD_DESCRIPTION {
                let byte_of = |k: usize| body.get(def.desc.get(k).copied().flatten()?).copied();
                if let (Some(index), Some(num), Some(base)) = (byte_of(0), byte_of(1), byte_of(2)) {
                    descriptions.insert(index, num, base_type_size(base));
                }
            }
            let mut fields = Fields::default();
            for w in &def.wanted {
                read_field(body, w, def.big_endian, &mut fields);
            }
            convert.message(def.global, time_offset, &fields);
            pos += def.size;
        }
    }
    match undescribed {
        Some(e) => Err(e),
        None => Ok(convert.finish()),
    }
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

fn enum_u8(x: Option<f64>) -> Option<u8> {
    let x = x?;
    (0.0..255.0).contains(&x).then_some(x as u8)
}

fn fit_time(x: Option<f64>) -> Option<i64> {
    let x = x?;
    (0.0..=f64::from(u32::MAX)).contains(&x).then_some(x as i64)
}

/// Turns data messages, in file order, into what [`build_session`] needs.
#[derive(Default)]
struct Converter {
    raw: Raw,
    /// Last full timestamp seen, the base for compressed-timestamp headers.
    last_ts: Option<i64>,
    distance_acc: Accumulator,
}

impl Converter {
    /// One data message of global number `global`, with the time offset of its
    /// compressed-timestamp header if it has one.
    fn message(&mut self, global: u16, time_offset: Option<u8>, v: &Fields) {
        let ts = match (fit_time(v.get(global, TIMESTAMP)), time_offset) {
            (Some(ts), _) => Some(ts),
            (None, Some(offset)) => self.last_ts.map(|base| {
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
            self.last_ts = ts;
        }
        let f = |n: u8| v.get(global, n);
        let raw = &mut self.raw;
        match global {
            mesg::RECORD => {
                let Some(ts) = ts else { return };
                let lat = f(0)
                    .map(|s| s * DEG_PER_SEMICIRCLE)
                    .filter(|d| d.abs() <= 90.0);
                let lon = f(1).map(|s| s * DEG_PER_SEMICIRCLE);
                let speed = f(73).or_else(|| f(6)).map(|v| v / 1000.0);
                let altitude = f(78).or_else(|| f(2)).map(|v| v / 5.0 - 500.0);
                let cadence = f(4).map(|c| 2.0 * (c + f(53).map_or(0.0, |x| x / 128.0)));
                let distance_acc = &mut self.distance_acc;
                let compressed = v.packed.map(|packed| {
                    let (sp, d) = (packed & 0xFFF, packed >> 12 & 0xFFF);
                    (f64::from(sp) / 100.0, distance_acc.add(d, 12) as f64 / 16.0)
                });
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
                if let (Some(ts), Some(0), Some(kind)) = (ts, enum_u8(f(0)), enum_u8(f(1))) {
                    raw.timer_events.push((ts, kind));
                }
            }
            mesg::LAP => raw.laps.push(RawLap {
                ts,
                start: fit_time(f(2)),
                elapsed_s: f(7).map(|v| v / 1000.0),
                trigger: enum_u8(f(24)),
            }),
            mesg::SESSION => {
                raw.session_sport = raw.session_sport.or(enum_u8(f(5)));
            }
            mesg::SPORT => {
                raw.sport_sport = raw.sport_sport.or(enum_u8(f(0)));
            }
            mesg::TIMESTAMP_CORRELATION => {
                if let (Some(utc), Some(system)) = (ts, fit_time(f(1))) {
                    if utc >= SYSTEM_TIME_LIMIT && system < SYSTEM_TIME_LIMIT {
                        raw.system_offset = Some(utc - system);
                    }
                }
            }
            mesg::DEVICE_SETTINGS => {
                if let Some(offset) = f(2).filter(|o| *o >= 1.0 && *o <= f64::from(u32::MAX)) {
                    raw.system_offset = raw.system_offset.or(Some(offset as i64));
                }
            }
            _ => {}
        }
    }

    fn finish(self) -> Raw {
        self.raw
    }
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
    fn crc_eight_bytes_at_a_time_matches_the_bitwise_definition() {
        // Source: CRC-16/ARC, reflected polynomial 0xA001, init 0, bit by bit.
        fn bitwise(mut crc: u16, data: &[u8]) -> u16 {
            for &b in data {
                crc ^= u16::from(b);
                for _ in 0..8 {
                    crc = if crc & 1 != 0 {
                        (crc >> 1) ^ 0xA001
                    } else {
                        crc >> 1
                    };
                }
            }
            crc
        }
        let mut x = 0x2545_F491_4F6C_DD1Du64;
        let data: Vec<u8> = (0..1000)
            .map(|_| {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                x as u8
            })
            .collect();
        for len in (0..40).chain([255, 256, 999, 1000]) {
            for start in [0u16, 1, 0xBEEF, 0xFFFF] {
                let part = &data[..len];
                assert_eq!(crc16(start, part), bitwise(start, part), "len {len}");
            }
        }
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
        let checked = reference::check_messages(framed).unwrap();
        assert!(matches!(checked, std::borrow::Cow::Owned(_)));
        assert_eq!(checked[14 + 8], 0x0D);
        assert_eq!(crc16(0, &checked), 0);
        // Valid file, but no records: the same error from both paths.
        assert_eq!(
            decode(&file),
            Err(ParseError::Fit("no records with a timestamp".into()))
        );
        assert_eq!(decode(&file), reference::decode_with_fitparser(&file));
    }

    #[test]
    fn invalid_values_per_base_type() {
        // Source: FIT protocol, table "FIT Base Types" (invalid value of each type).
        let cases: [(u8, &[u8]); 16] = [
            (0x00, &[0xFF]),
            (0x01, &[0x7F]),
            (0x02, &[0xFF]),
            (0x83, &[0xFF, 0x7F]),
            (0x84, &[0xFF, 0xFF]),
            (0x85, &[0xFF, 0xFF, 0xFF, 0x7F]),
            (0x86, &[0xFF; 4]),
            (0x88, &[0xFF; 4]),
            (0x89, &[0xFF; 8]),
            (0x0A, &[0]),
            (0x8B, &[0, 0]),
            (0x8C, &[0; 4]),
            (0x0D, &[0xFF]),
            (0x8E, &[0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0x7F]),
            (0x8F, &[0xFF; 8]),
            (0x90, &[0; 8]),
        ];
        for (base, bytes) in cases {
            assert!(!element(bytes, base, false).0, "{base:#04x}");
        }
        // Big-endian: the sint16 invalid value is 0x7FFF in either byte order.
        assert!(!element(&[0x7F, 0xFF], 0x83, true).0);
        assert_eq!(element(&[0x01, 0x02], 0x84, true), (true, 258.0));
        assert_eq!(element(&[0x01, 0x02], 0x84, false), (true, 513.0));
        assert_eq!(element(&[0xFE], 0x01, false), (true, -2.0));
        // Unknown base types read as uint8.
        assert_eq!(element(&[7, 9], 0x11, false), (true, 7.0));
        assert!(!element(&[0xFF], 0x11, false).0);
    }

    #[test]
    fn field_values_follow_the_reference_rules() {
        let field = |base: u8, size: usize, kind: Kind, bytes: &[u8]| {
            let w = Wanted {
                offset: 0,
                size,
                base: effective_base(base, size),
                slot: 1,
                kind,
            };
            let mut out = Fields {
                nums: [Some(-1.0); SLOTS],
                packed: Some(7),
            };
            read_field(bytes, &w, false, &mut out);
            (out.nums[1], out.packed)
        };
        // A valid value replaces, an invalid one leaves the earlier value.
        assert_eq!(field(0x02, 1, Kind::Num, &[80]).0, Some(80.0));
        assert_eq!(field(0x02, 1, Kind::Num, &[0xFF]).0, Some(-1.0));
        // An array is no number, unless its first element is asked for.
        assert_eq!(field(0x02, 2, Kind::Num, &[0xFF, 3]).0, None);
        assert_eq!(field(0x02, 2, Kind::First, &[0xFF, 3]).0, None);
        assert_eq!(field(0x0D, 2, Kind::First, &[0xFF, 3]).0, Some(255.0));
        assert_eq!(
            field(0x86, 8, Kind::First, &[1, 0, 0, 0, 2, 0, 0, 0]).0,
            Some(1.0)
        );
        // An all-invalid array, and an empty field, leave the earlier value.
        assert_eq!(field(0x02, 2, Kind::Num, &[0xFF, 0xFF]).0, Some(-1.0));
        assert_eq!(field(0x02, 0, Kind::Num, &[]).0, Some(-1.0));
        // A size that is not a multiple of the type: bytes, so no number.
        assert_eq!(field(0x84, 3, Kind::Num, &[1, 2, 3]).0, None);
        // Three bytes, packed little-endian; uint8 with an invalid byte is no value.
        assert_eq!(field(0x0D, 3, Kind::Packed3, &[1, 2, 3]).1, Some(0x030201));
        assert_eq!(field(0x84, 3, Kind::Packed3, &[1, 2, 3]).1, Some(0x030201));
        assert_eq!(field(0x02, 3, Kind::Packed3, &[1, 0xFF, 3]).1, None);
        assert_eq!(field(0x0A, 3, Kind::Packed3, &[1, 2, 3]).1, None);
        // A string is valid (clears the slot) when UTF-8, else left out.
        assert_eq!(field(0x07, 2, Kind::Num, b"a\0").0, None);
        assert_eq!(field(0x07, 2, Kind::Num, &[0xC3, 0x28]).0, Some(-1.0));
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
