//! Errors with 1-based line and column positions.

use std::fmt;
use std::path::PathBuf;

/// What went wrong, without the position.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum PlanErrorKind {
    /// The parser wanted one thing and found another.
    #[error("expected {expected}, found {found}")]
    Expected {
        /// What would have been accepted, in words (`a duration like 3:00 ...`).
        expected: String,
        /// The offending text, quoted, or `end of input`.
        found: String,
    },
    /// The text is well formed but its value is not acceptable (a reversed band, 0 repeats...).
    #[error("{0}")]
    Invalid(String),
    /// The TOML layer rejected the file (syntax, wrong value type, unknown key...).
    #[error("{0}")]
    Toml(String),
}

/// A plan that could not be parsed: where (1-based line and column) and why.
///
/// `context` names the TOML key whose string value was parsed when the position could not be
/// mapped back into the file; the line and column are then relative to that string.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct PlanError {
    /// 1-based line.
    pub line: usize,
    /// 1-based column, counted in characters.
    pub column: usize,
    /// The TOML key the position is relative to, when it is not a file position.
    pub context: Option<String>,
    /// What went wrong.
    pub kind: PlanErrorKind,
}

impl fmt::Display for PlanError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(ctx) = &self.context {
            write!(f, "{ctx}: ")?;
        }
        write!(f, "{}:{}: {}", self.line, self.column, self.kind)
    }
}

impl PlanError {
    /// One line for listings: `line L, column C: what` (with the TOML key first when the
    /// position is relative to that key's string).
    pub fn located(&self) -> String {
        let at = format!("line {}, column {}: {}", self.line, self.column, self.kind);
        match &self.context {
            Some(ctx) => format!("{ctx}: {at}"),
            None => at,
        }
    }

    /// An error at byte `offset` of `text` (clamped to the text).
    pub(crate) fn at(text: &str, offset: usize, kind: PlanErrorKind) -> PlanError {
        let (line, column) = line_col(text, offset);
        PlanError {
            line,
            column,
            context: None,
            kind,
        }
    }

    /// The source line the error points at and a caret under the column, for terminals.
    /// `None` when the position is relative to a TOML string (`context` is set) or out of range.
    pub fn snippet(&self, text: &str) -> Option<String> {
        if self.context.is_some() {
            return None;
        }
        let src_line = text.lines().nth(self.line.checked_sub(1)?)?;
        let pad: String = src_line
            .chars()
            .take(self.column.saturating_sub(1))
            .map(|c| if c == '\t' { '\t' } else { ' ' })
            .collect();
        Some(format!("{src_line}\n{pad}^"))
    }
}

/// 1-based line and column (in characters) of byte `offset` in `text`.
pub(crate) fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let mut end = offset.min(text.len());
    while end > 0 && !text.is_char_boundary(end) {
        end -= 1;
    }
    let before = text.get(..end).unwrap_or("");
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before.get(line_start..).map_or(0, |s| s.chars().count()) + 1;
    (line, column)
}

/// A plan file that could not be loaded: the path plus an I/O or parse error.
#[derive(Debug, thiserror::Error)]
pub enum PlanFileError {
    /// The file could not be read.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The file was read but is not a valid plan.
    #[error("{}: {source}", path.display())]
    Parse {
        /// The file.
        path: PathBuf,
        /// Where and why.
        #[source]
        source: PlanError,
    },
}

impl PlanFileError {
    /// The file.
    pub fn path(&self) -> &std::path::Path {
        match self {
            PlanFileError::Io { path, .. } | PlanFileError::Parse { path, .. } => path,
        }
    }

    /// What is wrong without the path: `line L, column C: ...` or the I/O error.
    pub fn reason(&self) -> String {
        match self {
            PlanFileError::Io { source, .. } => source.to_string(),
            PlanFileError::Parse { source, .. } => source.located(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_col_counts_chars_and_lines() {
        assert_eq!(line_col("abc", 0), (1, 1));
        assert_eq!(line_col("abc", 2), (1, 3));
        assert_eq!(line_col("a\nbc", 3), (2, 2));
        assert_eq!(line_col("±x", 2), (1, 2));
        assert_eq!(line_col("ab", 99), (1, 3));
    }
}
