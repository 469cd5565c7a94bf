//! Aerobic decoupling (first-half vs second-half efficiency) and HR drift.
//!
//! Common practice, methods.md §7: split the steady part of the run into two halves by time,
//! take efficiency = mean speed / mean HR for each half, and report
//! `(E1 − E2)/E1·100` (some implementations use `(E1/E2 − 1)·100`; we do not). The 5 %
//! line coaches use is common coaching practice with no published source. Closest
//! peer-reviewed work: Smyth et al., Sports Med 2022;52(9):2283–2295 (a different ratio).
//!
//! Pass hill-adjusted speed (see [`super::gradient::hill_adjusted_speed`]) where elevation
//! exists, so that a hilly second half is not read as decoupling.

use super::sampling::sample_dt;
use super::trend;

/// Decoupling above this, percent, is usually read as the HR cost having risen.
/// Common coaching practice; no published source (methods.md §7).
pub const DECOUPLING_COACHING_LINE_PCT: f64 = 5.0;

/// Efficiency in metres per heartbeat (glossary: `efficiency_m_per_beat`):
/// `60·speed / HR` with speed in m/s and HR in bpm.
///
/// `None` for a non-positive or non-finite HR, or a non-finite speed.
pub fn efficiency(mean_speed: f64, mean_hr: f64) -> Option<f64> {
    if !mean_speed.is_finite() || !mean_hr.is_finite() || mean_hr <= 0.0 {
        return None;
    }
    Some(60.0 * mean_speed / mean_hr)
}

/// Time-weighted sums of one half: (time, speed·time, HR·time).
#[derive(Default, Clone, Copy)]
struct Half {
    time: f64,
    speed_time: f64,
    hr_time: f64,
}

impl Half {
    fn add(&mut self, dt: f64, v: f64, h: f64) {
        self.time += dt;
        self.speed_time += v * dt;
        self.hr_time += h * dt;
    }

    fn efficiency(&self) -> Option<f64> {
        if self.time <= 0.0 {
            return None;
        }
        efficiency(self.speed_time / self.time, self.hr_time / self.time)
    }
}

fn usable_sample(
    speed: &[Option<f64>],
    hr: &[Option<f64>],
    t: &[f64],
    usable: &[bool],
    i: usize,
) -> Option<(f64, f64, f64)> {
    if !usable.get(i).copied().unwrap_or(false) {
        return None;
    }
    let v = speed.get(i).copied().flatten().filter(|v| v.is_finite())?;
    let h = hr.get(i).copied().flatten().filter(|h| h.is_finite())?;
    let dt = sample_dt(t, i);
    (dt > 0.0).then_some((dt, v, h))
}

/// Aerobic decoupling, percent: `(E1 − E2)/E1·100`, positive when the HR cost of the speed
/// rose (methods.md §7, common practice).
///
/// Only samples with `usable[i]` true and both speed and HR present count. Each sample
/// stands for its capped spacing (see [`super::sampling`]); means are time-weighted. The
/// halves hold **equal usable time**: the split falls where half of the usable time has
/// elapsed, and the sample straddling it is shared between the halves in proportion.
///
/// `None` when there is no usable time or a half has no defined efficiency.
pub fn decoupling_pct(
    speed: &[Option<f64>],
    hr: &[Option<f64>],
    t: &[f64],
    usable: &[bool],
) -> Option<f64> {
    let total: f64 = (0..t.len())
        .filter_map(|i| usable_sample(speed, hr, t, usable, i))
        .map(|(dt, _, _)| dt)
        .sum();
    if total <= 0.0 {
        return None;
    }
    let half_time = total / 2.0;
    let (mut first, mut second) = (Half::default(), Half::default());
    for i in 0..t.len() {
        let Some((dt, v, h)) = usable_sample(speed, hr, t, usable, i) else {
            continue;
        };
        let room = (half_time - first.time).max(0.0);
        let in_first = dt.min(room);
        if in_first > 0.0 {
            first.add(in_first, v, h);
        }
        let in_second = dt - in_first;
        if in_second > 0.0 {
            second.add(in_second, v, h);
        }
    }
    let e1 = first.efficiency()?;
    let e2 = second.efficiency()?;
    if e1 <= 0.0 {
        return None;
    }
    Some((e1 - e2) / e1 * 100.0)
}

/// HR drift, bpm per hour: the least-squares slope of HR against time over the samples
/// where `usable[i]` is true and HR is present (unweighted ordinary least squares, so pass
/// regularly sampled, steady-running samples). `None` for fewer than 2 such samples or when
/// they all share one time.
pub fn hr_drift_bpm_per_h(t: &[f64], hr: &[Option<f64>], usable: &[bool]) -> Option<f64> {
    let mut xs = Vec::new();
    let mut ys = Vec::new();
    for (i, &ti) in t.iter().enumerate() {
        if !usable.get(i).copied().unwrap_or(false) {
            continue;
        }
        if let Some(h) = hr.get(i).copied().flatten() {
            xs.push(ti);
            ys.push(h);
        }
    }
    trend::fit(&xs, &ys).map(|f| f.slope * 3600.0)
}
