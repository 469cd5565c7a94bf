//! Layout and the top-level draw: pure functions of `&App` and the frame size.

use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Clear, Paragraph, Wrap};
use ratatui::Frame;

use super::action::Action;
use super::app::{App, Focus, Modal, Tone, View};
use super::panes;

/// Where each part of the screen goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Areas {
    /// Title bar.
    pub title: Rect,
    /// Roster pane, when shown.
    pub roster: Option<Rect>,
    /// Chart pane, when shown.
    pub chart: Option<Rect>,
    /// Verdict pane, when shown.
    pub verdict: Option<Rect>,
    /// History view or the welcome panel, when shown.
    pub side: Option<Rect>,
    /// Status line.
    pub status: Rect,
    /// Key hints.
    pub footer: Rect,
}

/// Terminals at least this wide show the roster beside the review at all times.
pub const WIDE: u16 = 120;

/// Lay the screen out for the app's state.
pub fn areas(area: Rect, app: &App) -> Areas {
    let [title, body, status, footer] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Min(0),
        Constraint::Length(1),
        Constraint::Length(1),
    ])
    .areas(area);
    let wide = area.width >= WIDE;
    let roster_visible =
        app.open.is_none() || (app.show_roster && (wide || app.focus == Focus::Roster));
    let roster_w = if wide {
        (area.width / 4).clamp(30, 44)
    } else {
        (area.width * 2 / 5).clamp(24, 34)
    };
    let (roster, right) = if roster_visible && body.width > roster_w + 20 {
        let [l, r] =
            Layout::horizontal([Constraint::Length(roster_w), Constraint::Min(0)]).areas(body);
        (Some(l), r)
    } else if roster_visible {
        (Some(body), Rect::default())
    } else {
        (None, body)
    };
    let mut out = Areas {
        title,
        roster,
        status,
        footer,
        ..Areas::default()
    };
    if right.area() == 0 {
        return out;
    }
    if app.open.is_none() || app.view == View::History {
        out.side = Some(right);
        return out;
    }
    let chart_h = if wide {
        (right.height * 9 / 20).max(10)
    } else {
        (right.height * 2 / 5).max(8)
    }
    .min(right.height.saturating_sub(6));
    let [c, v] = Layout::vertical([Constraint::Length(chart_h), Constraint::Min(0)]).areas(right);
    out.chart = Some(c);
    out.verdict = Some(v);
    out
}

/// Width of the chart's plot area (inside the border, right of the scale labels).
pub fn chart_plot_width(app: &App) -> u16 {
    let area = Rect::new(0, 0, app.size.0, app.size.1);
    areas(area, app)
        .chart
        .map(|c| c.width.saturating_sub(2 + panes::chart::GUTTER))
        .unwrap_or(80)
}

/// A pane's block: border, title, focus colour.
pub fn pane_block<'a>(app: &App, title: impl Into<Line<'a>>, focused: bool) -> Block<'a> {
    let t = &app.theme;
    Block::default()
        .borders(Borders::ALL)
        .border_set(t.border_set())
        .border_style(if focused { t.border_focus } else { t.border })
        .title(title)
}

/// Draw the whole screen.
pub fn draw(frame: &mut Frame, app: &App) {
    let area = frame.area();
    let a = areas(area, app);
    let buf = frame.buffer_mut();
    draw_title(app, a.title, buf);
    if let Some(r) = a.roster {
        panes::roster::render(app, r, buf);
    }
    if let Some(r) = a.chart {
        panes::chart::render(app, r, buf);
    }
    if let Some(r) = a.verdict {
        panes::verdict::render(app, r, buf);
    }
    if let Some(r) = a.side {
        if app.open.is_some() || app.view == View::History {
            panes::history::render(app, r, buf);
        } else {
            draw_welcome(app, r, buf);
        }
    }
    draw_status(app, a.status, buf);
    draw_footer(app, a.footer, buf);
    if let Some(m) = &app.modal {
        draw_modal(app, m, area, buf);
    }
    if app.theme.ascii {
        super::theme::asciify(buf);
    }
    scrub(frame.buffer_mut());
}

/// The last pass before a frame is flushed: a cell whose symbol holds a control or
/// bidirectional character (one that slipped past the panes' own escaping) loses it; a
/// cell left empty shows the character's visible stand-in. Nothing from the roster can
/// reach the terminal as an escape sequence, whatever pane drew it.
pub fn scrub(buf: &mut Buffer) {
    for cell in buf.content.iter_mut() {
        let sym = cell.symbol();
        if !sym.chars().any(is_unsafe) {
            continue;
        }
        let kept: String = sym.chars().filter(|&c| !is_unsafe(c)).collect();
        let shown = if kept.is_empty() {
            printable(
                sym.get(..sym.chars().next().map_or(0, char::len_utf8))
                    .unwrap_or(""),
            )
        } else {
            kept
        };
        cell.set_symbol(&shown);
    }
}

use ratatui::buffer::Buffer;
use ratatui::widgets::Widget;

use crate::roster::{is_unsafe, printable};

fn draw_title(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    buf.set_style(area, t.bar);
    let mut parts = vec![format!(" splitdesk · {}", app.roster.name)];
    if let Some(o) = &app.open {
        if let Some(a) = app.athlete(o.athlete) {
            parts.push(a.profile.name.clone());
        }
        parts.push(app.session_title(&o.session_id));
        let mode = if o.revealed() {
            "notes revealed"
        } else {
            "blind"
        };
        parts.push(format!("[{mode}]"));
    }
    Paragraph::new(printable(&parts.join(" · ")))
        .style(t.bar)
        .render(area, buf);
}

fn draw_welcome(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let block = pane_block(app, " Review ", false);
    let inner = block.inner(area);
    block.render(area, buf);
    let k = &app.keymap;
    let lines = vec![
        Line::styled("No session open.", t.heading),
        Line::raw(""),
        Line::from(vec![
            Span::styled(k.first(Action::NextUnreviewed), t.heading),
            Span::styled(
                " opens the oldest unreviewed session (the daily queue);",
                t.text,
            ),
        ]),
        Line::from(vec![
            Span::styled(k.first(Action::Open), t.heading),
            Span::styled(" opens the session under the roster cursor.", t.text),
        ]),
        Line::raw(""),
        Line::styled(
            format!(
                "{} unreviewed session(s) across {} athlete(s).",
                app.queue.len(),
                app.roster.athletes.len()
            ),
            t.dim,
        ),
    ];
    let mut lines = lines;
    lines.extend(panes::roster::athlete_problems(app));
    lines.extend(panes::roster::roster_problems(app));
    if !app.config_problems.is_empty() {
        let n = app.config_problems.len();
        lines.push(Line::raw(""));
        lines.push(Line::styled(
            format!(
                "! {n} problem{} in config.toml (the rest of it is used):",
                if n == 1 { "" } else { "s" }
            ),
            t.warn,
        ));
        for p in &app.config_problems {
            lines.push(Line::styled(printable(p), t.text));
        }
    }
    Paragraph::new(lines)
        .wrap(Wrap { trim: false })
        .render(inner, buf);
}

fn draw_status(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let p = app.progress;
    let right = if !app.scan_started() {
        // The very first frame, drawn before the scan starts: no count to show yet.
        " reading the roster ".to_string()
    } else if p.done < p.total {
        format!(" analysing {}/{} ", p.done, p.total)
    } else if p.failed > 0 {
        format!(
            " {} unreadable file(s) · {} to review ",
            p.failed,
            app.queue.len()
        )
    } else {
        format!(" {} to review ", app.queue.len())
    };
    let rw = right.chars().count() as u16;
    let [l, r] = Layout::horizontal([Constraint::Min(0), Constraint::Length(rw)]).areas(area);
    if let Some(m) = &app.message {
        let style = match m.tone {
            Tone::Info => t.text,
            Tone::Done => t.good,
            Tone::Warn => t.warn,
        };
        Paragraph::new(Line::styled(format!(" {}", printable(&m.text)), style)).render(l, buf);
    }
    Paragraph::new(Line::styled(right, t.dim)).render(r, buf);
}

/// The footer hints for the current context, from the key map.
pub fn hints(app: &App) -> Vec<(String, &'static str)> {
    let k = &app.keymap;
    let h = |a: Action, what: &'static str| (k.first(a), what);
    if app.modal.is_some() {
        return vec![h(Action::Cancel, "close")];
    }
    if app.filter_editing {
        return vec![("Enter".into(), "keep filter"), ("Esc".into(), "clear")];
    }
    if app
        .open
        .as_ref()
        .and_then(|o| o.feedback.as_ref())
        .is_some_and(|e| e.editing)
    {
        return vec![
            h(Action::SaveFeedback, "save"),
            h(Action::Cancel, "stop editing"),
        ];
    }
    let mut v = match app.focus {
        Focus::Roster => vec![
            h(Action::Down, "move"),
            h(Action::Open, "open"),
            h(Action::NextUnreviewed, "next unreviewed"),
            h(Action::Filter, "filter"),
            h(Action::ToggleUnreviewed, "unreviewed only"),
            h(Action::History, "history"),
        ],
        Focus::Chart => vec![
            h(Action::Right, "cursor"),
            h(Action::Ruler, "ruler"),
            h(Action::ClearRulers, "clear rulers"),
            h(Action::ZoomIn, "zoom"),
            h(Action::ZoomOut, "out"),
            h(Action::PanRight, "pan"),
            h(Action::ToggleElevation, "elevation"),
        ],
        Focus::Verdict => {
            if app.open.as_ref().is_some_and(|o| o.revealed()) {
                vec![
                    h(Action::EditFeedback, "edit feedback"),
                    h(Action::ExternalEditor, "$EDITOR"),
                    h(Action::CopyFeedback, "copy"),
                    h(Action::ExportFeedback, "to file"),
                    h(Action::RevealNotes, "notes"),
                    h(Action::NextUnreviewed, "next"),
                ]
            } else {
                vec![
                    ("1-5".to_string(), "score"),
                    h(Action::CycleVerdict, "verdict"),
                    h(Action::RevealNotes, "reveal notes"),
                    h(Action::Down, "interval"),
                    h(Action::NextUnreviewed, "next"),
                ]
            }
        }
    };
    v.push(h(Action::FocusNext, "pane"));
    v.push(h(Action::Help, "help"));
    v.push(h(Action::Quit, "quit"));
    v
}

fn draw_footer(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    buf.set_style(area, t.bar);
    let mut spans = vec![Span::styled(" ", t.bar)];
    let mut used = 1usize;
    for (key, what) in hints(app) {
        let len = key.chars().count() + what.chars().count() + 3;
        if used + len > area.width as usize {
            break;
        }
        used += len;
        spans.push(Span::styled(
            key,
            t.bar.add_modifier(ratatui::style::Modifier::BOLD),
        ));
        spans.push(Span::styled(format!(" {what}  "), t.bar));
    }
    Paragraph::new(Line::from(spans)).render(area, buf);
}

/// A centred rectangle of at most `w` x `h` inside `area`.
pub fn centered(area: Rect, w: u16, h: u16) -> Rect {
    let w = w.min(area.width);
    let h = h.min(area.height);
    Rect::new(
        area.x + (area.width - w) / 2,
        area.y + (area.height - h) / 2,
        w,
        h,
    )
}

fn draw_modal(app: &App, modal: &Modal, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    match modal {
        Modal::Help => draw_help(app, area, buf),
        Modal::Notes(text) => {
            let r = centered(area, 70, 14);
            Clear.render(r, buf);
            let block = pane_block(app, " Athlete's notes ", true);
            let inner = block.inner(r);
            block.render(r, buf);
            let mut lines: Vec<Line> = text
                .lines()
                .map(|l| Line::styled(printable(l), t.text))
                .collect();
            lines.push(Line::raw(""));
            lines.push(Line::styled(
                format!("{} closes", app.keymap.first(Action::Cancel)),
                t.dim,
            ));
            Paragraph::new(lines)
                .wrap(Wrap { trim: false })
                .render(inner, buf);
        }
        Modal::ConfirmQuit => {
            let r = centered(area, 52, 5);
            Clear.render(r, buf);
            let block = pane_block(app, " Quit? ", true);
            let inner = block.inner(r);
            block.render(r, buf);
            Paragraph::new(vec![
                Line::styled("The feedback edit is not saved.", t.warn),
                Line::styled("Quit anyway? y = quit, n = stay", t.text),
            ])
            .render(inner, buf);
        }
        Modal::Message { title, text } => {
            let r = centered(area, 60, 8);
            Clear.render(r, buf);
            let block = pane_block(app, format!(" {title} "), true);
            let inner = block.inner(r);
            block.render(r, buf);
            Paragraph::new(text.clone())
                .style(t.text)
                .wrap(Wrap { trim: false })
                .render(inner, buf);
        }
    }
}

fn draw_help(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let entries = app.keymap.entries();
    let two = area.width >= 76;
    let per_col = if two {
        entries.len().div_ceil(2)
    } else {
        entries.len()
    };
    let w = if two { 76 } else { 40 };
    let h = (per_col as u16 + 3).min(area.height);
    let r = centered(area, w, h);
    Clear.render(r, buf);
    let block = pane_block(app, " Keys (config [keys] overrides them) ", true);
    let inner = block.inner(r);
    block.render(r, buf);
    let cols: Vec<Rect> = if two {
        Layout::horizontal([Constraint::Percentage(50), Constraint::Percentage(50)])
            .split(inner)
            .to_vec()
    } else {
        vec![inner]
    };
    for (c, chunk) in cols.iter().zip(entries.chunks(per_col.max(1))) {
        let lines: Vec<Line> = chunk
            .iter()
            .map(|(a, keys)| {
                Line::from(vec![
                    Span::styled(format!("{keys:>9} "), t.heading),
                    Span::styled(a.description(), t.text),
                ])
            })
            .collect();
        Paragraph::new(lines).render(*c, buf);
    }
}
