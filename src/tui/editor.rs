//! The small multi-line text editor the feedback is edited in: keys in, text out, no
//! terminal. The verdict pane draws it (wrapping long lines); `App::handle` feeds it keys.

use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};

/// A small multi-line text editor for the feedback.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TextEditor {
    /// The text, one entry per line.
    pub lines: Vec<String>,
    /// Cursor line.
    pub row: usize,
    /// Cursor column, in characters.
    pub col: usize,
    /// Keys go to the editor.
    pub editing: bool,
    /// Changed since last saved to the journal.
    pub dirty: bool,
    /// The journal holds a saved version.
    pub saved: bool,
}

impl TextEditor {
    /// An editor holding `text`, not editing.
    pub fn new(text: &str) -> TextEditor {
        let mut lines: Vec<String> = text.split('\n').map(str::to_string).collect();
        if lines.len() > 1 && lines.last().is_some_and(String::is_empty) {
            lines.pop();
        }
        TextEditor {
            lines,
            row: 0,
            col: 0,
            editing: false,
            dirty: false,
            saved: false,
        }
    }

    /// The text, lines joined with newlines and a final newline.
    pub fn text(&self) -> String {
        let mut s = self.lines.join("\n");
        s.push('\n');
        s
    }

    fn line_len(&self) -> usize {
        self.lines
            .get(self.row)
            .map(|l| l.chars().count())
            .unwrap_or(0)
    }

    fn byte_at(line: &str, col: usize) -> usize {
        line.char_indices()
            .nth(col)
            .map(|(b, _)| b)
            .unwrap_or(line.len())
    }

    /// Apply one key; returns `false` when the key is not an editing key.
    pub fn key(&mut self, key: &KeyEvent) -> bool {
        if self.lines.is_empty() {
            self.lines.push(String::new());
        }
        self.row = self.row.min(self.lines.len() - 1);
        self.col = self.col.min(self.line_len());
        let ctrl = key.modifiers.contains(KeyModifiers::CONTROL);
        match key.code {
            KeyCode::Char(c) if !ctrl => {
                if let Some(line) = self.lines.get_mut(self.row) {
                    let b = Self::byte_at(line, self.col);
                    line.insert(b, c);
                    self.col += 1;
                    self.dirty = true;
                }
            }
            KeyCode::Enter => {
                if let Some(line) = self.lines.get_mut(self.row) {
                    let b = Self::byte_at(line, self.col);
                    let rest = line.split_off(b);
                    self.lines.insert(self.row + 1, rest);
                    self.row += 1;
                    self.col = 0;
                    self.dirty = true;
                }
            }
            KeyCode::Backspace => {
                if self.col > 0 {
                    if let Some(line) = self.lines.get_mut(self.row) {
                        let b = Self::byte_at(line, self.col - 1);
                        line.remove(b);
                        self.col -= 1;
                        self.dirty = true;
                    }
                } else if self.row > 0 {
                    let line = self.lines.remove(self.row);
                    self.row -= 1;
                    self.col = self.line_len();
                    if let Some(prev) = self.lines.get_mut(self.row) {
                        prev.push_str(&line);
                    }
                    self.dirty = true;
                }
            }
            KeyCode::Delete => {
                let len = self.line_len();
                if self.col < len {
                    if let Some(line) = self.lines.get_mut(self.row) {
                        let b = Self::byte_at(line, self.col);
                        line.remove(b);
                        self.dirty = true;
                    }
                } else if self.row + 1 < self.lines.len() {
                    let next = self.lines.remove(self.row + 1);
                    if let Some(line) = self.lines.get_mut(self.row) {
                        line.push_str(&next);
                    }
                    self.dirty = true;
                }
            }
            KeyCode::Left => {
                if self.col > 0 {
                    self.col -= 1;
                } else if self.row > 0 {
                    self.row -= 1;
                    self.col = self.line_len();
                }
            }
            KeyCode::Right => {
                if self.col < self.line_len() {
                    self.col += 1;
                } else if self.row + 1 < self.lines.len() {
                    self.row += 1;
                    self.col = 0;
                }
            }
            KeyCode::Up => {
                self.row = self.row.saturating_sub(1);
                self.col = self.col.min(self.line_len());
            }
            KeyCode::Down => {
                self.row = (self.row + 1).min(self.lines.len() - 1);
                self.col = self.col.min(self.line_len());
            }
            KeyCode::Home => self.col = 0,
            KeyCode::End => self.col = self.line_len(),
            _ => return false,
        }
        true
    }
}
