//! Writers for FIT, TCX and GPX (tests and the demo roster need them), the run simulator,
//! and the demo roster itself: the invented club in [`scenario`], written to a folder by
//! [`roster_writer`] (the committed `demo-athletes/`).

pub mod fit_writer;
pub mod gpx_writer;
pub mod rng;
pub mod roster_writer;
pub mod scale;
pub mod scenario;
pub mod simulate;
pub mod tcx_writer;

/// Whether a timer pause lies wholly between samples `i - 1` and `i` (the writers start a
/// new track segment there). False for the first sample.
pub(crate) fn pause_between(s: &crate::model::Session, i: usize) -> bool {
    match (i.checked_sub(1).and_then(|p| s.t.get(p)), s.t.get(i)) {
        (Some(&a), Some(&b)) => s.pauses.iter().any(|p| a <= p.from_s && b >= p.to_s),
        _ => false,
    }
}
