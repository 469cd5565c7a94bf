//! Reading recorded sessions: FIT, TCX and GPX bytes in, one cleaned `model::Session` out.
//!
//! `decode` turns bytes into a raw session per format; `ingest_bytes` adds the content
//! hash, the derived channels (distance from positions, speed from distance) and the
//! bad-data flags. Only this module parses file formats.
//!
//! Reading from disk goes through [`read_activity`], the one bounded reader: it looks at the
//! file's metadata first and refuses anything that is not a regular file or is larger than
//! [`Limits::max_file_bytes`] (default [`DEFAULT_MAX_FILE_MB`] MiB, `[ingest] max_file_mb` in
//! `config.toml`), checks a FIT header before reading the body, and never reads more than
//! the limit even if the file grows while it is read. TCX and GPX are parsed by quick-xml's
//! streaming reader over that bounded buffer (no document tree is built), so the size cap
//! bounds the memory any activity file can take.

pub mod clean;
pub mod derive;
pub mod fit;
pub mod gpx;
pub mod hash;
pub mod note;
pub mod tcx;
pub mod timeaxis;
mod xml;

use std::io::Read;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

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
    #[error("no usable time axis: {0}")]
    TimeAxis(String),
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
    /// Refused before reading: too large, or not a regular file.
    #[error("{path}: {reason}")]
    Refused { path: PathBuf, reason: String },
}

impl IngestError {
    pub fn path(&self) -> &Path {
        match self {
            IngestError::Io { path, .. }
            | IngestError::Parse { path, .. }
            | IngestError::Refused { path, .. } => path,
        }
    }

    /// The message without the path (for lists that print the path themselves).
    pub fn reason(&self) -> String {
        match self {
            IngestError::Io { source, .. } => source.to_string(),
            IngestError::Parse { source, .. } => source.to_string(),
            IngestError::Refused { reason, .. } => reason.clone(),
        }
    }
}

/// The default size cap for one activity file, MiB. Measured with our own writers (every
/// channel at 1 Hz, 10 hours): FIT 1.0 MB, GPX 13.5 MB, TCX 23.4 MB, so 64 MiB leaves room
/// for recordings well beyond a day.
pub const DEFAULT_MAX_FILE_MB: u64 = 64;

/// Bounds on what reading one activity file may cost.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limits {
    /// Files larger than this are refused without being read.
    pub max_file_bytes: u64,
}

impl Limits {
    /// A cap of `mb` MiB (at least 1).
    pub fn from_mb(mb: u64) -> Limits {
        Limits {
            max_file_bytes: mb.max(1).saturating_mul(1024 * 1024),
        }
    }
}

impl Default for Limits {
    fn default() -> Limits {
        Limits::from_mb(DEFAULT_MAX_FILE_MB)
    }
}

/// The process-wide cap, set once from the configuration at start-up.
static MAX_FILE_BYTES: AtomicU64 = AtomicU64::new(DEFAULT_MAX_FILE_MB * 1024 * 1024);

/// Set the limits every later [`ingest_file`] and roster read uses (from `config.toml`).
pub fn set_limits(limits: Limits) {
    MAX_FILE_BYTES.store(limits.max_file_bytes, Ordering::Relaxed);
}

/// The limits set by [`set_limits`] (the defaults until then).
pub fn limits() -> Limits {
    Limits {
        max_file_bytes: MAX_FILE_BYTES.load(Ordering::Relaxed),
    }
}

/// A byte count for people: "2.0 GiB", "64.0 MiB", or "900 bytes" below one MiB.
fn human_size(bytes: u64) -> String {
    const MIB: f64 = 1024.0 * 1024.0;
    let mib = bytes as f64 / MIB;
    if mib >= 1024.0 {
        format!("{:.1} GiB", mib / 1024.0)
    } else if mib >= 1.0 {
        format!("{mib:.1} MiB")
    } else {
        format!("{bytes} bytes")
    }
}

/// Read an activity file, bounded.
///
/// Refuses (without reading) a path that is not a regular file (after following symlinks)
/// and a file larger than `limits.max_file_bytes`. A file whose name ends in `.fit` has its
/// header read and checked first (size byte, `.FIT` signature, declared data size against
/// the file size), so a damaged or foreign file costs 14 bytes, not its whole length. The
/// body is read with a hard bound of the cap plus one byte, so a file that grows while it is
/// read is refused too.
pub fn read_activity(path: &Path, limits: Limits) -> Result<Vec<u8>, IngestError> {
    let io = |source| IngestError::Io {
        path: path.to_path_buf(),
        source,
    };
    let refused = |reason: String| IngestError::Refused {
        path: path.to_path_buf(),
        reason,
    };
    let too_large = |size: u64| {
        refused(format!(
            "file is {} ({size} bytes), above the {} limit for activity files \
             (raise [ingest] max_file_mb in config.toml to read it)",
            human_size(size),
            human_size(limits.max_file_bytes)
        ))
    };
    let meta = std::fs::metadata(path).map_err(io)?;
    if !meta.is_file() {
        let what = if meta.is_dir() {
            "a folder"
        } else {
            "not a regular file"
        };
        return Err(refused(format!("{what}, not an activity file")));
    }
    let size = meta.len();
    if size > limits.max_file_bytes {
        return Err(too_large(size));
    }
    let file = std::fs::File::open(path).map_err(io)?;
    let is_fit = path
        .extension()
        .and_then(|e| e.to_str())
        .and_then(FileFormat::from_extension)
        == Some(FileFormat::Fit);
    let mut bounded = file.take(limits.max_file_bytes.saturating_add(1));
    let mut bytes = Vec::new();
    if is_fit && size > 0 {
        let mut head = [0u8; 14];
        let got = read_up_to(&mut bounded, &mut head).map_err(io)?;
        let head = head.get(..got).unwrap_or_default();
        fit::check_header(head, size).map_err(|source| IngestError::Parse {
            path: path.to_path_buf(),
            source,
        })?;
        bytes.extend_from_slice(head);
    }
    // The capacity comes from the metadata, already checked against the cap.
    bytes.reserve(
        usize::try_from(size)
            .unwrap_or(0)
            .saturating_sub(bytes.len()),
    );
    bounded.read_to_end(&mut bytes).map_err(io)?;
    if u64::try_from(bytes.len()).unwrap_or(u64::MAX) > limits.max_file_bytes {
        return Err(refused(format!(
            "file grew while being read and is now above the {} limit for activity files",
            human_size(limits.max_file_bytes)
        )));
    }
    Ok(bytes)
}

/// The largest profile, plan, roster or settings file read, bytes. Such files are a few
/// kilobytes; the cap keeps a huge or endless file (a device node, a mistaken copy) from
/// costing its whole size in memory.
pub const TEXT_FILE_MAX_BYTES: u64 = 1024 * 1024;

/// Why [`read_capped`] read nothing.
#[derive(Debug)]
pub enum CappedReadError {
    /// A folder, device, pipe or socket.
    NotAFile,
    /// Larger than the cap (the size seen, bytes); also when it grew past it while read.
    TooLarge(u64),
    /// The file system's own error.
    Io(std::io::Error),
}

/// Read a small file whole, refusing anything that is not a regular file or is above `cap`
/// bytes before reading it, and reading with a hard bound so a file that grows meanwhile is
/// refused too.
pub fn read_capped(path: &Path, cap: u64) -> Result<Vec<u8>, CappedReadError> {
    let meta = std::fs::metadata(path).map_err(CappedReadError::Io)?;
    if !meta.is_file() {
        return Err(CappedReadError::NotAFile);
    }
    if meta.len() > cap {
        return Err(CappedReadError::TooLarge(meta.len()));
    }
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .map_err(CappedReadError::Io)?
        .take(cap.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(CappedReadError::Io)?;
    let len = u64::try_from(bytes.len()).unwrap_or(u64::MAX);
    if len > cap {
        return Err(CappedReadError::TooLarge(len));
    }
    Ok(bytes)
}

/// Read one of the coach's small text files (profile, plan, `roster.toml`, config) as UTF-8,
/// within [`TEXT_FILE_MAX_BYTES`] (see [`read_capped`]).
pub fn read_text_file(path: &Path) -> std::io::Result<String> {
    use std::io::{Error, ErrorKind};
    let bytes = read_capped(path, TEXT_FILE_MAX_BYTES).map_err(|e| match e {
        CappedReadError::NotAFile => Error::new(ErrorKind::InvalidInput, "not a regular file"),
        CappedReadError::TooLarge(size) => Error::new(
            ErrorKind::InvalidData,
            format!(
                "file is {} ({size} bytes), above the {} limit for profiles, plans and settings",
                human_size(size),
                human_size(TEXT_FILE_MAX_BYTES)
            ),
        ),
        CappedReadError::Io(e) => e,
    })?;
    String::from_utf8(bytes)
        .map_err(|_| Error::new(ErrorKind::InvalidData, "stream did not contain valid UTF-8"))
}

/// Fill `buf` as far as the reader allows; the number of bytes read.
fn read_up_to(r: &mut impl Read, buf: &mut [u8]) -> std::io::Result<usize> {
    let mut got = 0;
    while let Some(rest) = buf.get_mut(got..) {
        if rest.is_empty() {
            break;
        }
        match r.read(rest) {
            Ok(0) => break,
            Ok(n) => got += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(e),
        }
    }
    Ok(got)
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
    if bytes.get(8..12) == Some(b".FIT".as_slice()) {
        return Some(FileFormat::Fit);
    }
    let head = bytes.get(..bytes.len().min(4096)).unwrap_or_default();
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
    let mut session = match format {
        FileFormat::Fit => fit::decode(bytes),
        FileFormat::Tcx => tcx::decode(bytes),
        FileFormat::Gpx => gpx::decode(bytes),
    }?;
    timeaxis::repair(&mut session)?;
    Ok(session)
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

/// Read a file from disk (bounded by [`limits`]) and ingest it. The format comes from the
/// extension or the content.
pub fn ingest_file(path: &Path, profile: Option<&AthleteProfile>) -> Result<Session, IngestError> {
    let bytes = read_activity(path, limits())?;
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
