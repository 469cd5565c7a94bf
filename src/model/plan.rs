//! A planned workout: purpose, and the steps the athlete was asked to run.
//!
//! Parsing (TOML and the one-line shorthand) lives in `crate::plan`; this is plain data.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

/// What a segment is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SegmentKind {
    Warmup,
    Work,
    Recovery,
    Steady,
    Cooldown,
}

impl SegmentKind {
    pub fn as_str(self) -> &'static str {
        match self {
            SegmentKind::Warmup => "warmup",
            SegmentKind::Work => "work",
            SegmentKind::Recovery => "recovery",
            SegmentKind::Steady => "steady",
            SegmentKind::Cooldown => "cooldown",
        }
    }
}

/// How long a segment lasts.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Amount {
    /// Seconds.
    Duration(f64),
    /// Metres.
    Distance(f64),
}

/// What the athlete should hold during a segment.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "type")]
pub enum Target {
    /// No target.
    Open,
    /// Absolute pace band as speeds, m/s (`slow_mps <= fast_mps`).
    PaceRange { slow_mps: f64, fast_mps: f64 },
    /// A named pace from the athlete profile, with a tolerance in seconds per km either side.
    NamedPace {
        name: String,
        tolerance_s_per_km: f64,
    },
    /// Heart-rate band, bpm.
    HrRange { low_bpm: f64, high_bpm: f64 },
}

/// How a recovery is taken.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RecoveryMode {
    Jog,
    Walk,
    Stand,
}

impl RecoveryMode {
    pub fn as_str(self) -> &'static str {
        match self {
            RecoveryMode::Jog => "jog",
            RecoveryMode::Walk => "walk",
            RecoveryMode::Stand => "stand",
        }
    }
}

/// One continuous piece of the workout.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Segment {
    pub kind: SegmentKind,
    pub amount: Amount,
    pub target: Target,
    /// Only for recoveries.
    pub mode: Option<RecoveryMode>,
}

/// A step of the plan: a single segment, or a repeated block.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "step")]
pub enum Step {
    Single(Segment),
    /// `count` times the `work` segments back to back, with `recovery` between repeats.
    Repeat {
        count: u32,
        work: Vec<Segment>,
        recovery: Option<Segment>,
    },
}

/// A planned workout.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Plan {
    pub title: String,
    /// Free text: what the session is for. Shown first in the verdict pane.
    pub purpose: String,
    pub date: Option<NaiveDate>,
    pub steps: Vec<Step>,
}

/// One entry of a plan's expanded sequence: what the analysis aligns recorded intervals to.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExpectedInterval {
    pub kind: SegmentKind,
    pub amount: Amount,
    pub target: Target,
    pub mode: Option<RecoveryMode>,
    /// 1-based repeat number and the repeat count, for segments inside a repeat block.
    pub repeat: Option<(u32, u32)>,
}

impl Plan {
    /// The expected sequence of intervals: repeats unrolled, a recovery between repeats
    /// (not after the last one).
    pub fn expand(&self) -> Vec<ExpectedInterval> {
        let mut out = Vec::new();
        for step in &self.steps {
            match step {
                Step::Single(seg) => out.push(ExpectedInterval::from_segment(seg, None)),
                Step::Repeat {
                    count,
                    work,
                    recovery,
                } => {
                    for rep in 1..=*count {
                        for seg in work {
                            out.push(ExpectedInterval::from_segment(seg, Some((rep, *count))));
                        }
                        if rep < *count {
                            if let Some(r) = recovery {
                                out.push(ExpectedInterval::from_segment(r, Some((rep, *count))));
                            }
                        }
                    }
                }
            }
        }
        out
    }

    /// Number of work segments once repeats are unrolled.
    pub fn work_count(&self) -> usize {
        self.expand()
            .iter()
            .filter(|e| e.kind == SegmentKind::Work)
            .count()
    }
}

impl ExpectedInterval {
    fn from_segment(seg: &Segment, repeat: Option<(u32, u32)>) -> ExpectedInterval {
        ExpectedInterval {
            kind: seg.kind,
            amount: seg.amount,
            target: seg.target.clone(),
            mode: seg.mode,
            repeat,
        }
    }
}

impl Target {
    /// The target as a speed band `(slow, fast)` in m/s, resolving named paces against the
    /// athlete's profile. `None` for open and heart-rate targets, or an unknown name.
    pub fn speed_band(&self, profile: &super::AthleteProfile) -> Option<(f64, f64)> {
        match self {
            Target::PaceRange { slow_mps, fast_mps } => Some((*slow_mps, *fast_mps)),
            Target::NamedPace {
                name,
                tolerance_s_per_km,
            } => {
                let v = profile.pace(name)?;
                let pace = 1000.0 / v;
                let slow = 1000.0 / (pace + tolerance_s_per_km.abs());
                let fast_pace = (pace - tolerance_s_per_km.abs()).max(1.0);
                Some((slow, 1000.0 / fast_pace))
            }
            Target::Open | Target::HrRange { .. } => None,
        }
    }

    /// The middle of the target band as a speed, m/s.
    pub fn centre_speed(&self, profile: &super::AthleteProfile) -> Option<f64> {
        match self {
            Target::NamedPace { name, .. } => profile.pace(name),
            _ => self
                .speed_band(profile)
                .map(|(s, f)| 2.0 / (1.0 / s + 1.0 / f)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn seg(kind: SegmentKind, secs: f64) -> Segment {
        Segment {
            kind,
            amount: Amount::Duration(secs),
            target: Target::Open,
            mode: None,
        }
    }

    #[test]
    fn expand_unrolls_repeats_with_recoveries_between() {
        let plan = Plan {
            title: "t".into(),
            purpose: "p".into(),
            date: None,
            steps: vec![
                Step::Single(seg(SegmentKind::Warmup, 600.0)),
                Step::Repeat {
                    count: 3,
                    work: vec![seg(SegmentKind::Work, 180.0), seg(SegmentKind::Work, 60.0)],
                    recovery: Some(seg(SegmentKind::Recovery, 120.0)),
                },
                Step::Single(seg(SegmentKind::Cooldown, 480.0)),
            ],
        };
        let kinds: Vec<SegmentKind> = plan.expand().iter().map(|e| e.kind).collect();
        use SegmentKind::*;
        assert_eq!(
            kinds,
            vec![Warmup, Work, Work, Recovery, Work, Work, Recovery, Work, Work, Cooldown]
        );
        assert_eq!(plan.work_count(), 6);
        assert_eq!(plan.expand()[4].repeat, Some((2, 3)));
    }
}
