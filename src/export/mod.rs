//! What leaves splitdesk: feedback text, tables, clipboard.

pub mod clipboard;
pub mod feedback;
