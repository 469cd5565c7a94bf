//! The verdict pane's state: where its document is scrolled to, and the keys that move it.
//!
//! The pane is one document (purpose, table, grading, findings, notes, feedback) laid out by
//! [`super::verdict::document`] for a width. The state keeps the first row shown; the row
//! the coach works on (the selected interval, or the editor's cursor) is kept in view
//! while `follow` is set, which any move of that row sets and an explicit scroll clears.

use crate::tui::action::Action;
use crate::tui::app::OpenSession;

/// How the verdict document sits in the pane.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct VerdictView {
    /// First document row shown.
    pub scroll: usize,
    /// Keep the working row (selected interval or editor cursor) in view.
    pub follow: bool,
    /// Whether the notes were revealed when last settled (`None`: not settled yet). A
    /// reveal seen while the session is open scrolls to the athlete's notes.
    pub revealed: Option<bool>,
}

/// What the scroll needs to know of the laid-out document.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Extent {
    /// Rows in the document.
    pub total: usize,
    /// Rows the pane shows.
    pub height: usize,
    /// The row to keep in view while following.
    pub focus: Option<usize>,
}

impl Extent {
    /// The last valid first row.
    pub fn max_scroll(&self) -> usize {
        self.total.saturating_sub(self.height)
    }
}

impl VerdictView {
    /// The first row to show for `scroll`, `follow` and an extent: the scroll clamped to
    /// the document, moved as little as needed to show the focus row while following.
    pub fn top(&self, e: Extent) -> usize {
        let mut top = self.scroll.min(e.max_scroll());
        if let (true, Some(f)) = (self.follow, e.focus) {
            if e.height == 0 {
                return top;
            }
            if f < top {
                top = f;
            } else if f >= top + e.height {
                top = f + 1 - e.height;
            }
            top = top.min(e.max_scroll());
        }
        top
    }

    /// Store the row actually shown (after a key, a resize or new content). `revealed`
    /// and `notes` (the row of the athlete's notes) bring the notes into view once, right
    /// after the reveal.
    pub fn settle(&mut self, e: Extent, revealed: bool, notes: Option<usize>) {
        if self.revealed == Some(false) && revealed {
            if let Some(row) = notes {
                self.scroll = row;
                self.follow = false;
            }
        }
        self.revealed = Some(revealed);
        self.scroll = self.top(e);
    }

    /// Apply a scroll action; `false` for any other action.
    pub fn on_action(&mut self, action: Action, e: Extent) -> bool {
        let page = e.height.saturating_sub(1).max(1);
        let top = self.top(e);
        self.scroll = match action {
            Action::PageUp => top.saturating_sub(page),
            Action::PageDown => (top + page).min(e.max_scroll()),
            Action::ScrollTop => 0,
            Action::ScrollEnd => e.max_scroll(),
            _ => return false,
        };
        self.follow = false;
        true
    }

    /// The working row moved: bring it into view.
    pub fn follow(&mut self) {
        self.follow = true;
    }
}

/// The verdict pane's keys while it has focus: the arrows move the selected work interval
/// (keeping it in view), the page keys scroll the document (`extent`: the document as laid
/// out at the current size). `false` for any other action.
pub fn on_action(o: &mut OpenSession, action: Action, extent: Option<Extent>) -> bool {
    let n = o.work_count();
    match action {
        Action::Up | Action::Left => {
            o.selected_work = o.selected_work.saturating_sub(1);
            o.verdict.follow();
        }
        Action::Down | Action::Right => {
            if o.selected_work + 1 < n {
                o.selected_work += 1;
            }
            o.verdict.follow();
        }
        Action::PageUp | Action::PageDown | Action::ScrollTop | Action::ScrollEnd => {
            if let Some(e) = extent {
                o.verdict.on_action(action, e);
            }
        }
        _ => return false,
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ext(total: usize, height: usize, focus: Option<usize>) -> Extent {
        Extent {
            total,
            height,
            focus,
        }
    }

    #[test]
    fn pages_stop_at_both_ends() {
        let mut v = VerdictView::default();
        let e = ext(30, 10, None);
        assert!(v.on_action(Action::PageDown, e));
        assert_eq!(v.scroll, 9);
        v.on_action(Action::PageDown, e);
        v.on_action(Action::PageDown, e);
        assert_eq!(v.scroll, 20);
        v.on_action(Action::PageUp, e);
        assert_eq!(v.scroll, 11);
        v.on_action(Action::ScrollTop, e);
        assert_eq!(v.scroll, 0);
        v.on_action(Action::ScrollEnd, e);
        assert_eq!(v.scroll, 20);
        assert!(!v.on_action(Action::Up, e));
        // A document that fits never scrolls.
        v.on_action(Action::ScrollEnd, ext(5, 10, None));
        assert_eq!(v.scroll, 0);
    }

    #[test]
    fn following_moves_as_little_as_needed() {
        let mut v = VerdictView::default();
        v.follow();
        // Row 12 of 40 in a 10-row pane: it becomes the last row shown.
        assert_eq!(v.top(ext(40, 10, Some(12))), 3);
        v.settle(ext(40, 10, Some(12)), false, None);
        assert_eq!(v.scroll, 3);
        // Within view: no move.
        assert_eq!(v.top(ext(40, 10, Some(8))), 3);
        // Above: it becomes the first row.
        assert_eq!(v.top(ext(40, 10, Some(1))), 1);
        // An explicit scroll stops following.
        v.on_action(Action::ScrollEnd, ext(40, 10, Some(1)));
        assert_eq!(v.top(ext(40, 10, Some(1))), 30);
    }

    #[test]
    fn the_reveal_brings_the_notes_into_view_once() {
        let mut v = VerdictView::default();
        // Opened already revealed: no jump.
        v.settle(ext(40, 10, None), true, Some(25));
        assert_eq!(v.scroll, 0);
        let mut v = VerdictView::default();
        v.settle(ext(40, 10, None), false, None);
        v.settle(ext(40, 10, None), true, Some(25));
        assert_eq!(v.scroll, 25);
        v.on_action(Action::ScrollTop, ext(40, 10, None));
        v.settle(ext(40, 10, None), true, Some(25));
        assert_eq!(v.scroll, 0);
    }
}
