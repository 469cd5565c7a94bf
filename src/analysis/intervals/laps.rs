//! Device laps: do they fit the plan, or split the session by pace? Auto-laps do not count.

use super::trace::{SegStats, Trace};
use crate::model::{Amount, DeviceLap, ExpectedInterval};

/// Relative tolerance of a lap against the plan's amount. Common coaching practice (no
/// published source): a lap pressed a few seconds late or a GPS-measured distance a few
/// per cent off still fits.
pub const LAP_TOLERANCE: f64 = 0.15;
/// Absolute tolerance of a timed lap, seconds (whichever of the two is larger applies).
/// Our design choice.
pub const LAP_TOLERANCE_S: f64 = 10.0;
/// Absolute tolerance of a distance lap, metres. Our design choice.
pub const LAP_TOLERANCE_M: f64 = 50.0;
/// Laps shorter than this are ignored (a double press, the device closing a last lap as it
/// stops), seconds. Our design choice.
pub const MIN_LAP_S: f64 = 3.0;
/// Distances of auto-laps, metres: a kilometre and a mile.
pub const AUTO_LAP_DISTANCES_M: [f64; 2] = [1000.0, 1609.344];
/// A lap within this fraction of an auto-lap distance (or of the laps' common distance)
/// counts as one. Our design choice (GPS distance on a 1-km lap varies by a few metres).
pub const AUTO_LAP_TOLERANCE: f64 = 0.03;
/// Laps split the pace when the fast laps are this much faster than the slow ones (ratio of
/// mean hill-adjusted speeds across the widest gap). Common coaching practice (no
/// published source), as [`super::detect::STRUCTURE_RATIO`].
pub const LAP_PACE_RATIO: f64 = 1.15;

/// Lap boundaries as sample indices: `b[0] = 0`, `b[k] = n - 1`, lap `j` covers samples
/// `b[j]..=b[j+1]`. Starts snap to the nearest sample; the first lap starts at the first
/// sample and the last ends at the last. `None` when there are no usable laps or two laps
/// snap to the same sample.
pub(crate) fn lap_boundaries(laps: &[DeviceLap], trace: &Trace) -> Option<Vec<usize>> {
    let n = trace.len();
    if n < 2 {
        return None;
    }
    let mut laps: Vec<&DeviceLap> = laps
        .iter()
        .filter(|l| l.start_s.is_finite() && l.end_s.is_finite())
        .filter(|l| l.end_s - l.start_s >= MIN_LAP_S)
        .collect();
    laps.sort_by(|a, b| a.start_s.total_cmp(&b.start_s));
    if laps.is_empty() {
        return None;
    }
    let mut b = vec![0usize];
    for lap in laps.iter().skip(1) {
        let k = trace.nearest(lap.start_s);
        if k <= *b.last()? || k >= n - 1 {
            return None;
        }
        b.push(k);
    }
    b.push(n - 1);
    Some(b)
}

/// True when a lap's stats fit an expected amount.
pub(crate) fn fits(amount: Amount, stats: &SegStats) -> bool {
    match amount {
        Amount::Duration(s) => {
            (stats.duration_s - s).abs() <= (LAP_TOLERANCE * s).max(LAP_TOLERANCE_S)
        }
        Amount::Distance(m) => stats
            .distance_m
            .is_some_and(|d| (d - m).abs() <= (LAP_TOLERANCE * m).max(LAP_TOLERANCE_M)),
    }
}

/// The laps fit the plan: one lap per expected interval, each within tolerance.
pub(crate) fn fit_plan(bounds: &[usize], expected: &[ExpectedInterval], trace: &Trace) -> bool {
    if bounds.len() != expected.len() + 1 || expected.is_empty() {
        return false;
    }
    super::pairs(bounds)
        .zip(expected)
        .all(|((a, b), e)| fits(e.amount, &trace.stats(a, b)))
}

/// Auto-laps: at least [`AUTO_LAP_SHARE`] of the laps (all but the last, which the
/// device closes wherever the run ends) measure the same distance within
/// [`AUTO_LAP_TOLERANCE`]. Every kilometre or mile ([`AUTO_LAP_DISTANCES_M`]) is the usual
/// case, but any fixed auto-lap distance is caught the same way; so is a distance trigger
/// on equal laps. A session of equal work and recovery distances is caught too: it falls
/// back to detection from the speed, which handles it.
pub(crate) fn are_auto_laps(bounds: &[usize], trace: &Trace) -> bool {
    let full = bounds.len().saturating_sub(2); // every lap but the last
    if full < 2 {
        return false;
    }
    let dists: Vec<f64> = super::pairs(bounds)
        .take(full)
        .filter_map(|(a, b)| trace.stats(a, b).distance_m)
        .collect();
    if dists.len() < full {
        return false;
    }
    let mut sorted = dists.clone();
    sorted.sort_by(f64::total_cmp);
    let median = sorted.get(sorted.len() / 2).copied().unwrap_or(0.0);
    if median <= 0.0 {
        return false;
    }
    let near = dists
        .iter()
        .filter(|&&d| (d - median).abs() <= AUTO_LAP_TOLERANCE * median)
        .count();
    near as f64 >= AUTO_LAP_SHARE * dists.len() as f64
}

/// Share of equal-distance laps that marks auto-laps. Our design choice.
pub const AUTO_LAP_SHARE: f64 = 0.75;

/// Without a plan: the laps split the session into fast and slow laps by a clear margin,
/// with at least one slow lap between fast ones. Returns which laps are fast.
pub(crate) fn pace_split(bounds: &[usize], trace: &Trace) -> Option<Vec<bool>> {
    let speeds: Vec<f64> = super::pairs(bounds)
        .map(|(a, b)| trace.stats(a, b).adj_speed)
        .collect::<Option<Vec<f64>>>()?;
    if speeds.len() < 3 {
        return None;
    }
    let mut sorted = speeds.clone();
    sorted.sort_by(f64::total_cmp);
    // The widest relative gap between consecutive sorted speeds.
    let (mut best_ratio, mut cut) = (0.0, 0.0);
    for (lo, hi) in sorted.iter().zip(sorted.iter().skip(1)) {
        let ratio = hi / lo.max(0.1);
        if ratio > best_ratio {
            best_ratio = ratio;
            cut = 0.5 * (lo + hi);
        }
    }
    if best_ratio < LAP_PACE_RATIO {
        return None;
    }
    let fast: Vec<bool> = speeds.iter().map(|&v| v > cut).collect();
    // Fast laps must alternate with slow ones: no two fast laps in a row, at least two fast.
    let n_fast = fast.iter().filter(|&&f| f).count();
    let consecutive = fast.iter().zip(fast.iter().skip(1)).any(|(a, b)| *a && *b);
    (n_fast >= 2 && !consecutive).then_some(fast)
}
