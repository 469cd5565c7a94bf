//! Reading the athlete's note: only with a [`RevealPermit`].

use std::path::{Path, PathBuf};

/// Proof that a session's blind grading is complete and its notes were revealed.
///
/// Only [`super::Journal::reveal`] makes one (the field is private to the journal module), and
/// [`read_note`] needs one, so no interface can show a note before the blind grading is done.
#[derive(Debug)]
pub struct RevealPermit {
    pub(super) session_id: String,
    pub(super) file_path: PathBuf,
}

impl RevealPermit {
    /// The session the permit is for.
    pub fn session_id(&self) -> &str {
        &self.session_id
    }

    /// The file stem of the session (the part of the id after the athlete).
    fn stem(&self) -> &str {
        self.session_id
            .split_once('/')
            .map(|(_, s)| s)
            .unwrap_or(&self.session_id)
    }

    /// Where the roster keeps this session's note: `<athlete>/notes/<stem>.txt`, derived from
    /// the activity file path last seen (`<athlete>/activities/<file>`).
    pub fn note_path(&self) -> Option<PathBuf> {
        let athlete_dir = self.file_path.parent()?.parent()?;
        Some(
            athlete_dir
                .join("notes")
                .join(format!("{}.txt", self.stem())),
        )
    }
}

/// The athlete's note for a revealed session: the text of `note_file` (`notes/<stem>.txt`)
/// when given and readable and not blank, else the note embedded in the activity file.
/// The note file may be UTF-8 (with or without a byte-order mark), UTF-16 or Latin-1; text
/// that was converted ends with a marker line such as "(converted from Latin-1)".
///
/// A `note_file` whose stem does not match the permit's session is ignored: a permit opens
/// only its own session's note.
pub fn read_note(
    permit: &RevealPermit,
    note_file: Option<&Path>,
    embedded: Option<&str>,
) -> Option<String> {
    if let Some(path) = note_file {
        let stem_matches = path
            .file_stem()
            .is_some_and(|s| s.to_string_lossy() == permit.stem());
        if stem_matches {
            // Any encoding: converted text carries a marker line (ingest::note).
            if let Some(text) = crate::ingest::note::read_file(path)
                .ok()
                .and_then(|d| d.display())
            {
                return Some(text);
            }
        }
    }
    embedded
        .filter(|t| !t.trim().is_empty())
        .map(str::to_string)
}
