//! The objective review of one session: per-interval metrics, recoveries, trends across the
//! set, whole-session metrics and findings. Everything the coach sees before grading.
//!
//! Pure: a cleaned `Session`, its `IntervalSet`, the plan and the athlete's profile in; a
//! `Review` out. Times are seconds from the first sample, paces seconds per km, speeds m/s.
//! A metric that cannot be computed is `None` (JSON `null`), never invented.

use serde::{Deserialize, Serialize};

use crate::ingest::clean::{flagged_fraction, sample_mask};
use crate::model::units::{format_pace, pace_s_per_km};
use crate::model::{
    AthleteProfile, ChannelKind, Interval, IntervalSet, Plan, SegmentKind, Session, Target,
};

use super::decoupling::{decoupling_pct, hr_drift_bpm_per_h, DECOUPLING_COACHING_LINE_PCT};
use super::elevation::{gain_loss, DEFAULT_HYSTERESIS_M};
use super::findings::{self, Finding};
use super::gradient::{gradients, hill_adjusted_speed_with, HillAdjustment};
use super::load::trimp_from_samples;
use super::motion::Motion;
use super::sampling::sample_dt;
use super::trend;
use super::zones::{hr_zones, pace_zones, time_in_zones};

/// Bumped whenever a number in the review may change; cached summaries of another version
/// are recomputed.
pub const ANALYSIS_VERSION: u32 = 8;

/// The JSON schema name of [`Review`].
pub const SCHEMA: &str = "splitdesk.analysis/1";

/// In-interval decoupling is computed for work intervals at least this long, seconds.
// Common coaching practice (no published source): shorter efforts have no steady state.
pub const MIN_INTERVAL_DECOUPLING_S: f64 = 120.0;

/// The whole-session decoupling needs at least this much analysed time, seconds.
// Common coaching practice (no published source).
pub const MIN_DECOUPLING_S: f64 = 20.0 * 60.0;

/// The HR drift is fitted from this long after the start of the steady window, seconds:
/// heart rate rises for two to three minutes after a change of effort (the start of a race
/// after its warm-up) before the slow drift shows. Common coaching practice (no published
/// source).
pub const HR_SETTLE_S: f64 = 180.0;

/// Slack on [`MIN_DECOUPLING_S`]: a 20-minute effort whose first sample's spacing falls
/// outside the window still counts, seconds. Our design choice (one sample at the slowest
/// smart-recording rhythm).
pub const DECOUPLING_SLACK_S: f64 = 15.0;

/// Without a plan, the first part of a session left out of the decoupling, seconds.
// Common coaching practice (no published source): the warm-up.
pub const DEFAULT_WARMUP_S: f64 = 10.0 * 60.0;

/// A warm-up left out of the steady part with less running than this is no warm-up: the
/// first [`DEFAULT_WARMUP_S`] of running are left out as well, seconds. Our design choice.
pub const MIN_WARMUP_RUNNING_S: f64 = 5.0 * 60.0;

/// Trends across a set are "flat" when the fitted change over the set is under this, s/km.
// Common coaching practice (no published source).
pub const FLAT_PACE_S_PER_KM: f64 = 2.0;
/// Trends across a set are "flat" when the fitted change over the set is under this, bpm.
// Common coaching practice (no published source).
pub const FLAT_HR_BPM: f64 = 2.0;
/// Flat band for cadence trends, steps/min. Common coaching practice (no published source).
pub const FLAT_CADENCE_SPM: f64 = 2.0;
/// Flat band for HR-lag trends, seconds. Common coaching practice (no published source).
pub const FLAT_LAG_S: f64 = 3.0;

/// How far after the end of a work interval the HR peak is looked for, seconds.
pub const HR_LAG_WINDOW_S: f64 = 60.0;

/// Half-width of the centred window that smooths HR for the HR lag and trough, seconds.
// Our design choice: wide enough to average out sensor jitter, short against a 10-30 s lag.
pub const HR_SMOOTHING_HALF_S: f64 = 5.0;

/// The HR peak after a work interval is the middle of the stretch within this of the top.
// Our design choice: about the size of sensor noise once smoothed.
pub const PEAK_PLATEAU_BPM: f64 = 0.5;

/// Pace variability is reported for work intervals at least this long, seconds.
// Common coaching practice (no published source).
pub const MIN_VARIABILITY_S: f64 = 300.0;

/// Length of the splits whose mean speeds give the pace variability, seconds.
// Common coaching practice (no published source).
pub const VARIABILITY_SPLIT_S: f64 = 30.0;

/// Slack on the pace band for "target hit", s/km: a pace that rounds to the band's edge
/// on screen is on target.
pub const PACE_DISPLAY_SLACK_S: f64 = 0.5;

/// Half-width of the centred window that smooths speed for time-in-target, seconds.
// Our design choice: GPS speed jitters by several percent from second to second.
pub const TARGET_SMOOTHING_HALF_S: f64 = 5.0;

/// A work or steady interval whose mean gradient is at least this steep (up or down, rise
/// over run) is not judged against a pace target (an HR target still is): "5k effort up the hill" is an effort, and 5k pace
/// on a 6 % climb would be a sprint. The watch pace would call every such rep slow, and
/// the full hill-adjusted pace (Minetti et al. 2002, J Appl Physiol 93:1039) calls most of
/// them fast, because runners do not hold their metabolic power on hills (From memory:
/// Townshend, Worringham & Stewart, Med Sci Sports Exerc 2010;42(1):160-169). So the
/// review gives both paces beside the band and leaves the judgement to the coach.
// Common coaching practice (no published source): sustained climbs and descents are
// prescribed and judged by effort.
pub const HILL_TARGET_GRADE: f64 = 0.02;

/// Share of moving time with a usable HR sample below which HR figures rest on partial
/// data: load (TRIMP) is then a lower bound and a finding names the drop-outs.
// Common coaching practice (no published source): the same 5 % the flagged-data note uses
// (a few seconds lost here and there are normal for chest straps and optical sensors).
pub const HR_COVERAGE_MIN: f64 = 0.95;

/// HR missing at the very start of a session (the sensor pairing with the watch) is left
/// out of the coverage when the first HR sample comes within this many seconds.
// Common coaching practice (no published source): pairing takes a few seconds up to about
// half a minute; one minute leaves room and is too short to matter for load.
pub const HR_PAIRING_GRACE_S: f64 = 60.0;

/// HR above the profile's maximum for at least this long in total counts as sustained.
// Common coaching practice (no published source): longer than any single-beat artefact
// and than an optical sensor's brief misreads; a short hard rep at a new maximum lasts
// longer than this.
pub const ABOVE_MAX_SUSTAINED_S: f64 = 20.0;

/// HR more than this far above the profile's maximum is not taken for a stale profile.
// From memory: the age-predicted maximum has a standard error of about 7-11 bpm (Tanaka
// et al. 2001; methods.md §3, §12), so about two standard errors; a measured maximum is
// closer than that. Common coaching practice (no published source) beyond it.
pub const ABOVE_MAX_STALE_RANGE_BPM: f64 = 20.0;

/// Fastest mean rise of HR over the 10 s before it goes above the profile's maximum that
/// still reads as a heart following effort, bpm per second.
// Common coaching practice (no published source): near maximum, HR climbs by a beat or
// two per second at most; a sensor jumping onto noise moves much faster.
pub const ABOVE_MAX_RISE_BPM_PER_S: f64 = 3.0;

/// HR above the profile's maximum "matches the effort" when the speed over the minute up
/// to and through it is at least this fraction of the session's median moving speed.
// Common coaching practice (no published source): a maximal HR comes with a hard effort,
// never while standing or jogging slower than usual.
pub const ABOVE_MAX_EFFORT_FRACTION: f64 = 0.95;

/// Steady pace for HR drift: hill-adjusted speed within this fraction of the median.
// Common coaching practice (no published source).
pub const STEADY_BAND: f64 = 0.10;

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SessionInfo {
    pub format: String,
    pub sport: String,
    pub start: String,
    pub duration_s: f64,
    pub moving_s: f64,
    pub distance_m: Option<f64>,
    /// Mean moving speed, m/s, from a distance and a time over the same samples (a
    /// distance carried across a recording gap or a flagged stretch is left out of it, as
    /// the gap's time is left out of `moving_s`): the session's average pace is
    /// `1000 / avg_speed_mps`, not `distance_m / moving_s`. `None` without speed or
    /// distance.
    #[serde(default)]
    pub avg_speed_mps: Option<f64>,
    pub samples: usize,
    pub channels: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct PlanInfo {
    pub title: String,
    pub purpose: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FlagOut {
    pub from_s: f64,
    pub to_s: f64,
    pub channel: String,
    pub kind: String,
    pub reason: String,
}

/// The metrics of one interval.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct IntervalMetrics {
    /// 1-based position in the session.
    pub index: usize,
    /// 1-based number among the work intervals (work intervals only).
    pub work_number: Option<usize>,
    pub kind: String,
    pub source: String,
    pub mode: Option<String>,
    pub start_s: f64,
    pub end_s: f64,
    pub duration_s: f64,
    pub moving_s: f64,
    pub distance_m: Option<f64>,
    pub avg_pace_s_per_km: Option<f64>,
    pub hill_adjusted_pace_s_per_km: Option<f64>,
    pub avg_hr: Option<f64>,
    pub max_hr: Option<f64>,
    pub end_hr: Option<f64>,
    pub avg_cadence_spm: Option<f64>,
    pub relative_intensity: Option<f64>,
    pub first_half_pace_s_per_km: Option<f64>,
    pub second_half_pace_s_per_km: Option<f64>,
    pub decoupling_pct: Option<f64>,
    /// Work intervals of 5 min or more: coefficient of variation of the 30-s mean
    /// (hill-adjusted) speeds, percent. Surges and fades raise it; even pacing keeps it low.
    pub pace_variability_pct: Option<f64>,
    /// The plan's target in words, in the athlete's units.
    pub target: Option<String>,
    /// Target band as speeds (slow, fast), m/s, when it is a pace target.
    pub target_band_mps: Option<(f64, f64)>,
    pub target_hr: Option<(f64, f64)>,
    pub in_target_pct: Option<f64>,
    pub target_hit: Option<bool>,
    /// Mean gradient over the interval's moving samples, percent (rise over run x 100);
    /// `None` without altitude.
    #[serde(default)]
    pub grade_pct: Option<f64>,
    /// How the target was judged: `"pace"`, `"hr"`, or `"not_judged_on_hill"` for a pace
    /// target on a climb or descent of at least [`HILL_TARGET_GRADE`] (then
    /// `target_hit` and `in_target_pct` are null). `None` when there is nothing to judge.
    #[serde(default)]
    pub target_basis: Option<String>,
    /// Share (0..1) of the interval's moving time with a usable HR sample (present, not
    /// flagged, not paused); `None` without an HR channel or without moving time.
    #[serde(default)]
    pub hr_coverage: Option<f64>,
}

impl IntervalMetrics {
    /// Whether a pace target was left unjudged because the interval ran on a hill.
    pub fn target_on_hill(&self) -> bool {
        self.target_basis.as_deref() == Some(TARGET_NOT_JUDGED_ON_HILL)
    }
}

/// `target_basis` of a pace target left unjudged on a hill.
pub const TARGET_NOT_JUDGED_ON_HILL: &str = "not_judged_on_hill";

/// What happened after one work interval.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RecoveryMetrics {
    /// `index` of the work interval this follows.
    pub after_work: usize,
    /// Work-interval number (1-based) this follows.
    pub work_number: usize,
    pub recovery_trough_bpm: Option<f64>,
    pub trough_at_s: Option<f64>,
    pub hr_lag_s: Option<f64>,
    pub hr_lag_bpm: Option<f64>,
    pub hr_drop_60s_bpm: Option<f64>,
    /// True when HR was missing for more than [`HR_COVERAGE_MIN`] of the recovery and the
    /// minute after the work interval: trough, lag and drop rest on partial data.
    #[serde(default)]
    pub hr_partial: bool,
}

/// A least-squares trend of one per-interval metric against repeat number.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct TrendOut {
    pub metric: String,
    pub slope_per_rep: f64,
    pub r2: f64,
    pub n: usize,
    pub change_over_set: f64,
    pub direction: String,
    pub text: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct HrZoneOut {
    pub name: String,
    pub from_bpm: f64,
    pub to_bpm: f64,
    pub seconds: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct PaceZoneOut {
    pub name: String,
    /// Slow edge of the zone, s/km (`None` for the open-ended slowest zone).
    pub from_s_per_km: Option<f64>,
    /// Fast edge of the zone, s/km.
    pub to_s_per_km: Option<f64>,
    pub seconds: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Default)]
pub struct Zones {
    pub hr: Vec<HrZoneOut>,
    pub pace: Vec<PaceZoneOut>,
}

/// The objective review of one session (the `splitdesk.analysis/1` JSON contract).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Review {
    pub schema: String,
    pub analysis_version: u32,
    pub file: String,
    pub athlete: String,
    pub units: String,
    pub session: SessionInfo,
    pub plan: Option<PlanInfo>,
    pub flags: Vec<FlagOut>,
    pub flagged_fraction: f64,
    /// True when there was no plan and the set was inferred from the speed.
    pub inferred: bool,
    /// How the intervals were found.
    pub interval_notes: Vec<String>,
    /// Planned intervals (1-based positions in the expanded plan) that were not found.
    pub missing_planned: Vec<usize>,
    pub intervals: Vec<IntervalMetrics>,
    pub recoveries: Vec<RecoveryMetrics>,
    pub trends: Vec<TrendOut>,
    pub decoupling_pct: Option<f64>,
    /// Decoupling on raw (not hill-adjusted) speed, for comparison.
    pub decoupling_raw_pct: Option<f64>,
    pub hill_adjusted: bool,
    pub hr_drift_bpm_per_h: Option<f64>,
    pub trimp: Option<f64>,
    pub elevation_gain_m: Option<f64>,
    pub elevation_loss_m: Option<f64>,
    pub zones: Zones,
    pub findings: Vec<Finding>,
    /// Fastest unflagged window per duration (`analysis::best_efforts`), for the history.
    /// Empty for a session that is not a run.
    #[serde(default)]
    pub best_efforts: Vec<super::best_efforts::BestEffort>,
    /// False when the file says the session is not a run (a ride, a walk or a hike, any
    /// other sport): no intervals, no pace, no running findings; duration, distance, HR
    /// and load only. Runs and files that name no sport are analysed as runs.
    #[serde(default = "yes")]
    pub running: bool,
    /// Share (0..1) of the session's moving time with a usable HR sample (HR missing in
    /// the first [`HR_PAIRING_GRACE_S`] while the sensor pairs is left out); `None`
    /// without an HR channel.
    #[serde(default)]
    pub hr_coverage: Option<f64>,
    /// True when `trimp` rests on partial HR (coverage under [`HR_COVERAGE_MIN`]): the
    /// true load is higher.
    #[serde(default)]
    pub trimp_lower_bound: bool,
    /// Time-weighted mean and highest usable HR over the whole session, bpm.
    #[serde(default)]
    pub avg_hr: Option<f64>,
    #[serde(default)]
    pub max_hr: Option<f64>,
    /// What kind of session this was ([`super::kind::classify`]).
    #[serde(default)]
    pub kind: super::kind::SessionKind,
    /// Per-km or per-mile splits in the athlete's units: over the race for a race or time
    /// trial (its one work interval), else over the whole run. `None` without distance.
    #[serde(default)]
    pub splits: Option<super::splits::Splits>,
    /// The file name of the plan used (`2026-11-12-cruise-miles.toml`), set by the roster
    /// layer; `None` without a plan.
    #[serde(default)]
    pub plan_file: Option<String>,
    /// The workout reduced to a comparable signature ([`super::shape`]): the plan's, else
    /// (no plan) the structure found for a session with work in it. `None` for an easy or
    /// long run and for a plan with no work.
    #[serde(default)]
    pub workout_shape: Option<super::shape::WorkoutShape>,
}

fn yes() -> bool {
    true
}

impl Review {
    /// The calendar day of the session as text (`YYYY-MM-DD`): the date its file name starts
    /// with when within a day of the start, else the UTC date
    /// ([`crate::model::session::session_day`]).
    pub fn day(&self) -> String {
        let stem = std::path::Path::new(&self.file)
            .file_stem()
            .and_then(|s| s.to_str())
            .unwrap_or("");
        match chrono::DateTime::parse_from_rfc3339(&self.session.start) {
            Ok(start) => {
                crate::model::session::session_day(stem, start.with_timezone(&chrono::Utc))
                    .to_string()
            }
            Err(_) => self.session.start.get(..10).unwrap_or("").to_string(),
        }
    }

    /// The work intervals' metrics, in order.
    pub fn work(&self) -> impl Iterator<Item = &IntervalMetrics> {
        self.intervals.iter().filter(|i| i.kind == "work")
    }

    pub fn trend(&self, metric: &str) -> Option<&TrendOut> {
        self.trends.iter().find(|t| t.metric == metric)
    }

    /// The load in words: `85`, `85 or more` when it rests on partial HR, `-` without it.
    pub fn load_text(&self) -> String {
        match self.trimp {
            Some(v) if self.trimp_lower_bound => format!("{v:.0} or more"),
            Some(v) => format!("{v:.0}"),
            None => "-".to_string(),
        }
    }
}

/// `v[i]`, false past the end.
fn flag(v: &[bool], i: usize) -> bool {
    v.get(i).copied().unwrap_or(false)
}

/// Per-sample series the metrics share, computed once per session.
pub(crate) struct Series<'a> {
    pub t: &'a [f64],
    pub speed: Option<&'a [Option<f64>]>,
    /// Hill-adjusted speed (raw speed where there is no altitude).
    pub adj: Option<Vec<Option<f64>>>,
    /// Gradient per sample (rise over run), where the session has altitude.
    pub grade: Option<Vec<Option<f64>>>,
    pub hill_adjusted: bool,
    pub hr: Option<&'a [Option<f64>]>,
    pub cadence: Option<&'a [Option<f64>]>,
    pub distance: Option<&'a [Option<f64>]>,
    /// Speed usable: present, unflagged, not paused.
    pub speed_ok: Vec<bool>,
    pub hr_ok: Vec<bool>,
    pub cadence_ok: Vec<bool>,
    /// Distance value usable: present and unflagged (speed, position and gap flags mask it
    /// too). Pauses are left out through `moving`.
    pub distance_ok: Vec<bool>,
    /// Moving: running or walking ([`super::motion`]) with a usable speed (without speed:
    /// moving and not paused).
    pub moving: Vec<bool>,
    /// Moving and running (not walking).
    pub running: Vec<bool>,
}

impl<'a> Series<'a> {
    pub fn new(session: &'a Session) -> Series<'a> {
        Series::with_gradients(session, gradients(session).as_deref())
    }

    /// [`Series::with_motion`] classifying the motion here.
    pub fn with_gradients(session: &'a Session, grads: Option<&[Option<f64>]>) -> Series<'a> {
        Series::with_motion(
            session,
            grads,
            &super::motion::classify_with(session, grads),
        )
    }

    /// [`Series::new`] with the session's gradients already computed
    /// ([`super::gradient::gradients`]; `None` without altitude).
    pub fn with_motion(
        session: &'a Session,
        grads: Option<&[Option<f64>]>,
        motion: &Motion,
    ) -> Series<'a> {
        let n = session.len();
        let paused: Vec<bool> = session
            .t
            .iter()
            .enumerate()
            .map(|(i, &b)| {
                let a = match i.checked_sub(1).and_then(|p| session.t.get(p)) {
                    Some(&a) => a,
                    None => 0.0,
                };
                session.is_paused_at(0.5 * (a + b))
            })
            .collect();
        let ok = |kind: ChannelKind, ch: Option<&crate::model::Channel>| -> Vec<bool> {
            let mask = sample_mask(session, &session.flags, kind);
            (0..n)
                .map(|i| {
                    ch.and_then(|c| c.get(i)).is_some()
                        && !mask.get(i).copied().unwrap_or(false)
                        && !flag(&paused, i)
                })
                .collect()
        };
        let speed_ok = ok(ChannelKind::Speed, session.speed.as_ref());
        let hr_ok = ok(ChannelKind::Hr, session.hr.as_ref());
        let cadence_ok = ok(ChannelKind::Cadence, session.cadence.as_ref());
        let distance_ok = {
            let mask = sample_mask(session, &session.flags, ChannelKind::Distance);
            let d = session.distance.as_ref();
            (0..n)
                .map(|i| {
                    d.and_then(|c| c.get(i)).is_some() && !mask.get(i).copied().unwrap_or(false)
                })
                .collect()
        };
        // Moving: running or walking by the motion classification (standing with a
        // wandering GPS, pauses and recording gaps left out), with a usable speed.
        let moving: Vec<bool> = match &session.speed {
            Some(_) => (0..n)
                .map(|i| flag(&speed_ok, i) && motion.moving(i))
                .collect(),
            None => (0..n)
                .map(|i| !flag(&paused, i) && motion.moving(i))
                .collect(),
        };
        let running: Vec<bool> = (0..n)
            .map(|i| flag(&moving, i) && motion.running(i))
            .collect();
        let hill = hill_adjusted_speed_with(session, grads);
        let hill_adjusted = hill
            .as_ref()
            .is_some_and(|h| h.adjustment == HillAdjustment::Adjusted);
        Series {
            t: &session.t,
            speed: session.speed.as_ref().map(|c| c.values.as_slice()),
            adj: hill.map(|h| h.values),
            grade: grads.map(<[Option<f64>]>::to_vec),
            hill_adjusted,
            hr: session.hr.as_ref().map(|c| c.values.as_slice()),
            cadence: session.cadence.as_ref().map(|c| c.values.as_slice()),
            distance: session.distance.as_ref().map(|c| c.values.as_slice()),
            speed_ok,
            hr_ok,
            cadence_ok,
            distance_ok,
            moving,
            running,
        }
    }

    /// Mean moving speed over samples `a+1..=b` from a distance and a time over the same
    /// samples: each moving sample whose distance is usable at both ends of its stretch
    /// (`t[i-1]..t[i]`) adds its distance increment and its spacing, and nothing else
    /// does. A flagged speed sample (which masks the distance too), a standing or paused
    /// stretch, or a missing distance leaves both out, so the pace is never the distance of
    /// the whole stretch over the time of a part of it. `None` without a distance channel
    /// or without such samples.
    fn distance_speed(&self, a: usize, b: usize) -> Option<f64> {
        let d = self.distance?;
        let flag = |v: &[bool], i: usize| v.get(i).copied().unwrap_or(false);
        let (mut dist, mut time) = (0.0, 0.0);
        for i in (a + 1)..=b.min(self.t.len().saturating_sub(1)) {
            let prev = i - 1;
            if !flag(&self.moving, i)
                || !flag(&self.distance_ok, i)
                || !flag(&self.distance_ok, prev)
            {
                continue;
            }
            let (Some(d0), Some(d1)) =
                (d.get(prev).copied().flatten(), d.get(i).copied().flatten())
            else {
                continue;
            };
            let (Some(&t0), Some(&t1)) = (self.t.get(prev), self.t.get(i)) else {
                continue;
            };
            let (dd, dt) = (d1 - d0, t1 - t0);
            if !(dd.is_finite() && dt.is_finite() && dt > 0.0) {
                continue;
            }
            dist += dd.max(0.0);
            time += dt;
        }
        (time > 0.0).then(|| dist / time)
    }

    fn dt(&self, i: usize) -> f64 {
        sample_dt(self.t, i)
    }

    /// Elapsed time of sample `i` (NaN past the end: no comparison holds for it).
    fn time(&self, i: usize) -> f64 {
        self.t.get(i).copied().unwrap_or(f64::NAN)
    }

    /// Time-weighted mean of `values` over samples `a+1..=b` where `ok` holds.
    fn mean(
        &self,
        values: &[Option<f64>],
        ok: impl Fn(usize) -> bool,
        a: usize,
        b: usize,
    ) -> Option<f64> {
        let (mut sum, mut w) = (0.0, 0.0);
        for i in (a + 1)..=b.min(self.t.len().saturating_sub(1)) {
            if !ok(i) {
                continue;
            }
            if let Some(v) = values.get(i).copied().flatten() {
                let dt = self.dt(i);
                sum += v * dt;
                w += dt;
            }
        }
        (w > 0.0).then(|| sum / w)
    }

    /// Moving time over samples `a+1..=b`.
    fn moving_s(&self, a: usize, b: usize) -> f64 {
        ((a + 1)..=b.min(self.t.len().saturating_sub(1)))
            .filter(|&i| self.moving.get(i).copied().unwrap_or(false))
            .map(|i| self.dt(i))
            .sum()
    }

    /// Mean moving speed over `a+1..=b` from `values` (time-weighted over moving samples).
    fn moving_speed(&self, values: &[Option<f64>], a: usize, b: usize) -> Option<f64> {
        self.mean(
            values,
            |i| self.moving.get(i).copied().unwrap_or(false),
            a,
            b,
        )
    }

    fn hr_ok(&self, i: usize) -> bool {
        self.hr_ok.get(i).copied().unwrap_or(false)
    }
}

/// Review a session whose intervals have been found.
pub fn review(
    session: &Session,
    set: &IntervalSet,
    plan: Option<&Plan>,
    profile: &AthleteProfile,
) -> Review {
    review_with(session, set, plan, profile, gradients(session).as_deref())
}

/// [`review`] with the session's gradients already computed
/// ([`super::gradient::gradients`]; `None` without altitude).
pub fn review_with(
    session: &Session,
    set: &IntervalSet,
    plan: Option<&Plan>,
    profile: &AthleteProfile,
    grads: Option<&[Option<f64>]>,
) -> Review {
    let motion = super::motion::classify_with(session, grads);
    review_moving(session, set, plan, profile, grads, &motion)
}

/// [`review_with`] with the session's motion already classified
/// ([`super::motion::classify`]).
pub fn review_moving(
    session: &Session,
    set: &IntervalSet,
    plan: Option<&Plan>,
    profile: &AthleteProfile,
    grads: Option<&[Option<f64>]>,
    motion: &Motion,
) -> Review {
    // Values no recording can hold read as missing: then the gradients and motion the
    // caller computed on the raw values are computed again.
    let checked = super::plausible::plausible(session);
    let redone;
    let (session, grads, motion) = match &checked {
        std::borrow::Cow::Borrowed(_) => (session, grads, motion),
        std::borrow::Cow::Owned(clean) => {
            let g = gradients(clean);
            let m = super::motion::classify_with(clean, g.as_deref());
            redone = (g, m);
            (clean, redone.0.as_deref(), &redone.1)
        }
    };
    let s = Series::with_motion(session, grads, motion);
    // A ride, a walk or any other sport gets no running analysis: no intervals to score,
    // whatever set the caller found.
    let running = session.sport.analysed_as_running();
    let no_set = IntervalSet::default();
    let set = if running { set } else { &no_set };
    let expected = plan.map(Plan::expand).unwrap_or_default();
    let intervals = interval_metrics(session, &s, set, &expected, profile);
    let recoveries = recovery_metrics(session, &s, set, &intervals);
    let trends = trends(&intervals, &recoveries, profile);
    let analysed = analysed_range(session, set, plan, motion);
    let mut whole = whole_session(session, &s, analysed, profile);
    if !running {
        // Decoupling and drift are read on running speed: not for another sport.
        (whole.decoupling, whole.decoupling_raw, whole.drift) = (None, None, None);
        whole.extra_descent_second_half_m = None;
    }
    let mut zones = zones(session, &s, profile);
    if !running {
        zones.pace.clear();
    }
    let hr_checks = hr_checks(session, &s, profile);
    let hr_coverage = hr_coverage(&s, 0, session.len().saturating_sub(1), hr_counted_from(&s));
    let (gain, loss) = match &session.altitude {
        Some(a) => {
            let (g, l) = gain_loss(a, DEFAULT_HYSTERESIS_M);
            (Some(g), Some(l))
        }
        None => (None, None),
    };
    let flags: Vec<FlagOut> = session
        .flags
        .iter()
        .map(|f| FlagOut {
            from_s: f.from_s,
            to_s: f.to_s,
            channel: f.channel.as_str().to_string(),
            kind: f.kind.as_str().to_string(),
            reason: f.reason.clone(),
        })
        .collect();
    let mut review = Review {
        schema: SCHEMA.to_string(),
        analysis_version: ANALYSIS_VERSION,
        file: String::new(),
        athlete: profile.id.clone(),
        units: profile.units.label().to_string(),
        session: SessionInfo {
            format: session.format.as_str().to_string(),
            sport: session.sport.label().to_string(),
            start: session
                .start
                .to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
            duration_s: session.duration_s(),
            moving_s: motion.moving_total_s(),
            distance_m: super::motion::moving_distance_m(session, motion),
            avg_speed_mps: {
                let last = session.len().saturating_sub(1);
                s.distance_speed(0, last)
                    .or_else(|| s.speed.and_then(|sp| s.moving_speed(sp, 0, last)))
            },
            samples: session.len(),
            channels: session
                .channels_present()
                .iter()
                .map(|c| c.as_str().to_string())
                .collect(),
        },
        plan: plan.map(|p| PlanInfo {
            title: p.title.clone(),
            purpose: p.purpose.clone(),
        }),
        flags,
        flagged_fraction: flagged_fraction(session, &session.flags),
        inferred: set.inferred,
        interval_notes: set.notes.clone(),
        missing_planned: set.missing.iter().map(|m| m + 1).collect(),
        intervals,
        recoveries,
        trends,
        decoupling_pct: whole.decoupling,
        decoupling_raw_pct: whole.decoupling_raw,
        hill_adjusted: s.hill_adjusted,
        hr_drift_bpm_per_h: whole.drift,
        trimp: whole.trimp,
        elevation_gain_m: gain,
        elevation_loss_m: loss,
        zones,
        findings: Vec::new(),
        best_efforts: if running {
            super::best_efforts::best_efforts(session)
        } else {
            Vec::new()
        },
        running,
        hr_coverage,
        trimp_lower_bound: whole.trimp.is_some()
            && hr_coverage.is_some_and(|c| c < HR_COVERAGE_MIN),
        avg_hr: s
            .hr
            .and_then(|h| s.mean(h, |i| s.hr_ok(i), 0, session.len().saturating_sub(1))),
        max_hr: s.hr.and_then(|h| {
            (0..session.len())
                .filter(|&i| s.hr_ok(i))
                .filter_map(|i| h.get(i).copied().flatten())
                .reduce(f64::max)
        }),
        kind: super::kind::SessionKind::default(),
        splits: None,
        plan_file: None,
        workout_shape: None,
    };
    review.kind = super::kind::classify(&review, plan);
    review.workout_shape = match plan {
        Some(p) => super::shape::from_plan(p),
        None if review.kind.has_work() => super::shape::detected(&review),
        None => None,
    };
    if running {
        let (from_s, to_s) = splits_range(&review, session);
        review.splits = super::splits::splits(session, &s, from_s, to_s, profile.units);
    }
    review.findings = findings::findings(&review, session, set, profile, &whole, &hr_checks);
    review
}

/// The part of a run the splits cover: the one work interval of a race, tempo or time
/// trial, else the whole session.
fn splits_range(review: &Review, session: &Session) -> (f64, f64) {
    let work: Vec<_> = review.work().collect();
    match (review.kind, work.as_slice()) {
        (super::kind::SessionKind::Race | super::kind::SessionKind::Tempo, [only]) => {
            (only.start_s, only.end_s)
        }
        _ => (
            session.t.first().copied().unwrap_or(0.0),
            session.t.last().copied().unwrap_or(0.0),
        ),
    }
}

/// A pace band as `fast-slow/unit`, e.g. `4:00-4:10/km`.
fn band_words(slow_mps: f64, fast_mps: f64, u: crate::model::Units) -> String {
    let fast = format_pace(fast_mps, u);
    let slow = format_pace(slow_mps, u);
    let fast_clock = fast.split('/').next().unwrap_or(&fast);
    format!("{fast_clock}-{slow}")
}

fn target_words(target: &Target, profile: &AthleteProfile) -> String {
    let u = profile.units;
    match target {
        Target::Open => "open".to_string(),
        Target::PaceRange { slow_mps, fast_mps } => band_words(*slow_mps, *fast_mps, u),
        Target::NamedPace { name, .. } => match target.speed_band(profile) {
            Some((slow, fast)) => format!("{name} ({})", band_words(slow, fast, u)),
            None => format!("{name} (not in the profile)"),
        },
        Target::HrRange { low_bpm, high_bpm } => format!("HR {low_bpm:.0}-{high_bpm:.0}"),
    }
}

/// Samples before this index are left out of the HR coverage: HR missing at the very start
/// while the sensor pairs (first HR sample within [`HR_PAIRING_GRACE_S`]).
fn hr_counted_from(s: &Series<'_>) -> usize {
    let Some(hr) = s.hr else { return 0 };
    match hr.iter().position(Option::is_some) {
        Some(i) if s.t.get(i).is_some_and(|&t| t <= HR_PAIRING_GRACE_S) => i,
        _ => 0,
    }
}

/// Share of the moving time over samples `a+1..=b` (not before `from`) with a usable HR
/// sample. `None` without an HR channel or without moving time.
fn hr_coverage(s: &Series<'_>, a: usize, b: usize, from: usize) -> Option<f64> {
    s.hr?;
    let (mut covered, mut total) = (0.0, 0.0);
    for i in (a + 1).max(from)..=b.min(s.t.len().saturating_sub(1)) {
        if !s.moving.get(i).copied().unwrap_or(false) {
            continue;
        }
        let dt = s.dt(i);
        total += dt;
        if s.hr_ok(i) {
            covered += dt;
        }
    }
    (total > 0.0).then(|| (covered / total).clamp(0.0, 1.0))
}

/// Heart rate above the profile's maximum: how much, and whether it looks like a real
/// heart rate the profile has not caught up with.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct AboveMax {
    /// The profile's maximum, bpm.
    pub max: f64,
    /// Seconds of usable HR above it, and the highest usable HR, bpm.
    pub secs: f64,
    pub top: f64,
    /// At least [`ABOVE_MAX_SUSTAINED_S`] in total.
    pub sustained: bool,
    /// Why it does not look like a stale profile (empty when it does).
    pub implausible: Vec<&'static str>,
}

/// HR stretches the findings name: above the maximum, and drop-outs while moving.
#[derive(Debug, Clone, Default)]
pub(crate) struct HrChecks {
    pub above_max: Option<AboveMax>,
    /// Stretches of moving time without usable HR (after sensor pairing): (start s, seconds).
    pub dropouts: Vec<(f64, f64)>,
}

fn hr_checks(session: &Session, s: &Series<'_>, profile: &AthleteProfile) -> HrChecks {
    let n = session.len();
    let mut out = HrChecks::default();
    let Some(hr) = s.hr else { return out };
    let at = |i: usize| -> Option<f64> { hr.get(i).copied().flatten().filter(|_| s.hr_ok(i)) };
    // Drop-outs: runs of moving samples without usable HR.
    let from = hr_counted_from(s);
    let mut open: Option<(f64, f64)> = None;
    for i in from.max(1)..n {
        if !s.moving.get(i).copied().unwrap_or(false) {
            continue;
        }
        if at(i).is_some() {
            out.dropouts.extend(open.take());
        } else {
            let dt = s.dt(i);
            open = match open {
                Some((t0, d)) => Some((t0, d + dt)),
                None => Some((s.time(i - 1), dt)),
            };
        }
    }
    out.dropouts.extend(open);
    // Above the maximum: episodes of usable samples above it (gaps of up to 5 s joined).
    let Some(max) = profile.hr_max else {
        return out;
    };
    let above: Vec<usize> = (0..n).filter(|&i| at(i).is_some_and(|h| h > max)).collect();
    let (Some(&first), Some(_)) = (above.first(), above.last()) else {
        return out;
    };
    let mut episodes: Vec<(usize, usize)> = vec![(first, first)];
    for &i in above.iter().skip(1) {
        match episodes.last_mut() {
            Some(e) if s.time(i) - s.time(e.1) <= 5.0 => e.1 = i,
            _ => episodes.push((i, i)),
        }
    }
    let secs: f64 = above.iter().map(|&i| s.dt(i).max(1.0)).sum();
    let top = above.iter().filter_map(|&i| at(i)).fold(max, f64::max);
    let mut implausible = Vec::new();
    if top > max + ABOVE_MAX_STALE_RANGE_BPM {
        implausible.push("far above the profile's maximum");
    }
    // Smooth: HR climbs into each stretch no faster than a heart does.
    let steep = episodes.iter().any(|&(a, _)| {
        let (Some(h1), ta) = (at(a), s.time(a)) else {
            return false;
        };
        (0..a)
            .rev()
            .take_while(|&j| ta - s.time(j) <= 10.0)
            .filter_map(|j| at(j).map(|h| (h, ta - s.time(j))))
            .last()
            .is_some_and(|(h0, dt)| dt >= 1.0 && (h1 - h0) / dt > ABOVE_MAX_RISE_BPM_PER_S)
    });
    let rate_flagged = session.flags.iter().any(|f| {
        matches!(
            f.kind,
            crate::model::FlagKind::HrRate | crate::model::FlagKind::CadenceLock
        ) && episodes
            .iter()
            .any(|&(a, b)| f.from_s <= s.time(b) + 10.0 && f.to_s >= s.time(a) - 10.0)
    });
    if steep || rate_flagged {
        implausible.push("jumping rather than climbing");
    }
    // Matching effort: the speed over the minute up to and through each stretch, from a
    // distance and a time over the same samples (a flagged or missing speed sample adds to
    // neither, so it does not read as standing still).
    if let Some(sp) = s.speed {
        let mut moving: Vec<f64> = (0..n)
            .filter(|&i| s.moving.get(i).copied().unwrap_or(false))
            .filter_map(|i| sp.get(i).copied().flatten())
            .collect();
        if !moving.is_empty() {
            // The upper median without a full sort (total order: the same element).
            let mid = moving.len() / 2;
            moving.select_nth_unstable_by(mid, f64::total_cmp);
            let median = moving.get(mid).copied().unwrap_or(0.0);
            let (mut dist, mut time) = (0.0, 0.0);
            for &(a, b) in &episodes {
                let lo = s.time(a) - 60.0;
                for i in (0..=b).rev().take_while(|&i| s.time(i) >= lo) {
                    if !flag(&s.speed_ok, i) {
                        continue;
                    }
                    if let Some(v) = sp.get(i).copied().flatten() {
                        let dt = s.dt(i);
                        time += dt;
                        dist += v * dt;
                    }
                }
            }
            if time > 0.0 && dist / time < ABOVE_MAX_EFFORT_FRACTION * median {
                implausible.push("not matched by the effort");
            }
        }
    }
    out.above_max = Some(AboveMax {
        max,
        secs,
        top,
        sustained: secs >= ABOVE_MAX_SUSTAINED_S,
        implausible,
    });
    out
}

/// Centred moving average of `values` over `±half_s` seconds, only over `ok` samples. O(n).
pub(crate) fn smooth(
    t: &[f64],
    values: &[Option<f64>],
    ok: &[bool],
    half_s: f64,
) -> Vec<Option<f64>> {
    let n = t.len().min(values.len());
    let mut out = vec![None; n];
    let (mut lo, mut hi) = (0usize, 0usize);
    let (mut sum, mut cnt) = (0.0, 0usize);
    let val = |k: usize| -> Option<f64> {
        if ok.get(k).copied().unwrap_or(false) {
            values.get(k).copied().flatten()
        } else {
            None
        }
    };
    // Every index below is under `n`; the default never applies.
    let tk = |k: usize| t.get(k).copied().unwrap_or(f64::NAN);
    for (i, o) in out.iter_mut().enumerate() {
        let ti = tk(i);
        while hi < n && tk(hi) <= ti + half_s {
            if let Some(v) = val(hi) {
                sum += v;
                cnt += 1;
            }
            hi += 1;
        }
        while lo < n && tk(lo) < ti - half_s {
            if let Some(v) = val(lo) {
                sum -= v;
                cnt -= 1;
            }
            lo += 1;
        }
        if cnt > 0 && val(i).is_some() {
            *o = Some(sum / cnt as f64);
        }
    }
    out
}

fn interval_metrics(
    session: &Session,
    s: &Series<'_>,
    set: &IntervalSet,
    expected: &[crate::model::ExpectedInterval],
    profile: &AthleteProfile,
) -> Vec<IntervalMetrics> {
    let smoothed = s
        .speed
        .map(|sp| smooth(s.t, sp, &s.speed_ok, TARGET_SMOOTHING_HALF_S));
    let mut work_no = 0;
    set.intervals
        .iter()
        .enumerate()
        .map(|(k, iv)| {
            let work_number = (iv.kind == SegmentKind::Work).then(|| {
                work_no += 1;
                work_no
            });
            let target = iv.expected.and_then(|e| expected.get(e)).map(|e| &e.target);
            one_interval(
                session,
                s,
                iv,
                k + 1,
                work_number,
                target,
                smoothed.as_deref(),
                profile,
            )
        })
        .collect()
}

/// Time-weighted mean gradient over the moving samples `a+1..=b`.
fn mean_grade(s: &Series<'_>, a: usize, b: usize) -> Option<f64> {
    let g = s.grade.as_deref()?;
    s.mean(g, |i| s.moving.get(i).copied().unwrap_or(false), a, b)
}

#[allow(clippy::too_many_arguments)]
fn one_interval(
    session: &Session,
    s: &Series<'_>,
    iv: &Interval,
    index: usize,
    work_number: Option<usize>,
    target: Option<&Target>,
    smoothed: Option<&[Option<f64>]>,
    profile: &AthleteProfile,
) -> IntervalMetrics {
    let (a, b) = (iv.start, iv.end.min(session.len().saturating_sub(1)));
    let moving_s = s.moving_s(a, b);
    let distance_m = match s.distance {
        Some(d) => {
            let first = (a..=b).find_map(|i| d.get(i).copied().flatten());
            let last = (a..=b).rev().find_map(|i| d.get(i).copied().flatten());
            first.zip(last).map(|(x, y)| (y - x).max(0.0))
        }
        None => s.speed.map(|sp| {
            ((a + 1)..=b)
                .filter(|&i| s.speed_ok.get(i).copied().unwrap_or(false))
                .filter_map(|i| sp.get(i).copied().flatten().map(|v| v * s.dt(i)))
                .sum()
        }),
    };
    // Average pace (moving): distance over time on the same samples where the file has
    // distance (`Series::distance_speed`), otherwise the time-weighted mean of the moving
    // speed samples.
    let avg_speed = s
        .distance_speed(a, b)
        .or_else(|| s.speed.and_then(|sp| s.moving_speed(sp, a, b)));
    // Hill-adjusted speed on the same footing as the pace: the average pace scaled by the
    // ratio of the mean hill-adjusted to the mean recorded speed over the same samples, so
    // on flat ground the two columns agree exactly (the speed channel's own mean can differ
    // from distance over time by a few seconds per km).
    let adj_mean = s.adj.as_deref().and_then(|v| s.moving_speed(v, a, b));
    let raw_mean = s.speed.and_then(|sp| s.moving_speed(sp, a, b));
    let adj_speed = match (avg_speed, adj_mean, raw_mean) {
        (Some(avg), Some(adj), Some(raw)) if raw > 0.0 => Some(avg * adj / raw),
        _ => adj_mean,
    };
    let hr = s.hr;
    let avg_hr = hr.and_then(|h| s.mean(h, |i| s.hr_ok(i), a, b));
    // The boundary sample `a` is the previous interval's last: it belongs to that interval
    // (a recovery's peak is not the rep's last beat). The first interval keeps sample 0.
    let own = if a == 0 { 0 } else { a + 1 };
    let max_hr = hr.and_then(|h| {
        (own..=b)
            .filter(|&i| s.hr_ok(i))
            .filter_map(|i| h.get(i).copied().flatten())
            .reduce(f64::max)
    });
    let end_hr = hr.and_then(|h| {
        (own..=b)
            .rev()
            .filter(|&i| s.hr_ok(i))
            .find_map(|i| h.get(i).copied().flatten())
    });
    let avg_cadence = s.cadence.and_then(|c| {
        s.mean(
            c,
            |i| {
                s.cadence_ok.get(i).copied().unwrap_or(false)
                    && s.moving.get(i).copied().unwrap_or(false)
            },
            a,
            b,
        )
    });
    let relative_intensity = adj_speed
        .zip(profile.threshold_speed_mps)
        .map(|(v, thr)| v / thr);
    // Halves by time.
    let mid_t = 0.5 * (iv.start_s + iv.end_s);
    let mid = (a..=b).find(|&i| s.time(i) >= mid_t).unwrap_or(b);
    let half_pace = |x: usize, y: usize| {
        s.speed
            .and_then(|sp| s.moving_speed(sp, x, y))
            .and_then(pace_s_per_km)
    };
    let decoupling = if iv.kind == SegmentKind::Work && iv.duration_s() >= MIN_INTERVAL_DECOUPLING_S
    {
        match (s.adj.as_deref(), hr) {
            (Some(v), Some(h)) => {
                let usable: Vec<bool> = (0..session.len())
                    .map(|i| {
                        i > a && i <= b && s.moving.get(i).copied().unwrap_or(false) && s.hr_ok(i)
                    })
                    .collect();
                decoupling_pct(v, h, s.t, &usable)
            }
            _ => None,
        }
    } else {
        None
    };
    let variability = if iv.kind == SegmentKind::Work && iv.duration_s() >= MIN_VARIABILITY_S {
        s.adj
            .as_deref()
            .and_then(|v| split_variability(s, v, a, b, VARIABILITY_SPLIT_S))
    } else {
        None
    };
    let target_band = target.and_then(|t| t.speed_band(profile));
    let target_hr = match target {
        Some(Target::HrRange { low_bpm, high_bpm }) => Some((*low_bpm, *high_bpm)),
        _ => None,
    };
    // Warm-ups, recoveries and cool-downs show their target but are not judged on it.
    let judged = matches!(iv.kind, SegmentKind::Work | SegmentKind::Steady);
    let grade = mean_grade(s, a, b);
    // A pace target on a climb or descent is an effort: left to the coach.
    let on_hill = grade.is_some_and(|g| g.abs() >= HILL_TARGET_GRADE);
    let target_basis = match (target_band, target_hr) {
        _ if !judged => None,
        (Some(_), _) if on_hill => Some(TARGET_NOT_JUDGED_ON_HILL.to_string()),
        (Some(_), _) => Some("pace".to_string()),
        (None, Some(_)) => Some("hr".to_string()),
        (None, None) => None,
    };
    let (in_target_pct, target_hit) = match (target_band, target_hr) {
        _ if !judged => (None, None),
        (Some(_), _) if on_hill => (None, None),
        (Some((slow, fast)), _) => {
            let (mut inside, mut total) = (0.0, 0.0);
            if let Some(sm) = smoothed {
                for i in (a + 1)..=b {
                    if !s.moving.get(i).copied().unwrap_or(false) {
                        continue;
                    }
                    if let Some(v) = sm.get(i).copied().flatten() {
                        let dt = s.dt(i);
                        total += dt;
                        if v >= slow && v <= fast {
                            inside += dt;
                        }
                    }
                }
            }
            let pct = (total > 0.0).then(|| inside / total * 100.0);
            // A pace that shows as the band's edge (to the second) counts as inside it.
            let hit = avg_speed.and_then(pace_s_per_km).map(|p| {
                p >= 1000.0 / fast - PACE_DISPLAY_SLACK_S
                    && p <= 1000.0 / slow + PACE_DISPLAY_SLACK_S
            });
            (pct, hit)
        }
        (None, Some((lo, hi))) => {
            let (mut inside, mut total) = (0.0, 0.0);
            if let Some(h) = hr {
                for i in (a + 1)..=b {
                    if !s.hr_ok(i) {
                        continue;
                    }
                    if let Some(v) = h.get(i).copied().flatten() {
                        let dt = s.dt(i);
                        total += dt;
                        if v >= lo && v <= hi {
                            inside += dt;
                        }
                    }
                }
            }
            let pct = (total > 0.0).then(|| inside / total * 100.0);
            (pct, avg_hr.map(|h| h >= lo && h <= hi))
        }
        (None, None) => (None, None),
    };
    IntervalMetrics {
        index,
        work_number,
        kind: iv.kind.as_str().to_string(),
        source: iv.source.as_str().to_string(),
        mode: iv.mode.map(|m| m.as_str().to_string()),
        start_s: iv.start_s,
        end_s: iv.end_s,
        duration_s: iv.duration_s(),
        moving_s,
        distance_m,
        avg_pace_s_per_km: avg_speed.and_then(pace_s_per_km),
        hill_adjusted_pace_s_per_km: adj_speed.and_then(pace_s_per_km),
        avg_hr,
        max_hr,
        end_hr,
        avg_cadence_spm: avg_cadence,
        relative_intensity,
        first_half_pace_s_per_km: half_pace(a, mid),
        second_half_pace_s_per_km: half_pace(mid, b),
        decoupling_pct: decoupling,
        pace_variability_pct: variability,
        target: target.map(|t| target_words(t, profile)),
        target_band_mps: target_band,
        target_hr,
        in_target_pct,
        target_hit,
        grade_pct: grade.map(|g| g * 100.0),
        target_basis,
        hr_coverage: hr_coverage(s, a, b, hr_counted_from(s)),
    }
}

/// Coefficient of variation (percent) of the mean moving speed of consecutive `split_s`
/// splits over samples `a+1..=b`. `None` with fewer than 4 full splits.
fn split_variability(
    s: &Series<'_>,
    v: &[Option<f64>],
    a: usize,
    b: usize,
    split_s: f64,
) -> Option<f64> {
    let mut means = Vec::new();
    let (mut sum, mut w, mut acc) = (0.0, 0.0, 0.0);
    for i in (a + 1)..=b.min(s.t.len().saturating_sub(1)) {
        let dt = s.dt(i);
        acc += dt;
        if s.moving.get(i).copied().unwrap_or(false) {
            if let Some(x) = v.get(i).copied().flatten() {
                sum += x * dt;
                w += dt;
            }
        }
        if acc >= split_s {
            if w >= 0.5 * split_s {
                means.push(sum / w);
            }
            (sum, w, acc) = (0.0, 0.0, 0.0);
        }
    }
    if means.len() < 4 {
        return None;
    }
    let n = means.len() as f64;
    let mean = means.iter().sum::<f64>() / n;
    let var = means.iter().map(|m| (m - mean).powi(2)).sum::<f64>() / (n - 1.0);
    (mean > 0.0).then(|| var.sqrt() / mean * 100.0)
}

fn recovery_metrics(
    session: &Session,
    s: &Series<'_>,
    set: &IntervalSet,
    metrics: &[IntervalMetrics],
) -> Vec<RecoveryMetrics> {
    let Some(hr) = s.hr else {
        return set
            .intervals
            .iter()
            .zip(metrics)
            .filter(|(iv, _)| iv.kind == SegmentKind::Work)
            .map(|(_, m)| RecoveryMetrics {
                after_work: m.index,
                work_number: m.work_number.unwrap_or(0),
                recovery_trough_bpm: None,
                trough_at_s: None,
                hr_lag_s: None,
                hr_lag_bpm: None,
                hr_drop_60s_bpm: None,
                hr_partial: false,
            })
            .collect();
    };
    let n = session.len();
    // Beat-to-beat noise of a bpm or two moves a raw maximum by several seconds: the peak
    // and trough are read off HR smoothed over a few seconds.
    let smoothed = smooth(s.t, hr, &s.hr_ok, HR_SMOOTHING_HALF_S);
    let hr_at = |i: usize| -> Option<f64> { smoothed.get(i).copied().flatten() };
    let mut out = Vec::new();
    for (k, iv) in set.intervals.iter().enumerate() {
        if iv.kind != SegmentKind::Work {
            continue;
        }
        let Some(m) = metrics.get(k) else { continue };
        // The recovery: the non-work stretch that follows, up to the next work interval.
        let rec_end = set
            .intervals
            .iter()
            .skip(k + 1)
            .take_while(|x| x.kind != SegmentKind::Work)
            .filter(|x| x.kind == SegmentKind::Recovery)
            .map(|x| x.end)
            .last();
        // The boundary sample `iv.end` is the rep's last: the recovery starts after it.
        let (trough, trough_at) = match rec_end {
            Some(e) => ((iv.end + 1)..=e.min(n.saturating_sub(1)))
                .filter_map(|i| hr_at(i).map(|h| (h, s.time(i))))
                .fold((None, None), |(best, at), (h, ti)| match best {
                    Some(b) if b <= h => (Some(b), at),
                    _ => (Some(h), Some(ti)),
                }),
            None => (None, None),
        };
        let end_i = iv.end.min(n.saturating_sub(1));
        let end_hr = (iv.start..=end_i).rev().find_map(hr_at);
        let end_t = iv.end_s;
        let window: Vec<(f64, f64)> = ((end_i + 1)..n)
            .take_while(|&i| s.time(i) <= end_t + HR_LAG_WINDOW_S)
            .filter_map(|i| hr_at(i).map(|h| (s.time(i), h)))
            .collect();
        let (lag_s, lag_bpm) = match end_hr {
            Some(e) => {
                let peak = window
                    .iter()
                    .copied()
                    .fold(None::<(f64, f64)>, |best, (ti, h)| match best {
                        Some((_, bh)) if bh >= h => best,
                        _ => Some((ti, h)),
                    });
                // The top of the HR curve is flat: take the middle of the stretch within
                // PEAK_PLATEAU_BPM of the highest value as the time of the peak.
                let peak = peak.map(|(ti, h)| {
                    let band = PEAK_PLATEAU_BPM.max(0.25 * (h - e));
                    let near: Vec<f64> = window
                        .iter()
                        .filter(|(_, x)| *x >= h - band)
                        .map(|(t, _)| *t)
                        .collect();
                    match (near.first(), near.last()) {
                        (Some(a), Some(b)) => (0.5 * (a + b), h),
                        _ => (ti, h),
                    }
                });
                match peak {
                    Some((ti, h)) if h > e => (Some(ti - end_t), Some(h - e)),
                    Some(_) => (Some(0.0), Some(0.0)),
                    None => (None, None),
                }
            }
            None => (None, None),
        };
        // HR 60 s after the end: the sample nearest to end + 60 s, within 5 s.
        let drop = end_hr.and_then(|e| {
            let target = end_t + 60.0;
            ((end_i + 1)..n)
                .take_while(|&i| s.time(i) <= target + 5.0)
                .filter(|&i| s.time(i) >= target - 5.0)
                .filter_map(|i| hr_at(i).map(|h| ((s.time(i) - target).abs(), h)))
                .min_by(|x, y| x.0.total_cmp(&y.0))
                .map(|(_, h)| e - h)
        });
        // Partial HR: the recovery and the minute after the rep (the lag and drop windows),
        // time with usable HR against time not paused.
        let span_end = rec_end.unwrap_or(end_i).max(
            ((end_i + 1)..n)
                .take_while(|&i| s.time(i) <= end_t + 65.0)
                .last()
                .unwrap_or(end_i),
        );
        let (mut covered, mut total) = (0.0, 0.0);
        for i in (end_i + 1)..=span_end.min(n.saturating_sub(1)) {
            let dt = s.dt(i);
            if session.is_paused_at(s.time(i) - 0.5 * dt) {
                continue;
            }
            total += dt;
            if s.hr_ok(i) {
                covered += dt;
            }
        }
        out.push(RecoveryMetrics {
            after_work: m.index,
            work_number: m.work_number.unwrap_or(0),
            recovery_trough_bpm: trough,
            trough_at_s: trough_at,
            hr_lag_s: lag_s,
            hr_lag_bpm: lag_bpm,
            hr_drop_60s_bpm: drop,
            hr_partial: total > 0.0 && covered < HR_COVERAGE_MIN * total,
        });
    }
    out
}

/// Per-repeat (x, y) pairs of one metric.
type Points = (Vec<f64>, Vec<f64>);

fn trends(
    intervals: &[IntervalMetrics],
    recoveries: &[RecoveryMetrics],
    profile: &AthleteProfile,
) -> Vec<TrendOut> {
    let work: Vec<&IntervalMetrics> = intervals.iter().filter(|i| i.kind == "work").collect();
    if work.len() < 3 {
        return Vec::new();
    }
    let mut out = Vec::new();
    let per_work = |f: &dyn Fn(&IntervalMetrics) -> Option<f64>| -> (Vec<f64>, Vec<f64>) {
        work.iter()
            .filter_map(|m| Some((m.work_number? as f64, f(m)?)))
            .unzip()
    };
    let per_rec = |f: &dyn Fn(&RecoveryMetrics) -> Option<f64>| -> (Vec<f64>, Vec<f64>) {
        recoveries
            .iter()
            .filter_map(|r| Some((r.work_number as f64, f(r)?)))
            .unzip()
    };
    let series: Vec<(&'static str, Points, f64)> = vec![
        (
            "avg_pace_s_per_km",
            per_work(&|m| m.avg_pace_s_per_km),
            FLAT_PACE_S_PER_KM,
        ),
        (
            "hill_adjusted_pace_s_per_km",
            per_work(&|m| m.hill_adjusted_pace_s_per_km),
            FLAT_PACE_S_PER_KM,
        ),
        ("avg_hr", per_work(&|m| m.avg_hr), FLAT_HR_BPM),
        ("max_hr", per_work(&|m| m.max_hr), FLAT_HR_BPM),
        ("end_hr", per_work(&|m| m.end_hr), FLAT_HR_BPM),
        (
            "avg_cadence_spm",
            per_work(&|m| m.avg_cadence_spm),
            FLAT_CADENCE_SPM,
        ),
        (
            "recovery_trough_bpm",
            per_rec(&|r| r.recovery_trough_bpm),
            FLAT_HR_BPM,
        ),
        ("hr_lag_s", per_rec(&|r| r.hr_lag_s), FLAT_LAG_S),
        (
            "hr_drop_60s_bpm",
            per_rec(&|r| r.hr_drop_60s_bpm),
            FLAT_HR_BPM,
        ),
    ];
    for (metric, (xs, ys), flat) in series {
        if xs.len() < 3 {
            continue;
        }
        let Some(f) = trend::fit(&xs, &ys) else {
            continue;
        };
        let direction = f.direction(flat);
        out.push(TrendOut {
            metric: metric.to_string(),
            slope_per_rep: f.slope,
            r2: f.r2,
            n: f.n,
            change_over_set: f.change(),
            direction: direction.as_str().to_string(),
            text: trend_text(metric, &f, direction, profile),
        });
    }
    out
}

fn trend_text(
    metric: &str,
    f: &trend::Fit,
    direction: trend::Direction,
    profile: &AthleteProfile,
) -> String {
    use trend::Direction::*;
    let per = f.slope.abs();
    let total = f.change().abs();
    match metric {
        "avg_pace_s_per_km" | "hill_adjusted_pace_s_per_km" => {
            let scale = profile.units.metres() / 1000.0;
            let u = profile.units.label();
            let what = if metric == "avg_pace_s_per_km" {
                "pace"
            } else {
                "hill-adjusted pace"
            };
            // Every number in the athlete's unit; a change that shows as 0 is no change.
            let flat_text = || {
                format!(
                    "{what} steady across the set (within {:.0} s/{u})",
                    FLAT_PACE_S_PER_KM * scale
                )
            };
            let (per_u, total_u) = (per * scale, total * scale);
            // A small change per repeat shows a decimal ("0.4 s/km each repeat"), so it is
            // never "by 0" and its rounding does not disagree with the change over the set.
            let per_text = if per_u < 1.95 {
                format!("{per_u:.1}")
            } else {
                format!("{per_u:.0}")
            };
            let shows_zero = format!("{total_u:.0}") == "0" || per_text == "0.0";
            match direction {
                _ if shows_zero => flat_text(),
                Falling => format!(
                    "{what} faster by {per_text} s/{u} each repeat ({total_u:.0} s/{u} over the set)"
                ),
                Rising => format!(
                    "{what} slower by {per_text} s/{u} each repeat ({total_u:.0} s/{u} over the set)"
                ),
                Flat => flat_text(),
            }
        }
        _ => {
            let (what, unit, flat) = match metric {
                "avg_hr" => ("average HR", "bpm", FLAT_HR_BPM),
                "max_hr" => ("peak HR", "bpm", FLAT_HR_BPM),
                "end_hr" => ("HR at the end of each repeat", "bpm", FLAT_HR_BPM),
                "avg_cadence_spm" => ("cadence", "steps/min", FLAT_CADENCE_SPM),
                "recovery_trough_bpm" => ("recovery trough", "bpm", FLAT_HR_BPM),
                "hr_lag_s" => ("HR lag", "s", FLAT_LAG_S),
                "hr_drop_60s_bpm" => ("60-s HR drop", "bpm", FLAT_HR_BPM),
                _ => (metric, "", 0.0),
            };
            match direction {
                Rising => format!("{what} up {total:.0} {unit} over the set ({per:.1} per repeat)"),
                Falling => {
                    format!("{what} down {total:.0} {unit} over the set ({per:.1} per repeat)")
                }
                Flat => format!("{what} flat across the set (within {flat:.0} {unit})"),
            }
        }
    }
}

/// The sample range of the steady part for the whole-session decoupling and HR drift:
/// the warm-up and cool-down left out (for a plan with work, everything before the first
/// planned work segment and after the last; otherwise the warm-up and cool-down pieces,
/// planned or detected, including standing and walking at the ends). When what was left
/// out at the start holds less than [`MIN_WARMUP_RUNNING_S`] of running, the first
/// [`DEFAULT_WARMUP_S`] of running of the rest are left out too (heart rate settles).
/// Standing, walking and stopped samples inside the range are left out by the caller.
fn analysed_range(
    session: &Session,
    set: &IntervalSet,
    plan: Option<&Plan>,
    motion: &Motion,
) -> (usize, usize) {
    let n = session.len();
    if n == 0 {
        return (0, 0);
    }
    let last = n - 1;
    let plan_has_work =
        plan.is_some_and(|p| p.expand().iter().any(|e| e.kind == SegmentKind::Work));
    let lead = |i: &&crate::model::Interval| {
        if plan_has_work {
            i.kind != SegmentKind::Work
        } else {
            i.kind == SegmentKind::Warmup
        }
    };
    let trail = |i: &&crate::model::Interval| {
        if plan_has_work {
            i.kind != SegmentKind::Work
        } else {
            i.kind == SegmentKind::Cooldown
        }
    };
    let mut start = set
        .intervals
        .iter()
        .take_while(lead)
        .map(|i| i.end)
        .last()
        .unwrap_or(0)
        .min(last);
    let end = set
        .intervals
        .iter()
        .rev()
        .take_while(trail)
        .map(|i| i.start)
        .last()
        .unwrap_or(last)
        .min(last);
    if motion.running_s(0, start) < MIN_WARMUP_RUNNING_S {
        let mut acc = 0.0;
        let mut k = start;
        while k < end && acc < DEFAULT_WARMUP_S {
            k += 1;
            if motion.running(k) {
                acc += motion.dt.get(k).copied().unwrap_or(0.0);
            }
        }
        start = k;
    }
    (start.min(end), end)
}

/// Whole-session numbers shared with the findings.
#[derive(Debug, Clone, Default)]
pub(crate) struct Whole {
    pub decoupling: Option<f64>,
    pub decoupling_raw: Option<f64>,
    pub drift: Option<f64>,
    pub trimp: Option<f64>,
    /// Net descent of the second half of the analysed part minus that of the first, m.
    pub extra_descent_second_half_m: Option<f64>,
    pub analysed_s: f64,
}

fn whole_session(
    session: &Session,
    s: &Series<'_>,
    (a, b): (usize, usize),
    profile: &AthleteProfile,
) -> Whole {
    let n = session.len();
    let usable: Vec<bool> = (0..n)
        .map(|i| i > a && i <= b && s.running.get(i).copied().unwrap_or(false) && s.hr_ok(i))
        .collect();
    let analysed_s: f64 = (0..n).filter(|&i| flag(&usable, i)).map(|i| s.dt(i)).sum();
    let mut whole = Whole {
        analysed_s,
        ..Whole::default()
    };
    if let (Some(hr), Some(speed)) = (s.hr, s.speed) {
        if analysed_s + DECOUPLING_SLACK_S >= MIN_DECOUPLING_S {
            whole.decoupling_raw = decoupling_pct(speed, hr, s.t, &usable);
            whole.decoupling = match s.adj.as_deref() {
                Some(adj) if s.hill_adjusted => decoupling_pct(adj, hr, s.t, &usable),
                _ => whole.decoupling_raw,
            };
            // Steady pace: hill-adjusted speed within the band around its median.
            if let Some(adj) = s.adj.as_deref() {
                let mut vals: Vec<f64> = (0..n)
                    .filter(|&i| flag(&usable, i))
                    .filter_map(|i| adj.get(i).copied().flatten())
                    .collect();
                if !vals.is_empty() {
                    let mid = vals.len() / 2;
                    vals.select_nth_unstable_by(mid, f64::total_cmp);
                    let med = vals.get(mid).copied().unwrap_or(0.0);
                    // Heart rate takes a few minutes to settle at a new effort: the
                    // drift is fitted from HR_SETTLE_S into the window.
                    let settle_from = (0..n)
                        .find(|&i| flag(&usable, i))
                        .map_or(f64::INFINITY, |i| s.time(i) + HR_SETTLE_S);
                    let steady: Vec<bool> = (0..n)
                        .map(|i| {
                            flag(&usable, i)
                                && s.time(i) >= settle_from
                                && adj
                                    .get(i)
                                    .copied()
                                    .flatten()
                                    .is_some_and(|v| (v - med).abs() <= STEADY_BAND * med)
                        })
                        .collect();
                    let steady_s: f64 = (0..n).filter(|&i| flag(&steady, i)).map(|i| s.dt(i)).sum();
                    if steady_s + DECOUPLING_SLACK_S >= MIN_DECOUPLING_S {
                        whole.drift = hr_drift_bpm_per_h(s.t, hr, &steady);
                    }
                }
            }
        }
        // Elevation check for a negative decoupling: descent in each half of the analysed part.
        if let Some(alt) = &session.altitude {
            let times: Vec<usize> = (0..n).filter(|&i| flag(&usable, i)).collect();
            if let (Some(&first), Some(&last)) = (times.first(), times.last()) {
                let mid_t = 0.5 * (s.time(first) + s.time(last));
                let at = |i: usize| alt.get(i);
                let mid = (first..=last).find(|&i| s.time(i) >= mid_t).unwrap_or(last);
                let near = |i: usize| -> Option<f64> {
                    (i..=last)
                        .find_map(at)
                        .or_else(|| (first..=i).rev().find_map(at))
                };
                if let (Some(x0), Some(xm), Some(x1)) = (near(first), near(mid), near(last)) {
                    whole.extra_descent_second_half_m = Some((xm - x1) - (x0 - xm));
                }
            }
        }
    }
    if let (Some(hr), Some(rest), Some(max)) = (&session.hr, profile.hr_rest, profile.hr_max) {
        let mask: Vec<bool> = (0..n).map(|i| s.hr_ok(i)).collect();
        whole.trimp = trimp_from_samples(&session.t, hr, Some(&mask), rest, max, profile.sex);
    }
    whole
}

fn zones(session: &Session, s: &Series<'_>, profile: &AthleteProfile) -> Zones {
    let n = session.len();
    let age = profile
        .birth_year
        .map(|y| f64::from(chrono::Datelike::year(&session.start) - y));
    let mut out = Zones::default();
    if let (Some(hr), Some(z)) = (s.hr, hr_zones(profile, age)) {
        let usable: Vec<bool> = (0..n).map(|i| s.hr_ok(i)).collect();
        let secs = time_in_zones(s.t, hr, &usable, &z.zones);
        out.hr = z
            .zones
            .iter()
            .zip(secs)
            .map(|(z, seconds)| HrZoneOut {
                name: z.name.clone(),
                from_bpm: z.from,
                to_bpm: z.to,
                seconds,
            })
            .collect();
    }
    if let (Some(adj), Some(z)) = (
        s.adj.as_deref(),
        profile.threshold_speed_mps.and_then(pace_zones),
    ) {
        let secs = time_in_zones(s.t, adj, &s.moving, &z);
        out.pace = z
            .iter()
            .zip(secs)
            .map(|(z, seconds)| PaceZoneOut {
                name: z.name.clone(),
                from_s_per_km: pace_s_per_km(z.from),
                to_s_per_km: pace_s_per_km(z.to),
                seconds,
            })
            .collect();
    }
    out
}

/// Whether the decoupling is above the usual coaching line.
pub fn decoupling_above_line(d: f64) -> bool {
    d > DECOUPLING_COACHING_LINE_PCT
}

#[cfg(test)]
mod tests {
    use super::{trend, trend_text};
    use crate::model::{AthleteProfile, Units};

    fn text(ys: &[f64], units: Units) -> String {
        let xs: Vec<f64> = (1..=ys.len()).map(|x| x as f64).collect();
        let f = trend::fit(&xs, ys).unwrap();
        let mut p = AthleteProfile::bare("t");
        p.units = units;
        trend_text(
            "avg_pace_s_per_km",
            &f,
            f.direction(super::FLAT_PACE_S_PER_KM),
            &p,
        )
    }

    #[test]
    fn pace_trends_never_say_by_0() {
        // 0.4 s/km slower each of 8 repeats: 2.8 s/km over the set.
        let ys: Vec<f64> = (0..8).map(|k| 240.0 + 0.4 * k as f64).collect();
        assert_eq!(
            text(&ys, Units::Km),
            "pace slower by 0.4 s/km each repeat (3 s/km over the set)"
        );
        // 0.4 s/km is 0.64 s/mi per repeat, 4.5 s/mi over the set: one unit throughout.
        assert_eq!(
            text(&ys, Units::Mi),
            "pace slower by 0.6 s/mi each repeat (5 s/mi over the set)"
        );
        assert_eq!(
            text(&[240.0, 240.5, 240.2, 240.4], Units::Mi),
            "pace steady across the set (within 3 s/mi)"
        );
        assert_eq!(
            text(&[240.0, 236.0, 232.0], Units::Km),
            "pace faster by 4 s/km each repeat (8 s/km over the set)"
        );
    }
}
