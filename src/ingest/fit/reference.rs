//! The former FIT path on fitparser (crates.io), kept as the reference for
//! `tests/fit_reader_vs_fitparser.rs` only: the production decoder ([`super::decode`]) never
//! calls it.
//!
//! Same framing, then a pre-scan that rejects what would make fitparser misbehave (a message
//! running past the data section, an undefined local type, a developer field whose size is
//! not a multiple of its base type) and rewrites a normal field whose size is not a multiple
//! of its base type to `byte` on a private copy (fitparser would print about it and read it
//! as bytes anyway), then fitparser's stream processor splits the messages and reads raw
//! values, which go through the same conversion as the production reader. Developer
//! `field_description` messages go through fitparser's profile decode, which it needs to
//! read later developer fields.

use std::borrow::Cow;
use std::collections::HashMap;

use fitparser::de::{FitObject, FitStreamProcessor};
use fitparser::Value;

use super::{
    base_type_size, build_session, dev_size_error, fit_err, frame, mesg, slot_of, trailing_warning,
    Converter, Fields, Kind, ParseError, Raw,
};
use crate::model::Session;

/// Decode as the production decoder does, but with fitparser's stream processor reading the
/// messages. Not for production use.
#[doc(hidden)]
pub fn decode_with_fitparser(bytes: &[u8]) -> Result<Session, ParseError> {
    let file = frame(bytes)?;
    let trailing = trailing_warning(bytes, file.len());
    let file = check_messages(file)?;
    let raw = std::panic::catch_unwind(|| read_with_fitparser(&file)).map_err(|panic| {
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

/// What the pre-scan keeps of a definition message.
struct ScanDef {
    global: u16,
    /// Bytes of a data message after its one-byte header.
    size: usize,
    /// (field number, offset in the data message, size), for field descriptions.
    fields: Vec<(u8, usize, usize)>,
    /// (developer data index, field number, size).
    dev: Vec<(u8, u8, usize)>,
}

/// Walk every message of a framed FIT file the way fitparser will, and reject or repair what
/// would make it panic or print. Returns the file, copied only when a definition was rewritten.
#[doc(hidden)]
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
            let mut dev = Vec::new();
            let mut size = 0usize;
            for (k, f) in field_bytes.chunks_exact(3).enumerate() {
                let &[num, fsize, base] = f else { continue };
                let (fsize, base) = (usize::from(fsize), base & 0x9F);
                if !fsize.is_multiple_of(base_type_size(base)) {
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
                        if !fsize.is_multiple_of(bsize) {
                            return Err(dev_size_error(index, num, fsize, bsize));
                        }
                    }
                    dev.push((index, num, fsize));
                    size += fsize;
                }
                pos += 3 * n_dev;
            }
            if let Some(slot) = defs.get_mut(usize::from(head & 0x0F)) {
                *slot = Some(ScanDef {
                    global,
                    size,
                    fields,
                    dev,
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
            // A description that arrived after the definition: fitparser would read the
            // field with a size that is not a multiple of its type and lose step.
            for &(index, num, fsize) in &def.dev {
                if let Some(&bsize) = dev_types.get(&(index, num)) {
                    if !fsize.is_multiple_of(bsize) {
                        return Err(dev_size_error(index, num, fsize, bsize));
                    }
                }
            }
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
    let crc = super::crc16(0, copy.get(..data_end).unwrap_or_default()).to_le_bytes();
    if let Some(tail) = copy.get_mut(data_end..) {
        tail.copy_from_slice(&crc);
    }
    Ok(Cow::Owned(copy))
}

/// The three bytes of `compressed_speed_distance`, packed little-endian.
fn compressed_speed_distance(v: &Value) -> Option<u32> {
    let Value::Array(items) = v else {
        return None;
    };
    let byte = |i: usize| match items.get(i) {
        Some(Value::Byte(b) | Value::UInt8(b)) => Some(u32::from(*b)),
        _ => None,
    };
    Some(byte(0)? | byte(1)? << 8 | byte(2)? << 16)
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

/// fitparser's raw fields of one message, in our slots.
fn fields_of(global: u16, raw: &HashMap<u8, Value>) -> Fields {
    let mut fields = Fields::default();
    for (&n, v) in raw {
        match slot_of(global, n) {
            Some((_, Kind::Num)) => fields.set(global, n, num(v)),
            Some((_, Kind::First)) => {
                let first = match v {
                    Value::Array(items) => items.first().and_then(num),
                    v => num(v),
                };
                fields.set(global, n, first);
            }
            Some((_, Kind::Packed3)) => fields.set_packed(compressed_speed_distance(v)),
            None => {}
        }
    }
    fields
}

/// Split the framed, checked file into messages with fitparser and convert them.
fn read_with_fitparser(file: &[u8]) -> Result<Raw, ParseError> {
    let mut processor = FitStreamProcessor::new();
    let mut convert = Converter::default();
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
        let global = msg.global_message_number();
        convert.message(global, msg.time_offset(), &fields_of(global, msg.fields()));
        if global == mesg::FIELD_DESCRIPTION {
            processor
                .decode_message(msg)
                .map_err(|e| fit_err(format!("bad developer field description: {e}")))?;
        }
    }
    Ok(convert.finish())
}
