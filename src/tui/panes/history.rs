//! The history view of one athlete: weekly volume, load with the acute/chronic ratio and its
//! bands, fitness and fatigue, efficiency, long-run decoupling, best efforts with the
//! critical-speed fit, and race predictions. Everything comes from the `History` the app
//! built when the view opened; drawing only reads it.

use chrono::NaiveDate;
use ratatui::buffer::Buffer;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Style};
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::canvas::{Canvas, Line as CLine, Points};
use ratatui::widgets::{Paragraph, Widget, Wrap};

use crate::analysis::history::{fixed, fixed_distance as format_distance, DailyValue, History};
use crate::model::units::{format_clock, format_pace};
use crate::model::Units;
use crate::tui::action::Action;
use crate::tui::app::{App, HistoryView};
use crate::tui::theme::Theme;
use crate::tui::ui::pane_block;

/// Sessions, sessions with a cached review, and their total distance in metres.
pub fn totals(app: &App, athlete_id: &str) -> (usize, usize, f64) {
    let rows = app.rows.get(athlete_id).map(Vec::as_slice).unwrap_or(&[]);
    let mut analysed = 0;
    let mut dist = 0.0;
    for r in rows {
        if let Some(rv) = app.reviews.get(&r.session_id) {
            analysed += 1;
            dist += rv.session.distance_m.unwrap_or(0.0);
        }
    }
    (rows.len(), analysed, dist)
}

/// Panes at least this wide and tall get the two-column layout with every chart.
const ROOMY_W: u16 = 96;
const ROOMY_H: u16 = 32;

fn colour(style: Style) -> Color {
    style.fg.unwrap_or(Color::Reset)
}

fn opt(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map(f).unwrap_or_else(|| "-".to_string())
}

/// Draw the history view for the athlete under the roster cursor.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let Some(a) = app
        .cursor
        .athlete
        .as_deref()
        .and_then(|id| app.roster.athlete(id))
    else {
        let block = pane_block(app, " History ", false);
        let inner = block.inner(area);
        block.render(area, buf);
        Paragraph::new("no athlete selected").render(inner, buf);
        return;
    };
    let title = format!(" History: {} ", crate::roster::printable(&a.profile.name));
    let block = pane_block(app, title, false);
    let inner = block.inner(area);
    block.render(area, buf);
    let Some(hv) = app.history.as_ref().filter(|h| h.athlete == a.id) else {
        let (n, analysed, dist) = totals(app, &a.id);
        let lines = vec![
            Line::styled(
                format!(
                    "{n} session(s), {analysed} analysed, {}",
                    format_distance(dist, a.profile.units)
                ),
                t.text,
            ),
            Line::styled(
                format!("{} builds the history", app.keymap.first(Action::History)),
                t.dim,
            ),
        ];
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .render(inner, buf);
        return;
    };
    let h = &hv.history;
    let u = a.profile.units;
    let roomy = inner.width >= ROOMY_W && inner.height >= ROOMY_H;

    // Top: the window, the cautions (always shown, in full) and the criticism note.
    let weeks = hv.window.shown_weeks();
    let mut top = vec![Line::from(vec![
        Span::styled(
            format!(
                "{} to {}: {} week{}, {} session{}",
                h.from,
                h.to,
                weeks,
                if weeks == 1 { "" } else { "s" },
                h.sessions,
                if h.sessions == 1 { "" } else { "s" }
            ),
            t.text,
        ),
        Span::styled(
            format!(
                "   {}/{} pan, {}/{} zoom, {} back",
                app.keymap.first(Action::Left),
                app.keymap.first(Action::Right),
                app.keymap.first(Action::ZoomIn),
                app.keymap.first(Action::ZoomOut),
                app.keymap.first(Action::History)
            ),
            t.dim,
        ),
    ])];
    let when = when(hv);
    for c in &h.cautions {
        let text = if roomy {
            c.clone()
        } else {
            // Small screens: the first sentence and the gist of the medical wording; the
            // full text is in the roomy layout and in `splitdesk trends`.
            let first = c.split(". ").next().unwrap_or(c).trim_end_matches('.');
            format!("{first}. Coaching aid, not medical advice.")
        };
        top.push(Line::styled(format!("CAUTION: {text}"), t.caution));
    }
    // Small screens with a caution for today already: that one says it; room goes to the bars.
    let spikes_line = roomy || h.cautions.is_empty();
    if let (true, Some(first), Some(last)) =
        (spikes_line, h.load_spikes.first(), h.load_spikes.last())
    {
        // The days in the window whose load took the ratio to the caution band: every day on
        // a roomy screen when there are few, else a summary (`splitdesk trends` lists all).
        let n = h.load_spikes.len();
        let text = if roomy && n <= 4 {
            let days: Vec<String> = h
                .load_spikes
                .iter()
                .map(|d| format!("{} ({:.2})", d.date, d.ratio))
                .collect();
            format!(
                "load rose sharply (ratio {:.1}+) on {}. Coaching aid, not medical advice: look \
                 at how the athlete is coping.",
                h.acute_chronic_bands.caution,
                days.join(", ")
            )
        } else if roomy {
            let top = h
                .load_spikes
                .iter()
                .max_by(|a, b| a.ratio.total_cmp(&b.ratio))
                .unwrap_or(last);
            format!(
                "load rose sharply (ratio {:.1}+) on {n} days from {} to {}, highest {:.2} on \
                 {}. Coaching aid, not medical advice: look at how the athlete is coping.",
                h.acute_chronic_bands.caution, first.date, last.date, top.ratio, top.date
            )
        } else if n == 1 {
            format!("load spike on {}.", last.date)
        } else {
            format!("load spikes on {n} days, last {}.", last.date)
        };
        top.push(Line::styled(format!("CAUTION: {text}"), t.caution));
    }
    let criticism = &h.acute_chronic_bands.criticism;
    let note = if roomy {
        criticism.clone()
    } else {
        // The last clause is the one-line gist of the criticism.
        let gist = criticism.rsplit("; ").next().unwrap_or(criticism);
        format!("Ratio: {gist}")
    };
    top.push(Line::styled(note, t.dim));
    let top_h = wrapped_height(&top, inner.width).min(inner.height);
    let [top_area, rest] =
        Layout::vertical([Constraint::Length(top_h), Constraint::Min(0)]).areas(inner);
    Paragraph::new(top)
        .wrap(Wrap { trim: false })
        .render(top_area, buf);
    if rest.height == 0 {
        return;
    }

    if roomy {
        let [left, right] =
            Layout::horizontal([Constraint::Percentage(55), Constraint::Percentage(45)])
                .spacing(2)
                .areas(rest);
        let [vol, load, fit] = Layout::vertical([
            Constraint::Ratio(1, 3),
            Constraint::Ratio(1, 3),
            Constraint::Ratio(1, 3),
        ])
        .areas(left);
        volume(t, hv, u, vol, buf);
        load_chart(t, h, &when, load, buf);
        fitness_chart(t, h, &when, fit, buf);
        let [eff, best, pred] = Layout::vertical([
            Constraint::Ratio(1, 3),
            Constraint::Ratio(1, 3),
            Constraint::Ratio(1, 3),
        ])
        .areas(right);
        efficiency(t, h, eff, buf);
        best_efforts(t, h, u, best, buf);
        predictions(t, h, pred, buf);
    } else {
        // Stacked: the week bars, then every other section collapsed to a line or two.
        let bars_h = if rest.height >= 12 {
            6
        } else {
            rest.height / 2
        };
        let [vol, text] =
            Layout::vertical([Constraint::Length(bars_h), Constraint::Min(0)]).areas(rest);
        volume(t, hv, u, vol, buf);
        Paragraph::new(collapsed(t, h, u, &when))
            .wrap(Wrap { trim: false })
            .render(text, buf);
    }
}

/// Rows the lines take when wrapped at `width` (word wrapping may take a little more; one
/// spare row per long line covers it).
fn wrapped_height(lines: &[Line], width: u16) -> u16 {
    let w = usize::from(width.max(1));
    lines
        .iter()
        .map(|l| {
            let n = l.width();
            if n <= w {
                1
            } else {
                n.div_ceil(w) + 1
            }
        })
        .sum::<usize>()
        .min(usize::from(u16::MAX)) as u16
}

fn section_title(t: &Theme, text: String, area: Rect, buf: &mut Buffer) -> Rect {
    if area.height == 0 {
        return area;
    }
    let text = super::fit(&text, usize::from(area.width));
    Paragraph::new(Line::styled(text, t.heading)).render(Rect { height: 1, ..area }, buf);
    Rect {
        y: area.y + 1,
        height: area.height - 1,
        ..area
    }
}

/// "today", or "on DATE" when the window was panned back: the day the latest values are of.
fn when(hv: &HistoryView) -> String {
    if hv.at_today() {
        "today".to_string()
    } else {
        format!("on {}", hv.window.end)
    }
}

fn ratio_line(h: &History, when: &str) -> String {
    let b = &h.acute_chronic_bands;
    match &h.acute_chronic_latest {
        Some(l) => format!(
            "ratio {:.2} {when} ({}), band {:.1}-{:.1}, caution {:.1}+",
            l.value, l.band, b.low, b.high, b.caution
        ),
        None => format!(
            "no ratio {when}; band {:.1}-{:.1}, caution {:.1}+",
            b.low, b.high, b.caution
        ),
    }
}

fn readiness_line(h: &History, when: &str) -> String {
    let last = |s: &[DailyValue]| s.last().map(|v| v.value);
    format!(
        "fitness {}  fatigue {}  readiness {when} {}",
        opt(last(&h.fitness), |v| fixed(v, 0)),
        opt(last(&h.fatigue), |v| fixed(v, 0)),
        opt(last(&h.readiness), |v| {
            let s = fixed(v, 0);
            if s.starts_with('-') {
                s
            } else {
                format!("+{s}")
            }
        }),
    )
}

fn cs_line(h: &History, u: Units) -> String {
    match (h.critical_speed_mps, h.d_prime_m) {
        (Some(cs), Some(dp)) => format!(
            "critical speed {cs:.2} m/s ({}), D′ {dp:.0} m, R² {}",
            format_pace(cs, u),
            opt(h.critical_speed_fit.r2, |r| format!("{r:.3}"))
        ),
        _ => format!(
            "no critical speed: {}",
            h.critical_speed_fit.refusal.as_deref().unwrap_or("no fit")
        ),
    }
}

/// Every section after the week bars as a few lines (small panes).
fn collapsed(t: &Theme, h: &History, u: Units, when: &str) -> Vec<Line<'static>> {
    let mut v = vec![Line::styled(cs_line(h, u), t.text)];
    if let Some(c) = &h.critical_speed_fit.caution {
        v.push(Line::styled(format!("Careful: {c}."), t.warn));
    }
    v.extend([
        Line::styled(ratio_line(h, when), t.text),
        Line::styled(readiness_line(h, when), t.text),
        Line::styled(format!("Efficiency: {}", h.efficiency_trend.text), t.text),
    ]);
    let l = &h.long_run_decoupling;
    let above = l.runs.iter().filter(|r| r.above_line).count();
    v.push(Line::styled(
        format!(
            "Long runs: {} with decoupling, {above} above {:.0} %",
            l.runs.len(),
            l.line_pct
        ),
        if above > 0 { t.warn } else { t.text },
    ));
    let preds: Vec<String> = h
        .predictions
        .iter()
        .map(|p| {
            format!(
                "{} {}/{}",
                p.race,
                opt(p.critical_speed_s, format_clock),
                opt(p.riegel_s, format_clock)
            )
        })
        .collect();
    if !preds.is_empty() {
        v.push(Line::styled(
            format!("Predicted (critical speed/Riegel): {}", preds.join(", ")),
            t.text,
        ));
        v.push(Line::styled(h.prediction_caveat.clone(), t.dim));
    }
    v
}

/// Weekly volume bars of the window's weeks: columns as wide as fit (3 to 5 cells); when
/// even 3 do not fit, the latest weeks of the window.
fn volume(t: &Theme, hv: &HistoryView, u: Units, area: Rect, buf: &mut Buffer) {
    let weeks = &hv.history.weekly;
    if area.height < 3 || area.width < 6 {
        return;
    }
    let col = (usize::from(area.width) / weeks.len().max(1)).clamp(3, 5);
    let fit = (usize::from(area.width) / col).max(1);
    let start = weeks.len().saturating_sub(fit);
    let shown = weeks.get(start..).unwrap_or(&[]);
    let range = match (shown.first(), shown.last()) {
        (Some(a), Some(b)) => format!(" {} to {}", a.week, b.week),
        _ => String::new(),
    };
    let body = section_title(
        t,
        format!("Weekly volume ({}){range}", u.label()),
        area,
        buf,
    );
    if shown.is_empty() {
        Paragraph::new(Line::styled("no weeks in the window", t.dim)).render(body, buf);
        return;
    }
    // Rows: bars, the value, the week label.
    let bar_rows = body.height.saturating_sub(2);
    let max = shown
        .iter()
        .map(|w| w.distance_m)
        .fold(0.0_f64, f64::max)
        .max(1.0);
    let full = if t.ascii { "#" } else { "█" };
    const EIGHTHS: [&str; 8] = [" ", "▁", "▂", "▃", "▄", "▅", "▆", "▇"];
    for (k, w) in shown.iter().enumerate() {
        let x = body.x + (k * col) as u16;
        let eighths = (w.distance_m / max * f64::from(bar_rows) * 8.0).round() as u32;
        for r in 0..bar_rows {
            let y = body.y + bar_rows - 1 - r;
            let filled = eighths.saturating_sub(u32::from(r) * 8).min(8);
            let sym = if filled >= 8 {
                full
            } else if t.ascii {
                if filled >= 4 {
                    "#"
                } else {
                    " "
                }
            } else {
                EIGHTHS.get(filled as usize).copied().unwrap_or(full)
            };
            for dx in 0..(col as u16 - 1) {
                if let Some(c) = buf.cell_mut((x + dx, y)) {
                    c.set_symbol(sym).set_style(t.pace);
                }
            }
        }
        let value = format!("{:.0}", (w.distance_m / u.metres()).max(0.0) + 0.0);
        let label = w.week.rsplit('-').next().unwrap_or(&w.week);
        // Narrow columns drop the `W`: `44` for `W44`.
        let label = if col - 1 < label.chars().count() {
            label.trim_start_matches('W')
        } else {
            label
        };
        buf.set_stringn(x, body.y + bar_rows, value, col - 1, t.text);
        buf.set_stringn(x, body.y + bar_rows + 1, label, col - 1, t.dim);
    }
}

fn series_bounds<'a>(series: impl Iterator<Item = &'a f64>) -> (f64, f64) {
    series.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
        (lo.min(*v), hi.max(*v))
    })
}

/// Daily load (vertical strokes) under the acute/chronic ratio line with its bands.
fn load_chart(t: &Theme, h: &History, when: &str, area: Rect, buf: &mut Buffer) {
    let body = section_title(t, format!("Load · {}", ratio_line(h, when)), area, buf);
    if body.height < 3 || h.daily_load.is_empty() {
        return;
    }
    // The last row is the time axis: dates under the days they name.
    let axis_y = body.y + body.height - 1;
    let body = Rect {
        height: body.height - 1,
        ..body
    };
    let b = &h.acute_chronic_bands;
    let n = h.daily_load.len() as f64;
    let max_load = h
        .daily_load
        .iter()
        .map(|d| d.value)
        .fold(0.0_f64, f64::max)
        .max(1.0);
    let ratios: Vec<(f64, f64)> = h
        .acute_chronic_ratio
        .iter()
        .enumerate()
        .filter_map(|(k, r)| r.value.map(|v| (k as f64, v)))
        .collect();
    let top = ratios
        .iter()
        .map(|(_, v)| *v)
        .fold(b.caution + 0.3, f64::max);
    let label = format!("{top:.1}");
    buf.set_stringn(body.x, body.y, label, 4, t.dim);
    buf.set_stringn(body.x, body.y + body.height - 1, "0", 4, t.dim);
    let plot = Rect {
        x: body.x + 4,
        width: body.width.saturating_sub(4),
        ..body
    };
    let (load_c, ratio_c) = (colour(t.elevation), colour(t.pace));
    let (band_c, caution_c) = (colour(t.dim), colour(t.caution));
    Canvas::default()
        .marker(Marker::Braille)
        .x_bounds([0.0, n])
        .y_bounds([0.0, top])
        .paint(|ctx| {
            for (k, d) in h.daily_load.iter().enumerate() {
                if d.value > 0.0 {
                    let x = k as f64 + 0.5;
                    let y = d.value / max_load * top * 0.5;
                    ctx.draw(&CLine::new(x, 0.0, x, y, load_c));
                }
            }
            ctx.layer();
            for (y, c) in [(b.low, band_c), (b.high, band_c), (b.caution, caution_c)] {
                ctx.draw(&CLine::new(0.0, y, n, y, c));
            }
            for w in ratios.windows(2) {
                if let [(x0, y0), (x1, y1)] = w {
                    ctx.draw(&CLine::new(*x0 + 0.5, *y0, *x1 + 0.5, *y1, ratio_c));
                }
            }
        })
        .render(plot, buf);
    let days: Vec<NaiveDate> = h.daily_load.iter().map(|d| d.date).collect();
    date_axis(t, &days, plot.x, plot.width, axis_y, buf);
}

/// Dates under a daily chart of `days` drawn `width` cells wide from `x`: the first and the
/// last day, and days between where they fit (one label per 14 cells or more), each
/// centred on its day's column and kept inside the chart.
fn date_axis(t: &Theme, days: &[NaiveDate], x: u16, width: u16, y: u16, buf: &mut Buffer) {
    const LABEL: u16 = 6; // "12 Oct"
    const GAP: u16 = 14;
    let n = days.len();
    if n == 0 || width < LABEL {
        return;
    }
    let labels = usize::from((width / GAP).max(1)).min(n.saturating_sub(1).max(1));
    let mut next_free = x;
    for k in 0..=labels {
        let idx = (k * (n - 1)).checked_div(labels).unwrap_or(0);
        let Some(day) = days.get(idx) else { continue };
        let text = day.format("%-d %b").to_string();
        let w = text.chars().count() as u16;
        let centre = f64::from(x) + (idx as f64 + 0.5) / n as f64 * f64::from(width);
        let at = (centre - f64::from(w) / 2.0).round().max(f64::from(x)) as u16;
        let at = at.min((x + width).saturating_sub(w));
        if at < next_free {
            continue;
        }
        buf.set_stringn(at, y, &text, usize::from(w), t.dim);
        next_free = at + w + 1;
    }
}

/// Fitness and fatigue lines, readiness today in the title.
fn fitness_chart(t: &Theme, h: &History, when: &str, area: Rect, buf: &mut Buffer) {
    let body = section_title(t, readiness_line(h, when), area, buf);
    if body.height < 2 || h.fitness.is_empty() {
        return;
    }
    let (lo, hi) = series_bounds(h.fitness.iter().chain(&h.fatigue).map(|d| &d.value));
    let (lo, hi) = (lo.min(0.0), hi.max(lo + 1.0));
    buf.set_stringn(body.x, body.y, format!("{hi:.0}"), 4, t.dim);
    buf.set_stringn(
        body.x,
        body.y + body.height - 1,
        format!("{lo:.0}"),
        4,
        t.dim,
    );
    let plot = Rect {
        x: body.x + 4,
        width: body.width.saturating_sub(4),
        ..body
    };
    let n = h.fitness.len() as f64;
    let line = |ctx: &mut ratatui::widgets::canvas::Context, s: &[DailyValue], c: Color| {
        for (k, w) in s.windows(2).enumerate() {
            if let [a, b] = w {
                ctx.draw(&CLine::new(k as f64, a.value, k as f64 + 1.0, b.value, c));
            }
        }
    };
    Canvas::default()
        .marker(Marker::Braille)
        .x_bounds([0.0, n])
        .y_bounds([lo, hi])
        .paint(|ctx| {
            line(ctx, &h.fitness, colour(t.pace));
            line(ctx, &h.fatigue, colour(t.hr));
        })
        .render(plot, buf);
    let key = Line::from(vec![
        Span::styled("fitness", t.pace),
        Span::styled(" / ", t.dim),
        Span::styled("fatigue", t.hr),
    ]);
    let w = key.width() as u16;
    if plot.width > w {
        Paragraph::new(key).render(Rect::new(plot.x + plot.width - w, plot.y, w, 1), buf);
    }
}

/// Efficiency trend in words with weekly values, then the long-run decoupling list.
fn efficiency(t: &Theme, h: &History, area: Rect, buf: &mut Buffer) {
    let e = &h.efficiency_trend;
    let mut lines = vec![
        Line::styled("Efficiency on easy runs", t.heading),
        Line::styled(e.text.clone(), t.text),
    ];
    let weekly: Vec<String> = e
        .weekly
        .iter()
        .map(|w| {
            let label = w.week.rsplit('-').next().unwrap_or(&w.week);
            format!("{label} {:.3}", w.mean_m_per_beat)
        })
        .collect();
    if !weekly.is_empty() {
        lines.push(Line::styled(
            format!("m/beat: {}", weekly.join("  ")),
            t.dim,
        ));
    }
    let l = &h.long_run_decoupling;
    lines.push(Line::styled(
        format!(
            "Long-run decoupling ({} or more; line {:.0} %)",
            format_clock(l.min_moving_s),
            l.line_pct
        ),
        t.heading,
    ));
    if l.runs.is_empty() {
        lines.push(Line::styled("no long runs with a decoupling", t.dim));
    }
    for r in l.runs.iter().rev() {
        lines.push(Line::styled(
            format!(
                "{} {:>8} {:>5} %{}",
                r.date,
                format_clock(r.moving_s),
                fixed(r.decoupling_pct, 1),
                if r.above_line { "  above the line" } else { "" }
            ),
            if r.above_line { t.warn } else { t.text },
        ));
    }
    Paragraph::new(lines)
        .wrap(Wrap { trim: false })
        .render(area, buf);
}

/// Best speed by duration (log time axis) with the critical-speed curve over its fit range.
fn best_efforts(t: &Theme, h: &History, u: Units, area: Rect, buf: &mut Buffer) {
    let body = section_title(t, cs_line(h, u), area, buf);
    if body.height < 3 || h.best_efforts.is_empty() {
        if body.height > 0 && h.best_efforts.is_empty() {
            Paragraph::new(Line::styled("no best efforts in the window", t.dim)).render(body, buf);
        }
        return;
    }
    let pts: Vec<(f64, f64)> = h
        .best_efforts
        .iter()
        .filter(|b| b.duration_s > 0.0)
        .map(|b| (b.duration_s.ln(), b.speed_mps))
        .collect();
    let (x0, x1) = series_bounds(pts.iter().map(|(x, _)| x));
    let (y0, y1) = series_bounds(pts.iter().map(|(_, y)| y));
    if !x0.is_finite() || !y0.is_finite() {
        return;
    }
    let (x1, y1) = (x1.max(x0 + 0.1), y1.max(y0 + 0.1));
    let pad = (y1 - y0) * 0.1;
    let (y0, y1) = (y0 - pad, y1 + pad);
    let gutter = 10u16;
    buf.set_stringn(body.x, body.y, format_pace(y1, u), 9, t.dim);
    let axis_y = body.y + body.height - 1;
    buf.set_stringn(body.x, axis_y - 1, format_pace(y0, u), 9, t.dim);
    let plot = Rect {
        x: body.x + gutter,
        width: body.width.saturating_sub(gutter),
        height: body.height - 1,
        ..body
    };
    let axis = format!(
        "{} .. {} (log time)",
        format_clock(x0.exp()),
        format_clock(x1.exp())
    );
    buf.set_stringn(plot.x, axis_y, axis, usize::from(plot.width), t.dim);
    let fit = match (h.critical_speed_mps, h.d_prime_m) {
        (Some(cs), Some(dp)) => Some((cs, dp)),
        _ => None,
    };
    let (lo_s, hi_s) = (h.params.cs_min_s, h.params.cs_max_s);
    Canvas::default()
        .marker(Marker::Braille)
        .x_bounds([x0, x1])
        .y_bounds([y0, y1])
        .paint(|ctx| {
            if let Some((cs, dp)) = fit {
                let steps = 40;
                let mut prev: Option<(f64, f64)> = None;
                for k in 0..=steps {
                    let s = lo_s * (hi_s / lo_s).powf(f64::from(k) / f64::from(steps));
                    let p = (s.ln(), (cs + dp / s).clamp(y0, y1));
                    if let Some(q) = prev {
                        ctx.draw(&CLine::new(q.0, q.1, p.0, p.1, colour(t.ruler)));
                    }
                    prev = Some(p);
                }
                ctx.draw(&CLine::new(x0, cs, x1, cs, colour(t.dim)));
            }
            ctx.layer();
            for w in pts.windows(2) {
                if let [a, b] = w {
                    ctx.draw(&CLine::new(a.0, a.1, b.0, b.1, colour(t.pace)));
                }
            }
            ctx.draw(&Points {
                coords: &pts,
                color: colour(t.work),
            });
        })
        .render(plot, buf);
}

/// Predicted race times, critical speed and Riegel side by side, and the caveat.
fn predictions(t: &Theme, h: &History, area: Rect, buf: &mut Buffer) {
    let mut lines = vec![Line::styled(
        format!("{:<14} {:>14} {:>10}", "race", "critical speed", "Riegel"),
        t.heading,
    )];
    for p in &h.predictions {
        lines.push(Line::styled(
            format!(
                "{:<14} {:>14} {:>10}{}",
                p.race,
                opt(p.critical_speed_s, format_clock),
                opt(p.riegel_s, format_clock),
                if p.riegel_beyond_range {
                    " beyond range"
                } else {
                    ""
                }
            ),
            t.text,
        ));
    }
    if let Some(c) = &h.critical_speed_fit.caution {
        lines.push(Line::styled(format!("Careful: {c}."), t.warn));
    }
    lines.push(Line::styled(h.prediction_caveat.clone(), t.dim));
    Paragraph::new(lines)
        .wrap(Wrap { trim: false })
        .render(area, buf);
}
