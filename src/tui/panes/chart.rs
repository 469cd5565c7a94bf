//! The chart pane: pace and heart rate on one time axis (Braille canvas), each with its own
//! labelled scale, work-interval bands, flagged data, optional elevation, a cursor with a
//! readout, and rulers (least-squares lines between two marked points).

use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::{Color, Style};
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::canvas::{Canvas, Context, Line as CLine, Points};
use ratatui::widgets::{Paragraph, Widget};

use crate::analysis::review::Review;
use crate::analysis::trend::Fit;
use crate::ingest::clean::sample_mask;
use crate::model::units::{format_clock, format_pace};
use crate::model::{ChannelKind, Session, Units};
use crate::tui::app::{App, ChartView, Focus};
use crate::tui::panes::context_view::{dotted, overlay_points};
use crate::tui::ui::pane_block;

/// Width of the scale labels left of the plot.
pub const GUTTER: u16 = 9;

/// Below this fraction of the fastest speed shown, the pace scale stops (walking and
/// standing are drawn at the bottom edge).
// Our design choice: keeps an easy jog and a fast repeat on one readable scale.
pub const PACE_FLOOR_FRACTION: f64 = 0.45;

/// The pace (speed) trace is drawn as a centred mean over this many seconds, so a 1 Hz
/// easy or long run reads as a line rather than a noisy band; the cursor readout keeps the
/// raw value. The chart's legend names the window.
// Our design choice: light enough that a 30 s repeat keeps its shape.
pub const PACE_SMOOTH_S: f64 = 15.0;

/// Fewest rows a trace is given before the chart folds its less important parts (the
/// readout line goes onto the top border, the work/flag strip onto the bottom border).
// Our design choice: three rows of Braille are twelve dot levels, enough to tell a repeat
// from its recovery; two rows (eight levels) flatten a steady run into a bar.
pub const MIN_ROWS_PER_TRACE: u16 = 3;

/// The speed trace as the chart draws it: the centred mean of the usable samples within
/// [`PACE_SMOOTH_S`] (half before, half after each sample). A sample that is not usable
/// (flagged, missing) stays `None`, so gaps stay gaps.
pub fn smoothed_speed(t: &[f64], values: &[Option<f64>], usable: &[bool]) -> Vec<Option<f64>> {
    crate::analysis::review::smooth(t, values, usable, PACE_SMOOTH_S / 2.0)
}

/// What the samples falling in one column did.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColumnRange {
    /// Smallest value.
    pub min: f64,
    /// Largest value.
    pub max: f64,
    /// First value (in time).
    pub first: f64,
    /// Last value.
    pub last: f64,
}

/// Down-sample a series to `columns` columns over `[from, to]`, keeping each column's
/// minimum and maximum (so a one-sample spike stays visible) and its first and last values
/// (to join columns). Missing samples, non-finite values and samples where `usable` is
/// false are skipped; a column without samples is `None`.
pub fn downsample(
    t: &[f64],
    values: &[Option<f64>],
    usable: Option<&[bool]>,
    from: f64,
    to: f64,
    columns: usize,
) -> Vec<Option<ColumnRange>> {
    let mut out: Vec<Option<ColumnRange>> = vec![None; columns];
    let span = to - from;
    if columns == 0 || !(span.is_finite() && span > 0.0) {
        return out;
    }
    let start = t.partition_point(|&x| x < from);
    for (i, &ti) in t.iter().enumerate().skip(start) {
        if ti > to {
            break;
        }
        if usable.is_some_and(|u| !u.get(i).copied().unwrap_or(false)) {
            continue;
        }
        let Some(v) = values.get(i).copied().flatten().filter(|v| v.is_finite()) else {
            continue;
        };
        let c = (((ti - from) / span) * columns as f64).floor();
        let c = (c.max(0.0) as usize).min(columns - 1);
        if let Some(slot) = out.get_mut(c) {
            match slot {
                Some(r) => {
                    r.min = r.min.min(v);
                    r.max = r.max.max(v);
                    r.last = v;
                }
                None => {
                    *slot = Some(ColumnRange {
                        min: v,
                        max: v,
                        first: v,
                        last: v,
                    })
                }
            }
        }
    }
    out
}

/// A ruler's numbers: the least-squares lines of speed and HR against time over the window,
/// their slopes per 10 minutes, and the window's decoupling.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RulerStats {
    /// Speed (m/s) against time (s).
    pub speed: Option<Fit>,
    /// HR (bpm) against time (s).
    pub hr: Option<Fit>,
    /// Change of the fitted pace per 10 minutes, seconds per unit distance (positive: slower).
    pub pace_per_10min: Option<f64>,
    /// Change of the fitted HR per 10 minutes, bpm.
    pub hr_per_10min: Option<f64>,
    /// Decoupling of the window, percent (positive: the HR cost of the speed rose).
    pub decoupling_pct: Option<f64>,
}

/// A ruler's numbers on a session window (moving, unflagged samples), from
/// [`crate::analysis::ruler::fit_window`], with the pace change in the athlete's units.
pub fn ruler_stats(session: &Session, from: f64, to: f64, units: Units) -> RulerStats {
    let r = crate::analysis::ruler::fit_window(session, from, to);
    RulerStats {
        speed: r.speed,
        hr: r.hr,
        pace_per_10min: r
            .pace_change_per_10min_s_per_km
            .map(|p| p * units.metres() / 1000.0),
        hr_per_10min: r.hr_change_per_10min_bpm,
        decoupling_pct: r.decoupling_pct,
    }
}

/// One line describing a ruler.
pub fn ruler_line(k: usize, from: f64, to: f64, s: &RulerStats, units: Units) -> String {
    let mut parts = vec![format!("R{k} {}–{}", format_clock(from), format_clock(to))];
    if let Some(p) = s.pace_per_10min {
        parts.push(format!("pace {p:+.1} s/{}/10min", units.label()));
    }
    if let Some(h) = s.hr_per_10min {
        parts.push(format!("HR {h:+.1} bpm/10min"));
    }
    if let Some(d) = s.decoupling_pct {
        parts.push(format!("decoupling {d:.1}%"));
    }
    parts.join("  ")
}

fn colour(style: Style) -> Color {
    style.fg.unwrap_or(Color::Reset)
}

/// The value of a channel at the sample nearest to `at`.
fn value_at(session: &Session, ch: Option<&crate::model::Channel>, at: f64) -> Option<f64> {
    let ch = ch?;
    let i = nearest(&session.t, at)?;
    ch.get(i)
}

fn nearest(t: &[f64], at: f64) -> Option<usize> {
    if t.is_empty() {
        return None;
    }
    let i = t.partition_point(|&x| x < at);
    if i == 0 {
        return Some(0);
    }
    if i >= t.len() {
        return Some(t.len() - 1);
    }
    let before = t.get(i - 1).copied().unwrap_or(f64::NAN);
    let after = t.get(i).copied().unwrap_or(f64::NAN);
    Some(if (at - before) <= (after - at) {
        i - 1
    } else {
        i
    })
}

/// A speed as the session's sport reads it: a pace for a run, km/h (mph) otherwise.
pub fn speed_words(v: f64, units: Units, running: bool) -> String {
    if running {
        return format_pace(v, units);
    }
    let per_h = v * 3600.0 / units.metres();
    match units {
        Units::Km => format!("{per_h:.1} km/h"),
        Units::Mi => format!("{per_h:.1} mph"),
    }
}

/// A label of the speed scale: a pace for a run, whole km/h (mph) otherwise, so it fits
/// the [`GUTTER`].
fn scale_label(v: f64, units: Units, running: bool) -> String {
    if running {
        return format_pace(v, units);
    }
    let per_h = v * 3600.0 / units.metres();
    match units {
        Units::Km => format!("{per_h:.0} km/h"),
        Units::Mi => format!("{per_h:.0} mph"),
    }
}

/// The cursor readout: time and the exact (raw, not smoothed) values at the nearest sample.
pub fn readout(session: &Session, at: f64, units: Units) -> String {
    readout_parts(session, at, units).join(" · ")
}

/// The readout's parts, most important first: time, pace (or speed), HR, cadence, altitude.
pub fn readout_parts(session: &Session, at: f64, units: Units) -> Vec<String> {
    let mut parts = vec![format_clock(at)];
    let running = session.sport.analysed_as_running();
    if let Some(v) = value_at(session, session.speed.as_ref(), at) {
        if running {
            parts.push(format!("pace {}", format_pace(v, units)));
        } else {
            parts.push(format!("speed {}", speed_words(v, units, false)));
        }
    }
    if let Some(h) = value_at(session, session.hr.as_ref(), at) {
        parts.push(format!("HR {h:.0}"));
    }
    if let Some(c) = value_at(session, session.cadence.as_ref(), at) {
        parts.push(format!("cad {c:.0}"));
    }
    if let Some(a) = value_at(session, session.altitude.as_ref(), at) {
        parts.push(format!("alt {a:.0} m"));
    }
    parts
}

struct Band {
    cols: Vec<Option<ColumnRange>>,
    lo: f64,
    hi: f64,
    style: Style,
    labels: [String; 2],
    fits: Vec<(f64, f64, Fit)>,
    marker: Marker,
    /// Dots of an earlier run's trace laid over this one (the pace band only).
    overlay: Vec<(f64, f64)>,
    overlay_style: Style,
}

fn band_bounds(cols: &[Option<ColumnRange>]) -> Option<(f64, f64)> {
    let lo = cols
        .iter()
        .flatten()
        .map(|c| c.min)
        .fold(f64::INFINITY, f64::min);
    let hi = cols
        .iter()
        .flatten()
        .map(|c| c.max)
        .fold(f64::NEG_INFINITY, f64::max);
    (lo.is_finite() && hi.is_finite()).then_some((lo, hi))
}

/// Bounds that ignore the slowest few columns (a stop, a walk to the start line) so the
/// running pace keeps the band's height: the 5th percentile of the column minima up to the
/// highest column maximum (fast spikes stay visible).
fn robust_bounds(cols: &[Option<ColumnRange>]) -> Option<(f64, f64)> {
    let mut mins: Vec<f64> = cols.iter().flatten().map(|c| c.min).collect();
    if mins.is_empty() {
        return None;
    }
    mins.sort_by(f64::total_cmp);
    let lo = mins.get(mins.len() / 20).copied()?;
    let (_, hi) = band_bounds(cols)?;
    Some((lo.min(hi), hi))
}

fn draw_trace(ctx: &mut Context, band: &Band, view: &ChartView) {
    let n = band.cols.len().max(1) as f64;
    let color = colour(band.style);
    let clamp = |v: f64| v.clamp(band.lo, band.hi);
    let mut prev: Option<(f64, f64)> = None;
    for (c, r) in band.cols.iter().enumerate() {
        let x = view.from + (c as f64 + 0.5) / n * view.span();
        match r {
            Some(r) => {
                if let Some((px, pv)) = prev {
                    ctx.draw(&CLine::new(px, clamp(pv), x, clamp(r.first), color));
                }
                ctx.draw(&CLine::new(x, clamp(r.min), x, clamp(r.max), color));
                prev = Some((x, r.last));
            }
            None => prev = None,
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn render_band(
    band: &Band,
    view: &ChartView,
    cursor_style: Style,
    ruler_style: Style,
    pending: Option<f64>,
    area: Rect,
    buf: &mut Buffer,
    label_style: Style,
) {
    if area.height == 0 || area.width <= GUTTER {
        return;
    }
    let plot = Rect::new(area.x + GUTTER, area.y, area.width - GUTTER, area.height);
    let top = Rect::new(area.x, area.y, GUTTER - 1, 1);
    Paragraph::new(Line::styled(band.labels[0].clone(), label_style)).render(top, buf);
    if area.height > 1 {
        let bottom = Rect::new(area.x, area.y + area.height - 1, GUTTER - 1, 1);
        Paragraph::new(Line::styled(band.labels[1].clone(), label_style)).render(bottom, buf);
    }
    let (lo, hi) = (band.lo, band.hi);
    Canvas::default()
        .marker(band.marker)
        .x_bounds([view.from, view.to])
        .y_bounds([lo, hi])
        .paint(|ctx| {
            if !band.overlay.is_empty() {
                // Under the session's own trace: where both fall in a cell, this run wins.
                let coords: Vec<(f64, f64)> = band
                    .overlay
                    .iter()
                    .map(|&(x, v)| (x, v.clamp(lo, hi)))
                    .collect();
                ctx.draw(&Points {
                    coords: &coords,
                    color: colour(band.overlay_style),
                });
                ctx.layer();
            }
            draw_trace(ctx, band, view);
            ctx.layer();
            for (a, b, f) in &band.fits {
                let (a, b) = (a.max(view.from), b.min(view.to));
                if b > a {
                    ctx.draw(&CLine::new(
                        a,
                        f.predict(a).clamp(lo, hi),
                        b,
                        f.predict(b).clamp(lo, hi),
                        colour(ruler_style),
                    ));
                }
            }
            if let Some(p) = pending {
                ctx.draw(&CLine::new(p, lo, p, hi, colour(ruler_style)));
            }
            ctx.draw(&CLine::new(
                view.cursor,
                lo,
                view.cursor,
                hi,
                colour(cursor_style),
            ));
        })
        .render(plot, buf);
}

/// As many leading parts as fit in `w` characters, joined by `sep` (at least the first,
/// which the pane then cuts): a line of values loses whole values from its end, never half
/// a number.
pub fn leading_parts(parts: &[String], sep: &str, w: usize) -> String {
    let mut out = String::new();
    for p in parts {
        let next = if out.is_empty() {
            p.clone()
        } else {
            format!("{out}{sep}{p}")
        };
        if !out.is_empty() && next.chars().count() > w {
            break;
        }
        out = next;
    }
    out
}

/// The marker HR is drawn with: Braille like pace in colour; dots without colour
/// (`NO_COLOR`), so the two traces never look alike.
pub fn hr_marker(plain: bool) -> Marker {
    if plain {
        Marker::Dot
    } else {
        Marker::Braille
    }
}

/// The legend: which trace is which, and the pace trace's smoothing window. Without colour
/// each name carries its trace's mark.
pub fn legend(running: bool, plain: bool) -> Vec<(String, LegendPart)> {
    let pace = if running { "pace" } else { "speed" };
    let mean = format!("{pace} ({:.0} s mean)", PACE_SMOOTH_S);
    if plain {
        // No `·` between them: in ASCII mode it would read as the HR mark.
        vec![
            (format!("⠒ {mean}"), LegendPart::Pace),
            ("  ".to_string(), LegendPart::Sep),
            ("• HR".to_string(), LegendPart::Hr),
        ]
    } else {
        vec![
            (mean, LegendPart::Pace),
            (" · ".to_string(), LegendPart::Sep),
            ("HR".to_string(), LegendPart::Hr),
        ]
    }
}

/// Which style a legend part takes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LegendPart {
    /// The pace trace's name.
    Pace,
    /// The HR trace's name.
    Hr,
    /// A separator.
    Sep,
}

/// How the chart pane lays out its inner rows at a height with `bands` traces.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ChartLayout {
    /// The readout has its own line (else it is on the top border).
    pub readout_line: bool,
    /// The work/flag strip has its own line (else it is on the bottom border).
    pub strip_line: bool,
    /// The time axis is shown.
    pub axis: bool,
    /// Rows of ruler lines.
    pub ruler_rows: u16,
    /// Rows for the traces.
    pub canvas: u16,
}

/// Lay out the inner rows: the traces get at least [`MIN_ROWS_PER_TRACE`] rows each where
/// the height allows, by folding the readout onto the top border, then the strip onto the
/// bottom border; the time axis shows from 12 rows; ruler lines take what is left (at most 4).
pub fn chart_layout(h: u16, bands: usize, rulers: usize) -> ChartLayout {
    let need = MIN_ROWS_PER_TRACE * (bands.max(1) as u16);
    let axis = h >= 12;
    let mut readout_line = true;
    let mut strip_line = true;
    let fixed = |r: bool, s: bool| u16::from(r) + u16::from(s) + u16::from(axis);
    if h.saturating_sub(fixed(readout_line, strip_line)) < need {
        readout_line = false;
    }
    if h.saturating_sub(fixed(readout_line, strip_line)) < need {
        strip_line = false;
    }
    let f = fixed(readout_line, strip_line);
    let ruler_rows = (rulers.min(4) as u16).min(h.saturating_sub(f + need));
    ChartLayout {
        readout_line,
        strip_line,
        axis,
        ruler_rows,
        canvas: h.saturating_sub(f + ruler_rows),
    }
}

/// Draw the chart pane.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let Some(o) = &app.open else { return };
    let zoom = o
        .chart
        .filter(ChartView::zoomed)
        .map(|c| format!(" · zoom {:.0}x ", c.duration / c.span().max(1.0)))
        .unwrap_or_else(|| " ".to_string());
    // Another sport says so in the title (its speed scale reads km/h or mph, not pace).
    let sport = o
        .analysed
        .as_ref()
        .map(|a| &a.session.sport)
        .filter(|s| !s.analysed_as_running())
        .map(|s| format!(" · {}", s.title()))
        .unwrap_or_default();
    let earlier = o
        .context
        .overlaid()
        .map(|r| format!(" · dotted: earlier run of {}", r.day))
        .unwrap_or_default();
    let title = format!(" Chart{sport}{earlier}{zoom}");
    let (Some(a), Some(view)) = (o.analysed.as_ref(), o.chart) else {
        let block = pane_block(app, title, app.focus == Focus::Chart);
        let inner = block.inner(area);
        block.render(area, buf);
        let text = match &o.load_error {
            Some(e) => Line::styled(crate::roster::printable(e), t.warn),
            None => Line::styled("reading the session…", t.dim),
        };
        // A long error (a path and its reason) wraps; it is never cut.
        Paragraph::new(text)
            .wrap(ratatui::widgets::Wrap { trim: false })
            .render(inner, buf);
        return;
    };
    let units = app
        .athlete(o.athlete)
        .map(|x| x.profile.units)
        .unwrap_or_default();
    let s = &a.session;
    let running = s.sport.analysed_as_running();
    let h = area.height.saturating_sub(2);
    let inner_w = area.width.saturating_sub(2);
    let plot_w = inner_w.saturating_sub(GUTTER);
    // Bands.
    let cols = plot_w as usize * 2;
    let speed_ok: Vec<bool> = sample_mask(s, &s.flags, ChannelKind::Speed)
        .into_iter()
        .map(|m| !m)
        .collect();
    let stats: Vec<(f64, f64, RulerStats)> = o
        .rulers
        .iter()
        .map(|r| (r.from_s, r.to_s, ruler_stats(s, r.from_s, r.to_s, units)))
        .collect();
    let mut bands: Vec<Band> = Vec::new();
    if let Some(sp) = &s.speed {
        let smooth = smoothed_speed(&s.t, &sp.values, &speed_ok);
        let c = downsample(&s.t, &smooth, Some(&speed_ok), view.from, view.to, cols);
        if let Some((mut lo, hi)) = robust_bounds(&c) {
            lo = lo.max(hi * PACE_FLOOR_FRACTION).max(0.3);
            let hi = if hi - lo < 0.2 { lo + 0.2 } else { hi };
            bands.push(Band {
                cols: c,
                lo,
                hi,
                style: t.pace,
                labels: [hi, lo].map(|v| scale_label(v, units, running)),
                fits: stats
                    .iter()
                    .filter_map(|(a, b, st)| st.speed.map(|f| (*a, *b, f)))
                    .collect(),
                marker: Marker::Braille,
                overlay: overlay_dots(o, &view, plot_w),
                overlay_style: t.overlay,
            });
        }
    }
    if let Some(hr) = &s.hr {
        let c = downsample(&s.t, &hr.values, None, view.from, view.to, cols);
        if let Some((lo, hi)) = band_bounds(&c) {
            let (lo, hi) = (lo - 1.0, hi + 1.0);
            bands.push(Band {
                cols: c,
                lo,
                hi,
                style: t.hr,
                labels: [format!("{hi:.0} bpm"), format!("{lo:.0} bpm")],
                fits: stats
                    .iter()
                    .filter_map(|(a, b, st)| st.hr.map(|f| (*a, *b, f)))
                    .collect(),
                marker: hr_marker(t.plain),
                overlay: Vec::new(),
                overlay_style: t.overlay,
            });
        }
    }
    if view.elevation {
        if let Some(alt) = &s.altitude {
            let c = downsample(&s.t, &alt.values, None, view.from, view.to, cols);
            if let Some((lo, hi)) = band_bounds(&c) {
                let mid = (lo + hi) / 2.0;
                let (lo, hi) = if hi - lo < 10.0 {
                    (mid - 5.0, mid + 5.0)
                } else {
                    (lo, hi)
                };
                bands.push(Band {
                    cols: c,
                    lo,
                    hi,
                    style: t.elevation,
                    labels: [format!("{hi:.0} m"), format!("{lo:.0} m")],
                    fits: Vec::new(),
                    marker: Marker::Braille,
                    overlay: Vec::new(),
                    overlay_style: t.overlay,
                });
            }
        }
    }
    let lay = chart_layout(h, bands.len(), stats.len());
    // The readout: its own line, or on the top border when the traces need the row.
    let mut read = readout_parts(s, view.cursor, units);
    if let Some(p) = o.pending_ruler {
        // Before cadence and altitude: it is what the coach is doing.
        read.insert(3.min(read.len()), format!("ruler from {}", format_clock(p)));
    }
    let legend_spans: Vec<Span> = legend(running, t.plain)
        .into_iter()
        .map(|(text, part)| {
            let style = match part {
                LegendPart::Pace => t.pace,
                LegendPart::Hr => t.hr,
                LegendPart::Sep => t.dim,
            };
            Span::styled(text, style)
        })
        .collect();
    let legend_w: usize = legend_spans
        .iter()
        .map(|s| s.content.chars().count())
        .sum::<usize>()
        + 2;
    let border_room = (area.width as usize).saturating_sub(4);
    let title_line = if lay.readout_line {
        Line::raw(title)
    } else {
        // Keep the most important parts of the readout that fit beside the title.
        let mut parts = read.clone();
        let head = title.trim_end().to_string();
        let text = loop {
            let text = format!("{head} · {} ", parts.join(" · "));
            if text.chars().count() <= border_room || parts.len() <= 1 {
                break text;
            }
            parts.pop();
        };
        Line::styled(text, t.cursor)
    };
    let title_w = title_line.width();
    let mut block = pane_block(app, title_line, app.focus == Focus::Chart);
    if title_w + legend_w < border_room {
        let mut spans = vec![Span::raw(" ")];
        spans.extend(legend_spans);
        spans.push(Span::raw(" "));
        block = block.title(Line::from(spans).right_aligned());
    }
    let inner = block.inner(area);
    block.render(area, buf);
    if h < 2 || inner.width <= GUTTER + 4 {
        return;
    }
    let mut y = inner.y;
    if lay.readout_line {
        Paragraph::new(Line::styled(
            leading_parts(&read, " · ", inner.width as usize),
            t.cursor,
        ))
        .render(Rect::new(inner.x, y, inner.width, 1), buf);
        y += 1;
    }
    let canvas_h = lay.canvas;
    // Heights: pace gets the most room.
    let weights: Vec<u16> = bands
        .iter()
        .enumerate()
        .map(|(i, _)| match (i, bands.len()) {
            (0, 1) => 10,
            (0, 2) => 11,
            (1, 2) => 9,
            (0, _) => 9,
            (1, _) => 7,
            _ => 4,
        })
        .collect();
    let total_w: u16 = weights.iter().sum::<u16>().max(1);
    let mut left = canvas_h;
    let plot_area = Rect::new(inner.x + GUTTER, y, plot_w, canvas_h);
    shade_work(app, o.review.as_ref(), &view, plot_area, buf);
    let canvas_top = y;
    for (i, band) in bands.iter().enumerate() {
        let bh = if i + 1 == bands.len() {
            left
        } else {
            (canvas_h * weights.get(i).copied().unwrap_or(1) / total_w)
                .max(MIN_ROWS_PER_TRACE.min(canvas_h / bands.len() as u16))
                .max(1)
                .min(left)
        };
        let r = Rect::new(inner.x, y, inner.width, bh);
        render_band(
            band,
            &view,
            t.cursor,
            t.ruler,
            o.pending_ruler,
            r,
            buf,
            band.style,
        );
        y += bh;
        left -= bh;
    }
    if bands.is_empty() {
        Paragraph::new(Line::styled("no speed or heart-rate data", t.dim))
            .render(Rect::new(inner.x, y, inner.width, 1), buf);
    }
    y = canvas_top + canvas_h;
    // Strip: work intervals and flagged data; on the bottom border when folded.
    let strip = strip_line(s, o.review.as_ref(), &view, plot_w as usize);
    let border = if app.focus == Focus::Chart {
        t.border_focus
    } else {
        t.border
    };
    let strip_y = if lay.strip_line {
        y
    } else {
        area.y + area.height.saturating_sub(1)
    };
    let mut spans = vec![if lay.strip_line {
        Span::styled(format!("{:<w$}", "work/flag", w = GUTTER as usize), t.dim)
    } else {
        Span::styled(format!("{:─<w$}", "─work", w = GUTTER as usize), border)
    }];
    for (ch, kind) in strip {
        let style = match kind {
            StripMark::Flag => t.flagged,
            StripMark::Work => t.work,
            StripMark::None if !lay.strip_line => border,
            StripMark::None => t.dim,
        };
        let ch = if kind == StripMark::None && !lay.strip_line {
            '─'
        } else {
            ch
        };
        spans.push(Span::styled(ch.to_string(), style));
    }
    Paragraph::new(Line::from(spans)).render(Rect::new(inner.x, strip_y, inner.width, 1), buf);
    if lay.strip_line {
        y += 1;
    }
    if lay.axis {
        let axis = time_axis(&view, plot_w as usize);
        Paragraph::new(Line::from(vec![
            Span::styled(" ".repeat(GUTTER as usize), t.dim),
            Span::styled(axis, t.dim),
        ]))
        .render(Rect::new(inner.x, y, inner.width, 1), buf);
        y += 1;
    }
    let skip = stats.len().saturating_sub(lay.ruler_rows as usize);
    for (k, (a, b, st)) in stats.iter().enumerate().skip(skip) {
        let line = ruler_line(k + 1, *a, *b, st, units);
        let parts: Vec<String> = line.split("  ").map(str::to_string).collect();
        Paragraph::new(Line::styled(
            leading_parts(&parts, "  ", inner.width as usize),
            t.ruler,
        ))
        .render(Rect::new(inner.x, y, inner.width, 1), buf);
        y += 1;
    }
}

/// The dots of the earlier run the chart overlays (none when off): its reps laid on this
/// session's reps ([`overlay_points`]), one dot per plot column.
fn overlay_dots(
    o: &crate::tui::app::OpenSession,
    view: &ChartView,
    plot_w: u16,
) -> Vec<(f64, f64)> {
    let (Some(run), Some(review)) = (o.context.overlaid(), o.review.as_ref()) else {
        return Vec::new();
    };
    let mut reps: Vec<(f64, f64)> = review.work().map(|m| (m.start_s, m.end_s)).collect();
    reps.sort_by(|a, b| a.0.total_cmp(&b.0));
    let step = view.span() / f64::from(plot_w.max(1));
    overlay_points(&reps, run, view.from, view.to)
        .iter()
        .flat_map(|piece| dotted(piece, step))
        .collect()
}

/// What one column of the strip shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StripMark {
    /// Nothing.
    None,
    /// Inside a work interval.
    Work,
    /// Flagged data.
    Flag,
}

/// The strip under the traces: `×` where data is flagged, `━` in work intervals (with the
/// work-interval number at its start when there is room).
pub fn strip_line(
    s: &Session,
    review: Option<&Review>,
    view: &ChartView,
    width: usize,
) -> Vec<(char, StripMark)> {
    let mut out = vec![(' ', StripMark::None); width];
    if width == 0 {
        return out;
    }
    let col_t = |c: usize| view.from + (c as f64 + 0.5) / width as f64 * view.span();
    let col_of = |t: f64| (((t - view.from) / view.span()) * width as f64).floor();
    if let Some(r) = review {
        for m in r.work() {
            for (c, cell) in out.iter_mut().enumerate() {
                let tc = col_t(c);
                if tc >= m.start_s && tc < m.end_s {
                    *cell = ('━', StripMark::Work);
                }
            }
            if let Some(n) = m.work_number {
                let c = col_of(m.start_s);
                let label = n.to_string();
                let len = label.chars().count();
                let end = col_of(m.end_s);
                if c >= 0.0 && end - c >= len as f64 + 1.0 {
                    for (k, ch) in label.chars().enumerate() {
                        if let Some(cell) = out.get_mut(c as usize + k) {
                            *cell = (ch, StripMark::Work);
                        }
                    }
                }
            }
        }
    }
    for f in &s.flags {
        for (c, cell) in out.iter_mut().enumerate() {
            let (a, b) = (
                view.from + c as f64 / width as f64 * view.span(),
                view.from + (c + 1) as f64 / width as f64 * view.span(),
            );
            if f.from_s <= b && f.to_s >= a {
                *cell = ('×', StripMark::Flag);
            }
        }
    }
    out
}

/// The time axis: start, middle and end of the window.
pub fn time_axis(view: &ChartView, width: usize) -> String {
    let a = format_clock(view.from);
    let m = format_clock((view.from + view.to) / 2.0);
    let b = format_clock(view.to);
    let mut line: Vec<char> = vec![' '; width];
    let put = |line: &mut Vec<char>, at: usize, s: &str| {
        for (k, ch) in s.chars().enumerate() {
            if let Some(c) = line.get_mut(at + k) {
                *c = ch;
            }
        }
    };
    put(&mut line, 0, &a);
    let mid = (width / 2).saturating_sub(m.chars().count() / 2);
    if mid > a.chars().count() + 1 {
        put(&mut line, mid, &m);
    }
    let end = width.saturating_sub(b.chars().count());
    if end > mid + m.chars().count() {
        put(&mut line, end, &b);
    }
    line.into_iter().collect()
}

fn shade_work(app: &App, review: Option<&Review>, view: &ChartView, plot: Rect, buf: &mut Buffer) {
    if app.theme.plain {
        return;
    }
    let Some(r) = review else { return };
    let Some(bg) = app.theme.work.fg.map(|_| Color::Rgb(36, 44, 58)) else {
        return;
    };
    let w = plot.width as usize;
    for c in 0..w {
        let tc = view.from + (c as f64 + 0.5) / w as f64 * view.span();
        if r.work().any(|m| tc >= m.start_s && tc < m.end_s) {
            for yy in plot.y..plot.y + plot.height {
                if let Some(cell) = buf.cell_mut((plot.x + c as u16, yy)) {
                    cell.set_bg(bg);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn downsample_keeps_spikes_and_gaps() {
        let t: Vec<f64> = (0..100).map(f64::from).collect();
        let mut v: Vec<Option<f64>> = vec![Some(3.0); 100];
        v[37] = Some(9.0); // a one-sample spike
        v[60] = None;
        let cols = downsample(&t, &v, None, 0.0, 99.0, 10);
        assert_eq!(cols.len(), 10);
        let spike = cols[3].unwrap();
        assert_eq!(spike.max, 9.0);
        assert_eq!(spike.min, 3.0);
        assert!(cols.iter().flatten().filter(|c| c.max > 3.0).count() == 1);
        // The last sample lands in the last column.
        assert!(cols[9].is_some());
        // A window with no samples gives empty columns.
        let none = downsample(&t, &v, None, 200.0, 300.0, 5);
        assert!(none.iter().all(Option::is_none));
        // Unusable samples are skipped.
        let mut ok = vec![true; 100];
        ok[37] = false;
        let cols = downsample(&t, &v, Some(&ok), 0.0, 99.0, 10);
        assert_eq!(cols[3].unwrap().max, 3.0);
        // Degenerate inputs.
        assert!(downsample(&t, &v, None, 5.0, 5.0, 4)
            .iter()
            .all(Option::is_none));
        assert!(downsample(&t, &v, None, 0.0, 10.0, 0).is_empty());
    }

    #[test]
    fn downsample_first_and_last_follow_time() {
        let t = [0.0, 1.0, 2.0, 3.0];
        let v = [Some(1.0), Some(5.0), Some(2.0), Some(4.0)];
        let cols = downsample(&t, &v, None, 0.0, 3.0, 1);
        assert_eq!(
            cols[0],
            Some(ColumnRange {
                min: 1.0,
                max: 5.0,
                first: 1.0,
                last: 4.0
            })
        );
    }

    #[test]
    fn smoothed_speed_is_the_exact_centred_mean() {
        // Irregular sampling (1 s, a 4 s gap, 2 s steps), missing values and unusable
        // samples: invented data, checked against the mean computed the slow way.
        let mut t: Vec<f64> = (0..60).map(f64::from).collect();
        t.extend((0..20).map(|k| 64.0 + 2.0 * f64::from(k)));
        let values: Vec<Option<f64>> = t
            .iter()
            .enumerate()
            .map(|(i, &x)| (i % 17 != 5).then(|| 3.0 + (x * 0.7).sin() + 0.01 * x))
            .collect();
        let usable: Vec<bool> = (0..t.len()).map(|i| !(20..24).contains(&i)).collect();
        let got = smoothed_speed(&t, &values, &usable);
        let half = PACE_SMOOTH_S / 2.0;
        assert_eq!(got.len(), t.len());
        for i in 0..t.len() {
            let own = usable[i].then_some(values[i]).flatten();
            let window: Vec<f64> = (0..t.len())
                .filter(|&j| (t[j] - t[i]).abs() <= half && usable[j])
                .filter_map(|j| values[j])
                .collect();
            match own {
                None => assert_eq!(got[i], None, "sample {i} not usable stays a gap"),
                Some(_) => {
                    let want = window.iter().sum::<f64>() / window.len() as f64;
                    let g = got[i].expect("a usable sample has a mean");
                    assert!((g - want).abs() < 1e-9, "sample {i}: {g} vs {want}");
                }
            }
        }
        // At 1 Hz the window holds 15 samples: a lone spike is diluted fifteenfold.
        let t: Vec<f64> = (0..41).map(f64::from).collect();
        let mut v = vec![Some(3.0); 41];
        v[20] = Some(18.0);
        let got = smoothed_speed(&t, &v, &[true; 41]);
        assert!((got[20].unwrap() - 4.0).abs() < 1e-12);
        assert!((got[13].unwrap() - 4.0).abs() < 1e-12);
        assert_eq!(got[12], Some(3.0));
    }

    #[test]
    fn layout_folds_readout_then_strip() {
        // 80x24: six inner rows, two traces: both folds, three rows each.
        let l = chart_layout(6, 2, 0);
        assert!(!l.readout_line && !l.strip_line && !l.axis);
        assert_eq!(l.canvas, 6);
        // Seven rows: the readout folds, the strip keeps its line.
        let l = chart_layout(7, 2, 0);
        assert!(!l.readout_line && l.strip_line);
        assert_eq!(l.canvas, 6);
        // Eight rows: nothing folds.
        let l = chart_layout(8, 2, 0);
        assert!(l.readout_line && l.strip_line);
        assert_eq!(l.canvas, 6);
        // Tall: the axis shows and rulers take rows the traces can spare (at most 4).
        let l = chart_layout(18, 2, 6);
        assert!(l.axis && l.readout_line && l.strip_line);
        assert_eq!(l.ruler_rows, 4);
        assert_eq!(l.canvas, 11);
        // Rulers never take a trace's rows.
        let l = chart_layout(9, 2, 3);
        assert_eq!(l.ruler_rows, 1);
        assert_eq!(l.canvas, 6);
    }

    #[test]
    fn lines_of_values_lose_whole_values() {
        let parts: Vec<String> = ["16:56", "pace 3:47/km", "HR 184", "cad 170"]
            .map(String::from)
            .to_vec();
        assert_eq!(
            leading_parts(&parts, " · ", 80),
            "16:56 · pace 3:47/km · HR 184 · cad 170"
        );
        assert_eq!(
            leading_parts(&parts, " · ", 30),
            "16:56 · pace 3:47/km · HR 184"
        );
        assert_eq!(leading_parts(&parts, " · ", 28), "16:56 · pace 3:47/km");
        assert_eq!(leading_parts(&parts, " · ", 3), "16:56");
    }
}
