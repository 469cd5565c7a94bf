//! Writes a `model::Session` as a GPX file.

use crate::model::Session;

/// Encode `session` as GPX bytes.
pub fn write(_session: &Session) -> Vec<u8> {
    Vec::new()
}
