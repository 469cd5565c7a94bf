//! Feedback text, tables, clipboard.
