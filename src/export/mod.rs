//! What leaves splitdesk: feedback text, tables, clipboard.

pub mod feedback;
