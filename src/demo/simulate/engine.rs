//! The 1-second integration of the true (noise-free) run: speed, distance, heart rate,
//! cadence, altitude, gradient.

use super::physiology::{
    cadence_for_speed, even_effort_speed_factor, hill_cost_ratio, hill_speed_factor, hr_fraction,
    soft_cap, Physio,
};
use super::terrain::TerrainState;
use super::{Pacing, SimInput, Terrain, CYCLING_SPEED_RATIO};
use crate::demo::rng::Rng;
use crate::model::{Amount, RecoveryMode, SegmentKind, Sport, Target};

/// Random-stream numbers: every part of the model draws from its own stream.
pub(crate) mod stream {
    pub const PACING: u64 = 1;
    pub const SURGE: u64 = 2;
    pub const SAMPLING: u64 = 3;
    pub const SPEED_NOISE: u64 = 4;
    pub const HR_NOISE: u64 = 5;
    pub const ALTITUDE_NOISE: u64 = 6;
    pub const GPS_NOISE: u64 = 7;
    pub const CADENCE_NOISE: u64 = 8;
    pub const FAULTS: u64 = 9;
    pub const STANDING_JITTER: u64 = 10;
}

/// Integration step, seconds.
const DT: f64 = 1.0;

// ---- Speed control -------------------------------------------------------------------
// Common coaching practice (no published source) / our own choices, sized to look like
// watch recordings: a runner reaches a new pace within 5-10 s.
/// Time constant of speeding up, s.
const TAU_ACCEL_S: f64 = 4.0;
/// Time constant of slowing down, s.
const TAU_DECEL_S: f64 = 3.0;
/// Largest acceleration, m/s². Well under the 6.4 m/s² of a sprint start
/// (di Prampero et al. 2005, J Exp Biol 208:2809, per methods.md).
const A_MAX_UP: f64 = 2.5;
/// Largest deceleration, m/s².
const A_MAX_DOWN: f64 = 3.0;
/// Walking recovery speed, m/s. From memory: comfortable walking is about 1.3-1.5 m/s.
const WALK_SPEED: f64 = 1.4;
/// Speeds below this are walking (no pacing style applies), m/s.
const RUN_THRESHOLD: f64 = 1.9;
/// Default speeds as fractions of easy pace (common coaching practice): warm-up a touch
/// slower than easy, cool-down slower still, jog recoveries clearly slower.
const WARMUP_OF_EASY: f64 = 0.92;
const COOLDOWN_OF_EASY: f64 = 0.90;
const JOG_OF_EASY: f64 = 0.85;
/// Pacing error: AR(1) with this correlation time, s.
const PACING_CORR_S: f64 = 10.0;
/// Pacing error standard deviation (fraction of speed) with a pace target / running easy /
/// walking. Our own choice: a few per cent, as the brief asks.
const PACING_SD_TARGET: f64 = 0.02;
const PACING_SD_EASY: f64 = 0.025;
const PACING_SD_WALK: f64 = 0.03;
/// "Watch check": the runner closes the distance lost or gained against the intended pace
/// over this many seconds, once settled into a segment. Keeps interval averages near the
/// intended pace, as runners looking at their lap pace do.
const WATCH_GAIN_S: f64 = 45.0;
/// Seconds into a segment before the runner starts correcting.
const WATCH_SETTLE_S: f64 = 15.0;
/// Largest watch-check correction, fraction of the intended speed.
const WATCH_MAX: f64 = 0.06;
/// Speed lost by the end of the session at fatigue 1 (fraction). Our own choice.
const FATIGUE_SPEED_LOSS: f64 = 0.06;
/// Finishing kick: over the last this-many seconds of a work interval the runner lifts the
/// pace by [`KICK`]. Common coaching practice (no published source): runners tend to finish
/// a rep a little faster than they ran its middle. It also makes the HR lag robust, because
/// the heart is still answering the kick when the rep ends.
const KICK_S: f64 = 20.0;
/// Finishing kick, fraction of speed.
const KICK: f64 = 0.05;
/// Longest a stopping runner takes to come to a halt before the timer pauses, s.
const STOP_MAX_SLOWING_S: usize = 20;

// ---- Heart rate ----------------------------------------------------------------------
/// Delay between effort and the heart's drive, s. With first-order kinetics alone HR would
/// peak exactly when the effort stops; recordings show HR still rising for several seconds
/// to ~20 s after a hard rep ends (From memory: a commonly seen pattern in interval
/// recordings). The delay plus the drive filter below reproduce that "HR lag".
const HR_DELAY_S: usize = 8;
/// Time constant of the drive filter, s (our own choice).
const DRIVE_TAU_S: f64 = 6.0;
/// HR time constants rising / falling, s. From memory: on-kinetics of HR in moderate
/// exercise have a time constant of about 30 s; recovery is slower overall.
const HR_TAU_UP_S: f64 = 30.0;
const HR_TAU_DOWN_S: f64 = 60.0;
/// Cardiac drift, bpm per hour at a drive of 0.8 of threshold. Background (From memory):
/// Coyle & González-Alonso 2001, Exerc Sport Sci Rev 29:88, cardiovascular drift grows with
/// heat and dehydration. The rates are our own, sized so a 100-min easy run at 28 °C
/// decouples by roughly 6-8 % and at 12 °C by under 2 %.
const DRIFT_BASE_BPH: f64 = 3.0;
const DRIFT_PER_DEG_BPH: f64 = 1.0;
/// Temperature above which heat adds drift and an immediate HR offset, °C.
const DRIFT_REF_C: f64 = 15.0;
/// Immediate HR offset per °C above the reference, bpm (our own choice).
const HEAT_OFFSET_PER_DEG: f64 = 0.25;
/// Slow component: accumulates with drive above this fraction of threshold (our own
/// choice, standing in for the slow component and accumulated fatigue of hard work)...
const SLOW_THRESHOLD: f64 = 0.85;
/// ...at this many bpm per second per unit of excess drive (times 1 + 3 * fatigue)...
const SLOW_GAIN: f64 = 0.04;
/// ...and decays with this time constant, s.
const SLOW_TAU_S: f64 = 1800.0;
/// HR offset at fatigue 1, bpm (our own choice).
const FATIGUE_HR_OFFSET: f64 = 4.0;
/// Feedback rate of a runner holding an HR band: speed change per second per bpm outside.
const HR_BAND_GAIN: f64 = 0.002;

/// One expanded plan segment with its resolved speed.
#[derive(Debug, Clone)]
pub(crate) struct SimSeg {
    pub kind: SegmentKind,
    pub mode: Option<RecoveryMode>,
    pub repeat: Option<(u32, u32)>,
    pub amount: Amount,
    /// Intended flat-ground speed, m/s.
    pub base_speed: f64,
    /// Heart-rate band the runner holds, if the target is one.
    pub hr_band: Option<(f64, f64)>,
    /// Work intervals: 1-based ordinal and count of work intervals in the plan.
    pub work_ord: Option<(usize, usize)>,
    /// True when the target names a pace (tighter pacing error).
    pub paced: bool,
}

/// The true run, one entry per second.
#[derive(Debug, Clone, Default)]
pub(crate) struct Track {
    pub speed: Vec<f64>,
    pub dist: Vec<f64>,
    pub hr: Vec<f64>,
    pub cadence: Vec<f64>,
    pub altitude: Vec<f64>,
    pub grade: Vec<f64>,
    pub segs: Vec<SimSeg>,
    /// Per segment: (first second, last second); consecutive segments share a boundary.
    pub bounds: Vec<(usize, usize)>,
    /// Timer pauses: (first second, last second), no samples strictly inside.
    pub pauses: Vec<(usize, usize)>,
    /// Per pause: whether the device writes a pause marker (false for
    /// [`super::Conditions::gaps`]).
    pub pause_marked: Vec<bool>,
    /// Cycling: pedalling cadence instead of step rate.
    pub cycling: bool,
}

/// Pedalling cadence while riding, rpm. Our own choice: a typical recreational cadence.
const CYCLING_CADENCE_RPM: f64 = 85.0;

impl Track {
    pub fn len(&self) -> usize {
        self.speed.len()
    }

    fn push(&mut self, v: f64, d: f64, hr: f64, alt: f64, grade: f64) {
        self.speed.push(v);
        self.dist.push(d);
        self.hr.push(hr);
        self.cadence.push(if !self.cycling {
            cadence_for_speed(v)
        } else if v < 1.0 {
            0.0
        } else {
            CYCLING_CADENCE_RPM
        });
        self.altitude.push(alt);
        self.grade.push(grade);
    }
}

/// Resolve the plan's expanded sequence into segments with speeds.
fn resolve(input: &SimInput, physio: &Physio) -> Vec<SimSeg> {
    let sport_scale = sport_speed_ratio(&input.conditions.sport);
    let expanded = input.plan.expand();
    let n_work = expanded
        .iter()
        .filter(|e| e.kind == SegmentKind::Work)
        .count();
    let mut j = 0;
    expanded
        .iter()
        .map(|e| {
            let target_speed = physio.target_speed(&input.profile, &e.target);
            let base_speed = match (e.kind, e.mode) {
                (SegmentKind::Recovery, Some(RecoveryMode::Walk)) => WALK_SPEED,
                (SegmentKind::Recovery, Some(RecoveryMode::Stand)) => 0.0,
                (kind, _) => target_speed.unwrap_or(match kind {
                    SegmentKind::Warmup => physio.v_easy * WARMUP_OF_EASY,
                    SegmentKind::Cooldown => physio.v_easy * COOLDOWN_OF_EASY,
                    SegmentKind::Recovery => physio.v_easy * JOG_OF_EASY,
                    SegmentKind::Steady => physio.v_easy,
                    // An open work interval: run it at about 5 km pace.
                    SegmentKind::Work => physio.named_speed(&input.profile, "5k"),
                }),
            };
            let work_ord = (e.kind == SegmentKind::Work).then(|| {
                j += 1;
                (j, n_work)
            });
            SimSeg {
                kind: e.kind,
                mode: e.mode,
                repeat: e.repeat,
                amount: e.amount,
                base_speed: if sport_scale == 1.0 {
                    base_speed.max(0.0)
                } else {
                    base_speed.max(0.0) * sport_scale
                },
                hr_band: match e.target {
                    Target::HrRange { low_bpm, high_bpm } => Some((low_bpm, high_bpm)),
                    _ => None,
                },
                work_ord,
                paced: matches!(
                    e.target,
                    Target::PaceRange { .. } | Target::NamedPace { .. }
                ),
            }
        })
        .collect()
}

/// Speed over running speed at the same effort for a sport.
fn sport_speed_ratio(sport: &Sport) -> f64 {
    match sport {
        Sport::Cycling => CYCLING_SPEED_RATIO,
        _ => 1.0,
    }
}

/// Surge state for the surging pacing style.
#[derive(Debug, Clone, Copy)]
enum Surge {
    Idle,
    Burst(u32),
    Ease(u32),
}

/// Stop (timer pause) state.
#[derive(Debug, Clone, Copy)]
enum StopPhase {
    Idle,
    Slowing { since: usize },
    Paused { from: usize, until: usize },
}

/// The pacing-style multiplier on the intended speed.
///
/// Our own choices (common coaching patterns, no published source):
/// - Fading: +2.5 % at the start of each rep down to -3.5 % at its end, and -3 % more by the
///   last rep of the set; a steady run goes from +3 % to -5 %.
/// - Progression: work reps spread evenly over a span of 2 % per rep (at most 8 %),
///   centred on target; a steady run goes from -4 % to +4 %.
/// - Surging: bursts of 8-20 s at +7 %, each followed by 20 s at -4 %.
/// - Surge and fade: in the first half of an effort, bursts of 15-35 s at +9 % with 15 s at
///   -3 % after each, on top of a start 3 % fast; through the second half the pace falls
///   away to 6 % slow.
fn style_multiplier(
    pacing: Pacing,
    seg: &SimSeg,
    u: f64,
    clock: f64,
    surge: &mut Surge,
    rng: &mut Rng,
) -> f64 {
    if !matches!(seg.kind, SegmentKind::Work | SegmentKind::Steady)
        || seg.base_speed < RUN_THRESHOLD
    {
        return 1.0;
    }
    let set_pos = match seg.work_ord {
        Some((j, n)) if n > 1 => (j - 1) as f64 / (n - 1) as f64,
        _ => 0.0,
    };
    let n_work = seg.work_ord.map_or(1, |(_, n)| n);
    match pacing {
        Pacing::Even => 1.0,
        Pacing::Fading => {
            if seg.work_ord.is_some() {
                (1.025 - 0.06 * u) * (1.0 - 0.03 * set_pos)
            } else {
                1.03 - 0.08 * u
            }
        }
        Pacing::Progression => {
            if seg.work_ord.is_some() {
                let span = (0.02 * (n_work as f64 - 1.0)).min(0.08);
                1.0 - span / 2.0 + span * set_pos
            } else {
                0.96 + 0.08 * u
            }
        }
        Pacing::SurgeAndFade => {
            let base = if u < 0.5 {
                1.03
            } else {
                1.03 - 0.18 * (u - 0.5)
            };
            let draw = rng.uniform();
            *surge = match *surge {
                Surge::Idle if u < 0.5 && clock > 10.0 && draw < 1.0 / 30.0 => {
                    Surge::Burst(15 + rng.below(21) as u32)
                }
                Surge::Burst(0) => Surge::Ease(15),
                Surge::Burst(n) => Surge::Burst(n - 1),
                Surge::Ease(0) => Surge::Idle,
                Surge::Ease(n) => Surge::Ease(n - 1),
                s => s,
            };
            base * match *surge {
                Surge::Idle => 1.0,
                Surge::Burst(_) => 1.09,
                Surge::Ease(_) => 0.97,
            }
        }
        Pacing::Surging => {
            let draw = rng.uniform();
            *surge = match *surge {
                Surge::Idle if clock > 10.0 && draw < 1.0 / 40.0 => {
                    Surge::Burst(8 + rng.below(13) as u32)
                }
                Surge::Burst(0) => Surge::Ease(20),
                Surge::Burst(n) => Surge::Burst(n - 1),
                Surge::Ease(0) => Surge::Idle,
                Surge::Ease(n) => Surge::Ease(n - 1),
                s => s,
            };
            match *surge {
                Surge::Idle => 1.0,
                Surge::Burst(_) => 1.07,
                Surge::Ease(_) => 0.96,
            }
        }
    }
}

/// Integrate the run.
pub(crate) fn run(input: &SimInput, physio: &Physio) -> Track {
    let c = &input.conditions;
    let segs = resolve(input, physio);
    let fatigue = c.fatigue.clamp(0.0, 1.0);
    let est_total: f64 = segs
        .iter()
        .map(|s| match s.amount {
            Amount::Duration(t) => t.max(0.0),
            Amount::Distance(m) => m.max(0.0) / s.base_speed.max(1.0),
        })
        .sum::<f64>()
        .max(1.0);
    let mut terrain = TerrainState::new(if c.treadmill {
        &Terrain::Flat
    } else {
        &c.terrain
    });
    let mut pace_rng = Rng::with_stream(input.seed, stream::PACING);
    let mut surge_rng = Rng::with_stream(input.seed, stream::SURGE);
    // Stops with a pause marker and gaps without one, in time order (stable: a stop
    // before a gap at the same second).
    let mut stops: Vec<_> = c
        .stops
        .iter()
        .map(|s| (*s, true))
        .chain(c.gaps.iter().map(|s| (*s, false)))
        .filter(|(s, _)| s.at_s.is_finite() && s.dur_s >= 1.0)
        .collect();
    stops.sort_by(|a, b| a.0.at_s.total_cmp(&b.0.at_s));
    let sport_scale = sport_speed_ratio(&c.sport);
    let mut next_stop = 0;
    let mut stop = StopPhase::Idle;

    // Heart-rate model constants for this run.
    let heat = (c.temperature_c - DRIFT_REF_C).max(0.0);
    let drift_bph = (DRIFT_BASE_BPH + DRIFT_PER_DEG_BPH * heat) * (1.0 + 0.5 * fatigue);
    let hr_offset = HEAT_OFFSET_PER_DEG * heat + FATIGUE_HR_OFFSET * fatigue;
    let reserve = physio.hr_max - physio.hr_rest;
    let k_drive = 1.0 - (-DT / DRIVE_TAU_S).exp();
    let k_up = 1.0 - (-DT / HR_TAU_UP_S).exp();
    let k_down = 1.0 - (-DT / HR_TAU_DOWN_S).exp();
    let k_slow = 1.0 - (-DT / SLOW_TAU_S).exp();
    let phi = (-DT / PACING_CORR_S).exp();
    let innov = (1.0 - phi * phi).sqrt();

    let cap_guess = (est_total * 1.3) as usize + 64;
    let mut tr = Track {
        speed: Vec::with_capacity(cap_guess),
        dist: Vec::with_capacity(cap_guess),
        hr: Vec::with_capacity(cap_guess),
        cadence: Vec::with_capacity(cap_guess),
        altitude: Vec::with_capacity(cap_guess),
        grade: Vec::with_capacity(cap_guess),
        cycling: c.sport == Sport::Cycling,
        ..Track::default()
    };
    let mut effort_hist: Vec<f64> = Vec::with_capacity(cap_guess);

    // State. The runner starts standing, HR at its standing level.
    let mut k = 0usize;
    let mut v = 0.0f64;
    let mut d = 0.0f64;
    let mut hr = physio.hr_at(soft_cap(hr_fraction(0.0) + hr_offset / reserve));
    let mut drive = 0.0f64;
    let mut drift = 0.0f64;
    let mut slow = 0.0f64;
    let mut e = 0.0f64;
    let first_kind = segs.first().map_or(SegmentKind::Steady, |s| s.kind);
    tr.push(
        v,
        d,
        hr,
        terrain.altitude(d),
        if c.treadmill {
            0.0
        } else {
            terrain.grade(d, first_kind)
        },
    );

    for seg in &segs {
        let k0 = k;
        let d0 = d;
        let mut clock = 0.0f64;
        let mut err = 0.0f64;
        let mut hr_adj = 1.0f64;
        let mut surge = Surge::Idle;
        // Safety cap for distance segments a runner could never finish (standing).
        let cap_s = match seg.amount {
            Amount::Duration(t) => t.max(0.0),
            Amount::Distance(m) => 3.0 * m.max(0.0) / seg.base_speed.max(0.5) + 300.0,
        };
        loop {
            let done = match seg.amount {
                Amount::Duration(t) => clock >= t - 1e-9,
                Amount::Distance(m) => d - d0 >= m - 1e-9 || clock >= cap_s,
            };
            if done {
                break;
            }
            let t = k as f64;
            // Stop state machine.
            if let StopPhase::Paused { from, until } = stop {
                if k >= until {
                    tr.pauses.push((from, k));
                    // A pause is only entered with `next_stop` in range (see below).
                    tr.pause_marked
                        .push(stops.get(next_stop).is_some_and(|s| s.1));
                    stop = StopPhase::Idle;
                    next_stop += 1;
                }
            }
            if matches!(stop, StopPhase::Idle)
                && stops.get(next_stop).is_some_and(|s| t >= s.0.at_s)
            {
                stop = StopPhase::Slowing { since: k };
            }
            let paused = matches!(stop, StopPhase::Paused { .. });

            let grade = if c.treadmill {
                0.0
            } else {
                terrain.grade(d, seg.kind)
            };
            let u = match seg.amount {
                Amount::Duration(total) if total > 0.0 => clock / total,
                Amount::Distance(m) if m > 0.0 => (d - d0) / m,
                _ => 1.0,
            }
            .clamp(0.0, 1.0);
            let style = style_multiplier(c.pacing, seg, u, clock, &mut surge, &mut surge_rng);
            let remaining_s = match seg.amount {
                Amount::Duration(total) => total - clock,
                Amount::Distance(m) => (m - (d - d0)) / v.max(1.0),
            };
            let kick = if seg.kind == SegmentKind::Work
                && seg.base_speed >= RUN_THRESHOLD
                && remaining_s <= KICK_S
            {
                1.0 + KICK
            } else {
                1.0
            };
            let fat = 1.0 - FATIGUE_SPEED_LOSS * fatigue * (t / est_total).min(1.0);
            // On a gradient the runner holds roughly constant effort: speed scales with
            // (Cr(0)/Cr(i))^0.7. Source: Minetti et al. 2002, J Appl Physiol 93:1039
            let hill = if c.even_hill_effort {
                even_effort_speed_factor(grade)
            } else {
                hill_speed_factor(grade)
            };
            let nominal = seg.base_speed * style * kick * fat * hill * hr_adj;

            // Pacing error (always drawn, so the stream does not depend on the plan).
            let sd = if seg.base_speed <= 0.0 {
                0.0
            } else if seg.base_speed < RUN_THRESHOLD {
                PACING_SD_WALK
            } else if seg.paced {
                PACING_SD_TARGET
            } else {
                PACING_SD_EASY
            };
            e = phi * e + innov * pace_rng.normal();
            let corr = if clock >= WATCH_SETTLE_S && nominal > 0.0 {
                (err / WATCH_GAIN_S).clamp(-WATCH_MAX * nominal, WATCH_MAX * nominal)
            } else {
                0.0
            };
            let stopping = !matches!(stop, StopPhase::Idle);
            let cmd = if stopping {
                0.0
            } else {
                (nominal * (1.0 + sd * e) + corr).max(0.0)
            };

            // Speed: first-order lag with an acceleration limit.
            let tau = if cmd > v { TAU_ACCEL_S } else { TAU_DECEL_S };
            let dv = ((cmd - v) * (1.0 - (-DT / tau).exp())).clamp(-A_MAX_DOWN * DT, A_MAX_UP * DT);
            let mut v_new = (v + dv).max(0.0);
            if cmd == 0.0 && v_new < 0.1 {
                // Coming to a halt: the exponential lag would never reach zero.
                v_new = 0.0;
            }
            if paused {
                v_new = 0.0;
            } else if let StopPhase::Slowing { since } = stop {
                if v_new < 0.2 || k - since >= STOP_MAX_SLOWING_S {
                    // The last steps to a halt; the timer pauses at the next second.
                    v_new = 0.0;
                    let dur = stops
                        .get(next_stop)
                        .map_or(1.0, |s| s.0.dur_s.round().max(1.0))
                        as usize;
                    stop = StopPhase::Paused {
                        from: k + 1,
                        until: k + 1 + dur,
                    };
                }
            }
            let dd = 0.5 * (v + v_new) * DT;
            terrain.advance(dd, seg.kind);
            d += dd;
            if clock >= WATCH_SETTLE_S && !stopping {
                err += (nominal - v_new) * DT;
            }

            // Heart rate. Effort = hill-adjusted speed / threshold speed.
            // Source: Minetti et al. 2002, J Appl Physiol 93:1039 (hill cost Cr(i)/Cr(0)).
            let effort = if sport_scale == 1.0 {
                v_new * hill_cost_ratio(grade) / physio.v_threshold
            } else {
                v_new * hill_cost_ratio(grade) / (physio.v_threshold * sport_scale)
            };
            effort_hist.push(effort);
            let delayed = effort_hist
                .len()
                .checked_sub(1 + HR_DELAY_S)
                .and_then(|j| effort_hist.get(j))
                .copied()
                .unwrap_or(0.0);
            drive += (delayed - drive) * k_drive;
            drift += drift_bph / 3600.0 * DT * (drive / 0.8).clamp(0.0, 1.5);
            slow += SLOW_GAIN * (1.0 + 3.0 * fatigue) * (drive - SLOW_THRESHOLD).max(0.0) * DT
                - slow * k_slow;
            let frac = soft_cap(hr_fraction(drive) + (drift + slow + hr_offset) / reserve);
            let hr_target = physio.hr_at(frac);
            hr += (hr_target - hr) * if hr_target > hr { k_up } else { k_down };
            hr = hr.clamp(physio.hr_rest, physio.hr_max);

            // A runner holding an HR band eases off above it and presses below it.
            if let Some((lo, hi)) = seg.hr_band {
                if clock >= 60.0 {
                    if hr > hi {
                        hr_adj *= 1.0 - HR_BAND_GAIN * (hr - hi).min(5.0);
                    } else if hr < lo {
                        hr_adj *= 1.0 + HR_BAND_GAIN * (lo - hr).min(5.0);
                    }
                    hr_adj = hr_adj.clamp(0.6, 1.4);
                }
            }

            k += 1;
            if !paused {
                clock += DT;
            }
            v = v_new;
            tr.push(v, d, hr, terrain.altitude(d), grade);
        }
        tr.bounds.push((k0, k));
    }
    // A pause still open at the end closes at the last sample.
    if let StopPhase::Paused { from, .. } = stop {
        if from < k {
            tr.pauses.push((from, k));
            tr.pause_marked
                .push(stops.get(next_stop).is_none_or(|s| s.1));
        }
    }
    tr.segs = segs;
    tr
}
