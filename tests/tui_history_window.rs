//! The history view's time window on a TestBackend: it starts at the athlete's first data
//! week, ←/→ pan it and +/- zoom it (the header dates follow), and the load chart's time
//! axis carries dates. The series are planted (invented for self-consistency).

#[path = "history_support/mod.rs"]
mod history_support;
mod tui_support;

use chrono::NaiveDate;
use crossterm::event::KeyCode;
use history_support::{day, profile, with_load};
use splitdesk::tui::app::{App, HistoryView, View};
use tui_support::{app_with, ch, key, message, screen};

/// An app in the history view on planted sessions every second day from `first` to `last`
/// (planted day numbers), the view ending on day `last`.
fn app_on(dir: &std::path::Path, first: i64, last: i64) -> App {
    let mut app = app_with(dir);
    ch(&mut app, 't');
    assert_eq!(app.view, View::History);
    let sums = (first..=last)
        .step_by(2)
        .map(|n| with_load(n, 60.0))
        .collect();
    app.history = Some(HistoryView::new(
        app.cursor.athlete.clone().unwrap(),
        sums,
        profile(),
        day(last),
    ));
    app
}

fn header(app: &mut App) -> String {
    let s = screen(app, 160, 48);
    s.lines()
        .find(|l| l.contains(" sessions") && l.contains(" to 20"))
        .unwrap_or_else(|| panic!("no header in\n{s}"))
        .to_string()
}

fn d(s: &str) -> NaiveDate {
    s.parse().unwrap()
}

/// The load chart's axis row: the line right under the chart with day labels.
fn axis_labels(app: &mut App) -> String {
    let s = screen(app, 160, 48);
    let lines: Vec<&str> = s.lines().collect();
    let at = lines
        .iter()
        .position(|l| l.contains("Load · ratio"))
        .unwrap_or_else(|| panic!("no load chart in\n{s}"));
    // The axis is the last row before the fitness chart's title.
    let fit = lines
        .iter()
        .position(|l| l.contains("fitness ") && l.contains("readiness"))
        .unwrap();
    assert!(fit > at + 2, "{s}");
    lines[fit - 1].to_string()
}

#[test]
fn the_window_starts_at_the_first_data_week() {
    let dir = tempfile::tempdir().unwrap();
    // First data on day 10, a Wednesday (2026-03-11); the view ends on day 50 (2026-04-20).
    assert_eq!(day(10), d("2026-03-11"));
    let mut app = app_on(dir.path(), 10, 50);
    let h = header(&mut app);
    // Source of the week arithmetic: ISO 8601 weeks start on Monday; 2026-03-09 is one.
    assert!(
        h.contains("2026-03-09 to 2026-04-20: 7 weeks, 21 sessions"),
        "{h}"
    );
    let s = screen(&mut app, 160, 48);
    assert!(s.contains("Weekly volume (km) 2026-W11 to 2026-W17"), "{s}");
    // Nothing to pan to: every week of data is shown.
    key(&mut app, KeyCode::Left);
    assert!(message(&app).contains("first data in the week of 2026-03-09"));
    assert!(header(&mut app).contains("2026-03-09 to 2026-04-20"));
}

#[test]
fn panning_and_zooming_move_the_header_dates() {
    let dir = tempfile::tempdir().unwrap();
    // Twenty weeks of data: day 1 (Monday 2026-03-02) to day 140 (Sunday 2026-07-19).
    let mut app = app_on(dir.path(), 1, 140);
    assert_eq!(day(140), d("2026-07-19"));
    let h = header(&mut app);
    assert!(h.contains("2026-04-27 to 2026-07-19: 12 weeks"), "{h}");
    assert!(h.contains("←/→ pan, +/- zoom"), "{h}");

    key(&mut app, KeyCode::Left);
    let h = header(&mut app);
    assert!(h.contains("2026-04-20 to 2026-07-12: 12 weeks"), "{h}");
    // Back in time, the latest values are said to be of the window's last day.
    let s = screen(&mut app, 160, 48);
    assert!(s.contains("readiness on 2026-07-12"), "{s}");
    assert!(!s.contains("readiness today"), "{s}");

    key(&mut app, KeyCode::Right);
    assert!(header(&mut app).contains("2026-04-27 to 2026-07-19"));
    assert!(screen(&mut app, 160, 48).contains("readiness today"));
    key(&mut app, KeyCode::Right);
    assert_eq!(message(&app), "the history ends today");

    // Zoom in: six weeks, then three; out again: every one of the twenty weeks.
    ch(&mut app, '+');
    assert!(header(&mut app).contains("2026-06-08 to 2026-07-19: 6 weeks"));
    ch(&mut app, '+');
    assert!(header(&mut app).contains("2026-06-29 to 2026-07-19: 3 weeks"));
    for _ in 0..4 {
        ch(&mut app, '-');
    }
    assert!(header(&mut app).contains("2026-03-02 to 2026-07-19: 20 weeks"));
    assert_eq!(message(&app), "the history shows every week of data");

    // Pan a half window with `<`, as the session chart pans.
    ch(&mut app, '+');
    ch(&mut app, '<');
    let h = header(&mut app);
    assert!(h.contains("2026-04-06 to 2026-06-14: 10 weeks"), "{h}");
}

#[test]
fn the_load_chart_has_dates_on_its_time_axis() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_on(dir.path(), 1, 140);
    // The window's first day (Monday 2026-04-27) at the left, its last (2026-07-19) at the
    // right, dates between in order.
    let axis = axis_labels(&mut app);
    let labels: Vec<&str> = axis
        .split('│')
        .nth(3)
        .unwrap_or(&axis)
        .split("  ")
        .map(str::trim)
        .filter(|s| !s.is_empty())
        .collect();
    assert!(labels.len() >= 3, "{axis}");
    assert_eq!(labels.first(), Some(&"27 Apr"), "{axis}");
    let year = |l: &str| NaiveDate::parse_from_str(&format!("{l} 2026"), "%d %b %Y").unwrap();
    let days: Vec<NaiveDate> = labels
        .iter()
        .take_while(|l| l.split(' ').count() == 2)
        .map(|l| year(l))
        .collect();
    assert_eq!(days.last(), Some(&d("2026-07-19")), "{axis}");
    assert!(days.windows(2).all(|w| w[0] < w[1]), "{axis}");
    // Panned back a week, the labels follow.
    key(&mut app, KeyCode::Left);
    let axis = axis_labels(&mut app);
    assert!(axis.contains("20 Apr"), "{axis}");
    assert!(axis.contains("12 Jul"), "{axis}");
    assert!(!axis.contains("19 Jul"), "{axis}");
}
