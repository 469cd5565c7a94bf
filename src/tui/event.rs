//! What the event loop feeds into [`super::app::App::handle`].

use std::path::PathBuf;

use crate::worker::Done;

/// One thing that happened.
#[derive(Debug)]
pub enum AppEvent {
    /// A terminal event: key, resize, paste.
    Input(crossterm::event::Event),
    /// A background job finished.
    Worker(Done),
    /// Time passed (background work in progress; lists may need a refresh).
    Tick,
    /// `$EDITOR` closed: the edited text, or why it failed.
    EditorDone(Result<String, String>),
    /// The feedback file was written (the path), or why not.
    FileWritten(Result<PathBuf, String>),
    /// The day's messages were written (the path), or why not.
    DayWritten(Result<PathBuf, String>),
    /// The clipboard copy was done; how.
    Copied(String),
}
