//! Motion: whether the athlete was running, walking, standing or stopped, sample by sample.
//!
//! One classification shared by moving time, distance, the interval finder and the
//! decoupling window, so the four never disagree about when the athlete moved.
//!
//! # Method
//!
//! Sample `i > 0` stands for the stretch from `t[i-1]` to `t[i]`.
//!
//! 1. **Stopped**: the stretch lies in a timer pause, or it is a recording gap longer than
//!    the session's normal rhythm ([`gap_threshold_s`]: the timer was stopped without a
//!    pause marker, as GPX and many TCX files record an auto-pause).
//! 2. **Speed of motion.** With positions, the speed is the displacement between the mean
//!    position of the [`DISPLACEMENT_HALF_S`] seconds before the sample and the mean
//!    position of the same span after it, over the time between the two means. Averaging
//!    fixes cancels most of the wander of a standing GPS (which adds path length, and so a
//!    false speed, to a distance summed fix by fix), while a runner's displacement is
//!    untouched; at a turn-around only the few seconds around the turn read slow. Without
//!    positions (a treadmill, a watch without GPS) the recorded speed, averaged over
//!    [`SPEED_HALF_S`] each side, is used.
//! 3. **Standing** below [`STAND_BELOW_MPS`] (or where a device's own speed reads under
//!    [`DEVICE_STAND_BELOW_MPS`]); **walking** below [`WALK_BELOW_MPS`], or below
//!    [`WALK_CADENCE_SPEED_MPS`] with a cadence under [`WALK_CADENCE_SPM`] or a speed under
//!    [`WALK_RELATIVE`] of the session's median running speed;
//!    otherwise **running**. Standing or walking stretches shorter than [`MIN_DWELL_S`]
//!    join their neighbours (a turn-around or a pole dodged is not a stop).
//!
//! Moving time counts running and walking (the athlete moved) and leaves out standing
//! and stopped stretches. Distance counts every increment of the cumulative distance
//! except those made while standing (GPS wander), and keeps the distance across a gap
//! (the athlete was somewhere else when the recording resumed).

use crate::ingest::clean::gap_threshold_s;
use crate::ingest::derive::EARTH_MEAN_RADIUS_M;
use crate::model::{ChannelKind, RecoveryMode, Session};

/// Half-span of the position means whose displacement gives the speed of motion, seconds.
/// Our design choice: long enough to average a standing GPS's wander (a few metres,
/// correlated over seconds) below half a metre per second, short enough to place a stop
/// within about ten seconds.
pub const DISPLACEMENT_HALF_S: f64 = 20.0;

/// Half-span of the mean of a recorded speed when there are no positions, seconds. Our
/// design choice: a device's own speed is already smoothed; a short window keeps the edges
/// of a stop sharp.
pub const SPEED_HALF_S: f64 = 2.5;

/// Speed of motion below which the athlete stands, m/s. Our design choice: GPS wander
/// averaged over [`DISPLACEMENT_HALF_S`] reads up to about 0.6 m/s (a receiver drifting
/// several metres over tens of seconds); the slowest walk is about 1 m/s.
pub const STAND_BELOW_MPS: f64 = 0.8;

/// A device's own speed (averaged over [`SPEED_HALF_S`] each side) below this reads as
/// standing, m/s. Our design choice: a device's speed does not wander like positions do.
pub const DEVICE_STAND_BELOW_MPS: f64 = 0.5;

/// Speed below which the athlete walks, m/s. Common coaching practice (no published
/// source): brisk walking stays under 2 m/s, the slowest jog is above about 2 m/s.
pub const WALK_BELOW_MPS: f64 = 1.8;

/// With a step rate under [`WALK_CADENCE_SPM`], speeds up to this count as walking, m/s.
pub const WALK_CADENCE_SPEED_MPS: f64 = 2.3;

/// Below this fraction of the athlete's median running speed in the session, both
/// hill-adjusted (and under [`WALK_CADENCE_SPEED_MPS`] on the watch), the athlete walks. Our design choice: a runner's slowest
/// jog is rarely below two thirds of their usual running speed; a walk is about half.
pub const WALK_RELATIVE: f64 = 0.65;

/// Step rate under which the athlete walks, steps/min. Common coaching practice (no
/// published source): walking cadence is about 100-130 steps/min, running above 150.
pub const WALK_CADENCE_SPM: f64 = 140.0;

/// Standing or walking stretches shorter than this join their neighbours, seconds.
/// Our design choice.
pub const MIN_DWELL_S: f64 = 10.0;

/// What the athlete was doing during one sample's stretch.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MotionState {
    Run,
    Walk,
    Stand,
    /// A timer pause or a recording gap.
    Stopped,
}

impl MotionState {
    /// Running or walking.
    pub fn is_moving(self) -> bool {
        matches!(self, MotionState::Run | MotionState::Walk)
    }

    /// The recovery mode this state reads as (stopped reads as standing).
    pub fn mode(self) -> RecoveryMode {
        match self {
            MotionState::Run => RecoveryMode::Jog,
            MotionState::Walk => RecoveryMode::Walk,
            MotionState::Stand | MotionState::Stopped => RecoveryMode::Stand,
        }
    }
}

/// The motion of a session, one entry per sample.
#[derive(Debug, Clone, PartialEq)]
pub struct Motion {
    pub state: Vec<MotionState>,
    /// The speed of motion (see the module docs), m/s; `None` where unknown.
    pub speed: Vec<Option<f64>>,
    /// Seconds of the stretch each sample stands for (0 for the first sample and for
    /// non-positive spacings); stopped stretches keep their length here.
    pub dt: Vec<f64>,
}

impl Motion {
    pub fn len(&self) -> usize {
        self.state.len()
    }

    pub fn is_empty(&self) -> bool {
        self.state.is_empty()
    }

    /// The state of sample `i` (stopped past the end).
    pub fn at(&self, i: usize) -> MotionState {
        self.state.get(i).copied().unwrap_or(MotionState::Stopped)
    }

    /// Whether the athlete moved (ran or walked) during sample `i`'s stretch.
    pub fn moving(&self, i: usize) -> bool {
        self.at(i).is_moving()
    }

    /// Whether the athlete ran during sample `i`'s stretch.
    pub fn running(&self, i: usize) -> bool {
        self.at(i) == MotionState::Run
    }

    /// Moving time over samples `a+1..=b`, seconds.
    pub fn moving_s(&self, a: usize, b: usize) -> f64 {
        (a + 1..=b.min(self.len().saturating_sub(1)))
            .filter(|&i| self.moving(i))
            .map(|i| self.dt.get(i).copied().unwrap_or(0.0))
            .sum()
    }

    /// Moving time of the whole session, seconds.
    pub fn moving_total_s(&self) -> f64 {
        self.moving_s(0, self.len().saturating_sub(1))
    }

    /// Running time over samples `a+1..=b`, seconds.
    pub fn running_s(&self, a: usize, b: usize) -> f64 {
        (a + 1..=b.min(self.len().saturating_sub(1)))
            .filter(|&i| self.running(i))
            .map(|i| self.dt.get(i).copied().unwrap_or(0.0))
            .sum()
    }
}

/// Classify every sample of a session (see the module docs). O(n).
pub fn classify(session: &Session) -> Motion {
    classify_with(
        session,
        crate::analysis::gradient::gradients(session).as_deref(),
    )
}

/// [`classify`] with the session's gradients already computed
/// ([`crate::analysis::gradient::gradients`]; `None` without altitude): the walking test
/// relative to the athlete's running compares hill-adjusted speeds, so a climb run at an
/// even effort is not a walk and a walk down a hill is.
pub fn classify_with(session: &Session, grads: Option<&[Option<f64>]>) -> Motion {
    let n = session.len();
    let t = &session.t;
    let gap = gap_threshold_s(t);
    let mut dt = vec![0.0; n];
    let mut stopped = vec![false; n];
    for ((d_out, s_out), (&a, &b)) in dt
        .iter_mut()
        .zip(stopped.iter_mut())
        .skip(1)
        .zip(t.iter().zip(t.iter().skip(1)))
    {
        let d = b - a;
        if !d.is_finite() || d <= 0.0 {
            continue;
        }
        *d_out = d;
        if d > gap || session.is_paused_at(0.5 * (a + b)) {
            *s_out = true;
        }
    }
    // The first sample belongs with the second.
    if let Some(&second) = stopped.get(1) {
        if let Some(first) = stopped.first_mut() {
            *first = second;
        }
    }
    let speed = motion_speed(session, &stopped, true);
    // A device's own speed (not derived from positions) places the edges of a stop to
    // the second: where it reads standing, the athlete stood.
    // (Without positions the speed of motion already is that speed.)
    let device = session
        .speed
        .as_ref()
        .filter(|_| !session.derived.contains(&ChannelKind::Speed))
        .filter(|_| session.lat.is_some() && session.lon.is_some())
        .map(|_| motion_speed(session, &stopped, false));
    let cadence = session.cadence.as_ref();
    let mut state: Vec<MotionState> = (0..n)
        .map(|i| {
            if stopped.get(i).copied().unwrap_or(true) {
                return MotionState::Stopped;
            }
            let Some(v) = speed.get(i).copied().flatten() else {
                return MotionState::Run;
            };
            let cad = cadence.and_then(|c| c.get(i)).filter(|c| *c > 0.0);
            let device_stands = device
                .as_ref()
                .and_then(|d| d.get(i).copied().flatten())
                .is_some_and(|d| d < DEVICE_STAND_BELOW_MPS);
            if v < STAND_BELOW_MPS || device_stands {
                MotionState::Stand
            } else if v < WALK_BELOW_MPS
                || (v < WALK_CADENCE_SPEED_MPS && cad.is_some_and(|c| c < WALK_CADENCE_SPM))
            {
                MotionState::Walk
            } else {
                MotionState::Run
            }
        })
        .collect();
    // Walking relative to this athlete's running: a stretch well under their median
    // running speed, at a speed some run at, is a walk (a brisk walk home is faster than
    // a slow runner's walk).
    let adjusted = |i: usize| -> Option<f64> {
        let v = speed.get(i).copied().flatten()?;
        Some(match grads.and_then(|g| g.get(i).copied().flatten()) {
            Some(g) => crate::analysis::gradient::flat_equivalent_speed(v, g),
            None => v,
        })
    };
    let mut run_speeds: Vec<f64> = state
        .iter()
        .enumerate()
        .filter(|(_, s)| **s == MotionState::Run)
        .filter_map(|(i, _)| adjusted(i))
        .collect();
    // The upper median, as a full sort would give it (total order: the same element).
    let mid = run_speeds.len() / 2;
    if mid < run_speeds.len() {
        run_speeds.select_nth_unstable_by(mid, f64::total_cmp);
    }
    if let Some(&median) = run_speeds.get(mid) {
        for (i, st) in state.iter_mut().enumerate() {
            if *st == MotionState::Run
                && speed
                    .get(i)
                    .copied()
                    .flatten()
                    .is_some_and(|v| v < WALK_CADENCE_SPEED_MPS)
                && adjusted(i).is_some_and(|v| v < WALK_RELATIVE * median)
            {
                *st = MotionState::Walk;
            }
        }
    }
    absorb_short(&mut state, &dt);
    Motion { state, speed, dt }
}

/// Positions as local metres (east, north) around the first fix; `None` where missing.
fn local_positions(session: &Session) -> Option<Vec<Option<(f64, f64)>>> {
    let (lat, lon) = (session.lat.as_ref()?, session.lon.as_ref()?);
    let n = session.len();
    let first = (0..n).find_map(|i| Some((lat.get(i)?, lon.get(i)?)))?;
    let k = EARTH_MEAN_RADIUS_M * std::f64::consts::PI / 180.0;
    let coslat = first.0.to_radians().cos();
    Some(
        (0..n)
            .map(|i| {
                let (a, b) = (lat.get(i)?, lon.get(i)?);
                if !a.is_finite() || !b.is_finite() {
                    return None;
                }
                Some(((b - first.1) * k * coslat, (a - first.0) * k))
            })
            .collect(),
    )
}

/// The speed of motion per sample: displacement of windowed mean positions, else the
/// windowed mean of the recorded speed. Windows never reach across a stopped stretch.
fn motion_speed(session: &Session, stopped: &[bool], positions: bool) -> Vec<Option<f64>> {
    let n = session.len();
    let t = &session.t;
    // Block id: samples between stops share one; a window stays inside its block.
    let block: Vec<usize> = (0..n)
        .scan(0usize, |id, i| {
            if i > 0 && stopped.get(i).copied().unwrap_or(false) {
                *id += 1;
            }
            Some(*id)
        })
        .collect();
    // Every index below is under `n`; the defaults never apply.
    let tk = |k: usize| t.get(k).copied().unwrap_or(f64::NAN);
    let bk = |k: usize| block.get(k).copied().unwrap_or(usize::MAX);
    let pos = if positions {
        local_positions(session)
    } else {
        None
    };
    let usable_positions = pos
        .as_ref()
        .is_some_and(|p| p.iter().filter(|x| x.is_some()).count() * 2 >= n.max(1));
    // Prefix sums over present values: (sum_x, sum_y, sum_t, count).
    let mut out = vec![None; n];
    if usable_positions {
        let Some(p) = pos else { return out };
        let mut ps: Vec<(f64, f64, f64, usize)> = Vec::with_capacity(n + 1);
        ps.push((0.0, 0.0, 0.0, 0));
        for (i, &ti) in t.iter().enumerate() {
            let prev = ps.last().copied().unwrap_or_default();
            ps.push(match p.get(i).copied().flatten() {
                Some((x, y)) => (prev.0 + x, prev.1 + y, prev.2 + ti, prev.3 + 1),
                None => prev,
            });
        }
        let mean = |lo: usize, hi: usize| -> Option<(f64, f64, f64)> {
            // samples lo..hi (exclusive)
            let (a, b) = (ps.get(lo)?, ps.get(hi)?);
            let c = b.3.checked_sub(a.3)?;
            (c > 0).then(|| {
                let c = c as f64;
                ((b.0 - a.0) / c, (b.1 - a.1) / c, (b.2 - a.2) / c)
            })
        };
        let (mut lo, mut hi) = (0usize, 0usize);
        for (i, o) in out.iter_mut().enumerate() {
            let (ti, bi) = (tk(i), bk(i));
            while lo < i && (tk(lo) < ti - DISPLACEMENT_HALF_S || bk(lo) != bi) {
                lo += 1;
            }
            if hi < i + 1 {
                hi = i + 1;
            }
            while hi < n && tk(hi) <= ti + DISPLACEMENT_HALF_S && bk(hi) == bi {
                hi += 1;
            }
            // Before: lo..=i, after: i..hi.
            if let (Some(b), Some(a)) = (mean(lo, i + 1), mean(i, hi)) {
                let span = a.2 - b.2;
                if span >= 0.5 * DISPLACEMENT_HALF_S {
                    *o = Some(((a.0 - b.0).powi(2) + (a.1 - b.1).powi(2)).sqrt() / span);
                }
            }
        }
        // Where the window was too short (block edges, sparse fixes), fall back to speed.
        if let Some(sp) = &session.speed {
            for (i, o) in out.iter_mut().enumerate() {
                if o.is_none() {
                    *o = sp.get(i);
                }
            }
        }
        return out;
    }
    let Some(sp) = &session.speed else {
        return out;
    };
    let (mut lo, mut hi) = (0usize, 0usize);
    let (mut sum, mut cnt) = (0.0f64, 0usize);
    // The running sum holds every present sample of the window `lo..hi`, whatever its
    // block: a sum kept only over the current sample's block would keep samples from before
    // a stop (added then, never taken out) and miss those added while another block was
    // current, and read a steady run after a pause as a walk.
    for (i, o) in out.iter_mut().enumerate() {
        let (ti, bi) = (tk(i), bk(i));
        while hi < n && tk(hi) <= ti + SPEED_HALF_S {
            if let Some(v) = sp.get(hi).filter(|v| v.is_finite()) {
                sum += v;
                cnt += 1;
            }
            hi += 1;
        }
        while lo < hi && (tk(lo) < ti - SPEED_HALF_S) {
            if let Some(v) = sp.get(lo).filter(|v| v.is_finite()) {
                sum -= v;
                cnt = cnt.saturating_sub(1);
            }
            lo += 1;
        }
        // Block changes inside the window: recount (rare: only around stops).
        let (s, c) = if (lo..hi).all(|k| bk(k) == bi) {
            (sum, cnt)
        } else {
            (lo..hi)
                .filter(|&k| bk(k) == bi)
                .filter_map(|k| sp.get(k).filter(|v| v.is_finite()))
                .fold((0.0, 0usize), |(s, c), v| (s + v, c + 1))
        };
        *o = (c > 0).then(|| (s / c as f64).max(0.0));
    }
    out
}

/// Standing and walking stretches shorter than [`MIN_DWELL_S`] take the state of the
/// neighbour they sit in (running when the neighbours differ), shortest first.
fn absorb_short(state: &mut [MotionState], dt: &[f64]) {
    // Runs of equal state.
    let mut runs: Vec<(usize, usize, MotionState)> = Vec::new();
    for (i, &s) in state.iter().enumerate() {
        match runs.last_mut() {
            Some(r) if r.2 == s => r.1 = i,
            _ => runs.push((i, i, s)),
        }
    }
    let dur = |r: &(usize, usize, MotionState)| -> f64 {
        (r.0..=r.1).map(|i| dt.get(i).copied().unwrap_or(0.0)).sum()
    };
    for k in 0..runs.len() {
        let Some(&r) = runs.get(k) else { continue };
        if !matches!(r.2, MotionState::Stand | MotionState::Walk) || dur(&r) >= MIN_DWELL_S {
            continue;
        }
        let prev = k.checked_sub(1).and_then(|p| runs.get(p)).map(|x| x.2);
        let next = runs.get(k + 1).map(|x| x.2);
        let to = match (prev, next) {
            (Some(a), Some(b)) if a == b && a != MotionState::Stopped => a,
            (Some(MotionState::Stopped) | None, Some(b)) if b != MotionState::Stopped => b,
            (Some(a), Some(MotionState::Stopped) | None) if a != MotionState::Stopped => a,
            (Some(_), Some(_)) => MotionState::Run,
            _ => continue,
        };
        for s in state.iter_mut().take(r.1 + 1).skip(r.0) {
            *s = to;
        }
    }
}

/// Distance the athlete covered, metres: the increments of the cumulative distance
/// except those made while standing (GPS wander); `None` without distance.
pub fn moving_distance_m(session: &Session, motion: &Motion) -> Option<f64> {
    let d = session.distance.as_ref()?;
    let mut total = 0.0;
    let mut last: Option<f64> = None;
    let mut any = false;
    for i in 0..session.len() {
        let Some(v) = d.get(i).filter(|v| v.is_finite()) else {
            continue;
        };
        if let Some(p) = last {
            if motion.at(i) != MotionState::Stand && v > p {
                total += v - p;
            }
        }
        any = true;
        last = Some(v);
    }
    any.then_some(total)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Channel, FileFormat, Pause};
    use chrono::{TimeZone, Utc};

    fn session(speeds: &[f64]) -> Session {
        let start = Utc.with_ymd_and_hms(2026, 1, 1, 8, 0, 0).unwrap();
        let mut s = Session::empty(FileFormat::Fit, start);
        s.t = (0..speeds.len()).map(|i| i as f64).collect();
        s.time =
            s.t.iter()
                .map(|&x| start + chrono::Duration::seconds(x as i64))
                .collect();
        s.speed = Some(Channel::from_values(speeds.iter().copied()));
        let mut acc = 0.0;
        s.distance = Some(Channel::from_values(speeds.iter().map(|v| {
            acc += v;
            acc
        })));
        s
    }

    #[test]
    fn running_standing_walking_from_speed() {
        let mut v = vec![3.0; 120];
        v.extend(vec![0.0; 60]);
        v.extend(vec![1.4; 60]);
        v.extend(vec![3.0; 60]);
        let m = classify(&session(&v));
        assert_eq!(m.at(60), MotionState::Run);
        assert_eq!(m.at(150), MotionState::Stand);
        assert_eq!(m.at(210), MotionState::Walk);
        assert_eq!(m.at(280), MotionState::Run);
        // 60 s standing, give or take the averaging window at the edges.
        let moving = m.moving_total_s();
        assert!((moving - 239.0).abs() <= 10.0, "{moving}");
    }

    #[test]
    fn a_brief_slow_down_is_not_a_stop() {
        let mut v = vec![3.0; 100];
        v.extend(vec![0.0; 3]);
        v.extend(vec![3.0; 100]);
        let m = classify(&session(&v));
        assert!((0..m.len()).all(|i| m.at(i) == MotionState::Run));
    }

    #[test]
    fn gaps_and_pauses_are_stopped() {
        let mut s = session(&[3.0; 200]);
        // A 90-s gap without a pause marker after sample 100.
        for x in s.t.iter_mut().skip(101) {
            *x += 90.0;
        }
        s.pauses = vec![Pause {
            from_s: 250.0,
            to_s: 260.0,
        }];
        let m = classify(&s);
        assert_eq!(m.at(101), MotionState::Stopped);
        assert_eq!(m.at(100), MotionState::Run);
        assert!((m.moving_total_s() - 199.0).abs() < 12.0);
        assert!(m.moving_total_s() < 200.0);
    }
}
