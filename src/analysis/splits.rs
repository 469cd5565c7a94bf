//! Splits: the time of each kilometre or mile of a run, in the athlete's units.
//!
//! For a race or time trial the splits cover the race itself (its one work interval), so
//! the finish time is the time over the race distance; for any other run they cover the
//! whole session. The last split is the part that is left (shorter than a full unit).

use serde::{Deserialize, Serialize};

use crate::model::Units;

/// One split.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Split {
    /// 1-based.
    pub number: usize,
    /// Distance of this split, metres (a full unit, or what was left for the last one).
    pub distance_m: f64,
    /// Elapsed time of this split, seconds (stops included).
    pub time_s: f64,
    /// Moving time of this split, seconds.
    pub moving_s: f64,
    /// Elapsed pace of this split, seconds per km.
    pub pace_s_per_km: f64,
    /// Time-weighted mean HR over the split, bpm.
    pub avg_hr: Option<f64>,
    /// Net height change over the split, metres (up is positive).
    pub elevation_change_m: Option<f64>,
}

/// The splits of a run (`splits` in the analysis JSON).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Splits {
    /// `km` or `mi`: the athlete's units.
    pub unit: String,
    /// Start and end of the part covered, seconds from the session start.
    pub from_s: f64,
    pub to_s: f64,
    /// Distance covered, metres.
    pub distance_m: f64,
    /// Elapsed time from `from_s` to `to_s`: the finish time of a race.
    pub time_s: f64,
    /// Moving time over the same part.
    pub moving_s: f64,
    /// Fastest and slowest elapsed pace among the full splits, s/km (`None` with fewer than
    /// two full splits).
    pub fastest_s_per_km: Option<f64>,
    pub slowest_s_per_km: Option<f64>,
    /// Elapsed time of the first and second half of the distance, seconds: a second half
    /// faster than the first is a negative split.
    pub first_half_s: Option<f64>,
    pub second_half_s: Option<f64>,
    pub splits: Vec<Split>,
}

impl Splits {
    /// The full-unit splits (the last partial one left out).
    pub fn full(&self, units: Units) -> impl Iterator<Item = &Split> {
        let unit_m = units.metres();
        self.splits
            .iter()
            .filter(move |s| s.distance_m >= unit_m * 0.999)
    }
}

/// The splits of samples from `from_s` to `to_s` (seconds from the start) in `units`.
/// `None` without a usable distance, or when less than one unit... TODO(helper).
pub(crate) fn splits(
    session: &crate::model::Session,
    s: &super::review::Series<'_>,
    from_s: f64,
    to_s: f64,
    units: Units,
) -> Option<Splits> {
    let _ = (session, s, from_s, to_s, units);
    None
}
