//! Splits: the time of each kilometre or mile of a run, in the athlete's units.
//!
//! For a race or time trial the splits cover the race itself (its one work interval), so
//! the finish time is the time over the race distance; for any other run they cover the
//! whole session. The last split is the part that is left (shorter than a full unit), left
//! out when shorter than [`MIN_LAST_SPLIT_M`]. The method is on [`splits`].

use serde::{Deserialize, Serialize};

use super::gradient::{smooth_altitude, ALTITUDE_SMOOTHING_S};
use super::review::Series;
use super::sampling::sample_dt;
use crate::ingest::clean::{gap_threshold_s, sample_mask};
use crate::model::{Channel, ChannelKind, Session, Units};

/// One split.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Split {
    /// 1-based.
    pub number: usize,
    /// Distance of this split, metres (a full unit, or what was left for the last one).
    pub distance_m: f64,
    /// Elapsed time of this split, seconds (stops included).
    pub time_s: f64,
    /// Moving time of this split, seconds.
    pub moving_s: f64,
    /// Elapsed pace of this split, seconds per km.
    pub pace_s_per_km: f64,
    /// Time-weighted mean HR over the split, bpm.
    pub avg_hr: Option<f64>,
    /// Net height change over the split, metres (up is positive).
    pub elevation_change_m: Option<f64>,
}

/// The splits of a run (`splits` in the analysis JSON).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Splits {
    /// `km` or `mi`: the athlete's units.
    pub unit: String,
    /// Start and end of the part covered, seconds from the session start.
    pub from_s: f64,
    pub to_s: f64,
    /// Distance covered, metres.
    pub distance_m: f64,
    /// Elapsed time from `from_s` to `to_s`: the finish time of a race.
    pub time_s: f64,
    /// Moving time over the same part.
    pub moving_s: f64,
    /// Fastest and slowest elapsed pace among the full splits, s/km (`None` with fewer than
    /// two full splits).
    pub fastest_s_per_km: Option<f64>,
    pub slowest_s_per_km: Option<f64>,
    /// Elapsed time of the first and second half of the distance, seconds: a second half
    /// faster than the first is a negative split.
    pub first_half_s: Option<f64>,
    pub second_half_s: Option<f64>,
    pub splits: Vec<Split>,
}

impl Splits {
    /// The full-unit splits (the last partial one left out).
    pub fn full(&self, units: Units) -> impl Iterator<Item = &Split> {
        let unit_m = units.metres();
        self.splits
            .iter()
            .filter(move |s| s.distance_m >= unit_m * 0.999)
    }
}

/// A last part shorter than this is left out of the splits, metres.
// Our design choice: a race measured by GPS reads a few tens of metres long (10.04 km for a
// 10 km course is ordinary); a 30-m "split" of 8 s would be noise beside the kilometres. A
// run shorter than this has no splits at all.
pub const MIN_LAST_SPLIT_M: f64 = 50.0;

/// Cumulative distance against time over the covered part: knots `(t, metres)`, linear
/// between them, non-decreasing in both.
struct Track {
    knots: Vec<(f64, f64)>,
}

impl Track {
    /// The distance covered from `from_s` to `to_s`, from the usable samples of the
    /// session's cumulative distance (see [`splits`] for the rules).
    fn new(session: &Session, s: &Series<'_>, from_s: f64, to_s: f64) -> Option<Track> {
        let d = s.distance?;
        let t = s.t;
        let lo = t.partition_point(|&x| x < from_s);
        let hi = t.partition_point(|&x| x <= to_s);
        let gap = gap_threshold_s(t);
        let usable = |i: usize| {
            s.distance_ok.get(i).copied().unwrap_or(false)
                && d.get(i).copied().flatten().is_some_and(f64::is_finite)
        };
        let mut knots = vec![(from_s, 0.0)];
        let mut cum = 0.0;
        let mut last: Option<(usize, f64)> = None;
        for i in lo..hi {
            if !usable(i) {
                continue;
            }
            let (Some(&ti), Some(v)) = (t.get(i), d.get(i).copied().flatten()) else {
                continue;
            };
            if let Some((p, pv)) = last {
                let step = (v - pv).max(0.0);
                if !standing(session, s, p, i, gap) {
                    cum += step;
                }
            }
            last = Some((i, v));
            if ti > from_s {
                knots.push((ti, cum));
            }
        }
        last?;
        if knots.last().is_some_and(|&(tl, _)| tl < to_s) {
            knots.push((to_s, cum));
        }
        Some(Track { knots })
    }

    fn total_m(&self) -> f64 {
        self.knots.last().map(|k| k.1).unwrap_or(0.0)
    }

    /// The first time the distance reaches `m`, by linear interpolation between knots.
    fn time_at(&self, m: f64) -> Option<f64> {
        let k = self.knots.partition_point(|&(_, c)| c < m);
        let &(t1, c1) = self.knots.get(k)?;
        let Some(&(t0, c0)) = k.checked_sub(1).and_then(|j| self.knots.get(j)) else {
            return Some(t1);
        };
        if c1 <= c0 {
            return Some(t1);
        }
        Some(t0 + (m - c0) / (c1 - c0) * (t1 - t0))
    }
}

/// Whether the step from usable sample `p` to the next usable sample `i` was made
/// standing: adjacent samples, a recorded speed the motion classification read as
/// standing (not a pause, not a gap in the recording). Such steps are GPS wander and add
/// nothing, as in [`super::motion::moving_distance_m`].
fn standing(session: &Session, s: &Series<'_>, p: usize, i: usize, gap: f64) -> bool {
    if i != p + 1 || s.moving.get(i).copied().unwrap_or(true) {
        return false;
    }
    // Without a usable speed the sample is not moving for want of a speed (or a pause):
    // not standing.
    let decided = session.speed.is_none() || s.speed_ok.get(i).copied().unwrap_or(false);
    let dt = match (s.t.get(p), s.t.get(i)) {
        (Some(&a), Some(&b)) => b - a,
        _ => return false,
    };
    decided && dt.is_finite() && dt <= gap
}

/// Sums over a stretch of time of the per-sample series, each sample `i` standing for
/// `t[i-1]..t[i]` (weights capped as [`sample_dt`] caps them).
struct Over {
    moving_s: f64,
    hr: Option<f64>,
}

fn over(s: &Series<'_>, ta: f64, tb: f64) -> Over {
    let t = s.t;
    let first = t.partition_point(|&x| x <= ta).max(1);
    let (mut moving, mut hr_sum, mut hr_w) = (0.0, 0.0, 0.0);
    for i in first..t.len() {
        let (Some(&a), Some(&b)) = (t.get(i - 1), t.get(i)) else {
            break;
        };
        if a >= tb {
            break;
        }
        let raw = b - a;
        if !(raw.is_finite() && raw > 0.0) {
            continue;
        }
        let overlap = (b.min(tb) - a.max(ta)).max(0.0);
        if overlap <= 0.0 {
            continue;
        }
        if s.moving.get(i).copied().unwrap_or(false) {
            moving += overlap;
        }
        if s.hr_ok.get(i).copied().unwrap_or(false) {
            if let Some(h) = s.hr.and_then(|h| h.get(i).copied().flatten()) {
                // The capped weight, shared out by the part of the stretch inside.
                let w = sample_dt(t, i) * overlap / raw;
                hr_sum += h * w;
                hr_w += w;
            }
        }
    }
    Over {
        moving_s: moving,
        hr: (hr_w > 0.0).then(|| hr_sum / hr_w),
    }
}

/// Smoothed altitude (unflagged samples), for the height change of each split.
fn altitude(session: &Session) -> Option<Vec<Option<f64>>> {
    let alt = session.altitude.as_ref()?;
    let mask = sample_mask(session, &session.flags, ChannelKind::Altitude);
    let kept = Channel::new(
        alt.values
            .iter()
            .enumerate()
            .map(|(i, v)| v.filter(|_| !mask.get(i).copied().unwrap_or(false)))
            .collect(),
    );
    Some(smooth_altitude(&session.t, &kept, ALTITUDE_SMOOTHING_S))
}

/// Altitude at time `x`, linear between the nearest samples that have one on each side
/// (the nearest one alone at the ends).
fn altitude_at(t: &[f64], alt: &[Option<f64>], x: f64) -> Option<f64> {
    let k = t.partition_point(|&v| v < x);
    let after = (k..t.len()).find_map(|j| Some((*t.get(j)?, alt.get(j).copied().flatten()?)));
    let before = (0..k)
        .rev()
        .find_map(|j| Some((*t.get(j)?, alt.get(j).copied().flatten()?)));
    match (before, after) {
        (Some((t0, a0)), Some((t1, a1))) if t1 > t0 => Some(a0 + (x - t0) / (t1 - t0) * (a1 - a0)),
        (_, Some((_, a))) | (Some((_, a)), None) => Some(a),
        (None, None) => None,
    }
}

/// The splits of samples from `from_s` to `to_s` (seconds from the start) in `units`.
///
/// # Method
///
/// - **Distance.** The session's cumulative distance at the samples where it is usable
///   (`Series::distance_ok`: present and not masked by a flag), counted from the first
///   such sample at or after `from_s`. Each step between consecutive usable samples adds
///   its increase (never a decrease); a step made standing (adjacent samples, speed read as
///   standing by the motion classification) adds nothing, as in the session's distance
///   ([`super::motion::moving_distance_m`]). A flagged or missing stretch is bridged: the
///   distance across it is spread evenly over its time, so it never makes a jump. Over a
///   race with no standing the total equals the work interval's distance.
/// - **Split times.** The time each multiple of the unit (1000 m or 1609.344 m) is reached,
///   by linear interpolation between the two samples around it. The first split starts at
///   `from_s`; a part left after the last full unit ends at `to_s`, so the split times add
///   up to the finish time, unless that part is under [`MIN_LAST_SPLIT_M`] and is left out.
/// - **Halves.** The time half the distance is reached, by the same interpolation: the
///   first half is from `from_s` to then, the second from then to `to_s`.
/// - Moving time, mean HR (usable samples, time-weighted) and the height change (smoothed
///   altitude, [`ALTITUDE_SMOOTHING_S`]) are taken over each split's stretch of time.
///
/// `None` without a distance channel, without a usable distance sample in the range, or
/// when less than [`MIN_LAST_SPLIT_M`] was covered. A run shorter than one unit gets one
/// partial split.
pub(crate) fn splits(
    session: &Session,
    s: &Series<'_>,
    from_s: f64,
    to_s: f64,
    units: Units,
) -> Option<Splits> {
    if !(from_s.is_finite() && to_s.is_finite() && to_s > from_s) {
        return None;
    }
    let track = Track::new(session, s, from_s, to_s)?;
    let total = track.total_m();
    if !(total.is_finite() && total >= MIN_LAST_SPLIT_M) {
        return None;
    }
    let unit_m = units.metres();
    // Full units, with a millimetre of slack for rounding in the recorded distance.
    let full = ((total + 1e-3) / unit_m).floor() as usize;
    let mut bounds: Vec<(f64, f64)> = Vec::with_capacity(full + 1);
    let mut at = from_s;
    for k in 1..=full {
        let end = track
            .time_at(k as f64 * unit_m)
            .unwrap_or(to_s)
            .clamp(at, to_s);
        bounds.push((end, unit_m));
        at = end;
    }
    let rest = total - full as f64 * unit_m;
    if rest >= MIN_LAST_SPLIT_M {
        bounds.push((to_s, rest));
    }
    let alt = altitude(session);
    let height = |x: f64| alt.as_deref().and_then(|a| altitude_at(s.t, a, x));
    let mut list = Vec::with_capacity(bounds.len());
    let mut start = from_s;
    for (k, &(end, dist)) in bounds.iter().enumerate() {
        let time_s = end - start;
        let o = over(s, start, end);
        list.push(Split {
            number: k + 1,
            distance_m: dist,
            time_s,
            moving_s: o.moving_s,
            pace_s_per_km: time_s / dist * 1000.0,
            avg_hr: o.hr,
            elevation_change_m: height(end).zip(height(start)).map(|(b, a)| b - a),
        });
        start = end;
    }
    let full_paces: Vec<f64> = list
        .iter()
        .filter(|x| x.distance_m >= unit_m * 0.999)
        .map(|x| x.pace_s_per_km)
        .collect();
    let (fastest, slowest) = if full_paces.len() >= 2 {
        (
            full_paces.iter().copied().reduce(f64::min),
            full_paces.iter().copied().reduce(f64::max),
        )
    } else {
        (None, None)
    };
    let half = track.time_at(total / 2.0).map(|h| h.clamp(from_s, to_s));
    Some(Splits {
        unit: units.label().to_string(),
        from_s,
        to_s,
        distance_m: total,
        time_s: to_s - from_s,
        moving_s: over(s, from_s, to_s).moving_s,
        fastest_s_per_km: fastest,
        slowest_s_per_km: slowest,
        first_half_s: half.map(|h| h - from_s),
        second_half_s: half.map(|h| to_s - h),
        splits: list,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{FileFormat, Flag, FlagKind};
    use chrono::{TimeZone, Utc};

    /// A 1 Hz session at the given per-second speeds, distance their running sum.
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
        s.distance = Some(Channel::from_values(speeds.iter().enumerate().map(
            |(i, v)| {
                if i > 0 {
                    acc += v;
                }
                acc
            },
        )));
        s
    }

    fn whole(s: &Session, units: Units) -> Option<Splits> {
        let series = Series::new(s);
        let end = s.t.last().copied().unwrap_or(0.0);
        splits(s, &series, 0.0, end, units)
    }

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn constant_speed_gives_exact_kilometres() {
        // 4 m/s for 2600 s: 10 400 m, ten kilometres of 250 s and 400 m in 100 s.
        let s = session(&[4.0; 2601]);
        let sp = whole(&s, Units::Km).unwrap();
        assert_eq!(sp.unit, "km");
        assert!(close(sp.distance_m, 10_400.0, 1e-6));
        assert_eq!(sp.splits.len(), 11);
        for x in sp.splits.iter().take(10) {
            assert!(close(x.time_s, 250.0, 1e-9), "{x:?}");
            assert!(close(x.pace_s_per_km, 250.0, 1e-9));
            assert!(close(x.distance_m, 1000.0, 1e-12));
        }
        let last = sp.splits.last().unwrap();
        assert_eq!(last.number, 11);
        assert!(close(last.distance_m, 400.0, 1e-6));
        assert!(close(last.time_s, 100.0, 1e-6));
        assert!(close(last.pace_s_per_km, 250.0, 1e-6));
        assert!(close(sp.time_s, 2600.0, 1e-9));
        assert!(close(sp.first_half_s.unwrap(), 1300.0, 1e-9));
        assert!(close(sp.second_half_s.unwrap(), 1300.0, 1e-9));
        assert!(close(sp.fastest_s_per_km.unwrap(), 250.0, 1e-9));
        assert!(close(sp.slowest_s_per_km.unwrap(), 250.0, 1e-9));
        assert_eq!(sp.full(Units::Km).count(), 10);
        // The split times add up to the finish time.
        let sum: f64 = sp.splits.iter().map(|x| x.time_s).sum();
        assert!(close(sum, sp.time_s, 1e-9));
    }

    #[test]
    fn miles_at_constant_speed() {
        // 4 m/s: a mile (1609.344 m) takes 402.336 s; 1300 s covers 5200 m = 3 miles + 371.968 m.
        let s = session(&[4.0; 1301]);
        let sp = whole(&s, Units::Mi).unwrap();
        assert_eq!(sp.unit, "mi");
        assert_eq!(sp.splits.len(), 4);
        for x in sp.splits.iter().take(3) {
            assert!(close(x.time_s, 402.336, 1e-9), "{x:?}");
            assert!(close(x.pace_s_per_km, 250.0, 1e-9));
        }
        let last = sp.splits.last().unwrap();
        assert!(close(last.distance_m, 5200.0 - 3.0 * 1609.344, 1e-6));
        assert!(close(last.time_s, 1300.0 - 3.0 * 402.336, 1e-6));
    }

    #[test]
    fn faster_second_kilometre_and_halves() {
        // 1000 m at 4 m/s (250 s), then 1000 m at 5 m/s (200 s).
        let mut v = vec![4.0; 251];
        v.extend(vec![5.0; 200]);
        let s = session(&v);
        let sp = whole(&s, Units::Km).unwrap();
        assert_eq!(sp.splits.len(), 2);
        assert!(close(sp.splits[0].time_s, 250.0, 1e-9));
        assert!(close(sp.splits[1].time_s, 200.0, 1e-9));
        assert!(close(sp.fastest_s_per_km.unwrap(), 200.0, 1e-9));
        assert!(close(sp.slowest_s_per_km.unwrap(), 250.0, 1e-9));
        // Half the distance (1000 m) is reached at 250 s: a negative split.
        assert!(close(sp.first_half_s.unwrap(), 250.0, 1e-9));
        assert!(close(sp.second_half_s.unwrap(), 200.0, 1e-9));
    }

    #[test]
    fn a_short_leftover_is_left_out() {
        // 252 s at 4 m/s: 1008 m; the last 8 m are not a split.
        let s = session(&[4.0; 253]);
        let sp = whole(&s, Units::Km).unwrap();
        assert_eq!(sp.splits.len(), 1);
        assert!(close(sp.splits[0].time_s, 250.0, 1e-9));
        assert!(close(sp.distance_m, 1008.0, 1e-9));
        assert!(close(sp.time_s, 252.0, 1e-9));
        // One full split: no fastest or slowest.
        assert_eq!(sp.fastest_s_per_km, None);
        assert_eq!(sp.slowest_s_per_km, None);
        // 60 m is kept.
        let s = session(&[4.0; 266]);
        let sp = whole(&s, Units::Km).unwrap();
        assert_eq!(sp.splits.len(), 2);
        assert!(close(sp.splits[1].distance_m, 60.0, 1e-9));
        assert!(close(sp.splits[1].time_s, 15.0, 1e-9));
    }

    #[test]
    fn a_run_shorter_than_one_unit_has_one_partial_split() {
        // 150 s at 4 m/s: 600 m.
        let s = session(&[4.0; 151]);
        let sp = whole(&s, Units::Km).unwrap();
        assert_eq!(sp.splits.len(), 1);
        assert!(close(sp.splits[0].distance_m, 600.0, 1e-9));
        assert!(close(sp.splits[0].time_s, 150.0, 1e-9));
        assert!(close(sp.splits[0].pace_s_per_km, 250.0, 1e-9));
        assert_eq!(sp.full(Units::Km).count(), 0);
        assert!(close(sp.first_half_s.unwrap(), 75.0, 1e-9));
    }

    #[test]
    fn no_splits_without_distance_or_with_too_little() {
        let mut s = session(&[4.0; 600]);
        s.distance = None;
        assert_eq!(whole(&s, Units::Km), None);
        // 10 s at 4 m/s: 40 m.
        assert_eq!(whole(&session(&[4.0; 11]), Units::Km), None);
        // Every distance sample missing.
        let mut s = session(&[4.0; 600]);
        s.distance = Some(Channel::new(vec![None; 600]));
        assert_eq!(whole(&s, Units::Km), None);
        // An empty or backwards range.
        let s = session(&[4.0; 600]);
        let series = Series::new(&s);
        assert_eq!(splits(&s, &series, 300.0, 300.0, Units::Km), None);
        assert_eq!(splits(&s, &series, 300.0, 100.0, Units::Km), None);
        assert_eq!(splits(&s, &series, f64::NAN, 100.0, Units::Km), None);
    }

    #[test]
    fn flagged_and_missing_distance_makes_no_jump() {
        // 4 m/s for 2000 s; a 300-m spike at samples 400-404, flagged, and a stretch
        // without distance at samples 1100-1130.
        let mut s = session(&[4.0; 2001]);
        if let Some(d) = s.distance.as_mut() {
            for v in d.values.iter_mut().skip(400).take(5) {
                *v = v.map(|x| x + 300.0);
            }
            for v in d.values.iter_mut().skip(1100).take(31) {
                *v = None;
            }
        }
        s.flags.push(Flag {
            from_s: 400.0,
            to_s: 404.0,
            channel: ChannelKind::Distance,
            kind: FlagKind::PositionJump,
            reason: "test".into(),
        });
        let sp = whole(&s, Units::Km).unwrap();
        assert!(close(sp.distance_m, 8000.0, 1e-6), "{}", sp.distance_m);
        assert_eq!(sp.splits.len(), 8);
        for x in &sp.splits {
            assert!(close(x.time_s, 250.0, 1e-9), "{x:?}");
        }
    }

    #[test]
    fn a_range_inside_the_session() {
        // 4 m/s; the splits of 100 s .. 700 s: 2400 m, two kilometres and 400 m.
        let s = session(&[4.0; 1001]);
        let series = Series::new(&s);
        let sp = splits(&s, &series, 100.0, 700.0, Units::Km).unwrap();
        assert!(close(sp.distance_m, 2400.0, 1e-9));
        assert!(close(sp.time_s, 600.0, 1e-9));
        assert_eq!(sp.splits.len(), 3);
        assert!(close(sp.splits[0].time_s, 250.0, 1e-9));
        assert!(close(sp.splits[2].time_s, 100.0, 1e-9));
    }

    #[test]
    fn heart_rate_and_height_per_split() {
        // HR 150 over the first kilometre (samples 1..=250), 160 after.
        let mut s = session(&[4.0; 751]);
        s.hr = Some(Channel::from_values((0..751).map(|i| {
            if i <= 250 {
                150.0
            } else {
                160.0
            }
        })));
        // A steady 1 % climb: 10 m per kilometre.
        s.altitude = Some(Channel::from_values((0..751).map(|i| 0.04 * i as f64)));
        let sp = whole(&s, Units::Km).unwrap();
        assert_eq!(sp.splits.len(), 3);
        assert!(close(sp.splits[0].avg_hr.unwrap(), 150.0, 1e-9));
        assert!(close(sp.splits[1].avg_hr.unwrap(), 160.0, 1e-9));
        // Away from the ends the smoothing of a straight line is the line.
        assert!(close(sp.splits[1].elevation_change_m.unwrap(), 10.0, 1e-9));
        assert!(close(sp.splits[1].moving_s, 250.0, 1e-9));
        // Without HR or altitude: None, never a number.
        let sp = whole(&session(&[4.0; 751]), Units::Km).unwrap();
        assert!(sp.splits.iter().all(|x| x.avg_hr.is_none()));
        assert!(sp.splits.iter().all(|x| x.elevation_change_m.is_none()));
    }

    #[test]
    fn standing_adds_time_not_distance() {
        // 125 s at 4 m/s (500 m), 60 s standing while the GPS wanders 0.3 m/s, 125 s at
        // 4 m/s (500 m) more.
        let mut v = vec![4.0; 126];
        v.extend(vec![0.0; 60]);
        v.extend(vec![4.0; 125]);
        let mut s = session(&v);
        let mut acc = 0.0;
        s.distance = Some(Channel::from_values(v.iter().enumerate().map(|(i, x)| {
            if i > 0 {
                acc += if *x > 0.0 { *x } else { 0.3 };
            }
            acc
        })));
        let sp = whole(&s, Units::Km).unwrap();
        // The motion classification places the stop within a few seconds of its edges:
        // the wander it leaves in is at most 0.3 m/s times that.
        assert!(close(sp.distance_m, 1000.0, 5.0), "{}", sp.distance_m);
        let first = &sp.splits[0];
        assert!(close(first.time_s, 310.0, 2.0), "{first:?}");
        assert!(close(first.moving_s, 250.0, 10.0), "{first:?}");
    }
}
