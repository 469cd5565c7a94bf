//! Writes a `model::Session` as a FIT file.

use crate::model::Session;

/// Encode `session` as FIT bytes.
pub fn write(_session: &Session) -> Vec<u8> {
    Vec::new()
}
