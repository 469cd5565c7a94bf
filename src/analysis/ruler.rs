//! Rulers: straight least-squares lines of pace and heart rate over a window the coach
//! marks on the chart, with their slopes and the window's decoupling.

use crate::model::Session;

use super::decoupling::decoupling_pct;
use super::review::Series;
use super::trend;

/// The fitted lines of one ruler. Lines are over time in seconds from the session start.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RulerFit {
    pub from_s: f64,
    pub to_s: f64,
    /// Speed line, m/s against seconds.
    pub speed: Option<trend::Fit>,
    /// HR line, bpm against seconds.
    pub hr: Option<trend::Fit>,
    /// Change of pace over 10 minutes along the line, s/km (negative = getting faster).
    pub pace_change_per_10min_s_per_km: Option<f64>,
    /// Change of HR over 10 minutes along the line, bpm.
    pub hr_change_per_10min_bpm: Option<f64>,
    /// Decoupling of the window (first half vs second half), percent.
    pub decoupling_pct: Option<f64>,
}

impl RulerFit {
    /// Speed on the line at `t`, m/s.
    pub fn speed_at(&self, t: f64) -> Option<f64> {
        self.speed.map(|f| f.predict(t))
    }

    /// HR on the line at `t`, bpm.
    pub fn hr_at(&self, t: f64) -> Option<f64> {
        self.hr.map(|f| f.predict(t))
    }
}

/// Fit a ruler over `from_s..=to_s` (order does not matter) on moving, unflagged samples.
pub fn fit_window(session: &Session, from_s: f64, to_s: f64) -> RulerFit {
    let (a, b) = if from_s <= to_s {
        (from_s, to_s)
    } else {
        (to_s, from_s)
    };
    let s = Series::new(session);
    let inside = |i: usize| session.t.get(i).is_some_and(|&t| t >= a && t <= b);
    let line = |values: Option<&[Option<f64>]>, ok: &dyn Fn(usize) -> bool| {
        let values = values?;
        let (xs, ys): (Vec<f64>, Vec<f64>) = (0..session.len())
            .filter(|&i| inside(i) && ok(i))
            .filter_map(|i| Some((*session.t.get(i)?, values.get(i).copied().flatten()?)))
            .unzip();
        trend::fit(&xs, &ys)
    };
    let moving = |i: usize| s.moving.get(i).copied().unwrap_or(false);
    let hr_ok = |i: usize| s.hr_ok.get(i).copied().unwrap_or(false);
    let speed = line(s.speed, &moving);
    let hr = line(s.hr, &hr_ok);
    let pace_change = speed.and_then(|f| {
        let mid = 0.5 * (a + b);
        let v0 = f.predict(mid - 300.0);
        let v1 = f.predict(mid + 300.0);
        (v0 > 0.0 && v1 > 0.0).then(|| 1000.0 / v1 - 1000.0 / v0)
    });
    let decoupling = match (s.speed, s.hr) {
        (Some(v), Some(h)) => {
            let usable: Vec<bool> = (0..session.len())
                .map(|i| inside(i) && moving(i) && hr_ok(i))
                .collect();
            decoupling_pct(v, h, &session.t, &usable)
        }
        _ => None,
    };
    RulerFit {
        from_s: a,
        to_s: b,
        speed,
        hr,
        pace_change_per_10min_s_per_km: pace_change,
        hr_change_per_10min_bpm: hr.map(|f| f.slope * 600.0),
        decoupling_pct: decoupling,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Channel, FileFormat};
    use chrono::{TimeZone, Utc};

    #[test]
    fn ruler_recovers_straight_lines() {
        let start = Utc.with_ymd_and_hms(2026, 1, 1, 8, 0, 0).unwrap();
        let mut s = Session::empty(FileFormat::Fit, start);
        s.t = (0..=1800).map(f64::from).collect();
        s.time =
            s.t.iter()
                .map(|&x| start + chrono::Duration::seconds(x as i64))
                .collect();
        // speed 3.0 -> 3.3 m/s linearly, HR 140 -> 149 linearly over 30 min
        s.speed = Some(Channel::from_values(
            s.t.iter().map(|t| 3.0 + 0.3 * t / 1800.0),
        ));
        s.hr = Some(Channel::from_values(
            s.t.iter().map(|t| 140.0 + 9.0 * t / 1800.0),
        ));
        let r = fit_window(&s, 1800.0, 0.0);
        assert!((r.hr_change_per_10min_bpm.unwrap() - 3.0).abs() < 1e-9);
        assert!((r.speed.unwrap().slope - 0.3 / 1800.0).abs() < 1e-12);
        // pace at 15:00 +- 5 min: speeds 3.1 and 3.2 m/s
        let want = 1000.0 / 3.2 - 1000.0 / 3.1;
        assert!((r.pace_change_per_10min_s_per_km.unwrap() - want).abs() < 1e-6);
        assert!(r.decoupling_pct.unwrap().abs() < 5.0);
    }
}
