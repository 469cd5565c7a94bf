//! Gradient and hill-adjusted speed from the energy cost of running on slopes.
//!
//! Source: Minetti AE, Moia C, Roi GS, Susta D, Ferretti G. *Energy cost of walking and
//! running at extreme uphill and downhill slopes.* J Appl Physiol 2002;93(3):1039–1046,
//! doi:10.1152/japplphysiol.01177.2001 (methods.md §1). The flat-equivalent speed
//! `v·Cr(i)/Cr(0)` is derived from the paper, not printed in it.

use crate::model::{Channel, Session};

/// Energy cost of level running from the polynomial itself, J·kg⁻¹·m⁻¹ (`minetti_cr(0)`).
/// Using the polynomial's own value makes the flat-equivalent speed equal the speed on the flat.
pub const CR_FLAT: f64 = 3.6;

/// The gradient range the polynomial was fitted over (±45 %, as a decimal).
pub const GRADIENT_LIMIT: f64 = 0.45;

/// Altitude smoothing window used by [`gradients`], seconds.
///
/// Our choice (common practice, no published source): long enough to average out ±1 m
/// altimeter jitter, short enough to keep a 100 m hill.
pub const ALTITUDE_SMOOTHING_S: f64 = 20.0;

/// Distance baseline used by [`gradients`], metres: the rise is taken over at least this much
/// run, centred on the sample (half before, half after).
///
/// Our choice (common practice, no published source).
pub const GRADIENT_BASELINE_M: f64 = 20.0;

/// Shortest run over which a gradient is computed, metres. Over a shorter run (standing
/// still for the whole session, or a session shorter than this) the gradient is `None`
/// rather than a rise divided by a tiny distance.
pub const MIN_GRADIENT_RUN_M: f64 = 5.0;

fn clamp_gradient(i: f64) -> f64 {
    if i.is_nan() {
        0.0
    } else {
        i.clamp(-GRADIENT_LIMIT, GRADIENT_LIMIT)
    }
}

/// Energy cost of running at gradient `i` (rise over run, decimal), J·kg⁻¹·m⁻¹.
///
/// `Cr(i) = 155.4 i⁵ − 30.4 i⁴ − 43.3 i³ + 46.3 i² + 19.5 i + 3.6`
/// (Minetti et al. 2002, J Appl Physiol 93:1039, Fig. 1 polynomial). `i` is clamped to
/// ±0.45, the fitted range; NaN counts as 0 (flat).
pub fn minetti_cr(i: f64) -> f64 {
    let i = clamp_gradient(i);
    ((((155.4 * i - 30.4) * i - 43.3) * i + 46.3) * i + 19.5) * i + 3.6
}

/// Cost of running at gradient `i` relative to the flat: `Cr(i)/Cr(0)` with `Cr(0) = 3.6`
/// (Minetti et al. 2002). 1 on the flat, about 0.5 at −20 %, about 1.66 at +10 %.
pub fn cost_ratio(i: f64) -> f64 {
    minetti_cr(i) / CR_FLAT
}

/// Speed on the flat with the same energy cost as speed `v` (m/s) at gradient `i`:
/// `v·Cr(i)/Cr(0)` (derived from Minetti et al. 2002; assumes the cost per metre does not
/// depend on speed, which the paper reports for level running).
pub fn flat_equivalent_speed(v: f64, i: f64) -> f64 {
    v * cost_ratio(i)
}

/// Centred time-window moving average of an altitude channel.
///
/// For each sample `k` (one output per entry of `t`), the mean of the present altitude
/// samples whose time lies within `window_s / 2` of `t[k]`. Missing samples are skipped, so
/// a missing sample with present neighbours inside the window gets a value; `None` only when
/// no present sample lies in the window. The window is in seconds, not samples, so irregular
/// sampling keeps the same time span. A non-positive or non-finite window averages only
/// samples at the same time (no smoothing). O(n): `t` is assumed non-decreasing, as
/// [`Session::t`] is.
pub fn smooth_altitude(t: &[f64], alt: &Channel, window_s: f64) -> Vec<Option<f64>> {
    let half = if window_s.is_finite() && window_s > 0.0 {
        window_s / 2.0
    } else {
        0.0
    };
    let value = |j: usize| alt.get(j).filter(|v| v.is_finite());
    let n = t.len();
    let mut out = Vec::with_capacity(n);
    let (mut lo, mut hi) = (0usize, 0usize); // window is lo..hi (hi exclusive)
    let (mut sum, mut count) = (0.0f64, 0usize);
    for &tk in t {
        while hi < n && t.get(hi).is_some_and(|&th| th <= tk + half) {
            if let Some(v) = value(hi) {
                sum += v;
                count += 1;
            }
            hi += 1;
        }
        while lo < hi && t.get(lo).is_some_and(|&tl| tl < tk - half) {
            if let Some(v) = value(lo) {
                sum -= v;
                count -= 1;
            }
            lo += 1;
        }
        // Keep the sum exact when the window empties (stops drift from cancellation).
        if count == 0 {
            sum = 0.0;
        }
        out.push((count > 0).then(|| sum / count as f64));
    }
    out
}

/// Gradient (rise over run, decimal, clamped to ±0.45) at each sample of a session.
///
/// Altitude is smoothed over [`ALTITUDE_SMOOTHING_S`]; distance is the session's cumulative
/// distance, or, without one, speed integrated over time. The rise is taken between the
/// nearest samples at least [`GRADIENT_BASELINE_M`]/2 behind and ahead of the sample
/// (shortened at the ends of the session), so a gradient is never a rise over a tiny
/// distance. Standing still keeps the gradient of the ground under the athlete. `None` at a
/// sample whose run is below [`MIN_GRADIENT_RUN_M`] or without altitude and distance.
///
/// Returns `None` when the session has no altitude channel, or neither distance nor speed.
pub fn gradients(session: &Session) -> Option<Vec<Option<f64>>> {
    let alt = session.altitude.as_ref()?;
    let dist = cumulative_distance(session)?;
    let smooth = smooth_altitude(&session.t, alt, ALTITUDE_SMOOTHING_S);
    Some(gradients_from(&dist, &smooth, GRADIENT_BASELINE_M))
}

/// Gradient at each sample from cumulative distance and (already smoothed) altitude; see
/// [`gradients`]. The output has one entry per entry of `distance`. Distance is made
/// non-decreasing (running maximum) before use; samples missing either value are skipped
/// and get `None`. O(n).
pub fn gradients_from(
    distance: &[Option<f64>],
    altitude: &[Option<f64>],
    baseline_m: f64,
) -> Vec<Option<f64>> {
    let half = if baseline_m.is_finite() && baseline_m > 0.0 {
        baseline_m / 2.0
    } else {
        0.0
    };
    // Compact list of (original index, distance, altitude) with distance made monotone.
    let mut pts: Vec<(usize, f64, f64)> = Vec::with_capacity(distance.len());
    let mut dmax = f64::NEG_INFINITY;
    for (k, d) in distance.iter().enumerate() {
        let (Some(d), Some(a)) = (*d, altitude.get(k).copied().flatten()) else {
            continue;
        };
        if !d.is_finite() || !a.is_finite() {
            continue;
        }
        dmax = dmax.max(d);
        pts.push((k, dmax, a));
    }
    let mut out = vec![None; distance.len()];
    let m = pts.len();
    if m == 0 {
        return out;
    }
    // back: the last point with d <= d_c - half (or the first point);
    // ahead: the first point with d >= d_c + half (or the last point).
    let (mut back, mut ahead) = (0usize, 0usize);
    for c in 0..m {
        let Some(&(k, dc, _)) = pts.get(c) else {
            continue;
        };
        while back < c && pts.get(back + 1).is_some_and(|p| p.1 <= dc - half) {
            back += 1;
        }
        if ahead < c {
            ahead = c;
        }
        while ahead + 1 < m && pts.get(ahead).is_some_and(|p| p.1 < dc + half) {
            ahead += 1;
        }
        let (Some(pb), Some(pa)) = (pts.get(back), pts.get(ahead)) else {
            continue;
        };
        let run = pa.1 - pb.1;
        if run >= MIN_GRADIENT_RUN_M {
            if let Some(slot) = out.get_mut(k) {
                *slot = Some(clamp_gradient((pa.2 - pb.2) / run));
            }
        }
    }
    out
}

/// Cumulative distance per sample: the distance channel if present, else speed integrated
/// over time (`speed[i]·(t[i] - t[i-1])`, a missing speed adds nothing). `None` without
/// either channel.
pub fn cumulative_distance(session: &Session) -> Option<Vec<Option<f64>>> {
    if let Some(d) = &session.distance {
        let mut v = d.values.clone();
        v.resize(session.t.len(), None);
        return Some(v);
    }
    let speed = session.speed.as_ref()?;
    let mut out = Vec::with_capacity(session.t.len());
    let mut acc = 0.0;
    for i in 0..session.t.len() {
        if i > 0 {
            let dt = match (session.t.get(i - 1), session.t.get(i)) {
                (Some(a), Some(b)) if b > a => b - a,
                _ => 0.0,
            };
            if let Some(v) = speed.get(i).filter(|v| v.is_finite() && *v >= 0.0) {
                acc += v * dt;
            }
        }
        out.push(Some(acc));
    }
    Some(out)
}

/// Whether a hill-adjusted speed trace was corrected for gradient.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HillAdjustment {
    /// Altitude was present; samples with a known gradient were corrected.
    Adjusted,
    /// The session has no altitude: the values are the raw speed, unchanged.
    RawNoAltitude,
}

/// Speed corrected to its flat equivalent, sample by sample.
#[derive(Debug, Clone, PartialEq)]
pub struct HillAdjustedSpeed {
    /// One value per sample, m/s. `None` where the speed sample is missing.
    pub values: Vec<Option<f64>>,
    /// Whether the trace was corrected at all.
    pub adjustment: HillAdjustment,
    /// Samples with a speed but no known gradient (left as raw speed).
    pub samples_without_gradient: usize,
}

/// Hill-adjusted speed (glossary: hill-adjusted pace): `speed·cost_ratio(gradient)` at each
/// sample (Minetti et al. 2002, J Appl Physiol 93:1039).
///
/// Where the session has no altitude the raw speed is returned with
/// [`HillAdjustment::RawNoAltitude`]. Where altitude exists but a sample's gradient is unknown
/// the raw speed is kept there and counted in `samples_without_gradient`. `None` when the
/// session has no speed channel. O(n).
pub fn hill_adjusted_speed(session: &Session) -> Option<HillAdjustedSpeed> {
    session.speed.as_ref()?;
    hill_adjusted_speed_with(session, gradients(session).as_deref())
}

/// [`hill_adjusted_speed`] with the session's gradients already computed (`grads` as
/// returned by [`gradients`]: `None` when the session has no altitude).
pub fn hill_adjusted_speed_with(
    session: &Session,
    grads: Option<&[Option<f64>]>,
) -> Option<HillAdjustedSpeed> {
    let speed = session.speed.as_ref()?;
    let grads = match grads {
        Some(g) => g,
        None => {
            return Some(HillAdjustedSpeed {
                values: speed.values.clone(),
                adjustment: HillAdjustment::RawNoAltitude,
                samples_without_gradient: speed.present(),
            })
        }
    };
    let mut without = 0usize;
    let values = speed
        .values
        .iter()
        .enumerate()
        .map(|(k, v)| {
            let v = (*v)?;
            match grads.get(k).copied().flatten() {
                Some(g) => Some(flat_equivalent_speed(v, g)),
                None => {
                    without += 1;
                    Some(v)
                }
            }
        })
        .collect();
    Some(HillAdjustedSpeed {
        values,
        adjustment: HillAdjustment::Adjusted,
        samples_without_gradient: without,
    })
}
