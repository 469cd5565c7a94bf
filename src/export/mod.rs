//! What leaves splitdesk: feedback text, tables, clipboard.

pub mod chart;
pub mod clipboard;
pub mod feedback;
