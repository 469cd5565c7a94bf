//! Athlete history: weekly volume, training load and its acute/chronic ratio, the
//! impulse-response model, efficiency on easy runs, decoupling of long runs, best efforts
//! across sessions with a critical-speed fit and predicted race times.
//!
//! Pure: per-session summaries (cut from the cached [`Review`]s, so no file is read again),
//! the athlete's profile, [`HistoryParams`] and today's date in; a [`History`] out. The
//! history screen and `splitdesk trends` both draw from [`build`].
//!
//! # Decisions
//!
//! - **Dates** are the day each session counts for: the date its file name starts with
//!   (the athlete's calendar) when within a day of the start, else the UTC date of the
//!   start ([`crate::model::session::session_day`]); weeks are ISO weeks (Monday to Sunday). The display window is the last [`HistoryParams::weeks`] ISO weeks,
//!   the current (partial) week last.
//! - **Daily load** is the sum of the day's TRIMP (Banister 1991); a day without sessions
//!   counts 0, and a session without a load (no heart rate) counts 0 and is named in the
//!   notes. Every session counts, whatever the sport; volume, efficiency and best efforts
//!   use runs only (sport `running`, or `unknown` because many GPX files carry no sport).
//! - **The models start on the day of the first session** the summaries hold (the start of
//!   the athlete's data), not at the window, and run to `today`.
//! - **Acute/chronic ratio**: EWMA, acute N = 7, chronic N = 28 (Williams et al. 2017,
//!   [`load::acute_chronic_ewma`]). **Seed rule:** both averages start from the mean daily
//!   load of the first 7 days of data. The ratio is `None` for the first 27 days. Bands
//!   0.8-1.3 and 1.5 (Gabbett 2016) are shown with the published criticism
//!   ([`load::ACUTE_CHRONIC_CRITICISM`]); a latest ratio at or above 1.5 adds a caution.
//!   **Load-spike days** are the days that carried a load and ended with the ratio at or
//!   above 1.5 ([`load_spike_days`]); the history lists every one in the window, and the
//!   session of such a day carries the caution in its findings where it is shown
//!   ([`load_spike_finding`]: `analyze` inside a roster, the workstation), whatever today's
//!   date, because a day's ratio depends only on the days before it.
//! - **Fitness, fatigue, readiness**: the impulse-response model (Banister et al. 1975,
//!   [`load::fitness_fatigue`]) with `g_t = g_{t−1}·e^(−1/τ1) + w_t`,
//!   `h_t = h_{t−1}·e^(−1/τ2) + w_t` and **readiness = k1·fitness − k2·fatigue**
//!   (the model's performance with p0 = 0). Defaults τ1 = 42, τ2 = 7 days, k1 = 1, k2 = 2.
//! - **Easy runs** are runs at one effort throughout ([`steady_throughout`]: no work
//!   intervals or recoveries found or planned, hill-adjusted speed even across the session,
//!   no surge well above the mean) whose mean relative intensity (speed / threshold speed,
//!   time-weighted over the session's intervals; else the session's mean moving speed over
//!   the profile's threshold) is under [`HistoryParams::easy_max_relative_intensity`]
//!   (default 0.85, our choice: the slow edge of the steady pace zone, 0.87, less a margin).
//!   An interval session whose average is easy is not an easy run.
//!   Efficiency = 60·mean speed / mean HR, metres per heartbeat; the trend is a
//!   least-squares line through the weekly means against the week number.
//! - **Long runs** last at least 75 minutes of moving time; their whole-session decoupling
//!   is listed against the 5 % coaching line.
//! - **Best efforts** across sessions: per duration, the fastest over the last
//!   [`HistoryParams::best_effort_days`] days. **Critical speed** fits distance on time over
//!   the bests of 3 to 20 minutes ([`race::critical_speed`], which refuses with a reason).
//! - **Race-like effort** for Riegel: among the best efforts of at least 5 minutes, the one
//!   with the highest equivalent VO2max (Daniels & Gilbert 1979). Shorter efforts are left
//!   out because F(t) > 1 below about 11 minutes inflates them and Riegel's law is only
//!   tested from about 3.5 minutes.

use std::collections::BTreeMap;

use chrono::{DateTime, Datelike, Duration, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use crate::model::AthleteProfile;

use super::best_efforts::BestEffort;
use super::decoupling::{efficiency, DECOUPLING_COACHING_LINE_PCT};
use super::load::{
    self, acute_chronic_band, AcuteChronicBand, ACUTE_CHRONIC_BAND_HIGH, ACUTE_CHRONIC_BAND_LOW,
    ACUTE_CHRONIC_CAUTION, ACUTE_CHRONIC_CRITICISM,
};
use super::race;
use super::review::Review;
use super::trend;

/// Marathon distance, metres.
pub const MARATHON_M: f64 = 42195.0;
/// Half-marathon distance, metres.
pub const HALF_MARATHON_M: f64 = 21097.5;

/// The race distances predicted, with their names.
pub const RACE_DISTANCES: [(&str, f64); 4] = [
    ("5 km", 5000.0),
    ("10 km", 10000.0),
    ("half marathon", HALF_MARATHON_M),
    ("marathon", MARATHON_M),
];

/// Longest predicted time for which Riegel's law is said to hold, seconds (about 230
/// minutes; a secondary source on Riegel 1981, methods.md §5).
pub const RIEGEL_MAX_S: f64 = 230.0 * 60.0;

/// One-line caveat printed with every prediction.
pub const PREDICTION_CAVEAT: &str = "Predictions assume a rested athlete, an even pace, good \
conditions and training suited to the distance; they are rough guides, not targets \
(critical speed holds for about 2-30 minute races, Riegel for about 3.5-230 minutes).";

/// The usual caution wording for a sharp rise in load.
pub const LOAD_CAUTION_WORDS: &str = "This is a coaching aid, not medical advice: look at how \
the athlete is coping, and if there is pain, illness or unusual fatigue suggest they see a \
physician.";

/// Knobs of the history. `Default` gives the documented defaults.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HistoryParams {
    /// ISO weeks shown, the current one last (default 12; at least 1).
    pub weeks: u32,
    /// Days searched for best efforts, today included (default 90).
    pub best_effort_days: u32,
    /// Fitness time constant τ1, days (default 42).
    pub tau_fitness_days: f64,
    /// Fatigue time constant τ2, days (default 7).
    pub tau_fatigue_days: f64,
    /// Fitness gain k1 (default 1).
    pub k_fitness: f64,
    /// Fatigue gain k2 (default 2).
    pub k_fatigue: f64,
    /// A run is easy when its mean relative intensity is under this (default 0.85).
    pub easy_max_relative_intensity: f64,
    /// A run is long from this much moving time, seconds (default 75 minutes).
    pub long_run_min_s: f64,
    /// Shortest best effort used for critical speed, seconds (default 180).
    pub cs_min_s: f64,
    /// Longest best effort used for critical speed, seconds (default 1200).
    pub cs_max_s: f64,
    /// Shortest best effort that may serve as the race-like effort, seconds (default 300).
    pub race_like_min_s: f64,
    /// The efficiency trend is "flat" when its fitted change is under this, percent
    /// (default 1; our choice, about the week-to-week noise of easy-run efficiency).
    pub efficiency_flat_pct: f64,
}

impl Default for HistoryParams {
    fn default() -> Self {
        HistoryParams {
            weeks: 12,
            best_effort_days: 90,
            tau_fitness_days: load::DEFAULT_TAU_FITNESS_DAYS,
            tau_fatigue_days: load::DEFAULT_TAU_FATIGUE_DAYS,
            k_fitness: load::DEFAULT_K_FITNESS,
            k_fatigue: load::DEFAULT_K_FATIGUE,
            easy_max_relative_intensity: 0.85,
            long_run_min_s: 75.0 * 60.0,
            cs_min_s: 180.0,
            cs_max_s: 1200.0,
            race_like_min_s: 300.0,
            efficiency_flat_pct: 1.0,
        }
    }
}

/// Seconds spent in one HR zone.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ZoneTime {
    /// Zone name as the review gives it.
    pub name: String,
    /// Seconds in the zone.
    pub seconds: f64,
}

/// What the history needs of one session: a cut of its cached [`Review`].
///
/// Fields added after the first version carry serde defaults, so a summary stored by an
/// older build still reads (as not steady: it is left out of the easy-run trend until its
/// review is cut again).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SessionSummary {
    /// `<athlete-id>/<file-stem>`.
    pub session_id: String,
    /// Start of the session.
    pub start: DateTime<Utc>,
    /// Sport label (`running`, `walking`, `cycling`, `unknown`, ...).
    pub sport: String,
    /// Distance, metres.
    pub distance_m: Option<f64>,
    /// Moving time, seconds.
    pub moving_s: f64,
    /// Banister TRIMP.
    pub trimp: Option<f64>,
    /// Time in each HR zone.
    pub hr_zones: Vec<ZoneTime>,
    /// Mean relative intensity, time-weighted over the intervals (moving time).
    pub relative_intensity: Option<f64>,
    /// Mean moving speed, m/s.
    pub mean_speed_mps: Option<f64>,
    /// Mean HR over the intervals, weighted by moving time, bpm.
    pub mean_hr: Option<f64>,
    /// Whole-session decoupling, percent.
    pub decoupling_pct: Option<f64>,
    /// The session's best efforts.
    pub best_efforts: Vec<BestEffort>,
    /// Work intervals found (detected or aligned to the plan) plus planned intervals that
    /// were not found.
    #[serde(default)]
    pub work_intervals: usize,
    /// Spread of effort across the session's intervals: the time-weighted coefficient of
    /// variation of their hill-adjusted speeds, percent (short standing or walking pieces
    /// at either end left out). `None` without speeds.
    #[serde(default)]
    pub effort_spread_pct: Option<f64>,
    /// Run at one effort throughout ([`steady_throughout`]); only such runs enter the
    /// easy-run efficiency trend.
    #[serde(default)]
    pub steady: bool,
}

/// Most spread of hill-adjusted speed across a session's intervals for it to count as
/// steady throughout, percent.
// Our choice (no published source): the intervals of an even easy run sit within 1-3 % of
// each other; a progression in 5 % steps or an easy run with a tempo block inside it spreads
// wider.
pub const STEADY_MAX_SPREAD_PCT: f64 = 6.0;

/// Most the best 3-minute speed may exceed the session's mean moving speed for the session
/// to count as steady throughout (a ratio). Catches surges the interval finder did not split
/// out. Raw speed, so it is loose enough for descents at an even effort.
// Our choice (no published source): even easy runs on the demo roster and in the simulator
// stay under 1.08; a 3-minute rep at 5 km pace in an easy session is about 1.3.
pub const STEADY_MAX_BURST_RATIO: f64 = 1.20;

/// Window of the best effort compared with the mean speed for [`STEADY_MAX_BURST_RATIO`], s.
pub const STEADY_BURST_WINDOW_S: f64 = 180.0;

/// Pieces at the start or end of a session shorter than this (standing at the start, a walk
/// at the end) are not counted in the spread of effort, seconds.
// Our choice (no published source): a standing start or a walk home is not a change of
// effort within the run.
pub const STEADY_END_PIECE_S: f64 = 120.0;

/// Share of the session's time one lone work interval must cover for the session to still
/// count as one effort (a standing start cut off as a seconds-long "warm-up").
// Our choice (no published source).
pub const STEADY_LONE_WORK_SHARE: f64 = 0.9;

fn interval_weight(i: &super::review::IntervalMetrics) -> f64 {
    if i.moving_s > 0.0 {
        i.moving_s
    } else {
        i.duration_s
    }
}

/// Time-weighted coefficient of variation of the intervals' hill-adjusted speeds (raw pace
/// where there is none), percent; pieces under [`STEADY_END_PIECE_S`] at either end that
/// are not work are left out. `None` when no interval has a pace.
pub fn effort_spread_pct(intervals: &[super::review::IntervalMetrics]) -> Option<f64> {
    let last = intervals.len().checked_sub(1)?;
    let pairs: Vec<(f64, f64)> = intervals
        .iter()
        .enumerate()
        .filter(|(k, i)| {
            let end = *k == 0 || *k == last;
            !(end && i.kind != "work" && i.duration_s < STEADY_END_PIECE_S)
        })
        .filter_map(|(_, i)| {
            let pace = i
                .hill_adjusted_pace_s_per_km
                .or(i.avg_pace_s_per_km)
                .filter(|p| p.is_finite() && *p > 0.0)?;
            let w = interval_weight(i);
            (w.is_finite() && w > 0.0).then(|| (1000.0 / pace, w))
        })
        .collect();
    let w: f64 = pairs.iter().map(|p| p.1).sum();
    if w <= 0.0 {
        return None;
    }
    let mean = pairs.iter().map(|(v, w)| v * w).sum::<f64>() / w;
    let var = pairs
        .iter()
        .map(|(v, w)| w * (v - mean).powi(2))
        .sum::<f64>()
        / w;
    (mean > 0.0).then(|| var.sqrt() / mean * 100.0)
}

/// Whether a session was run at one effort throughout, the test for the easy-run
/// efficiency trend: no recovery intervals and no planned interval missing; no work
/// interval, or one that covers at least [`STEADY_LONE_WORK_SHARE`] of the time (the whole
/// run, with a standing start cut off); the spread of hill-adjusted speed across the
/// intervals at most [`STEADY_MAX_SPREAD_PCT`]; and the best 3-minute speed at most
/// [`STEADY_MAX_BURST_RATIO`] times the mean moving speed.
pub fn steady_throughout(review: &Review) -> bool {
    let work: Vec<&super::review::IntervalMetrics> = review.work().collect();
    if review.intervals.iter().any(|i| i.kind == "recovery") || !review.missing_planned.is_empty() {
        return false;
    }
    let total: f64 = review.intervals.iter().map(interval_weight).sum();
    let one_effort = match work.as_slice() {
        [] => true,
        [only] => total > 0.0 && interval_weight(only) >= STEADY_LONE_WORK_SHARE * total,
        _ => false,
    };
    if !one_effort {
        return false;
    }
    if !effort_spread_pct(&review.intervals).is_some_and(|s| s <= STEADY_MAX_SPREAD_PCT) {
        return false;
    }
    let mean = session_speed(review);
    let burst = review
        .best_efforts
        .iter()
        .find(|b| (b.duration_s - STEADY_BURST_WINDOW_S).abs() < 0.5)
        .map(|b| b.speed_mps);
    match (burst, mean) {
        (Some(b), Some(m)) => b <= STEADY_MAX_BURST_RATIO * m,
        _ => true,
    }
}

/// The session's mean moving speed, m/s: the review's distance-over-time on the same
/// samples, or (a review cached before it had one) distance over moving time.
fn session_speed(review: &Review) -> Option<f64> {
    let moving = review.session.moving_s;
    review
        .session
        .avg_speed_mps
        .filter(|v| v.is_finite() && *v > 0.0)
        .or_else(|| {
            review
                .session
                .distance_m
                .filter(|d| d.is_finite() && *d > 0.0 && moving > 0.0)
                .map(|d| d / moving)
        })
}

fn weighted_mean(pairs: impl Iterator<Item = (Option<f64>, f64)>) -> Option<f64> {
    let (mut sum, mut w) = (0.0, 0.0);
    for (v, weight) in pairs {
        if let Some(v) = v.filter(|v| v.is_finite()) {
            if weight.is_finite() && weight > 0.0 {
                sum += v * weight;
                w += weight;
            }
        }
    }
    (w > 0.0).then(|| sum / w)
}

impl SessionSummary {
    /// Cut a summary from a review. `None` when the review's start time is unreadable.
    pub fn from_review(session_id: &str, review: &Review) -> Option<SessionSummary> {
        let start = DateTime::parse_from_rfc3339(&review.session.start)
            .ok()?
            .with_timezone(&Utc);
        let weight = interval_weight;
        let moving_s = review.session.moving_s;
        let mean_speed_mps = session_speed(review);
        Some(SessionSummary {
            session_id: session_id.to_string(),
            start,
            sport: review.session.sport.clone(),
            distance_m: review.session.distance_m,
            moving_s,
            trimp: review.trimp,
            hr_zones: review
                .zones
                .hr
                .iter()
                .map(|z| ZoneTime {
                    name: z.name.clone(),
                    seconds: z.seconds,
                })
                .collect(),
            relative_intensity: weighted_mean(
                review
                    .intervals
                    .iter()
                    .map(|i| (i.relative_intensity, weight(i))),
            ),
            mean_speed_mps,
            mean_hr: weighted_mean(review.intervals.iter().map(|i| (i.avg_hr, weight(i)))),
            decoupling_pct: review.decoupling_pct,
            best_efforts: review.best_efforts.clone(),
            work_intervals: review.work().count() + review.missing_planned.len(),
            effort_spread_pct: effort_spread_pct(&review.intervals),
            steady: steady_throughout(review),
        })
    }

    /// Runs count for volume, efficiency and best efforts (`running`, or `unknown`).
    pub fn is_run(&self) -> bool {
        matches!(self.sport.as_str(), "running" | "unknown")
    }

    /// The calendar day the session counts for ([`crate::model::session::session_day`]).
    pub fn date(&self) -> NaiveDate {
        crate::model::session::session_day(&self.session_id, self.start)
    }

    /// Metres per heartbeat over the session: `60·mean speed / mean HR`.
    pub fn efficiency_m_per_beat(&self) -> Option<f64> {
        efficiency(self.mean_speed_mps?, self.mean_hr?)
    }
}

/// One day's value of a series.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DailyValue {
    /// Calendar date.
    pub date: NaiveDate,
    /// The value.
    pub value: f64,
}

/// One day's acute/chronic ratio (`None` in the first 27 days or with no chronic load).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DailyRatio {
    /// Calendar date.
    pub date: NaiveDate,
    /// The ratio.
    pub value: Option<f64>,
}

/// Share of a week's HR-zone time in one zone.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ZoneShare {
    /// Zone name.
    pub name: String,
    /// Seconds in the zone.
    pub seconds: f64,
    /// Fraction of the week's zone time, 0..=1.
    pub share: f64,
}

/// Volume of one ISO week (runs only).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeekVolume {
    /// ISO week, e.g. `2026-W05`.
    pub week: String,
    /// Its Monday.
    pub week_start: NaiveDate,
    /// Distance, metres.
    pub distance_m: f64,
    /// Moving time, seconds.
    pub moving_s: f64,
    /// Number of runs.
    pub sessions: usize,
    /// Distance of the longest run, metres.
    pub longest_run_m: Option<f64>,
    /// Session id of the longest run.
    pub longest_run_session: Option<String>,
    /// Time by HR zone, with shares.
    pub hr_zones: Vec<ZoneShare>,
}

/// The latest acute/chronic ratio and its band.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LatestRatio {
    /// The day (today).
    pub date: NaiveDate,
    /// The ratio.
    pub value: f64,
    /// `below`, `within`, `above` or `caution` (Gabbett 2016 bands).
    pub band: String,
}

/// A day whose load took the acute/chronic ratio to [`ACUTE_CHRONIC_CAUTION`] or more.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LoadSpike {
    /// The day.
    pub date: NaiveDate,
    /// The ratio at the end of that day.
    pub ratio: f64,
    /// The day's load (TRIMP).
    pub load: f64,
    /// The sessions of that day.
    pub sessions: Vec<String>,
    /// The caution in words, with the criticism of the ratio and the usual wording.
    pub text: String,
}

/// The bands drawn with the ratio and how it is computed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RatioBands {
    /// Lower edge of the usual band, 0.8.
    pub low: f64,
    /// Upper edge of the usual band, 1.3.
    pub high: f64,
    /// Caution from here, 1.5.
    pub caution: f64,
    /// How the ratio is computed and seeded.
    pub method: String,
    /// The published criticism, one line.
    pub criticism: String,
}

/// Efficiency of one easy run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EfficiencyRun {
    /// Date of the run.
    pub date: NaiveDate,
    /// Session id.
    pub session: String,
    /// Metres per heartbeat.
    pub efficiency_m_per_beat: f64,
    /// Mean relative intensity that made it easy.
    pub relative_intensity: f64,
}

/// Weekly mean efficiency on easy runs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeeklyEfficiency {
    /// ISO week.
    pub week: String,
    /// Its Monday.
    pub week_start: NaiveDate,
    /// Mean of the week's easy runs, metres per heartbeat.
    pub mean_m_per_beat: f64,
    /// Number of easy runs.
    pub runs: usize,
}

/// Efficiency on easy runs over the window, with its least-squares trend.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EfficiencyTrend {
    /// Runs under this mean relative intensity count as easy.
    pub easy_max_relative_intensity: f64,
    /// Each easy run.
    pub runs: Vec<EfficiencyRun>,
    /// Weekly means (weeks with easy runs only).
    pub weekly: Vec<WeeklyEfficiency>,
    /// Fitted change per week, metres per heartbeat.
    pub slope_per_week: Option<f64>,
    /// Fitted change over the fitted span, percent of the fitted start.
    pub change_pct: Option<f64>,
    /// Weeks from the first to the last weekly mean.
    pub over_weeks: Option<f64>,
    /// R² of the fit.
    pub r2: Option<f64>,
    /// `rising`, `falling` or `flat`.
    pub direction: Option<String>,
    /// Plain words, e.g. "up 3 % over 6 weeks".
    pub text: String,
}

/// Decoupling of one long run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LongRun {
    /// Date of the run.
    pub date: NaiveDate,
    /// Session id.
    pub session: String,
    /// Moving time, seconds.
    pub moving_s: f64,
    /// Whole-session decoupling, percent.
    pub decoupling_pct: f64,
    /// Above the 5 % coaching line.
    pub above_line: bool,
}

/// Decoupling of long runs over the window.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LongRunDecoupling {
    /// Runs from this moving time count, seconds.
    pub min_moving_s: f64,
    /// The usual coaching line, percent (5).
    pub line_pct: f64,
    /// Long runs with a decoupling, oldest first.
    pub runs: Vec<LongRun>,
}

/// The best effort of one duration across sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BestEffortOut {
    /// Window, seconds.
    pub duration_s: f64,
    /// Best average speed, m/s.
    pub speed_mps: f64,
    /// Distance in the window, metres.
    pub distance_m: f64,
    /// Session id it comes from.
    pub session: String,
    /// Date of that session.
    pub date: NaiveDate,
    /// Daniels & Gilbert equivalent VO2max of the effort, mL/kg/min.
    pub equivalent_vo2max: Option<f64>,
    /// The effort is shorter than the equivalent-VO2max model's range (under about 11
    /// minutes, [`race::vo2max_beyond_model`]): its value reads high and is shown with
    /// [`race::SHORT_EFFORT_VO2MAX_CAVEAT`].
    pub vo2max_beyond_model: bool,
}

/// The critical-speed fit, or why there is none.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CriticalSpeedFit {
    /// Durations of the best efforts used, seconds.
    pub efforts_s: Vec<f64>,
    /// R² of the distance-on-time fit.
    pub r2: Option<f64>,
    /// Why no fit is given.
    pub refusal: Option<String>,
    /// Why a fit that was given should be read with care (D′ far outside what all-out
    /// efforts give).
    pub caution: Option<String>,
}

/// Below this D′ (metres) the best efforts were almost surely not all-out.
// From memory: D′ of trained runners is usually about 100-300 m (Jones & Vanhatalo 2017,
// Sports Med 47 Suppl 1:65-78); our design choice puts the lines well outside that range.
pub const D_PRIME_LOW_M: f64 = 50.0;
/// Above this D′ (metres) the fit is unlikely to describe the athlete.
// From memory: as above.
pub const D_PRIME_HIGH_M: f64 = 600.0;

/// Why a critical-speed fit with this D′ should be read with care, if it should.
pub fn d_prime_caution(d_prime_m: f64) -> Option<String> {
    if d_prime_m < D_PRIME_LOW_M {
        Some(format!(
            "D′ {d_prime_m:.0} m is far below what all-out efforts give (usually about \
             100-300 m): the best efforts were probably not all-out, or came from one steady \
             run, so critical speed and its predictions are rough"
        ))
    } else if d_prime_m > D_PRIME_HIGH_M {
        Some(format!(
            "D′ {d_prime_m:.0} m is far above what all-out efforts give (usually about \
             100-300 m): the longer best efforts were probably not all-out, so critical speed \
             and its predictions are rough"
        ))
    } else {
        None
    }
}

/// Predicted times for one race distance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Prediction {
    /// Name, e.g. `10 km`.
    pub race: String,
    /// Distance, metres.
    pub distance_m: f64,
    /// From critical speed and D′ (only for races of about 2-30 minutes).
    pub critical_speed_s: Option<f64>,
    /// From Riegel's law off the race-like effort.
    pub riegel_s: Option<f64>,
    /// The Riegel time is beyond about 230 minutes, where the law is untested.
    pub riegel_beyond_range: bool,
}

/// Everything the history screen and `splitdesk trends` show for one athlete.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct History {
    /// Athlete id.
    pub athlete: String,
    /// Display units (`km` or `mi`).
    pub units: String,
    /// First day of the window (a Monday).
    pub from: NaiveDate,
    /// Last day of the window (today).
    pub to: NaiveDate,
    /// The parameters used.
    pub params: HistoryParams,
    /// Sessions in the window (all sports).
    pub sessions: usize,
    /// Volume per ISO week.
    pub weekly: Vec<WeekVolume>,
    /// When the HR zones (time by zone) rest on HR max estimated from age: the words that
    /// say so ([`super::zones::hr_max_estimate_note`]).
    pub hr_max_estimate: Option<String>,
    /// Daily TRIMP over the window.
    pub daily_load: Vec<DailyValue>,
    /// EWMA acute/chronic ratio per day over the window.
    pub acute_chronic_ratio: Vec<DailyRatio>,
    /// Today's ratio and its band.
    pub acute_chronic_latest: Option<LatestRatio>,
    /// Every day in the window whose load took the ratio to the caution band, oldest first
    /// ([`load_spike_days`]).
    pub load_spikes: Vec<LoadSpike>,
    /// Bands, method and criticism.
    pub acute_chronic_bands: RatioBands,
    /// Fitness g per day.
    pub fitness: Vec<DailyValue>,
    /// Fatigue h per day.
    pub fatigue: Vec<DailyValue>,
    /// Readiness k1·g − k2·h per day.
    pub readiness: Vec<DailyValue>,
    /// Efficiency on easy runs and its trend.
    pub efficiency_trend: EfficiencyTrend,
    /// Decoupling of long runs.
    pub long_run_decoupling: LongRunDecoupling,
    /// Best effort per duration over the best-effort window.
    pub best_efforts: Vec<BestEffortOut>,
    /// Critical speed, m/s.
    pub critical_speed_mps: Option<f64>,
    /// D′, metres.
    pub d_prime_m: Option<f64>,
    /// Details of the critical-speed fit.
    pub critical_speed_fit: CriticalSpeedFit,
    /// The best effort Riegel predicts from.
    pub race_like_effort: Option<BestEffortOut>,
    /// Predicted race times.
    pub predictions: Vec<Prediction>,
    /// Caveat for the predictions.
    pub prediction_caveat: String,
    /// Cautions to show prominently.
    pub cautions: Vec<String>,
    /// How things were computed and what is missing.
    pub notes: Vec<String>,
}

/// Daily load (summed TRIMP) of every calendar day from the first session's day to `to`,
/// rest days and sessions without a load as 0: the series the acute/chronic ratio and the
/// impulse-response model run on. Sessions after `to` are ignored; empty without sessions.
pub fn daily_loads(summaries: &[SessionSummary], to: NaiveDate) -> Vec<DailyValue> {
    let mut by_day: BTreeMap<NaiveDate, f64> = BTreeMap::new();
    for s in summaries.iter().filter(|s| s.date() <= to) {
        let l = s
            .trimp
            .filter(|l| l.is_finite() && *l >= 0.0)
            .unwrap_or(0.0);
        *by_day.entry(s.date()).or_insert(0.0) += l;
    }
    let Some(&first) = by_day.keys().next() else {
        return Vec::new();
    };
    days_between(first, to)
        .map(|date| DailyValue {
            date,
            value: by_day.get(&date).copied().unwrap_or(0.0),
        })
        .collect()
}

/// The days whose load took the acute/chronic ratio ([`load::acute_chronic_ewma`], the
/// history's seed rule) to [`ACUTE_CHRONIC_CAUTION`] or more, with that ratio, oldest first.
/// A day counts when it carried a load and ended at or above the line; rest days after a
/// spike only lower the ratio. `daily` is one entry per calendar day from the start of the
/// athlete's data ([`daily_loads`]); the ratio of a day depends only on the days before it,
/// never on today's date.
pub fn load_spike_days(daily: &[DailyValue]) -> Vec<(NaiveDate, f64)> {
    let loads: Vec<f64> = daily.iter().map(|d| d.value).collect();
    let ratios = load::acute_chronic_ewma(&loads);
    daily
        .iter()
        .zip(ratios)
        .filter_map(|(d, r)| {
            let r = r.filter(|r| r.is_finite())?;
            (d.value > 0.0 && r >= ACUTE_CHRONIC_CAUTION).then_some((d.date, r))
        })
        .collect()
}

/// The caution for a day whose load took the ratio to `ratio`, in words: what happened,
/// the published criticism of the ratio and the usual "coaching aid, not medical advice".
pub fn load_spike_text(date: NaiveDate, ratio: f64) -> String {
    format!(
        "Training load rose sharply on {date}: that day took the acute/chronic ratio to \
         {ratio:.2}, at or above {ACUTE_CHRONIC_CAUTION:.1}, the band usually marked for caution \
         (Gabbett 2016). {ACUTE_CHRONIC_CRITICISM} {LOAD_CAUTION_WORDS}"
    )
}

/// `code` of the load-spike finding a session carries at the view edge.
pub const LOAD_SPIKE_CODE: &str = "load_spike";

/// Whether the day of session `session_id` took the athlete's acute/chronic ratio to the
/// caution band, computed from all of `summaries` (the athlete's sessions, this one
/// included) up to that day: `(day, ratio)`. `None` when it did not, or the session is not
/// among the summaries.
pub fn session_load_spike(
    summaries: &[SessionSummary],
    session_id: &str,
) -> Option<(NaiveDate, f64)> {
    let day = summaries
        .iter()
        .find(|s| s.session_id == session_id)?
        .date();
    load_spike_days(&daily_loads(summaries, day))
        .into_iter()
        .find(|(d, _)| *d == day)
}

/// The finding a session carries when its day took the ratio to the caution band
/// ([`session_load_spike`]). Added where the session is shown (it needs the athlete's other
/// sessions, which the per-file review does not see); the feedback draft leaves it out.
pub fn load_spike_finding(
    summaries: &[SessionSummary],
    session_id: &str,
) -> Option<super::findings::Finding> {
    let (date, ratio) = session_load_spike(summaries, session_id)?;
    Some(super::findings::Finding {
        severity: super::findings::Severity::Caution,
        code: LOAD_SPIKE_CODE.to_string(),
        text: load_spike_text(date, ratio),
        metrics: vec!["acute_chronic_ratio".to_string()],
    })
}

/// `v` with `decimals` decimals, never a negative zero: a value that rounds to zero prints
/// as `0.0`, not `-0.0` (an empty sum of floats is `-0.0`, and a tiny negative decoupling
/// rounds to it).
pub fn fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => s,
    }
}

/// A distance in the athlete's units with two decimals, never `-0.00`.
pub fn fixed_distance(metres: f64, units: crate::model::Units) -> String {
    format!("{} {}", fixed(metres / units.metres(), 2), units.label())
}

/// ISO week label, e.g. `2026-W05`.
pub fn iso_week_label(date: NaiveDate) -> String {
    let w = date.iso_week();
    format!("{}-W{:02}", w.year(), w.week())
}

/// The Monday of the ISO week holding `date`.
pub fn week_monday(date: NaiveDate) -> NaiveDate {
    date - Duration::days(i64::from(date.weekday().num_days_from_monday()))
}

fn days_between(from: NaiveDate, to: NaiveDate) -> impl Iterator<Item = NaiveDate> {
    let n = (to - from).num_days().max(-1) + 1;
    (0..n).map(move |k| from + Duration::days(k))
}

fn band_name(b: AcuteChronicBand) -> &'static str {
    match b {
        AcuteChronicBand::Below => "below",
        AcuteChronicBand::Within => "within",
        AcuteChronicBand::Above => "above",
        AcuteChronicBand::Caution => "caution",
    }
}

/// Build the history of one athlete from their session summaries (any order; sessions
/// after `today` are ignored). See the module docs for every rule.
pub fn build(
    summaries: &[SessionSummary],
    profile: &AthleteProfile,
    params: &HistoryParams,
    today: NaiveDate,
) -> History {
    let mut sessions: Vec<&SessionSummary> =
        summaries.iter().filter(|s| s.date() <= today).collect();
    sessions.sort_by_key(|s| s.start);
    let weeks = params.weeks.max(1);
    let from = week_monday(today) - Duration::weeks(i64::from(weeks) - 1);
    let in_window: Vec<&SessionSummary> = sessions
        .iter()
        .copied()
        .filter(|s| s.date() >= from)
        .collect();
    let runs: Vec<&SessionSummary> = in_window.iter().copied().filter(|s| s.is_run()).collect();
    let mut notes = Vec::new();
    let mut cautions = Vec::new();

    let weekly = weekly_volume(&runs, from, today);

    // ----- load -----
    let model_start = sessions.first().map(|s| s.date()).unwrap_or(from);
    let mut by_day: BTreeMap<NaiveDate, f64> = BTreeMap::new();
    let mut without_load = 0usize;
    for s in &sessions {
        match s.trimp.filter(|l| l.is_finite() && *l >= 0.0) {
            Some(l) => *by_day.entry(s.date()).or_insert(0.0) += l,
            None => without_load += 1,
        }
    }
    if without_load > 0 {
        notes.push(format!(
            "{without_load} session(s) without a load (no heart rate, or no rest/max HR in the \
             profile) count as 0."
        ));
    }
    let model_days: Vec<NaiveDate> = days_between(model_start, today).collect();
    let loads: Vec<f64> = model_days
        .iter()
        .map(|d| by_day.get(d).copied().unwrap_or(0.0))
        .collect();
    let ratios = load::acute_chronic_ewma(&loads);
    let ir = load::fitness_fatigue(
        &loads,
        params.tau_fitness_days,
        params.tau_fatigue_days,
        params.k_fitness,
        params.k_fatigue,
    );
    if ir.is_none() {
        notes.push(
            "fitness and fatigue not computed: the time constants must be positive".to_string(),
        );
    }
    let index_of =
        |d: NaiveDate| -> Option<usize> { usize::try_from((d - model_start).num_days()).ok() };
    let window_days: Vec<NaiveDate> = days_between(from, today).collect();
    let daily_load = window_days
        .iter()
        .map(|&date| DailyValue {
            date,
            value: by_day.get(&date).copied().unwrap_or(0.0),
        })
        .collect();
    let acute_chronic_ratio: Vec<DailyRatio> = window_days
        .iter()
        .map(|&date| DailyRatio {
            date,
            value: index_of(date).and_then(|k| ratios.get(k).copied().flatten()),
        })
        .collect();
    let ir_series = |f: fn(&load::ImpulseResponseDay) -> f64| -> Vec<DailyValue> {
        match &ir {
            None => Vec::new(),
            Some(days) => window_days
                .iter()
                .map(|&date| DailyValue {
                    date,
                    value: index_of(date)
                        .and_then(|k| days.get(k))
                        .map(f)
                        .unwrap_or(0.0),
                })
                .collect(),
        }
    };
    let fitness = ir_series(|d| d.fitness);
    let fatigue = ir_series(|d| d.fatigue);
    let readiness = ir_series(|d| d.readiness);
    let acute_chronic_latest = ratios
        .last()
        .copied()
        .flatten()
        .and_then(|value| Some((value, acute_chronic_band(value)?)))
        .map(|(value, band)| LatestRatio {
            date: today,
            value,
            band: band_name(band).to_string(),
        });
    let daily_model: Vec<DailyValue> = model_days
        .iter()
        .zip(&loads)
        .map(|(&date, &value)| DailyValue { date, value })
        .collect();
    let load_spikes: Vec<LoadSpike> = load_spike_days(&daily_model)
        .into_iter()
        .filter(|(d, _)| *d >= from)
        .map(|(date, ratio)| LoadSpike {
            date,
            ratio,
            load: by_day.get(&date).copied().unwrap_or(0.0),
            sessions: sessions
                .iter()
                .filter(|s| s.date() == date)
                .map(|s| s.session_id.clone())
                .collect(),
            text: load_spike_text(date, ratio),
        })
        .collect();
    // The highest ratio of the last 7 days: a spike on Tuesday still matters on Thursday,
    // when rest days have pulled the ratio back under the line.
    let week_peak = acute_chronic_ratio
        .iter()
        .rev()
        .take(7)
        .filter_map(|r| r.value.map(|v| (r.date, v)))
        .fold(None::<(NaiveDate, f64)>, |best, (d, v)| match best {
            Some((_, b)) if b >= v => best,
            _ => Some((d, v)),
        });
    match (&acute_chronic_latest, week_peak) {
        (Some(l), _) if l.value >= ACUTE_CHRONIC_CAUTION => cautions.push(format!(
            "Training load rose sharply: the acute/chronic ratio is {:.2} today, at or above \
             {ACUTE_CHRONIC_CAUTION:.1}, the band usually marked for caution. {LOAD_CAUTION_WORDS}",
            l.value
        )),
        (Some(_), Some((date, v))) if v >= ACUTE_CHRONIC_CAUTION => cautions.push(format!(
            "Training load rose sharply: the acute/chronic ratio reached {v:.2} on {date} (this \
             week), at or above {ACUTE_CHRONIC_CAUTION:.1}, the band usually marked for caution. \
             {LOAD_CAUTION_WORDS}"
        )),
        (Some(_), _) => {}
        (None, _) => notes.push(
            "no acute/chronic ratio today: it needs 28 days of data and some chronic load"
                .to_string(),
        ),
    }
    notes.push(ACUTE_CHRONIC_CRITICISM.to_string());

    // ----- efficiency, long runs -----
    let efficiency_trend = efficiency_trend(&runs, profile, params, from, &mut notes);
    let long_run_decoupling = LongRunDecoupling {
        min_moving_s: params.long_run_min_s,
        line_pct: DECOUPLING_COACHING_LINE_PCT,
        runs: runs
            .iter()
            .filter(|s| s.moving_s >= params.long_run_min_s)
            .filter_map(|s| {
                let d = s.decoupling_pct.filter(|d| d.is_finite())?;
                Some(LongRun {
                    date: s.date(),
                    session: s.session_id.clone(),
                    moving_s: s.moving_s,
                    decoupling_pct: d,
                    above_line: d > DECOUPLING_COACHING_LINE_PCT,
                })
            })
            .collect(),
    };

    // ----- best efforts, critical speed, predictions -----
    let be_from = today - Duration::days(i64::from(params.best_effort_days.max(1)) - 1);
    let be_sessions: Vec<&SessionSummary> = sessions
        .iter()
        .copied()
        .filter(|s| s.is_run() && s.date() >= be_from)
        .collect();
    let best_efforts = best_across(&be_sessions);
    let (critical_speed_mps, d_prime_m, critical_speed_fit) = cs_fit(&best_efforts, params);
    if let Some(r) = &critical_speed_fit.refusal {
        notes.push(format!("no critical speed: {r}"));
    }
    if let Some(c) = &critical_speed_fit.caution {
        notes.push(format!("critical speed: {c}"));
    }
    let race_like_effort = best_efforts
        .iter()
        .filter(|b| b.duration_s >= params.race_like_min_s)
        .filter_map(|b| Some((b, b.equivalent_vo2max?)))
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(b, _)| b.clone());
    let predictions = predictions(critical_speed_mps, d_prime_m, race_like_effort.as_ref());
    if best_efforts.is_empty() {
        notes.push(format!(
            "no best efforts in the last {} days",
            params.best_effort_days
        ));
    }
    notes.push(
        "a session's date is the date its file name starts with (the athlete's calendar), \
         else the UTC date of its start; weeks are ISO weeks (Monday to Sunday)"
            .to_string(),
    );

    History {
        athlete: profile.id.clone(),
        units: profile.units.label().to_string(),
        from,
        to: today,
        params: *params,
        sessions: in_window.len(),
        weekly,
        hr_max_estimate: super::zones::hr_max_estimate_note(
            profile,
            super::zones::age_in_year(profile, today.year()),
        ),
        daily_load,
        acute_chronic_ratio,
        acute_chronic_latest,
        load_spikes,
        acute_chronic_bands: RatioBands {
            low: ACUTE_CHRONIC_BAND_LOW,
            high: ACUTE_CHRONIC_BAND_HIGH,
            caution: ACUTE_CHRONIC_CAUTION,
            method: format!(
                "EWMA of daily TRIMP, acute N = 7 over chronic N = 28 (Williams et al. 2017), \
                 both seeded with the mean load of the first 7 days of data (from {model_start})"
            ),
            criticism: ACUTE_CHRONIC_CRITICISM.to_string(),
        },
        fitness,
        fatigue,
        readiness,
        efficiency_trend,
        long_run_decoupling,
        best_efforts,
        critical_speed_mps,
        d_prime_m,
        critical_speed_fit,
        race_like_effort,
        predictions,
        prediction_caveat: PREDICTION_CAVEAT.to_string(),
        cautions,
        notes,
    }
}

fn weekly_volume(runs: &[&SessionSummary], from: NaiveDate, today: NaiveDate) -> Vec<WeekVolume> {
    let mut out = Vec::new();
    let mut monday = from;
    while monday <= today {
        let sunday = monday + Duration::days(6);
        let week: Vec<&SessionSummary> = runs
            .iter()
            .copied()
            .filter(|s| (monday..=sunday).contains(&s.date()))
            .collect();
        let longest = week
            .iter()
            .filter_map(|s| Some((s, s.distance_m.filter(|d| d.is_finite())?)))
            .max_by(|a, b| a.1.total_cmp(&b.1));
        let mut zones: Vec<(String, f64)> = Vec::new();
        for s in &week {
            for z in &s.hr_zones {
                let secs = if z.seconds.is_finite() {
                    z.seconds
                } else {
                    0.0
                };
                match zones.iter_mut().find(|(n, _)| *n == z.name) {
                    Some((_, acc)) => *acc += secs,
                    None => zones.push((z.name.clone(), secs)),
                }
            }
        }
        let total: f64 = zones.iter().fold(0.0, |a, z| a + z.1);
        out.push(WeekVolume {
            week: iso_week_label(monday),
            week_start: monday,
            // Folded from +0.0: `sum()` of no floats is -0.0, printed "-0.00".
            distance_m: week
                .iter()
                .filter_map(|s| s.distance_m.filter(|d| d.is_finite()))
                .fold(0.0, |a, d| a + d),
            moving_s: week
                .iter()
                .map(|s| s.moving_s)
                .filter(|m| m.is_finite())
                .fold(0.0, |a, m| a + m),
            sessions: week.len(),
            longest_run_m: longest.map(|l| l.1),
            longest_run_session: longest.map(|l| l.0.session_id.clone()),
            hr_zones: zones
                .into_iter()
                .map(|(name, seconds)| ZoneShare {
                    name,
                    seconds,
                    share: if total > 0.0 { seconds / total } else { 0.0 },
                })
                .collect(),
        });
        monday += Duration::weeks(1);
    }
    out
}

fn efficiency_trend(
    runs: &[&SessionSummary],
    profile: &AthleteProfile,
    params: &HistoryParams,
    from: NaiveDate,
    notes: &mut Vec<String>,
) -> EfficiencyTrend {
    let threshold = profile
        .threshold_speed_mps
        .filter(|v| v.is_finite() && *v > 0.0);
    let mut not_steady = 0usize;
    let easy: Vec<EfficiencyRun> = runs
        .iter()
        .filter_map(|s| {
            let ri = s
                .relative_intensity
                .or_else(|| Some(s.mean_speed_mps? / threshold?))
                .filter(|r| r.is_finite())?;
            if ri >= params.easy_max_relative_intensity {
                return None;
            }
            if !s.steady {
                not_steady += 1;
                return None;
            }
            Some(EfficiencyRun {
                date: s.date(),
                session: s.session_id.clone(),
                efficiency_m_per_beat: s.efficiency_m_per_beat()?,
                relative_intensity: ri,
            })
        })
        .collect();
    if threshold.is_none() && runs.iter().all(|s| s.relative_intensity.is_none()) {
        notes.push(
            "no threshold pace in the profile: easy runs cannot be told apart, so there is no \
             efficiency trend"
                .to_string(),
        );
    }
    if not_steady > 0 {
        notes.push(format!(
            "{not_steady} run(s) with an easy average left out of the efficiency trend: not \
             steady throughout (work intervals, recoveries or changes of pace)"
        ));
    }
    let mut weeks: BTreeMap<NaiveDate, (f64, usize)> = BTreeMap::new();
    for r in &easy {
        let e = weeks.entry(week_monday(r.date)).or_insert((0.0, 0));
        e.0 += r.efficiency_m_per_beat;
        e.1 += 1;
    }
    let weekly: Vec<WeeklyEfficiency> = weeks
        .iter()
        .map(|(&monday, &(sum, n))| WeeklyEfficiency {
            week: iso_week_label(monday),
            week_start: monday,
            mean_m_per_beat: sum / n as f64,
            runs: n,
        })
        .collect();
    let xs: Vec<f64> = weekly
        .iter()
        .map(|w| (w.week_start - from).num_days() as f64 / 7.0)
        .collect();
    let ys: Vec<f64> = weekly.iter().map(|w| w.mean_m_per_beat).collect();
    let mut out = EfficiencyTrend {
        easy_max_relative_intensity: params.easy_max_relative_intensity,
        runs: easy,
        weekly,
        slope_per_week: None,
        change_pct: None,
        over_weeks: None,
        r2: None,
        direction: None,
        text: "not enough easy runs with heart rate for a trend (needs two weeks)".to_string(),
    };
    if let Some(f) = trend::fit(&xs, &ys) {
        let start = f.predict(f.x_min);
        if start > 0.0 {
            let pct = f.change() / start * 100.0;
            let span = f.x_max - f.x_min;
            let dir = f.direction(start * params.efficiency_flat_pct / 100.0);
            let weeks_words = format!(
                "{span:.0} week{}",
                if span.round() == 1.0 { "" } else { "s" }
            );
            out.text = match dir {
                trend::Direction::Rising => format!("up {:.0} % over {weeks_words}", pct.abs()),
                trend::Direction::Falling => {
                    format!("down {:.0} % over {weeks_words}", pct.abs())
                }
                trend::Direction::Flat => format!(
                    "flat over {weeks_words} (within {:.0} %)",
                    params.efficiency_flat_pct
                ),
            };
            out.slope_per_week = Some(f.slope);
            out.change_pct = Some(pct);
            out.over_weeks = Some(span);
            out.r2 = Some(f.r2);
            out.direction = Some(dir.as_str().to_string());
        }
    }
    out
}

fn best_across(sessions: &[&SessionSummary]) -> Vec<BestEffortOut> {
    // Keyed by duration in tenths of a second, so equal durations from different sessions meet.
    let mut best: BTreeMap<i64, BestEffortOut> = BTreeMap::new();
    for s in sessions {
        for e in &s.best_efforts {
            let ok = [e.duration_s, e.distance_m, e.speed_mps]
                .iter()
                .all(|v| v.is_finite())
                && e.duration_s > 0.0
                && e.speed_mps > 0.0;
            if !ok {
                continue;
            }
            let key = (e.duration_s * 10.0).round() as i64;
            let better = best.get(&key).is_none_or(|b| e.speed_mps > b.speed_mps);
            if better {
                best.insert(
                    key,
                    BestEffortOut {
                        duration_s: e.duration_s,
                        speed_mps: e.speed_mps,
                        distance_m: e.distance_m,
                        session: s.session_id.clone(),
                        date: s.date(),
                        equivalent_vo2max: race::daniels_gilbert_vo2max(e.distance_m, e.duration_s),
                        vo2max_beyond_model: race::vo2max_beyond_model(e.duration_s),
                    },
                );
            }
        }
    }
    best.into_values().collect()
}

fn cs_fit(
    best: &[BestEffortOut],
    params: &HistoryParams,
) -> (Option<f64>, Option<f64>, CriticalSpeedFit) {
    let used: Vec<&BestEffortOut> = best
        .iter()
        .filter(|b| (params.cs_min_s..=params.cs_max_s).contains(&b.duration_s))
        .collect();
    let points: Vec<(f64, f64)> = used.iter().map(|b| (b.duration_s, b.distance_m)).collect();
    let efforts_s = used.iter().map(|b| b.duration_s).collect();
    match race::critical_speed(&points) {
        Ok(f) => (
            Some(f.cs_mps),
            Some(f.d_prime_m),
            CriticalSpeedFit {
                efforts_s,
                r2: Some(f.r2),
                refusal: None,
                caution: d_prime_caution(f.d_prime_m),
            },
        ),
        Err(e) => (
            None,
            None,
            CriticalSpeedFit {
                efforts_s,
                r2: None,
                refusal: Some(format!(
                    "{e} (best efforts of {:.0} to {:.0} min in the window)",
                    params.cs_min_s / 60.0,
                    params.cs_max_s / 60.0
                )),
                caution: None,
            },
        ),
    }
}

fn predictions(
    cs: Option<f64>,
    d_prime: Option<f64>,
    race_like: Option<&BestEffortOut>,
) -> Vec<Prediction> {
    RACE_DISTANCES
        .iter()
        .map(|&(name, d)| {
            let riegel_s = race_like.and_then(|r| race::riegel(r.duration_s, r.distance_m, d));
            Prediction {
                race: name.to_string(),
                distance_m: d,
                critical_speed_s: match (cs, d_prime) {
                    (Some(cs), Some(dp)) => race::predict_time_cs(cs, dp, d),
                    _ => None,
                },
                riegel_s,
                riegel_beyond_range: riegel_s.is_some_and(|t| t > RIEGEL_MAX_S),
            }
        })
        .collect()
}
