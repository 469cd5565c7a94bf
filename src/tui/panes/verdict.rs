//! The verdict pane: the plan's purpose first, then the interval table (the objective facts),
//! the grading cells, the findings; after the reveal, the athlete's notes and the feedback.

use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget, Wrap};

use super::{fit, pad};
use crate::analysis::findings::Severity;
use crate::analysis::kind::SessionKind;
use crate::analysis::review::{IntervalMetrics, Review};
use crate::journal::{ReviewState, Revision, RevisionChange};
use crate::model::units::{format_clock, format_pace, Units};
use crate::roster::printable;
use crate::tui::action::Action;
use crate::tui::app::{App, Focus, OpenSession, Tone};
use crate::tui::theme::Theme;
use crate::tui::ui::pane_block;

/// The score cell of a work interval: `·` unscored, `3` blind, `3→4` revised after the reveal.
pub fn score_cell(state: Option<&ReviewState>, work_number: u32) -> (String, bool) {
    let Some(cell) = state.and_then(|s| s.scores.iter().find(|c| c.interval == work_number)) else {
        return ("·".to_string(), false);
    };
    if cell.current != cell.blind {
        (format!("{}→{}", cell.blind, cell.current), true)
    } else {
        (cell.blind.to_string(), false)
    }
}

/// The verdict cell: `—` unset, `met`, or `met→partly` after a revision.
pub fn verdict_cell(state: Option<&ReviewState>) -> (String, bool) {
    match state.and_then(|s| s.verdict.as_ref()) {
        None => ("—".to_string(), false),
        Some(v) if v.current != v.blind => (format!("{}→{}", v.blind, v.current), true),
        Some(v) => (v.blind.to_string(), false),
    }
}

fn kind_label(kind: &str) -> &str {
    match kind {
        "warmup" => "warm",
        "cooldown" => "cool",
        "recovery" => "rec",
        "work" => "work",
        "steady" => "steady",
        other => other,
    }
}

fn opt<T>(v: Option<T>, f: impl Fn(T) -> String) -> String {
    v.map(f).unwrap_or_else(|| "-".to_string())
}

/// Column layout of the interval table for a width.
struct Cols {
    /// Start time, cadence, HR max.
    mid: bool,
    /// Target and time in target, with this target width.
    target: Option<usize>,
    /// Hill-adjusted pace beside the pace (sessions with altitude).
    hill: bool,
}

impl Cols {
    fn for_width(w: usize, hill_adjusted: bool) -> Cols {
        Cols {
            mid: w >= 62,
            hill: hill_adjusted && w >= 86,
            target: if w >= 110 {
                Some(26)
            } else if w >= 86 {
                Some(16)
            } else {
                None
            },
        }
    }
}

fn header(c: &Cols, units: Units) -> String {
    let mut s = format!("  {:>2} {:<6}", "#", "kind");
    if c.mid {
        s.push_str(&format!("{:>7}", "start"));
    }
    s.push_str(&format!(
        "{:>7}{:>8}",
        "time",
        format!("/{}", units.label())
    ));
    if c.hill {
        s.push_str(&format!("{:>8}", "hill"));
    }
    s.push_str(&format!("{:>w$}", "HR", w = if c.mid { 8 } else { 5 }));
    if c.mid {
        s.push_str(&format!("{:>5}", "cad"));
    }
    if let Some(tw) = c.target {
        s.push_str(&format!(" {:<tw$}{:>5}", "target", "in"));
    }
    s.push_str(&format!(" {:>5}", "score"));
    s
}

fn row_text(m: &IntervalMetrics, c: &Cols, units: Units, score: &str, selected: bool) -> String {
    let short_pace = |v: Option<f64>| {
        opt(v, |p| {
            format_pace(1000.0 / p, units)
                .trim_end_matches(&format!("/{}", units.label()))
                .to_string()
        })
    };
    let pace = short_pace(m.avg_pace_s_per_km);
    let hr = match (m.avg_hr, m.max_hr, c.mid) {
        (Some(a), Some(x), true) => format!("{a:.0}/{x:.0}"),
        (Some(a), _, _) => format!("{a:.0}"),
        _ => "-".to_string(),
    };
    let mark = if selected { "▶" } else { " " };
    let num = match m.work_number {
        Some(n) => n.to_string(),
        None => String::new(),
    };
    let mut s = format!("{mark} {:>2} {:<6}", num, kind_label(&m.kind));
    if c.mid {
        s.push_str(&format!("{:>7}", format_clock(m.start_s)));
    }
    s.push_str(&format!("{:>7}{:>8}", format_clock(m.duration_s), pace));
    if c.hill {
        s.push_str(&format!("{:>8}", short_pace(m.hill_adjusted_pace_s_per_km)));
    }
    s.push_str(&format!("{:>w$}", hr, w = if c.mid { 8 } else { 5 }));
    if c.mid {
        s.push_str(&format!(
            "{:>5}",
            opt(m.avg_cadence_spm, |x| format!("{x:.0}"))
        ));
    }
    if let Some(tw) = c.target {
        let target = m.target.clone().unwrap_or_else(|| "-".to_string());
        let hit = if m.target_on_hill() {
            "hill".to_string()
        } else {
            opt(m.in_target_pct, |p| format!("{p:.0}%"))
        };
        s.push_str(&format!(" {:<tw$}{:>5}", fit(&target, tw), hit));
    }
    if m.kind == "work" {
        s.push_str(&format!(" {score:>5}"));
    }
    s
}

fn severity_style(t: &Theme, s: Severity) -> (&'static str, Style) {
    match s {
        Severity::Info => ("·", t.dim),
        Severity::Note => ("-", t.text),
        Severity::Warning => ("!", t.warn),
        Severity::Caution => ("‼", t.caution),
    }
}

/// Lines of the grading block: scores, verdict, what is missing, the notes state.
fn grading_lines<'a>(app: &App, o: &OpenSession, review: &Review) -> Vec<Line<'a>> {
    let t = &app.theme;
    let k = &app.keymap;
    let state = o.state.as_ref();
    let n = review.work().count();
    let scored = state.map(|s| s.scores.len()).unwrap_or(0);
    let (v, v_rev) = verdict_cell(state);
    let scores = if n == 0 {
        "no intervals to score".to_string()
    } else {
        format!("scores {scored}/{n}")
    };
    let mut lines = vec![Line::from(vec![
        Span::styled("Grading  ", t.heading),
        Span::styled(scores, t.text),
        Span::styled("  ·  purpose verdict ", t.text),
        Span::styled(v, if v_rev { t.revision } else { t.heading }),
        Span::styled(format!(" ({})", k.first(Action::CycleVerdict)), t.dim),
    ])];
    if o.revealed() {
        let revs = o.revisions.len();
        let extra = if revs > 0 {
            format!(" · {revs} revision(s) kept beside the blind grades")
        } else {
            String::new()
        };
        lines.push(Line::styled(format!("Notes revealed{extra}"), t.good));
    } else {
        match state {
            Some(s) if !s.missing.is_empty() => {
                lines.push(Line::styled(format!("Notes hidden: {}", s.missing), t.dim))
            }
            Some(_) => lines.push(Line::styled(
                format!(
                    "Blind grading complete: {} reveals the notes",
                    k.first(Action::RevealNotes)
                ),
                t.good,
            )),
            None => lines.push(Line::styled(
                "Notes hidden until grading is complete",
                t.dim,
            )),
        }
    }
    if let Some(m) = app.message.as_ref().filter(|m| m.tone == Tone::Warn) {
        lines.push(Line::styled(printable(&m.text), t.warn));
    }
    lines
}

/// `text` cut into rows of at most `w` characters, at most `max_rows` of them (the last one
/// marked with `…` when the text goes on).
fn rows_of(text: &str, w: usize, max_rows: usize) -> Vec<String> {
    let chars: Vec<char> = text.chars().collect();
    let mut rows = Vec::new();
    let mut at = 0;
    while at < chars.len() && rows.len() < max_rows && w > 0 {
        let rest: String = chars.iter().skip(at).collect();
        if rows.len() + 1 == max_rows {
            rows.push(fit(&rest, w));
            break;
        }
        rows.push(chars.iter().skip(at).take(w).collect());
        at += w;
    }
    rows
}

/// `words` joined by two spaces and wrapped into rows of at most `w` characters, the first
/// row after `head`, at most `max_rows` rows (the last one ending in `…` when words are
/// left over). Words are never cut, except one wider than a row.
fn wrap_words(head: &str, words: &[String], w: usize, max_rows: usize) -> Vec<String> {
    let mut rows: Vec<String> = Vec::new();
    let mut cur = head.to_string();
    let width = |s: &str| s.chars().count();
    for word in words {
        let sep = if width(&cur) == 0 || cur.ends_with(' ') {
            ""
        } else {
            "  "
        };
        if width(&cur) + sep.len() + width(word) <= w || width(&cur) == 0 {
            cur.push_str(sep);
            cur.push_str(word);
            continue;
        }
        if rows.len() + 1 == max_rows {
            // No room for the rest: mark the cut.
            cur.push_str("  …");
            rows.push(fit(&cur, w));
            return rows;
        }
        rows.push(fit(&cur, w));
        cur = format!("  {word}");
    }
    if !cur.is_empty() && rows.len() < max_rows {
        rows.push(fit(&cur, w));
    }
    rows
}

/// The splits block of a race or time trial: the finish time, the distance and the halves on
/// one row, then the splits in the athlete's units (`1 3:08  2 3:07 …`), wrapped into at
/// most `max_rows - 1` rows. Empty when `max_rows` is 0 or there are no splits.
fn splits_lines<'a>(
    app: &App,
    review: &Review,
    units: Units,
    w: usize,
    max_rows: usize,
) -> Vec<Line<'a>> {
    let t = &app.theme;
    let Some(sp) = review.splits.as_ref().filter(|s| !s.splits.is_empty()) else {
        return Vec::new();
    };
    if max_rows == 0 || w == 0 {
        return Vec::new();
    }
    let units = Units::parse(&sp.unit).unwrap_or(units);
    let unit_m = units.metres();
    let halves = match (sp.first_half_s, sp.second_half_s) {
        (Some(a), Some(b)) => format!(
            " · first half {}, second half {}",
            format_clock(a),
            format_clock(b)
        ),
        _ => String::new(),
    };
    let mut lines = vec![Line::from(vec![
        Span::styled("Finish ", t.heading),
        Span::styled(
            fit(
                &format!(
                    "{} · {}{halves}",
                    format_clock(sp.time_s),
                    crate::model::units::format_distance(sp.distance_m, units)
                ),
                w.saturating_sub(7),
            ),
            t.text,
        ),
    ])];
    if max_rows < 2 {
        return lines;
    }
    let words: Vec<String> = sp
        .splits
        .iter()
        .map(|x| {
            if x.distance_m >= unit_m * 0.999 {
                format!("{} {}", x.number, format_clock(x.time_s))
            } else {
                format!(
                    "{:.2} {} {}",
                    x.distance_m / unit_m,
                    units.label(),
                    format_clock(x.time_s)
                )
            }
        })
        .collect();
    let head = format!("Splits/{} ", units.label());
    for (i, row) in wrap_words(&head, &words, w, max_rows - 1)
        .into_iter()
        .enumerate()
    {
        if i == 0 {
            let rest: String = row.chars().skip(head.chars().count()).collect();
            lines.push(Line::from(vec![
                Span::styled(head.clone(), t.heading),
                Span::styled(rest, t.text),
            ]));
        } else {
            lines.push(Line::styled(row, t.text));
        }
    }
    lines
}

/// Draw the verdict pane.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let Some(o) = &app.open else { return };
    let block = pane_block(app, " Verdict ", app.focus == Focus::Verdict);
    let inner = block.inner(area);
    block.render(area, buf);
    if inner.height == 0 {
        return;
    }
    let Some(review) = o.review.as_ref() else {
        let text = match &o.load_error {
            Some(e) => Line::styled(e.clone(), t.warn),
            None => Line::styled("analysing this session…", t.dim),
        };
        Paragraph::new(text).render(inner, buf);
        return;
    };
    let units = app
        .athlete(o.athlete)
        .map(|a| a.profile.units)
        .unwrap_or_default();
    let w = inner.width as usize;
    let cols = Cols::for_width(w, review.hill_adjusted);
    let mut y = inner.y;
    let bottom = inner.y + inner.height;
    let mut put = |line: Line, y: &mut u16| {
        if *y < bottom {
            Paragraph::new(line).render(Rect::new(inner.x, *y, inner.width, 1), buf);
            *y += 1;
        }
    };
    // Profile problems of the athlete first: numbers below may be missing because of them.
    let problems = app
        .athlete(o.athlete)
        .map(|a| a.profile_problems.as_slice())
        .unwrap_or_default();
    if let Some(first) = problems.first() {
        let more = match problems.len() {
            1 => String::new(),
            n => format!(" (+{} more)", n - 1),
        };
        for row in rows_of(&printable(&format!("! athlete.toml {first}{more}")), w, 2) {
            put(Line::styled(row, t.warn), &mut y);
        }
    }
    // Purpose first.
    let date = review.day();
    let plan_not_used = review
        .interval_notes
        .iter()
        .find(|n| n.starts_with(crate::workspace::PLAN_NOT_USED));
    let purpose = match &review.plan {
        Some(p) if !p.purpose.is_empty() => Line::from(vec![
            Span::styled("Purpose ", t.heading),
            Span::styled(fit(&printable(&p.purpose), w.saturating_sub(8)), t.text),
        ]),
        Some(p) => Line::from(vec![
            Span::styled("Plan ", t.heading),
            Span::styled(printable(&p.title), t.text),
        ]),
        None => match plan_not_used {
            Some(note) => {
                let mut rows = rows_of(&printable(note), w, 2);
                let last = rows.pop().unwrap_or_default();
                for row in rows {
                    put(Line::styled(row, t.warn), &mut y);
                }
                Line::styled(last, t.warn)
            }
            None if !review.running => Line::styled("No plan", t.dim),
            None => Line::styled("No plan: intervals found from the speed", t.dim),
        },
    };
    put(purpose, &mut y);
    let dist = review
        .session
        .distance_m
        .map(|d| crate::model::units::format_distance(d, units))
        .unwrap_or_default();
    let summary = if review.running {
        format!(
            "{date} · {} · {dist} · decoupling {} · load {}",
            format_clock(review.session.duration_s),
            opt(review.decoupling_pct, |d| format!("{d:.1}%")),
            review.load_text()
        )
    } else {
        format!(
            "{date} · {} · {} · {dist} · HR {} · load {}",
            crate::model::Sport::from_name(&review.session.sport).title(),
            format_clock(review.session.duration_s),
            opt(review.avg_hr, |h| format!("{h:.0}")),
            review.load_text()
        )
    };
    put(Line::styled(fit(&summary, w), t.dim), &mut y);
    if !review.running {
        put(
            Line::styled(
                fit(
                    "Not a run: no running analysis, no intervals to score; \
                     the purpose verdict is the grade",
                    w,
                ),
                t.text,
            ),
            &mut y,
        );
    }
    // Lower blocks are laid out from what is left: grading (fixed), then the table, then
    // findings or notes + feedback.
    let grading = grading_lines(app, o, review);
    let editing = o.feedback.as_ref().is_some_and(|e| e.editing);
    // A race or time trial: the finish time, the halves and the splits, before the table,
    // in the rows the table, grading and findings leave (at most four rows of splits; the
    // finish row always).
    if review.kind == SessionKind::Race {
        let table_min = if editing || review.intervals.is_empty() {
            0
        } else {
            2
        };
        let lower_min = if o.revealed() { 4 } else { 2 };
        let room = (bottom.saturating_sub(y) as usize)
            .saturating_sub(grading.len() + lower_min + table_min)
            // The finish time at least, even in a short pane (before the findings).
            .clamp(1, 5);
        for l in splits_lines(app, review, units, w, room) {
            put(l, &mut y);
        }
    }
    let rows_left = bottom.saturating_sub(y) as usize;
    let grading_h = grading.len();
    let lower_min = if o.revealed() { 4 } else { 2 };
    let table_rows_all = review.intervals.len() + 1;
    let table_h = if editing || review.intervals.is_empty() {
        0
    } else {
        table_rows_all.min(rows_left.saturating_sub(grading_h + lower_min).max(2))
    };
    // Table.
    if table_h > 0 {
        put(Line::styled(pad(&header(&cols, units), w), t.dim), &mut y);
        let body = table_h.saturating_sub(1);
        let selected_idx = review
            .intervals
            .iter()
            .position(|m| m.work_number == Some(o.selected_work + 1));
        let first = match selected_idx {
            Some(s) if s >= body => (s + 1 - body).min(review.intervals.len().saturating_sub(body)),
            _ => 0,
        };
        for (i, m) in review.intervals.iter().enumerate().skip(first).take(body) {
            let selected = Some(i) == selected_idx;
            let (score, revised) = m
                .work_number
                .map(|n| score_cell(o.state.as_ref(), n as u32))
                .unwrap_or_default();
            let text = row_text(m, &cols, units, &score, selected);
            let style = if selected && app.focus == Focus::Verdict {
                t.selected
            } else if m.kind == "work" {
                t.text
            } else {
                t.dim
            };
            let line = if revised && !(selected && app.focus == Focus::Verdict) {
                // Colour the score cell apart.
                let cut = text.chars().count().saturating_sub(score.chars().count());
                let head: String = text.chars().take(cut).collect();
                Line::from(vec![
                    Span::styled(head, style),
                    Span::styled(score.clone(), t.revision),
                ])
            } else {
                Line::styled(pad(&text, w), style)
            };
            put(line, &mut y);
        }
    }
    // Grading.
    for l in grading {
        put(l, &mut y);
    }
    // Lower: notes and feedback after the reveal, findings before.
    let lower = Rect::new(inner.x, y, inner.width, bottom.saturating_sub(y));
    if lower.height == 0 {
        return;
    }
    if o.revealed() {
        render_revealed(app, o, lower, buf);
    } else {
        render_findings(app, review, o.load_spike.as_ref(), lower, buf);
    }
}

fn render_findings(
    app: &App,
    review: &Review,
    load_spike: Option<&crate::analysis::findings::Finding>,
    area: Rect,
    buf: &mut Buffer,
) {
    let t = &app.theme;
    let mut lines = vec![Line::styled("Findings", t.heading)];
    // The load-spike caution needs the athlete's other sessions, so it is not in the
    // per-file review; it leads, as cautions do.
    for f in load_spike.into_iter().chain(&review.findings) {
        let (mark, style) = severity_style(t, f.severity);
        lines.push(Line::from(vec![
            Span::styled(format!("{mark} "), style),
            Span::styled(
                printable(&f.text),
                if f.severity >= Severity::Warning {
                    style
                } else {
                    t.text
                },
            ),
        ]));
    }
    if review.findings.is_empty() && load_spike.is_none() {
        lines.push(Line::styled("nothing to remark", t.dim));
    }
    Paragraph::new(lines)
        .wrap(Wrap { trim: false })
        .render(area, buf);
}

fn render_revealed(app: &App, o: &OpenSession, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let k = &app.keymap;
    let editing = o.feedback.as_ref().is_some_and(|e| e.editing);
    let mut y = area.y;
    let bottom = area.y + area.height;
    if !editing {
        let note_lines: Vec<String> = match &o.note {
            Some(Some(text)) => text.lines().map(printable).collect(),
            Some(None) => vec!["(no notes for this session)".to_string()],
            None => vec![],
        };
        let room = (area.height as usize / 3).max(1);
        let mut lines = vec![Line::from(vec![
            Span::styled("Athlete's notes ", t.heading),
            Span::styled(format!("({} for all)", k.first(Action::RevealNotes)), t.dim),
        ])];
        for l in note_lines.iter().take(room) {
            lines.push(Line::styled(l.clone(), t.text));
        }
        let h = (lines.len() as u16).min(bottom.saturating_sub(y));
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .render(Rect::new(area.x, y, area.width, h), buf);
        y += h;
    }
    if y >= bottom {
        return;
    }
    let Some(ed) = &o.feedback else { return };
    let state = if ed.editing {
        "editing · C-s saves · Esc stops"
    } else if ed.dirty {
        "unsaved"
    } else if ed.saved {
        "saved"
    } else {
        "draft"
    };
    let head = Line::from(vec![
        Span::styled("Feedback ", t.heading),
        Span::styled(format!("({state}) "), if ed.dirty { t.warn } else { t.dim }),
        Span::styled(
            format!(
                "{} edit · {} $EDITOR · {} copy · {} file",
                k.first(Action::EditFeedback),
                k.first(Action::ExternalEditor),
                k.first(Action::CopyFeedback),
                k.first(Action::ExportFeedback)
            ),
            t.dim,
        ),
    ]);
    Paragraph::new(head).render(Rect::new(area.x, y, area.width, 1), buf);
    y += 1;
    let room = bottom.saturating_sub(y) as usize;
    if room == 0 {
        return;
    }
    let rect = Rect::new(area.x, y, area.width, room as u16);
    if !ed.editing {
        // Read-only: word-wrapped, so a draft's long paragraphs are read whole.
        let lines: Vec<Line> = ed
            .lines
            .iter()
            .map(|l| Line::styled(printable(l), t.text))
            .collect();
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .render(rect, buf);
        return;
    }
    // Editing: each line goes on over as many rows as it needs, cut at the width so the
    // cursor maps to one row and column; nothing is cut off.
    let w = (area.width as usize).max(1);
    let mut rows: Vec<(usize, usize, Vec<char>)> = Vec::new();
    let mut cursor_row = 0;
    for (i, line) in ed.lines.iter().enumerate() {
        // One stand-in per unsafe character: the cursor column stays right.
        let chars: Vec<char> = printable(line).chars().collect();
        let first_row = rows.len();
        let mut start = 0;
        loop {
            let end = (start + w).min(chars.len());
            rows.push((i, start, chars.get(start..end).unwrap_or_default().to_vec()));
            start = end;
            if start >= chars.len() {
                break;
            }
        }
        // A cursor after a line that fills its last row exactly sits on a row of its own.
        if i == ed.row
            && !chars.is_empty()
            && chars.len().is_multiple_of(w)
            && ed.col >= chars.len()
        {
            rows.push((i, chars.len(), Vec::new()));
        }
        if i == ed.row {
            cursor_row = (first_row + ed.col / w).min(rows.len().saturating_sub(1));
        }
    }
    let first = if cursor_row >= room {
        cursor_row + 1 - room
    } else {
        0
    };
    for (k, (i, start, chars)) in rows.iter().enumerate().skip(first).take(room) {
        let l = if k == cursor_row && *i == ed.row {
            let col = ed.col.saturating_sub(*start).min(chars.len());
            let before: String = chars.iter().take(col).collect();
            let at: String = chars
                .get(col)
                .map(|c| c.to_string())
                .unwrap_or_else(|| " ".to_string());
            let after: String = chars.iter().skip(col + 1).collect();
            Line::from(vec![
                Span::styled(before, t.text),
                Span::styled(at, t.selected),
                Span::styled(after, t.text),
            ])
        } else {
            Line::styled(chars.iter().collect::<String>(), t.text)
        };
        Paragraph::new(l).render(Rect::new(area.x, y, area.width, 1), buf);
        y += 1;
    }
}

/// The revisions in words, e.g. `interval 2: 3→4`.
pub fn revision_words(r: &Revision) -> String {
    match &r.change {
        RevisionChange::Score { interval, old, new } => format!("interval {interval}: {old}→{new}"),
        RevisionChange::Verdict { old, new } => format!("verdict: {old}→{new}"),
    }
}
