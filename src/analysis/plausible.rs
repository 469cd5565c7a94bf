//! A guard in front of the analysis: sample values no recording can hold are read as
//! missing, so that sums and means stay finite on a damaged or hostile file.
//!
//! The bounds are physical, far outside anything a person (or a bicycle) records; they are
//! not coaching thresholds, and ingest's bad-data flags (`ingest::clean`) still mark what is
//! merely implausible for a runner. The session itself is never changed: the analysis reads
//! a copy, and only when some value is out of bounds.

use std::borrow::Cow;

use crate::model::{Channel, Session};

/// Speed bounds, m/s. Our design choice: 0 to 200 m/s (720 km/h).
pub const SPEED_MPS: (f64, f64) = (0.0, 200.0);
/// Cumulative distance bounds, m. Our design choice: no negative distance, at most
/// 100 000 km.
pub const DISTANCE_M: (f64, f64) = (0.0, 1e8);
/// Heart-rate bounds, bpm. Our design choice: above 0, at most 400.
pub const HR_BPM: (f64, f64) = (f64::MIN_POSITIVE, 400.0);
/// Cadence bounds, steps/min. Our design choice: 0 to 1000.
pub const CADENCE_SPM: (f64, f64) = (0.0, 1000.0);
/// Altitude bounds, m. Our design choice: 1 km below sea level to 20 km above it.
pub const ALTITUDE_M: (f64, f64) = (-1000.0, 20_000.0);
/// Latitude and longitude bounds, degrees.
pub const LAT_DEG: (f64, f64) = (-90.0, 90.0);
pub const LON_DEG: (f64, f64) = (-180.0, 180.0);

fn inside(v: f64, (lo, hi): (f64, f64)) -> bool {
    v.is_finite() && v >= lo && v <= hi
}

fn channel_ok(c: Option<&Channel>, bounds: (f64, f64)) -> bool {
    c.is_none_or(|c| c.values.iter().flatten().all(|&v| inside(v, bounds)))
}

fn clear(c: &mut Option<Channel>, bounds: (f64, f64)) {
    if let Some(ch) = c {
        for v in &mut ch.values {
            if v.is_some_and(|x| !inside(x, bounds)) {
                *v = None;
            }
        }
    }
}

/// The session as the analysis reads it: borrowed when every value is within the bounds
/// above, else a copy with the out-of-bounds values missing (`None`). O(n).
pub fn plausible(session: &Session) -> Cow<'_, Session> {
    let checks = [
        (session.speed.as_ref(), SPEED_MPS),
        (session.distance.as_ref(), DISTANCE_M),
        (session.hr.as_ref(), HR_BPM),
        (session.cadence.as_ref(), CADENCE_SPM),
        (session.altitude.as_ref(), ALTITUDE_M),
        (session.lat.as_ref(), LAT_DEG),
        (session.lon.as_ref(), LON_DEG),
    ];
    if checks.iter().all(|&(c, b)| channel_ok(c, b)) {
        return Cow::Borrowed(session);
    }
    let mut s = session.clone();
    clear(&mut s.speed, SPEED_MPS);
    clear(&mut s.distance, DISTANCE_M);
    clear(&mut s.hr, HR_BPM);
    clear(&mut s.cadence, CADENCE_SPM);
    clear(&mut s.altitude, ALTITUDE_M);
    clear(&mut s.lat, LAT_DEG);
    clear(&mut s.lon, LON_DEG);
    // A position needs both halves.
    if let (Some(lat), Some(lon)) = (&mut s.lat, &mut s.lon) {
        for (a, b) in lat.values.iter_mut().zip(lon.values.iter_mut()) {
            if a.is_none() || b.is_none() {
                (*a, *b) = (None, None);
            }
        }
    }
    Cow::Owned(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::FileFormat;
    use chrono::{TimeZone, Utc};

    #[test]
    fn out_of_bounds_values_read_as_missing_and_clean_sessions_are_borrowed() {
        let start = Utc.with_ymd_and_hms(2026, 1, 1, 8, 0, 0).unwrap();
        let mut s = Session::empty(FileFormat::Fit, start);
        s.t = vec![0.0, 1.0, 2.0];
        s.time = vec![start; 3];
        s.speed = Some(Channel::from_values([3.0, 3.1, 3.2]));
        assert!(matches!(plausible(&s), Cow::Borrowed(_)));
        s.distance = Some(Channel::from_values([0.0, f64::MAX, 6.0]));
        s.lat = Some(Channel::from_values([45.0, 45.0, 91.0]));
        s.lon = Some(Channel::from_values([7.0, 7.0, 7.0]));
        let p = plausible(&s);
        assert!(matches!(p, Cow::Owned(_)));
        assert_eq!(
            p.distance.as_ref().unwrap().values,
            vec![Some(0.0), None, Some(6.0)]
        );
        assert_eq!(
            p.lon.as_ref().unwrap().values,
            vec![Some(7.0), Some(7.0), None]
        );
        // The session itself is untouched.
        assert_eq!(s.distance.as_ref().unwrap().get(1), Some(f64::MAX));
    }
}
