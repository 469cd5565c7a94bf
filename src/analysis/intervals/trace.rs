//! The speed trace the interval finder works on: hill-adjusted speed with flagged samples
//! removed, per-sample time weights, and segment statistics.

use crate::analysis::gradient::{cost_ratio, cumulative_distance};
use crate::analysis::motion::{Motion, MotionState};
use crate::analysis::sampling::MAX_SAMPLE_DT_S;
use crate::ingest::clean::{sample_mask, MAX_SPEED_MPS};
use crate::model::{ChannelKind, Session};

/// Exponent of the hill adjustment used to find intervals: speed times
/// `(Cr(i)/Cr(0))^HILL_EXPONENT`, with `Cr` the energy cost of running on gradient `i`
/// (Minetti et al. 2002, J Appl Physiol 93:1039; [`crate::analysis::gradient::cost_ratio`]).
///
/// An exponent of 1 is the full flat-equivalent speed of
/// [`crate::analysis::gradient::hill_adjusted_speed`]. Runners do not hold their metabolic
/// power on hills: they slow uphill and speed up downhill by less than the cost implies
/// (From memory: Townshend, Worringham & Stewart, Med Sci Sports Exerc 2010;42(1):160-169,
/// spontaneous pacing on hills), so the full adjustment over-corrects and makes an easy
/// climb look like a rep on rolling ground. Our design choice: 0.6, which flattens the
/// effort of a runner who slows by a power 0.5-0.8 of the cost ratio to within a few per
/// cent on gradients up to 8 %.
pub const HILL_EXPONENT: f64 = 0.6;

/// Smallest hill factor: on a descent the adjustment never lowers the speed by more than
/// 13 %. Common coaching practice (no published source): footing and braking stop runners
/// from using the whole saving of a descent; they rarely run more than about 15 % faster
/// than their flat pace downhill (1 / 1.15 = 0.87), so a larger correction would make a
/// downhill rep look like a jog.
pub const DOWNHILL_FACTOR_FLOOR: f64 = 0.87;

/// The factor speed is multiplied by on gradient `i` (rise over run) to find intervals:
/// `max((Cr(i)/Cr(0))^HILL_EXPONENT, DOWNHILL_FACTOR_FLOOR)`.
pub fn hill_factor(i: f64) -> f64 {
    cost_ratio(i).powf(HILL_EXPONENT).max(DOWNHILL_FACTOR_FLOOR)
}

/// The per-sample signals, all of the session's length.
#[derive(Debug, Clone)]
pub(crate) struct Trace {
    /// Elapsed seconds.
    pub t: Vec<f64>,
    /// Hill-adjusted speed, m/s; `None` where missing or flagged.
    pub adj: Vec<Option<f64>>,
    /// Recorded speed, m/s; `None` where missing or flagged.
    pub raw: Vec<Option<f64>>,
    /// Time each sample stands for, seconds (half the spacing to each neighbour, capped,
    /// timer pauses excluded).
    pub w: Vec<f64>,
    /// Moving time from sample `i - 1` to sample `i` (0 for `i == 0` and across a pause).
    pub gap: Vec<f64>,
    /// Cumulative distance, metres (`None` where unknown).
    pub dist: Option<Vec<Option<f64>>>,
    /// The lightly smoothed adjusted speed, computed on first use (see
    /// `detect::light_trace`); several steps of the finder need it.
    pub light: std::cell::OnceCell<Vec<f64>>,
}

/// Statistics of the stretch between two boundary samples.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct SegStats {
    /// Moving time, seconds.
    pub duration_s: f64,
    /// Distance, metres, when known.
    pub distance_m: Option<f64>,
    /// Time-weighted mean hill-adjusted speed, m/s.
    pub adj_speed: Option<f64>,
    /// Mean recorded speed (distance over time on the same samples, else time-weighted
    /// mean), m/s.
    pub raw_speed: Option<f64>,
}

impl Trace {
    /// Build the trace of a session from its gradients
    /// ([`crate::analysis::gradient::gradients`]; `None` without altitude). `None` without
    /// any speed or distance.
    pub fn with_gradients(
        session: &Session,
        grads: Option<&[Option<f64>]>,
        motion: &Motion,
    ) -> Option<Trace> {
        Trace::build(session, grads, motion, hill_factor)
    }

    /// [`Trace::with_gradients`] with the full flat-equivalent correction of the interval
    /// table's hill-adjusted pace ([`crate::analysis::gradient::flat_equivalent_speed`],
    /// Minetti et al. 2002) instead of the damped [`hill_factor`].
    pub fn with_full_hill(
        session: &Session,
        grads: Option<&[Option<f64>]>,
        motion: &Motion,
    ) -> Option<Trace> {
        Trace::build(session, grads, motion, cost_ratio)
    }

    fn build(
        session: &Session,
        grads: Option<&[Option<f64>]>,
        motion: &Motion,
        factor: fn(f64) -> f64,
    ) -> Option<Trace> {
        let n = session.len();
        let t = session.t.clone();
        let dist = cumulative_distance(session);
        // Speed: recorded, or from the distance channel when there is none.
        let raw_in: Vec<Option<f64>> = match &session.speed {
            Some(s) => s.values.clone(),
            None => {
                let d = dist.as_ref()?;
                (0..n)
                    .map(|i| {
                        let a = i.checked_sub(1)?;
                        let (da, db) = (d.get(a).copied()??, d.get(i).copied()??);
                        let dt = t.get(i)? - t.get(a)?;
                        (dt > 0.0).then(|| (db - da) / dt)
                    })
                    .collect()
            }
        };
        let adj_in: Vec<Option<f64>> = match grads {
            Some(g) => raw_in
                .iter()
                .enumerate()
                .map(|(i, v)| {
                    let v = (*v)?;
                    Some(match g.get(i).copied().flatten() {
                        Some(gr) => v * factor(gr),
                        None => v,
                    })
                })
                .collect(),
            None => raw_in.clone(),
        };
        let mask = sample_mask(session, &session.flags, ChannelKind::Speed);
        let ok = |i: usize, v: Option<f64>| -> Option<f64> {
            let v = v.filter(|v| v.is_finite())?;
            if mask.get(i).copied().unwrap_or(false) {
                return None;
            }
            Some(v.clamp(0.0, MAX_SPEED_MPS))
        };
        // Standing (GPS wander) reads as a standstill.
        let standing = |i: usize| motion.at(i) == MotionState::Stand;
        let raw: Vec<Option<f64>> = (0..n)
            .map(|i| {
                let v = ok(i, raw_in.get(i).copied().flatten())?;
                Some(if standing(i) { 0.0 } else { v })
            })
            .collect();
        let adj: Vec<Option<f64>> = (0..n)
            .map(|i| {
                // A flagged raw speed also invalidates the adjusted one.
                raw.get(i).copied().flatten()?;
                if standing(i) {
                    return Some(0.0);
                }
                ok(i, adj_in.get(i).copied().flatten())
            })
            .collect();
        let mut gap = vec![0.0; n];
        for (i, g) in gap.iter_mut().enumerate().skip(1) {
            let (Some(&a), Some(&b)) = (t.get(i - 1), t.get(i)) else {
                continue;
            };
            let dt = b - a;
            let paused = session
                .pauses
                .iter()
                .any(|p| a >= p.from_s - 1e-9 && b <= p.to_s + 1e-9 && p.to_s > p.from_s);
            let stopped = motion.at(i) == MotionState::Stopped;
            if dt.is_finite() && dt > 0.0 && !paused && !stopped {
                *g = dt.min(MAX_SAMPLE_DT_S);
            }
        }
        let w = (0..n)
            .map(|i| {
                let before = gap.get(i).copied().unwrap_or(0.0);
                let after = gap.get(i + 1).copied().unwrap_or(0.0);
                0.5 * (before + after)
            })
            .collect();
        Some(Trace {
            t,
            adj,
            raw,
            w,
            gap,
            dist,
            light: std::cell::OnceCell::new(),
        })
    }

    pub fn len(&self) -> usize {
        self.t.len()
    }

    /// The samples `a..=b` as a trace of their own (indices shift by `a`).
    pub fn slice(&self, a: usize, b: usize) -> Trace {
        let n = self.len();
        let b = b.min(n.saturating_sub(1));
        let a = a.min(b);
        let take = |v: &[Option<f64>]| v.get(a..=b).map(<[_]>::to_vec).unwrap_or_default();
        let t: Vec<f64> = self.t.get(a..=b).map(<[_]>::to_vec).unwrap_or_default();
        let mut gap: Vec<f64> = self.gap.get(a..=b).map(<[_]>::to_vec).unwrap_or_default();
        if let Some(g) = gap.first_mut() {
            *g = 0.0;
        }
        let w = (0..gap.len())
            .map(|i| {
                0.5 * (gap.get(i).copied().unwrap_or(0.0) + gap.get(i + 1).copied().unwrap_or(0.0))
            })
            .collect();
        Trace {
            t,
            adj: take(&self.adj),
            raw: take(&self.raw),
            w,
            gap,
            dist: self.dist.as_ref().map(|d| take(d)),
            light: std::cell::OnceCell::new(),
        }
    }

    /// Elapsed time of sample `i` (0 past the end).
    pub fn time(&self, i: usize) -> f64 {
        self.t.get(i).copied().unwrap_or(0.0)
    }

    /// Index of the sample nearest to `t_s`.
    pub fn nearest(&self, t_s: f64) -> usize {
        let n = self.t.len();
        if n == 0 {
            return 0;
        }
        let k = self.t.partition_point(|&x| x < t_s);
        if k == 0 {
            return 0;
        }
        if k >= n {
            return n - 1;
        }
        let before = t_s - self.time(k - 1);
        let after = self.time(k) - t_s;
        if before <= after {
            k - 1
        } else {
            k
        }
    }

    /// Distance at sample `i`: the nearest present value at or before it, else after it.
    pub fn dist_at(&self, i: usize) -> Option<f64> {
        let d = self.dist.as_ref()?;
        let back = d.get(..=i.min(d.len().saturating_sub(1)))?;
        if let Some(v) = back.iter().rev().find_map(|v| *v) {
            return Some(v);
        }
        d.iter().skip(i).find_map(|v| *v)
    }

    /// Mean speed over samples `start+1..=end` from a distance and a time over the same
    /// samples: each step that counts as moving time (not paused, not stopped) and has a
    /// usable speed (not flagged) adds its distance increment and its time; a step capped
    /// at [`MAX_SAMPLE_DT_S`] adds the share of its increment that the cap keeps. `None`
    /// without distance or without such steps.
    fn distance_speed(&self, start: usize, end: usize) -> Option<f64> {
        let d = self.dist.as_ref()?;
        let (mut dist, mut time) = (0.0, 0.0);
        for i in (start + 1)..=end.min(self.len().saturating_sub(1)) {
            let g = self.gap.get(i).copied().unwrap_or(0.0);
            if g <= 0.0 || self.raw.get(i).copied().flatten().is_none() {
                continue;
            }
            let (Some(d0), Some(d1)) =
                (d.get(i - 1).copied().flatten(), d.get(i).copied().flatten())
            else {
                continue;
            };
            let step = self.time(i) - self.time(i - 1);
            let dd = d1 - d0;
            if !(step > 0.0 && dd.is_finite()) {
                continue;
            }
            dist += dd.max(0.0) * (g / step).min(1.0);
            time += g;
        }
        (time > 0.0).then(|| dist / time)
    }

    /// Statistics of samples `start..=end` (the boundaries shared with the neighbours).
    pub fn stats(&self, start: usize, end: usize) -> SegStats {
        let duration_s: f64 = (start + 1..=end)
            .map(|i| self.gap.get(i).copied().unwrap_or(0.0))
            .sum();
        let distance_m = match (self.dist_at(start), self.dist_at(end)) {
            (Some(a), Some(b)) => Some((b - a).max(0.0)),
            _ => None,
        };
        let mean = |vals: &[Option<f64>]| {
            let (mut s, mut wsum) = (0.0, 0.0);
            for i in start..=end {
                if let (Some(Some(v)), Some(&w)) = (vals.get(i), self.w.get(i)) {
                    s += v * w;
                    wsum += w;
                }
            }
            (wsum > 0.0).then(|| s / wsum)
        };
        let adj_speed = mean(&self.adj);
        let raw_speed = self.distance_speed(start, end).or_else(|| mean(&self.raw));
        SegStats {
            duration_s,
            distance_m,
            adj_speed,
            raw_speed,
        }
    }
}

/// Centred time-window, time-weighted mean of `vals` (window `t ± half`). Samples with no
/// valid value in their window are interpolated linearly in time between the nearest
/// computed values. O(n).
pub(crate) fn window_mean(t: &[f64], vals: &[Option<f64>], w: &[f64], half: f64) -> Vec<f64> {
    let n = t.len();
    let val = |j: usize| -> Option<(f64, f64)> {
        let v = vals.get(j).copied().flatten()?;
        // A sample standing for no time (both neighbours across pauses) still counts a little.
        let wj = w.get(j).copied().unwrap_or(0.0).max(1e-3);
        Some((v * wj, wj))
    };
    let mut out: Vec<Option<f64>> = Vec::with_capacity(n);
    let (mut lo, mut hi) = (0usize, 0usize);
    let (mut sum, mut wsum, mut count) = (0.0f64, 0.0f64, 0usize);
    for &tk in t {
        while hi < n && t.get(hi).is_some_and(|&th| th <= tk + half) {
            if let Some((vw, wj)) = val(hi) {
                sum += vw;
                wsum += wj;
                count += 1;
            }
            hi += 1;
        }
        while lo < hi && t.get(lo).is_some_and(|&tl| tl < tk - half) {
            if let Some((vw, wj)) = val(lo) {
                sum -= vw;
                wsum -= wj;
                count -= 1;
            }
            lo += 1;
        }
        if count == 0 {
            sum = 0.0;
            wsum = 0.0;
        }
        out.push((count > 0 && wsum > 0.0).then(|| sum / wsum));
    }
    fill_gaps(t, &out)
}

/// Replace `None` by linear interpolation in time between the nearest values either side
/// (the nearest value at the ends); all zeros when there is no value at all. O(n).
fn fill_gaps(t: &[f64], v: &[Option<f64>]) -> Vec<f64> {
    let n = v.len();
    let mut out = vec![0.0; n];
    let mut prev: Option<(f64, f64)> = None;
    let mut pending: Vec<usize> = Vec::new();
    for (i, x) in v.iter().enumerate() {
        let ti = t.get(i).copied().unwrap_or(0.0);
        match x {
            Some(x) => {
                for &k in &pending {
                    let tk = t.get(k).copied().unwrap_or(0.0);
                    let val = match prev {
                        Some((tp, vp)) if ti > tp => vp + (x - vp) * (tk - tp) / (ti - tp),
                        _ => *x,
                    };
                    if let Some(o) = out.get_mut(k) {
                        *o = val;
                    }
                }
                pending.clear();
                if let Some(o) = out.get_mut(i) {
                    *o = *x;
                }
                prev = Some((ti, *x));
            }
            None => pending.push(i),
        }
    }
    let last = prev.map_or(0.0, |p| p.1);
    for &k in &pending {
        if let Some(o) = out.get_mut(k) {
            *o = last;
        }
    }
    out
}
