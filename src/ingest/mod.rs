//! Reading recorded sessions: FIT, TCX and GPX bytes in, one cleaned `model::Session` out.
//!
//! `decode` turns bytes into a raw session per format; `ingest_bytes` adds the content
//! hash, the derived channels (distance from positions, speed from distance) and the
//! bad-data flags. Only this module parses file formats.

pub mod clean;
pub mod derive;
pub mod fit;
pub mod gpx;
pub mod hash;
pub mod tcx;
mod xml;

use std::path::{Path, PathBuf};

use crate::model::{AthleteProfile, FileFormat, Session};

/// Why a file's bytes could not become a session.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum ParseError {
    #[error("file is empty")]
    Empty,
    #[error("not a FIT, TCX or GPX file")]
    UnknownFormat,
    #[error("FIT: {0}")]
    Fit(String),
    #[error("TCX: {0}")]
    Tcx(String),
    #[error("GPX: {0}")]
    Gpx(String),
    #[error("no samples with a timestamp")]
    NoSamples,
}

/// A file that could not be read, with its path.
#[derive(Debug, thiserror::Error)]
pub enum IngestError {
    #[error("{path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{path}: {source}")]
    Parse {
        path: PathBuf,
        #[source]
        source: ParseError,
    },
}

impl IngestError {
    pub fn path(&self) -> &Path {
        match self {
            IngestError::Io { path, .. } | IngestError::Parse { path, .. } => path,
        }
    }
}

/// The format of a file: by extension first, then by looking at the bytes.
pub fn detect_format(path: Option<&Path>, bytes: &[u8]) -> Option<FileFormat> {
    if let Some(f) = path
        .and_then(|p| p.extension())
        .and_then(|e| e.to_str())
        .and_then(FileFormat::from_extension)
    {
        return Some(f);
    }
    sniff(bytes)
}

/// Guess the format from the content alone.
pub fn sniff(bytes: &[u8]) -> Option<FileFormat> {
    if bytes.len() >= 12 && &bytes[8..12] == b".FIT" {
        return Some(FileFormat::Fit);
    }
    let head = &bytes[..bytes.len().min(4096)];
    let text = String::from_utf8_lossy(head);
    if text.contains("<TrainingCenterDatabase") || text.contains(":TrainingCenterDatabase") {
        return Some(FileFormat::Tcx);
    }
    if text.contains("<gpx") || text.contains(":gpx") {
        return Some(FileFormat::Gpx);
    }
    None
}

/// Decode bytes of a known format into a raw session (no hash, no derived channels, no flags).
pub fn decode(bytes: &[u8], format: FileFormat) -> Result<Session, ParseError> {
    if bytes.is_empty() {
        return Err(ParseError::Empty);
    }
    match format {
        FileFormat::Fit => fit::decode(bytes),
        FileFormat::Tcx => tcx::decode(bytes),
        FileFormat::Gpx => gpx::decode(bytes),
    }
}

/// Decode, then hash, derive missing channels and flag bad data.
pub fn ingest_bytes(
    bytes: &[u8],
    format: FileFormat,
    profile: Option<&AthleteProfile>,
) -> Result<Session, ParseError> {
    let mut session = decode(bytes, format)?;
    if session.is_empty() {
        return Err(ParseError::NoSamples);
    }
    session.content_hash = hash::sha256_hex(bytes);
    derive::fill_derived(&mut session);
    session.flags = clean::flag(&session, profile);
    Ok(session)
}

/// Read a file from disk and ingest it. The format comes from the extension or the content.
pub fn ingest_file(path: &Path, profile: Option<&AthleteProfile>) -> Result<Session, IngestError> {
    let bytes = std::fs::read(path).map_err(|source| IngestError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let parse_err = |source| IngestError::Parse {
        path: path.to_path_buf(),
        source,
    };
    if bytes.is_empty() {
        return Err(parse_err(ParseError::Empty));
    }
    let format =
        detect_format(Some(path), &bytes).ok_or_else(|| parse_err(ParseError::UnknownFormat))?;
    ingest_bytes(&bytes, format, profile).map_err(parse_err)
}
