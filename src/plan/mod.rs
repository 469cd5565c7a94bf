//! Planned workouts: the TOML plan file and the one-line shorthand, with line/column errors.
//!
//! Two ways to write the same [`Plan`](crate::model::Plan):
//!
//! * the shorthand, e.g. `12:00 easy; 5 x (3:00 @ half, 1:00 @ 5k) / 2:00 jog; 8:00 easy`
//!   ([`parse_line`], written back by [`describe_line`]); the grammar is in `shorthand.rs`;
//! * a TOML file with `title`, `purpose`, `date` and either `steps = "<shorthand>"` or
//!   `[[step]]` tables ([`parse_toml`], [`load`]).
//!
//! Everything here is pure except [`load`], a thin `read_to_string` wrapper.

mod check;
mod error;
mod format;
mod lexer;
mod shorthand;
mod toml_file;

use std::path::Path;

pub use check::{closest_name, edit_distance, unknown_paces, UnknownPace};
pub use error::{PlanError, PlanErrorKind, PlanFileError};
pub use format::format_expanded;
pub use shorthand::describe_line;
pub use toml_file::parse_toml;

use crate::model::{Plan, Step};

/// Tolerance of a named pace (or a single absolute pace) when none is written: ±5 seconds
/// per km (per mile for a `/mi` pace).
pub const DEFAULT_TOLERANCE_S_PER_KM: f64 = 5.0;

/// Largest accepted repeat count.
pub const MAX_REPEATS: u32 = 100;

/// Parse the one-line shorthand into steps. Positions in errors are relative to `text`.
pub fn parse_line(text: &str) -> Result<Vec<Step>, PlanError> {
    shorthand::parse_drafts(text)
        .map(shorthand::resolve_kinds)
        .map_err(|e| PlanError::at(text, e.offset, e.kind))
}

/// Read and parse a plan file. The file name's `YYYY-MM-DD-` prefix supplies the date when the
/// file has none. Errors carry the path.
pub fn load(path: impl AsRef<Path>) -> Result<Plan, PlanFileError> {
    let path = path.as_ref();
    let text = crate::ingest::read_text_file(path).map_err(|source| PlanFileError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let name = path.file_name().and_then(|n| n.to_str());
    parse_toml(&text, name).map_err(|source| PlanFileError::Parse {
        path: path.to_path_buf(),
        source,
    })
}
