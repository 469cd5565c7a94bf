//! Bad-data flags: a time range of one channel that analysis must not trust.

use serde::{Deserialize, Serialize};

use super::session::ChannelKind;

/// Why a stretch of samples was flagged.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FlagKind {
    /// Speed above the human limit.
    SpeedLimit,
    /// Acceleration above the human limit.
    Acceleration,
    /// A position that jumps away from its neighbours.
    PositionJump,
    /// Heart rate outside the plausible range for running.
    HrRange,
    /// Heart rate above the profile maximum plus a margin. No longer produced (a stale
    /// profile is far likelier than bad data, methods.md §12); kept so older flag lists
    /// still read.
    HrAboveMax,
    /// Heart rate changing faster than a heart can.
    HrRate,
    /// Optical heart rate locked onto the step rate.
    CadenceLock,
    /// A sensor reporting the same value for too long while moving.
    FlatLine,
    /// No samples for longer than the recording rhythm explains.
    Gap,
}

impl FlagKind {
    pub fn as_str(self) -> &'static str {
        match self {
            FlagKind::SpeedLimit => "speed_limit",
            FlagKind::Acceleration => "acceleration",
            FlagKind::PositionJump => "position_jump",
            FlagKind::HrRange => "hr_range",
            FlagKind::HrAboveMax => "hr_above_max",
            FlagKind::HrRate => "hr_rate",
            FlagKind::CadenceLock => "cadence_lock",
            FlagKind::FlatLine => "flat_line",
            FlagKind::Gap => "gap",
        }
    }
}

/// One flagged stretch. `from_s..=to_s` in seconds from the first sample.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Flag {
    pub from_s: f64,
    pub to_s: f64,
    pub channel: ChannelKind,
    pub kind: FlagKind,
    /// Plain-words reason with the numbers, e.g. "speed 18.2 m/s above 12.5 m/s".
    pub reason: String,
}

impl Flag {
    /// True when `t_s` lies in this flag's range.
    pub fn covers(&self, t_s: f64) -> bool {
        t_s >= self.from_s && t_s <= self.to_s
    }
}
