//! The workout shape: a plan's steps (or, without a plan, the structure the analysis found)
//! reduced to a comparable signature, so the same workout run weeks apart is found again.
//!
//! A shape keeps only the work: per block the repeat count, the work pieces (a duration or
//! a distance, the target's name) and the recovery between repeats (how it is taken and how
//! long). Warm-ups, cool-downs and steady running are left out: "15:00 easy; 6 x 800 m" and
//! "20:00 easy; 6 x 800 m" are the same workout. Pure: no I/O.

use serde::{Deserialize, Serialize};

use crate::model::{Amount, Plan, SegmentKind, Step, Target};

use super::review::Review;

/// Where a shape came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ShapeSource {
    /// The session's plan.
    Plan,
    /// The work intervals the analysis found (no plan).
    Detected,
}

/// One work piece of a shape. A plan piece has a duration or a distance; a detected piece
/// has both (medians of the reps it stands for).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ShapeRep {
    /// Seconds.
    pub duration_s: Option<f64>,
    /// Metres.
    pub distance_m: Option<f64>,
    /// The target's name: a named pace of the profile (`threshold`, `5k`), `pace` for an
    /// absolute pace band, `hr` for a heart-rate band; `None` for an open piece or a detected
    /// one.
    pub target: Option<String>,
}

/// The recovery between repeats of a block.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ShapeRecovery {
    /// `jog`, `walk` or `stand`; `None` when not known.
    pub mode: Option<String>,
    /// Seconds.
    pub duration_s: Option<f64>,
    /// Metres.
    pub distance_m: Option<f64>,
}

/// A block of the shape: `count` times the work pieces, with the recovery between repeats.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ShapeBlock {
    pub count: u32,
    pub work: Vec<ShapeRep>,
    pub recovery: Option<ShapeRecovery>,
}

/// A workout reduced to its work (the glossary's `workout_shape`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WorkoutShape {
    pub source: ShapeSource,
    pub blocks: Vec<ShapeBlock>,
    /// The shape in words, for screens: `6 x 1:30 @ 5k / 2:30 jog`, `20:00 @ threshold`.
    pub label: String,
}

impl WorkoutShape {
    /// Work pieces once the blocks are unrolled.
    pub fn work_count(&self) -> usize {
        self.blocks
            .iter()
            .map(|b| b.count as usize * b.work.len())
            .sum()
    }
}

/// The target's name in a shape.
fn target_name(t: &Target) -> Option<String> {
    match t {
        Target::Open => None,
        Target::PaceRange { .. } => Some("pace".to_string()),
        Target::NamedPace { name, .. } => Some(name.trim().to_lowercase()),
        Target::HrRange { .. } => Some("hr".to_string()),
    }
}

fn rep_of(amount: Amount, target: &Target) -> ShapeRep {
    let (duration_s, distance_m) = match amount {
        Amount::Duration(s) => (Some(s), None),
        Amount::Distance(m) => (None, Some(m)),
    };
    ShapeRep {
        duration_s,
        distance_m,
        target: target_name(target),
    }
}

/// The shape of a plan: its repeat blocks and its single work segments, in order. `None`
/// when the plan has no work (an easy run, a long run written as steady running).
pub fn from_plan(plan: &Plan) -> Option<WorkoutShape> {
    let mut blocks = Vec::new();
    for step in &plan.steps {
        match step {
            Step::Single(seg) if seg.kind == SegmentKind::Work => blocks.push(ShapeBlock {
                count: 1,
                work: vec![rep_of(seg.amount, &seg.target)],
                recovery: None,
            }),
            Step::Single(_) => {}
            Step::Repeat {
                count,
                work,
                recovery,
            } => {
                let pieces: Vec<ShapeRep> = work
                    .iter()
                    .filter(|s| s.kind == SegmentKind::Work)
                    .map(|s| rep_of(s.amount, &s.target))
                    .collect();
                if pieces.is_empty() || *count == 0 {
                    continue;
                }
                let recovery = recovery.as_ref().filter(|_| *count > 1).map(|r| {
                    let (duration_s, distance_m) = match r.amount {
                        Amount::Duration(s) => (Some(s), None),
                        Amount::Distance(m) => (None, Some(m)),
                    };
                    ShapeRecovery {
                        mode: r.mode.map(|m| m.as_str().to_string()),
                        duration_s,
                        distance_m,
                    }
                });
                blocks.push(ShapeBlock {
                    count: *count,
                    work: pieces,
                    recovery,
                });
            }
        }
    }
    if blocks.is_empty() {
        return None;
    }
    Some(WorkoutShape {
        source: ShapeSource::Plan,
        label: label(&blocks),
        blocks,
    })
}

/// The shape of the work intervals the analysis found, one block: a set of like reps is
/// `count` times the median rep (median duration and distance), with the median recovery
/// between them; reps of clearly different lengths (a ladder, a set of mixed pieces: fewer
/// than two thirds of them like the median rep) are kept one by one, in order, as a single
/// block. A progression of like reps run faster and faster is a set of like reps (on its
/// distance when the reps were measured, on its duration when they were timed). `None`
/// without work intervals, or for a session that is not a run.
pub fn detected(review: &Review) -> Option<WorkoutShape> {
    if !review.running {
        return None;
    }
    let work: Vec<_> = review.work().collect();
    if work.is_empty() {
        return None;
    }
    let durations: Vec<f64> = work.iter().map(|w| w.duration_s).collect();
    let distances: Vec<f64> = work.iter().filter_map(|w| w.distance_m).collect();
    let rep = ShapeRep {
        duration_s: median(&durations),
        distance_m: median(&distances),
        target: None,
    };
    let each: Vec<ShapeRep> = work
        .iter()
        .map(|w| ShapeRep {
            duration_s: Some(w.duration_s).filter(|d| d.is_finite()),
            distance_m: w.distance_m.filter(|d| d.is_finite()),
            target: None,
        })
        .collect();
    let like = each.iter().filter(|r| pieces_match(r, &rep)).count();
    // Two thirds: one odd rep in a set of three (a rep cut short, two merged) leaves the set
    // a set of like reps; a ladder 400-800-1200-800-400 has only two reps like its median.
    let alike = 3 * like >= 2 * each.len();
    let recoveries: Vec<&super::review::IntervalMetrics> = review
        .intervals
        .iter()
        .filter(|i| i.kind == "recovery")
        .collect();
    let recovery = (work.len() > 1 && !recoveries.is_empty()).then(|| {
        let d: Vec<f64> = recoveries.iter().map(|r| r.duration_s).collect();
        let m: Vec<f64> = recoveries.iter().filter_map(|r| r.distance_m).collect();
        ShapeRecovery {
            mode: recoveries
                .iter()
                .filter_map(|r| r.mode.clone())
                .next()
                .filter(|m| recoveries.iter().all(|r| r.mode.as_deref() == Some(m))),
            duration_s: median(&d),
            distance_m: median(&m),
        }
    });
    let block = if alike {
        ShapeBlock {
            count: u32::try_from(work.len()).unwrap_or(u32::MAX),
            work: vec![rep],
            recovery,
        }
    } else {
        ShapeBlock {
            count: 1,
            work: each,
            recovery,
        }
    };
    let blocks = vec![block];
    Some(WorkoutShape {
        source: ShapeSource::Detected,
        label: label(&blocks),
        blocks,
    })
}

fn median(v: &[f64]) -> Option<f64> {
    let mut v: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    let hi = *v.get(n / 2)?;
    Some(if n % 2 == 1 {
        hi
    } else {
        (*v.get(n / 2 - 1)? + hi) / 2.0
    })
}

/// The shape in words.
fn label(blocks: &[ShapeBlock]) -> String {
    blocks
        .iter()
        .map(|b| {
            let work = b
                .work
                .iter()
                .map(|r| {
                    let amount = match (r.distance_m, r.duration_s) {
                        (Some(m), _) => distance_words(m),
                        (None, Some(s)) => crate::model::units::format_clock(s),
                        (None, None) => "?".to_string(),
                    };
                    match &r.target {
                        Some(t) => format!("{amount} @ {t}"),
                        None => amount,
                    }
                })
                .collect::<Vec<_>>()
                .join(" + ");
            let head = if b.count > 1 {
                format!("{} x {work}", b.count)
            } else {
                work
            };
            match &b.recovery {
                Some(r) => {
                    let amount = match (r.duration_s, r.distance_m) {
                        (Some(s), _) => crate::model::units::format_clock(s),
                        (None, Some(m)) => distance_words(m),
                        (None, None) => String::new(),
                    };
                    let mode = r.mode.as_deref().unwrap_or("recovery");
                    format!("{head} / {amount} {mode}").trim_end().to_string()
                }
                None => head,
            }
        })
        .collect::<Vec<_>>()
        .join("; ")
}

fn distance_words(m: f64) -> String {
    // A distance written in miles (a quarter mile and up, not a whole 100 m) reads in miles.
    let quarters = m / crate::model::units::METRES_PER_MILE * 4.0;
    if quarters >= 0.99 && (quarters - quarters.round()).abs() < 0.01 && (m / 100.0).fract() > 0.01
    {
        let miles = quarters.round() / 4.0;
        return format!("{miles} mi");
    }
    if m >= 1000.0 {
        format!("{:.1} km", m / 1000.0)
            .replace(".0 km", " km")
            .to_string()
    } else {
        format!("{m:.0} m")
    }
}

// Tolerances of the matching. Our design choices (no published source): a distance rep is
// written in whole metres or in miles (400 m against 0.25 mi is 0.6 % apart; 800 m against
// 1 km is 20 %), so 5 % keeps writings of one distance together and different distances
// apart; a timed rep of 1:30 against 1:40 is still "the same 90-second reps" to a coach,
// 2:00 is not, hence 10 %. A recovery is looser: 20 % or 15 s, whichever is larger.
/// Largest relative difference of two distances of the same piece.
pub const DISTANCE_TOLERANCE: f64 = 0.05;
/// Largest relative difference of two durations of the same piece.
pub const DURATION_TOLERANCE: f64 = 0.10;
/// Largest relative difference of two recoveries of the same block.
pub const RECOVERY_TOLERANCE: f64 = 0.20;
/// Smallest allowed difference of two timed recoveries, seconds.
pub const RECOVERY_SLACK_S: f64 = 15.0;
/// Largest relative difference of two repeat counts of big sets (besides "within one").
pub const COUNT_TOLERANCE: f64 = 0.20;

/// Whether `a` and `b` are within `rel` of the larger one.
fn close(a: f64, b: f64, rel: f64) -> bool {
    let big = a.abs().max(b.abs());
    a.is_finite() && b.is_finite() && (a - b).abs() <= rel * big
}

/// Whether two repeat counts are the same set: equal; or, for sets of three and more, one
/// apart (6 vs 5) or within 20 % of the larger (10 vs 8). A single block (a tempo) is never
/// a set of repeats, and two repeats are not three.
pub fn counts_match(a: u32, b: u32) -> bool {
    if a == b {
        return true;
    }
    if a.min(b) < 3 {
        return false;
    }
    let diff = f64::from(a.abs_diff(b));
    diff <= 1.0 || diff <= COUNT_TOLERANCE * f64::from(a.max(b))
}

/// Whether two work pieces are of the same length with the same target. A plan piece has
/// one amount (a duration or a distance) and compares on it; a detected piece has both and
/// matches a plan piece on the plan's amount, another detected piece on either. Two plan
/// pieces of different amounts (a timed piece against a measured one) do not match.
pub fn pieces_match(a: &ShapeRep, b: &ShapeRep) -> bool {
    if let (Some(x), Some(y)) = (&a.target, &b.target) {
        if x != y {
            return false;
        }
    }
    let dist = match (a.distance_m, b.distance_m) {
        (Some(x), Some(y)) => Some(close(x, y, DISTANCE_TOLERANCE)),
        _ => None,
    };
    let dur = match (a.duration_s, b.duration_s) {
        (Some(x), Some(y)) => Some(close(x, y, DURATION_TOLERANCE)),
        _ => None,
    };
    match (dist, dur) {
        (Some(d), Some(t)) => d || t,
        (Some(d), None) => d,
        (None, Some(t)) => t,
        (None, None) => false,
    }
}

/// Whether two recoveries are taken the same way (where both are known) and of a similar
/// length (on a measure both have; recoveries written on different measures, or not known,
/// do not tell two workouts apart).
pub fn recoveries_match(a: Option<&ShapeRecovery>, b: Option<&ShapeRecovery>) -> bool {
    let (Some(a), Some(b)) = (a, b) else {
        return true;
    };
    if let (Some(x), Some(y)) = (&a.mode, &b.mode) {
        if x != y {
            return false;
        }
    }
    let dur = match (a.duration_s, b.duration_s) {
        (Some(x), Some(y)) => Some(
            (x - y).abs() <= (RECOVERY_TOLERANCE * x.max(y)).max(RECOVERY_SLACK_S)
                && x.is_finite()
                && y.is_finite(),
        ),
        _ => None,
    };
    let dist = match (a.distance_m, b.distance_m) {
        (Some(x), Some(y)) => Some(close(x, y, RECOVERY_TOLERANCE)),
        _ => None,
    };
    match (dist, dur) {
        (Some(d), Some(t)) => d || t,
        (Some(d), None) => d,
        (None, Some(t)) => t,
        (None, None) => true,
    }
}

fn blocks_match(a: &ShapeBlock, b: &ShapeBlock) -> bool {
    counts_match(a.count, b.count)
        && a.work.len() == b.work.len()
        && a.work.iter().zip(&b.work).all(|(x, y)| pieces_match(x, y))
        && recoveries_match(a.recovery.as_ref(), b.recovery.as_ref())
}

/// The work pieces of a shape in order, repeats unrolled, with the one recovery its
/// repeats use (`None` when none is known or the blocks use different ones).
fn unrolled(s: &WorkoutShape) -> (Vec<&ShapeRep>, Option<&ShapeRecovery>) {
    let mut pieces = Vec::new();
    for b in &s.blocks {
        for _ in 0..b.count {
            pieces.extend(b.work.iter());
        }
    }
    let mut recs = s.blocks.iter().filter_map(|b| b.recovery.as_ref());
    let first = recs.next();
    let one = first.filter(|f| recs.all(|r| r == *f));
    (pieces, one)
}

/// Whether every piece matches the first one (targets aside): a set of like reps.
fn uniform(pieces: &[&ShapeRep]) -> bool {
    let Some(first) = pieces.first() else {
        return false;
    };
    let bare = |r: &ShapeRep| ShapeRep {
        target: None,
        ..r.clone()
    };
    let f = bare(first);
    pieces.iter().all(|p| pieces_match(&f, &bare(p)))
}

/// Whether two shapes are the same workout.
///
/// Block by block: the same number of blocks in order, each with a repeat count that
/// [`counts_match`] (6 vs 5; a single block only matches a single block), the same number of
/// work pieces, each of the same length ([`pieces_match`]: a distance within 5 %, a duration
/// within 10 %; a detected piece matches a plan piece on the plan's amount) and the same
/// target name where both have one, and recoveries taken the same way and of a similar
/// length ([`recoveries_match`]).
///
/// A detected shape (one block of like reps, or a single block of unlike ones) is also
/// matched with the work unrolled: a plan written as three single miles at rising targets
/// is the detected set of three one-mile reps; a set of like pieces compares as a count and
/// one piece, anything else piece by piece.
///
/// So 800 m reps never match 400 m reps, a tempo never matches an interval set, and
/// 3 x 1 mi never matches 6 x 1:30.
pub fn same_workout(a: &WorkoutShape, b: &WorkoutShape) -> bool {
    if a.blocks.is_empty() || b.blocks.is_empty() {
        return false;
    }
    if a.blocks.len() == b.blocks.len()
        && a.blocks
            .iter()
            .zip(&b.blocks)
            .all(|(x, y)| blocks_match(x, y))
    {
        return true;
    }
    if a.source != ShapeSource::Detected && b.source != ShapeSource::Detected {
        return false;
    }
    let (pa, ra) = unrolled(a);
    let (pb, rb) = unrolled(b);
    if pa.len() > MAX_UNROLLED || pb.len() > MAX_UNROLLED {
        return false;
    }
    if !recoveries_match(ra, rb) {
        return false;
    }
    let (Ok(na), Ok(nb)) = (u32::try_from(pa.len()), u32::try_from(pb.len())) else {
        return false;
    };
    if uniform(&pa) && uniform(&pb) {
        // Like reps on both sides: a count and one piece. One side is detected (no
        // targets), so the first pieces stand for all.
        return counts_match(na, nb)
            && pa
                .first()
                .zip(pb.first())
                .is_some_and(|(x, y)| pieces_match(x, y));
    }
    pa.len() == pb.len() && pa.iter().zip(&pb).all(|(x, y)| pieces_match(x, y))
}

/// Most work pieces a shape is unrolled to for matching (a plan's repeat counts are capped at
/// [`crate::plan::MAX_REPEATS`]; this bounds the work of a hostile shape from the journal).
const MAX_UNROLLED: usize = 400;
