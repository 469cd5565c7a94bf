//! Shared sample-spacing rule for the formulas that integrate over time (load, zones,
//! decoupling).
//!
//! Each sample `i > 0` stands for the interval from `t[i-1]` to `t[i]` (the value the device
//! reports at the end of the interval). The spacing is capped so that a recording gap or an
//! unflagged pause does not inflate a time-weighted sum.

/// Longest spacing one sample may stand for, seconds.
///
/// Our choice (common practice, no published source): 10 s is longer than any normal
/// recording rhythm (1 s or "smart" recording at up to ~8 s) and short enough that a gap of
/// minutes counts as at most 10 s.
pub const MAX_SAMPLE_DT_S: f64 = 10.0;

/// The capped time sample `i` stands for, seconds: `min(t[i] - t[i-1], MAX_SAMPLE_DT_S)`.
///
/// 0 for `i == 0`, for an index past the end, and for a non-positive or non-finite spacing.
pub fn sample_dt(t: &[f64], i: usize) -> f64 {
    if i == 0 {
        return 0.0;
    }
    match (t.get(i - 1), t.get(i)) {
        (Some(&a), Some(&b)) => {
            let dt = b - a;
            if dt.is_finite() && dt > 0.0 {
                dt.min(MAX_SAMPLE_DT_S)
            } else {
                0.0
            }
        }
        _ => 0.0,
    }
}

/// True when `mask` is absent or `mask[i]` is true. An index past the end of a present mask
/// counts as not usable.
pub fn mask_allows(mask: Option<&[bool]>, i: usize) -> bool {
    match mask {
        None => true,
        Some(m) => m.get(i).copied().unwrap_or(false),
    }
}
