//! Checking a decoded session's time axis: refuse sessions with no usable time, drop
//! isolated timestamps far from the rest.
//!
//! Rules (applied to every format after decoding, before derived channels and flags):
//! - Two or more samples that all share one timestamp give no time axis: refused.
//! - A timestamp before [`EARLIEST`] or from [`LATEST`] on is out of range (placeholders
//!   such as the FIT epoch 1989-12-31 or the Unix epoch, unconverted device clocks, a
//!   saturated counter). The samples are split where consecutive timestamps jump by more
//!   than [`MAX_JUMP_S`]; the largest stretch of in-range samples is the session. When the
//!   samples outside it are few (at most a tenth, or a single sample), they are dropped and
//!   a warning says so; otherwise the session is refused, since there is no telling which
//!   part is the real one.
//!
//! The bounds are a plausibility rule, not from a specification:
//! // Common coaching practice (no published source): GPS running watches that record
//! // heart rate date from the early 2000s, and no single session spans two days.

use chrono::{DateTime, TimeZone, Utc};

use crate::model::{Channel, Session};

use super::ParseError;

/// Timestamps before this are out of range.
pub fn earliest() -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2000, 1, 1, 0, 0, 0)
        .single()
        .unwrap_or(DateTime::UNIX_EPOCH)
}

/// Timestamps from this on are out of range.
pub fn latest() -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2100, 1, 1, 0, 0, 0)
        .single()
        .unwrap_or(DateTime::UNIX_EPOCH)
}

/// Display names of the bounds, for messages.
pub const EARLIEST: &str = "2000-01-01";
pub const LATEST: &str = "2100-01-01";

/// A jump between consecutive timestamps larger than this splits the samples (two days).
pub const MAX_JUMP_S: i64 = 2 * 24 * 3600;

fn refuse(reason: String) -> ParseError {
    ParseError::TimeAxis(reason)
}

/// The message for samples that all share one timestamp.
pub fn one_timestamp_message(n: usize, at: DateTime<Utc>) -> String {
    format!(
        "all {n} points share one timestamp ({})",
        at.format("%Y-%m-%d %H:%M:%S UTC")
    )
}

/// Check and repair `s`'s time axis in place (see the module rules). `s.time` must be sorted.
pub fn repair(s: &mut Session) -> Result<(), ParseError> {
    let n = s.time.len();
    let (Some(&first), Some(&last)) = (s.time.first(), s.time.last()) else {
        return Ok(());
    };
    if n >= 2 && first == last {
        return Err(refuse(one_timestamp_message(n, first)));
    }
    let (lo, hi) = (earliest(), latest());
    let in_range = |t: &DateTime<Utc>| *t >= lo && *t < hi;
    // Stretches of in-range samples (index ranges), split at big jumps.
    let mut best: Option<(usize, usize)> = None;
    let mut run_start: Option<usize> = None;
    let mut prev: Option<DateTime<Utc>> = None;
    let consider = |a: usize, b: usize, best: &mut Option<(usize, usize)>| {
        if best.is_none_or(|(x, y)| b - a > y - x) {
            *best = Some((a, b));
        }
    };
    for (i, t) in s.time.iter().enumerate() {
        if !in_range(t) {
            if let Some(a) = run_start.take() {
                consider(a, i, &mut best);
            }
            prev = None;
            continue;
        }
        let jump = prev.is_some_and(|p| (*t - p).num_seconds() > MAX_JUMP_S);
        match run_start {
            Some(a) if jump => {
                consider(a, i, &mut best);
                run_start = Some(i);
            }
            Some(_) => {}
            None => run_start = Some(i),
        }
        prev = Some(*t);
    }
    if let Some(a) = run_start {
        consider(a, n, &mut best);
    }
    let outside = s.time.iter().filter(|t| !in_range(t)).count();
    let Some((a, b)) = best else {
        return Err(refuse(format!(
            "all {n} timestamps are outside {EARLIEST} to {LATEST} (first {})",
            first.format("%Y-%m-%d %H:%M:%S UTC")
        )));
    };
    let dropped = n - (b - a);
    if dropped == 0 {
        return Ok(());
    }
    if dropped > (n / 10).max(1) {
        return Err(refuse(if outside > 0 {
            format!("{outside} of {n} timestamps are outside {EARLIEST} to {LATEST}")
        } else {
            format!(
                "the timestamps jump by more than {} days, splitting the {n} points into parts",
                MAX_JUMP_S / 86_400
            )
        }));
    }
    // An example of what was dropped, for the warning: the dropped timestamp farthest from
    // the kept ones.
    let kept_from = s.time.get(a).copied().unwrap_or(first);
    let kept_to = s.time.get(b.saturating_sub(1)).copied().unwrap_or(last);
    let example = if a > 0 { first } else { last };
    let far = (example - if a > 0 { kept_from } else { kept_to })
        .num_days()
        .abs();
    let far = if far >= 730 {
        format!("{} years", far / 365)
    } else {
        format!("{far} days")
    };
    keep_range(s, a, b);
    s.warnings.push(format!(
        "{dropped} sample{} with an impossible timestamp {} dropped (e.g. {}, {far} from the rest)",
        if dropped == 1 { "" } else { "s" },
        if dropped == 1 { "was" } else { "were" },
        example.format("%Y-%m-%d %H:%M:%S UTC"),
    ));
    Ok(())
}

/// Keep samples `a..b` only; the session then starts at sample `a`. Laps and pauses move
/// with the new start and are clipped to the kept span; those left empty are dropped.
fn keep_range(s: &mut Session, a: usize, b: usize) {
    let delta = s.t.get(a).copied().unwrap_or(0.0);
    let cut = |v: &mut Vec<f64>| {
        *v = v.get(a..b).unwrap_or_default().to_vec();
    };
    cut(&mut s.t);
    for t in &mut s.t {
        *t -= delta;
    }
    s.time = s.time.get(a..b).unwrap_or_default().to_vec();
    if let Some(&t0) = s.time.first() {
        s.start = t0;
    }
    for ch in [
        &mut s.distance,
        &mut s.speed,
        &mut s.hr,
        &mut s.cadence,
        &mut s.altitude,
        &mut s.lat,
        &mut s.lon,
    ] {
        if let Some(c) = ch.take() {
            *ch = Channel::new(c.values.get(a..b).unwrap_or_default().to_vec()).into_option();
        }
    }
    if s.lat.is_none() || s.lon.is_none() {
        s.lat = None;
        s.lon = None;
    }
    let end = s.t.last().copied().unwrap_or(0.0);
    let clip = |x: f64| (x - delta).clamp(0.0, end);
    s.laps.retain_mut(|l| {
        let (from, to) = (l.start_s - delta, l.end_s - delta);
        l.start_s = clip(l.start_s);
        l.end_s = clip(l.end_s);
        to > 0.0 && from < end && l.end_s > l.start_s
    });
    s.pauses.retain_mut(|p| {
        p.from_s = clip(p.from_s);
        p.to_s = clip(p.to_s);
        p.to_s > p.from_s
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::FileFormat;

    fn session(times: &[DateTime<Utc>]) -> Session {
        let start = times.first().copied().unwrap_or(DateTime::UNIX_EPOCH);
        let mut s = Session::empty(FileFormat::Gpx, start);
        s.time = times.to_vec();
        s.t = times
            .iter()
            .map(|t| (*t - start).num_seconds() as f64)
            .collect();
        s.hr = Some(Channel::from_values((0..times.len()).map(|i| i as f64)));
        s
    }

    #[test]
    fn an_isolated_early_timestamp_is_dropped_and_the_rest_rebased() {
        let t0 = Utc.with_ymd_and_hms(2024, 5, 1, 7, 0, 0).unwrap();
        let mut times = vec![Utc.with_ymd_and_hms(1989, 12, 31, 0, 0, 0).unwrap()];
        times.extend((0..20).map(|k| t0 + chrono::Duration::seconds(k)));
        let mut s = session(&times);
        repair(&mut s).unwrap();
        assert_eq!(s.len(), 20);
        assert_eq!(s.start, t0);
        assert_eq!(s.t.first(), Some(&0.0));
        assert_eq!(s.t.last(), Some(&19.0));
        assert_eq!(s.hr.as_ref().unwrap().get(0), Some(1.0));
        assert_eq!(s.warnings.len(), 1);
        assert!(
            s.warnings[0].starts_with(
                "1 sample with an impossible timestamp was dropped (e.g. 1989-12-31 00:00:00 UTC"
            ),
            "{}",
            s.warnings[0]
        );
        s.check_invariants().unwrap();
    }

    #[test]
    fn half_the_points_in_another_decade_is_refused() {
        let t0 = Utc.with_ymd_and_hms(2024, 5, 1, 7, 0, 0).unwrap();
        let t1 = Utc.with_ymd_and_hms(2031, 5, 1, 7, 0, 0).unwrap();
        let mut times: Vec<_> = (0..10).map(|k| t0 + chrono::Duration::seconds(k)).collect();
        times.extend((0..10).map(|k| t1 + chrono::Duration::seconds(k)));
        let err = repair(&mut session(&times)).unwrap_err();
        assert_eq!(
            err.to_string(),
            "no usable time axis: the timestamps jump by more than 2 days, splitting the 20 points into parts"
        );
    }
}
