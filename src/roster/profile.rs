//! `athlete.toml`: the athlete's profile. These keys are stable; later tools rely on them.
//!
//! ```toml
//! name = "Ines Aldana"
//! sex = "female"            # "female" | "male" | "unspecified" (load weighting)
//! birth_year = 1991
//! hr_max = 188
//! hr_rest = 48
//! threshold_pace = "4:10/km"  # or "6:42/mi"
//! units = "km"                # "km" | "mi"
//! [paces]
//! easy = "5:30/km"
//! marathon = "4:35/km"
//! half = "4:20/km"
//! 10k = "4:05/km"
//! 5k = "3:55/km"
//! [[hr_zones]]                # optional override
//! name = "easy"
//! from_bpm = 100
//! to_bpm = 145
//! ```

use std::collections::BTreeMap;

use serde::Deserialize;

use crate::model::units::parse_pace;
use crate::model::{AthleteProfile, Sex, Units, Zone};

/// What is wrong with an `athlete.toml`.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ProfileError {
    #[error("{0}")]
    Toml(String),
    #[error("{key}: {message}")]
    Value { key: String, message: String },
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProfile {
    name: Option<String>,
    sex: Option<String>,
    birth_year: Option<i32>,
    hr_max: Option<f64>,
    hr_rest: Option<f64>,
    threshold_pace: Option<String>,
    units: Option<String>,
    #[serde(default)]
    paces: BTreeMap<String, String>,
    hr_zones: Option<Vec<RawZone>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawZone {
    name: String,
    from_bpm: f64,
    to_bpm: f64,
}

fn bad(key: &str, message: impl Into<String>) -> ProfileError {
    ProfileError::Value {
        key: key.to_string(),
        message: message.into(),
    }
}

/// A TOML error as `line L, column C: message` (one line).
pub(crate) fn toml_error_line(text: &str, e: &toml::de::Error) -> String {
    let msg = e.message().trim().replace('\n', " ");
    match e.span() {
        Some(span) => {
            let (line, col) = line_col(text, span.start);
            format!("line {line}, column {col}: {msg}")
        }
        None => msg,
    }
}

/// 1-based line and column of a byte offset.
pub(crate) fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let before = text.get(..offset.min(text.len())).unwrap_or(text);
    let line = before.matches('\n').count() + 1;
    let col = before
        .rsplit('\n')
        .next()
        .map(|l| l.chars().count() + 1)
        .unwrap_or(1);
    (line, col)
}

/// Parse an `athlete.toml`. `default_units` comes from the roster when the file has none.
pub fn parse_profile(
    text: &str,
    id: &str,
    default_units: Units,
) -> Result<AthleteProfile, ProfileError> {
    let raw: RawProfile =
        toml::from_str(text).map_err(|e| ProfileError::Toml(toml_error_line(text, &e)))?;
    let units = match raw.units.as_deref() {
        None => default_units,
        Some(u) => Units::parse(u)
            .ok_or_else(|| bad("units", format!("expected \"km\" or \"mi\", found {u:?}")))?,
    };
    let sex = match raw.sex.as_deref().map(|s| s.trim().to_ascii_lowercase()) {
        None => Sex::Unspecified,
        Some(s) => match s.as_str() {
            "female" | "f" => Sex::Female,
            "male" | "m" => Sex::Male,
            "unspecified" | "" => Sex::Unspecified,
            other => {
                return Err(bad(
                    "sex",
                    format!("expected \"female\", \"male\" or \"unspecified\", found {other:?}"),
                ))
            }
        },
    };
    for (key, v) in [("hr_max", raw.hr_max), ("hr_rest", raw.hr_rest)] {
        if let Some(v) = v {
            if !(25.0..=250.0).contains(&v) {
                return Err(bad(key, format!("{v} bpm is outside 25-250")));
            }
        }
    }
    if let (Some(max), Some(rest)) = (raw.hr_max, raw.hr_rest) {
        if rest >= max {
            return Err(bad("hr_rest", format!("{rest} is not below hr_max {max}")));
        }
    }
    if let Some(y) = raw.birth_year {
        if !(1900..=2100).contains(&y) {
            return Err(bad("birth_year", format!("{y} is not a plausible year")));
        }
    }
    let pace = |key: &str, s: &str| {
        parse_pace(s, units).ok_or_else(|| {
            bad(
                key,
                format!("expected a pace like \"4:10/km\", found {s:?}"),
            )
        })
    };
    let threshold_speed_mps = match raw.threshold_pace.as_deref() {
        Some(s) => Some(pace("threshold_pace", s)?),
        None => None,
    };
    let mut paces = BTreeMap::new();
    for (name, s) in &raw.paces {
        let key = format!("paces.{name}");
        paces.insert(name.trim().to_ascii_lowercase(), pace(&key, s)?);
    }
    let hr_zones = match raw.hr_zones {
        None => None,
        Some(zs) => {
            let mut out = Vec::with_capacity(zs.len());
            for z in zs {
                if z.from_bpm >= z.to_bpm {
                    return Err(bad(
                        "hr_zones",
                        format!("zone {:?}: from_bpm must be below to_bpm", z.name),
                    ));
                }
                out.push(Zone {
                    name: z.name,
                    from: z.from_bpm,
                    to: z.to_bpm,
                });
            }
            Some(out)
        }
    };
    Ok(AthleteProfile {
        id: id.to_string(),
        name: raw.name.unwrap_or_else(|| id.to_string()),
        sex,
        birth_year: raw.birth_year,
        hr_max: raw.hr_max,
        hr_rest: raw.hr_rest,
        threshold_speed_mps,
        units,
        paces,
        hr_zones,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_a_full_profile() {
        let text = r#"
name = "Test Runner"
sex = "female"
birth_year = 1990
hr_max = 190
hr_rest = 50
threshold_pace = "4:10/km"
units = "mi"
[paces]
easy = "9:00/mi"
5k = "3:50/km"
"#;
        let p = parse_profile(text, "test-runner", Units::Km).unwrap();
        assert_eq!(p.sex, Sex::Female);
        assert_eq!(p.units, Units::Mi);
        assert!((p.threshold_speed_mps.unwrap() - 4.0).abs() < 1e-9);
        assert!((p.pace("easy").unwrap() - 1609.344 / 540.0).abs() < 1e-9);
        assert!((p.pace("5K").unwrap() - 1000.0 / 230.0).abs() < 1e-9);
        assert_eq!(p.pace("threshold"), p.threshold_speed_mps);
    }

    #[test]
    fn errors_name_the_key_or_position() {
        let e = parse_profile("hr_max = 300", "x", Units::Km).unwrap_err();
        assert_eq!(e.to_string(), "hr_max: 300 bpm is outside 25-250");
        let e = parse_profile("hr_max = 180\nhr_rest = 190", "x", Units::Km).unwrap_err();
        assert!(e.to_string().starts_with("hr_rest:"));
        let e =
            parse_profile("name = \"a\"\nthreshold_pace = \"fast\"", "x", Units::Km).unwrap_err();
        assert!(e.to_string().contains("threshold_pace"), "{e}");
        let e = parse_profile("name = \"a\"\nhr_maxx = 3", "x", Units::Km).unwrap_err();
        assert!(e.to_string().starts_with("line 2, column 1:"), "{e}");
    }
}
