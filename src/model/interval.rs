//! Intervals found in a recorded session: what the analysis measures and the coach scores.

use serde::{Deserialize, Serialize};

use super::plan::{RecoveryMode, SegmentKind};

/// Where an interval's boundaries came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IntervalSource {
    /// The device's own laps, which fitted the plan (or clearly split the pace).
    DeviceLap,
    /// Found from the speed signal.
    Detected,
}

impl IntervalSource {
    pub fn as_str(self) -> &'static str {
        match self {
            IntervalSource::DeviceLap => "device_lap",
            IntervalSource::Detected => "detected",
        }
    }
}

/// One interval, to the sample. It covers samples `start..=end`; the next interval starts
/// at this one's `end` sample (boundaries are shared).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Interval {
    pub kind: SegmentKind,
    pub source: IntervalSource,
    /// Index of the first sample.
    pub start: usize,
    /// Index of the last sample (the boundary with the next interval).
    pub end: usize,
    pub start_s: f64,
    pub end_s: f64,
    /// Index into the plan's expanded sequence this interval was aligned to.
    pub expected: Option<usize>,
    /// For recoveries: how it was taken (from the plan, or jog/walk/stand by speed).
    pub mode: Option<RecoveryMode>,
}

impl Interval {
    pub fn duration_s(&self) -> f64 {
        (self.end_s - self.start_s).max(0.0)
    }
}

/// The intervals of a session and how they were found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct IntervalSet {
    /// In time order, contiguous.
    pub intervals: Vec<Interval>,
    /// True when there was no plan and the structure was inferred from the speed alone.
    pub inferred: bool,
    /// Indices into the plan's expanded sequence that no recorded interval matched.
    pub missing: Vec<usize>,
    /// Work intervals found that the plan did not ask for.
    pub extra: Vec<usize>,
    /// Plain-words notes on how the set was found ("device laps fitted the plan", ...).
    pub notes: Vec<String>,
}

impl IntervalSet {
    /// The work intervals, in order.
    pub fn work(&self) -> impl Iterator<Item = &Interval> {
        self.intervals
            .iter()
            .filter(|i| i.kind == SegmentKind::Work)
    }
}
