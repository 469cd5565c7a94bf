//! The objective review: pure functions over `model` types. No I/O, no terminal.

pub mod summary;
