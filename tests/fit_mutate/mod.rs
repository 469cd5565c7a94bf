//! FIT mutations shared by `fit_mutations.rs` and `fit_reader_vs_fitparser.rs`: our writer's
//! output split into messages, changed structurally, and re-framed with a correct header,
//! data size and both CRCs.
#![allow(dead_code)]

use crate::fit_common::{self, XorShift};
use splitdesk::demo::fit_writer;
use splitdesk::model::Sport;

/// FIT CRC-16.
// Source: Garmin FIT SDK, "FIT Protocol" document, section "CRC" (the nibble table and the
// `FitCRC_Get16` routine given there): polynomial 0xA001 (reflected 0x8005), initial value 0.
pub fn fit_crc(mut crc: u16, bytes: &[u8]) -> u16 {
    const TABLE: [u16; 16] = [
        0x0000, 0xCC01, 0xD801, 0x1400, 0xF001, 0x3C00, 0x2800, 0xE401, 0xA001, 0x6C00, 0x7800,
        0xB401, 0x5000, 0x9C01, 0x8801, 0x4400,
    ];
    for &byte in bytes {
        let tmp = TABLE[usize::from(crc & 0xF)];
        crc = (crc >> 4) & 0x0FFF;
        crc = crc ^ tmp ^ TABLE[usize::from(byte & 0xF)];
        let tmp = TABLE[usize::from(crc & 0xF)];
        crc = (crc >> 4) & 0x0FFF;
        crc = crc ^ tmp ^ TABLE[usize::from((byte >> 4) & 0xF)];
    }
    crc
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FieldDef {
    pub num: u8,
    pub size: u8,
    pub base: u8,
}

#[derive(Debug, Clone, PartialEq)]
pub enum Msg {
    Def {
        local: u8,
        big_endian: bool,
        global: u16,
        fields: Vec<FieldDef>,
        /// Developer fields: (number, size, developer data index).
        dev: Vec<(u8, u8, u8)>,
    },
    /// A data message; `compressed` holds the time offset of a compressed-timestamp header.
    Data {
        local: u8,
        compressed: Option<u8>,
        bytes: Vec<u8>,
    },
}

/// A FIT file split into messages (our writer's output: 14-byte header, no chaining).
#[derive(Debug, Clone)]
pub struct Fit {
    pub protocol: u8,
    pub profile: u16,
    pub msgs: Vec<Msg>,
}

pub fn parse(bytes: &[u8]) -> Fit {
    assert_eq!(bytes[0], 14, "our writer writes a 14-byte header");
    let protocol = bytes[1];
    let profile = u16::from_le_bytes([bytes[2], bytes[3]]);
    let size = u32::from_le_bytes([bytes[4], bytes[5], bytes[6], bytes[7]]) as usize;
    let data = &bytes[14..14 + size];
    let mut defs: std::collections::HashMap<u8, usize> = Default::default();
    let mut msgs = Vec::new();
    let mut i = 0;
    while i < data.len() {
        let h = data[i];
        i += 1;
        if h & 0x80 != 0 {
            let local = (h >> 5) & 0x3;
            let n = defs[&local];
            msgs.push(Msg::Data {
                local,
                compressed: Some(h & 0x1F),
                bytes: data[i..i + n].to_vec(),
            });
            i += n;
        } else if h & 0x40 != 0 {
            let local = h & 0xF;
            let big_endian = data[i + 1] == 1;
            let g = [data[i + 2], data[i + 3]];
            let global = if big_endian {
                u16::from_be_bytes(g)
            } else {
                u16::from_le_bytes(g)
            };
            let count = usize::from(data[i + 4]);
            i += 5;
            let mut fields = Vec::new();
            for _ in 0..count {
                fields.push(FieldDef {
                    num: data[i],
                    size: data[i + 1],
                    base: data[i + 2],
                });
                i += 3;
            }
            let mut dev = Vec::new();
            if h & 0x20 != 0 {
                let n = usize::from(data[i]);
                i += 1;
                for _ in 0..n {
                    dev.push((data[i], data[i + 1], data[i + 2]));
                    i += 3;
                }
            }
            let n = fields.iter().map(|f| usize::from(f.size)).sum::<usize>()
                + dev.iter().map(|d| usize::from(d.1)).sum::<usize>();
            defs.insert(local, n);
            msgs.push(Msg::Def {
                local,
                big_endian,
                global,
                fields,
                dev,
            });
        } else {
            let local = h & 0xF;
            let n = defs[&local];
            msgs.push(Msg::Data {
                local,
                compressed: None,
                bytes: data[i..i + n].to_vec(),
            });
            i += n;
        }
    }
    Fit {
        protocol,
        profile,
        msgs,
    }
}

/// The messages as bytes, then a fresh 14-byte header (with its CRC) and the file CRC.
/// `cut` keeps only that many data bytes (a truncation the header agrees with).
pub fn encode(fit: &Fit, cut: Option<usize>) -> Vec<u8> {
    let mut data = Vec::new();
    for m in &fit.msgs {
        match m {
            Msg::Def {
                local,
                big_endian,
                global,
                fields,
                dev,
            } => {
                let dev_flag = if dev.is_empty() { 0 } else { 0x20 };
                data.push(0x40 | dev_flag | (local & 0xF));
                data.push(0);
                data.push(u8::from(*big_endian));
                if *big_endian {
                    data.extend_from_slice(&global.to_be_bytes());
                } else {
                    data.extend_from_slice(&global.to_le_bytes());
                }
                data.push(fields.len() as u8);
                for f in fields {
                    data.extend_from_slice(&[f.num, f.size, f.base]);
                }
                if !dev.is_empty() {
                    data.push(dev.len() as u8);
                    for d in dev {
                        data.extend_from_slice(&[d.0, d.1, d.2]);
                    }
                }
            }
            Msg::Data {
                local,
                compressed,
                bytes,
            } => {
                match compressed {
                    Some(offset) => data.push(0x80 | ((local & 0x3) << 5) | (offset & 0x1F)),
                    None => data.push(local & 0xF),
                }
                data.extend_from_slice(bytes);
            }
        }
    }
    if let Some(n) = cut {
        data.truncate(n);
    }
    let mut out = vec![14u8, fit.protocol];
    out.extend_from_slice(&fit.profile.to_le_bytes());
    out.extend_from_slice(&(data.len() as u32).to_le_bytes());
    out.extend_from_slice(b".FIT");
    let header_crc = fit_crc(0, &out);
    out.extend_from_slice(&header_crc.to_le_bytes());
    out.extend_from_slice(&data);
    let file_crc = fit_crc(0, &out);
    out.extend_from_slice(&file_crc.to_le_bytes());
    out
}

/// FIT base types (FIT SDK profile, "Base Types" table) plus two that do not exist.
// Source: Garmin FIT SDK, "FIT Protocol" document, table "FIT Base Types".
pub const BASE_TYPES: [u8; 19] = [
    0x00, 0x01, 0x02, 0x83, 0x84, 0x85, 0x86, 0x07, 0x88, 0x89, 0x0A, 0x8B, 0x8C, 0x0D, 0x8E, 0x8F,
    0x90, 0x11, 0xE7,
];

/// Global message numbers worth swapping in (FIT SDK profile): file_id 0, sport 12,
/// session 18, lap 19, record 20, event 21, device_info 23, activity 34, field_description
/// 206, developer_data_id 207, and an unknown one.
// Source: Garmin FIT SDK, Profile.xlsx, "Messages" sheet (mesg_num values).
pub const GLOBALS: [u16; 11] = [0, 12, 18, 19, 20, 21, 23, 34, 206, 207, 0xFF00];

pub struct Rng(pub XorShift);

impl Rng {
    pub fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            (self.0.next_u64() % n as u64) as usize
        }
    }
    pub fn byte(&mut self) -> u8 {
        self.0.next_u64() as u8
    }
    pub fn pick<T: Copy>(&mut self, xs: &[T]) -> T {
        xs[self.below(xs.len())]
    }
}

pub fn def_indices(fit: &Fit) -> Vec<usize> {
    (0..fit.msgs.len())
        .filter(|&i| matches!(fit.msgs[i], Msg::Def { .. }))
        .collect()
}

/// Indices of the data messages that use the definition at `d` (up to the next definition of
/// the same local type).
pub fn users(fit: &Fit, d: usize) -> Vec<usize> {
    let Msg::Def { local, .. } = fit.msgs[d] else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for (i, m) in fit.msgs.iter().enumerate().skip(d + 1) {
        match m {
            Msg::Def { local: l, .. } if *l == local => break,
            Msg::Data { local: l, .. } if *l == local => out.push(i),
            _ => {}
        }
    }
    out
}

/// Byte offset of field `k` inside the data messages of a definition.
pub fn field_offset(fields: &[FieldDef], k: usize) -> usize {
    fields[..k].iter().map(|f| usize::from(f.size)).sum()
}

/// One structural mutation. `consistent` mutations keep data messages in step with their
/// definition (the stream stays parseable); the others leave them out of step on purpose.
/// Returns a short description, and sets `cut` for a truncation.
pub fn mutate(fit: &mut Fit, rng: &mut Rng, cut: &mut Option<usize>) -> String {
    let defs = def_indices(fit);
    let d = rng.pick(&defs);
    let data_users = users(fit, d);
    let kind = rng.below(14);
    let def = fit.msgs[d].clone();
    let Msg::Def {
        fields,
        global,
        big_endian,
        local,
        dev,
    } = &def
    else {
        unreachable!()
    };
    let mut new_def = fit.msgs[d].clone();
    let describe;
    match kind {
        // A field's size changes; the data follows (padding with 0xFF or cutting).
        0 if !fields.is_empty() => {
            let k = rng.below(fields.len());
            let old = usize::from(fields[k].size);
            let new = rng.pick(&[0usize, 1, 2, 3, 5, 7, 16, 255]);
            let at = field_offset(fields, k);
            if let Msg::Def { fields: f, .. } = &mut new_def {
                f[k].size = new as u8;
            }
            for &u in &data_users {
                // (An earlier mutation may have put this message out of step: skip it.)
                if let Msg::Data { bytes, .. } = &mut fit.msgs[u] {
                    if bytes.len() < at + old {
                        continue;
                    }
                    let mut field: Vec<u8> = bytes[at..at + old].to_vec();
                    field.resize(new, 0xFF);
                    bytes.splice(at..at + old, field);
                }
            }
            describe = format!("global {global}: field {k} size {old} -> {new}");
        }
        // A field's size changes, the data does not: the stream is out of step.
        1 if !fields.is_empty() => {
            let k = rng.below(fields.len());
            let new = rng.byte();
            if let Msg::Def { fields: f, .. } = &mut new_def {
                f[k].size = new;
            }
            describe = format!("global {global}: field {k} size -> {new}, data unchanged");
        }
        // A field's base type changes.
        2 if !fields.is_empty() => {
            let k = rng.below(fields.len());
            let base = rng.pick(&BASE_TYPES);
            if let Msg::Def { fields: f, .. } = &mut new_def {
                f[k].base = base;
            }
            describe = format!("global {global}: field {k} base type -> {base:#04x}");
        }
        // A field is added (with bytes in every data message) or removed.
        3 => {
            if rng.below(2) == 0 || fields.is_empty() {
                let num = rng.pick(&[253u8, 0, 1, 2, 3, 4, 5, 6, 7, 8, 13, 73, 78, 136, 254]);
                let size = rng.pick(&[1u8, 2, 4, 8]);
                let base = rng.pick(&BASE_TYPES);
                let at = rng.below(fields.len() + 1);
                let off = field_offset(fields, at);
                if let Msg::Def { fields: f, .. } = &mut new_def {
                    f.insert(at, FieldDef { num, size, base });
                }
                for &u in &data_users {
                    let fill: Vec<u8> = (0..size).map(|_| rng.byte()).collect();
                    if let Msg::Data { bytes, .. } = &mut fit.msgs[u] {
                        if bytes.len() < off {
                            continue;
                        }
                        bytes.splice(off..off, fill);
                    }
                }
                describe = format!("global {global}: field {num} added at {at}");
            } else {
                let k = rng.below(fields.len());
                let off = field_offset(fields, k);
                let size = usize::from(fields[k].size);
                if let Msg::Def { fields: f, .. } = &mut new_def {
                    f.remove(k);
                }
                for &u in &data_users {
                    if let Msg::Data { bytes, .. } = &mut fit.msgs[u] {
                        if bytes.len() < off + size {
                            continue;
                        }
                        bytes.drain(off..off + size);
                    }
                }
                describe = format!("global {global}: field {k} removed");
            }
        }
        // The message number changes (a record read as a lap, an event as a session...).
        4 => {
            let g = rng.pick(&GLOBALS);
            if let Msg::Def { global: x, .. } = &mut new_def {
                *x = g;
            }
            describe = format!("global {global} -> {g}");
        }
        // A field number changes (duplicates included).
        5 if !fields.is_empty() => {
            let k = rng.below(fields.len());
            let num = if rng.below(2) == 0 {
                fields[rng.below(fields.len())].num
            } else {
                rng.byte()
            };
            if let Msg::Def { fields: f, .. } = &mut new_def {
                f[k].num = num;
            }
            describe = format!("global {global}: field {k} number -> {num}");
        }
        // The architecture flips without the data being swapped.
        6 => {
            if let Msg::Def { big_endian: b, .. } = &mut new_def {
                *b = !*big_endian;
            }
            describe = format!("global {global}: architecture flipped");
        }
        // Values: one field of many data messages set to invalid, zero, extreme or random.
        7 | 8 if !fields.is_empty() && !data_users.is_empty() => {
            let k = rng.below(fields.len());
            let off = field_offset(fields, k);
            let size = usize::from(fields[k].size);
            let style = rng.below(5);
            let every = 1 + rng.below(4);
            for &u in data_users.iter().step_by(every) {
                let fill: Vec<u8> = (0..size)
                    .map(|j| match style {
                        0 => 0xFF,
                        1 => 0x00,
                        2 => {
                            if j + 1 == size {
                                0x7F
                            } else {
                                0xFF
                            }
                        }
                        3 => 0x80,
                        _ => rng.byte(),
                    })
                    .collect();
                if let Msg::Data { bytes, .. } = &mut fit.msgs[u] {
                    if bytes.len() < off + size {
                        continue;
                    }
                    bytes.splice(off..off + size, fill);
                }
            }
            describe = format!("global {global}: field {k} values style {style} every {every}");
        }
        // Truncation, the header agreeing with the shorter data.
        9 => {
            let total: usize = encode(fit, None).len() - 16;
            let n = rng.below(total);
            *cut = Some(n);
            describe = format!("data cut to {n} bytes");
        }
        // A definition is duplicated elsewhere, or another layout redefines its local type
        // in the middle of its data.
        10 => {
            let at = rng.below(fit.msgs.len() + 1);
            let mut copy = fit.msgs[d].clone();
            if rng.below(2) == 0 {
                if let Msg::Def { fields: f, .. } = &mut copy {
                    f.reverse();
                }
            }
            fit.msgs.insert(at, copy);
            describe = format!("definition of local {local} (global {global}) copied to {at}");
            return describe;
        }
        // Records reordered: a block moved, or records duplicated (time going backwards).
        11 if data_users.len() > 4 => {
            let a = data_users[rng.below(data_users.len())];
            let b = data_users[rng.below(data_users.len())];
            if rng.below(2) == 0 {
                fit.msgs.swap(a, b);
                describe = format!("data messages {a} and {b} swapped");
            } else {
                let copy = fit.msgs[a].clone();
                fit.msgs.insert(b, copy);
                describe = format!("data message {a} duplicated at {b}");
            }
            return describe;
        }
        // Compressed-timestamp headers on some data messages (local types 0-3 only).
        12 if *local < 4 => {
            for &u in data_users.iter().step_by(1 + rng.below(5)) {
                if let Msg::Data { compressed, .. } = &mut fit.msgs[u] {
                    *compressed = Some(rng.byte() & 0x1F);
                }
            }
            describe = format!("local {local}: compressed timestamps");
        }
        // A developer field on a definition, with or without the developer data id.
        13 => {
            let size = rng.pick(&[1u8, 2, 3, 4]);
            if let Msg::Def { dev: dv, .. } = &mut new_def {
                dv.push((rng.below(4) as u8, size, rng.below(2) as u8));
            }
            for &u in &data_users {
                if let Msg::Data { bytes, .. } = &mut fit.msgs[u] {
                    bytes.extend((0..size).map(|_| 0x11));
                }
            }
            describe = format!(
                "global {global}: developer field of {size} bytes ({} before)",
                dev.len()
            );
        }
        _ => {
            // Data messages of one local type dropped: definitions without data.
            let before = fit.msgs.len();
            let drop: std::collections::BTreeSet<usize> = data_users.into_iter().collect();
            let mut i = 0;
            fit.msgs.retain(|_| {
                i += 1;
                !drop.contains(&(i - 1))
            });
            return format!(
                "data of local {local} dropped ({} messages)",
                before - fit.msgs.len()
            );
        }
    }
    fit.msgs[d] = new_def;
    describe
}

/// The writer's output for three small sessions: a run with every channel, laps and a
/// pause; a run without positions; a ride.
pub fn bases() -> Vec<Vec<u8>> {
    let run = fit_common::session(700, true);
    let mut bare = fit_common::session(240, false);
    bare.lat = None;
    bare.lon = None;
    let mut ride = fit_common::session(180, true);
    ride.sport = Sport::Cycling;
    [run, bare, ride].iter().map(fit_writer::write).collect()
}
