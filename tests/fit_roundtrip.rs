//! Write sessions with our FIT writer, read them back with our decoder, and read hand-made
//! FIT files that exercise the decoder's conversion rules.

mod fit_common;

use fit_common::{assert_close, fit_file, session};
use splitdesk::demo::fit_writer;
use splitdesk::ingest::{self, fit, ParseError};
use splitdesk::model::{FileFormat, Sport};

#[test]
fn round_trip_within_format_precision() {
    let original = session(1800, false);
    original.check_invariants().unwrap();
    let bytes = fit_writer::write(&original);
    let back = fit::decode(&bytes).unwrap();
    back.check_invariants().unwrap();

    assert_eq!(back.format, FileFormat::Fit);
    assert_eq!(back.sport, Sport::Running);
    assert_eq!(back.start, original.start);
    assert_eq!(back.t, original.t);
    assert_eq!(back.time, original.time);
    assert_eq!(back.len(), 1741); // 1800 s minus the 59 samples inside the pause
                                  // Semicircles: 180/2^31 deg ≈ 8.4e-8, so rounding is within 4.2e-8.
    assert_close("lat", &back.lat, &original.lat, 1e-7);
    assert_close("lon", &back.lon, &original.lon, 1e-7);
    assert_close("distance", &back.distance, &original.distance, 0.01);
    assert_close("speed", &back.speed, &original.speed, 0.001);
    assert_close("hr", &back.hr, &original.hr, 0.0);
    assert_close("cadence", &back.cadence, &original.cadence, 2.0 / 128.0);
    assert_eq!(back.altitude, None);
    let hr = back.hr.as_ref().unwrap();
    assert_eq!(hr.get(5), None);
    assert_eq!(hr.get(6), Some(120.0));
    // i % 211 == 5 is missing: 8 such seconds outside the pause (638 falls inside it).
    assert_eq!(hr.present(), hr.len() - 8);
    assert_eq!(back.pauses, original.pauses);
    assert_eq!(back.laps, original.laps);
    assert_eq!(back.timer_s(), original.timer_s());
}

#[test]
fn round_trip_with_altitude_and_determinism() {
    let original = session(300, true);
    let bytes = fit_writer::write(&original);
    assert_eq!(
        bytes,
        fit_writer::write(&original),
        "same session, same bytes"
    );
    let back = fit::decode(&bytes).unwrap();
    assert_close("altitude", &back.altitude, &original.altitude, 0.2);
    // The last lap in the builder ends at the last sample; 300 s stops before lap 2.
    assert_eq!(back.laps.len(), 3);
    // Through the full ingest path.
    let ingested = ingest::ingest_bytes(&bytes, FileFormat::Fit, None).unwrap();
    assert_eq!(ingested.content_hash.len(), 64);
    assert_eq!(ingested.t, original.t);
}

#[test]
fn session_without_laps_gets_one_whole_lap() {
    let mut original = session(120, false);
    original.laps.clear();
    original.pauses.clear();
    let back = fit::decode(&fit_writer::write(&original)).unwrap();
    assert_eq!(back.laps.len(), 1);
    assert_eq!(back.laps[0].start_s, 0.0);
    assert_eq!(back.laps[0].end_s, 119.0);
    assert_eq!(back.laps[0].trigger.as_deref(), Some("session_end"));
}

#[test]
fn fractional_times_round_to_whole_seconds() {
    let mut original = session(10, false);
    original.laps.clear();
    original.pauses.clear();
    for (i, t) in original.time.iter_mut().enumerate() {
        *t += chrono::Duration::milliseconds(if i == 3 { 600 } else { 200 });
    }
    let back = fit::decode(&fit_writer::write(&original)).unwrap();
    // 3.6 s rounds to 4 s, which merges with the sample at 4.2 s.
    assert_eq!(back.t, vec![0.0, 1.0, 2.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]);
}

// --- hand-made files -------------------------------------------------------------------

const FIT_EPOCH: i64 = 631_065_600;

fn definition(local: u8, global: u16, big_endian: bool, fields: &[(u8, u8, u8)]) -> Vec<u8> {
    let mut m = vec![0x40 | local, 0, u8::from(big_endian)];
    if big_endian {
        m.extend_from_slice(&global.to_be_bytes());
    } else {
        m.extend_from_slice(&global.to_le_bytes());
    }
    m.push(fields.len() as u8);
    for f in fields {
        m.extend_from_slice(&[f.0, f.1, f.2]);
    }
    m
}

#[test]
fn enhanced_fields_win_and_invalid_values_become_none() {
    // record: timestamp, speed (uint16), enhanced_speed (uint32), altitude (uint16),
    // enhanced_altitude (uint32), heart_rate (uint8), cadence (uint8), position_lat (sint32)
    let mut m = definition(
        0,
        20,
        false,
        &[
            (253, 4, 0x86),
            (6, 2, 0x84),
            (73, 4, 0x86),
            (2, 2, 0x84),
            (78, 4, 0x86),
            (3, 1, 0x02),
            (4, 1, 0x02),
            (0, 4, 0x85),
        ],
    );
    let ts = 1_000_000_000u32;
    m.push(0);
    m.extend_from_slice(&ts.to_le_bytes());
    m.extend_from_slice(&3000u16.to_le_bytes()); // 3.000 m/s
    m.extend_from_slice(&3456u32.to_le_bytes()); // 3.456 m/s, preferred
    m.extend_from_slice(&2600u16.to_le_bytes()); // 20 m
    m.extend_from_slice(&2610u32.to_le_bytes()); // 22 m, preferred
    m.push(0xFF); // invalid heart rate
    m.push(85); // 85 strides/min, no fractional field
    m.extend_from_slice(&0x7FFF_FFFFi32.to_le_bytes()); // invalid latitude
                                                        // second record: only the 16-bit fields, valid heart rate
    m.extend_from_slice(&definition(
        1,
        20,
        false,
        &[(253, 4, 0x86), (6, 2, 0x84), (2, 2, 0x84), (3, 1, 0x02)],
    ));
    m.push(1);
    m.extend_from_slice(&(ts + 1).to_le_bytes());
    m.extend_from_slice(&3000u16.to_le_bytes());
    m.extend_from_slice(&2600u16.to_le_bytes());
    m.push(150);
    let s = fit::decode(&fit_file(&m)).unwrap();
    assert_eq!(s.start.timestamp(), i64::from(ts) + FIT_EPOCH);
    assert_eq!(
        s.speed.as_ref().unwrap().values,
        vec![Some(3.456), Some(3.0)]
    );
    assert_eq!(
        s.altitude.as_ref().unwrap().values,
        vec![Some(22.0), Some(20.0)]
    );
    assert_eq!(s.hr.as_ref().unwrap().values, vec![None, Some(150.0)]);
    assert_eq!(s.cadence.as_ref().unwrap().values, vec![Some(170.0), None]);
    assert_eq!(s.lat, None, "an all-invalid channel is absent");
    assert_eq!(s.sport, Sport::Unknown);
}

#[test]
fn out_of_order_duplicates_compressed_timestamps_and_big_endian() {
    let ts = 1_000_000_000u32; // ts % 32 == 0
    let mut m = definition(0, 20, true, &[(253, 4, 0x86), (3, 1, 0x02)]);
    let rec = |m: &mut Vec<u8>, t: u32, hr: u8| {
        m.push(0);
        m.extend_from_slice(&t.to_be_bytes());
        m.push(hr);
    };
    rec(&mut m, ts + 10, 110);
    rec(&mut m, ts, 100);
    rec(&mut m, ts + 5, 105);
    rec(&mut m, ts + 5, 255); // duplicate second, invalid HR: merged away
                              // compressed-timestamp record on local type 1 (timestamp-less definition): offset 12
    m.extend_from_slice(&definition(1, 20, false, &[(3, 1, 0x02)]));
    m.push(0x80 | (1 << 5) | 12);
    m.push(112);
    // a record with no timestamp at all is skipped
    m.push(1);
    m.push(99);
    // the sport message
    m.extend_from_slice(&definition(2, 12, false, &[(0, 1, 0x00)]));
    m.extend_from_slice(&[2, 2]); // cycling
    let s = fit::decode(&fit_file(&m)).unwrap();
    s.check_invariants().unwrap();
    assert_eq!(s.t, vec![0.0, 5.0, 10.0, 12.0]);
    assert_eq!(
        s.hr.unwrap().values,
        vec![Some(100.0), Some(105.0), Some(110.0), Some(112.0)]
    );
    assert_eq!(s.sport, Sport::Cycling);
}

#[test]
fn valid_file_without_records_is_an_error() {
    let m = definition(0, 0, false, &[(0, 1, 0x00)]);
    let mut m = m;
    m.extend_from_slice(&[0, 4]);
    assert_eq!(
        fit::decode(&fit_file(&m)),
        Err(ParseError::Fit("no records with a timestamp".into()))
    );
}
