//! The objective review: pure functions over `model` types. No I/O, no terminal.

pub mod decoupling;
pub mod elevation;
pub mod findings;
pub mod gradient;
pub mod intervals;
pub mod load;
pub mod race;
pub mod review;
pub mod sampling;
pub mod summary;
pub mod trend;
pub mod zones;
