//! The panes: pure render functions from `&App` into a buffer region.

pub mod chart;
pub mod context_view;
pub mod history;
pub mod history_window;
pub mod roster;
pub mod verdict;
pub mod verdict_state;

/// Cut a string to at most `w` characters, marking the cut with `…`.
pub fn fit(s: &str, w: usize) -> String {
    let n = s.chars().count();
    if n <= w {
        return s.to_string();
    }
    if w == 0 {
        return String::new();
    }
    let mut out: String = s.chars().take(w - 1).collect();
    out.push('…');
    out
}

/// Pad or cut to exactly `w` characters.
pub fn pad(s: &str, w: usize) -> String {
    let f = fit(s, w);
    let n = f.chars().count();
    format!("{f}{}", " ".repeat(w.saturating_sub(n)))
}
