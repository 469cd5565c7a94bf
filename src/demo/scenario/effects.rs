//! Changes applied to a simulated recording after the simulator, for planted cases the
//! simulator's own inputs cannot express.

use crate::model::{SegmentKind, Session};

/// Slow the heart's response after each work rep, more with every rep: the "HR lag" (seconds
/// from the end of a rep to the highest HR after it) lengthens through the set, as it does
/// in a tired athlete. The simulator's fatigue raises the recovery troughs but keeps the lag
/// at 9-10 s, so the demo stretches it here.
///
/// `kinds` are the kinds of the session's device laps (the plan's expanded sequence). For
/// work rep `k` of `n` (0-based), the HR over the following recovery (or 60 s) is read
/// through a time warp `τ(x) = x - c·x·(1 - x/W)`, `c = max_c · k/(n-1)`: continuous at
/// both ends of the window, slowed near its start (slope `1 - c`), so a peak `p` seconds
/// after the rep moves to about `p / (1 - c)`; the recovery trough near the window's end
/// barely moves. Heart-rate samples only; nothing else changes.
pub(crate) fn stretch_hr_lag(session: &mut Session, kinds: &[SegmentKind], max_c: f64) {
    if kinds.len() != session.laps.len() {
        return;
    }
    let Some(hr) = session.hr.as_ref() else {
        return;
    };
    let original = hr.clone();
    let t = &session.t;
    let work: Vec<usize> = kinds
        .iter()
        .enumerate()
        .filter(|(_, k)| **k == SegmentKind::Work)
        .map(|(i, _)| i)
        .collect();
    let n = work.len();
    if n < 2 {
        return;
    }
    let max_c = max_c.clamp(0.0, 0.9);
    // HR at time `x` by linear interpolation of the present samples.
    let present: Vec<(f64, f64)> = original
        .iter_present()
        .filter_map(|(q, h)| Some((*t.get(q)?, h)))
        .collect();
    let hr_at = |x: f64| -> Option<f64> {
        let j = present.partition_point(|p| p.0 <= x);
        match (
            j.checked_sub(1).and_then(|i| present.get(i)),
            present.get(j),
        ) {
            (Some(&(t0, h0)), Some(&(t1, h1))) if t1 > t0 => {
                Some(h0 + (h1 - h0) * (x - t0) / (t1 - t0))
            }
            (Some(&(_, h0)), _) => Some(h0),
            (None, Some(&(_, h1))) => Some(h1),
            (None, None) => None,
        }
    };
    let mut out = original.values.clone();
    for (k, &i) in work.iter().enumerate() {
        let c = max_c * k as f64 / (n - 1) as f64;
        if c <= 0.0 {
            continue;
        }
        let Some(end) = session.laps.get(i).map(|l| l.end_s) else {
            continue;
        };
        let w = match (kinds.get(i + 1), session.laps.get(i + 1)) {
            (Some(SegmentKind::Recovery), Some(next)) => next.end_s - end,
            _ => 60.0,
        };
        if w <= 1.0 {
            continue;
        }
        for (&tq, o) in t.iter().zip(out.iter_mut()) {
            let x = tq - end;
            if x <= 0.0 || x >= w || o.is_none() {
                continue;
            }
            let tau = x - c * x * (1.0 - x / w);
            if let Some(h) = hr_at(end + tau) {
                *o = Some((h * 10.0).round() / 10.0);
            }
        }
    }
    session.hr = Some(crate::model::Channel::new(out));
}
