//! FIT decoding on fitparser, with our own guards around its failure modes.

use crate::model::Session;

use super::ParseError;

pub fn decode(_bytes: &[u8]) -> Result<Session, ParseError> {
    Err(ParseError::Fit("not implemented yet".into()))
}
