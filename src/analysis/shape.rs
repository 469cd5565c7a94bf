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

/// The shape of the work intervals the analysis found: one block of the reps (median
/// duration and distance), with the median recovery between them. `None` without work
/// intervals, or for a session that is not a run.
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
    let blocks = vec![ShapeBlock {
        count: work.len() as u32,
        work: vec![rep],
        recovery,
    }];
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
    if m >= 1000.0 {
        format!("{:.1} km", m / 1000.0)
            .replace(".0 km", " km")
            .to_string()
    } else {
        format!("{m:.0} m")
    }
}

/// Whether two shapes are the same workout: the same blocks in order, each with a repeat
/// count within one (or 20 %) of the other, work pieces of the same length (a distance
/// within 5 %, a duration within 10 %; a detected piece matches on either), the same target
/// names where both have one, and recoveries taken the same way and of a similar length.
/// 800 m reps never match 400 m reps, a tempo never matches an interval set.
pub fn same_workout(a: &WorkoutShape, b: &WorkoutShape) -> bool {
    // Filled in with the comparison issue's matching rules.
    a.blocks.len() == b.blocks.len() && a.label == b.label
}
