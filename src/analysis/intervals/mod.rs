//! Intervals: the work and recovery segments of a session, to the sample.
//!
//! [`find_intervals`] turns a session (and its plan, if any) into an [`IntervalSet`].
//!
//! # Method
//!
//! 1. **Device laps** are used when they fit the plan: one lap per planned segment, each
//!    within 15 % (at least 10 s or 50 m) of its planned duration or distance. Without a
//!    plan, laps are used when they split the session into clearly faster and slower laps
//!    (the widest gap between lap paces at least 15 %, fast laps never back to back) and
//!    are not auto-laps (most laps the same distance, such as every kilometre or mile).
//!    Lap starts snap to the nearest sample.
//! 2. Otherwise the **speed signal** is used: hill-adjusted speed with flagged speed
//!    samples removed ([`crate::ingest::clean::sample_mask`]; the gaps are interpolated in
//!    time), smoothed with a 10-s centred, time-weighted window (so irregular "smart"
//!    sampling keeps its time span). The hill adjustment uses the Minetti et al. 2002 cost
//!    of gradient (J Appl Physiol 93:1039; [`crate::analysis::gradient`]) to a partial power
//!    with a floor on descents ([`hill_factor`]): runners hold neither pace nor metabolic
//!    power on hills, and the full correction makes an easy climb look like a rep. A fast
//!    and a slow level come from Otsu's threshold on that trace, after speeds below 75 %
//!    of its 95th percentile are raised to that floor (a standing or walking recovery
//!    would otherwise pull the threshold between itself and the warm-up); with a plan the
//!    threshold stays 7 % below the slowest planned work target. Samples are classified
//!    with hysteresis around the threshold; stretches under 8 s are merged into their
//!    neighbours, and so are stretches whose core mean does not clear the threshold by a
//!    fifth of the level gap (a dip inside a rep, a pick-up inside a jog). Each boundary is
//!    then refined to the sample: the split within ±15 s that puts the most time on the
//!    correct side of the midpoint between the local levels either side (a step fit with
//!    fixed levels), the crossing interpolated and moved 2 s earlier for the time a runner
//!    takes to change pace.
//!
//!    We chose two-level classification over a general change-point search (PELT, binary
//!    segmentation on the mean) because a workout *is* two-level at the resolution that
//!    matters: reps against everything else. The threshold adapts to each session, the
//!    hysteresis and minimum length stop noise and surges from making reps, hill
//!    adjustment stops rolling hills from making them, and the boundary refinement uses
//!    local levels so fading, progression and hill repeats keep their boundaries. It is
//!    O(n) in samples (O(n + bins) for the threshold).
//! 3. With a plan, the fast stretches are **aligned** to the plan's work segments by
//!    edit-distance dynamic programming ([`align`]): match (cost from duration or distance
//!    mismatch, target-speed mismatch and the mismatch of the slow stretch before), missing
//!    rep, extra rep. One fast stretch may match several back-to-back work segments; it is
//!    then split at the planned proportions, each split refined. Slow stretches take the
//!    planned warm-up, recovery or cool-down between their neighbouring reps. O(detected ×
//!    expected).
//! 4. Without a plan the set is **inferred**: slow before the first fast stretch is the
//!    warm-up, slow after the last is the cool-down, slow between is recovery, fast is work;
//!    a session without two clearly different levels is one steady interval.
//!
//! Recovery mode, when the plan does not give one, comes from the mean speed: stand under
//! 0.5 m/s, walk under 2.0 m/s, jog above.
//!
//! Boundaries are sample indices: `start_s == t[start]`, `end_s == t[end]`, consecutive
//! intervals share their boundary sample, and the set covers the first to the last sample.

mod align;
mod detect;
mod laps;
mod trace;
mod unplanned;

pub use align::{
    AMOUNT_WEIGHT, GAP_WEIGHT, MAX_GROUP, SKIP_DETECTED_COST, SKIP_EXPECTED_COST, SPEED_WEIGHT,
};
pub use detect::{
    CHANGE_LAG_S, CLASSIFY_HALF_WINDOW_S, CONFIRM, FAST_QUANTILE, FLOOR_OF_FAST, HYSTERESIS,
    LEVEL_SKIP_S, LEVEL_SPAN_S, MIN_RUN_S, REFINE_HALF_WINDOW_S, REFINE_SEARCH_S,
    STRUCTURE_MIN_GAP_MPS, STRUCTURE_RATIO, WORK_TARGET_MARGIN,
};
pub use laps::{
    AUTO_LAP_DISTANCES_M, AUTO_LAP_SHARE, AUTO_LAP_TOLERANCE, LAP_PACE_RATIO, LAP_TOLERANCE,
    LAP_TOLERANCE_M, LAP_TOLERANCE_S, MIN_LAP_S,
};

use crate::model::{
    Amount, AthleteProfile, ExpectedInterval, Interval, IntervalSet, IntervalSource, Plan,
    RecoveryMode, SegmentKind, Session,
};
pub use trace::{hill_factor, DOWNHILL_FACTOR_FLOOR, HILL_EXPONENT};
pub use unplanned::{
    HR_RESPONSE_BPM, MIN_END_S, MIN_MAIN_RUN_S, ONE_EFFORT_MIN_INTENSITY, ONE_EFFORT_MIN_SLOW_S,
    PROGRESSION_STEP, STEADY_NOTE, STOPS_MIN_EFFORT_S,
};

use crate::analysis::motion::{self, Motion};

use align::Fast;
use trace::Trace;

/// Mean speed below which a recovery counts as standing, m/s. Our design choice: GPS drift
/// while standing reads a few tenths of a metre per second.
pub const STAND_BELOW_MPS: f64 = 0.5;
/// Mean speed below which a recovery counts as walking, m/s. Common coaching practice (no
/// published source): brisk walking stays under 2 m/s, the slowest jog is above it.
pub const WALK_BELOW_MPS: f64 = 2.0;
/// Back-to-back work segments whose target speeds differ by more than this fraction have
/// their shared boundary refined from the speed; otherwise it stays at the planned
/// proportion. Our design choice.
pub const GROUP_SPLIT_SPEED_DIFF: f64 = 0.05;

/// The note on an inferred set.
pub const INFERRED_NOTE: &str = "no plan: the set was inferred from the speed";

/// Recovery mode from a mean speed (m/s): stand, walk or jog.
pub fn mode_from_speed(mean_mps: f64) -> RecoveryMode {
    if mean_mps < STAND_BELOW_MPS {
        RecoveryMode::Stand
    } else if mean_mps < WALK_BELOW_MPS {
        RecoveryMode::Walk
    } else {
        RecoveryMode::Jog
    }
}

/// One interval before it becomes an [`Interval`].
#[derive(Debug, Clone, Copy)]
struct Piece {
    start: usize,
    end: usize,
    kind: SegmentKind,
    expected: Option<usize>,
    mode: Option<RecoveryMode>,
}

/// Consecutive pairs of boundary indices: `(b[0], b[1]), (b[1], b[2]), ...`.
pub(crate) fn pairs(b: &[usize]) -> impl Iterator<Item = (usize, usize)> + '_ {
    b.iter().copied().zip(b.iter().copied().skip(1))
}

/// Find the intervals of a session: device laps when they fit, otherwise detection from the
/// speed, aligned to the plan's expected sequence when there is a plan (see the module
/// docs). Pure; O(n) in samples plus O(detected × expected) for the alignment.
///
/// An empty session gives an empty set; a session without speed or distance gives one
/// interval covering it, with a note.
pub fn find_intervals(
    session: &Session,
    plan: Option<&Plan>,
    profile: &AthleteProfile,
) -> IntervalSet {
    find_intervals_with(
        session,
        plan,
        profile,
        crate::analysis::gradient::gradients(session).as_deref(),
    )
}

/// [`find_intervals`] with the session's gradients already computed
/// ([`crate::analysis::gradient::gradients`]), so a caller that also reviews the session
/// computes them once.
pub fn find_intervals_with(
    session: &Session,
    plan: Option<&Plan>,
    profile: &AthleteProfile,
    grads: Option<&[Option<f64>]>,
) -> IntervalSet {
    find_intervals_moving(
        session,
        plan,
        profile,
        grads,
        &motion::classify_with(session, grads),
    )
}

/// [`find_intervals_with`] with the session's motion already classified
/// ([`crate::analysis::motion::classify`]).
pub fn find_intervals_moving(
    session: &Session,
    plan: Option<&Plan>,
    profile: &AthleteProfile,
    grads: Option<&[Option<f64>]>,
    motion: &Motion,
) -> IntervalSet {
    // Values no recording can hold read as missing (see `review::review_moving`).
    let checked = crate::analysis::plausible::plausible(session);
    let redone;
    let (session, grads, motion) = match &checked {
        std::borrow::Cow::Borrowed(_) => (session, grads, motion),
        std::borrow::Cow::Owned(clean) => {
            let g = crate::analysis::gradient::gradients(clean);
            let m = motion::classify_with(clean, g.as_deref());
            redone = (g, m);
            (clean, redone.0.as_deref(), &redone.1)
        }
    };
    let expected: Vec<ExpectedInterval> = plan.map(Plan::expand).unwrap_or_default();
    let n = session.len();
    let mut set = IntervalSet {
        inferred: plan.is_none(),
        ..IntervalSet::default()
    };
    if plan.is_none() {
        set.notes.push(INFERRED_NOTE.to_string());
    }
    if n < 2 {
        set.notes.push("too few samples to find intervals".into());
        set.missing = (0..expected.len()).collect();
        return set;
    }
    let Some(trace) = Trace::with_gradients(session, grads, motion) else {
        set.notes
            .push("no speed or distance: the intervals could not be found".into());
        set.missing = (0..expected.len()).collect();
        set.intervals = build(
            &session.t,
            &[single(n, SegmentKind::Steady)],
            IntervalSource::Detected,
        );
        return set;
    };

    // 1. Device laps.
    if let Some(bounds) = laps::lap_boundaries(&session.laps, &trace) {
        if plan.is_some() {
            if laps::fit_plan(&bounds, &expected, &trace) {
                let pieces: Vec<Piece> = pairs(&bounds)
                    .zip(expected.iter().enumerate())
                    .map(|((a, b), (i, e))| Piece {
                        start: a,
                        end: b,
                        kind: e.kind,
                        expected: Some(i),
                        mode: recovery_mode(e.kind, e.mode, &trace, a, b),
                    })
                    .collect();
                set.notes.push("device laps fitted the plan".into());
                set.intervals = build(&trace.t, &pieces, IntervalSource::DeviceLap);
                return set;
            }
            set.notes.push(format!(
                "device laps did not fit the plan ({} laps for {} planned segments): \
                 intervals found from the speed",
                bounds.len() - 1,
                expected.len()
            ));
        } else if laps::are_auto_laps(&bounds, &trace) {
            set.notes
                .push("device laps are auto-laps (equal distances): not used".into());
        } else if let Some(fast) = laps::pace_split(&bounds, &trace) {
            let runs: Vec<(usize, usize, bool)> = pairs(&bounds)
                .zip(&fast)
                .map(|((a, b), &f)| (a, b, f))
                .collect();
            set.notes.push("device laps split the pace".into());
            set.intervals = build(
                &trace.t,
                &label_inferred(&runs, &trace),
                IntervalSource::DeviceLap,
            );
            return set;
        }
    }

    // 2. Without a plan: what kind of run it was, then its pieces.
    if plan.is_none() {
        let (intervals, notes) = unplanned::find(session, &trace, grads, motion, profile);
        set.intervals = intervals;
        set.notes.extend(notes);
        return set;
    }

    // 3. Detection from the speed, aligned to the plan.
    let slowest_work = expected
        .iter()
        .filter(|e| e.kind == SegmentKind::Work)
        .map(|e| e.target.centre_speed(profile))
        .collect::<Option<Vec<f64>>>()
        .and_then(|v| v.into_iter().min_by(f64::total_cmp));
    let det = detect::detect(&trace, slowest_work);
    let runs: Vec<(usize, usize, bool)> =
        det.runs.iter().map(|r| (r.start, r.end, r.fast)).collect();
    if !expected.iter().any(|e| e.kind == SegmentKind::Work) {
        let pieces = proportional(&expected, &trace);
        set.notes
            .push("the plan has no work segments: split at the planned amounts".into());
        mark_missing(&mut set, &pieces, expected.len());
        set.intervals = build(&trace.t, &pieces, IntervalSource::Detected);
        return set;
    }
    if runs.is_empty() {
        set.notes
            .push("no clear change of pace: no planned work interval was found".into());
        set.missing = (0..expected.len()).collect();
        set.intervals = build(
            &trace.t,
            &[single(n, SegmentKind::Steady)],
            IntervalSource::Detected,
        );
        return set;
    }
    let pieces = aligned_pieces(&runs, &expected, &trace, profile);
    mark_missing(&mut set, &pieces, expected.len());
    set.intervals = build(&trace.t, &pieces, IntervalSource::Detected);
    set.extra = set
        .intervals
        .iter()
        .enumerate()
        .filter(|(_, iv)| iv.kind == SegmentKind::Work && iv.expected.is_none())
        .map(|(k, _)| k)
        .collect();
    set.notes
        .push("intervals found from the speed and aligned to the plan".into());
    let missing_work = set
        .missing
        .iter()
        .filter(|&&i| expected.get(i).is_some_and(|e| e.kind == SegmentKind::Work))
        .count();
    if missing_work > 0 {
        set.notes
            .push(format!("{missing_work} planned work interval(s) not found"));
    }
    if !set.extra.is_empty() {
        set.notes.push(format!(
            "{} work interval(s) not in the plan",
            set.extra.len()
        ));
    }
    set
}

fn single(n: usize, kind: SegmentKind) -> Piece {
    Piece {
        start: 0,
        end: n.saturating_sub(1),
        kind,
        expected: None,
        mode: None,
    }
}

/// Planned indices no piece took.
fn mark_missing(set: &mut IntervalSet, pieces: &[Piece], n_expected: usize) {
    let mut used = vec![false; n_expected];
    for p in pieces {
        if let Some(slot) = p.expected.and_then(|i| used.get_mut(i)) {
            *slot = true;
        }
    }
    set.missing = used
        .iter()
        .enumerate()
        .filter(|(_, u)| !**u)
        .map(|(i, _)| i)
        .collect();
}

/// The mode of a recovery: the planned one, else from the mean speed. `None` for other kinds.
fn recovery_mode(
    kind: SegmentKind,
    planned: Option<RecoveryMode>,
    trace: &Trace,
    start: usize,
    end: usize,
) -> Option<RecoveryMode> {
    if kind != SegmentKind::Recovery {
        return None;
    }
    planned.or_else(|| trace.stats(start, end).raw_speed.map(mode_from_speed))
}

/// Turn pieces into intervals, dropping empty ones.
fn build(t: &[f64], pieces: &[Piece], source: IntervalSource) -> Vec<Interval> {
    pieces
        .iter()
        .filter(|p| p.end > p.start)
        .map(|p| Interval {
            kind: p.kind,
            source,
            start: p.start,
            end: p.end,
            start_s: t.get(p.start).copied().unwrap_or(0.0),
            end_s: t.get(p.end).copied().unwrap_or(0.0),
            expected: p.expected,
            mode: p.mode,
        })
        .collect()
}

/// No plan: slow before the first fast stretch is the warm-up, after the last the
/// cool-down, between them recovery; fast is work.
fn label_inferred(runs: &[(usize, usize, bool)], trace: &Trace) -> Vec<Piece> {
    let first_fast = runs.iter().position(|r| r.2);
    let last_fast = runs.iter().rposition(|r| r.2);
    runs.iter()
        .enumerate()
        .map(|(k, &(start, end, fast))| {
            let kind = if fast {
                SegmentKind::Work
            } else if first_fast.is_none_or(|f| k < f) {
                SegmentKind::Warmup
            } else if last_fast.is_none_or(|l| k > l) {
                SegmentKind::Cooldown
            } else {
                SegmentKind::Recovery
            };
            Piece {
                start,
                end,
                kind,
                expected: None,
                mode: recovery_mode(kind, None, trace, start, end),
            }
        })
        .collect()
}

/// A plan without work segments: cut the session at the planned amounts, in order; the
/// last planned segment runs to the end.
fn proportional(expected: &[ExpectedInterval], trace: &Trace) -> Vec<Piece> {
    let n = trace.len();
    let mut pieces = Vec::new();
    let mut start = 0usize;
    for (i, e) in expected.iter().enumerate() {
        if start >= n - 1 {
            break;
        }
        let end = if i + 1 == expected.len() {
            n - 1
        } else {
            match e.amount {
                Amount::Duration(s) => trace.nearest(trace.time(start) + s.max(0.0)),
                Amount::Distance(m) => {
                    let d0 = trace.dist_at(start).unwrap_or(0.0);
                    (start..n)
                        .find(|&k| trace.dist_at(k).is_some_and(|d| d >= d0 + m.max(0.0)))
                        .unwrap_or(n - 1)
                }
            }
        };
        let end = end.max(start + 1).min(n - 1);
        pieces.push(Piece {
            start,
            end,
            kind: e.kind,
            expected: Some(i),
            mode: recovery_mode(e.kind, e.mode, trace, start, end),
        });
        start = end;
    }
    pieces
}

/// Align detected runs to the plan and label every run.
fn aligned_pieces(
    runs: &[(usize, usize, bool)],
    expected: &[ExpectedInterval],
    trace: &Trace,
    profile: &AthleteProfile,
) -> Vec<Piece> {
    // Fast runs with the slow run before each.
    let mut fast_runs = Vec::new();
    let mut fast: Vec<Fast> = Vec::new();
    for (k, &(s, e, f)) in runs.iter().enumerate() {
        if !f {
            continue;
        }
        let before = k
            .checked_sub(1)
            .and_then(|p| runs.get(p))
            .filter(|r| !r.2)
            .map(|r| trace.stats(r.0, r.1));
        fast_runs.push(k);
        fast.push(Fast {
            stats: trace.stats(s, e),
            before,
        });
    }
    let assignment = align::align(expected, &fast, profile);
    // Per run: the planned work indices it covers.
    let mut cover: Vec<Vec<usize>> = vec![Vec::new(); runs.len()];
    for (j, &k) in fast_runs.iter().enumerate() {
        if let (Some(slot), Some(a)) = (cover.get_mut(k), assignment.get(j)) {
            *slot = a.clone();
        }
    }
    let light = detect::light_trace(trace);
    let mut used = vec![false; expected.len()];
    let mut pieces = Vec::new();
    for (k, &(start, end, is_fast)) in runs.iter().enumerate() {
        if is_fast {
            let idx = cover.get(k).cloned().unwrap_or_default();
            if idx.is_empty() {
                pieces.push(Piece {
                    start,
                    end,
                    kind: SegmentKind::Work,
                    expected: None,
                    mode: None,
                });
                continue;
            }
            let items: Vec<&ExpectedInterval> =
                idx.iter().filter_map(|&i| expected.get(i)).collect();
            let mut cuts = align::split_group(trace, start, end, &items);
            // Refine cuts between targets of clearly different speed.
            for (c, cut) in cuts.iter_mut().enumerate() {
                let speeds = (
                    items.get(c).and_then(|e| e.target.centre_speed(profile)),
                    items
                        .get(c + 1)
                        .and_then(|e| e.target.centre_speed(profile)),
                );
                if let (Some(a), Some(b)) = speeds {
                    if (a / b - 1.0).abs() > GROUP_SPLIT_SPEED_DIFF {
                        if let Some(r) = detect::refine_one(trace, light, start, *cut, end) {
                            *cut = r;
                        }
                    }
                }
            }
            let mut b = vec![start];
            for c in cuts {
                if c > *b.last().unwrap_or(&start) && c < end {
                    b.push(c);
                }
            }
            b.push(end);
            for ((from, to), &i) in pairs(&b).zip(&idx) {
                if let Some(u) = used.get_mut(i) {
                    *u = true;
                }
                pieces.push(Piece {
                    start: from,
                    end: to,
                    kind: SegmentKind::Work,
                    expected: Some(i),
                    mode: None,
                });
            }
            // Unreachable in practice: fewer boundaries than segments (cuts collapsed).
            continue;
        }
        // A slow run: the planned non-work segments between its matched neighbours.
        let prev = (0..k)
            .rev()
            .find_map(|p| cover.get(p).and_then(|c| c.last().copied()));
        let next = (k + 1..runs.len()).find_map(|q| cover.get(q).and_then(|c| c.first().copied()));
        let lo = prev.map_or(0, |p| p + 1);
        let hi = next.unwrap_or(expected.len());
        let any_fast_before = runs.iter().take(k).any(|r| r.2);
        let any_fast_after = runs.iter().skip(k + 1).any(|r| r.2);
        let free = |i: &usize| {
            expected
                .get(*i)
                .is_some_and(|e| e.kind != SegmentKind::Work)
                && !used.get(*i).copied().unwrap_or(true)
        };
        // The last slow stretch takes the last planned one (the cool-down), others the first.
        let candidate = if any_fast_after {
            (lo..hi).find(free)
        } else {
            (lo..hi).rev().find(free)
        };
        let (kind, planned_mode) = match candidate.and_then(|i| expected.get(i)) {
            Some(e) => (e.kind, e.mode),
            None if !any_fast_before => (SegmentKind::Warmup, None),
            None if !any_fast_after => (SegmentKind::Cooldown, None),
            None => (SegmentKind::Recovery, None),
        };
        if let Some(u) = candidate.and_then(|i| used.get_mut(i)) {
            *u = true;
        }
        pieces.push(Piece {
            start,
            end,
            kind,
            expected: candidate,
            mode: recovery_mode(kind, planned_mode, trace, start, end),
        });
    }
    pieces
}

/// Without a plan, the work stretches found must also be faster than the rest in the
/// speed the watch recorded, by this factor. Detection runs on hill-adjusted speed, which
/// makes a steep climb at a walk look like a rep; real repeats (on a hill too: up at effort,
/// jog down) are clearly faster on the watch as well. Our design choice.
pub const RAW_STRUCTURE_RATIO: f64 = 1.08;

/// Whether the fast runs are faster than the slow runs in recorded speed (distance over
/// moving time, summed over each kind) by [`RAW_STRUCTURE_RATIO`]. `true` when either side
/// has no speed to compare.
fn raw_structure(runs: &[(usize, usize, bool)], trace: &Trace) -> bool {
    let (mut fast, mut slow) = ((0.0, 0.0), (0.0, 0.0));
    for &(start, end, is_fast) in runs {
        let st = trace.stats(start, end);
        let Some(v) = st.raw_speed else { continue };
        let side = if is_fast { &mut fast } else { &mut slow };
        side.0 += v * st.duration_s;
        side.1 += st.duration_s;
    }
    if fast.1 <= 0.0 || slow.1 <= 0.0 {
        return true;
    }
    fast.0 / fast.1 >= RAW_STRUCTURE_RATIO * (slow.0 / slow.1)
}
