//! Writers for FIT, TCX and GPX (tests and the demo roster need them), the run simulator,
//! and the demo roster itself: the invented club in [`scenario`], written to a folder by
//! [`roster_writer`] (the committed `demo-athletes/`).

pub mod fit_writer;
pub mod gpx_writer;
pub mod rng;
pub mod roster_writer;
pub mod scenario;
pub mod simulate;
pub mod tcx_writer;
