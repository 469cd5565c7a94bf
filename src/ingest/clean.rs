//! Bad-data flags. Samples are never deleted; each flag has a range, a channel and a reason.

use crate::model::{AthleteProfile, Flag, Session};

/// Flag the bad stretches of a session.
pub fn flag(_session: &Session, _profile: Option<&AthleteProfile>) -> Vec<Flag> {
    Vec::new()
}

/// Fraction of the session's duration covered by the union of the flags (0..1).
pub fn flagged_fraction(_session: &Session, _flags: &[Flag]) -> f64 {
    0.0
}
