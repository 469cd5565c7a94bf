//! The roster pane: athletes with their unreviewed counts, the selected athlete's sessions.

use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

use super::{fit, pad};
use crate::tui::app::{App, Focus, RosterRow};
use crate::tui::ui::pane_block;

/// Draw the roster pane.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let mut title = format!(" Roster · {} ", app.roster.name);
    if app.only_unreviewed {
        title.push_str("· unreviewed ");
    }
    let block = pane_block(app, title, app.focus == Focus::Roster);
    let inner = block.inner(area);
    block.render(area, buf);
    if inner.height == 0 || inner.width < 4 {
        return;
    }
    let w = inner.width as usize;
    let mut lines: Vec<Line> = Vec::new();
    let header_rows = if app.filter_editing || !app.filter.is_empty() {
        let caret = if app.filter_editing { "_" } else { "" };
        lines.push(Line::styled(
            fit(&format!("filter: {}{caret}", app.filter), w),
            if app.filter_editing { t.warn } else { t.dim },
        ));
        1
    } else {
        0
    };
    let rows = app.roster_rows();
    if rows.is_empty() {
        lines.push(Line::styled(
            if app.roster.athletes.is_empty() {
                "no athletes in this roster"
            } else {
                "nothing matches"
            },
            t.dim,
        ));
    }
    let visible = (inner.height as usize).saturating_sub(header_rows).max(1);
    let cur = app.cursor_index(&rows).unwrap_or(0);
    let first = cur.saturating_sub(visible.saturating_sub(1).min(visible / 2 + visible / 4));
    let first = first.min(rows.len().saturating_sub(visible));
    let open_id = app.open.as_ref().map(|o| o.session_id.as_str());
    for (i, row) in rows.iter().enumerate().skip(first).take(visible) {
        let selected = i == cur;
        let line = match row {
            RosterRow::Athlete(idx) => {
                let Some(a) = app.athlete(*idx) else { continue };
                let n = app.counts.get(&a.id).copied().unwrap_or(0);
                let count = if n > 0 {
                    format!("{n:>3}")
                } else {
                    "  ·".to_string()
                };
                let expanded = app.cursor.athlete.as_deref() == Some(a.id.as_str());
                let mark = if expanded { "▾ " } else { "▸ " };
                let name_w = w.saturating_sub(2 + 4);
                let style = if selected { t.selected } else { t.heading };
                Line::from(vec![
                    Span::styled(mark, style),
                    Span::styled(pad(&a.profile.name, name_w), style),
                    Span::styled(
                        format!(" {count}"),
                        if selected {
                            t.selected
                        } else if n > 0 {
                            t.warn
                        } else {
                            t.dim
                        },
                    ),
                ])
            }
            RosterRow::Session(s) => {
                let day = s
                    .start
                    .map(|d| crate::model::session::session_day(&s.session_id, d));
                let date = match day {
                    Some(d) if w >= 38 => d.format("%Y-%m-%d").to_string(),
                    Some(d) => d.format("%m-%d").to_string(),
                    None => "  …  ".to_string(),
                };
                let stage = if s.failed {
                    "unreadable".to_string()
                } else {
                    match s.stage {
                        Some(st) => st.label().to_string(),
                        None => "analysing".to_string(),
                    }
                };
                let stage_w = 13.min(w / 3);
                let open_mark = if open_id == Some(s.session_id.as_str()) {
                    "•"
                } else {
                    " "
                };
                let title_w = w.saturating_sub(2 + date.chars().count() + 1 + stage_w + 1);
                let title = app.session_title(&s.session_id);
                let base = if selected { t.selected } else { t.text };
                let stage_style = if selected {
                    t.selected
                } else {
                    match s.stage {
                        Some(st) if st.is_unreviewed() => t.warn,
                        Some(_) => t.good,
                        None => t.dim,
                    }
                };
                Line::from(vec![
                    Span::styled(format!(" {open_mark}"), base),
                    Span::styled(format!("{date} "), if selected { base } else { t.dim }),
                    Span::styled(pad(&title, title_w), base),
                    Span::styled(format!(" {:>stage_w$}", fit(&stage, stage_w)), stage_style),
                ])
            }
        };
        lines.push(line);
    }
    Paragraph::new(lines).render(inner, buf);
}
