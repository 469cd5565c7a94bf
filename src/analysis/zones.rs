//! Heart-rate and pace zones, and time spent in each.
//!
//! Default heart-rate zones use the heart-rate reserve (Karvonen MJ, Kentala E, Mustala O,
//! Ann Med Exp Biol Fenn 1957;35(3):307–315): `THR = rest + k·(max − rest)`. The zone
//! boundaries themselves (k = 0.6, 0.7, 0.8, 0.9) and the pace bands are common coaching
//! practice with no single published source; the names are our own. An athlete's
//! `hr_zones` override always wins.

use crate::model::{AthleteProfile, Zone};

use super::sampling::sample_dt;

/// Names of the five default zones, easiest first (ours).
pub const ZONE_NAMES: [&str; 5] = ["recovery", "easy", "steady", "hard", "max"];

/// Heart-rate-reserve fractions bounding the five default HR zones (common coaching
/// practice): recovery rest–60 %, easy 60–70 %, steady 70–80 %, hard 80–90 %, max 90–100 %.
/// 60 % is about Karvonen's training threshold.
pub const HR_RESERVE_BOUNDS: [f64; 6] = [0.0, 0.6, 0.7, 0.8, 0.9, 1.0];

/// Fractions of HR max bounding the five HR zones when resting HR is unknown (common
/// coaching practice): recovery 50–60 %, easy 60–70 %, steady 70–80 %, hard 80–90 %,
/// max 90–100 %. HR below 50 % of max falls in no zone.
pub const HR_MAX_BOUNDS: [f64; 6] = [0.5, 0.6, 0.7, 0.8, 0.9, 1.0];

/// Relative-intensity bounds (speed / threshold speed) of the five pace zones (common
/// coaching practice): recovery below 0.75, easy 0.75–0.87, steady 0.87–0.95,
/// hard 0.95–1.03 (around threshold), max above 1.03.
pub const PACE_RELATIVE_BOUNDS: [f64; 4] = [0.75, 0.87, 0.95, 1.03];

/// Upper bound of the top pace zone, m/s: the speed above which ingest treats GPS speed as
/// implausible (methods.md §12, common practice).
pub const PACE_ZONE_TOP_MPS: f64 = 12.5;

/// Typical error of age-predicted HR max, bpm: 7–11 (Robergs & Landwehr 2002, JEPonline
/// 5(2):1–10). Show a measured maximum whenever the profile has one.
pub const AGE_FORMULA_ERROR_BPM: (f64, f64) = (7.0, 11.0);

/// Standard error of the Tanaka estimate of HR max, bpm, shown beside every estimate.
// From memory: Tanaka, Monahan & Seals 2001 (J Am Coll Cardiol 37:153) give the spread of
// individual maxima around 208 − 0.7·age as about ±10 bpm; not checked against the paper.
// The published bound we rely on: age-based formulas have prediction errors of 7–11 bpm
// (Robergs & Landwehr 2002, JEPonline 5(2):1–10; methods.md §3, S), and 10 lies inside it.
pub const TANAKA_SE_BPM: f64 = 10.0;

/// The words shown beside HR zones, or numbers derived from them, when HR max is estimated
/// from age: `HR max 180 bpm estimated from age 40 (Tanaka et al. 2001, about ±10 bpm) ...`.
pub fn estimated_hr_max_words(hr_max: f64, age_years: f64) -> String {
    format!(
        "HR max {hr_max:.0} bpm estimated from age {age_years:.0} (Tanaka et al. 2001, about \
         ±{TANAKA_SE_BPM:.0} bpm; age formulas err by {:.0}-{:.0} bpm, Robergs & Landwehr 2002): \
         the HR zones are estimates too; a measured hr_max in athlete.toml replaces it",
        AGE_FORMULA_ERROR_BPM.0, AGE_FORMULA_ERROR_BPM.1
    )
}

/// [`estimated_hr_max_words`] when the HR zones of `profile` rest on the age estimate (no
/// `hr_max` and no `hr_zones` override, an age known); `None` otherwise.
pub fn hr_max_estimate_note(profile: &AthleteProfile, age_years: Option<f64>) -> Option<String> {
    match hr_zones(profile, age_years)?.basis {
        HrZoneBasis::HeartRateReserve(HrMaxSource::Tanaka { age_years })
        | HrZoneBasis::FractionOfMax(HrMaxSource::Tanaka { age_years }) => {
            Some(estimated_hr_max_words(tanaka_hr_max(age_years)?, age_years))
        }
        _ => None,
    }
}

/// The athlete's age in years on a date's year, from the profile's `birth_year`, as the
/// review computes it for the zones.
pub fn age_in_year(profile: &AthleteProfile, year: i32) -> Option<f64> {
    profile.birth_year.map(|y| f64::from(year - y))
}

/// Karvonen target heart rate: `rest + k·(max − rest)`, bpm (Karvonen et al. 1957).
/// `None` when `max <= rest` or an input is not finite. `k` is not clamped.
pub fn karvonen(rest: f64, max: f64, k: f64) -> Option<f64> {
    if ![rest, max, k].iter().all(|v| v.is_finite()) || max <= rest {
        return None;
    }
    Some(rest + k * (max - rest))
}

/// Age-predicted HR max `208 − 0.7·age` (Tanaka H, Monahan KD, Seals DR, J Am Coll Cardiol
/// 2001;37(1):153–156), about ±[`TANAKA_SE_BPM`]; errs by 7–11 bpm for an individual
/// (Robergs & Landwehr 2002). Every view that shows it, or zones from it, says it is an
/// estimate ([`hr_max_estimate_note`]).
/// `None` for a negative or non-finite age.
pub fn tanaka_hr_max(age_years: f64) -> Option<f64> {
    (age_years.is_finite() && age_years >= 0.0).then_some(208.0 - 0.7 * age_years)
}

/// Age-predicted HR max `220 − age` (Fox, Naughton & Haskell, Ann Clin Res 1971;3:404),
/// for comparison only: it was never derived from original research (Robergs & Landwehr
/// 2002). It equals [`tanaka_hr_max`] at age 40. `None` for a negative or non-finite age.
pub fn fox_hr_max(age_years: f64) -> Option<f64> {
    (age_years.is_finite() && age_years >= 0.0).then_some(220.0 - age_years)
}

fn zones_from_bounds(bounds: &[f64]) -> Vec<Zone> {
    bounds
        .windows(2)
        .zip(ZONE_NAMES.iter())
        .filter_map(|(w, name)| match w {
            [from, to] => Some(Zone {
                name: (*name).to_string(),
                from: *from,
                to: *to,
            }),
            _ => None,
        })
        .collect()
}

/// The five default HR zones by heart-rate reserve, bpm bounds (see [`HR_RESERVE_BOUNDS`]).
/// `None` when `max <= rest` or an input is not finite.
pub fn hr_zones_by_reserve(rest: f64, max: f64) -> Option<Vec<Zone>> {
    let bounds: Option<Vec<f64>> = HR_RESERVE_BOUNDS
        .iter()
        .map(|&k| karvonen(rest, max, k))
        .collect();
    Some(zones_from_bounds(&bounds?))
}

/// The five HR zones as fractions of HR max, bpm bounds (see [`HR_MAX_BOUNDS`]); the
/// fallback when resting HR is unknown. `None` for a non-positive or non-finite max.
pub fn hr_zones_by_max(max: f64) -> Option<Vec<Zone>> {
    if !max.is_finite() || max <= 0.0 {
        return None;
    }
    let bounds: Vec<f64> = HR_MAX_BOUNDS.iter().map(|k| k * max).collect();
    Some(zones_from_bounds(&bounds))
}

/// Where the HR max behind a set of zones came from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum HrMaxSource {
    /// The profile's measured `hr_max`.
    Profile,
    /// Estimated from age with [`tanaka_hr_max`] (± 7–11 bpm).
    Tanaka { age_years: f64 },
}

/// How a set of HR zones was obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum HrZoneBasis {
    /// The athlete's own `hr_zones` override.
    Override,
    /// Heart-rate reserve (Karvonen) from resting HR and HR max.
    HeartRateReserve(HrMaxSource),
    /// Fractions of HR max (resting HR unknown).
    FractionOfMax(HrMaxSource),
}

/// HR zones for an athlete, with how they were obtained.
#[derive(Debug, Clone, PartialEq)]
pub struct HrZones {
    /// Zones, easiest first, bpm bounds.
    pub zones: Vec<Zone>,
    /// Where they came from.
    pub basis: HrZoneBasis,
}

/// HR zones for `profile`: its `hr_zones` override when present and non-empty; otherwise
/// the five default zones by heart-rate reserve when `hr_rest` is known, or by fraction of
/// HR max when it is not. HR max is the profile's, or [`tanaka_hr_max`] of `age_years`
/// (the caller computes the age from `birth_year` and the session date; this function
/// reads no clock). `None` when no HR max can be had.
pub fn hr_zones(profile: &AthleteProfile, age_years: Option<f64>) -> Option<HrZones> {
    if let Some(z) = profile.hr_zones.as_ref().filter(|z| !z.is_empty()) {
        return Some(HrZones {
            zones: z.clone(),
            basis: HrZoneBasis::Override,
        });
    }
    let (max, source) = match profile.hr_max.filter(|m| m.is_finite() && *m > 0.0) {
        Some(m) => (m, HrMaxSource::Profile),
        None => {
            let age = age_years?;
            (tanaka_hr_max(age)?, HrMaxSource::Tanaka { age_years: age })
        }
    };
    if let Some(rest) = profile.hr_rest {
        if let Some(zones) = hr_zones_by_reserve(rest, max) {
            return Some(HrZones {
                zones,
                basis: HrZoneBasis::HeartRateReserve(source),
            });
        }
    }
    Some(HrZones {
        zones: hr_zones_by_max(max)?,
        basis: HrZoneBasis::FractionOfMax(source),
    })
}

/// The five pace zones from a threshold speed, as speed bounds in m/s, slowest first
/// (see [`PACE_RELATIVE_BOUNDS`]; the top zone ends at [`PACE_ZONE_TOP_MPS`], or at twice
/// the threshold speed if that is higher, so the zone is never inverted).
/// `None` for a non-positive or non-finite threshold speed.
pub fn pace_zones(threshold_speed_mps: f64) -> Option<Vec<Zone>> {
    if !threshold_speed_mps.is_finite() || threshold_speed_mps <= 0.0 {
        return None;
    }
    let mut bounds = vec![0.0];
    bounds.extend(PACE_RELATIVE_BOUNDS.iter().map(|r| r * threshold_speed_mps));
    bounds.push(PACE_ZONE_TOP_MPS.max(threshold_speed_mps * 2.0));
    Some(zones_from_bounds(&bounds))
}

fn zone_index(v: f64, zones: &[Zone]) -> Option<usize> {
    let last = zones.len().checked_sub(1)?;
    zones.iter().enumerate().position(|(k, z)| {
        let (lo, hi) = if z.from <= z.to {
            (z.from, z.to)
        } else {
            (z.to, z.from)
        };
        (v >= lo && v < hi) || (k == last && v == hi)
    })
}

/// Seconds spent in each zone (one entry per zone, in the given order).
///
/// Sample `i > 0` stands for its capped spacing (see [`super::sampling`]) and counts when
/// `usable[i]` is true and `values[i]` is present. A value belongs to the first zone with
/// `from <= v < to`; the last zone also takes `v == to`. Values in no zone are not counted,
/// so the sum can be less than the usable time.
pub fn time_in_zones(
    t: &[f64],
    values: &[Option<f64>],
    usable: &[bool],
    zones: &[Zone],
) -> Vec<f64> {
    let mut out = vec![0.0; zones.len()];
    for i in 1..t.len() {
        if !usable.get(i).copied().unwrap_or(false) {
            continue;
        }
        let Some(v) = values.get(i).copied().flatten() else {
            continue;
        };
        if let Some(slot) = zone_index(v, zones).and_then(|k| out.get_mut(k)) {
            *slot += sample_dt(t, i);
        }
    }
    out
}
