//! Aligning detected fast stretches to the plan's work segments by dynamic programming.

use super::trace::{SegStats, Trace};
use crate::model::{Amount, AthleteProfile, ExpectedInterval, SegmentKind};

/// Cost of a planned work segment with no recorded match (a missing rep). Our design choice:
/// equal to the cost of an unmatched recorded one, so a match is kept whenever it fits
/// better than dropping both.
pub const SKIP_EXPECTED_COST: f64 = 1.0;
/// Cost of a recorded fast stretch the plan did not ask for (an extra rep). Our design
/// choice.
pub const SKIP_DETECTED_COST: f64 = 1.0;
/// Weight of the amount mismatch (relative error of duration or distance, capped at 1).
pub const AMOUNT_WEIGHT: f64 = 1.0;
/// Weight of the speed mismatch against the target (relative error, capped at 1).
pub const SPEED_WEIGHT: f64 = 0.5;
/// Weight of the mismatch of the slow stretch before a rep against the planned one.
pub const GAP_WEIGHT: f64 = 0.5;
/// Most planned work segments one recorded fast stretch may cover (back-to-back work
/// segments with no recovery between, such as `3:00 @ half, 1:00 @ 5k`). Our design choice.
pub const MAX_GROUP: usize = 4;

/// Relative mismatch between a planned amount and a recorded stretch (0 = exact).
pub(crate) fn amount_mismatch(amount: Amount, stats: &SegStats) -> f64 {
    match amount {
        Amount::Duration(s) if s > 0.0 => (stats.duration_s - s).abs() / s,
        Amount::Distance(m) if m > 0.0 => match stats.distance_m {
            Some(d) => (d - m).abs() / m,
            None => 1.0,
        },
        _ => 1.0,
    }
}

/// The sum of a group's amounts, when they share a unit.
fn group_amount(items: &[&ExpectedInterval]) -> Option<Amount> {
    let first = items.first()?;
    match first.amount {
        Amount::Duration(_) => {
            let mut s = 0.0;
            for e in items {
                match e.amount {
                    Amount::Duration(x) => s += x,
                    Amount::Distance(_) => return None,
                }
            }
            Some(Amount::Duration(s))
        }
        Amount::Distance(_) => {
            let mut s = 0.0;
            for e in items {
                match e.amount {
                    Amount::Distance(x) => s += x,
                    Amount::Duration(_) => return None,
                }
            }
            Some(Amount::Distance(s))
        }
    }
}

/// One recorded fast stretch as the aligner sees it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Fast {
    pub stats: SegStats,
    /// The slow stretch just before it, if any.
    pub before: Option<SegStats>,
}

/// The result: for each fast stretch, the planned work indices (into `expected`) it covers
/// (empty = extra).
pub(crate) type Assignment = Vec<Vec<usize>>;

#[derive(Debug, Clone, Copy)]
enum Move {
    Start,
    SkipExpected,
    SkipDetected,
    Match(usize),
}

/// Edit-distance alignment of the plan's work segments (in order) with the recorded fast
/// stretches (in order). Moves: match one fast stretch with 1..=[`MAX_GROUP`] consecutive
/// back-to-back work segments (cost: amount, target-speed and preceding-gap mismatch),
/// skip a planned one (missing), skip a recorded one (extra). Ties prefer a match, then a
/// missing rep late in the plan over an early one. O(work × fast × MAX_GROUP).
pub(crate) fn align(
    expected: &[ExpectedInterval],
    fast: &[Fast],
    profile: &AthleteProfile,
) -> Assignment {
    let work: Vec<usize> = expected
        .iter()
        .enumerate()
        .filter(|(_, e)| e.kind == SegmentKind::Work)
        .map(|(i, _)| i)
        .collect();
    let (m, d) = (work.len(), fast.len());
    let w = d + 1;
    let mut cost = vec![f64::INFINITY; (m + 1) * w];
    let mut mv = vec![Move::Start; (m + 1) * w];
    let at = |a: usize, j: usize| a * w + j;
    if let Some(c) = cost.get_mut(0) {
        *c = 0.0;
    }
    for a in 0..=m {
        for j in 0..=d {
            if a == 0 && j == 0 {
                continue;
            }
            let mut best = (f64::INFINITY, Move::Start);
            // Match first (ties keep it).
            if j > 0 {
                for g in 1..=MAX_GROUP.min(a) {
                    let first = a - g;
                    let idx: Vec<usize> = work
                        .get(first..a)
                        .map(<[usize]>::to_vec)
                        .unwrap_or_default();
                    // Back-to-back in the plan: consecutive expanded indices.
                    if idx.iter().zip(idx.iter().skip(1)).any(|(a, b)| *b != a + 1) {
                        break;
                    }
                    let Some(f) = fast.get(j - 1) else { continue };
                    let Some(c) = match_cost(expected, &idx, f, profile) else {
                        continue;
                    };
                    let total = cost.get(at(first, j - 1)).copied().unwrap_or(f64::INFINITY) + c;
                    if total < best.0 - 1e-12 {
                        best = (total, Move::Match(g));
                    }
                }
            }
            if j > 0 {
                let total =
                    cost.get(at(a, j - 1)).copied().unwrap_or(f64::INFINITY) + SKIP_DETECTED_COST;
                if total < best.0 - 1e-12 {
                    best = (total, Move::SkipDetected);
                }
            }
            if a > 0 {
                // `<=`: on a tie, skip the later planned rep (backtracking from the end
                // meets it first).
                let total =
                    cost.get(at(a - 1, j)).copied().unwrap_or(f64::INFINITY) + SKIP_EXPECTED_COST;
                if total <= best.0 + 1e-12 {
                    best = (total, Move::SkipExpected);
                }
            }
            if let (Some(c), Some(mm)) = (cost.get_mut(at(a, j)), mv.get_mut(at(a, j))) {
                *c = best.0;
                *mm = best.1;
            }
        }
    }
    // Backtrack.
    let mut out: Assignment = vec![Vec::new(); d];
    let (mut a, mut j) = (m, d);
    while a > 0 || j > 0 {
        match mv.get(at(a, j)).copied().unwrap_or(Move::Start) {
            Move::Match(g) => {
                if let (Some(slot), Some(idx)) = (out.get_mut(j - 1), work.get(a - g..a)) {
                    *slot = idx.to_vec();
                }
                a -= g;
                j -= 1;
            }
            Move::SkipDetected => j -= 1,
            Move::SkipExpected => a -= 1,
            Move::Start => break,
        }
    }
    out
}

/// Cost of matching fast stretch `f` with the planned work segments `idx` (back to back).
fn match_cost(
    expected: &[ExpectedInterval],
    idx: &[usize],
    f: &Fast,
    profile: &AthleteProfile,
) -> Option<f64> {
    let items: Vec<&ExpectedInterval> = idx.iter().filter_map(|&i| expected.get(i)).collect();
    let amount = group_amount(&items)?;
    let mut c = AMOUNT_WEIGHT * amount_mismatch(amount, &f.stats).min(1.0);
    // Target speed: the mean of the group's centres (hill-adjusted speed against it).
    let centres: Vec<f64> = items
        .iter()
        .filter_map(|e| e.target.centre_speed(profile))
        .collect();
    if !centres.is_empty() && centres.len() == items.len() {
        let centre = centres.iter().sum::<f64>() / centres.len() as f64;
        if let Some(v) = f.stats.adj_speed {
            if centre > 0.0 {
                c += SPEED_WEIGHT * ((v / centre - 1.0).abs()).min(1.0);
            }
        }
    }
    // The slow stretch before: against the planned segment before the first of the group.
    let first = *idx.first()?;
    let prev = first.checked_sub(1).and_then(|p| expected.get(p));
    match (prev, f.before) {
        (Some(p), Some(b)) if p.kind != SegmentKind::Work => {
            c += GAP_WEIGHT * amount_mismatch(p.amount, &b).min(1.0);
        }
        (Some(p), None) if p.kind != SegmentKind::Work => c += GAP_WEIGHT,
        (None, Some(b)) if b.duration_s > 60.0 => c += GAP_WEIGHT,
        _ => {}
    }
    Some(c)
}

/// Split a fast stretch matched to several back-to-back work segments at the planned
/// proportions (time or distance), each split then refined by `refine`.
pub(crate) fn split_group(
    trace: &Trace,
    start: usize,
    end: usize,
    items: &[&ExpectedInterval],
) -> Vec<usize> {
    let total: f64 = items
        .iter()
        .map(|e| match e.amount {
            Amount::Duration(x) | Amount::Distance(x) => x.max(0.0),
        })
        .sum();
    let by_distance = matches!(items.first().map(|e| e.amount), Some(Amount::Distance(_)));
    let stats = trace.stats(start, end);
    let mut cuts = Vec::new();
    if total <= 0.0 {
        return cuts;
    }
    let mut acc = 0.0;
    for e in items.iter().take(items.len().saturating_sub(1)) {
        acc += match e.amount {
            Amount::Duration(x) | Amount::Distance(x) => x.max(0.0),
        };
        let frac = acc / total;
        let k = if by_distance {
            let d0 = trace.dist_at(start).unwrap_or(0.0);
            let target = d0 + stats.distance_m.unwrap_or(0.0) * frac;
            // First sample whose distance reaches the target.
            (start..=end)
                .find(|&i| trace.dist_at(i).is_some_and(|d| d >= target))
                .unwrap_or(end)
        } else {
            let target = trace.time(start) + (trace.time(end) - trace.time(start)) * frac;
            trace.nearest(target)
        };
        cuts.push(k.clamp(start + 1, end.saturating_sub(1).max(start + 1)));
    }
    cuts
}
