//! An athlete's profile as the roster's `athlete.toml` describes it, in SI units.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::units::Units;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Sex {
    Female,
    Male,
    #[default]
    Unspecified,
}

/// One heart-rate or pace zone: a name and a lower/upper bound.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Zone {
    pub name: String,
    pub from: f64,
    pub to: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AthleteProfile {
    /// Folder name: lowercase-hyphenated, e.g. `ines-aldana`.
    pub id: String,
    pub name: String,
    pub sex: Sex,
    pub birth_year: Option<i32>,
    pub hr_max: Option<f64>,
    pub hr_rest: Option<f64>,
    /// Threshold speed in m/s (parsed from `threshold_pace`).
    pub threshold_speed_mps: Option<f64>,
    pub units: Units,
    /// Named paces (`easy`, `marathon`, `half`, `10k`, `5k`, ...) as speeds in m/s.
    pub paces: BTreeMap<String, f64>,
    /// Heart-rate zones override, bpm bounds.
    pub hr_zones: Option<Vec<Zone>>,
}

impl AthleteProfile {
    /// A profile with nothing but an id; every optional field empty.
    pub fn bare(id: &str) -> AthleteProfile {
        AthleteProfile {
            id: id.to_string(),
            name: id.to_string(),
            sex: Sex::Unspecified,
            birth_year: None,
            hr_max: None,
            hr_rest: None,
            threshold_speed_mps: None,
            units: Units::Km,
            paces: BTreeMap::new(),
            hr_zones: None,
        }
    }

    /// Named pace lookup (case-insensitive), m/s.
    pub fn pace(&self, name: &str) -> Option<f64> {
        let key = name.trim().to_ascii_lowercase();
        if key == "threshold" {
            if let Some(v) = self.threshold_speed_mps {
                return Some(v);
            }
        }
        self.paces.get(&key).copied()
    }
}
