//! The session in its context, in the workstation: the verdict pane's lower part shows the
//! findings, the same workout over time (the earlier runs beside this one) or the week
//! around the session, and the chart can overlay one earlier run's pace, rep on rep.
//!
//! The context is asked of the journal the first time a view (or the overlay) needs it on
//! an open session and kept in the open session ([`ContextState`]), so it goes with it when
//! another session opens. The drawing here is pure: a comparison or a week in, lines out.
//! Only numbers are shown: the comparison carries no athlete note.

use chrono::NaiveDate;
use ratatui::style::Style;
use ratatui::text::{Line, Span};

use crate::analysis::card::{SessionCard, TRACE_BIN_S};
use crate::analysis::earlier::{Comparison, MatchedBy, Occurrence, PaceBasis};
use crate::analysis::week::{LastSession, Week, WeekDay, WeekSession, LOOKBACK_DAYS};
use crate::model::units::{format_clock, format_distance, Units};
use crate::roster::printable;
use crate::tui::action::Action;
use crate::tui::app::{App, Message, Tone, View};
use crate::tui::keymap::KeyMap;
use crate::tui::theme::Theme;

/// What the verdict pane's lower part shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Lower {
    /// The review's findings (as before).
    #[default]
    Findings,
    /// The earlier runs of the same workout beside this session.
    SameWorkout,
    /// The week around the session.
    Week,
}

impl Lower {
    /// The next view the key brings.
    pub fn next(self) -> Lower {
        match self {
            Lower::Findings => Lower::SameWorkout,
            Lower::SameWorkout => Lower::Week,
            Lower::Week => Lower::Findings,
        }
    }

    /// The view's name on screen.
    pub fn title(self) -> &'static str {
        match self {
            Lower::Findings => "Findings",
            Lower::SameWorkout => "Same workout",
            Lower::Week => "Week",
        }
    }
}

/// One earlier run as the chart overlays it: its reps' speed traces, in rep order.
#[derive(Debug, Clone, PartialEq)]
pub struct OverlayRun {
    /// The earlier session.
    pub session_id: String,
    /// Its day.
    pub day: NaiveDate,
    /// Each rep's mean speed in [`TRACE_BIN_S`] bins from the rep's start, m/s.
    pub reps: Vec<Vec<Option<f32>>>,
}

impl OverlayRun {
    /// The overlay of an earlier run's card (reps in start order).
    pub fn from_card(card: &SessionCard) -> OverlayRun {
        let mut reps: Vec<_> = card.reps.iter().collect();
        reps.sort_by(|a, b| a.start_s.total_cmp(&b.start_s));
        OverlayRun {
            session_id: card.session_id.clone(),
            day: card.day,
            reps: reps.into_iter().map(|r| r.trace_mps.clone()).collect(),
        }
    }

    /// Whether any rep has a usable speed to draw.
    pub fn has_trace(&self) -> bool {
        self.reps.iter().flatten().any(Option::is_some)
    }
}

/// The context of the open session: which lower view is on, what was computed for it (an
/// error is kept as its text, shown as one dim line), and which earlier run the chart
/// overlays.
#[derive(Debug, Clone, Default)]
pub struct ContextState {
    /// The lower part of the verdict pane.
    pub lower: Lower,
    /// The same workout over time, once asked for.
    pub comparison: Option<Result<Comparison, String>>,
    /// The week around the session, once asked for.
    pub week: Option<Result<Week, String>>,
    /// The earlier runs the chart can overlay (latest first), once asked for.
    pub earlier: Option<Result<Vec<OverlayRun>, String>>,
    /// The earlier run overlaid: an index into `earlier` (0: the latest).
    pub overlay: Option<usize>,
}

impl ContextState {
    /// The run the chart overlays, if any.
    pub fn overlaid(&self) -> Option<&OverlayRun> {
        let i = self.overlay?;
        self.earlier.as_ref()?.as_ref().ok()?.get(i)
    }

    /// Forget what was computed (kept: the view and nothing else), so the next look asks
    /// the journal again.
    pub fn forget(&mut self) {
        self.comparison = None;
        self.week = None;
        self.earlier = None;
        self.overlay = None;
    }

    /// Step the overlay: off → the latest earlier run → the next older one → … → off.
    /// `runs` is how many there are.
    pub fn step_overlay(&mut self, runs: usize) {
        self.overlay = match self.overlay {
            None if runs > 0 => Some(0),
            Some(i) if i + 1 < runs => Some(i + 1),
            _ => None,
        };
    }
}

// ----- asking the journal -----

fn today() -> NaiveDate {
    chrono::Utc::now().date_naive()
}

/// Fill what the open session's current lower view needs (once). Nothing when no session
/// is open or the findings are shown.
pub fn ensure_view(app: &mut App) {
    let Some(o) = app.open.as_ref() else { return };
    let (id, idx, lower) = (o.session_id.clone(), o.athlete, o.context.lower);
    let Some(athlete) = app.athlete(idx) else {
        return;
    };
    match lower {
        Lower::Findings => {}
        Lower::SameWorkout => ensure_comparison(app),
        Lower::Week if o.context.week.is_none() => {
            let w = crate::context::week_of_session(&app.journal, athlete, &id, today())
                .map_err(|e| printable(&e.to_string()));
            if let Some(o) = app.open.as_mut() {
                o.context.week = Some(w);
            }
        }
        _ => {}
    }
}

/// Fill the open session's comparison with its earlier runs (once): for the "same
/// workout" view and for the feedback draft.
pub fn ensure_comparison(app: &mut App) {
    let Some(o) = app.open.as_ref().filter(|o| o.context.comparison.is_none()) else {
        return;
    };
    let Some(athlete) = app.athlete(o.athlete) else {
        return;
    };
    let c = crate::context::comparison(&app.journal, athlete, &o.session_id)
        .map_err(|e| printable(&e.to_string()));
    if let Some(o) = app.open.as_mut() {
        o.context.comparison = Some(c);
    }
}

/// Fill the earlier runs the chart overlays (once).
pub fn ensure_earlier(app: &mut App) {
    let Some(o) = app.open.as_ref().filter(|o| o.context.earlier.is_none()) else {
        return;
    };
    let id = o.session_id.clone();
    let Some(athlete) = app.athlete(o.athlete) else {
        return;
    };
    let runs = crate::context::earlier_runs(&app.journal, athlete, &id)
        .map(|(_, cards)| {
            let mut runs: Vec<OverlayRun> = cards.iter().map(OverlayRun::from_card).collect();
            // Latest first, whatever order the search gave.
            runs.sort_by(|a, b| b.day.cmp(&a.day).then(b.session_id.cmp(&a.session_id)));
            runs
        })
        .map_err(|e| printable(&e.to_string()));
    if let Some(o) = app.open.as_mut() {
        o.context.earlier = Some(runs);
    }
}

/// The open session's analysis arrived (the journal now holds its current card): what was
/// looked up before it is looked up again (an error may have been "not analysed yet", a
/// result may rest on the card of an older analysis), the view on screen at once, the
/// overlay's runs when one is overlaid.
pub fn on_analysed(app: &mut App) {
    let Some(o) = app.open.as_mut() else { return };
    let overlay = o.context.overlay;
    o.context.forget();
    ensure_view(app);
    if overlay.is_some() {
        ensure_earlier(app);
        if let Some(o) = app.open.as_mut() {
            let runs = o
                .context
                .earlier
                .as_ref()
                .and_then(|r| r.as_ref().ok())
                .map_or(0, Vec::len);
            o.context.overlay = overlay.filter(|&i| i < runs);
        }
    }
}

fn say(app: &mut App, tone: Tone, text: impl Into<String>) {
    app.message = Some(Message {
        text: text.into(),
        tone,
    });
}

/// The two context keys: cycle the lower view (and bring its heading into view), step the
/// chart's overlay. `false` for any other action.
pub fn on_action(app: &mut App, action: Action) -> bool {
    match action {
        Action::ContextView => cycle_view(app),
        Action::EarlierOverlay => cycle_overlay(app),
        _ => return false,
    }
    true
}

fn no_session(app: &mut App) -> bool {
    if app.open.is_none() || app.view != View::Review {
        say(
            app,
            Tone::Info,
            "open a session first: its earlier runs and its week are shown beside it",
        );
        return true;
    }
    false
}

fn cycle_view(app: &mut App) {
    if no_session(app) {
        return;
    }
    let editing = app
        .open
        .as_ref()
        .and_then(|o| o.feedback.as_ref())
        .is_some_and(|e| e.editing);
    if let Some(o) = app.open.as_mut() {
        o.context.lower = o.context.lower.next();
    }
    ensure_view(app);
    if editing {
        return;
    }
    // Bring the lower part's heading to the top of the pane.
    let area = ratatui::layout::Rect::new(0, 0, app.size.0, app.size.1);
    let row = crate::tui::ui::areas(area, app).verdict.and_then(|rect| {
        let (w, _) = super::verdict::inner_size(rect);
        super::verdict::document(app, w).lower
    });
    if let (Some(o), Some(row)) = (app.open.as_mut(), row) {
        o.verdict.scroll = row;
        o.verdict.follow = false;
    }
}

fn cycle_overlay(app: &mut App) {
    if no_session(app) {
        return;
    }
    ensure_earlier(app);
    let key = app.keymap.first(Action::EarlierOverlay);
    let Some(o) = app.open.as_mut() else { return };
    let runs = match o.context.earlier.as_ref() {
        Some(Ok(runs)) => runs.len(),
        Some(Err(e)) => {
            let text = format!("no earlier run to overlay: {e}");
            say(app, Tone::Warn, text);
            return;
        }
        None => 0,
    };
    if runs == 0 {
        say(
            app,
            Tone::Info,
            "no earlier run of this workout to overlay on the chart",
        );
        return;
    }
    o.context.step_overlay(runs);
    let Some((day, traced, position)) = o
        .context
        .overlaid()
        .map(|r| (r.day, r.has_trace(), o.context.overlay.unwrap_or(0)))
    else {
        say(app, Tone::Info, "chart: earlier run off");
        return;
    };
    let next = if position + 1 < runs {
        format!("{key}: next older")
    } else {
        format!("{key}: off")
    };
    let text = if traced {
        format!("chart: the earlier run of {day} dotted, rep on rep ({next})")
    } else {
        format!("chart: the earlier run of {day} kept no pace trace to draw ({next})")
    };
    say(app, Tone::Info, text);
}

// ----- the chart overlay -----

/// The overlay's points on the chart: for rep k of the earlier run, its trace laid from
/// the start of rep k of this session (bin centres), cut where this session's next rep
/// starts and at the window `[from, to]`. `reps` are this session's reps as (start, end)
/// seconds, in order. Each inner list is one unbroken piece of line (a bin without speed
/// breaks it): (seconds, m/s).
pub fn overlay_points(
    reps: &[(f64, f64)],
    run: &OverlayRun,
    from: f64,
    to: f64,
) -> Vec<Vec<(f64, f64)>> {
    let mut pieces: Vec<Vec<(f64, f64)>> = Vec::new();
    for (k, (&(start, _), trace)) in reps.iter().zip(&run.reps).enumerate() {
        let limit = reps.get(k + 1).map_or(f64::INFINITY, |r| r.0);
        let mut piece: Vec<(f64, f64)> = Vec::new();
        for (j, v) in trace.iter().enumerate() {
            let x = start + (j as f64 + 0.5) * TRACE_BIN_S;
            let v = v.map(f64::from).filter(|v| v.is_finite() && *v > 0.0);
            match v {
                Some(v) if x >= from && x <= to && x < limit => piece.push((x, v)),
                _ => {
                    if !piece.is_empty() {
                        pieces.push(std::mem::take(&mut piece));
                    }
                }
            }
        }
        if !piece.is_empty() {
            pieces.push(piece);
        }
    }
    pieces
}

/// The dots of a dotted line through `piece`, one every `step` seconds (the line is drawn
/// as dots so it reads apart from the solid pace trace with or without colour).
pub fn dotted(piece: &[(f64, f64)], step: f64) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let Some(&(x0, y0)) = piece.first() else {
        return out;
    };
    if piece.len() == 1 || !(step.is_finite() && step > 0.0) {
        out.push((x0, y0));
        return out;
    }
    let mut x = x0;
    for pair in piece.windows(2) {
        let (Some(&(xa, ya)), Some(&(xb, yb))) = (pair.first(), pair.get(1)) else {
            continue;
        };
        while x <= xb && xb > xa {
            let f = (x - xa) / (xb - xa);
            out.push((x, ya + f * (yb - ya)));
            x += step;
        }
    }
    out
}

// ----- the lower part of the verdict pane -----

/// The lower part's heading: the view that is on, and what the key brings next, e.g.
/// `Same workout (w → week)`.
pub fn heading(t: &Theme, k: &KeyMap, lower: Lower) -> Line<'static> {
    Line::from(vec![
        Span::styled(lower.title(), t.heading),
        Span::styled(
            format!(
                " ({} → {})",
                k.first(Action::ContextView),
                lower.next().title().to_lowercase()
            ),
            t.dim,
        ),
    ])
}

/// One dim line (a view not computed, or an error).
fn dim(t: &Theme, text: impl Into<String>) -> Line<'static> {
    Line::styled(printable(&text.into()), t.dim)
}

/// The lower part for a context view (`None` for the findings): its lines after the
/// heading, from what the open session holds.
pub fn view_lines(
    t: &Theme,
    state: &ContextState,
    units: Units,
    w: usize,
) -> Option<Vec<Line<'static>>> {
    Some(match state.lower {
        Lower::Findings => return None,
        Lower::SameWorkout => match &state.comparison {
            None => vec![dim(t, "looking up the earlier runs of this workout…")],
            Some(Err(e)) => vec![dim(t, format!("No comparison: {e}"))],
            Some(Ok(c)) => comparison_lines(t, c, units, w),
        },
        Lower::Week => match &state.week {
            None => vec![dim(t, "looking up the week around this session…")],
            Some(Err(e)) => vec![dim(t, format!("No week: {e}"))],
            Some(Ok(wk)) => week_lines(t, wk, units, w),
        },
    })
}

/// A pace (s/km) as a clock per unit, without the unit: `3:52`.
fn pace(p: Option<f64>, units: Units) -> String {
    p.filter(|p| p.is_finite() && *p > 0.0)
        .map(|p| format_clock(p * units.metres() / 1000.0))
        .unwrap_or_else(|| "-".to_string())
}

fn num(v: Option<f64>, decimals: usize) -> String {
    v.filter(|v| v.is_finite())
        .map(|v| format!("{v:.decimals$}"))
        .unwrap_or_else(|| "-".to_string())
}

/// The short date of a column heading: `10-22`, with the year when the runs span years.
fn short_day(d: NaiveDate, with_year: bool) -> String {
    if with_year {
        d.format("%y-%m-%d").to_string()
    } else {
        d.format("%m-%d").to_string()
    }
}

/// A table of runs side by side: a label column, then one column per run; the columns are
/// split into as many blocks as the width needs, each block with its own heading row, so
/// no cell is cut at any width.
struct SideTable {
    /// The heading of the label column.
    corner: String,
    /// Row labels.
    labels: Vec<String>,
    /// Per column: its heading and one cell per label.
    cols: Vec<(String, Vec<String>)>,
}

impl SideTable {
    fn lines(&self, t: &Theme, w: usize) -> Vec<Line<'static>> {
        let lead = self
            .labels
            .iter()
            .map(|l| l.chars().count())
            .chain([self.corner.chars().count()])
            .max()
            .unwrap_or(0);
        let width = |(h, cells): &(String, Vec<String>)| {
            cells
                .iter()
                .map(|c| c.chars().count())
                .chain([h.chars().count()])
                .max()
                .unwrap_or(0)
                + 2
        };
        let mut out = Vec::new();
        let mut at = 0;
        while at < self.cols.len() {
            let mut used = lead;
            let mut end = at;
            while let Some(c) = self.cols.get(end) {
                if end > at && used + width(c) > w {
                    break;
                }
                used += width(c);
                end += 1;
            }
            let block = self.cols.get(at..end).unwrap_or_default();
            let mut head = format!("{:<lead$}", self.corner);
            for c in block {
                head.push_str(&format!("{:>cw$}", c.0, cw = width(c)));
            }
            out.push(Line::styled(head, t.dim));
            for (i, label) in self.labels.iter().enumerate() {
                let mut row = format!("{label:<lead$}");
                for c in block {
                    let cell = c.1.get(i).map(String::as_str).unwrap_or("");
                    row.push_str(&format!("{cell:>cw$}", cw = width(c)));
                }
                out.push(Line::styled(row.trim_end().to_string(), t.text));
            }
            at = end.max(at + 1);
        }
        out
    }
}

/// Why there is nothing to compare with, in words.
pub fn no_earlier_text(c: &Comparison) -> String {
    match (c.matched_by, c.shape.as_ref()) {
        (MatchedBy::WorkoutShape, Some(s)) => {
            format!("No earlier run of this workout ({})", printable(&s.label))
        }
        (MatchedBy::WorkoutShape, None) => "No earlier run of this workout".to_string(),
        (MatchedBy::Kind, _) => format!(
            "No earlier {} to compare with in the journal",
            c.kind.label()
        ),
        (MatchedBy::Nothing, _) => format!(
            "Nothing to compare with: a {} without a workout shape (only structured \
             sessions, easy runs and long runs are compared)",
            c.kind.label()
        ),
    }
}

/// One run of the comparison in words: date, reps (or distance) and time, the plan's title.
fn run_words(r: &Occurrence, units: Units) -> String {
    let mut parts = vec![r.day.to_string()];
    if !r.reps.is_empty() {
        parts.push(format!(
            "{} rep{}",
            r.reps.len(),
            if r.reps.len() == 1 { "" } else { "s" }
        ));
    }
    parts.push(format_clock(r.duration_s));
    if let Some(d) = r.distance_m {
        parts.push(format_distance(d, units));
    }
    if let Some(title) = &r.plan_title {
        parts.push(printable(title));
    }
    let mut s = parts.join(" · ");
    if r.current {
        s.push_str(" (this session)");
    }
    s
}

/// The same workout over time: the earlier runs with their dates and reps, the per-rep
/// table (pace in the athlete's units and HR; relative intensity and recovery trough), the
/// set's mean and spread, the change against each earlier run, the pace at a fixed heart
/// rate and the caution. Numbers only: no athlete note is part of a comparison.
pub fn comparison_lines(t: &Theme, c: &Comparison, units: Units, w: usize) -> Vec<Line<'static>> {
    let units = Units::parse(&c.units).unwrap_or(units);
    let u = units.label();
    let mut out: Vec<Line<'static>> = Vec::new();
    let what = match (c.matched_by, c.shape.as_ref()) {
        (MatchedBy::WorkoutShape, Some(s)) => format!("Workout {}", printable(&s.label)),
        (MatchedBy::Kind, _) => format!(
            "{} beside earlier {}s on their own terms: pace on flat ground at heart \
             rate, and drift",
            capitalised(c.kind.label()),
            c.kind.label()
        ),
        _ => capitalised(c.kind.label()),
    };
    out.push(Line::styled(what, t.text));
    if c.earlier().next().is_none() {
        out.push(Line::styled(no_earlier_text(c), t.text));
        return out;
    }
    let earlier = c.earlier().count();
    let basis = match c.pace_basis {
        PaceBasis::HillAdjusted => "pace hill-adjusted (the ground differs)",
        PaceBasis::Raw => "pace as run",
    };
    out.push(Line::styled(
        format!(
            "{earlier} earlier run{} · {basis}",
            if earlier == 1 { "" } else { "s" }
        ),
        t.dim,
    ));
    for r in &c.runs {
        out.push(Line::styled(
            format!("  {}", run_words(r, units)),
            if r.current { t.text } else { t.dim },
        ));
    }
    let with_year = c
        .runs
        .first()
        .zip(c.runs.last())
        .is_some_and(|(a, b)| a.day.format("%Y").to_string() != b.day.format("%Y").to_string());
    let head = |r: &Occurrence| short_day(r.day, with_year);
    let reps = c.runs.iter().map(|r| r.reps.len()).max().unwrap_or(0);
    if reps > 0 {
        // Pace and HR per rep, side by side.
        let mut labels: Vec<String> = (1..=reps).map(|n| format!("  {n}")).collect();
        labels.push("  mean".to_string());
        labels.push(format!("  spread s/{u}"));
        let cols = c
            .runs
            .iter()
            .map(|r| {
                let mut cells: Vec<String> = (0..reps)
                    .map(|i| match r.reps.get(i) {
                        Some(x) => {
                            format!(
                                "{:>5} {:>3}",
                                pace(x.pace_s_per_km, units),
                                num(x.avg_hr, 0)
                            )
                        }
                        None => String::new(),
                    })
                    .collect();
                cells.push(format!(
                    "{:>5} {:>3}",
                    pace(r.mean_pace_s_per_km, units),
                    num(r.mean_hr, 0)
                ));
                cells.push(num(
                    r.spread_s_per_km.map(|s| s * units.metres() / 1000.0),
                    1,
                ));
                (head(r), cells)
            })
            .collect();
        out.extend(
            SideTable {
                corner: format!("pace /{u} · HR"),
                labels,
                cols,
            }
            .lines(t, w),
        );
        // Relative intensity and recovery trough per rep.
        let mut labels: Vec<String> = (1..=reps).map(|n| format!("  {n}")).collect();
        labels.push("  mean".to_string());
        let cols = c
            .runs
            .iter()
            .map(|r| {
                let mut cells: Vec<String> = (0..reps)
                    .map(|i| match r.reps.get(i) {
                        Some(x) => format!(
                            "{:>4} {:>3}",
                            num(x.relative_intensity, 2),
                            num(x.recovery_trough_bpm, 0)
                        ),
                        None => String::new(),
                    })
                    .collect();
                cells.push(format!(
                    "{:>4} {:>3}",
                    num(r.mean_relative_intensity, 2),
                    num(r.mean_trough_bpm, 0)
                ));
                (head(r), cells)
            })
            .collect();
        out.extend(
            SideTable {
                corner: "intensity · trough".to_string(),
                labels,
                cols,
            }
            .lines(t, w),
        );
    } else {
        // Easy and long runs: one row per run.
        let labels = vec![
            format!("  pace /{u}"),
            "  HR".to_string(),
            "  drift".to_string(),
            format!("  {u}"),
            "  time".to_string(),
        ];
        let cols = c
            .runs
            .iter()
            .map(|r| {
                (
                    head(r),
                    vec![
                        pace(r.mean_pace_s_per_km, units),
                        num(r.mean_hr, 0),
                        r.decoupling_pct
                            .filter(|d| d.is_finite())
                            .map(|d| format!("{d:.1}%"))
                            .unwrap_or_else(|| "-".to_string()),
                        num(r.distance_m.map(|d| d / units.metres()), 2),
                        format_clock(r.duration_s),
                    ],
                )
            })
            .collect();
        out.extend(
            SideTable {
                corner: "run".to_string(),
                labels,
                cols,
            }
            .lines(t, w),
        );
    }
    // The words, then what they leave out of the changes and the pace at a fixed heart rate.
    let said = |s: &str| {
        let key = |x: &str| x.trim().trim_end_matches('.').to_string();
        c.text.iter().any(|x| key(x) == key(s))
    };
    for line in &c.text {
        out.push(bullet(t, line, t.text));
    }
    for ch in c.changes.iter().filter(|ch| !said(&ch.text)) {
        out.push(bullet(t, &ch.text, t.text));
    }
    if let Some(p) = c.pace_at_hr.as_ref().filter(|p| !said(&p.text)) {
        out.push(Line::from(vec![
            Span::styled("Pace at HR ", t.heading),
            Span::styled(printable(&p.text), t.text),
        ]));
    }
    out.push(Line::styled(printable(&c.caution), t.dim));
    out
}

fn bullet(t: &Theme, text: &str, style: Style) -> Line<'static> {
    Line::from(vec![
        Span::styled("- ", t.dim),
        Span::styled(printable(text), style),
    ])
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

/// One session of a day in words: `interval set · 52:10 · 10.10 km · load 88 · Cruise
/// miles (this session)`; an extra session says so.
fn session_words(s: &WeekSession, units: Units) -> String {
    let mut parts = vec![s.kind.label().to_string(), format_clock(s.duration_s)];
    if let Some(d) = s.distance_m {
        parts.push(format_distance(d, units));
    }
    match s.load.filter(|l| l.is_finite()) {
        Some(l) if s.load_lower_bound => parts.push(format!("load {l:.0} or more")),
        Some(l) => parts.push(format!("load {l:.0}")),
        None => parts.push("load -".to_string()),
    }
    match &s.plan_title {
        Some(title) if !s.extra => parts.push(printable(title)),
        _ => {}
    }
    if s.extra {
        parts.push("extra (no plan)".to_string());
    }
    let mut out = parts.join(" · ");
    if s.current {
        out.push_str(" (this session)");
    }
    out
}

/// The lines of one day: the date, then each session, missed and still-planned session.
fn day_lines(t: &Theme, d: &WeekDay, units: Units) -> Vec<Line<'static>> {
    let date = format!("{} {}", d.date.format("%a"), d.date);
    let pad = " ".repeat(date.chars().count());
    let mut items: Vec<(String, Style)> = Vec::new();
    for s in &d.sessions {
        let style = if s.current { t.heading } else { t.text };
        items.push((session_words(s, units), style));
    }
    for p in &d.missed {
        items.push((
            format!("missed: {} (planned, no activity)", printable(&p.title)),
            t.warn,
        ));
    }
    for p in &d.not_analysed {
        items.push((
            format!(
                "run, not analysed: {} (the file cannot be read)",
                printable(&p.title)
            ),
            t.dim,
        ));
    }
    for p in &d.upcoming {
        items.push((format!("planned: {}", printable(&p.title)), t.dim));
    }
    if items.is_empty() {
        items.push(("rest".to_string(), t.dim));
    }
    items
        .into_iter()
        .enumerate()
        .map(|(i, (text, style))| {
            let lead = if i == 0 { date.clone() } else { pad.clone() };
            Line::from(vec![
                Span::styled(format!("{lead}  "), t.dim),
                Span::styled(text, style),
            ])
        })
        .collect()
}

fn last_words(what: &str, last: Option<&LastSession>) -> String {
    match last {
        Some(l) => format!(
            "{what}: {} on {}, {} day{} before",
            l.kind.label(),
            l.day,
            l.days_before,
            if l.days_before == 1 { "" } else { "s" }
        ),
        None => format!("{what}: none in the {LOOKBACK_DAYS} days before"),
    }
}

/// The week around the session: day by day the sessions (kind, duration, distance, load),
/// missed and extra ones in words, the load against the last four weeks, the days since
/// the last hard session and the last long run, and the week in words.
pub fn week_lines(t: &Theme, wk: &Week, units: Units, _w: usize) -> Vec<Line<'static>> {
    let mut out = vec![Line::styled(
        format!("{} to {} · today {}", wk.from, wk.to, wk.today),
        t.dim,
    )];
    if wk.days.is_empty() {
        out.push(Line::styled("no days to show", t.dim));
    }
    for d in &wk.days {
        out.extend(day_lines(t, d, units));
    }
    let at_least = if wk.week_load_lower_bound {
        " or more"
    } else {
        ""
    };
    let head = format!(
        "Load {:.0}{at_least} in the 7 days to {}",
        wk.week_load, wk.centre
    );
    let empty = match wk.previous_weeks_without_sessions {
        0 => String::new(),
        n => format!(" ({n} of them without a session)"),
    };
    let load = match (wk.previous_weeks_mean_load, wk.load_ratio) {
        (Some(m), Some(r)) => {
            format!("{head} · mean of the 4 weeks before {m:.0}{empty} · ratio {r:.2}")
        }
        (Some(m), None) => format!("{head} · mean of the 4 weeks before {m:.0}{empty}"),
        _ => format!("{head} · no earlier weeks to set it against"),
    };
    out.push(Line::styled(load, t.text));
    out.push(Line::styled(
        format!(
            "{} missed (planned, no activity) · {} extra (no plan)",
            wk.missed, wk.extra
        ),
        if wk.missed > 0 { t.warn } else { t.text },
    ));
    out.push(Line::styled(
        last_words("Last hard session", wk.last_hard.as_ref()),
        t.text,
    ));
    out.push(Line::styled(
        last_words("Last long run", wk.last_long.as_ref()),
        t.text,
    ));
    for line in &wk.text {
        out.push(bullet(t, line, t.text));
    }
    out
}
