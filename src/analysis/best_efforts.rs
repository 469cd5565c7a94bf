//! Best efforts of one session: for each duration, the fastest average speed held over a
//! window of exactly that duration (glossary: best-effort curve, `best_efforts`).
//!
//! # Method
//!
//! Cumulative distance `D(t)` is taken from the distance channel, or, without one, from the
//! integral of speed (each sample's speed times the time since the previous sample). Between
//! samples `D` is linear. A window `[a, a + T]` scores `(D(a + T) − D(a)) / T`.
//!
//! Windows never include bad or stopped data. A step `t[i−1]..t[i]` is usable only when both
//! samples are outside the speed, distance and position masks of
//! [`crate::ingest::clean::sample_mask`] (gaps mask every channel), the step is not inside a
//! timer pause, both distances are present, the step is positive and at most
//! [`super::sampling::MAX_SAMPLE_DT_S`] long (a longer step is a hole in the recording, not
//! running), and the distance does not go backwards. Usable steps join into stretches; a
//! window must lie inside one stretch.
//!
//! Because `D` is piecewise linear, `a ↦ D(a + T) − D(a)` is piecewise linear with corners
//! only where `a` or `a + T` meets a sample time, so the best window starts or ends at a
//! sample. Two passes with two pointers (window start on each sample, then window end on
//! each sample) find it exactly, with irregular sampling too: O(n) per duration.

use serde::{Deserialize, Serialize};

use crate::ingest::clean::sample_mask;
use crate::model::{ChannelKind, Session};

use super::sampling::MAX_SAMPLE_DT_S;

/// The durations searched in every session, seconds: 1, 2, 3, 5, 10, 20, 30, 60, 90 and
/// 120 minutes.
pub const DURATIONS_S: [f64; 10] = [
    60.0, 120.0, 180.0, 300.0, 600.0, 1200.0, 1800.0, 3600.0, 5400.0, 7200.0,
];

/// The fastest window of one duration in one session.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BestEffort {
    /// Window length, seconds.
    pub duration_s: f64,
    /// Distance covered in the window, metres.
    pub distance_m: f64,
    /// `distance_m / duration_s`, m/s.
    pub speed_mps: f64,
    /// Where the window starts, seconds from the first sample.
    pub start_s: f64,
}

/// Best efforts of a cleaned session over [`DURATIONS_S`]. Durations longer than every
/// usable stretch are left out.
pub fn best_efforts(session: &Session) -> Vec<BestEffort> {
    best_efforts_for(session, &DURATIONS_S)
}

/// Best efforts of a cleaned session over the given durations (seconds; non-positive or
/// non-finite durations are skipped). See the module docs for which data is used.
pub fn best_efforts_for(session: &Session, durations_s: &[f64]) -> Vec<BestEffort> {
    let n = session.len();
    let mut bad = sample_mask(session, &session.flags, ChannelKind::Speed);
    for kind in [ChannelKind::Distance, ChannelKind::Position] {
        for (b, m) in bad
            .iter_mut()
            .zip(sample_mask(session, &session.flags, kind))
        {
            *b |= m;
        }
    }
    let t = &session.t;
    let distance: Vec<Option<f64>> = match (&session.distance, &session.speed) {
        (Some(d), _) => d.values.clone(),
        (None, Some(sp)) => {
            let mut acc = 0.0;
            (0..n)
                .map(|i| {
                    let dt = step_s(t, i);
                    if let Some(v) = sp.get(i) {
                        if dt.is_finite() && dt > 0.0 && v.is_finite() && v >= 0.0 {
                            acc += v * dt;
                        }
                    }
                    sp.get(i).map(|_| acc)
                })
                .collect()
        }
        (None, None) => return Vec::new(),
    };
    let step_ok: Vec<bool> = (0..n)
        .map(|i| {
            i > 0
                && !bad.get(i).copied().unwrap_or(true)
                && !bad.get(i - 1).copied().unwrap_or(true)
                && !session.is_paused_at(mid_s(t, i))
        })
        .collect();
    best_efforts_in(t, &distance, &step_ok, durations_s)
}

/// `t[i] - t[i-1]`; NaN for the first sample or an index past the end (never usable).
fn step_s(t: &[f64], i: usize) -> f64 {
    match (i.checked_sub(1).and_then(|p| t.get(p)), t.get(i)) {
        (Some(a), Some(b)) => b - a,
        _ => f64::NAN,
    }
}

/// The middle of the step `t[i-1]..t[i]` (NaN when there is no such step).
fn mid_s(t: &[f64], i: usize) -> f64 {
    match (i.checked_sub(1).and_then(|p| t.get(p)), t.get(i)) {
        (Some(a), Some(b)) => 0.5 * (a + b),
        _ => f64::NAN,
    }
}

/// Best efforts on plain series: sample times `t` (seconds, non-decreasing), cumulative
/// distance (metres) and, per sample `i`, whether the step `t[i−1]..t[i]` may be used
/// (`step_ok[0]` is ignored). Steps are further refused when a distance is missing, the
/// step is not positive or longer than [`MAX_SAMPLE_DT_S`], or the distance goes backwards.
///
/// One result per duration that fits in a usable stretch, in the order given.
pub fn best_efforts_in(
    t: &[f64],
    distance: &[Option<f64>],
    step_ok: &[bool],
    durations_s: &[f64],
) -> Vec<BestEffort> {
    let stretches = stretches(t, distance, step_ok);
    durations_s
        .iter()
        .filter(|d| d.is_finite() && **d > 0.0)
        .filter_map(|&dur| {
            let mut best: Option<BestEffort> = None;
            for s in &stretches {
                if let Some(e) = best_in_stretch(&s.t, &s.d, dur) {
                    if best.is_none_or(|b| e.distance_m > b.distance_m) {
                        best = Some(e);
                    }
                }
            }
            best
        })
        .collect()
}

/// A run of consecutive usable steps: its sample times and cumulative distances.
struct Stretch {
    t: Vec<f64>,
    d: Vec<f64>,
}

fn stretches(t: &[f64], distance: &[Option<f64>], step_ok: &[bool]) -> Vec<Stretch> {
    let mut out = Vec::new();
    let mut cur = Stretch {
        t: Vec::new(),
        d: Vec::new(),
    };
    for i in 1..t.len().min(distance.len()) {
        let usable = match (
            step_ok.get(i).copied().unwrap_or(false),
            distance.get(i - 1).copied().flatten(),
            distance.get(i).copied().flatten(),
        ) {
            (true, Some(d0), Some(d1)) => {
                let dt = step_s(t, i);
                let dd = d1 - d0;
                dt.is_finite()
                    && dt > 0.0
                    && dt <= MAX_SAMPLE_DT_S
                    && dd.is_finite()
                    && dd >= 0.0
                    && d0.is_finite()
            }
            _ => false,
        };
        if let (true, Some(&t0), Some(&t1)) = (usable, t.get(i - 1), t.get(i)) {
            if cur.t.is_empty() {
                cur.t.push(t0);
                cur.d
                    .push(distance.get(i - 1).copied().flatten().unwrap_or(0.0));
            }
            cur.t.push(t1);
            cur.d
                .push(distance.get(i).copied().flatten().unwrap_or(0.0));
        } else if !cur.t.is_empty() {
            out.push(std::mem::replace(
                &mut cur,
                Stretch {
                    t: Vec::new(),
                    d: Vec::new(),
                },
            ));
        }
    }
    if !cur.t.is_empty() {
        out.push(cur);
    }
    out
}

/// Linear interpolation of `d` at time `x` on the step `k−1..k` (`t[k−1] <= x <= t[k]`).
fn interp(t: &[f64], d: &[f64], k: usize, x: f64) -> Option<f64> {
    let (t0, t1) = (*t.get(k.checked_sub(1)?)?, *t.get(k)?);
    let (d0, d1) = (*d.get(k - 1)?, *d.get(k)?);
    let span = t1 - t0;
    if span <= 0.0 {
        return Some(d1);
    }
    Some(d0 + (d1 - d0) * ((x - t0) / span).clamp(0.0, 1.0))
}

/// The best window of `dur` seconds inside one stretch (strictly increasing `t`).
fn best_in_stretch(t: &[f64], d: &[f64], dur: f64) -> Option<BestEffort> {
    let (&first, &last) = (t.first()?, t.last()?);
    if last - first < dur {
        return None;
    }
    let n = t.len();
    let mut best_dist = f64::NEG_INFINITY;
    let mut best_start = first;
    let before = |k: usize, x: f64| t.get(k).is_some_and(|&tk| tk < x);
    // Window starts on a sample.
    let mut j = 1;
    for (&ti, &di) in t.iter().zip(d) {
        let end = ti + dur;
        if end > last {
            break;
        }
        while j < n - 1 && before(j, end) {
            j += 1;
        }
        let dist = interp(t, d, j, end)? - di;
        if dist > best_dist {
            best_dist = dist;
            best_start = ti;
        }
    }
    // Window ends on a sample.
    let mut i = 1;
    for (&tk, &dk) in t.iter().zip(d) {
        let start = tk - dur;
        if start < first {
            continue;
        }
        while i < n - 1 && before(i, start) {
            i += 1;
        }
        let dist = dk - interp(t, d, i, start)?;
        if dist > best_dist {
            best_dist = dist;
            best_start = start;
        }
    }
    best_dist.is_finite().then(|| BestEffort {
        duration_s: dur,
        distance_m: best_dist,
        speed_mps: best_dist / dur,
        start_s: best_start,
    })
}
