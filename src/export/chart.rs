//! The session chart as a picture to attach to a message: pace and heart-rate traces on one
//! time axis (pace scale on the left, faster higher; HR on the right), work intervals shaded,
//! flagged data marked, and the coach's rulers. SVG (text labels) or PNG (a small built-in
//! pixel font, no system fonts needed).

use std::fmt::Write as _;

use crate::analysis::review::Review;
use crate::analysis::ruler::{fit_window, RulerFit};
use crate::model::units::format_clock;
use crate::model::{Session, Units};

/// Colours of our own theme (RGB).
const BG: [u8; 3] = [252, 251, 247];
const GRID: [u8; 3] = [225, 222, 214];
const AXIS: [u8; 3] = [90, 88, 82];
const PACE: [u8; 3] = [31, 106, 122];
const HR: [u8; 3] = [178, 74, 46];
const BAND: [u8; 3] = [236, 229, 205];
const FLAG: [u8; 3] = [150, 150, 150];
const RULER_PACE: [u8; 3] = [12, 60, 72];
const RULER_HR: [u8; 3] = [120, 40, 20];

/// Everything drawn, in data units, shared by the SVG and PNG writers.
#[derive(Debug, Clone)]
pub struct ChartModel {
    pub title: String,
    pub units: Units,
    pub t_max: f64,
    /// (t, pace in seconds per unit) of moving stretches; `None` breaks the line.
    pub pace: Vec<Option<(f64, f64)>>,
    pub hr: Vec<Option<(f64, f64)>>,
    /// Slow and fast ends of the pace axis, seconds per unit (slow at the bottom).
    pub pace_range: (f64, f64),
    pub hr_range: (f64, f64),
    /// Work intervals: (from, to, label).
    pub bands: Vec<(f64, f64, String)>,
    /// Flagged stretches: (from, to).
    pub flags: Vec<(f64, f64)>,
    pub rulers: Vec<RulerFit>,
}

fn percentile(sorted: &[f64], p: f64) -> Option<f64> {
    if sorted.is_empty() {
        return None;
    }
    let k = ((sorted.len() - 1) as f64 * p).round() as usize;
    sorted.get(k.min(sorted.len() - 1)).copied()
}

/// Build the chart model: traces smoothed over 5 s (each side) so a message-sized picture
/// reads cleanly; the axes span the 2nd to 98th percentile with a margin.
pub fn model(
    session: &Session,
    review: &Review,
    rulers: &[(f64, f64)],
    units: Units,
) -> ChartModel {
    let s = crate::analysis::review::Series::new(session);
    let scale = units.metres() / 1000.0;
    let speed = s
        .speed
        .map(|v| crate::analysis::review::smooth(&session.t, v, &s.moving, 5.0))
        .unwrap_or_default();
    let hr =
        s.hr.map(|v| crate::analysis::review::smooth(&session.t, v, &s.hr_ok, 2.0))
            .unwrap_or_default();
    let pace: Vec<Option<(f64, f64)>> = session
        .t
        .iter()
        .enumerate()
        .map(|(i, &t)| {
            let v = speed.get(i).copied().flatten()?;
            (v > 0.5).then(|| (t, 1000.0 / v * scale))
        })
        .collect();
    let hr_pts: Vec<Option<(f64, f64)>> = session
        .t
        .iter()
        .enumerate()
        .map(|(i, &t)| hr.get(i).copied().flatten().map(|h| (t, h)))
        .collect();
    let mut paces: Vec<f64> = pace.iter().flatten().map(|p| p.1).collect();
    paces.sort_by(f64::total_cmp);
    let mut hrs: Vec<f64> = hr_pts.iter().flatten().map(|p| p.1).collect();
    hrs.sort_by(f64::total_cmp);
    let pace_range = match (percentile(&paces, 0.98), percentile(&paces, 0.02)) {
        (Some(slow), Some(fast)) if slow > fast => (slow + 15.0, (fast - 15.0).max(60.0)),
        (Some(p), _) => (p + 60.0, (p - 60.0).max(60.0)),
        _ => (480.0, 180.0),
    };
    let hr_range = match (percentile(&hrs, 0.02), percentile(&hrs, 0.98)) {
        (Some(lo), Some(hi)) if hi > lo => ((lo - 5.0).max(30.0), hi + 5.0),
        (Some(h), _) => (h - 20.0, h + 20.0),
        _ => (60.0, 200.0),
    };
    let title = format!(
        "{}  {}",
        review.session.start.get(..10).unwrap_or(""),
        review
            .plan
            .as_ref()
            .map(|p| p.title.clone())
            .unwrap_or_else(|| review.session.sport.clone())
    );
    ChartModel {
        title,
        units,
        t_max: session.duration_s().max(1.0),
        pace,
        hr: hr_pts,
        pace_range,
        hr_range,
        bands: review
            .work()
            .map(|m| {
                (
                    m.start_s,
                    m.end_s,
                    m.work_number.map(|n| n.to_string()).unwrap_or_default(),
                )
            })
            .collect(),
        flags: session.flags.iter().map(|f| (f.from_s, f.to_s)).collect(),
        rulers: rulers
            .iter()
            .map(|&(a, b)| fit_window(session, a, b))
            .collect(),
    }
}

/// Plot area geometry shared by both writers.
struct Frame {
    left: f64,
    right: f64,
    top: f64,
    bottom: f64,
}

impl Frame {
    fn new(w: u32, h: u32) -> Frame {
        Frame {
            left: 56.0,
            right: f64::from(w) - 56.0,
            top: 34.0,
            bottom: f64::from(h) - 30.0,
        }
    }
    fn x(&self, m: &ChartModel, t: f64) -> f64 {
        self.left + (self.right - self.left) * (t / m.t_max).clamp(0.0, 1.0)
    }
    /// Pace: slow at the bottom, fast at the top.
    fn y_pace(&self, m: &ChartModel, p: f64) -> f64 {
        let (slow, fast) = m.pace_range;
        let f = ((slow - p) / (slow - fast)).clamp(0.0, 1.0);
        self.bottom - (self.bottom - self.top) * f
    }
    fn y_hr(&self, m: &ChartModel, h: f64) -> f64 {
        let (lo, hi) = m.hr_range;
        let f = ((h - lo) / (hi - lo)).clamp(0.0, 1.0);
        self.bottom - (self.bottom - self.top) * f
    }
}

/// Steps of the pace axis, seconds per unit: the first that gives at most
/// [`MAX_TICKS`] ticks is used.
// Common coaching practice (no published source): paces are read in 10 or 15 s steps;
// wider ranges step by the half or whole minute.
pub const PACE_STEPS: [f64; 6] = [10.0, 15.0, 30.0, 60.0, 120.0, 300.0];
/// Steps of the HR axis, bpm.
// Common coaching practice (no published source): heart rates are read in 5 or 10 bpm steps.
pub const HR_STEPS: [f64; 4] = [5.0, 10.0, 20.0, 50.0];
/// Most ticks on an axis.
pub const MAX_TICKS: usize = 7;

/// Ticks at round values: every multiple of the first step in `steps` that puts at most
/// [`MAX_TICKS`] ticks in `[lo, hi]` (the last step if none does). Empty for an empty or
/// non-finite range.
pub fn round_ticks(lo: f64, hi: f64, steps: &[f64]) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite()) {
        return Vec::new();
    }
    let (lo, hi) = (lo.min(hi), lo.max(hi));
    let in_range = |step: f64| -> Vec<f64> {
        let first = (lo / step).ceil() as i64;
        let last = (hi / step).floor() as i64;
        (first..=last).map(|k| k as f64 * step).collect()
    };
    for &step in steps {
        if step > 0.0 && (hi - lo) / step <= MAX_TICKS as f64 + 1.0 {
            let t = in_range(step);
            if t.len() <= MAX_TICKS {
                return t;
            }
        }
    }
    steps
        .last()
        .filter(|s| **s > 0.0)
        .map(|&s| in_range(s).into_iter().take(MAX_TICKS).collect())
        .unwrap_or_default()
}

/// The pace axis ticks of a chart, seconds per unit, fastest first.
pub fn pace_ticks(m: &ChartModel) -> Vec<f64> {
    round_ticks(m.pace_range.1, m.pace_range.0, &PACE_STEPS)
}

/// The HR axis ticks of a chart, bpm, lowest first.
pub fn hr_ticks(m: &ChartModel) -> Vec<f64> {
    round_ticks(m.hr_range.0, m.hr_range.1, &HR_STEPS)
}

fn pace_label(p: f64) -> String {
    format_clock(p)
}

fn hex(c: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// The chart as an SVG document.
pub fn svg(m: &ChartModel, w: u32, h: u32) -> String {
    let f = Frame::new(w, h);
    let mut o = String::new();
    let _ = writeln!(
        o,
        r#"<?xml version="1.0" encoding="UTF-8"?>
<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="sans-serif" font-size="11">
<rect width="{w}" height="{h}" fill="{}"/>"#,
        hex(BG)
    );
    for (a, b, label) in &m.bands {
        let (x0, x1) = (f.x(m, *a), f.x(m, *b));
        let _ = writeln!(
            o,
            r#"<rect x="{x0:.1}" y="{:.1}" width="{:.1}" height="{:.1}" fill="{}"/><text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{}">{}</text>"#,
            f.top,
            (x1 - x0).max(0.5),
            f.bottom - f.top,
            hex(BAND),
            0.5 * (x0 + x1),
            f.top - 4.0,
            hex(AXIS),
            xml_escape(label)
        );
    }
    for (a, b) in &m.flags {
        let (x0, x1) = (f.x(m, *a), f.x(m, *b));
        let _ = writeln!(
            o,
            r#"<rect x="{x0:.1}" y="{:.1}" width="{:.1}" height="6" fill="{}"><title>flagged data</title></rect>"#,
            f.bottom - 6.0,
            (x1 - x0).max(1.0),
            hex(FLAG)
        );
    }
    let u = m.units.label();
    for p in pace_ticks(m) {
        let y = f.y_pace(m, p);
        let _ = writeln!(
            o,
            r#"<line x1="{:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{}"/><text x="{:.1}" y="{:.1}" text-anchor="end" fill="{}">{}</text>"#,
            f.left,
            f.right,
            hex(GRID),
            f.left - 4.0,
            y + 4.0,
            hex(PACE),
            pace_label(p)
        );
    }
    for hv in hr_ticks(m) {
        let _ = writeln!(
            o,
            r#"<text x="{:.1}" y="{:.1}" fill="{}">{hv:.0}</text>"#,
            f.right + 4.0,
            f.y_hr(m, hv) + 4.0,
            hex(HR)
        );
    }
    let _ = writeln!(
        o,
        r#"<text x="{:.1}" y="{:.1}" fill="{}">pace /{u}</text><text x="{:.1}" y="{:.1}" text-anchor="end" fill="{}">HR bpm</text>"#,
        f.left - 50.0,
        f.top - 18.0,
        hex(PACE),
        f.right + 50.0,
        f.top - 18.0,
        hex(HR)
    );
    let minutes = (m.t_max / 60.0).ceil();
    let step = [5.0, 10.0, 15.0, 20.0, 30.0, 60.0]
        .into_iter()
        .find(|s| minutes / s <= 10.0)
        .unwrap_or(60.0);
    let mut t = 0.0;
    while t <= minutes {
        let x = f.x(m, t * 60.0);
        let _ = writeln!(
            o,
            r#"<text x="{x:.1}" y="{:.1}" text-anchor="middle" fill="{}">{t:.0}</text>"#,
            f.bottom + 14.0,
            hex(AXIS)
        );
        t += step;
    }
    let _ = writeln!(
        o,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="end" fill="{}">min</text><text x="{:.1}" y="16" fill="{}" font-size="13">{}</text>"#,
        f.right,
        f.bottom + 26.0,
        hex(AXIS),
        f.left,
        hex(AXIS),
        xml_escape(&m.title)
    );
    let path = |pts: &[Option<(f64, f64)>], y: &dyn Fn(f64) -> f64| -> String {
        let mut d = String::new();
        let mut pen = false;
        for p in pts {
            match p {
                Some((t, v)) => {
                    let _ = write!(
                        d,
                        "{}{:.1},{:.1} ",
                        if pen { "L" } else { "M" },
                        f.x(m, *t),
                        y(*v)
                    );
                    pen = true;
                }
                None => pen = false,
            }
        }
        d
    };
    let _ = writeln!(
        o,
        r#"<path d="{}" fill="none" stroke="{}" stroke-width="1.2"/>"#,
        path(&m.hr, &|v| f.y_hr(m, v)),
        hex(HR)
    );
    let _ = writeln!(
        o,
        r#"<path d="{}" fill="none" stroke="{}" stroke-width="1.2"/>"#,
        path(&m.pace, &|v| f.y_pace(m, v)),
        hex(PACE)
    );
    let scale = m.units.metres() / 1000.0;
    for (k, r) in m.rulers.iter().enumerate() {
        if let (Some(v0), Some(v1)) = (r.speed_at(r.from_s), r.speed_at(r.to_s)) {
            if v0 > 0.0 && v1 > 0.0 {
                let _ = writeln!(
                    o,
                    r#"<line class="ruler" x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{}" stroke-width="2" stroke-dasharray="6 3"/>"#,
                    f.x(m, r.from_s),
                    f.y_pace(m, 1000.0 / v0 * scale),
                    f.x(m, r.to_s),
                    f.y_pace(m, 1000.0 / v1 * scale),
                    hex(RULER_PACE)
                );
            }
        }
        if let (Some(h0), Some(h1)) = (r.hr_at(r.from_s), r.hr_at(r.to_s)) {
            let _ = writeln!(
                o,
                r#"<line class="ruler" x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{}" stroke-width="2" stroke-dasharray="6 3"/>"#,
                f.x(m, r.from_s),
                f.y_hr(m, h0),
                f.x(m, r.to_s),
                f.y_hr(m, h1),
                hex(RULER_HR)
            );
        }
        let label = format!(
            "ruler {}: pace {}{:.0} s/{u} per 10 min, HR {}{:.1} bpm per 10 min{}",
            k + 1,
            if r.pace_change_per_10min_s_per_km.unwrap_or(0.0) >= 0.0 {
                "+"
            } else {
                ""
            },
            r.pace_change_per_10min_s_per_km.unwrap_or(0.0) * scale,
            if r.hr_change_per_10min_bpm.unwrap_or(0.0) >= 0.0 {
                "+"
            } else {
                ""
            },
            r.hr_change_per_10min_bpm.unwrap_or(0.0),
            r.decoupling_pct
                .map(|d| format!(", decoupling {d:.1} %"))
                .unwrap_or_default()
        );
        let _ = writeln!(
            o,
            r#"<text x="{:.1}" y="{:.1}" fill="{}">{}</text>"#,
            f.left + 4.0,
            f.top + 14.0 + 13.0 * k as f64,
            hex(RULER_PACE),
            xml_escape(&label)
        );
    }
    o.push_str("</svg>\n");
    o
}

/// A small RGB canvas with line drawing and a built-in pixel font.
struct Canvas {
    w: u32,
    h: u32,
    px: Vec<u8>,
}

impl Canvas {
    fn new(w: u32, h: u32) -> Canvas {
        let mut px = Vec::with_capacity((w * h * 3) as usize);
        for _ in 0..(w * h) {
            px.extend_from_slice(&BG);
        }
        Canvas { w, h, px }
    }
    fn set(&mut self, x: i64, y: i64, c: [u8; 3]) {
        if x < 0 || y < 0 || x >= i64::from(self.w) || y >= i64::from(self.h) {
            return;
        }
        let k = ((y as usize) * self.w as usize + x as usize) * 3;
        if let Some(p) = self.px.get_mut(k..k + 3) {
            p.copy_from_slice(&c);
        }
    }
    fn rect(&mut self, x0: f64, y0: f64, x1: f64, y1: f64, c: [u8; 3]) {
        for y in (y0.round() as i64)..(y1.round() as i64) {
            for x in (x0.round() as i64)..(x1.round().max(x0.round() + 1.0) as i64) {
                self.set(x, y, c);
            }
        }
    }
    fn line(&mut self, x0: f64, y0: f64, x1: f64, y1: f64, c: [u8; 3], thick: bool) {
        let n = ((x1 - x0).abs().max((y1 - y0).abs()).ceil() as usize).max(1);
        for k in 0..=n {
            let f = k as f64 / n as f64;
            let (x, y) = (x0 + (x1 - x0) * f, y0 + (y1 - y0) * f);
            self.set(x.round() as i64, y.round() as i64, c);
            if thick {
                self.set(x.round() as i64, y.round() as i64 + 1, c);
            }
        }
    }
    fn text(&mut self, x: f64, y: f64, s: &str, c: [u8; 3]) {
        let mut cx = x.round() as i64;
        let cy = y.round() as i64;
        for ch in s.chars() {
            if let Some(rows) = glyph(ch.to_ascii_uppercase()) {
                for (r, bits) in rows.iter().enumerate() {
                    for col in 0..5 {
                        if bits & (0b10000 >> col) != 0 {
                            self.set(cx + col, cy + r as i64, c);
                        }
                    }
                }
            }
            cx += 6;
        }
    }
}

/// 5x7 pixel glyphs for the characters the chart labels use.
fn glyph(c: char) -> Option<[u8; 7]> {
    Some(match c {
        '0' => [0x0E, 0x11, 0x13, 0x15, 0x19, 0x11, 0x0E],
        '1' => [0x04, 0x0C, 0x04, 0x04, 0x04, 0x04, 0x0E],
        '2' => [0x0E, 0x11, 0x01, 0x02, 0x04, 0x08, 0x1F],
        '3' => [0x1F, 0x02, 0x04, 0x02, 0x01, 0x11, 0x0E],
        '4' => [0x02, 0x06, 0x0A, 0x12, 0x1F, 0x02, 0x02],
        '5' => [0x1F, 0x10, 0x1E, 0x01, 0x01, 0x11, 0x0E],
        '6' => [0x06, 0x08, 0x10, 0x1E, 0x11, 0x11, 0x0E],
        '7' => [0x1F, 0x01, 0x02, 0x04, 0x08, 0x08, 0x08],
        '8' => [0x0E, 0x11, 0x11, 0x0E, 0x11, 0x11, 0x0E],
        '9' => [0x0E, 0x11, 0x11, 0x0F, 0x01, 0x02, 0x0C],
        ':' => [0x00, 0x0C, 0x0C, 0x00, 0x0C, 0x0C, 0x00],
        '/' => [0x01, 0x01, 0x02, 0x04, 0x08, 0x10, 0x10],
        '-' => [0x00, 0x00, 0x00, 0x1F, 0x00, 0x00, 0x00],
        '.' => [0x00, 0x00, 0x00, 0x00, 0x00, 0x0C, 0x0C],
        'A' => [0x0E, 0x11, 0x11, 0x1F, 0x11, 0x11, 0x11],
        'B' => [0x1E, 0x11, 0x11, 0x1E, 0x11, 0x11, 0x1E],
        'C' => [0x0E, 0x11, 0x10, 0x10, 0x10, 0x11, 0x0E],
        'E' => [0x1F, 0x10, 0x10, 0x1E, 0x10, 0x10, 0x1F],
        'H' => [0x11, 0x11, 0x11, 0x1F, 0x11, 0x11, 0x11],
        'I' => [0x0E, 0x04, 0x04, 0x04, 0x04, 0x04, 0x0E],
        'K' => [0x11, 0x12, 0x14, 0x18, 0x14, 0x12, 0x11],
        'M' => [0x11, 0x1B, 0x15, 0x15, 0x11, 0x11, 0x11],
        'N' => [0x11, 0x11, 0x19, 0x15, 0x13, 0x11, 0x11],
        'P' => [0x1E, 0x11, 0x11, 0x1E, 0x10, 0x10, 0x10],
        'R' => [0x1E, 0x11, 0x11, 0x1E, 0x14, 0x12, 0x11],
        _ => return None,
    })
}

/// The chart as a PNG image of `w` x `h` pixels.
pub fn png(m: &ChartModel, w: u32, h: u32) -> Result<Vec<u8>, png::EncodingError> {
    let f = Frame::new(w, h);
    let mut c = Canvas::new(w, h);
    for (a, b, label) in &m.bands {
        let (x0, x1) = (f.x(m, *a), f.x(m, *b));
        c.rect(x0, f.top, x1, f.bottom, BAND);
        c.text(0.5 * (x0 + x1) - 3.0, f.top - 10.0, label, AXIS);
    }
    for (a, b) in &m.flags {
        c.rect(f.x(m, *a), f.bottom - 6.0, f.x(m, *b), f.bottom, FLAG);
    }
    for p in pace_ticks(m) {
        let y = f.y_pace(m, p);
        c.line(f.left, y, f.right, y, GRID, false);
        let label = pace_label(p);
        c.text(
            f.left - 6.0 - 6.0 * label.len() as f64,
            y - 3.0,
            &label,
            PACE,
        );
    }
    for hv in hr_ticks(m) {
        c.text(f.right + 5.0, f.y_hr(m, hv) - 3.0, &format!("{hv:.0}"), HR);
    }
    c.text(
        4.0,
        f.top - 26.0,
        &format!("PACE/{}", m.units.label()),
        PACE,
    );
    c.text(f.right + 5.0, f.top - 26.0, "HR BPM", HR);
    c.line(f.left, f.bottom, f.right, f.bottom, AXIS, false);
    let minutes = (m.t_max / 60.0).ceil();
    let step = [5.0, 10.0, 15.0, 20.0, 30.0, 60.0]
        .into_iter()
        .find(|s| minutes / s <= 10.0)
        .unwrap_or(60.0);
    let mut t = 0.0;
    while t <= minutes {
        let x = f.x(m, t * 60.0);
        c.line(x, f.bottom, x, f.bottom + 3.0, AXIS, false);
        let label = format!("{t:.0}");
        c.text(x - 3.0 * label.len() as f64, f.bottom + 6.0, &label, AXIS);
        t += step;
    }
    c.text(f.right - 18.0, f.bottom + 16.0, "MIN", AXIS);
    let draw = |c: &mut Canvas, pts: &[Option<(f64, f64)>], y: &dyn Fn(f64) -> f64, col| {
        let mut prev: Option<(f64, f64)> = None;
        for p in pts {
            match p {
                Some((t, v)) => {
                    let here = (f.x(m, *t), y(*v));
                    if let Some((px, py)) = prev {
                        c.line(px, py, here.0, here.1, col, false);
                    }
                    prev = Some(here);
                }
                None => prev = None,
            }
        }
    };
    draw(&mut c, &m.hr, &|v| f.y_hr(m, v), HR);
    draw(&mut c, &m.pace, &|v| f.y_pace(m, v), PACE);
    let scale = m.units.metres() / 1000.0;
    for r in &m.rulers {
        if let (Some(v0), Some(v1)) = (r.speed_at(r.from_s), r.speed_at(r.to_s)) {
            if v0 > 0.0 && v1 > 0.0 {
                c.line(
                    f.x(m, r.from_s),
                    f.y_pace(m, 1000.0 / v0 * scale),
                    f.x(m, r.to_s),
                    f.y_pace(m, 1000.0 / v1 * scale),
                    RULER_PACE,
                    true,
                );
            }
        }
        if let (Some(h0), Some(h1)) = (r.hr_at(r.from_s), r.hr_at(r.to_s)) {
            c.line(
                f.x(m, r.from_s),
                f.y_hr(m, h0),
                f.x(m, r.to_s),
                f.y_hr(m, h1),
                RULER_HR,
                true,
            );
        }
    }
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w, h);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let mut writer = enc.write_header()?;
        writer.write_image_data(&c.px)?;
    }
    Ok(out)
}
