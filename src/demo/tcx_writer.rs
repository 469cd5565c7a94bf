//! Writes a `model::Session` as a TCX file.

use crate::model::Session;

/// Encode `session` as TCX bytes.
pub fn write(_session: &Session) -> Vec<u8> {
    Vec::new()
}
