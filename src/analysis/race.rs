//! Race-time formulas for the athlete history: Riegel's endurance law, the Daniels & Gilbert
//! equivalent VO2max, and the critical-speed model.

use super::trend;

/// Riegel's fatigue exponent (Riegel, American Scientist 1981;69(3):285–290).
pub const RIEGEL_EXPONENT: f64 = 1.06;

/// Predicted time for distance `d2` from a time `t1` over `d1`: `T2 = T1·(D2/D1)^1.06`
/// (Riegel PS, *Athletic records and human endurance*, American Scientist 1981;69(3):285–290).
///
/// A secondary source says the law holds for efforts of about 3.5 to 230 minutes; outside
/// that it is an extrapolation. `None` for non-positive or non-finite inputs.
pub fn riegel(t1: f64, d1: f64, d2: f64) -> Option<f64> {
    if ![t1, d1, d2].iter().all(|v| v.is_finite() && *v > 0.0) {
        return None;
    }
    Some(t1 * (d2 / d1).powf(RIEGEL_EXPONENT))
}

/// Oxygen cost of running at `v` metres per minute, mL·kg⁻¹·min⁻¹:
/// `−4.60 + 0.182258·v + 0.000104·v²` (Daniels & Gilbert, *Oxygen Power*, 1979).
pub fn daniels_gilbert_oxygen_cost(v_m_per_min: f64) -> f64 {
    -4.60 + 0.182258 * v_m_per_min + 0.000104 * v_m_per_min * v_m_per_min
}

/// Fraction of VO2max that can be held for `t_min` minutes:
/// `0.8 + 0.1894393·e^(−0.012778·t) + 0.2989558·e^(−0.1932605·t)`
/// (Daniels & Gilbert 1979). Above 1 for efforts shorter than about 11 minutes.
pub fn daniels_gilbert_fraction(t_min: f64) -> f64 {
    0.8 + 0.1894393 * (-0.012778 * t_min).exp() + 0.2989558 * (-0.1932605 * t_min).exp()
}

/// Shortest effort, seconds, for which the Daniels & Gilbert fraction F(t) is at most 1:
/// 661.8 s (11.03 min; computed from the formula, methods.md §4). Below it the model says
/// more than 100 % of VO2max can be held, so the equivalent VO2max of shorter efforts reads
/// high.
pub const DANIELS_GILBERT_MIN_S: f64 = 661.8;

/// The caveat shown with an equivalent VO2max from an effort shorter than
/// [`DANIELS_GILBERT_MIN_S`].
pub const SHORT_EFFORT_VO2MAX_CAVEAT: &str = "equivalent VO2max of efforts under 11 minutes \
reads high: the Daniels & Gilbert (1979) model lets more than all of VO2max be held for them \
(F(t) > 1), so take it as a rough guide only";

/// Whether an effort of `time_s` is shorter than the equivalent-VO2max model's range
/// (F(t) > 1, under about 11 minutes; [`DANIELS_GILBERT_MIN_S`]).
pub fn vo2max_beyond_model(time_s: f64) -> bool {
    time_s.is_finite() && time_s > 0.0 && daniels_gilbert_fraction(time_s / 60.0) > 1.0
}

/// "Equivalent VO2max" from a race: `VO2(d/t) / F(t)`, mL·kg⁻¹·min⁻¹
/// (Daniels J, Gilbert J, *Oxygen Power: Performance Tables for Distance Runners*, 1979).
///
/// Built on the raw formula; the printed tables sit 1–10 s slower (methods.md §4). For
/// efforts under about 11 minutes F(t) > 1 and the value is less trustworthy.
/// `None` for non-positive or non-finite inputs.
pub fn daniels_gilbert_vo2max(distance_m: f64, time_s: f64) -> Option<f64> {
    if ![distance_m, time_s]
        .iter()
        .all(|v| v.is_finite() && *v > 0.0)
    {
        return None;
    }
    let t_min = time_s / 60.0;
    let v = distance_m / t_min;
    let f = daniels_gilbert_fraction(t_min);
    (f > 0.0).then(|| daniels_gilbert_oxygen_cost(v) / f)
}

/// Lowest R² of the distance-on-time fit that [`critical_speed`] accepts.
///
/// Our choice: with three or more efforts the linear model usually fits with R² > 0.99
/// (methods.md §6 worked fit: 0.99998); below 0.95 the efforts do not describe one
/// distance-time line (a poor effort, or efforts outside the model's range).
pub const CS_MIN_R2: f64 = 0.95;

/// Fewest efforts [`critical_speed`] fits.
pub const CS_MIN_POINTS: usize = 3;

/// Shortest effort, seconds, for which [`predict_time_cs`] gives a time.
pub const CS_PREDICTION_MIN_S: f64 = 120.0;
/// Longest effort, seconds, for which [`predict_time_cs`] gives a time.
pub const CS_PREDICTION_MAX_S: f64 = 1800.0;

/// A critical-speed fit (glossary: critical speed, D′).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CsFit {
    /// Critical speed, m/s (the slope of distance on time).
    pub cs_mps: f64,
    /// D′, metres (the intercept).
    pub d_prime_m: f64,
    /// R² of the distance-on-time fit.
    pub r2: f64,
    /// Number of efforts used.
    pub n: usize,
}

/// Why [`critical_speed`] refused to give a fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CsRefusal {
    /// Fewer than [`CS_MIN_POINTS`] efforts.
    TooFewPoints { n: usize },
    /// An effort with a non-positive or non-finite time or distance (its index).
    InvalidPoint { index: usize },
    /// Every effort has the same duration, so no line can be fitted.
    SameDuration,
    /// The fitted critical speed is zero or negative.
    NonPositiveCs { cs_mps: f64 },
    /// The fitted D′ is zero or negative.
    NonPositiveDPrime { d_prime_m: f64 },
    /// The efforts do not lie on one line: R² below [`CS_MIN_R2`].
    PoorFit { r2: f64 },
}

impl std::fmt::Display for CsRefusal {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            CsRefusal::TooFewPoints { n } => write!(
                f,
                "need at least {CS_MIN_POINTS} efforts of different duration, have {n}"
            ),
            CsRefusal::InvalidPoint { index } => {
                write!(
                    f,
                    "effort {} has a non-positive time or distance",
                    index + 1
                )
            }
            CsRefusal::SameDuration => write!(f, "all efforts have the same duration"),
            CsRefusal::NonPositiveCs { cs_mps } => {
                write!(f, "fitted critical speed {cs_mps:.3} m/s is not positive")
            }
            CsRefusal::NonPositiveDPrime { d_prime_m } => {
                write!(f, "fitted D' {d_prime_m:.1} m is not positive")
            }
            CsRefusal::PoorFit { r2 } => write!(
                f,
                "efforts do not fit one distance-time line (R² {r2:.3} below {CS_MIN_R2})"
            ),
        }
    }
}

impl std::error::Error for CsRefusal {}

/// Critical speed and D′ from efforts `(time_s, distance_m)`: ordinary least squares of
/// distance on time, `D = CS·t + D′`, so `CS = Sxy/Sxx` and `D′ = D̄ − CS·t̄`
/// (Monod & Scherrer, Ergonomics 1965;8:329; Hill, Sports Med 1993;16:237; methods.md §6).
/// Other regressions (speed on 1/t, time on distance) give different estimates
/// (Patoz et al., Front Physiol 2021); this one is fixed.
///
/// Refuses with a reason when there are fewer than 3 efforts, an effort is not positive,
/// all durations are equal, CS or D′ comes out non-positive, or R² < [`CS_MIN_R2`].
/// Efforts of roughly 2 to 15 minutes suit the model best (Jones & Vanhatalo 2017).
pub fn critical_speed(points: &[(f64, f64)]) -> Result<CsFit, CsRefusal> {
    if points.len() < CS_MIN_POINTS {
        return Err(CsRefusal::TooFewPoints { n: points.len() });
    }
    if let Some(index) = points
        .iter()
        .position(|&(t, d)| !(t.is_finite() && d.is_finite() && t > 0.0 && d > 0.0))
    {
        return Err(CsRefusal::InvalidPoint { index });
    }
    let ts: Vec<f64> = points.iter().map(|p| p.0).collect();
    let ds: Vec<f64> = points.iter().map(|p| p.1).collect();
    let fit = trend::fit(&ts, &ds).ok_or(CsRefusal::SameDuration)?;
    if fit.slope <= 0.0 {
        return Err(CsRefusal::NonPositiveCs { cs_mps: fit.slope });
    }
    if fit.intercept <= 0.0 {
        return Err(CsRefusal::NonPositiveDPrime {
            d_prime_m: fit.intercept,
        });
    }
    if fit.r2 < CS_MIN_R2 {
        return Err(CsRefusal::PoorFit { r2: fit.r2 });
    }
    Ok(CsFit {
        cs_mps: fit.slope,
        d_prime_m: fit.intercept,
        r2: fit.r2,
        n: fit.n,
    })
}

/// Predicted time for `distance_m` from critical speed and D′: `(d − D′)/CS`, seconds.
///
/// Only meaningful for efforts of roughly 2 to 30 minutes ([`CS_PREDICTION_MIN_S`] to
/// [`CS_PREDICTION_MAX_S`]): shorter efforts are limited by more than D′, longer ones fall
/// below CS. `None` outside that range, for `cs <= 0`, `d_prime < 0` or non-finite input.
pub fn predict_time_cs(cs_mps: f64, d_prime_m: f64, distance_m: f64) -> Option<f64> {
    if ![cs_mps, d_prime_m, distance_m]
        .iter()
        .all(|v| v.is_finite())
        || cs_mps <= 0.0
        || d_prime_m < 0.0
    {
        return None;
    }
    let t = (distance_m - d_prime_m) / cs_mps;
    (CS_PREDICTION_MIN_S..=CS_PREDICTION_MAX_S)
        .contains(&t)
        .then_some(t)
}
