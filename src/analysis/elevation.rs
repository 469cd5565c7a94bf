//! Elevation gain and loss with a hysteresis, so that altimeter jitter does not add up.

use crate::model::Channel;

/// Default hysteresis, metres. Our choice (common practice, no published source): above the
/// ±1 m jitter of a barometric altimeter, small enough to keep a 3 m rise.
pub const DEFAULT_HYSTERESIS_M: f64 = 3.0;

#[derive(Clone, Copy)]
enum Trend {
    Unknown { low: f64, high: f64 },
    Up { anchor: f64, extreme: f64 },
    Down { anchor: f64, extreme: f64 },
}

/// Total elevation gain and loss, metres, as `(gain, loss)`, both non-negative.
///
/// A rise or fall counts only once it exceeds `hysteresis_m` from the last turning point;
/// it then counts in full from that turning point to the next one (so a clean 100 m climb
/// counts as 100 m, not 100 m minus the hysteresis). Missing and non-finite samples are
/// skipped. A negative or non-finite hysteresis counts as 0. Smooth noisy (GPS) altitude
/// first, e.g. with [`super::gradient::smooth_altitude`].
pub fn gain_loss(alt: &Channel, hysteresis_m: f64) -> (f64, f64) {
    let h = if hysteresis_m.is_finite() {
        hysteresis_m.max(0.0)
    } else {
        0.0
    };
    let (mut gain, mut loss) = (0.0, 0.0);
    let mut state: Option<Trend> = None;
    for v in alt
        .values
        .iter()
        .flatten()
        .copied()
        .filter(|v| v.is_finite())
    {
        state = Some(match state {
            None => Trend::Unknown { low: v, high: v },
            Some(Trend::Unknown { low, high }) => {
                if v - low > h {
                    Trend::Up {
                        anchor: low,
                        extreme: v,
                    }
                } else if high - v > h {
                    Trend::Down {
                        anchor: high,
                        extreme: v,
                    }
                } else {
                    Trend::Unknown {
                        low: low.min(v),
                        high: high.max(v),
                    }
                }
            }
            Some(Trend::Up { anchor, extreme }) => {
                if v >= extreme {
                    Trend::Up { anchor, extreme: v }
                } else if extreme - v > h {
                    gain += extreme - anchor;
                    Trend::Down {
                        anchor: extreme,
                        extreme: v,
                    }
                } else {
                    Trend::Up { anchor, extreme }
                }
            }
            Some(Trend::Down { anchor, extreme }) => {
                if v <= extreme {
                    Trend::Down { anchor, extreme: v }
                } else if v - extreme > h {
                    loss += anchor - extreme;
                    Trend::Up {
                        anchor: extreme,
                        extreme: v,
                    }
                } else {
                    Trend::Down { anchor, extreme }
                }
            }
        });
    }
    match state {
        Some(Trend::Up { anchor, extreme }) => gain += extreme - anchor,
        Some(Trend::Down { anchor, extreme }) => loss += anchor - extreme,
        _ => {}
    }
    (gain, loss)
}
