//! Training load: Banister TRIMP per session, and the history-side load models
//! (acute/chronic ratio, impulse-response fitness and fatigue).
//!
//! Sources (methods.md §2, §9, §10):
//! - Morton RH, Fitz-Clarke JR, Banister EW. *Modeling human performance in running.*
//!   J Appl Physiol 1990;69(3):1171–1177; Banister EW 1991, in *Physiological Testing of the
//!   High-Performance Athlete*, Human Kinetics, pp. 403–424 (TRIMP).
//! - Gabbett, BJSM 2016;50:273–280 (ratio bands); Williams S, West S, Cross MJ, Stokes KA,
//!   BJSM 2017;51(3):209–210 (EWMA ratio).
//! - Banister EW, Calvert TW, Savage MV, Bach T. Aust J Sports Med 1975;7:57–61
//!   (impulse-response model).

use crate::model::{Channel, Sex};

use super::sampling::{mask_allows, sample_dt};

/// TRIMP weighting coefficients `(a, b)` for men: `a = 0.64`, `b = 1.92` (Banister 1991).
pub const TRIMP_MEN: (f64, f64) = (0.64, 1.92);
/// TRIMP weighting coefficients `(a, b)` for women: `a = 0.86`, `b = 1.67` (Banister 1991).
pub const TRIMP_WOMEN: (f64, f64) = (0.86, 1.67);

fn sex_weight(hrr: f64, (a, b): (f64, f64)) -> f64 {
    hrr * a * (b * hrr).exp()
}

/// Heart-rate reserve fraction `(hr - rest)/(max - rest)`, clamped to [0, 1].
/// `None` when `max <= rest` or an input is not finite.
pub fn heart_rate_reserve(hr: f64, rest: f64, max: f64) -> Option<f64> {
    if !(hr.is_finite() && rest.is_finite() && max.is_finite()) || max <= rest {
        return None;
    }
    Some(((hr - rest) / (max - rest)).clamp(0.0, 1.0))
}

/// TRIMP per minute at heart-rate-reserve fraction `hrr`: `HRr·a·e^(b·HRr)`
/// (Banister 1991; men a = 0.64, b = 1.92; women a = 0.86, b = 1.67).
///
/// `hrr` is clamped to [0, 1] (NaN counts as 0). For [`Sex::Unspecified`] we use the mean
/// of the men's and women's weights at the same `hrr`: our choice, not published; it sits
/// between the two curves (e.g. 1.149 vs 1.060 men / 1.238 women at HRr = 0.5625).
pub fn trimp_minute_weight(hrr: f64, sex: Sex) -> f64 {
    let hrr = if hrr.is_nan() {
        0.0
    } else {
        hrr.clamp(0.0, 1.0)
    };
    match sex {
        Sex::Male => sex_weight(hrr, TRIMP_MEN),
        Sex::Female => sex_weight(hrr, TRIMP_WOMEN),
        Sex::Unspecified => 0.5 * (sex_weight(hrr, TRIMP_MEN) + sex_weight(hrr, TRIMP_WOMEN)),
    }
}

/// Banister TRIMP summed sample by sample: `Σ D·HRr·a·e^(b·HRr)` with D in minutes.
///
/// Sample `i > 0` stands for the interval `t[i-1]..t[i]` with its spacing capped at
/// [`super::sampling::MAX_SAMPLE_DT_S`] (so gaps do not inflate the load) and its own HR.
/// Samples with a missing HR, or where `mask` is given and false (or shorter than the data),
/// add nothing. HRr is clamped to [0, 1].
///
/// `None` when `max <= rest`, an input is not finite, or no sample contributes. Because the
/// weighting is convex this is not the same as [`trimp_from_average`] (methods.md §2).
pub fn trimp_from_samples(
    t: &[f64],
    hr: &Channel,
    mask: Option<&[bool]>,
    rest: f64,
    max: f64,
    sex: Sex,
) -> Option<f64> {
    heart_rate_reserve(rest, rest, max)?;
    let mut total = 0.0;
    let mut counted = 0.0;
    for i in 1..t.len() {
        if !mask_allows(mask, i) {
            continue;
        }
        let Some(h) = hr.get(i) else { continue };
        let Some(hrr) = heart_rate_reserve(h, rest, max) else {
            continue;
        };
        let dt = sample_dt(t, i);
        if dt <= 0.0 {
            continue;
        }
        total += dt / 60.0 * trimp_minute_weight(hrr, sex);
        counted += dt;
    }
    (counted > 0.0).then_some(total)
}

/// Banister TRIMP from a duration and an average HR: `minutes·HRr·a·e^(b·HRr)`.
///
/// `None` when `max <= rest`, an input is not finite, or `minutes` is negative.
pub fn trimp_from_average(minutes: f64, avg_hr: f64, rest: f64, max: f64, sex: Sex) -> Option<f64> {
    if !minutes.is_finite() || minutes < 0.0 {
        return None;
    }
    let hrr = heart_rate_reserve(avg_hr, rest, max)?;
    Some(minutes * trimp_minute_weight(hrr, sex))
}

// ---------------------------------------------------------------------------------------
// Acute/chronic ratio (history side)
// ---------------------------------------------------------------------------------------

/// Acute window, days (Gabbett 2016; Williams et al. 2017).
pub const ACUTE_DAYS: usize = 7;
/// Chronic window, days (Gabbett 2016; Williams et al. 2017).
pub const CHRONIC_DAYS: usize = 28;

/// Lower edge of the ratio band usually shown as moderate, 0.8 (Gabbett, BJSM 2016;50:273).
pub const ACUTE_CHRONIC_BAND_LOW: f64 = 0.8;
/// Upper edge of the ratio band usually shown as moderate, 1.3 (Gabbett, BJSM 2016;50:273).
pub const ACUTE_CHRONIC_BAND_HIGH: f64 = 1.3;
/// Ratio at and above which the usual caution band starts, 1.5 (Gabbett, BJSM 2016;50:273).
pub const ACUTE_CHRONIC_CAUTION: f64 = 1.5;

/// One-line criticism to show next to the ratio.
pub const ACUTE_CHRONIC_CRITICISM: &str = "Impellizzeri et al. 2020: the acute/chronic ratio \
mostly rescales acute load, its bands are arbitrary and it has no proven predictive value; \
shown as a description, not an injury-risk prediction.";

/// Where a ratio sits against the Gabbett 2016 bands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AcuteChronicBand {
    /// Below 0.8.
    Below,
    /// 0.8 to 1.3 inclusive.
    Within,
    /// Above 1.3 and below 1.5.
    Above,
    /// 1.5 or more.
    Caution,
}

/// Place a ratio in the Gabbett 2016 bands (0.8–1.3, ≥ 1.5 caution). `None` for a
/// non-finite ratio.
pub fn acute_chronic_band(ratio: f64) -> Option<AcuteChronicBand> {
    if !ratio.is_finite() {
        return None;
    }
    Some(if ratio >= ACUTE_CHRONIC_CAUTION {
        AcuteChronicBand::Caution
    } else if ratio > ACUTE_CHRONIC_BAND_HIGH {
        AcuteChronicBand::Above
    } else if ratio >= ACUTE_CHRONIC_BAND_LOW {
        AcuteChronicBand::Within
    } else {
        AcuteChronicBand::Below
    })
}

fn clean_load(l: f64) -> f64 {
    if l.is_finite() && l > 0.0 {
        l
    } else {
        0.0
    }
}

/// Exponentially weighted moving average (Williams et al., BJSM 2017;51:209):
/// `E_t = λ·L_t + (1 − λ)·E_{t−1}` with `λ = 2/(N + 1)` and `E_{−1} = seed`.
///
/// One output per input day. `n_days` below 1 counts as 1 (λ = 1: no memory). Negative or
/// non-finite loads and seed count as 0.
pub fn ewma(loads: &[f64], n_days: usize, seed: f64) -> Vec<f64> {
    let lambda = 2.0 / (n_days.max(1) as f64 + 1.0);
    let mut e = clean_load(seed);
    loads
        .iter()
        .map(|&l| {
            e = lambda * clean_load(l) + (1.0 - lambda) * e;
            e
        })
        .collect()
}

/// Seed used by [`acute_chronic_ewma`]: the mean of the first 7 days of data (of all days
/// when there are fewer than 7). 0 for no data.
pub fn acute_chronic_seed(daily: &[f64]) -> f64 {
    let first: Vec<f64> = daily
        .iter()
        .take(ACUTE_DAYS)
        .map(|&l| clean_load(l))
        .collect();
    if first.is_empty() {
        0.0
    } else {
        first.iter().sum::<f64>() / first.len() as f64
    }
}

/// EWMA acute/chronic ratio per day (Williams et al., BJSM 2017;51:209): acute N = 7
/// (λ = 0.25) over chronic N = 28 (λ = 2/29).
///
/// **Seed rule:** both averages start from the mean of the first 7 days of data
/// ([`acute_chronic_seed`]). The seed changes the result (methods.md §9: 21 days at 40 then
/// 7 at 60 gives 1.198 seeded from the first day but 1.350 seeded from 0); a weekly mean is
/// less sensitive to what happened on day one than the first day alone.
///
/// `None` on the first 27 days (no full chronic window yet) and where the chronic average
/// is 0. `daily` is one load per calendar day, rest days as 0.
pub fn acute_chronic_ewma(daily: &[f64]) -> Vec<Option<f64>> {
    acute_chronic_ewma_seeded(daily, acute_chronic_seed(daily))
}

/// As [`acute_chronic_ewma`] but with an explicit starting value for both averages.
pub fn acute_chronic_ewma_seeded(daily: &[f64], seed: f64) -> Vec<Option<f64>> {
    let acute = ewma(daily, ACUTE_DAYS, seed);
    let chronic = ewma(daily, CHRONIC_DAYS, seed);
    acute
        .iter()
        .zip(chronic.iter())
        .enumerate()
        .map(|(day, (&a, &c))| (day + 1 >= CHRONIC_DAYS && c > 0.0).then(|| a / c))
        .collect()
}

/// Rolling-average acute/chronic ratio per day, coupled (Gabbett 2016; methods.md §9):
/// acute = mean of the last 7 days, chronic = mean of the last 28 days (the acute week
/// inside it). `None` on the first 27 days and where the chronic mean is 0.
pub fn rolling_acute_chronic(daily: &[f64]) -> Vec<Option<f64>> {
    rolling_ratio(daily, false)
}

/// Rolling-average acute/chronic ratio per day, uncoupled (Windt & Gabbett 2018):
/// chronic = mean of days t−27..t−7, the 21 days before the acute week.
/// `None` on the first 27 days and where the chronic mean is 0.
pub fn rolling_acute_chronic_uncoupled(daily: &[f64]) -> Vec<Option<f64>> {
    rolling_ratio(daily, true)
}

fn rolling_ratio(daily: &[f64], uncoupled: bool) -> Vec<Option<f64>> {
    // prefix[k] = sum of the first k loads
    let mut prefix = Vec::with_capacity(daily.len() + 1);
    prefix.push(0.0);
    let mut acc = 0.0;
    for &l in daily {
        acc += clean_load(l);
        prefix.push(acc);
    }
    let sum = |from: usize, to: usize| -> Option<f64> { Some(prefix.get(to)? - prefix.get(from)?) };
    (0..daily.len())
        .map(|day| {
            let end = day + 1;
            let start = end.checked_sub(CHRONIC_DAYS)?;
            let acute = sum(end - ACUTE_DAYS, end)? / ACUTE_DAYS as f64;
            let chronic = if uncoupled {
                sum(start, end - ACUTE_DAYS)? / (CHRONIC_DAYS - ACUTE_DAYS) as f64
            } else {
                sum(start, end)? / CHRONIC_DAYS as f64
            };
            (chronic > 0.0).then(|| acute / chronic)
        })
        .collect()
}

// ---------------------------------------------------------------------------------------
// Impulse-response model (history side)
// ---------------------------------------------------------------------------------------

/// Default fitness time constant, days (coaching-practice default; methods.md §10).
pub const DEFAULT_TAU_FITNESS_DAYS: f64 = 42.0;
/// Default fatigue time constant, days (coaching-practice default; methods.md §10).
pub const DEFAULT_TAU_FATIGUE_DAYS: f64 = 7.0;
/// Default fitness gain k1.
pub const DEFAULT_K_FITNESS: f64 = 1.0;
/// Default fatigue gain k2 (the model is constrained to k1 < k2).
pub const DEFAULT_K_FATIGUE: f64 = 2.0;

/// One day of the impulse-response model (glossary: fitness, fatigue, readiness).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImpulseResponseDay {
    /// Fitness g: loads decayed with the long time constant.
    pub fitness: f64,
    /// Fatigue h: loads decayed with the short time constant.
    pub fatigue: f64,
    /// Readiness `k1·g − k2·h` (the model's performance p with p0 = 0).
    pub readiness: f64,
}

/// One daily update of the impulse-response model (Banister et al. 1975):
/// `g_t = g_{t−1}·e^(−1/τ1) + w_t`, `h_t = h_{t−1}·e^(−1/τ2) + w_t`, `p_t = k1·g_t − k2·h_t`.
///
/// `None` when a time constant is not positive or an input is not finite.
pub fn impulse_response_step(
    fitness: f64,
    fatigue: f64,
    load: f64,
    tau_fit: f64,
    tau_fat: f64,
    k1: f64,
    k2: f64,
) -> Option<ImpulseResponseDay> {
    let all_finite = [fitness, fatigue, load, tau_fit, tau_fat, k1, k2]
        .iter()
        .all(|v| v.is_finite());
    if !all_finite || tau_fit <= 0.0 || tau_fat <= 0.0 {
        return None;
    }
    let g = fitness * (-1.0 / tau_fit).exp() + load;
    let h = fatigue * (-1.0 / tau_fat).exp() + load;
    Some(ImpulseResponseDay {
        fitness: g,
        fatigue: h,
        readiness: k1 * g - k2 * h,
    })
}

/// The impulse-response model over a series of daily loads, starting from g = h = 0
/// (Banister et al., Aust J Sports Med 1975;7:57). Uses the `e^(−1/τ)` daily-update form,
/// whose steady state is about τ·w (not the rescaled `(w − a)/τ` form; methods.md §10).
///
/// One output per day. Non-finite or negative loads count as 0. `None` when a time constant
/// is not positive or a parameter is not finite. Defaults: [`DEFAULT_TAU_FITNESS_DAYS`],
/// [`DEFAULT_TAU_FATIGUE_DAYS`], [`DEFAULT_K_FITNESS`], [`DEFAULT_K_FATIGUE`].
pub fn fitness_fatigue(
    daily: &[f64],
    tau_fit: f64,
    tau_fat: f64,
    k1: f64,
    k2: f64,
) -> Option<Vec<ImpulseResponseDay>> {
    let mut state = impulse_response_step(0.0, 0.0, 0.0, tau_fit, tau_fat, k1, k2)?;
    let mut out = Vec::with_capacity(daily.len());
    for &w in daily {
        state = impulse_response_step(
            state.fitness,
            state.fatigue,
            clean_load(w),
            tau_fit,
            tau_fat,
            k1,
            k2,
        )?;
        out.push(state);
    }
    Some(out)
}
