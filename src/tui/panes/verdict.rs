//! The verdict pane: the plan's purpose first, then the interval table (the objective facts),
//! the grading cells, the findings; after the reveal, the athlete's notes and the feedback.
//!
//! All of it is one document ([`document`]), every line wrapped at the pane's width, shown
//! from the row [`super::verdict_state::VerdictView`] keeps; nothing is cut off, so what
//! the analysis says is always reachable by scrolling.

use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

use super::context_view::{self, Lower};
use super::verdict_state::Extent;
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

/// One column of the interval table: its heading and, for each variant (widest first), the
/// cell of every row. The table keeps as many columns as fit by priority, each at its
/// shortest variant, then widens them in priority order with the room left.
struct Col {
    head: &'static str,
    /// Left-aligned (text) rather than right-aligned (numbers).
    left: bool,
    /// Variants, widest first; each holds one cell per interval.
    variants: Vec<Vec<String>>,
    /// Place in the row, left to right.
    order: u8,
}

impl Col {
    fn width(&self, v: usize) -> usize {
        let cells = self.variants.get(v).map(Vec::as_slice).unwrap_or_default();
        cells
            .iter()
            .map(|c| c.chars().count())
            .chain([self.head.chars().count()])
            .max()
            .unwrap_or(0)
    }
    fn narrowest(&self) -> usize {
        self.variants.len().saturating_sub(1)
    }
}

/// Width of `# kind` with the selection mark: `▶ 12 steady`.
const LEAD: usize = 11;

/// The interval table laid out for a width: which columns, which variant of each.
struct Table {
    /// (column, variant), in row order.
    cols: Vec<(Col, usize)>,
    /// Spaces between columns.
    gap: usize,
}

/// `easy (5:10-5:20/km)` → the name `easy` and the band `5:10-5:20/km`.
fn target_parts(t: &str) -> (String, Option<String>) {
    match t.split_once(" (") {
        Some((name, band)) if band.ends_with(')') => (
            name.to_string(),
            Some(band.trim_end_matches(')').to_string()),
        ),
        _ => (t.to_string(), None),
    }
}

impl Table {
    fn new(intervals: &[IntervalMetrics], units: Units, hill: bool, w: usize) -> Table {
        let short_pace = |v: Option<f64>| {
            opt(v, |p| {
                format_pace(1000.0 / p, units)
                    .trim_end_matches(&format!("/{}", units.label()))
                    .to_string()
            })
        };
        let cells = |f: &dyn Fn(&IntervalMetrics) -> String| -> Vec<String> {
            intervals.iter().map(f).collect()
        };
        let any_target = intervals.iter().any(|m| m.target.is_some());
        let any_work = intervals.iter().any(|m| m.kind == "work");
        // Priority order: what the coach needs first comes first.
        let mut all = vec![
            Col {
                head: "time",
                left: false,
                variants: vec![cells(&|m| format_clock(m.duration_s))],
                order: 1,
            },
            Col {
                head: units_head(units),
                left: false,
                variants: vec![cells(&|m| short_pace(m.avg_pace_s_per_km))],
                order: 2,
            },
            Col {
                head: "HR",
                left: false,
                variants: vec![
                    cells(&|m| match (m.avg_hr, m.max_hr) {
                        (Some(a), Some(x)) => format!("{a:.0}/{x:.0}"),
                        (Some(a), None) => format!("{a:.0}"),
                        _ => "-".to_string(),
                    }),
                    cells(&|m| opt(m.avg_hr, |a| format!("{a:.0}"))),
                ],
                order: 4,
            },
        ];
        if any_work {
            // Filled per row when drawn (the score lives in the journal state).
            all.push(Col {
                head: "score",
                left: false,
                variants: vec![cells(&|_| "3→4".to_string())],
                order: 9,
            });
        }
        if any_target {
            let target = |m: &IntervalMetrics| m.target.clone().unwrap_or_else(|| "-".into());
            all.push(Col {
                head: "target",
                left: true,
                variants: vec![
                    cells(&|m| printable(&target(m))),
                    cells(&|m| {
                        let (name, band) = target_parts(&target(m));
                        printable(&band.unwrap_or(name))
                    }),
                    cells(&|m| printable(&target_parts(&target(m)).0)),
                ],
                order: 7,
            });
            all.push(Col {
                head: "in",
                left: false,
                variants: vec![cells(&|m| {
                    if m.target_on_hill() {
                        "hill".to_string()
                    } else {
                        opt(m.in_target_pct, |p| format!("{p:.0}%"))
                    }
                })],
                order: 8,
            });
        }
        if hill {
            all.push(Col {
                head: "hill",
                left: false,
                variants: vec![cells(&|m| short_pace(m.hill_adjusted_pace_s_per_km))],
                order: 3,
            });
        }
        all.push(Col {
            head: "start",
            left: false,
            variants: vec![cells(&|m| format_clock(m.start_s))],
            order: 0,
        });
        all.push(Col {
            head: "cad",
            left: false,
            variants: vec![cells(&|m| opt(m.avg_cadence_spm, |x| format!("{x:.0}")))],
            order: 5,
        });
        // Keep by priority at the narrowest variant, skipping (not stopping at) what does
        // not fit, so no room is left while a column that fits is dropped.
        let mut used = LEAD;
        let mut kept: Vec<(Col, usize)> = Vec::new();
        for c in all {
            let v = c.narrowest();
            let cw = c.width(v) + 1;
            if used + cw <= w {
                used += cw;
                kept.push((c, v));
            }
        }
        // Widen in priority order with the room left.
        for (c, v) in kept.iter_mut() {
            while *v > 0 {
                let extra = c.width(*v - 1) - c.width(*v).min(c.width(*v - 1));
                if used + extra > w {
                    break;
                }
                used += extra;
                *v -= 1;
            }
        }
        // Two spaces between columns when they fit.
        let gap = if used + kept.len() <= w { 2 } else { 1 };
        kept.sort_by_key(|(c, _)| c.order);
        Table { cols: kept, gap }
    }

    fn has(&self, head: &str) -> bool {
        self.cols.iter().any(|(c, _)| c.head == head)
    }

    fn cell(&self, text: &str, c: &Col, v: usize) -> String {
        let w = c.width(v);
        let sp = " ".repeat(self.gap);
        if c.left {
            format!("{sp}{text:<w$}")
        } else {
            format!("{sp}{text:>w$}")
        }
    }

    fn header(&self) -> String {
        let mut s = format!("  {:>2} {:<6}", "#", "kind");
        for (c, v) in &self.cols {
            s.push_str(&self.cell(c.head, c, *v));
        }
        s
    }

    /// The text of row `i` (interval `m`, its score cell `score`).
    fn row(&self, i: usize, m: &IntervalMetrics, score: &str, selected: bool) -> String {
        let mark = if selected { "▶" } else { " " };
        let num = m.work_number.map(|n| n.to_string()).unwrap_or_default();
        let mut s = format!("{mark} {num:>2} {:<6}", fit(kind_label(&m.kind), 6));
        for (c, v) in &self.cols {
            let text = if c.head == "score" {
                if m.kind == "work" {
                    score.to_string()
                } else {
                    String::new()
                }
            } else {
                c.variants
                    .get(*v)
                    .and_then(|cells| cells.get(i))
                    .cloned()
                    .unwrap_or_default()
            };
            s.push_str(&self.cell(&text, c, *v));
        }
        s.trim_end().to_string()
    }
}

fn units_head(units: Units) -> &'static str {
    match units {
        Units::Km => "/km",
        Units::Mi => "/mi",
    }
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
fn grading_lines(app: &App, o: &OpenSession, review: &Review) -> Vec<Line<'static>> {
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

/// `words` joined by two spaces and wrapped into rows of at most `w` characters, the first
/// row after `head`. Words are never cut, except one wider than a row.
fn wrap_words(head: &str, words: &[String], w: usize) -> Vec<String> {
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
        rows.push(cur);
        cur = format!("  {word}");
    }
    if !cur.is_empty() {
        rows.push(cur);
    }
    rows
}

/// The splits block of a race or time trial: the finish time, the distance and the halves on
/// one line, then the splits in the athlete's units (`1 3:08  2 3:07 …`), wrapped at `w`.
/// Empty when there are no splits.
fn splits_lines(app: &App, review: &Review, units: Units, w: usize) -> Vec<Line<'static>> {
    let t = &app.theme;
    let Some(sp) = review.splits.as_ref().filter(|s| !s.splits.is_empty()) else {
        return Vec::new();
    };
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
    let mut lines = wrap_line(
        Line::from(vec![
            Span::styled("Finish ", t.heading),
            Span::styled(
                format!(
                    "{} · {}{halves}",
                    format_clock(sp.time_s),
                    crate::model::units::format_distance(sp.distance_m, units)
                ),
                t.text,
            ),
        ]),
        w,
        2,
    );
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
    for (i, row) in wrap_words(&head, &words, w).into_iter().enumerate() {
        if i == 0 {
            let rest: String = row.chars().skip(head.chars().count()).collect();
            lines.push(Line::from(vec![
                Span::styled(head.clone(), t.heading),
                Span::styled(rest, t.text),
            ]));
        } else {
            lines.extend(wrap_line(Line::styled(row, t.text), w, 2));
        }
    }
    lines
}

/// `line` wrapped at word boundaries into rows of at most `w` characters (a word wider than
/// a row is cut across rows); rows after the first start with `indent` spaces. Styles are
/// kept per character.
pub fn wrap_line(line: Line<'static>, w: usize, indent: usize) -> Vec<Line<'static>> {
    let base = line.style;
    let chars: Vec<(char, Style)> = line
        .spans
        .iter()
        .flat_map(|s| {
            let st = base.patch(s.style);
            s.content.chars().map(move |c| (c, st))
        })
        .collect();
    let w = w.max(1);
    let indent = if indent < w / 2 { indent } else { 0 };
    let mut rows: Vec<Line<'static>> = Vec::new();
    let mut at = 0;
    loop {
        let room = if rows.is_empty() { w } else { w - indent };
        let rest = chars.get(at..).unwrap_or_default();
        let take = if rest.len() <= room {
            rest.len()
        } else {
            // Break after the last space that fits, else cut the word.
            match rest
                .get(..=room)
                .and_then(|r| r.iter().rposition(|(c, _)| *c == ' '))
            {
                Some(p) if p > 0 => p,
                _ => room,
            }
        };
        let piece = rest.get(..take).unwrap_or_default();
        let mut spans: Vec<Span<'static>> = Vec::new();
        if !rows.is_empty() && indent > 0 {
            spans.push(Span::raw(" ".repeat(indent)));
        }
        let mut run = String::new();
        let mut style = piece.first().map(|(_, s)| *s).unwrap_or(base);
        for (c, st) in piece {
            if *st != style && !run.is_empty() {
                spans.push(Span::styled(std::mem::take(&mut run), style));
            }
            style = *st;
            run.push(*c);
        }
        if !run.is_empty() {
            spans.push(Span::styled(run, style));
        }
        rows.push(Line::from(spans));
        at += take;
        // The space a row was broken at is not carried to the next row.
        if take < rest.len() && chars.get(at).is_some_and(|(c, _)| *c == ' ') {
            at += 1;
        }
        if at >= chars.len() {
            break;
        }
    }
    rows
}

/// The verdict pane's content laid out for a width: every row it would show, top to
/// bottom, and the row the coach works on (the selected interval or the editor's cursor).
pub struct Document {
    /// One entry per screen row.
    pub lines: Vec<Line<'static>>,
    /// The row to keep in view.
    pub focus: Option<usize>,
    /// The row of the athlete's notes (after the reveal).
    pub notes: Option<usize>,
    /// The row of the lower part's heading (findings, same workout or week).
    pub lower: Option<usize>,
}

impl Document {
    fn push(&mut self, line: Line<'static>, w: usize) {
        self.lines.extend(wrap_line(line, w, 0));
    }
    fn push_hanging(&mut self, line: Line<'static>, w: usize, indent: usize) {
        self.lines.extend(wrap_line(line, w, indent));
    }
    /// The extent for a pane `height` rows high.
    pub fn extent(&self, height: usize) -> Extent {
        Extent {
            total: self.lines.len(),
            height,
            focus: self.focus,
        }
    }
}

/// Inner width and height of the verdict pane drawn in `area` (inside its border).
pub fn inner_size(area: Rect) -> (usize, usize) {
    (
        area.width.saturating_sub(2) as usize,
        area.height.saturating_sub(2) as usize,
    )
}

/// The document of the open session for an inner width `w`.
pub fn document(app: &App, w: usize) -> Document {
    let mut d = Document {
        lines: Vec::new(),
        focus: None,
        notes: None,
        lower: None,
    };
    let t = &app.theme;
    let w = w.max(1);
    let Some(o) = &app.open else { return d };
    let Some(review) = o.review.as_ref() else {
        match &o.load_error {
            Some(e) => {
                d.push(Line::styled("The file cannot be read:", t.heading), w);
                d.push(Line::styled(printable(e), t.warn), w);
                d.push(Line::raw(""), w);
                let verdict = o
                    .state
                    .as_ref()
                    .and_then(|s| s.verdict.as_ref())
                    .map(|v| v.current.as_str());
                let next = match (o.revealed(), verdict) {
                    (true, Some(v)) => format!(
                        "Closed with the purpose verdict alone ({v}); {} shows the notes.",
                        app.keymap.first(crate::tui::action::Action::RevealNotes)
                    ),
                    (false, Some(v)) => format!(
                        "Purpose verdict {v}; {} reads the notes.",
                        app.keymap.first(crate::tui::action::Action::RevealNotes)
                    ),
                    _ => format!(
                        "{} closes this session with the purpose verdict alone (it records \
                         that you saw the problem); then {} reads the notes.",
                        app.keymap.first(crate::tui::action::Action::CycleVerdict),
                        app.keymap.first(crate::tui::action::Action::RevealNotes)
                    ),
                };
                d.push(Line::styled(next, t.text), w);
            }
            None => d.push(Line::styled("analysing this session…", t.dim), w),
        }
        return d;
    };
    let units = app
        .athlete(o.athlete)
        .map(|a| a.profile.units)
        .unwrap_or_default();
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
        d.push(
            Line::styled(printable(&format!("! athlete.toml {first}{more}")), t.warn),
            w,
        );
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
            Span::styled(printable(&p.purpose), t.text),
        ]),
        Some(p) => Line::from(vec![
            Span::styled("Plan ", t.heading),
            Span::styled(printable(&p.title), t.text),
        ]),
        None => match plan_not_used {
            Some(note) => Line::styled(printable(note), t.warn),
            None if !review.running => Line::styled("No plan", t.dim),
            None => Line::styled("No plan: intervals found from the speed", t.dim),
        },
    };
    d.push(purpose, w);
    let dist = review
        .session
        .distance_m
        .map(|x| crate::model::units::format_distance(x, units))
        .unwrap_or_default();
    let summary = if review.running {
        format!(
            "{date} · {} · {dist} · decoupling {} · load {}",
            format_clock(review.session.duration_s),
            opt(review.decoupling_pct, |x| format!("{x:.1}%")),
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
    d.push(Line::styled(summary, t.dim), w);
    if !review.running {
        d.push(
            Line::styled(
                "Not a run: no running analysis, no intervals to score; \
                 the purpose verdict is the grade",
                t.text,
            ),
            w,
        );
    }
    let editing = o.feedback.as_ref().is_some_and(|e| e.editing);
    // A race or time trial: the finish time, the halves and the splits, before the table.
    if review.kind == SessionKind::Race {
        d.lines.extend(splits_lines(app, review, units, w));
    }
    // The table (left out while the feedback is edited, to give the editor the room).
    if !editing && !review.intervals.is_empty() {
        let table = Table::new(&review.intervals, units, review.hill_adjusted, w);
        d.lines.push(Line::styled(pad(&table.header(), w), t.dim));
        let selected_idx = review
            .intervals
            .iter()
            .position(|m| m.work_number == Some(o.selected_work + 1));
        for (i, m) in review.intervals.iter().enumerate() {
            let selected = Some(i) == selected_idx;
            let (score, revised) = m
                .work_number
                .map(|n| score_cell(o.state.as_ref(), n as u32))
                .unwrap_or_default();
            let text = table.row(i, m, &score, selected);
            let style = if selected && app.focus == Focus::Verdict {
                t.selected
            } else if m.kind == "work" {
                t.text
            } else {
                t.dim
            };
            if selected {
                d.focus = Some(d.lines.len());
            }
            let line =
                if revised && table.has("score") && !(selected && app.focus == Focus::Verdict) {
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
            d.lines.push(line);
        }
    }
    for l in grading_lines(app, o, review) {
        d.push(l, w);
    }
    if !editing {
        // The lower part: the findings, or the session in its context.
        d.lower = Some(d.lines.len());
        match context_view::view_lines(t, &o.context, units, w) {
            None => findings_lines(&mut d, app, review, o.load_spike.as_ref(), w),
            Some(lines) => {
                d.push(context_view::heading(t, &app.keymap, o.context.lower), w);
                for l in lines {
                    d.push_hanging(l, w, 2);
                }
            }
        }
    }
    if o.revealed() {
        revealed_lines(&mut d, app, o, w);
    }
    d
}

/// Draw the verdict pane: the part of its document the scroll shows, and the scroll
/// position in the bottom border when the document is longer than the pane.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let Some(o) = &app.open else { return };
    let (w, h) = inner_size(area);
    let doc = document(app, w);
    let e = doc.extent(h);
    let top = o.verdict.top(e);
    let title = match o.context.lower {
        Lower::Findings => " Verdict ".to_string(),
        other => format!(" Verdict · {} ", other.title().to_lowercase()),
    };
    let mut block = pane_block(app, title, app.focus == Focus::Verdict);
    if e.total > h && h > 0 {
        let last = (top + h).min(e.total);
        block = block.title_bottom(
            Line::styled(format!(" {}-{}/{} ", top + 1, last, e.total), t.dim).right_aligned(),
        );
    }
    let inner = block.inner(area);
    block.render(area, buf);
    for (row, line) in doc.lines.into_iter().skip(top).take(h).enumerate() {
        let y = inner.y + row as u16;
        Paragraph::new(line).render(Rect::new(inner.x, y, inner.width, 1), buf);
    }
}

fn findings_lines(
    d: &mut Document,
    app: &App,
    review: &Review,
    load_spike: Option<&crate::analysis::findings::Finding>,
    w: usize,
) {
    let t = &app.theme;
    d.push(context_view::heading(t, &app.keymap, Lower::Findings), w);
    // The load-spike caution needs the athlete's other sessions, so it is not in the
    // per-file review; it leads, as cautions do.
    for f in load_spike.into_iter().chain(&review.findings) {
        let (mark, style) = severity_style(t, f.severity);
        d.push_hanging(
            Line::from(vec![
                Span::styled(format!("{mark} "), style),
                Span::styled(
                    printable(&f.text),
                    if f.severity >= Severity::Warning {
                        style
                    } else {
                        t.text
                    },
                ),
            ]),
            w,
            2,
        );
    }
    if review.findings.is_empty() && load_spike.is_none() {
        d.push(Line::styled("nothing to remark", t.dim), w);
    }
}

fn revealed_lines(d: &mut Document, app: &App, o: &OpenSession, w: usize) {
    let t = &app.theme;
    let k = &app.keymap;
    let editing = o.feedback.as_ref().is_some_and(|e| e.editing);
    if !editing {
        d.notes = Some(d.lines.len());
        d.push(
            Line::from(vec![
                Span::styled("Athlete's notes ", t.heading),
                Span::styled(format!("({} for all)", k.first(Action::RevealNotes)), t.dim),
            ]),
            w,
        );
        match &o.note {
            Some(Some(text)) => {
                for l in text.lines() {
                    d.push(Line::styled(printable(l), t.text), w);
                }
            }
            Some(None) => d.push(Line::styled("(no notes for this session)", t.dim), w),
            None => {}
        }
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
    d.push(
        Line::from(vec![
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
        ]),
        w,
    );
    if !ed.editing {
        // Read-only: word-wrapped, so a draft's long paragraphs are read whole.
        for l in &ed.lines {
            d.push(Line::styled(printable(l), t.text), w);
        }
        return;
    }
    // Editing: each line goes on over as many rows as it needs, cut at the width so the
    // cursor maps to one row and column; nothing is cut off.
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
    let base = d.lines.len();
    d.focus = Some(base + cursor_row);
    for (n, (i, start, chars)) in rows.iter().enumerate() {
        let l = if n == cursor_row && *i == ed.row {
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
        d.lines.push(l);
    }
}

/// The revisions in words, e.g. `interval 2: 3→4`.
pub fn revision_words(r: &Revision) -> String {
    match &r.change {
        RevisionChange::Score { interval, old, new } => format!("interval {interval}: {old}→{new}"),
        RevisionChange::Verdict { old, new } => format!("verdict: {old}→{new}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn interval(
        kind: &str,
        work: Option<usize>,
        start: f64,
        dur: f64,
        target: &str,
    ) -> IntervalMetrics {
        serde_json::from_value(serde_json::json!({
            "index": 1,
            "work_number": work,
            "kind": kind,
            "source": "plan",
            "start_s": start,
            "end_s": start + dur,
            "duration_s": dur,
            "moving_s": dur,
            "avg_pace_s_per_km": 330.0,
            "hill_adjusted_pace_s_per_km": 325.0,
            "avg_hr": 150.0,
            "max_hr": 171.0,
            "avg_cadence_spm": 172.0,
            "target": target,
            "in_target_pct": 81.0,
        }))
        .expect("metrics")
    }

    fn text(l: &Line) -> String {
        l.spans.iter().map(|s| s.content.as_ref()).collect()
    }

    #[test]
    fn wrapping_keeps_words_whole_and_every_character() {
        let line = Line::from(vec![
            Span::raw("- "),
            Span::raw("Recoveries got less complete: trough up 4 bpm over the set"),
        ]);
        let rows: Vec<String> = wrap_line(line, 20, 2).iter().map(text).collect();
        assert_eq!(
            rows,
            [
                "- Recoveries got",
                "  less complete:",
                "  trough up 4 bpm",
                "  over the set"
            ]
        );
        // A word wider than a row is cut across rows, nothing lost.
        let rows: Vec<String> = wrap_line(Line::raw("abcdefghij"), 4, 0)
            .iter()
            .map(text)
            .collect();
        assert_eq!(rows, ["abcd", "efgh", "ij"]);
        assert_eq!(wrap_line(Line::raw(""), 10, 0).len(), 1);
    }

    #[test]
    fn long_clocks_stay_apart() {
        // A steady block starting at 0:00 and lasting 1:50:00 (point 7 of the issue).
        let rows = vec![interval("steady", None, 0.0, 6600.0, "easy (5:10-5:20/km)")];
        for w in [40, 60, 78, 118] {
            let t = Table::new(&rows, Units::Km, true, w);
            let row = t.row(0, &rows[0], "", false);
            assert!(row.chars().count() <= w, "{w}: {row}");
            assert!(t.header().chars().count() <= w, "{w}");
            assert!(!row.contains("0:001:50:00"), "{w}: {row}");
            assert!(row.contains(" 1:50:00"), "{w}: {row}");
        }
    }

    #[test]
    fn columns_are_abbreviated_before_they_are_dropped_and_no_room_is_left() {
        let rows = vec![
            interval("warmup", None, 0.0, 600.0, "easy (5:10-5:20/km)"),
            interval("work", Some(1), 600.0, 180.0, "5k (3:45-3:55/km)"),
        ];
        let widths: Vec<usize> = (30..=120).collect();
        for w in widths {
            let t = Table::new(&rows, Units::Km, true, w);
            let used = t.header().chars().count();
            assert!(used <= w, "{w}");
            // Nothing left out that would fit in the room left.
            let room = w - used;
            let all = Table::new(&rows, Units::Km, true, 1000);
            for (c, _) in &all.cols {
                if !t.has(c.head) {
                    assert!(c.width(c.narrowest()) + 1 > room, "{w}: {} fits", c.head);
                }
            }
        }
        // At 78 columns (an 80-wide pane) the target is kept, whole.
        let t = Table::new(&rows, Units::Km, true, 78);
        assert!(t.has("target") && t.has("in") && t.has("hill"));
        assert!(t
            .row(0, &rows[0], "", false)
            .contains("easy (5:10-5:20/km)"));
        // Narrower: the target's name alone before it is dropped.
        let t = Table::new(&rows, Units::Km, true, 56);
        assert!(t.has("target"), "{}", t.header());
        let row = t.row(1, &rows[1], "3", false);
        assert!(row.contains(" 5k ") && !row.contains("3:45-3:55"), "{row}");
    }
}
