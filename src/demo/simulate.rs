//! A deterministic, physiologically plausible run simulator.
//!
//! [`simulate`] turns an athlete profile, a plan and the day's conditions into a recorded
//! [`Session`] (what a watch would have written) and the [`Truth`] behind it (the real
//! interval boundaries and per-interval numbers, computed from the noise-free signals before
//! any sensor fault). The demo roster and the analysis tests are built on it.
//!
//! The same [`SimInput`] always gives the same output, bit for bit on one platform (see
//! [`crate::demo::rng`] for the one cross-platform caveat). Each part of the model draws from
//! its own random stream, so switching a fault on does not change the true signals, and
//! changing the sampling does not change the noise a sample carries.
//!
//! # Model in brief
//!
//! The run is integrated at 1 s steps. Each plan segment gets a target speed (pace band,
//! named pace, a speed solved from a heart-rate band, or a default by kind). The runner's
//! commanded speed is that target times a pacing-style profile, a fatigue factor and a hill
//! factor `(Cr(0)/Cr(i))^0.7`, plus correlated pacing error that the runner corrects by
//! "checking the watch". Actual speed follows with a first-order lag and an acceleration
//! limit. Heart rate follows a delayed, filtered effort signal (hill-adjusted speed over
//! threshold speed) with first-order kinetics, cardiac drift and a slow fatigue component.
//! See the submodules for every parameter and its source.

mod engine;
mod physiology;
mod record;
mod terrain;

use chrono::{DateTime, TimeZone, Utc};

use crate::model::{
    Amount, AthleteProfile, FileFormat, Plan, RecoveryMode, SegmentKind, Session, Sport, Step,
    Target,
};

pub use physiology::{cadence_for_speed, hill_cost_ratio, hill_speed_factor, minetti_cr};

/// The ground the run covers.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum Terrain {
    /// Level ground.
    #[default]
    Flat,
    /// Sinusoidal hills: altitude `amplitude_m * sin(2π d / wavelength_m)`.
    Rolling {
        /// Half the peak-to-trough height, metres.
        amplitude_m: f64,
        /// Distance from one crest to the next, metres.
        wavelength_m: f64,
    },
    /// Hill repeats: work intervals climb at `grade`, recoveries jog back down at the same
    /// grade until the foot of the hill; other segments are flat. (Only altitude and effort
    /// follow the hill; positions keep following the route.)
    Hill {
        /// Gradient of the hill as a positive fraction (0.06 = 6 %).
        grade: f64,
    },
    /// A flat start of `flat_m` metres, then a long gentle descent at `grade`.
    Downhill {
        /// Gradient of the descent as a positive fraction (0.03 = 3 % down).
        grade: f64,
        /// Flat distance before the descent begins, metres.
        flat_m: f64,
    },
    /// Altitude by cumulative distance, `(distance_m, altitude_m)`, linearly interpolated
    /// and held level beyond the ends.
    Profile(Vec<(f64, f64)>),
}

/// The shape of the route the positions follow.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Route {
    /// A closed loop of the given length, run round and round.
    Loop {
        /// Length of one lap, metres.
        length_m: f64,
    },
    /// A gently winding path run out to its end and back, repeatedly.
    OutAndBack {
        /// One-way length, metres.
        length_m: f64,
    },
}

impl Default for Route {
    fn default() -> Route {
        Route::Loop { length_m: 2400.0 }
    }
}

/// How the runner distributes pace within and across efforts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Pacing {
    /// On target throughout (with ordinary pacing error).
    #[default]
    Even,
    /// Starts a little fast and slows within each effort, and across the set.
    Fading,
    /// Bursts above target, then eases off below it to recover.
    Surging,
    /// Each work interval faster than the last; a single steady run speeds up through it.
    Progression,
    /// Big surges in the first half of each effort, then a fade through the second half:
    /// the badly paced time trial.
    SurgeAndFade,
}

/// When the device writes a sample.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Sampling {
    /// One sample per second.
    #[default]
    EverySecond,
    /// "Smart" recording: a sample when speed or heart rate changes noticeably, at most
    /// `max_s` and (except at forced points: interval boundaries, pauses, the end) at least
    /// `min_s` seconds apart. Sample times stay whole seconds.
    Smart {
        /// Shortest gap between samples, seconds (at least 1).
        min_s: u32,
        /// Longest gap between samples, seconds.
        max_s: u32,
    },
}

/// A stop with the timer paused (a traffic light, a shoelace): the runner slows to a halt,
/// the device auto-pauses for `dur_s`, then the run resumes where it left off.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stop {
    /// Elapsed seconds from the start when the runner begins to stop.
    pub at_s: f64,
    /// How long the timer stays paused, seconds.
    pub dur_s: f64,
}

/// Parameters of a GPS position error process, per axis: a unit AR(1) of correlation time
/// `corr_s` through a first-order filter of time constant `smooth_s`, scaled to `sd_m`.
/// Short smoothing makes the error jump from second to second (fake movement when the
/// positions are differentiated); long smoothing makes it wander slowly.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GpsNoise {
    /// Standard deviation per axis, metres.
    pub sd_m: f64,
    /// Correlation time of the underlying AR(1), seconds.
    pub corr_s: f64,
    /// Time constant of the smoothing filter, seconds.
    pub smooth_s: f64,
}

/// The day's conditions and how the athlete runs.
#[derive(Debug, Clone, PartialEq)]
pub struct Conditions {
    /// Air temperature, °C. Cardiac drift grows above 15 °C.
    pub temperature_c: f64,
    /// Ground profile.
    pub terrain: Terrain,
    /// Route shape for positions.
    pub route: Route,
    /// Route origin (latitude, longitude) in degrees. Invented.
    pub origin: (f64, f64),
    /// Accumulated tiredness, 0..1: raises the heart-rate cost, makes recovery troughs climb
    /// rep to rep, and lowers the achievable speed late in the session.
    pub fatigue: f64,
    /// Pacing style.
    pub pacing: Pacing,
    /// Recording rhythm.
    pub sampling: Sampling,
    /// Treadmill: no positions, no altitude, flat; distance from a foot-pod-like integral.
    pub treadmill: bool,
    /// Timer pauses during the run.
    pub stops: Vec<Stop>,
    /// On hills the runner holds an even effort (constant metabolic power: hill-adjusted
    /// speed and heart rate stay flat) instead of the usual partial slowing uphill
    /// (`(Cr(0)/Cr(i))^0.7`, see `hill_speed_factor`). Default: false.
    pub even_hill_effort: bool,
    /// Stops the device records only as a missing stretch of samples: the runner halts as
    /// at a [`Stop`], no samples are written for `dur_s`, and no pause marker is written
    /// (`session.pauses` stays without them). The truth counts them like pauses.
    pub gaps: Vec<Stop>,
    /// Position error of the whole run; `None` is the default process (2.5 m, 30 s
    /// correlation, 10 s smoothing; see `record.rs`).
    pub gps_noise: Option<GpsNoise>,
    /// Extra position error while the runner stands still (true speed under 0.3 m/s,
    /// faded in and out over about 5 s), from its own random stream: the jitter a receiver
    /// shows at rest. `None`: no extra error.
    pub standing_jitter: Option<GpsNoise>,
    /// The sport written into the file. Cycling scales every running speed by
    /// [`CYCLING_SPEED_RATIO`] (an easy ride at about 7.5 m/s for an easy runner at 3.2 m/s),
    /// divides the effort by the same ratio and pedals at about 85 rpm; other sports only
    /// change the label. Default: running.
    pub sport: Sport,
}

/// Speed on the bike over speed on foot at the same effort, for [`Conditions::sport`]
/// cycling. Our own choice (no published source): sized so an easy ride on the flat lands
/// at 7-9 m/s.
pub const CYCLING_SPEED_RATIO: f64 = 2.4;

impl Default for Conditions {
    fn default() -> Conditions {
        Conditions {
            temperature_c: 15.0,
            terrain: Terrain::Flat,
            route: Route::default(),
            origin: (47.0, 8.0),
            fatigue: 0.0,
            pacing: Pacing::Even,
            sampling: Sampling::EverySecond,
            treadmill: false,
            stops: Vec::new(),
            even_hill_effort: false,
            gaps: Vec::new(),
            gps_noise: None,
            standing_jitter: None,
            sport: Sport::Running,
        }
    }
}

/// Sensor faults to inject into the recorded signals (never into the truth).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Faults {
    /// Number of GPS jumps: one to three consecutive fixes displaced 100-300 m, with the
    /// recorded speed spiking into and out of them. Ignored on a treadmill.
    pub gps_jumps: u32,
    /// Optical heart rate locking onto the step rate: `(start_s, dur_s)` during which the
    /// recorded HR reads the cadence.
    pub cadence_lock: Option<(f64, f64)>,
    /// Number of heart-rate drop-outs: stretches of 5-30 s with missing HR samples.
    pub hr_dropouts: u32,
}

/// Everything the simulator needs.
#[derive(Debug, Clone, PartialEq)]
pub struct SimInput {
    /// The athlete: heart-rate numbers and paces (fall-backs apply when missing).
    pub profile: AthleteProfile,
    /// The planned workout; the run follows `plan.expand()`.
    pub plan: Plan,
    /// Wall-clock time of the first sample.
    pub start: DateTime<Utc>,
    /// Weather, terrain, pacing, sampling.
    pub conditions: Conditions,
    /// Injected sensor faults.
    pub faults: Faults,
    /// Seed of every random stream.
    pub seed: u64,
    /// The format the session claims to come from (the writers decide the bytes).
    pub format: FileFormat,
}

impl SimInput {
    /// An input for `profile` running `plan`, with default conditions, no faults, a fixed
    /// start time (2024-03-04 07:00 UTC) and the given seed.
    pub fn new(profile: AthleteProfile, plan: Plan, seed: u64) -> SimInput {
        SimInput {
            profile,
            plan,
            seed,
            ..SimInput::default()
        }
    }
}

impl Default for SimInput {
    /// A 30-minute easy run on the flat by a profile with no numbers (all fall-backs).
    fn default() -> SimInput {
        SimInput {
            profile: AthleteProfile::bare("sim-runner"),
            plan: Plan {
                title: "Easy run".into(),
                purpose: "Aerobic maintenance".into(),
                date: None,
                steps: vec![Step::Single(crate::model::Segment {
                    kind: SegmentKind::Steady,
                    amount: Amount::Duration(1800.0),
                    target: Target::Open,
                    mode: None,
                })],
            },
            start: Utc
                .with_ymd_and_hms(2024, 3, 4, 7, 0, 0)
                .single()
                .unwrap_or(DateTime::<Utc>::UNIX_EPOCH),
            conditions: Conditions::default(),
            faults: Faults::default(),
            seed: 1,
            format: FileFormat::Fit,
        }
    }
}

/// One true interval: where a plan segment really began and ended, and what really happened,
/// from the noise-free signals at the recorded sample times.
#[derive(Debug, Clone, PartialEq)]
pub struct TrueInterval {
    /// Segment kind from the plan.
    pub kind: SegmentKind,
    /// Recovery mode, for recoveries.
    pub mode: Option<RecoveryMode>,
    /// 1-based repeat number and repeat count, inside a repeat block.
    pub repeat: Option<(u32, u32)>,
    /// Elapsed seconds of the first sample of the interval (a recorded sample time).
    pub start_s: f64,
    /// Elapsed seconds of the last sample (the next interval starts here).
    pub end_s: f64,
    /// True distance covered, metres.
    pub distance_m: f64,
    /// Distance over moving time (timer pauses excluded), m/s.
    pub avg_speed_mps: f64,
    /// Time-weighted mean of the true HR over the interval's samples (pauses excluded), bpm.
    pub avg_hr: f64,
    /// The flat-ground speed the runner aimed for (before pacing style and hills), m/s.
    pub target_speed_mps: f64,
    /// Work intervals: seconds from `end_s` to the highest HR sample within the next 60 s
    /// (the HR lag; 0 when HR was highest right at the end).
    pub peak_hr_after_s: Option<f64>,
    /// Work intervals: that highest HR, bpm.
    pub peak_hr: Option<f64>,
    /// Work intervals: lowest HR in the recovery that follows (if the next interval is a
    /// recovery). Recoveries: their own lowest HR.
    pub trough_hr: Option<f64>,
    /// Elapsed seconds of that lowest HR sample.
    pub trough_at_s: Option<f64>,
}

/// The true steady part of a run and the true decoupling over it.
///
/// Definitions (the everyday-run test set measures the analysis against these):
/// - **Main part**: the plan's segments after any leading warm-up or recovery segments
///   (standing, walking, jogging before the run) and before any trailing cool-down or
///   recovery segments (a walk, standing with the watch running). A run has a steady part
///   only when its main part holds no recovery: steady segments and at most one work
///   segment (a race or time trial is one effort). Sets have none.
/// - **Steady part**: the main part, less its first 10 minutes of moving time when the
///   run has no warm-up segment (heart rate settles; the README's rule). Pauses and gaps
///   inside it are not part of its moving time.
/// - **Moving**: a 1-s step counts as moving when the runner's true mean speed over it is
///   at least [`MOVING_SPEED_MPS`] (walking counts as moving, standing and pauses do not).
/// - **Decoupling**: the steady part's moving seconds split into two halves of equal
///   moving time; per half EF = time-weighted mean hill-adjusted speed (true speed times
///   `Cr(i)/Cr(0)` at the true gradient, [`crate::analysis::gradient::flat_equivalent_speed`])
///   over time-weighted mean true HR; decoupling = `(EF1 - EF2) / EF1 * 100`
///   (methods.md section 7, first version).
#[derive(Debug, Clone, PartialEq)]
pub struct SteadyPart {
    /// Elapsed seconds where the steady part starts.
    pub start_s: f64,
    /// Elapsed seconds where it ends.
    pub end_s: f64,
    /// Its moving time, seconds.
    pub moving_s: f64,
    /// Efficiency (hill-adjusted m/s per bpm) of the first and second half.
    pub ef_first: f64,
    pub ef_second: f64,
    /// `(EF1 - EF2) / EF1 * 100`.
    pub decoupling_pct: f64,
}

/// A 1-s step of the true run counts as moving at or above this mean speed, m/s. Our own
/// choice: well under walking (about 1.4 m/s), well over the jitter of standing still.
pub const MOVING_SPEED_MPS: f64 = 0.5;

/// What really happened, for checking analysis against.
#[derive(Debug, Clone, PartialEq)]
pub struct Truth {
    /// One entry per expanded plan segment, in order.
    pub intervals: Vec<TrueInterval>,
    /// Resting HR the model used (profile or fall-back), bpm.
    pub hr_rest: f64,
    /// Maximum HR the model used (profile, Tanaka, or 185), bpm.
    pub hr_max: f64,
    /// Threshold speed the model used, m/s.
    pub threshold_speed_mps: f64,
    /// True speed at each recorded sample, m/s.
    pub speed_mps: Vec<f64>,
    /// True heart rate at each recorded sample, bpm.
    pub hr_bpm: Vec<f64>,
    /// True gradient underfoot at each recorded sample (0 on a treadmill).
    pub grade: Vec<f64>,
    /// True moving time, seconds: the 1-s steps at or above [`MOVING_SPEED_MPS`]. Walking
    /// counts as moving (the athlete moved); standing, pauses and gaps do not.
    pub moving_s: f64,
    /// True distance covered from the first to the last sample, metres (the integral of the
    /// true speed).
    pub distance_m: f64,
    /// The true steady part and its decoupling; `None` for sets (see [`SteadyPart`]).
    pub steady: Option<SteadyPart>,
}

impl Truth {
    /// The work intervals, in order.
    pub fn work(&self) -> impl Iterator<Item = &TrueInterval> + '_ {
        self.intervals
            .iter()
            .filter(|i| i.kind == SegmentKind::Work)
    }
}

/// The recorded session and the truth behind it.
#[derive(Debug, Clone, PartialEq)]
pub struct SimOutput {
    /// What the device recorded (noise, sampling and faults applied), with device laps at
    /// the true interval boundaries (strip `session.laps` for detection tests).
    pub session: Session,
    /// The noise-free, fault-free truth.
    pub truth: Truth,
}

/// Run the simulation.
pub fn simulate(input: &SimInput) -> SimOutput {
    let physio = physiology::Physio::from_profile(&input.profile, input.start);
    let track = engine::run(input, &physio);
    record::record(input, &physio, &track)
}
