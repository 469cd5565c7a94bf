//! Whole-session basics used everywhere: moving time.

use crate::model::Session;

/// Below this speed the athlete counts as standing still, m/s.
/// Common coaching practice (no published source): slow walking is about 1 m/s.
pub const MOVING_SPEED_MPS: f64 = 0.5;

/// Time spent moving (running or walking), seconds: the motion classification of
/// [`crate::analysis::motion`] (timer pauses, recording gaps and standing left out, standing
/// told from GPS wander by the displacement of averaged positions).
pub fn moving_time_s(session: &Session) -> f64 {
    crate::analysis::motion::classify(session).moving_total_s()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Channel, FileFormat, Pause};
    use chrono::{TimeZone, Utc};

    #[test]
    fn moving_time_skips_pauses_and_standing() {
        let start = Utc.with_ymd_and_hms(2026, 1, 1, 8, 0, 0).unwrap();
        let mut s = Session::empty(FileFormat::Fit, start);
        s.t = (0..=100).map(f64::from).collect();
        s.time =
            s.t.iter()
                .map(|&x| start + chrono::Duration::seconds(x as i64))
                .collect();
        // 0..=50 running, 51..=70 standing, 71..=100 running
        s.speed = Some(Channel::from_values((0..=100).map(|i| {
            if (51..=70).contains(&i) {
                0.0
            } else {
                3.0
            }
        })));
        s.pauses = vec![Pause {
            from_s: 80.0,
            to_s: 90.0,
        }];
        // 100 spacings, 20 standing (51..=70), 10 paused (81..=90); the edges of the
        // standing stretch are placed to within the averaging window.
        let m = moving_time_s(&s);
        assert!((m - 70.0).abs() <= 4.0, "{m}");
    }
}
