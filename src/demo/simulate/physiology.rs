//! The body model: hill cost, heart-rate response to effort, step rate, and the athlete's
//! numbers with their fall-backs.

use chrono::{DateTime, Datelike, Utc};

use crate::model::{AthleteProfile, Target};

/// The energy cost of running on a gradient and its ratio to the flat: the same published
/// polynomial the analysis uses (Minetti et al. 2002, J Appl Physiol 93:1039; checked
/// against the paper's values in tests/formulas_gradient.rs).
pub use crate::analysis::gradient::{cost_ratio as hill_cost_ratio, minetti_cr};

/// Exponent of the speed loss on hills: speed = target * (Cr(0)/Cr(i))^0.7.
///
/// Our own model choice. A runner holding constant *metabolic power* would use exponent 1;
/// runners in practice hold neither pace nor power but something between (they work harder
/// uphill and ease off downhill), so the effort still rises uphill by (Cr(i)/Cr(0))^0.3.
pub const HILL_SPEED_EXPONENT: f64 = 0.7;

/// Largest downhill speed-up over the flat target. Our own choice: footing and braking stop
/// runners from using the whole metabolic saving on a descent.
pub const MAX_DOWNHILL_SPEEDUP: f64 = 1.15;

/// The speed multiplier a runner applies on a gradient.
pub fn hill_speed_factor(grade: f64) -> f64 {
    (1.0 / hill_cost_ratio(grade))
        .powf(HILL_SPEED_EXPONENT)
        .min(MAX_DOWNHILL_SPEEDUP)
}

/// Largest downhill speed-up of a runner holding an even effort on hills. Our own choice:
/// above the constant-power speed-up on an 8 % descent (about 1.53), so such descents are
/// run at even effort; steeper ones are braked.
pub const EVEN_EFFORT_MAX_SPEEDUP: f64 = 1.6;

/// The speed multiplier of a runner holding an even effort on hills (constant metabolic
/// power: speed times `Cr(i)/Cr(0)` stays at the flat speed), for
/// [`super::Conditions::even_hill_effort`]. Source: Minetti et al. 2002, J Appl Physiol
/// 93:1039 (the cost polynomial).
pub fn even_effort_speed_factor(grade: f64) -> f64 {
    (1.0 / hill_cost_ratio(grade)).min(EVEN_EFFORT_MAX_SPEEDUP)
}

/// Steady-state heart rate as a fraction of heart-rate reserve for a relative intensity
/// (hill-adjusted speed / threshold speed), before the soft cap.
///
/// Common coaching practice (no published source): heart rate rises roughly linearly with
/// running speed over the submaximal range; easy running (~0.75 of threshold speed) sits near
/// 70 % of reserve and threshold near 89 %. Standing still during a session sits at 20 % of
/// reserve (a heart that has been working does not fall to resting rate at once).
pub fn hr_fraction(intensity: f64) -> f64 {
    let i = intensity.max(0.0);
    if i <= 0.75 {
        0.20 + (0.50 / 0.75) * i
    } else {
        0.70 + 0.76 * (i - 0.75)
    }
}

/// Knee of the soft cap on the heart-rate-reserve fraction.
const CAP_KNEE: f64 = 0.92;
/// Asymptote of the soft cap: the model's heart rate never quite reaches the maximum, so the
/// HR trace has no flat clamped plateau (a plateau would hide the HR peak).
const CAP_TOP: f64 = 0.995;

/// Smoothly limit a reserve fraction below [`CAP_TOP`]; identity below the knee.
pub fn soft_cap(fraction: f64) -> f64 {
    if fraction <= CAP_KNEE {
        fraction
    } else {
        let w = CAP_TOP - CAP_KNEE;
        CAP_KNEE + w * (1.0 - (-(fraction - CAP_KNEE) / w).exp())
    }
}

/// Inverse of `soft_cap(hr_fraction(i))`: the intensity whose steady state is `fraction`.
pub fn intensity_for_fraction(fraction: f64) -> f64 {
    let w = CAP_TOP - CAP_KNEE;
    let f = if fraction <= CAP_KNEE {
        fraction
    } else {
        let x = ((fraction - CAP_KNEE) / w).min(0.999);
        CAP_KNEE - w * (1.0 - x).ln()
    };
    if f <= 0.70 {
        ((f - 0.20) * 0.75 / 0.50).max(0.0)
    } else {
        0.75 + (f - 0.70) / 0.76
    }
}

/// Step rate (steps per minute, both feet) for a speed in m/s.
///
/// From memory: recreational runners step at roughly 155-165 /min at easy pace and
/// 175-185 /min at fast pace, rising about linearly with speed; walking at ~1.4 m/s is about
/// 110-120 /min, and walkers switch to running near 2 m/s. Standing still is 0 steps/min: a
/// measurement of no stepping, not a missing sample.
pub fn cadence_for_speed(v: f64) -> f64 {
    if v < 0.3 {
        0.0
    } else if v < 1.9 {
        100.0 + 12.0 * v
    } else {
        (155.0 + 9.0 * (v - 2.5)).clamp(140.0, 200.0)
    }
}

/// Speed relative to threshold for named paces missing from a profile.
///
/// Common coaching practice (no published source): easy ~0.78, marathon ~0.90, half ~0.97,
/// threshold 1.0, 10 km ~1.03, 5 km ~1.07, 3 km ~1.12, mile ~1.20 of threshold speed.
fn pace_ratio(name: &str) -> Option<f64> {
    Some(match name.trim().to_ascii_lowercase().as_str() {
        "recovery" => 0.70,
        "easy" => 0.78,
        "long" => 0.80,
        "steady" => 0.86,
        "marathon" => 0.90,
        "half" => 0.97,
        "threshold" | "tempo" => 1.0,
        "10k" => 1.03,
        "5k" => 1.07,
        "3k" => 1.12,
        "1500" | "mile" => 1.20,
        _ => return None,
    })
}

/// The athlete's numbers the model needs, with fall-backs filled in.
#[derive(Debug, Clone)]
pub(crate) struct Physio {
    pub hr_rest: f64,
    pub hr_max: f64,
    pub v_threshold: f64,
    pub v_easy: f64,
}

impl Physio {
    /// Resolve a profile. Resting HR defaults to 55; maximum HR to Tanaka (208 - 0.7 * age)
    /// when the birth year is known, else 185.
    // Source: Tanaka, Monahan & Seals 2001, J Am Coll Cardiol 37:153 (HRmax = 208 - 0.7 age).
    pub fn from_profile(profile: &AthleteProfile, start: DateTime<Utc>) -> Physio {
        let hr_rest = profile.hr_rest.filter(|v| *v > 20.0).unwrap_or(55.0);
        let tanaka = profile.birth_year.map(|y| {
            let age = (start.year() - y).clamp(5, 100) as f64;
            208.0 - 0.7 * age
        });
        let mut hr_max = profile
            .hr_max
            .filter(|v| *v > 60.0)
            .or(tanaka)
            .unwrap_or(185.0);
        if hr_max < hr_rest + 40.0 {
            hr_max = hr_rest + 40.0;
        }
        // Threshold from the profile, else from a named race pace, else 3.6 m/s (4:38/km).
        let v_threshold = profile
            .threshold_speed_mps
            .or_else(|| {
                ["threshold", "half", "10k", "5k", "marathon", "easy"]
                    .iter()
                    .find_map(|n| Some(profile.pace(n)? / pace_ratio(n)?))
            })
            .filter(|v| *v > 0.5)
            .unwrap_or(3.6);
        let v_easy = profile
            .pace("easy")
            .filter(|v| *v > 0.5)
            .unwrap_or(v_threshold * 0.78);
        Physio {
            hr_rest,
            hr_max,
            v_threshold,
            v_easy,
        }
    }

    /// Speed for a named pace: the profile's, else a ratio of threshold, else threshold.
    pub fn named_speed(&self, profile: &AthleteProfile, name: &str) -> f64 {
        profile
            .pace(name)
            .filter(|v| *v > 0.0)
            .unwrap_or_else(|| self.v_threshold * pace_ratio(name).unwrap_or(1.0))
    }

    /// Heart rate in bpm for a reserve fraction.
    pub fn hr_at(&self, fraction: f64) -> f64 {
        self.hr_rest + (self.hr_max - self.hr_rest) * fraction
    }

    /// A flat-ground speed whose steady-state HR lands in the middle of a band (drift
    /// ignored; the runner corrects with feedback later).
    pub fn speed_for_hr(&self, low: f64, high: f64) -> f64 {
        let mid = 0.5 * (low + high);
        let frac = ((mid - self.hr_rest) / (self.hr_max - self.hr_rest)).clamp(0.0, 0.99);
        (intensity_for_fraction(frac) * self.v_threshold).max(0.0)
    }

    /// The speed a target asks for, if it names one (pace band, named pace or HR band).
    pub fn target_speed(&self, profile: &AthleteProfile, target: &Target) -> Option<f64> {
        match target {
            Target::Open => None,
            Target::HrRange { low_bpm, high_bpm } => Some(self.speed_for_hr(*low_bpm, *high_bpm)),
            Target::NamedPace { name, .. } => Some(self.named_speed(profile, name)),
            Target::PaceRange { .. } => target.centre_speed(profile),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn minetti_values_match_methods_table() {
        // Values computed from the formula (methods.md §1, tag C).
        // Source: Minetti et al. 2002, J Appl Physiol 93:1039
        assert!((minetti_cr(0.0) - 3.6).abs() < 1e-12);
        assert!((minetti_cr(0.10) - 5.968).abs() < 0.001);
        assert!((minetti_cr(-0.10) - 2.152).abs() < 0.001);
        assert!((minetti_cr(0.20) - 9.007).abs() < 0.001);
        assert!((minetti_cr(-0.20) - 1.800).abs() < 0.001);
        assert!((minetti_cr(0.45) - 19.43).abs() < 0.01);
        assert!((minetti_cr(0.9) - minetti_cr(0.45)).abs() < 1e-12);
        // 3.0 m/s at +0.10 is 4.974 m/s flat-equivalent.
        assert!((3.0 * hill_cost_ratio(0.10) - 4.974).abs() < 0.001);
    }

    #[test]
    fn hr_fraction_anchors_and_inverse() {
        assert!((hr_fraction(0.75) - 0.70).abs() < 1e-12);
        assert!((soft_cap(hr_fraction(1.0)) - 0.89).abs() < 0.005);
        for i in [0.0, 0.3, 0.6, 0.8, 1.0, 1.1, 1.3] {
            let f = soft_cap(hr_fraction(i));
            assert!((intensity_for_fraction(f) - i).abs() < 1e-6, "i={i}");
            assert!(f < 0.995);
        }
    }

    #[test]
    fn cadence_rises_with_speed() {
        assert_eq!(cadence_for_speed(0.0), 0.0);
        let walk = cadence_for_speed(1.4);
        assert!((110.0..=120.0).contains(&walk));
        assert!(cadence_for_speed(3.0) < cadence_for_speed(5.0));
        assert!(cadence_for_speed(12.0) <= 200.0);
    }
}
