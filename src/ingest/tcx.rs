//! TCX decoding with quick-xml's streaming reader.

use crate::model::Session;

use super::ParseError;

pub fn decode(_bytes: &[u8]) -> Result<Session, ParseError> {
    Err(ParseError::Tcx("not implemented yet".into()))
}
