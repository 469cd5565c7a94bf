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
    NamedPace { name: String, tolerance_s_per_km: f64 },
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
