//! Derived channels: distance from positions when the file has none, speed from distance.
//!
//! Recorded channels are never overwritten. Every channel built here is listed in
//! `Session::derived` so the analysis (and the coach) can tell it from a recorded one.
//!
//! # Derived distance (from positions)
//!
//! Built only when the session has latitude and longitude but no distance channel.
//! The cumulative sum of great-circle steps ([`haversine_m`]) between consecutive
//! trusted fixes, starting at 0 m on the first trusted fix. Decisions:
//!
//! - **Missing position → `None`.** Where a sample has no fix the distance is unknown
//!   at that instant, so it is `None` (never a copied number); the next fix adds its full
//!   straight-line step from the last fix, so nothing is lost from the total.
//! - **Outlier fixes → `None`.** A fix that jumps away and comes back (the
//!   [`crate::ingest::clean`] position-jump rule) is skipped: it adds nothing and its
//!   distance is `None`, so a single bad fix cannot add twice its error to the total.
//! - **Implausible steps add nothing.** A step between two fixes that implies more than
//!   the human speed limit and does not come back (for example a bad first fix) adds 0 m;
//!   a runner covers at most a few metres in that time.
//! - **Timer pauses add nothing.** A step whose two fixes straddle a timer pause, or that
//!   starts or ends on a fix logged inside one, is not counted: a device does not count
//!   distance while its timer is stopped.
//!
//! # Derived speed (from distance)
//!
//! Built only when speed is absent and distance (recorded or derived) exists.
//! Speed at sample `i` is the distance difference over the window of samples within
//! ±2.5 s of `t[i]` (a 5 s window), widened to the nearest neighbour on each side when
//! sampling is sparser than that (smart recording every 1-7 s). The difference quotient
//! over a window is the mean speed over it, which smooths GPS position noise lightly.
//! A window never spans a timer pause or a recording gap; samples inside a timer pause
//! get `None` (speed is not invented while the timer is stopped), as do samples whose
//! distance is `None`.

use crate::ingest::clean;
use crate::model::{Channel, ChannelKind, Session};

/// Mean Earth radius used by [`haversine_m`], metres.
///
/// methods.md §11: the IUGG mean radius R1 = (2a+b)/3 of GRS80 is 6 371 008.7714 m
/// (Moritz 2000, J Geodesy 74:128-133). The `geo` crate documents the rounded value
/// 6371.0088 km, and its printed Sofia-Plovdiv distance 132433.09929460194 m is
/// reproduced exactly only with 6 371 008.8 m, so we use the rounded value to agree with
/// that reference to the last digit. The 0.03 m difference is 4.5e-9 relative.
pub const EARTH_MEAN_RADIUS_M: f64 = 6_371_008.8;

/// Half-width of the speed-derivation window, seconds (a ~5 s window in total).
// Common coaching practice (no published source): light smoothing of GPS distance.
pub const SPEED_HALF_WINDOW_S: f64 = 2.5;

/// Great-circle distance between two points given in degrees, metres (haversine formula,
/// methods.md §11).
///
/// `a = sin²(Δφ/2) + cos φ1·cos φ2·sin²(Δλ/2)`, `d = 2R·asin(√a)` with
/// [`EARTH_MEAN_RADIUS_M`]. On the WGS84 ellipsoid the error against the true geodesic
/// (Karney 2013) is within -0.45 %..+0.56 % for pairs 50 m to 20 km apart.
pub fn haversine_m(lat1: f64, lon1: f64, lat2: f64, lon2: f64) -> f64 {
    let phi1 = lat1.to_radians();
    let phi2 = lat2.to_radians();
    let d_phi = (lat2 - lat1).to_radians();
    let d_lambda = (lon2 - lon1).to_radians();
    let a = (d_phi / 2.0).sin().powi(2) + phi1.cos() * phi2.cos() * (d_lambda / 2.0).sin().powi(2);
    // `min(1.0)` guards against rounding just above 1 for antipodal points.
    2.0 * EARTH_MEAN_RADIUS_M * a.sqrt().min(1.0).asin()
}

/// Fill in distance and speed where the file lacks them (see the module docs for the rules).
///
/// Never overwrites a recorded channel. Adds `ChannelKind::Distance` and/or
/// `ChannelKind::Speed` to `session.derived` for each channel it builds.
pub fn fill_derived(session: &mut Session) {
    if session.distance.is_none() {
        if let Some(distance) = distance_from_positions(session) {
            session.distance = Some(distance);
            mark_derived(session, ChannelKind::Distance);
        }
    }
    if session.speed.is_none() {
        if let Some(speed) = speed_from_distance(session) {
            session.speed = Some(speed);
            mark_derived(session, ChannelKind::Speed);
        }
    }
}

fn mark_derived(session: &mut Session, kind: ChannelKind) {
    if !session.derived.contains(&kind) {
        session.derived.push(kind);
    }
}

/// Timer pauses sorted by end time, walked with a forward-only cursor over sample times.
pub(crate) struct PauseCursor {
    pauses: Vec<(f64, f64)>,
    next: usize,
}

impl PauseCursor {
    pub(crate) fn new(session: &Session) -> PauseCursor {
        let mut pauses: Vec<(f64, f64)> = session
            .pauses
            .iter()
            .filter(|p| p.to_s > p.from_s)
            .map(|p| (p.from_s, p.to_s))
            .collect();
        pauses.sort_by(|a, b| a.1.total_cmp(&b.1));
        PauseCursor { pauses, next: 0 }
    }

    /// For non-decreasing `t`: `(segment, inside)` where `segment` counts pauses that
    /// ended at or before `t` (samples in different segments are separated by a pause)
    /// and `inside` is true when `t` lies strictly inside a pause.
    pub(crate) fn at(&mut self, t: f64) -> (usize, bool) {
        while self.pauses.get(self.next).is_some_and(|p| p.1 <= t) {
            self.next += 1;
        }
        let inside = self
            .pauses
            .get(self.next..)
            .unwrap_or_default()
            .iter()
            .take_while(|p| p.0 < t)
            .any(|p| t > p.0 && t < p.1);
        (self.next, inside)
    }
}

/// Cumulative distance from positions, or `None` when there are no positions.
fn distance_from_positions(session: &Session) -> Option<Channel> {
    let lat = session.lat.as_ref()?;
    let lon = session.lon.as_ref()?;
    let n = session.t.len();
    let jumps = clean::position_jumps(&session.t, lat, lon);
    // Per sample: 0 = normal, 1 = outlier fix (skip), 2 = the step into this fix is an
    // implausible jump (adds nothing).
    let mut mark = vec![0u8; n];
    for j in &jumps {
        match *j {
            clean::PositionJump::Excursion { first, last, .. } => {
                for m in mark.iter_mut().take(last + 1).skip(first) {
                    *m = 1;
                }
            }
            clean::PositionJump::Step { to, .. } => {
                if let Some(m) = mark.get_mut(to) {
                    *m = 2;
                }
            }
        }
    }
    let mut cursor = PauseCursor::new(session);
    let mut values: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut total = 0.0;
    // Last trusted fix: (lat, lon, pause segment, inside a pause).
    let mut last: Option<(f64, f64, usize, bool)> = None;
    for (i, &t) in session.t.iter().enumerate() {
        let (segment, inside) = cursor.at(t);
        let fix = match (lat.get(i), lon.get(i)) {
            (Some(a), Some(o)) if mark.get(i).copied() != Some(1) => (a, o),
            _ => {
                values.push(None);
                continue;
            }
        };
        if let Some((la, lo, seg, was_inside)) = last {
            if seg == segment && !inside && !was_inside && mark.get(i).copied() != Some(2) {
                total += haversine_m(la, lo, fix.0, fix.1);
            }
        }
        last = Some((fix.0, fix.1, segment, inside));
        values.push(Some(total));
    }
    Channel::new(values).into_option()
}

/// Speed from the distance channel, or `None` when there is no usable distance.
fn speed_from_distance(session: &Session) -> Option<Channel> {
    let distance = session.distance.as_ref()?;
    let n = session.t.len();
    let max_step_s = clean::gap_threshold_s(&session.t);
    // Compact list of usable samples: (index, t, distance, pause segment).
    let mut cursor = PauseCursor::new(session);
    let mut pts: Vec<(usize, f64, f64, usize)> = Vec::with_capacity(n);
    for (i, &t) in session.t.iter().enumerate() {
        let (segment, inside) = cursor.at(t);
        if inside {
            continue;
        }
        if let Some(d) = distance.get(i) {
            pts.push((i, t, d, segment));
        }
    }
    let mut values: Vec<Option<f64>> = vec![None; n];
    let (mut lo, mut hi) = (0usize, 0usize);
    // `pts` is never indexed past its end: every index below is checked against its length.
    let pt = |i: usize| pts.get(i).copied();
    for (k, &(idx, tk, _, seg)) in pts.iter().enumerate() {
        // Window start: first point within the half-window and in the same segment.
        while lo < k && pt(lo).is_some_and(|p| p.1 < tk - SPEED_HALF_WINDOW_S || p.3 != seg) {
            lo += 1;
        }
        hi = hi.max(k);
        while pt(hi + 1).is_some_and(|p| p.1 <= tk + SPEED_HALF_WINDOW_S && p.3 == seg) {
            hi += 1;
        }
        let mut a = lo;
        let mut b = hi;
        // Sparse sampling: widen to the nearest neighbour on each side, unless that
        // neighbour lies across a pause or a recording gap.
        if a == k && k > 0 && pt(k - 1).is_some_and(|p| p.3 == seg && tk - p.1 <= max_step_s) {
            a = k - 1;
        }
        if b == k && pt(k + 1).is_some_and(|p| p.3 == seg && p.1 - tk <= max_step_s) {
            b = k + 1;
        }
        let (Some(pa), Some(pb)) = (pt(a), pt(b)) else {
            continue;
        };
        let dt = pb.1 - pa.1;
        if dt > 0.0 {
            if let Some(v) = values.get_mut(idx) {
                *v = Some(((pb.2 - pa.2) / dt).max(0.0));
            }
        }
    }
    Channel::new(values).into_option()
}
