//! What a key means, independent of which key it is.

/// Everything the coach can ask the workstation to do. The `KeyMap` binds keys to these.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Action {
    /// Quit (asks first when an inline edit is unsaved).
    Quit,
    /// Show or hide the help overlay.
    Help,
    /// Close a popup, leave a mode, cancel a half-made ruler.
    Cancel,
    /// Focus the next pane.
    FocusNext,
    /// Focus the previous pane.
    FocusPrev,
    /// Move up (roster rows, interval rows).
    Up,
    /// Move down.
    Down,
    /// Move left (chart cursor; back to the athlete in the roster).
    Left,
    /// Move right (chart cursor; into the athlete's sessions in the roster).
    Right,
    /// Open the selected session.
    Open,
    /// Scroll the verdict pane up by a page.
    PageUp,
    /// Scroll the verdict pane down by a page.
    PageDown,
    /// Scroll the verdict pane to its top.
    ScrollTop,
    /// Scroll the verdict pane to its end.
    ScrollEnd,
    /// Filter athletes by name.
    Filter,
    /// Show only unreviewed sessions.
    ToggleUnreviewed,
    /// Open the next unreviewed session in the roster (the daily queue).
    NextUnreviewed,
    /// Open the previous unreviewed session in the roster.
    PrevUnreviewed,
    /// Show or hide the roster pane (useful on narrow terminals).
    ToggleRoster,
    /// Score the selected work interval 1.
    Score1,
    /// Score 2.
    Score2,
    /// Score 3.
    Score3,
    /// Score 4.
    Score4,
    /// Score 5.
    Score5,
    /// Cycle the purpose verdict: met, partly, missed.
    CycleVerdict,
    /// Reveal the athlete's notes (only once grading is complete).
    RevealNotes,
    /// Mark the session seen without a grade (out of the queue, notes stay hidden), or
    /// bring it back.
    ToggleSeen,
    /// Show or hide the elevation trace.
    ToggleElevation,
    /// Mark a ruler point (first press: start, second: end).
    Ruler,
    /// Clear the session's rulers.
    ClearRulers,
    /// Zoom the chart in around the cursor.
    ZoomIn,
    /// Zoom the chart out.
    ZoomOut,
    /// Pan the chart left by half a window.
    PanLeft,
    /// Pan the chart right by half a window.
    PanRight,
    /// Edit the feedback text inline.
    EditFeedback,
    /// Edit the feedback text in `$EDITOR`.
    ExternalEditor,
    /// Save the feedback text to the journal.
    SaveFeedback,
    /// Copy the feedback text to the clipboard.
    CopyFeedback,
    /// Save the feedback text to a file.
    ExportFeedback,
    /// The day's messages (the day of the open or selected session, every athlete): to a
    /// file in the feedback folder and to the clipboard.
    ExportDay,
    /// Switch to the athlete's history view and back.
    History,
    /// Cycle the verdict pane's lower part: findings, the same workout over time, the week
    /// around the session.
    ContextView,
    /// Overlay an earlier run of the same workout on the chart's pace (the latest, then
    /// the next older one, then off).
    EarlierOverlay,
}

impl Action {
    /// Every action, in help-overlay order.
    pub const ALL: [Action; 43] = [
        Action::Help,
        Action::Quit,
        Action::Cancel,
        Action::FocusNext,
        Action::FocusPrev,
        Action::Up,
        Action::Down,
        Action::Left,
        Action::Right,
        Action::Open,
        Action::PageUp,
        Action::PageDown,
        Action::ScrollTop,
        Action::ScrollEnd,
        Action::Filter,
        Action::ToggleUnreviewed,
        Action::NextUnreviewed,
        Action::PrevUnreviewed,
        Action::ToggleRoster,
        Action::Score1,
        Action::Score2,
        Action::Score3,
        Action::Score4,
        Action::Score5,
        Action::CycleVerdict,
        Action::RevealNotes,
        Action::ToggleSeen,
        Action::ToggleElevation,
        Action::Ruler,
        Action::ClearRulers,
        Action::ZoomIn,
        Action::ZoomOut,
        Action::PanLeft,
        Action::PanRight,
        Action::EditFeedback,
        Action::ExternalEditor,
        Action::SaveFeedback,
        Action::CopyFeedback,
        Action::ExportFeedback,
        Action::ExportDay,
        Action::History,
        Action::ContextView,
        Action::EarlierOverlay,
    ];

    /// The name used in the config file's `[keys]` table.
    pub fn name(self) -> &'static str {
        match self {
            Action::Quit => "quit",
            Action::Help => "help",
            Action::Cancel => "cancel",
            Action::FocusNext => "focus_next",
            Action::FocusPrev => "focus_prev",
            Action::Up => "up",
            Action::Down => "down",
            Action::Left => "left",
            Action::Right => "right",
            Action::Open => "open",
            Action::PageUp => "page_up",
            Action::PageDown => "page_down",
            Action::ScrollTop => "scroll_top",
            Action::ScrollEnd => "scroll_end",
            Action::Filter => "filter",
            Action::ToggleUnreviewed => "only_unreviewed",
            Action::NextUnreviewed => "next_unreviewed",
            Action::PrevUnreviewed => "prev_unreviewed",
            Action::ToggleRoster => "toggle_roster",
            Action::Score1 => "score_1",
            Action::Score2 => "score_2",
            Action::Score3 => "score_3",
            Action::Score4 => "score_4",
            Action::Score5 => "score_5",
            Action::CycleVerdict => "verdict",
            Action::RevealNotes => "reveal_notes",
            Action::ToggleSeen => "seen",
            Action::ToggleElevation => "elevation",
            Action::Ruler => "ruler",
            Action::ClearRulers => "clear_rulers",
            Action::ZoomIn => "zoom_in",
            Action::ZoomOut => "zoom_out",
            Action::PanLeft => "pan_left",
            Action::PanRight => "pan_right",
            Action::EditFeedback => "edit_feedback",
            Action::ExternalEditor => "external_editor",
            Action::SaveFeedback => "save_feedback",
            Action::CopyFeedback => "copy_feedback",
            Action::ExportFeedback => "export_feedback",
            Action::ExportDay => "export_day",
            Action::History => "history",
            Action::ContextView => "context_view",
            Action::EarlierOverlay => "earlier_overlay",
        }
    }

    /// What the action does, for the help overlay.
    pub fn description(self) -> &'static str {
        match self {
            Action::Quit => "quit",
            Action::Help => "this help",
            Action::Cancel => "close popup / cancel",
            Action::FocusNext => "next pane",
            Action::FocusPrev => "previous pane",
            Action::Up => "up",
            Action::Down => "down",
            Action::Left => "left / cursor back",
            Action::Right => "right / cursor on",
            Action::Open => "open session",
            Action::PageUp => "verdict page up",
            Action::PageDown => "verdict page down",
            Action::ScrollTop => "verdict top",
            Action::ScrollEnd => "verdict end",
            Action::Filter => "filter athletes",
            Action::ToggleUnreviewed => "only unreviewed",
            Action::NextUnreviewed => "next in queue",
            Action::PrevUnreviewed => "previous in queue",
            Action::ToggleRoster => "show/hide roster",
            Action::Score1 => "score 1",
            Action::Score2 => "score 2",
            Action::Score3 => "score 3",
            Action::Score4 => "score 4",
            Action::Score5 => "score 5",
            Action::CycleVerdict => "purpose verdict",
            Action::RevealNotes => "reveal notes",
            Action::ToggleSeen => "seen, no grade / undo",
            Action::ToggleElevation => "elevation",
            Action::Ruler => "ruler point",
            Action::ClearRulers => "clear rulers",
            Action::ZoomIn => "zoom in",
            Action::ZoomOut => "zoom out",
            Action::PanLeft => "pan left",
            Action::PanRight => "pan right",
            Action::EditFeedback => "edit feedback",
            Action::ExternalEditor => "feedback in $EDITOR",
            Action::SaveFeedback => "save feedback",
            Action::CopyFeedback => "copy feedback",
            Action::ExportFeedback => "feedback to file",
            Action::ExportDay => "day's messages out",
            Action::History => "history view",
            Action::ContextView => "findings/workout/week",
            Action::EarlierOverlay => "chart: earlier run",
        }
    }

    /// Look an action up by its config name.
    pub fn from_name(name: &str) -> Option<Action> {
        Action::ALL.iter().copied().find(|a| a.name() == name)
    }

    /// The score a `ScoreN` action gives.
    pub fn score(self) -> Option<u8> {
        match self {
            Action::Score1 => Some(1),
            Action::Score2 => Some(2),
            Action::Score3 => Some(3),
            Action::Score4 => Some(4),
            Action::Score5 => Some(5),
            _ => None,
        }
    }
}
