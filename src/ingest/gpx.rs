//! GPX decoding with quick-xml's streaming reader.

use crate::model::Session;

use super::ParseError;

pub fn decode(_bytes: &[u8]) -> Result<Session, ParseError> {
    Err(ParseError::Gpx("not implemented yet".into()))
}
