//! Shared builders for the `clean_*` integration tests: seeded random numbers and
//! synthetic sessions.
#![allow(dead_code)]

use chrono::{DateTime, Duration, Utc};
use geo::{Destination, Geodesic, Point};
use splitdesk::model::{Channel, FileFormat, Session, Sport};

/// Tiny xorshift64* generator: deterministic, no dependency.
pub struct XorShift(u64);

impl XorShift {
    pub fn new(seed: u64) -> XorShift {
        XorShift(seed.max(1))
    }

    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    /// Uniform in [0, 1).
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Uniform in [a, b).
    pub fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.unit()
    }
}

pub fn start() -> DateTime<Utc> {
    DateTime::from_timestamp(1_714_806_000, 0).unwrap_or_default()
}

/// An empty running session with the given sample times.
pub fn session_at(t: Vec<f64>) -> Session {
    let s0 = start();
    let mut s = Session::empty(FileFormat::Fit, s0);
    s.sport = Sport::Running;
    s.time = t
        .iter()
        .map(|x| s0 + Duration::milliseconds((x * 1000.0).round() as i64))
        .collect();
    s.t = t;
    s
}

/// Sample times 0, 1, ..., n-1 seconds.
pub fn one_hz(n: usize) -> Vec<f64> {
    (0..n).map(|i| i as f64).collect()
}

/// Sample times with random spacing of 1..=7 whole seconds (smart recording), up to `end_s`.
pub fn smart_times(seed: u64, end_s: f64) -> Vec<f64> {
    let mut rng = XorShift::new(seed);
    let mut t = vec![0.0];
    let mut now = 0.0;
    loop {
        now += 1.0 + (rng.next_u64() % 7) as f64;
        if now > end_s {
            break;
        }
        t.push(now);
    }
    t
}

/// A track on the WGS84 ellipsoid: from (lat0, lon0), moving at `speed(t)` m/s on
/// `bearing(t)` degrees, stepped with Karney's geodesic (geo's `Geodesic`).
/// Returns (lat, lon, true cumulative geodesic distance).
pub fn track(
    t: &[f64],
    lat0: f64,
    lon0: f64,
    speed: impl Fn(f64) -> f64,
    bearing: impl Fn(f64) -> f64,
) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut lat = Vec::with_capacity(t.len());
    let mut lon = Vec::with_capacity(t.len());
    let mut dist = Vec::with_capacity(t.len());
    let mut p = Point::new(lon0, lat0);
    let mut d = 0.0;
    let mut prev_t = t.first().copied().unwrap_or(0.0);
    for &ti in t {
        let dt = ti - prev_t;
        if dt > 0.0 {
            let mid = prev_t + dt / 2.0;
            let step = speed(mid) * dt;
            p = Geodesic.destination(p, bearing(mid), step);
            d += step;
        }
        prev_t = ti;
        lat.push(p.y());
        lon.push(p.x());
        dist.push(d);
    }
    (lat, lon, dist)
}

/// Add uniform GPS noise of up to `metres` in each axis.
pub fn add_gps_noise(lat: &mut [f64], lon: &mut [f64], metres: f64, rng: &mut XorShift) {
    for (la, lo) in lat.iter_mut().zip(lon.iter_mut()) {
        let north = rng.range(-metres, metres);
        let east = rng.range(-metres, metres);
        *lo += east / (111_320.0 * la.to_radians().cos());
        *la += north / 111_320.0;
    }
}

/// The clean synthetic run of the brief: 1 Hz, 40 min, HR rising gently 120 -> 165 bpm,
/// cadence 170-180 spm, speed 3-4 m/s, positions with ±1.5 m GPS noise, rolling altitude.
pub fn clean_run(seed: u64) -> Session {
    let n = 2400;
    let t = one_hz(n);
    clean_run_at(seed, t)
}

/// The clean run at arbitrary sample times (e.g. smart recording).
pub fn clean_run_at(seed: u64, t: Vec<f64>) -> Session {
    let mut rng = XorShift::new(seed);
    let end = t.last().copied().unwrap_or(1.0).max(1.0);
    let speed = |x: f64| 3.5 + 0.5 * (x / 90.0).sin();
    let (mut lat, mut lon, _) = track(&t, 51.5, -0.12, speed, |x| 20.0 + 40.0 * (x / 600.0).sin());
    add_gps_noise(&mut lat, &mut lon, 1.5, &mut rng);
    let hr: Vec<f64> = t
        .iter()
        .map(|&x| (120.0 + 45.0 * x / end + (x / 7.0).sin()).round())
        .collect();
    let cad: Vec<f64> = t
        .iter()
        .map(|&x| (175.0 + 5.0 * (x / 13.0).sin()).round())
        .collect();
    let spd: Vec<f64> = t
        .iter()
        .map(|&x| speed(x) + rng.range(-0.05, 0.05))
        .collect();
    let alt: Vec<f64> = t.iter().map(|&x| 40.0 + 8.0 * (x / 300.0).sin()).collect();
    let mut s = session_at(t);
    s.hr = Some(Channel::from_values(hr));
    s.cadence = Some(Channel::from_values(cad));
    s.speed = Some(Channel::from_values(spd));
    s.altitude = Some(Channel::from_values(alt));
    s.lat = Some(Channel::from_values(lat));
    s.lon = Some(Channel::from_values(lon));
    s
}
