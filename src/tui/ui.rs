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
    let status_h = status_rows(app, area.width);
    let [title, body, status, footer] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Min(0),
        Constraint::Length(status_h),
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
    Paragraph::new(title_text(app, area.width as usize))
        .style(t.bar)
        .render(area, buf);
}

/// The state tag of the open session in the title bar.
pub fn state_tag(app: &App) -> Option<&'static str> {
    let o = app.open.as_ref()?;
    Some(if o.revealed() {
        "[notes revealed]"
    } else {
        "[blind]"
    })
}

/// The title bar's text at a width, shortened by priority so it is never cut mid-word and
/// the state tag stays whole: first the club name goes, then the athlete's name is cut to
/// the first name and initial, then the session title is cut at a word boundary (the
/// program name, then the athlete making room for it), then the session title goes.
pub fn title_text(app: &App, width: usize) -> String {
    let club = printable(&app.roster.name);
    let Some(o) = &app.open else {
        let full = format!(" splitdesk · {club}");
        return if full.chars().count() <= width {
            full
        } else {
            " splitdesk".chars().take(width).collect()
        };
    };
    let tag = state_tag(app).unwrap_or("");
    let athlete = app
        .athlete(o.athlete)
        .map(|a| printable(&a.profile.name))
        .unwrap_or_default();
    let short_athlete = abbreviate_name(&athlete);
    let session = printable(&app.session_title(&o.session_id));
    let join = |parts: &[&str]| {
        let kept: Vec<&str> = parts.iter().copied().filter(|p| !p.is_empty()).collect();
        format!(" {}", kept.join(" · "))
    };
    let fits = |s: &String| s.chars().count() <= width;
    let tries = [
        join(&["splitdesk", &club, &athlete, &session, tag]),
        join(&["splitdesk", &athlete, &session, tag]),
        join(&["splitdesk", &short_athlete, &session, tag]),
    ];
    if let Some(t) = tries.into_iter().find(fits) {
        return t;
    }
    // The session title takes what is left, cut at a word boundary.
    let whole_words = |cut: &str| {
        let kept = cut.trim_end_matches('…');
        !kept.is_empty() && (cut == session || session.starts_with(&format!("{kept} ")))
    };
    let prefixes: [&[&str]; 3] = [&["splitdesk", &short_athlete], &[&short_athlete], &[]];
    for prefix in prefixes {
        let mut parts: Vec<&str> = prefix.to_vec();
        parts.push(tag);
        let room = width.saturating_sub(join(&parts).chars().count() + 3);
        let cut = shorten_words(&session, room);
        if whole_words(&cut) {
            parts.insert(parts.len() - 1, &cut);
            let t = join(&parts);
            if fits(&t) {
                return t;
            }
        }
    }
    let sa = short_athlete.as_str();
    [
        join(&["splitdesk", sa, tag]),
        join(&[sa, tag]),
        join(&["splitdesk", tag]),
    ]
    .into_iter()
    .find(fits)
    .unwrap_or_else(|| tag.to_string())
}

/// `Ines Aldana` → `Ines A.`; a one-word name stays.
fn abbreviate_name(name: &str) -> String {
    let mut words = name.split_whitespace();
    match (words.next(), words.next_back()) {
        (Some(first), Some(last)) => match last.chars().next() {
            Some(c) => format!("{first} {c}."),
            None => first.to_string(),
        },
        (Some(first), None) => first.to_string(),
        _ => String::new(),
    }
}

/// Shorten text to at most `w` characters at a word boundary, marking the cut with `…`.
/// A first word longer than `w` is cut with `…` (there is no boundary to cut at).
pub fn shorten_words(s: &str, w: usize) -> String {
    if s.chars().count() <= w {
        return s.to_string();
    }
    if w == 0 {
        return String::new();
    }
    let mut out = String::new();
    for word in s.split(' ') {
        let candidate = if out.is_empty() {
            word.to_string()
        } else {
            format!("{out} {word}")
        };
        if candidate.chars().count() + 1 > w {
            break;
        }
        out = candidate;
    }
    let out = out.trim_end_matches([' ', ',', ';', ':', '·']).to_string();
    if out.is_empty() {
        return panes::fit(s, w);
    }
    format!("{out}…")
}

/// Wrap text into lines of at most `w` characters at word boundaries (a word longer than
/// a line is cut with `…`).
pub fn wrap_words(s: &str, w: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut cur = String::new();
    for word in s.split_whitespace() {
        let word = panes::fit(word, w);
        if cur.is_empty() {
            cur = word;
        } else if cur.chars().count() + 1 + word.chars().count() <= w {
            cur.push(' ');
            cur.push_str(&word);
        } else {
            lines.push(std::mem::take(&mut cur));
            cur = word;
        }
    }
    if !cur.is_empty() {
        lines.push(cur);
    }
    lines
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

/// The right end of the status line: the coach (on a journal with a staff), then progress
/// or the queue.
fn status_right(app: &App) -> String {
    let rest = progress_right(app);
    match app.coach_name() {
        Some(coach) => format!(" coach {} ·{rest}", panes::fit(&coach, COACH_SHOWN)),
        None => rest,
    }
}

/// At most this many characters of the coach's name on the status line.
pub const COACH_SHOWN: usize = 20;

fn progress_right(app: &App) -> String {
    let p = app.progress;
    if !app.scan_started() {
        // The very first frame, drawn before the scan starts: no count to show yet.
        " reading the roster ".to_string()
    } else if p.done < p.total {
        format!(" analysing {}/{} ", p.done, p.total)
    } else {
        let mut parts = Vec::new();
        if p.failed > 0 {
            parts.push(format!(
                "{} unreadable {}",
                p.failed,
                if p.failed == 1 { "file" } else { "files" }
            ));
        }
        parts.push(format!("{} to review", app.queue.len()));
        if app.seen_count > 0 {
            parts.push(format!("{} seen", app.seen_count));
        }
        format!(" {} ", parts.join(" · "))
    }
}

/// Most rows the status line takes: a message longer than one line wraps onto a second.
pub const STATUS_MAX_ROWS: u16 = 2;

/// The status message laid out at a width: wrapped at word boundaries into at most
/// [`STATUS_MAX_ROWS`] lines, the last one shortened at a word boundary when it still does
/// not fit. Each line starts with a space.
pub fn status_lines(app: &App, width: u16) -> Vec<String> {
    let Some(m) = &app.message else {
        return Vec::new();
    };
    let rw = status_right(app).chars().count();
    let w = (width as usize).saturating_sub(rw + 1);
    if w < 4 {
        return Vec::new();
    }
    let text = printable(&m.text);
    let mut lines = wrap_words(&text, w);
    let max = STATUS_MAX_ROWS as usize;
    if lines.len() > max {
        let rest = lines.split_off(max - 1).join(" ");
        lines.push(shorten_words(&rest, w));
    }
    lines.into_iter().map(|l| format!(" {l}")).collect()
}

/// Rows of the status line at a width.
fn status_rows(app: &App, width: u16) -> u16 {
    (status_lines(app, width).len() as u16).clamp(1, STATUS_MAX_ROWS)
}

fn draw_status(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let right = status_right(app);
    let rw = right.chars().count() as u16;
    let [l, r] = Layout::horizontal([Constraint::Min(0), Constraint::Length(rw)]).areas(area);
    if let Some(m) = &app.message {
        let style = match m.tone {
            Tone::Info => t.text,
            Tone::Done => t.good,
            Tone::Warn => t.warn,
        };
        let lines: Vec<Line> = status_lines(app, area.width)
            .into_iter()
            .map(|s| Line::styled(s, style))
            .collect();
        Paragraph::new(lines).render(l, buf);
    }
    Paragraph::new(Line::styled(right, t.dim)).render(Rect::new(r.x, r.y, r.width, 1), buf);
}

/// The footer hints for the current context, from the key map, most important first
/// ([`footer_hints`] drops from the end of the context's list when the line is short).
pub fn hints(app: &App) -> Vec<(String, &'static str)> {
    let k = &app.keymap;
    let h = |a: Action, what: &'static str| (k.first(a), what);
    if matches!(app.modal, Some(Modal::Conflict(_))) {
        return vec![
            ("k".into(), "keep mine"),
            ("t".into(), "take theirs"),
            ("b".into(), "show both"),
            ("Esc".into(), "back"),
        ];
    }
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
            h(Action::EarlierOverlay, "earlier run"),
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
                    h(Action::ContextView, "workout/week"),
                ]
            } else {
                vec![
                    ("1-5".to_string(), "score"),
                    h(Action::CycleVerdict, "verdict"),
                    h(Action::RevealNotes, "reveal notes"),
                    h(Action::Down, "interval"),
                    h(Action::NextUnreviewed, "next"),
                    h(Action::ContextView, "workout/week"),
                ]
            }
        }
    };
    v.push(h(Action::FocusNext, "pane"));
    v.push(h(Action::Help, "help"));
    v.push(h(Action::Quit, "quit"));
    v
}

/// The hints that fit in the footer at a width, in display order. `help` and `quit` are
/// always kept; the others are kept by priority (their order in [`hints`], the most
/// important first), the least important dropped first.
pub fn footer_hints(app: &App, width: usize) -> Vec<(String, &'static str)> {
    let all: Vec<(String, &'static str)> = hints(app)
        .into_iter()
        .map(|(k, w)| (if app.theme.ascii { ascii_key(&k) } else { k }, w))
        .collect();
    let len = |(k, w): &(String, &str)| k.chars().count() + w.chars().count() + 3;
    let must = |w: &str| {
        matches!(
            w,
            "help" | "quit" | "close" | "keep mine" | "take theirs" | "show both" | "back"
        )
    };
    let mut keep: Vec<bool> = all.iter().map(|h| must(h.1)).collect();
    let mut used = 1 + all.iter().filter(|h| must(h.1)).map(len).sum::<usize>();
    for (k, h) in keep.iter_mut().zip(&all) {
        if !*k && used + len(h) <= width {
            *k = true;
            used += len(h);
        }
    }
    all.into_iter()
        .zip(keep)
        .filter_map(|(h, k)| k.then_some(h))
        .collect()
}

/// A key name for ASCII mode: arrows as words (an arrow drawn as `v` or `^` would read
/// as a letter key).
pub fn ascii_key(k: &str) -> String {
    k.replace('↑', "Up")
        .replace('↓', "Down")
        .replace('←', "Left")
        .replace('→', "Right")
}

fn draw_footer(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    buf.set_style(area, t.bar);
    let mut spans = vec![Span::styled(" ", t.bar)];
    for (key, what) in footer_hints(app, area.width as usize) {
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
        Modal::Conflict(c) => draw_conflict(app, c, area, buf),
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

/// The lines of the feedback conflict prompt: what happened, the first line of their
/// text, and the keys.
pub fn conflict_lines(c: &crate::tui::app::FeedbackConflict) -> Vec<(String, bool)> {
    let first = c
        .theirs
        .body
        .lines()
        .find(|l| !l.trim().is_empty())
        .unwrap_or("(empty)");
    let mut out = vec![
        (
            "The feedback was saved elsewhere while you edited it.".to_string(),
            false,
        ),
        (
            "Nothing was saved; your text is still in the editor.".to_string(),
            false,
        ),
        (
            format!(
                "Theirs ({}) begins: {}",
                c.theirs.saved_at.format("%Y-%m-%d %H:%M UTC"),
                printable(first)
            ),
            false,
        ),
        (String::new(), false),
    ];
    for (k, what) in crate::tui::app::CONFLICT_KEYS {
        out.push((format!("{k:>3}  {what}"), true));
    }
    out
}

fn draw_conflict(app: &App, c: &crate::tui::app::FeedbackConflict, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let lines = conflict_lines(c);
    let r = centered(area, 66, lines.len() as u16 + 2);
    Clear.render(r, buf);
    let block = pane_block(app, format!(" {} ", crate::tui::app::CONFLICT_TITLE), true);
    let inner = block.inner(r);
    block.render(r, buf);
    let w = inner.width as usize;
    let lines: Vec<Line> = lines
        .into_iter()
        .map(|(l, key)| Line::styled(shorten_words(&l, w), if key { t.heading } else { t.text }))
        .collect();
    Paragraph::new(lines).render(inner, buf);
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
    // The keys of the feedback conflict prompt are fixed: said at the foot of the help.
    let conflict: Vec<String> = crate::tui::app::CONFLICT_KEYS
        .iter()
        .take(3)
        .map(|(k, what)| format!("{k} {}", what.split(" (").next().unwrap_or(what)))
        .collect();
    let block =
        pane_block(app, " Keys (config [keys] overrides them) ", true).title_bottom(Line::styled(
            format!(" feedback changed elsewhere: {} ", conflict.join(" · ")),
            t.dim,
        ));
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
                let keys = if app.theme.ascii {
                    ascii_key(keys)
                } else {
                    keys.clone()
                };
                Line::from(vec![
                    Span::styled(format!("{keys:>9} "), t.heading),
                    Span::styled(a.description(), t.text),
                ])
            })
            .collect();
        Paragraph::new(lines).render(*c, buf);
    }
}
