//! Shared bench input: a 3-hour run at 1 Hz (10,800 samples) with a gently varying speed.

use chrono::{Duration, TimeZone, Utc};
use splitdesk::model::{Channel, FileFormat, Session, Sport};

/// Samples in the 3-hour run.
pub const SAMPLES: usize = 3 * 3600;

/// Time base, speed (3.3 ± 0.6 m/s) and the distance it gives; other channels are left to
/// each bench.
pub fn three_hour_run() -> Session {
    let start = Utc
        .with_ymd_and_hms(2024, 5, 4, 6, 30, 0)
        .single()
        .expect("valid date");
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = Sport::Running;
    s.t = (0..SAMPLES).map(|i| i as f64).collect();
    s.time = (0..SAMPLES)
        .map(|i| start + Duration::seconds(i as i64))
        .collect();
    let speed: Vec<f64> = s.t.iter().map(|t| 3.3 + 0.6 * (t / 97.0).sin()).collect();
    let mut d = 0.0;
    s.distance = Some(Channel::from_values(speed.iter().map(|v| {
        d += v;
        d
    })));
    s.speed = Some(Channel::from_values(speed));
    s
}
