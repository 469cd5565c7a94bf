//! Work/recovery change points from the speed signal: two-level classification with
//! hysteresis, then each boundary refined to the sample.

use super::trace::{window_mean, Trace};

/// Half-width of the smoothing window used to classify fast and slow, seconds (a 10-s
/// centred window). Our design choice: wide enough to flatten pacing noise and single-sample
/// spikes, narrow enough to keep a 30-s rep at full height for 20 s.
pub const CLASSIFY_HALF_WINDOW_S: f64 = 5.0;

/// Half-width of the light smoothing used to place a boundary, seconds (a 5-s window).
/// Our design choice: a centred window does not move the midpoint of a step.
pub const REFINE_HALF_WINDOW_S: f64 = 2.0;

/// Shortest fast or slow stretch kept, seconds; shorter ones are merged into their
/// neighbours. Our design choice: well below the shortest rep or recovery coaches set
/// (about 15 s; a 30-s rep clears the hysteresis for only 10-20 s of the 10-s smoothed
/// trace); surges and GPS wobbles longer than this are removed by [`CONFIRM`].
pub const MIN_RUN_S: f64 = 8.0;

/// The fast level must exceed the slow level by this factor for the session to have a
/// work/recovery structure. Common coaching practice (no published source): a rep is run
/// clearly faster than the jog or the warm-up, by well over 15 %; a steady run's pace
/// drifts by less.
pub const STRUCTURE_RATIO: f64 = 1.15;

/// ...and by at least this much, m/s (keeps a near-standstill from counting as structure).
/// Our design choice.
pub const STRUCTURE_MIN_GAP_MPS: f64 = 0.4;

/// Speeds below this fraction of the session's fast reference (the 95th percentile of the
/// smoothed speed) are raised to it before the fast/slow threshold is chosen, so that a
/// standing or walking recovery does not pull the threshold down between itself and the
/// jog. Our design choice.
pub const FLOOR_OF_FAST: f64 = 0.75;

/// Quantile of the smoothed speed taken as the fast reference. Our design choice: reps are
/// more than 5 % of a session's time.
pub const FAST_QUANTILE: f64 = 0.95;

/// Hysteresis half-band as a fraction of the gap between the two levels. Our design choice.
pub const HYSTERESIS: f64 = 0.15;

/// How far a boundary may move from its coarse position when refined, seconds.
/// Our design choice: the 10-s classification window puts the coarse boundary within a
/// few seconds of the change.
pub const REFINE_SEARCH_S: f64 = 15.0;

/// Stretch each side of a boundary whose mean speed sets the local level, seconds
/// (starting [`LEVEL_SKIP_S`] away from the boundary). Our design choice: local, so
/// fading, progression and hills do not move the midpoint.
pub const LEVEL_SPAN_S: f64 = 60.0;

/// Seconds next to a boundary left out of the local level (the runner is still changing
/// pace). Our design choice.
pub const LEVEL_SKIP_S: f64 = 6.0;

/// Seconds between the start of a change of pace and the moment the speed crosses the
/// midpoint between the two levels. Our design choice, measured on the simulator's runner
/// (who reaches a new pace within 5-10 s) and in line with recorded reps: the boundary is
/// put this much before the midpoint crossing.
pub const CHANGE_LAG_S: f64 = 2.0;

/// A fast stretch must average (lightly smoothed, its first and last [`LEVEL_SKIP_S`] left
/// out) at least this fraction of the level gap above the
/// threshold, a slow one as far below it; others are dips inside a rep (a hill, a surge
/// easing off) or pick-ups inside a jog, and are merged into their neighbours. Our design
/// choice (the dual threshold of hysteresis, applied to whole stretches).
pub const CONFIRM: f64 = 0.2;

/// With a plan, the fast/slow threshold stays this fraction below the slowest planned work
/// target. Our design choice: reps are run within a few per cent of target.
pub const WORK_TARGET_MARGIN: f64 = 0.07;

/// Histogram bin for the threshold and quantile, m/s.
const BIN_MPS: f64 = 0.02;

/// One stretch of the session classified fast or slow; samples `start..=end`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Run {
    pub fast: bool,
    pub start: usize,
    pub end: usize,
}

/// The result of detection.
#[derive(Debug, Clone)]
pub(crate) struct Detection {
    /// Contiguous runs covering the session; empty when the session has no structure.
    pub runs: Vec<Run>,
}

/// Time-weighted histogram over `[0, max]` with [`BIN_MPS`] bins.
fn histogram(vals: &[f64], w: &[f64]) -> Vec<f64> {
    let max = vals.iter().copied().fold(0.0f64, f64::max);
    let bins = ((max / BIN_MPS).floor() as usize) + 1;
    let mut h = vec![0.0; bins];
    for (v, wi) in vals.iter().zip(w) {
        let b = ((v.max(0.0) / BIN_MPS).floor() as usize).min(bins - 1);
        if let Some(slot) = h.get_mut(b) {
            *slot += wi.max(0.0);
        }
    }
    h
}

fn bin_centre(b: usize) -> f64 {
    (b as f64 + 0.5) * BIN_MPS
}

/// Time-weighted quantile of `vals`.
fn quantile(vals: &[f64], w: &[f64], q: f64) -> f64 {
    let h = histogram(vals, w);
    let total: f64 = h.iter().sum();
    if total <= 0.0 {
        return 0.0;
    }
    let mut acc = 0.0;
    for (b, x) in h.iter().enumerate() {
        acc += x;
        if acc >= q * total {
            return bin_centre(b);
        }
    }
    bin_centre(h.len().saturating_sub(1))
}

/// Otsu's threshold (maximum between-class variance) of a time-weighted sample, with the
/// means of the two classes. `None` when all values fall in one bin.
fn otsu(vals: &[f64], w: &[f64], max_threshold: f64) -> Option<(f64, f64, f64)> {
    let h = histogram(vals, w);
    let total: f64 = h.iter().sum();
    let total_m: f64 = h.iter().enumerate().map(|(b, x)| x * bin_centre(b)).sum();
    if total <= 0.0 {
        return None;
    }
    let (mut w0, mut m0) = (0.0, 0.0);
    let mut best: Option<(f64, f64, f64, f64)> = None;
    for (b, x) in h.iter().enumerate() {
        w0 += x;
        m0 += x * bin_centre(b);
        let w1 = total - w0;
        if w0 <= 0.0 || w1 <= 1e-9 {
            continue;
        }
        if (b as f64 + 1.0) * BIN_MPS > max_threshold {
            break;
        }
        let (mu0, mu1) = (m0 / w0, (total_m - m0) / w1);
        let var = w0 * w1 * (mu1 - mu0).powi(2);
        if best.is_none_or(|bb| var > bb.0) {
            best = Some((var, (b as f64 + 1.0) * BIN_MPS, mu0, mu1));
        }
    }
    best.map(|(_, th, lo, hi)| (th, lo, hi))
}

/// Classify, clean and refine. With a plan, `slowest_work` is the slowest planned work
/// target (m/s): the threshold stays [`WORK_TARGET_MARGIN`] below it, so a rep at marathon
/// pace next to one at 5-km pace is not taken for a recovery.
pub(crate) fn detect(trace: &Trace, slowest_work: Option<f64>) -> Detection {
    let n = trace.len();
    let smooth = window_mean(&trace.t, &trace.adj, &trace.w, CLASSIFY_HALF_WINDOW_S);
    let valid_w: Vec<f64> = (0..n)
        .map(|i| {
            if trace.adj.get(i).copied().flatten().is_some() {
                trace.w.get(i).copied().unwrap_or(0.0)
            } else {
                0.0
            }
        })
        .collect();
    let fast_ref = quantile(&smooth, &valid_w, FAST_QUANTILE);
    let floor = FLOOR_OF_FAST * fast_ref;
    let floored: Vec<f64> = smooth.iter().map(|v| v.max(floor)).collect();
    let max_threshold = slowest_work.map_or(f64::INFINITY, |v| v * (1.0 - WORK_TARGET_MARGIN));
    let Some((threshold, lo, hi)) = otsu(&floored, &valid_w, max_threshold) else {
        return Detection { runs: Vec::new() };
    };
    if n < 3 || hi < STRUCTURE_RATIO * lo || hi - lo < STRUCTURE_MIN_GAP_MPS {
        return Detection { runs: Vec::new() };
    }
    let band = HYSTERESIS * (hi - lo);
    // Hysteresis classification.
    let mut class = Vec::with_capacity(n);
    let mut state = smooth.first().is_some_and(|&v| v > threshold);
    for &v in &smooth {
        if state && v < threshold - band {
            state = false;
        } else if !state && v > threshold + band {
            state = true;
        }
        class.push(state);
    }
    let mut runs = runs_of(&class);
    merge_short(&mut runs, trace);
    let light = light_trace(trace);
    confirm(&mut runs, trace, light, threshold, CONFIRM * (hi - lo));
    merge_short(&mut runs, trace);
    if !runs.iter().any(|r| r.fast) || !runs.iter().any(|r| !r.fast) {
        return Detection { runs: Vec::new() };
    }
    refine(&mut runs, trace);
    Detection { runs }
}

/// Runs of equal class; consecutive runs share their boundary sample (the first sample of
/// the new class).
fn runs_of(class: &[bool]) -> Vec<Run> {
    let mut runs: Vec<Run> = Vec::new();
    for (i, &c) in class.iter().enumerate() {
        match runs.last_mut() {
            Some(r) if r.fast == c => r.end = i,
            Some(r) => {
                r.end = i;
                runs.push(Run {
                    fast: c,
                    start: i,
                    end: i,
                });
            }
            None => runs.push(Run {
                fast: c,
                start: i,
                end: i,
            }),
        }
    }
    runs
}

/// Merge runs shorter than [`MIN_RUN_S`] into their neighbours, shortest first.
fn merge_short(runs: &mut Vec<Run>, trace: &Trace) {
    loop {
        if runs.len() < 2 {
            return;
        }
        let dur = |r: &Run| trace.time(r.end) - trace.time(r.start);
        let Some((k, d)) = runs
            .iter()
            .enumerate()
            .map(|(k, r)| (k, dur(r)))
            .min_by(|a, b| a.1.total_cmp(&b.1))
        else {
            return;
        };
        if d >= MIN_RUN_S {
            return;
        }
        flip(runs, k);
    }
}

/// Merge stretches whose mean smoothed speed does not clear the threshold by `margin`
/// (the worst first, until all clear). Prefix sums keep each mean O(1).
fn confirm(runs: &mut Vec<Run>, trace: &Trace, smooth: &[f64], threshold: f64, margin: f64) {
    let mut ps = Vec::with_capacity(smooth.len() + 1);
    let mut pw = Vec::with_capacity(smooth.len() + 1);
    let (mut a, mut b) = (0.0, 0.0);
    ps.push(0.0);
    pw.push(0.0);
    for (i, v) in smooth.iter().enumerate() {
        let w = trace.w.get(i).copied().unwrap_or(0.0).max(1e-3);
        a += v * w;
        b += w;
        ps.push(a);
        pw.push(b);
    }
    // Mean over the run's core: [`LEVEL_SKIP_S`] left out at each end (the pace is still
    // changing there), unless that leaves nothing.
    let mean = |r: &Run| -> f64 {
        let (t0, t1) = (trace.time(r.start), trace.time(r.end));
        let (mut lo, mut hi) = (r.start, r.end + 1);
        if t1 - t0 > 3.0 * LEVEL_SKIP_S {
            lo = trace
                .t
                .partition_point(|&x| x < t0 + LEVEL_SKIP_S)
                .max(r.start);
            hi = trace
                .t
                .partition_point(|&x| x <= t1 - LEVEL_SKIP_S)
                .min(r.end + 1);
            if hi <= lo {
                (lo, hi) = (r.start, r.end + 1);
            }
        }
        let s = ps.get(hi).copied().unwrap_or(0.0) - ps.get(lo).copied().unwrap_or(0.0);
        let w = pw.get(hi).copied().unwrap_or(0.0) - pw.get(lo).copied().unwrap_or(0.0);
        if w > 0.0 {
            s / w
        } else {
            threshold
        }
    };
    loop {
        if runs.len() < 2 {
            return;
        }
        // Shortfall: how far a run's mean falls short of clearing the threshold by `margin`.
        let worst = runs
            .iter()
            .enumerate()
            .map(|(k, r)| {
                let m = mean(r);
                let short = if r.fast {
                    threshold + margin - m
                } else {
                    m - (threshold - margin)
                };
                (k, short)
            })
            .max_by(|x, y| x.1.total_cmp(&y.1));
        let Some((k, short)) = worst else { return };
        if short <= 0.0 {
            return;
        }
        flip(runs, k);
    }
}

/// Flip run `k`: it joins its neighbours into one run.
fn flip(runs: &mut Vec<Run>, k: usize) {
    let Some(&r) = runs.get(k) else { return };
    let start = if k > 0 {
        runs.get(k - 1).map_or(r.start, |p| p.start)
    } else {
        r.start
    };
    let end = runs.get(k + 1).map_or(r.end, |x| x.end);
    let lo = k.saturating_sub(1);
    let hi = (k + 1).min(runs.len() - 1);
    runs.splice(
        lo..=hi,
        [Run {
            fast: !r.fast,
            start,
            end,
        }],
    );
}

/// Place every boundary to the sample (see [`refine_one`]).
fn refine(runs: &mut [Run], trace: &Trace) {
    let light = light_trace(trace);
    for k in 1..runs.len() {
        let (Some(&a), Some(&b)) = (runs.get(k - 1), runs.get(k)) else {
            continue;
        };
        if let Some(idx) = refine_one(trace, light, a.start, b.start, b.end) {
            if let Some(r) = runs.get_mut(k - 1) {
                r.end = idx;
            }
            if let Some(r) = runs.get_mut(k) {
                r.start = idx;
            }
        }
    }
}

/// The light smoothing used by [`refine_one`], computed once per trace.
pub(crate) fn light_trace(trace: &Trace) -> &[f64] {
    trace
        .light
        .get_or_init(|| window_mean(&trace.t, &trace.adj, &trace.w, REFINE_HALF_WINDOW_S))
}

/// Refine the boundary `coarse` between the stretches `a_start..=coarse` and
/// `coarse..=b_end`: take the local levels each side (mean over [`LEVEL_SPAN_S`], skipping
/// [`LEVEL_SKIP_S`] next to the boundary), find the split within [`REFINE_SEARCH_S`] that
/// puts the most time on the right side of their midpoint (a step fit with fixed levels:
/// robust to noise crossing the midpoint several times), interpolate the crossing time,
/// and back off [`CHANGE_LAG_S`]. Returns a sample strictly between `a_start` and `b_end`.
pub(crate) fn refine_one(
    trace: &Trace,
    light: &[f64],
    a_start: usize,
    coarse: usize,
    b_end: usize,
) -> Option<usize> {
    if b_end < a_start + 2 {
        return None;
    }
    let tb = trace.time(coarse);
    let level = |from: usize, to: usize, lo_t: f64, hi_t: f64| -> Option<f64> {
        let (mut s, mut w) = (0.0, 0.0);
        for i in from..=to {
            let ti = trace.time(i);
            if ti < lo_t || ti > hi_t {
                continue;
            }
            if let (Some(v), Some(&wi)) = (light.get(i), trace.w.get(i)) {
                s += v * wi.max(1e-3);
                w += wi.max(1e-3);
            }
        }
        (w > 0.0).then(|| s / w)
    };
    let before = level(a_start, coarse, tb - LEVEL_SPAN_S, tb - LEVEL_SKIP_S)
        .or_else(|| level(a_start, coarse, f64::NEG_INFINITY, f64::INFINITY))?;
    let after = level(coarse, b_end, tb + LEVEL_SKIP_S, tb + LEVEL_SPAN_S)
        .or_else(|| level(coarse, b_end, f64::NEG_INFINITY, f64::INFINITY))?;
    let mid = 0.5 * (before + after);
    let rising = after > before;
    let lo_idx = a_start + 1;
    let hi_idx = b_end - 1;
    let from = (lo_idx..=hi_idx)
        .find(|&i| trace.time(i) >= tb - REFINE_SEARCH_S)
        .unwrap_or(lo_idx);
    let to = (from..=hi_idx)
        .take_while(|&i| trace.time(i) <= tb + REFINE_SEARCH_S)
        .last()
        .unwrap_or(from);
    if to <= from {
        return None;
    }
    // Prefix sum of (v - mid)·w: the best split minimises it (rising) or maximises it
    // (falling).
    let mut p = 0.0;
    let mut best = (f64::INFINITY, coarse);
    for i in from..=to {
        let score = if rising { p } else { -p };
        if score < best.0 {
            best = (score, i);
        }
        let v = trace
            .adj
            .get(i)
            .copied()
            .flatten()
            .or_else(|| light.get(i).copied());
        if let (Some(v), Some(&w)) = (v, trace.w.get(i)) {
            p += (v - mid) * w.max(1e-3);
        }
    }
    let kstar = best.1.max(1);
    let (t0, t1) = (trace.time(kstar - 1), trace.time(kstar));
    let (v0, v1) = (
        light.get(kstar - 1).copied().unwrap_or(mid),
        light.get(kstar).copied().unwrap_or(mid),
    );
    let frac = if (v1 - v0).abs() > 1e-9 {
        ((mid - v0) / (v1 - v0)).clamp(0.0, 1.0)
    } else {
        1.0
    };
    let tc = t0 + frac * (t1 - t0) - CHANGE_LAG_S;
    Some(trace.nearest(tc).clamp(lo_idx, hi_idx))
}
