//! Planned workouts: the TOML plan file and the one-line shorthand, with line/column errors.
