//! Whole-session basics used everywhere: moving time.

use crate::model::Session;

/// Below this speed the athlete counts as standing still, m/s.
/// Common coaching practice (no published source): slow walking is about 1 m/s.
pub const MOVING_SPEED_MPS: f64 = 0.5;

/// Time spent moving, seconds: the sum of sample spacings outside timer pauses where the
/// speed at the later sample is at least `MOVING_SPEED_MPS`. Without a speed channel,
/// every non-paused spacing counts. A spacing whose speed sample is missing counts when
/// the previous present speed was moving.
pub fn moving_time_s(session: &Session) -> f64 {
    let mut total = 0.0;
    let mut last_moving = true;
    for i in 1..session.t.len() {
        let (a, b) = (session.t[i - 1], session.t[i]);
        let dt = b - a;
        if dt <= 0.0 {
            continue;
        }
        let mid = 0.5 * (a + b);
        if session.is_paused_at(mid) {
            continue;
        }
        let moving = match &session.speed {
            None => true,
            Some(ch) => match ch.get(i) {
                Some(v) => {
                    last_moving = v >= MOVING_SPEED_MPS;
                    last_moving
                }
                None => last_moving,
            },
        };
        if moving {
            total += dt;
        }
    }
    total
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
        // 100 spacings, 20 standing (51..=70), 10 paused (81..=90)
        assert_eq!(moving_time_s(&s), 70.0);
    }
}
