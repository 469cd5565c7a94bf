//! Writers for FIT, TCX and GPX (tests and the demo roster need them), and later the run
//! simulator that fills `demo-athletes/`.

pub mod fit_writer;
pub mod gpx_writer;
pub mod rng;
pub mod simulate;
pub mod tcx_writer;
