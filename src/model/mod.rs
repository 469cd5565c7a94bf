//! Plain data shared by every layer. No I/O, no terminal.

pub mod athlete;
pub mod flags;
pub mod interval;
pub mod plan;
pub mod session;
pub mod units;

pub use athlete::{AthleteProfile, Sex, Zone};
pub use flags::{Flag, FlagKind};
pub use interval::{Interval, IntervalSet, IntervalSource};
pub use plan::{Amount, ExpectedInterval, Plan, RecoveryMode, Segment, SegmentKind, Step, Target};
pub use session::{Channel, ChannelKind, DeviceLap, FileFormat, Pause, Session, Sport};
pub use units::Units;
