//! Helpers shared by the FIT integration tests: a synthetic session and raw FIT framing.
#![allow(dead_code)]

use chrono::{DateTime, Duration, TimeZone, Utc};
use splitdesk::ingest::fit::crc16;
use splitdesk::model::{Channel, DeviceLap, FileFormat, Pause, Session, Sport};

pub fn start() -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2024, 5, 4, 6, 30, 0).single().unwrap()
}

/// A 1 Hz run of `secs` seconds with a 60-s pause at 600 s (no samples inside it), three
/// laps over thirds of it, a few missing heart-rate samples, fractional cadence, and no altitude channel
/// unless `altitude` is set.
pub fn session(secs: usize, altitude: bool) -> Session {
    let start = start();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = Sport::Running;
    let pause = (600.0, 660.0);
    let (mut lat, mut lon, mut dist, mut speed, mut hr, mut cad, mut alt) =
        (vec![], vec![], vec![], vec![], vec![], vec![], vec![]);
    let mut d = 0.0;
    for i in 0..secs {
        let t = i as f64;
        if t > pause.0 && t < pause.1 {
            continue;
        }
        let v = 3.2 + 0.8 * (t / 97.0).sin();
        d += v;
        s.t.push(t);
        s.time.push(start + Duration::seconds(i as i64));
        lat.push(Some(52.370_216_7 + 0.01 * (t / 400.0).sin()));
        lon.push(Some(4.895_167_9 + 0.015 * (t / 400.0).cos()));
        dist.push(Some(d));
        speed.push(Some(v));
        hr.push(if i % 211 == 5 {
            None
        } else {
            Some((120.0 + t / 40.0).round())
        });
        cad.push(Some(170.0 + 12.0 * (t / 53.0).sin()));
        alt.push(Some(-3.0 + 25.0 * (t / 300.0).cos()));
    }
    s.lat = Some(Channel::new(lat));
    s.lon = Some(Channel::new(lon));
    s.distance = Some(Channel::new(dist));
    s.speed = Some(Channel::new(speed));
    s.hr = Some(Channel::new(hr));
    s.cadence = Some(Channel::new(cad));
    s.altitude = altitude.then(|| Channel::new(alt));
    s.pauses = vec![Pause {
        from_s: pause.0,
        to_s: pause.1,
    }];
    let end = s.duration_s();
    let (a, b) = ((end / 3.0).round(), (2.0 * end / 3.0).round());
    s.laps = vec![
        DeviceLap {
            start_s: 0.0,
            end_s: a,
            trigger: Some("distance".into()),
        },
        DeviceLap {
            start_s: a,
            end_s: b,
            trigger: Some("manual".into()),
        },
        DeviceLap {
            start_s: b,
            end_s: end,
            trigger: Some("session_end".into()),
        },
    ];
    s
}

/// Wrap message bytes in a 12-byte-header FIT file with a correct CRC.
pub fn fit_file(messages: &[u8]) -> Vec<u8> {
    let mut f = vec![12u8, 0x10, 0x08, 0x08];
    f.extend_from_slice(&(messages.len() as u32).to_le_bytes());
    f.extend_from_slice(b".FIT");
    f.extend_from_slice(messages);
    let crc = crc16(0, &f);
    f.extend_from_slice(&crc.to_le_bytes());
    f
}

/// Seeded xorshift64* bytes.
pub struct XorShift(pub u64);

impl XorShift {
    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    pub fn bytes(&mut self, n: usize) -> Vec<u8> {
        let mut out = Vec::with_capacity(n + 8);
        while out.len() < n {
            out.extend_from_slice(&self.next_u64().to_le_bytes());
        }
        out.truncate(n);
        out
    }
}

pub fn assert_close(name: &str, a: &Option<Channel>, b: &Option<Channel>, tol: f64) {
    let (a, b) = match (a, b) {
        (Some(a), Some(b)) => (a, b),
        (None, None) => return,
        _ => panic!("{name}: present in one session only"),
    };
    assert_eq!(a.len(), b.len(), "{name}: length");
    for (i, (x, y)) in a.values.iter().zip(&b.values).enumerate() {
        match (x, y) {
            (Some(x), Some(y)) => assert!((x - y).abs() <= tol, "{name}[{i}]: {x} vs {y}"),
            (None, None) => {}
            _ => panic!("{name}[{i}]: {x:?} vs {y:?}"),
        }
    }
}
