//! The objective review: pure functions over `model` types.
