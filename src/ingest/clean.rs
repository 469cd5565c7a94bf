//! Bad-data flags. Samples are never deleted; each flag has a range, a channel and a reason.
//!
//! There is no published standard for watch data (methods.md §12), so most thresholds
//! are common coaching practice; the published anchors are cited beside each one.
//!
//! # Rules
//!
//! | Kind | Channel | Rule |
//! |---|---|---|
//! | `SpeedLimit` | speed | speed above [`MAX_SPEED_MPS`] |
//! | `Acceleration` | speed | \|Δspeed / Δt\| above [`MAX_ACCEL_MPS2`] (Δt at least 1 s) |
//! | `PositionJump` | position | fixes that jump away and come back (implied speed out and back above [`MAX_SPEED_MPS`], the skip step plausible): only those fixes are flagged; a fast step that never comes back flags just that step |
//! | `HrRange` | hr | outside [`HR_MIN_BPM`]..[`HR_MAX_BPM`] |
//! | `HrRate` | hr | \|Δhr / Δt\| above [`HR_MAX_RATE_BPM_PER_S`] (Δt at least 1 s) |
//! | `CadenceLock` | hr | HR within ±[`CADENCE_LOCK_TOLERANCE_BPM`] of cadence (or half of it) for [`CADENCE_LOCK_MIN_S`] or more, entered or left by a jump of [`CADENCE_LOCK_JUMP_BPM`] within [`CADENCE_LOCK_JUMP_WINDOW_S`] |
//! | `FlatLine` | hr, cadence, speed | exactly the same value for [`FLAT_LINE_MIN_S`] or more while moving |
//! | `Gap` | first present of speed, hr, cadence, position, altitude | no samples for longer than [`gap_threshold_s`], not explained by a timer pause |
//!
//! Heart rate above the profile's maximum is *not* a flag: a real heart rate above the
//! profile's `hr_max` is far more often a stale profile than bad data (methods.md §12), so
//! those samples are kept and the review says the maximum looks out of date
//! (`analysis::findings`). Only values outside [`HR_MIN_BPM`]..[`HR_MAX_BPM`] and
//! implausible patterns (rate, cadence lock, flat line) are flagged.
//!
//! Adjacent or overlapping flags of the same kind and channel are merged; the result is
//! sorted by `from_s`.
//!
//! # Cadence lock, in detail
//!
//! A wrist optical sensor can lock onto the arm swing and report the step rate as heart
//! rate (periodic motion artefacts: Wijshoff, Mischi & Aarts, IEEE TBME 2017;64(1):196-207).
//! Matching alone is not enough: a heart rate that drifts up until it happens to equal
//! the cadence is physiology. So an episode needs (1) HR within ±3 bpm of the cadence (or
//! of half the cadence) for 30 s or more, short excursions of up to
//! [`CADENCE_LOCK_GRACE_S`] tolerated, and (2) a jump: HR changed by 15 bpm or more within
//! 5 s before landing on the cadence, or within 5 s after leaving it. A heart cannot do
//! that; a sensor switching between pulse and arm swing does. The flag runs from the
//! sample the jump started at to the last sample on the cadence.
//!
//! # Which flags mask which channel ([`sample_mask`])
//!
//! - Every flag masks its own channel.
//! - `Gap` masks every channel (nothing was recorded).
//! - A position flag also masks speed and distance (both come from positions on GPS
//!   devices, and derived ones certainly do).
//! - A speed flag also masks distance; when speed and distance were both derived (from
//!   positions) it also masks position, the real source of the bad speed.
//! - Heart-rate flags (including cadence lock) mask heart rate only: the cadence is fine.

use crate::ingest::derive::{haversine_m, PauseCursor};
use crate::model::{AthleteProfile, Channel, ChannelKind, Flag, FlagKind, Session};

/// Highest plausible running speed, m/s.
// methods.md §12: peak sprint speed is about 12.3 m/s (Bolt 2009; Graubner & Nixdorf,
// New Stud Athl 2011). Common coaching practice (no published source): flag above 12.5.
pub const MAX_SPEED_MPS: f64 = 12.5;

/// Highest plausible |acceleration|, m/s².
// methods.md §12: peak sprint-start acceleration 6.42 ± 0.61 m/s² (di Prampero et al.,
// J Exp Biol 2005;208:2809-2816). Common coaching practice (no published source): 8-10.
pub const MAX_ACCEL_MPS2: f64 = 8.0;

/// Lowest plausible heart rate while running, bpm.
// Common coaching practice (no published source), methods.md §12: keep 30-230 bpm.
pub const HR_MIN_BPM: f64 = 30.0;

/// Highest plausible heart rate, bpm.
// Common coaching practice (no published source), methods.md §12: keep 30-230 bpm.
pub const HR_MAX_BPM: f64 = 230.0;

/// Fastest plausible change of heart rate, bpm per second.
// Common coaching practice (no published source), methods.md §12: about 10-15 bpm/s.
pub const HR_MAX_RATE_BPM_PER_S: f64 = 15.0;

/// How close HR must be to the cadence (or half of it) to count as "on" it, bpm.
// Common coaching practice (no published source), methods.md §12: within ±3 bpm.
pub const CADENCE_LOCK_TOLERANCE_BPM: f64 = 3.0;

/// How long HR must stay on the cadence to be a lock, seconds.
// Common coaching practice (no published source), methods.md §12: at least 30 s.
pub const CADENCE_LOCK_MIN_S: f64 = 30.0;

/// HR change that marks a sensor jumping onto (or off) the cadence, bpm.
// Common coaching practice (no published source): the same 15 bpm as the HR-rate rule,
// here allowed over a few seconds (our design choice, not in methods.md).
pub const CADENCE_LOCK_JUMP_BPM: f64 = 15.0;

/// Window in which the entry or exit jump must happen, seconds.
// Common coaching practice (no published source); our design choice.
pub const CADENCE_LOCK_JUMP_WINDOW_S: f64 = 5.0;

/// Short excursions off the cadence tolerated inside a lock episode, seconds.
// Common coaching practice (no published source); our design choice.
pub const CADENCE_LOCK_GRACE_S: f64 = 3.0;

/// How long a sensor must report exactly the same value to be a flat line, seconds.
// Common coaching practice (no published source), methods.md §12 spirit; brief: 60 s.
pub const FLAT_LINE_MIN_S: f64 = 60.0;

/// Cadence at a steady pace is naturally constant (and files often store it in whole
/// strides), so an unchanged cadence counts as stuck after [`FLAT_LINE_MIN_S`] only when the
/// pace changed meanwhile; at a steady pace it must stay unchanged this long, seconds.
// Common coaching practice (no published source); our design choice after whole-stride
// cadence in well-formed files sat on one value for 80 s at a steady pace.
pub const CADENCE_FLAT_STEADY_MIN_S: f64 = 600.0;

/// A change in mean speed between 15-s windows that counts as a change of pace, m/s.
// Common coaching practice (no published source); well above GPS speed noise once averaged.
pub const PACE_CHANGE_MPS: f64 = 0.6;

/// Speed above which the athlete counts as moving, m/s.
// Common coaching practice (no published source): about walking pace.
pub const MOVING_SPEED_MPS: f64 = 1.0;

/// Shortest interval between samples that can be a gap, seconds.
// Common coaching practice (no published source): smart recording every few seconds is normal.
pub const GAP_MIN_S: f64 = 10.0;

/// A gap is also longer than this many median sampling intervals.
// Common coaching practice (no published source).
pub const GAP_MEDIAN_FACTOR: f64 = 3.0;

/// Longest time a run of position outliers may last before it counts as "coming back", s.
// Common coaching practice (no published source): GPS multipath excursions are short.
pub const POSITION_RETURN_WINDOW_S: f64 = 60.0;

/// At most this many fixes are searched for the return of a position excursion.
const POSITION_RETURN_MAX_FIXES: usize = 120;

/// A position fault found by [`position_jumps`]. Indices are sample indices.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PositionJump {
    /// Fixes `first..=last` jump away from the track and come back to it: outliers.
    Excursion {
        first: usize,
        last: usize,
        /// Largest distance of an outlier fix from the last good fix, metres.
        away_m: f64,
        /// Implied speed of the step out and of the step back, m/s.
        out_mps: f64,
        back_mps: f64,
    },
    /// The step from fix `from` to fix `to` is implausibly fast and does not come back.
    Step {
        from: usize,
        to: usize,
        distance_m: f64,
        speed_mps: f64,
    },
}

/// The longest interval between samples that is still normal recording rhythm:
/// `max(10 s, 3 × median interval)`. O(n) (selection, not a full sort).
pub fn gap_threshold_s(t: &[f64]) -> f64 {
    (GAP_MEDIAN_FACTOR * median_interval(t)).max(GAP_MIN_S)
}

/// `t[i]`, for indices the caller keeps in range (0 otherwise, never reached).
fn at(t: &[f64], i: usize) -> f64 {
    t.get(i).copied().unwrap_or(0.0)
}

/// Median spacing of `t`, seconds (0 for fewer than two samples).
fn median_interval(t: &[f64]) -> f64 {
    let mut d: Vec<f64> = t.iter().zip(t.iter().skip(1)).map(|(a, b)| b - a).collect();
    if d.is_empty() {
        return 0.0;
    }
    let mid = d.len() / 2;
    let (_, m, _) = d.select_nth_unstable_by(mid, f64::total_cmp);
    *m
}

/// Position outliers and implausible steps (methods.md §12).
///
/// The idea follows McConnell, Chambers & Fedak (Antarctic Science 1992;4(4):393-398):
/// a fix is suspect when its implied speeds to its neighbours exceed a maximum speed.
/// A step out faster than [`MAX_SPEED_MPS`] starts a search (up to
/// [`POSITION_RETURN_WINDOW_S`]) for a step back that is also too fast while the direct
/// step from the last good fix is plausible; the fixes in between are an `Excursion`
/// (a single outlier is the case of one fix). With no return, only the step is reported.
/// Implied speed uses `max(Δt, 1 s)`, so sub-second jitter is judged per second.
pub fn position_jumps(t: &[f64], lat: &Channel, lon: &Channel) -> Vec<PositionJump> {
    // Compact list of present fixes: (sample index, t, lat, lon).
    let fixes: Vec<(usize, f64, f64, f64)> = t
        .iter()
        .enumerate()
        .filter_map(|(i, &ti)| Some((i, ti, lat.get(i)?, lon.get(i)?)))
        .collect();
    let step = |a: (usize, f64, f64, f64), b: (usize, f64, f64, f64)| -> (f64, f64) {
        let d = haversine_m(a.2, a.3, b.2, b.3);
        (d, d / (b.1 - a.1).max(1.0))
    };
    let mut screen = Screen::default();
    let mut out = Vec::new();
    let m = fixes.len();
    let mut k = 1;
    while k < m {
        let (Some(&anchor), Some(&fix_k)) = (fixes.get(k - 1), fixes.get(k)) else {
            break;
        };
        if screen.surely_plausible(anchor, fix_k) {
            k += 1;
            continue;
        }
        let (d_out, v_out) = step(anchor, fix_k);
        if v_out <= MAX_SPEED_MPS {
            k += 1;
            continue;
        }
        let mut found = None;
        let mut j = k + 1;
        while let (Some(&prev), Some(&fix_j)) = (fixes.get(j - 1), fixes.get(j)) {
            if fix_j.1 - anchor.1 > POSITION_RETURN_WINDOW_S || j - k > POSITION_RETURN_MAX_FIXES {
                break;
            }
            let (_, v_back) = step(prev, fix_j);
            if v_back > MAX_SPEED_MPS && step(anchor, fix_j).1 <= MAX_SPEED_MPS {
                found = Some((j, v_back));
                break;
            }
            j += 1;
        }
        match found {
            Some((j, back_mps)) => {
                let away_m = fixes
                    .get(k..j)
                    .unwrap_or_default()
                    .iter()
                    .map(|&f| step(anchor, f).0)
                    .fold(d_out, f64::max);
                out.push(PositionJump::Excursion {
                    first: fix_k.0,
                    last: fixes.get(j - 1).map_or(fix_k.0, |f| f.0),
                    away_m,
                    out_mps: v_out,
                    back_mps,
                });
                k = j + 1;
            }
            None => {
                out.push(PositionJump::Step {
                    from: anchor.0,
                    to: fix_k.0,
                    distance_m: d_out,
                    speed_mps: v_out,
                });
                k += 1;
            }
        }
    }
    out
}

/// Cheap pre-check for [`position_jumps`]: an equirectangular distance that never
/// overestimates, so a step it finds under half the speed limit is surely plausible and
/// needs no trigonometry. Everything else is measured exactly with [`haversine_m`].
#[derive(Default)]
struct Screen {
    /// Reference latitude (degrees) and the cosine used for longitude differences there.
    reference: Option<(f64, f64)>,
}

impl Screen {
    fn surely_plausible(&mut self, a: (usize, f64, f64, f64), b: (usize, f64, f64, f64)) -> bool {
        let lat = a.2;
        // Close to the poles the bound below gets loose: always measure exactly there.
        if lat.is_nan() || lat.abs() > 85.0 {
            return false;
        }
        let cos = match self.reference {
            Some((r, c)) if (lat - r).abs() <= 0.5 => c,
            _ => {
                // cos at 1° further from the equator than the reference: within ±0.5° of
                // it, the true cosine is larger, so the distance below is underestimated.
                let c = (lat.abs() + 1.0).min(90.0).to_radians().cos().max(0.0);
                self.reference = Some((lat, c));
                c
            }
        };
        let d_phi = (b.2 - a.2).to_radians();
        let d_lambda = (b.3 - a.3).to_radians() * cos;
        let d2 = (d_phi * d_phi + d_lambda * d_lambda)
            * crate::ingest::derive::EARTH_MEAN_RADIUS_M
            * crate::ingest::derive::EARTH_MEAN_RADIUS_M;
        let limit = 0.5 * MAX_SPEED_MPS * (b.1 - a.1).max(1.0);
        d2 < limit * limit
    }
}

/// Shared per-session facts for the rules.
struct Ctx<'a> {
    t: &'a [f64],
    median_dt: f64,
    gap_thr: f64,
    /// Moving and not inside a timer pause, per sample.
    moving: Vec<bool>,
}

impl Ctx<'_> {
    fn time(&self, i: usize) -> f64 {
        self.t.get(i).copied().unwrap_or(0.0)
    }
}

/// Flag the bad stretches of a session (see the module docs for every rule).
///
/// Pure; O(n) per rule plus an O(n) median selection. No rule depends on the profile
/// today (HR above the profile's maximum is kept, see the module docs); the parameter
/// stays so callers need not change when a profile-dependent rule returns.
pub fn flag(session: &Session, _profile: Option<&AthleteProfile>) -> Vec<Flag> {
    let t = session.t.as_slice();
    let n = t.len();
    let moving = moving_mask(session);
    let median_dt = median_interval(t);
    let ctx = Ctx {
        t,
        median_dt,
        gap_thr: (GAP_MEDIAN_FACTOR * median_dt).max(GAP_MIN_S),
        moving,
    };
    let mut out = Vec::new();
    if let Some(speed) = &session.speed {
        speed_rules(&ctx, speed, &mut out);
        // A treadmill belt (no positions) runs at exactly one speed by design.
        if session.lat.is_some() {
            flat_line(&ctx, speed, ChannelKind::Speed, ("m/s", 2), None, &mut out);
        }
    }
    if let (Some(lat), Some(lon)) = (&session.lat, &session.lon) {
        position_rule(&ctx, lat, lon, &mut out);
    }
    if let Some(hr) = &session.hr {
        hr_rules(&ctx, hr, &mut out);
        flat_line(&ctx, hr, ChannelKind::Hr, ("bpm", 0), None, &mut out);
        if let Some(cad) = &session.cadence {
            cadence_lock(&ctx, hr, cad, false, &mut out);
            cadence_lock(&ctx, hr, cad, true, &mut out);
        }
    }
    if let Some(cad) = &session.cadence {
        flat_line(
            &ctx,
            cad,
            ChannelKind::Cadence,
            ("spm", 0),
            session.speed.as_ref(),
            &mut out,
        );
    }
    if n >= 2 {
        gap_rule(&ctx, session, &mut out);
    }
    merge(out, ctx.median_dt)
}

/// Per sample: not inside a timer pause, and moving (speed above
/// [`MOVING_SPEED_MPS`]; without a speed channel, a cadence above zero).
fn moving_mask(session: &Session) -> Vec<bool> {
    let mut cursor = PauseCursor::new(session);
    session
        .t
        .iter()
        .enumerate()
        .map(|(i, &ti)| {
            let (_, paused) = cursor.at(ti);
            let moving = match (&session.speed, &session.cadence) {
                (Some(sp), _) => sp.get(i).is_some_and(|v| v > MOVING_SPEED_MPS),
                (None, Some(cad)) => cad.get(i).is_some_and(|v| v > 0.0),
                (None, None) => false,
            };
            !paused && moving
        })
        .collect()
}

/// Calls `emit(first, last)` for every run of consecutive present samples where `pred`
/// holds. A missing sample ends a run.
fn sample_runs(ch: &Channel, pred: impl Fn(f64) -> bool, mut emit: impl FnMut(usize, usize)) {
    let mut start: Option<usize> = None;
    for (i, v) in ch.values.iter().enumerate() {
        let hit = v.is_some_and(&pred);
        match (hit, start) {
            (true, None) => start = Some(i),
            (false, Some(s)) => {
                emit(s, i - 1);
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        emit(s, ch.values.len().saturating_sub(1));
    }
}

/// Min and max of the present samples `first..=last`.
fn min_max(ch: &Channel, first: usize, last: usize) -> (f64, f64) {
    ch.values
        .iter()
        .take(last + 1)
        .skip(first)
        .flatten()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        })
}

/// Accumulates consecutive "edges" (from, to, value) that share a sample into one run.
#[derive(Default)]
struct EdgeRuns {
    open: Option<(f64, f64, f64)>,
}

impl EdgeRuns {
    /// Adds an edge; returns the run it closed, if any.
    fn push(&mut self, from: f64, to: f64, value: f64) -> Option<(f64, f64, f64)> {
        match self.open {
            Some((f, end, worst)) if from <= end => {
                self.open = Some((f, to.max(end), worst.max(value)));
                None
            }
            prev => {
                self.open = Some((from, to, value));
                prev
            }
        }
    }
}

/// Rate of change between consecutive present samples, per second with Δt ≥ 1 s:
/// calls `edge(t_prev, t_cur, |rate|)`.
fn rates(ctx: &Ctx<'_>, ch: &Channel, mut edge: impl FnMut(f64, f64, f64)) {
    let mut prev: Option<(f64, f64)> = None;
    for (&ti, v) in ctx.t.iter().zip(&ch.values) {
        let Some(v) = *v else { continue };
        if let Some((tp, vp)) = prev {
            edge(tp, ti, (v - vp).abs() / (ti - tp).max(1.0));
        }
        prev = Some((ti, v));
    }
}

fn speed_rules(ctx: &Ctx<'_>, speed: &Channel, out: &mut Vec<Flag>) {
    // methods.md §12: peak sprint ~12.3 m/s (Graubner & Nixdorf 2011); common coaching
    // practice (no published source): flag above 12.5 m/s.
    sample_runs(
        speed,
        |v| v > MAX_SPEED_MPS,
        |a, b| {
            let (_, hi) = min_max(speed, a, b);
            out.push(Flag {
                from_s: ctx.time(a),
                to_s: ctx.time(b),
                channel: ChannelKind::Speed,
                kind: FlagKind::SpeedLimit,
                reason: format!(
                    "speed up to {hi:.1} m/s, above the {MAX_SPEED_MPS} m/s human limit"
                ),
            });
        },
    );
    // methods.md §12: di Prampero et al. 2005, peak sprint-start acceleration 6.42 m/s²;
    // common coaching practice (no published source): flag |a| above 8 m/s².
    let mut runs = EdgeRuns::default();
    let emit = |(from_s, to_s, worst): (f64, f64, f64), out: &mut Vec<Flag>| {
        out.push(Flag {
            from_s,
            to_s,
            channel: ChannelKind::Speed,
            kind: FlagKind::Acceleration,
            reason: format!("speed changes at up to {worst:.1} m/s², above {MAX_ACCEL_MPS2} m/s²"),
        });
    };
    rates(ctx, speed, |a, b, rate| {
        if rate > MAX_ACCEL_MPS2 {
            if let Some(run) = runs.push(a, b, rate) {
                emit(run, out);
            }
        }
    });
    if let Some(run) = runs.open {
        emit(run, out);
    }
}

fn position_rule(ctx: &Ctx<'_>, lat: &Channel, lon: &Channel, out: &mut Vec<Flag>) {
    for jump in position_jumps(ctx.t, lat, lon) {
        let (from_s, to_s, reason) = match jump {
            PositionJump::Excursion {
                first,
                last,
                away_m,
                out_mps,
                back_mps,
            } => {
                let fixes = last + 1 - first;
                let what = if fixes == 1 {
                    "one fix".to_string()
                } else {
                    format!("{fixes} fixes")
                };
                (
                    ctx.time(first),
                    ctx.time(last),
                    format!(
                        "position: {what} {away_m:.0} m off the track (out at {out_mps:.1} m/s, \
                         back at {back_mps:.1} m/s; limit {MAX_SPEED_MPS} m/s)"
                    ),
                )
            }
            PositionJump::Step {
                from,
                to,
                distance_m,
                speed_mps,
            } => {
                let dt = ctx.time(to) - ctx.time(from);
                (
                    ctx.time(from),
                    ctx.time(to),
                    format!(
                        "position jumps {distance_m:.0} m in {dt:.0} s ({speed_mps:.1} m/s, \
                         above {MAX_SPEED_MPS} m/s)"
                    ),
                )
            }
        };
        out.push(Flag {
            from_s,
            to_s,
            channel: ChannelKind::Position,
            kind: FlagKind::PositionJump,
            reason,
        });
    }
}

fn hr_rules(ctx: &Ctx<'_>, hr: &Channel, out: &mut Vec<Flag>) {
    // Common coaching practice (no published source), methods.md §12: 30-230 bpm.
    let out_of_range = |v: f64| !(HR_MIN_BPM..=HR_MAX_BPM).contains(&v);
    sample_runs(hr, out_of_range, |a, b| {
        let (lo, hi) = min_max(hr, a, b);
        let shown = if hi > HR_MAX_BPM { hi } else { lo };
        out.push(Flag {
            from_s: ctx.time(a),
            to_s: ctx.time(b),
            channel: ChannelKind::Hr,
            kind: FlagKind::HrRange,
            reason: format!("heart rate {shown:.0} bpm outside {HR_MIN_BPM}-{HR_MAX_BPM} bpm"),
        });
    });
    // Common coaching practice (no published source), methods.md §12: 10-15 bpm/s.
    let mut runs = EdgeRuns::default();
    let emit = |(from_s, to_s, worst): (f64, f64, f64), out: &mut Vec<Flag>| {
        out.push(Flag {
            from_s,
            to_s,
            channel: ChannelKind::Hr,
            kind: FlagKind::HrRate,
            reason: if worst.is_finite() && worst < 1000.0 {
                format!(
                    "heart rate changes by up to {worst:.0} bpm/s, faster than {HR_MAX_RATE_BPM_PER_S} bpm/s"
                )
            } else {
                format!(
                    "heart rate changes by more than 1000 bpm/s, faster than {HR_MAX_RATE_BPM_PER_S} bpm/s"
                )
            },
        });
    };
    rates(ctx, hr, |a, b, rate| {
        if rate > HR_MAX_RATE_BPM_PER_S {
            if let Some(run) = runs.push(a, b, rate) {
                emit(run, out);
            }
        }
    });
    if let Some(run) = runs.open {
        emit(run, out);
    }
}

/// Cadence lock onto the cadence (`half == false`) or half the cadence (`half == true`).
fn cadence_lock(ctx: &Ctx<'_>, hr: &Channel, cad: &Channel, half: bool, out: &mut Vec<Flag>) {
    let t = ctx.t;
    let n = t.len();
    let target = |i: usize| -> Option<f64> {
        let c = cad.get(i)?;
        let v = if half { c / 2.0 } else { c };
        // A target below the plausible HR floor cannot be locked onto meaningfully.
        (v >= HR_MIN_BPM).then_some(v)
    };
    // Common coaching practice (no published source), methods.md §12: within ±3 bpm.
    let on = |i: usize| match (hr.get(i), target(i)) {
        (Some(h), Some(c)) => (h - c).abs() <= CADENCE_LOCK_TOLERANCE_BPM,
        _ => false,
    };
    let continue_s = CADENCE_LOCK_GRACE_S.max(ctx.gap_thr);
    let mut i = 0;
    while i < n {
        if !on(i) {
            i += 1;
            continue;
        }
        let (s, mut e, mut j) = (i, i, i + 1);
        while j < n {
            let since = at(t, j) - at(t, e);
            if on(j) && since <= continue_s {
                e = j;
            } else if on(j) || since > CADENCE_LOCK_GRACE_S {
                break;
            }
            j += 1;
        }
        i = j.max(e + 1);
        // Common coaching practice (no published source), methods.md §12: 30 s or more.
        if at(t, e) - at(t, s) < CADENCE_LOCK_MIN_S {
            continue;
        }
        let (Some(hr_s), Some(hr_e)) = (hr.get(s), hr.get(e)) else {
            continue;
        };
        // Entry jump: largest change within the window before the first sample on cadence.
        let mut entry: Option<(usize, f64)> = None;
        for q in (0..s).rev() {
            if at(t, s) - at(t, q) > CADENCE_LOCK_JUMP_WINDOW_S {
                break;
            }
            if let Some(h) = hr.get(q) {
                let jump = (hr_s - h).abs();
                if entry.is_none_or(|(_, best)| jump > best) {
                    entry = Some((q, jump));
                }
            }
        }
        // Exit jump: largest change within the window after the last sample on cadence.
        let mut exit = 0.0f64;
        for q in (e + 1)..n {
            if at(t, q) - at(t, e) > CADENCE_LOCK_JUMP_WINDOW_S {
                break;
            }
            if let Some(h) = hr.get(q) {
                exit = exit.max((h - hr_e).abs());
            }
        }
        let entry = entry.filter(|&(_, jump)| jump >= CADENCE_LOCK_JUMP_BPM);
        if entry.is_none() && exit < CADENCE_LOCK_JUMP_BPM {
            continue;
        }
        let from = entry.map_or(s, |(q, _)| q);
        let (lo, hi) = min_max(hr, s, e);
        let onto = if half {
            "half the cadence"
        } else {
            "the cadence"
        };
        let how = match entry {
            Some((_, jump)) => format!("after a {jump:.0} bpm jump"),
            None => format!("and leaves it with a {exit:.0} bpm jump"),
        };
        out.push(Flag {
            from_s: at(t, from),
            to_s: at(t, e),
            channel: ChannelKind::Hr,
            kind: FlagKind::CadenceLock,
            reason: format!(
                "heart rate {lo:.0}-{hi:.0} bpm follows {onto} within ±{CADENCE_LOCK_TOLERANCE_BPM} bpm \
                 for {:.0} s {how}: likely the sensor counting steps",
                at(t, e) - at(t, s)
            ),
        });
    }
}

/// True when the mean speed of 15-s windows inside `t[i]..=t[e]` spans at least
/// [`PACE_CHANGE_MPS`].
fn pace_changed(t: &[f64], speed: &Channel, i: usize, e: usize) -> bool {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    let (mut sum, mut n, mut w0) = (0.0, 0usize, t.get(i).copied().unwrap_or(0.0));
    for (k, &tk) in t.iter().enumerate().take(e + 1).skip(i) {
        if let Some(v) = speed.get(k) {
            sum += v;
            n += 1;
        }
        if tk - w0 >= 15.0 || k == e {
            if n > 0 {
                let m = sum / n as f64;
                lo = lo.min(m);
                hi = hi.max(m);
            }
            (sum, n, w0) = (0.0, 0, tk);
        }
    }
    hi - lo >= PACE_CHANGE_MPS
}

/// A sensor reporting exactly the same value for [`FLAT_LINE_MIN_S`] or more while moving.
/// With `steady_check`, a stretch at a steady pace must last [`CADENCE_FLAT_STEADY_MIN_S`].
fn flat_line(
    ctx: &Ctx<'_>,
    ch: &Channel,
    kind: ChannelKind,
    (unit, decimals): (&str, usize),
    steady_check: Option<&Channel>,
    out: &mut Vec<Flag>,
) {
    let t = ctx.t;
    let n = t.len().min(ch.values.len());
    let moving = |i: usize| ctx.moving.get(i).copied().unwrap_or(false);
    let mut i = 0;
    while i < n {
        let Some(v) = ch.get(i).filter(|_| moving(i)) else {
            i += 1;
            continue;
        };
        let (mut e, mut j) = (i, i + 1);
        while j < n && moving(j) && ch.get(j) == Some(v) && at(t, j) - at(t, e) <= ctx.gap_thr {
            e = j;
            j += 1;
        }
        let dur = at(t, e) - at(t, i);
        // Common coaching practice (no published source): 60 s of the same value.
        let long_enough = match steady_check {
            None => dur >= FLAT_LINE_MIN_S,
            Some(speed) => {
                dur >= CADENCE_FLAT_STEADY_MIN_S
                    || (dur >= FLAT_LINE_MIN_S && pace_changed(t, speed, i, e))
            }
        };
        if long_enough {
            out.push(Flag {
                from_s: at(t, i),
                to_s: at(t, e),
                channel: kind,
                kind: FlagKind::FlatLine,
                reason: format!(
                    "{kind} stuck at {v:.decimals$} {unit} for {dur:.0} s while moving"
                ),
            });
        }
        i = e + 1;
    }
}

/// Seconds of `[a, b]` covered by timer pauses.
fn paused_within(session: &Session, a: f64, b: f64) -> f64 {
    session
        .pauses
        .iter()
        .map(|p| (p.to_s.min(b) - p.from_s.max(a)).max(0.0))
        .sum()
}

fn gap_rule(ctx: &Ctx<'_>, session: &Session, out: &mut Vec<Flag>) {
    // The gap flag goes on the first channel the session has, in the order analysis leans
    // on them; a gap masks every channel anyway (see `sample_mask`).
    let channel = [
        ChannelKind::Speed,
        ChannelKind::Hr,
        ChannelKind::Cadence,
        ChannelKind::Position,
        ChannelKind::Altitude,
    ]
    .into_iter()
    .find(|&k| session.channel(k).is_some())
    .unwrap_or(ChannelKind::Speed);
    for (&a, &b) in ctx.t.iter().zip(ctx.t.iter().skip(1)) {
        let dt = b - a;
        // Common coaching practice (no published source): max(10 s, 3 × median interval).
        if dt <= ctx.gap_thr {
            continue;
        }
        let paused = paused_within(session, a, b);
        if dt - paused <= ctx.gap_thr {
            continue; // the timer was stopped: not a recording fault
        }
        let pause_note = if paused > 0.0 {
            format!(", {paused:.0} s of it a timer pause")
        } else {
            String::new()
        };
        out.push(Flag {
            from_s: a,
            to_s: b,
            channel,
            kind: FlagKind::Gap,
            reason: format!(
                "no samples for {dt:.0} s{pause_note} (usual spacing {:.0} s, gap limit {:.0} s)",
                ctx.median_dt, ctx.gap_thr
            ),
        });
    }
}

/// Merge flags of the same kind and channel that overlap or touch (at most one median
/// sampling interval apart), then sort by `from_s`.
fn merge(mut flags: Vec<Flag>, median_dt: f64) -> Vec<Flag> {
    const MAX_REASONS: usize = 3;
    flags.sort_by(|a, b| {
        (a.channel, a.kind as u8)
            .cmp(&(b.channel, b.kind as u8))
            .then(a.from_s.total_cmp(&b.from_s))
    });
    let mut out: Vec<Flag> = Vec::with_capacity(flags.len());
    let mut extra = 0usize; // reasons dropped from the current merged flag
    let mut shown = 1usize; // reasons shown in the current merged flag
    for f in flags {
        match out.last_mut() {
            Some(cur)
                if cur.channel == f.channel
                    && cur.kind == f.kind
                    && f.from_s <= cur.to_s + median_dt + 1e-9 =>
            {
                cur.to_s = cur.to_s.max(f.to_s);
                if shown < MAX_REASONS {
                    cur.reason.push_str("; ");
                    cur.reason.push_str(&f.reason);
                    shown += 1;
                } else {
                    extra += 1;
                }
            }
            _ => {
                close_reason(out.last_mut(), extra);
                extra = 0;
                shown = 1;
                out.push(f);
            }
        }
    }
    close_reason(out.last_mut(), extra);
    out.sort_by(|a, b| {
        a.from_s
            .total_cmp(&b.from_s)
            .then((a.channel, a.kind as u8).cmp(&(b.channel, b.kind as u8)))
    });
    out
}

fn close_reason(flag: Option<&mut Flag>, extra: usize) {
    if let (Some(f), true) = (flag, extra > 0) {
        f.reason.push_str(&format!("; and {extra} more"));
    }
}

/// Fraction (0..=1) of the session's duration covered by the union of all flag ranges.
///
/// Each range is widened by half the median sampling interval on each side, so a flag on
/// a single sample counts as that sample's share of time rather than zero.
pub fn flagged_fraction(session: &Session, flags: &[Flag]) -> f64 {
    let duration = session.duration_s();
    if duration.is_nan() || duration <= 0.0 || flags.is_empty() {
        return 0.0;
    }
    let half = median_interval(&session.t) / 2.0;
    let mut ranges: Vec<(f64, f64)> = flags
        .iter()
        .map(|f| {
            (
                (f.from_s - half).clamp(0.0, duration),
                (f.to_s + half).clamp(0.0, duration),
            )
        })
        .filter(|(a, b)| b > a)
        .collect();
    ranges.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut covered = 0.0;
    let mut cur: Option<(f64, f64)> = None;
    for (a, b) in ranges {
        match cur {
            Some((ca, cb)) if a <= cb => cur = Some((ca, cb.max(b))),
            _ => {
                if let Some((ca, cb)) = cur {
                    covered += cb - ca;
                }
                cur = Some((a, b));
            }
        }
    }
    if let Some((ca, cb)) = cur {
        covered += cb - ca;
    }
    (covered / duration).clamp(0.0, 1.0)
}

/// Whether a flag masks samples of `channel` (see the module docs for the table).
fn masks(session: &Session, flag: &Flag, channel: ChannelKind) -> bool {
    if flag.kind == FlagKind::Gap || flag.channel == channel {
        return true;
    }
    let derived_from_positions = session.derived.contains(&ChannelKind::Speed)
        && session.derived.contains(&ChannelKind::Distance);
    matches!(
        (flag.channel, channel),
        (
            ChannelKind::Position,
            ChannelKind::Speed | ChannelKind::Distance
        ) | (ChannelKind::Speed, ChannelKind::Distance)
    ) || (flag.channel == ChannelKind::Speed
        && channel == ChannelKind::Position
        && derived_from_positions)
}

/// Per sample of the session: true where sample `i` of `channel` lies in a flag that
/// masks that channel (see the module docs: gaps mask everything, position flags also
/// mask speed and distance, speed flags also mask distance).
///
/// O(n + F log n) for F flags.
pub fn sample_mask(session: &Session, flags: &[Flag], channel: ChannelKind) -> Vec<bool> {
    let t = &session.t;
    let mut mask = vec![false; t.len()];
    for f in flags.iter().filter(|f| masks(session, f, channel)) {
        let lo = t.partition_point(|&x| x < f.from_s);
        let hi = t.partition_point(|&x| x <= f.to_s);
        for m in mask.iter_mut().take(hi).skip(lo) {
            *m = true;
        }
    }
    mask
}
