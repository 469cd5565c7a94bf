//! The objective review: pure functions over `model` types. No I/O, no terminal.

pub mod gradient;
pub mod load;
pub mod sampling;
pub mod summary;
pub mod trend;
