//! The history view's state: the athlete, the session summaries it is built from, and the
//! time window the coach pans (←/→) and zooms (+/-). The window never starts before the
//! week of the athlete's first data and never ends after today; every move rebuilds the
//! history for the window (a build takes well under a millisecond, see BENCHMARKS.md), so
//! the header dates, the week bars and the daily charts all follow it. `panes::history`
//! draws what this holds; `App::handle` is the one way in.

use chrono::{Duration, NaiveDate};

use crate::analysis::history::{build, week_monday, History, HistoryParams, SessionSummary};
use crate::model::AthleteProfile;

/// Weeks shown when the view opens (or all the athlete's weeks, when fewer).
pub const DEFAULT_WEEKS: u32 = 12;
/// The narrowest window, weeks.
pub const MIN_WEEKS: u32 = 2;

/// Which weeks the history shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct HistoryWindow {
    /// The last day shown (today when not panned).
    pub end: NaiveDate,
    /// Weeks wide (the zoom).
    pub weeks: u32,
    /// Monday of the week of the athlete's first data (`None`: no data yet).
    pub first: Option<NaiveDate>,
    /// The latest day there is: today, or the latest session when files are dated ahead.
    pub today: NaiveDate,
}

impl HistoryWindow {
    /// The window that ends `today`, `DEFAULT_WEEKS` wide, or narrower when the data
    /// starts later.
    pub fn new(first_data: Option<NaiveDate>, today: NaiveDate) -> HistoryWindow {
        let mut w = HistoryWindow {
            end: today,
            weeks: DEFAULT_WEEKS,
            first: first_data.map(week_monday).filter(|f| *f <= today),
            today,
        };
        w.weeks = w.weeks.min(w.all_weeks()).max(1);
        w
    }

    /// Weeks from the first data week to today's week, both included.
    pub fn all_weeks(&self) -> u32 {
        match self.first {
            Some(f) => weeks_between(f, week_monday(self.today)) + 1,
            None => DEFAULT_WEEKS,
        }
    }

    /// The weeks actually shown: the zoom, cut at the first data week.
    pub fn shown_weeks(&self) -> u32 {
        match self.first {
            Some(f) => self
                .weeks
                .min(weeks_between(f, week_monday(self.end)) + 1)
                .max(1),
            None => self.weeks.max(1),
        }
    }

    /// The first day shown (a Monday).
    pub fn start(&self) -> NaiveDate {
        week_monday(self.end) - Duration::weeks(i64::from(self.shown_weeks()) - 1)
    }

    /// The earliest end that keeps the whole window after the first data week.
    fn earliest_end(&self) -> NaiveDate {
        match self.first {
            Some(f) => {
                (f + Duration::weeks(i64::from(self.weeks) - 1) + Duration::days(6)).min(self.today)
            }
            None => self.today,
        }
    }

    fn clamp(&mut self) {
        let most = self.all_weeks().max(MIN_WEEKS);
        self.weeks = self.weeks.clamp(MIN_WEEKS.min(most), most);
        self.end = self.end.clamp(self.earliest_end(), self.today);
    }

    /// Move the window by `weeks` (negative: back in time). `false` when it was at the edge
    /// already.
    pub fn pan(&mut self, weeks: i64) -> bool {
        let before = *self;
        // Panning forward from a mid-week end lands on a week's last day, or today.
        self.end = if weeks > 0 {
            week_monday(self.end) + Duration::weeks(weeks) + Duration::days(6)
        } else {
            self.end + Duration::weeks(weeks)
        };
        self.clamp();
        *self != before
    }

    /// Zoom: `in_` halves the weeks shown (at least `MIN_WEEKS`), else doubles them (at
    /// most every week of the athlete's data). The end day stays where it can. `false` at
    /// the limit.
    pub fn zoom(&mut self, in_: bool) -> bool {
        let before = *self;
        self.weeks = if in_ {
            self.weeks.div_ceil(2)
        } else {
            self.weeks.saturating_mul(2)
        };
        self.clamp();
        *self != before
    }
}

fn weeks_between(from_monday: NaiveDate, to_monday: NaiveDate) -> u32 {
    u32::try_from((to_monday - from_monday).num_weeks()).unwrap_or(0)
}

/// The built history of one athlete for the window, and what it is built from.
#[derive(Debug, Clone)]
pub struct HistoryView {
    /// Athlete id the history belongs to.
    pub athlete: String,
    /// Everything the view shows, for the window.
    pub history: History,
    /// The weeks shown.
    pub window: HistoryWindow,
    summaries: Vec<SessionSummary>,
    profile: AthleteProfile,
    /// The cautions as of today: shown whatever the window (they are about now).
    today_cautions: Vec<String>,
}

impl HistoryView {
    /// The view of `summaries` (the athlete's analysed sessions) ending `today`.
    pub fn new(
        athlete: String,
        summaries: Vec<SessionSummary>,
        profile: AthleteProfile,
        today: NaiveDate,
    ) -> HistoryView {
        let first = summaries.iter().map(SessionSummary::date).min();
        let window = HistoryWindow::new(first, today);
        let params = params(window.shown_weeks());
        let history = build(&summaries, &profile, &params, window.end);
        HistoryView {
            athlete,
            today_cautions: history.cautions.clone(),
            history,
            window,
            summaries,
            profile,
        }
    }

    /// Keep the zoom and the panned position of `old` (same athlete, data rebuilt).
    pub fn keep_window(&mut self, old: &HistoryWindow) {
        if old.end != old.today || old.weeks != self.window.weeks {
            self.window.weeks = old.weeks;
            self.window.end = old.end;
            self.window.clamp();
            self.rebuild();
        }
    }

    /// Whether the window ends today.
    pub fn at_today(&self) -> bool {
        self.window.end == self.window.today
    }

    /// Pan by `weeks`; `false` at the edge.
    pub fn pan(&mut self, weeks: i64) -> bool {
        let moved = self.window.pan(weeks);
        if moved {
            self.rebuild();
        }
        moved
    }

    /// Zoom in (fewer weeks) or out; `false` at the limit.
    pub fn zoom(&mut self, in_: bool) -> bool {
        let moved = self.window.zoom(in_);
        if moved {
            self.rebuild();
        }
        moved
    }

    fn rebuild(&mut self) {
        let params = params(self.window.shown_weeks());
        self.history = build(&self.summaries, &self.profile, &params, self.window.end);
        self.history.cautions.clone_from(&self.today_cautions);
    }
}

fn params(weeks: u32) -> HistoryParams {
    HistoryParams {
        weeks,
        ..HistoryParams::default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(y: i32, m: u32, day: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, day).unwrap()
    }

    #[test]
    fn the_window_starts_at_the_first_data_week() {
        // First data on a Wednesday five weeks before today (a Friday).
        let w = HistoryWindow::new(Some(d(2026, 10, 7)), d(2026, 11, 13));
        assert_eq!(w.start(), d(2026, 10, 5));
        assert_eq!(w.shown_weeks(), 6);
        assert_eq!(w.weeks, 6);
    }

    #[test]
    fn pan_and_zoom_stay_inside_the_data() {
        // 30 weeks of data; today is a Friday.
        let today = d(2026, 11, 13);
        let mut w = HistoryWindow::new(Some(today - Duration::weeks(29)), today);
        assert_eq!((w.weeks, w.end), (12, today));
        assert!(!w.pan(1), "nothing after today");
        assert!(w.pan(-1));
        assert_eq!(w.end, d(2026, 11, 6));
        assert_eq!(w.start(), d(2026, 8, 17));
        assert!(w.pan(1));
        assert_eq!(w.end, today);
        // Back as far as it goes: the window starts on the first data week.
        for _ in 0..40 {
            w.pan(-1);
        }
        assert_eq!(w.start(), week_monday(today - Duration::weeks(29)));
        assert_eq!(w.shown_weeks(), 12);
        assert!(!w.pan(-1));
        // Zoom in to the minimum, out to every week.
        assert!(w.zoom(true));
        assert_eq!(w.weeks, 6);
        while w.zoom(true) {}
        assert_eq!(w.weeks, MIN_WEEKS);
        while w.zoom(false) {}
        assert_eq!(w.weeks, 30);
        assert_eq!(w.end, today);
        assert_eq!(w.shown_weeks(), 30);
    }
}
