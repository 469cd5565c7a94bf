//! Units of display and pace parsing. Internally everything is SI; this is the edge.

use serde::{Deserialize, Serialize};

pub const METRES_PER_MILE: f64 = 1609.344;

/// Distance unit an athlete thinks in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Units {
    #[default]
    Km,
    Mi,
}

impl Units {
    pub fn metres(self) -> f64 {
        match self {
            Units::Km => 1000.0,
            Units::Mi => METRES_PER_MILE,
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            Units::Km => "km",
            Units::Mi => "mi",
        }
    }

    pub fn parse(s: &str) -> Option<Units> {
        match s.trim().to_ascii_lowercase().as_str() {
            "km" | "metric" | "kilometre" | "kilometer" | "kilometres" | "kilometers" => {
                Some(Units::Km)
            }
            "mi" | "mile" | "miles" | "imperial" => Some(Units::Mi),
            _ => None,
        }
    }
}

/// Parse `m:ss` (or `h:mm:ss`) into seconds. Fractional seconds are allowed.
pub fn parse_clock(s: &str) -> Option<f64> {
    let parts: Vec<&str> = s.trim().split(':').collect();
    if parts.is_empty() || parts.len() > 3 || parts.iter().any(|p| p.is_empty()) {
        return None;
    }
    let mut total = 0.0;
    for (i, p) in parts.iter().enumerate() {
        let v: f64 = p.parse().ok()?;
        if !v.is_finite() || v < 0.0 {
            return None;
        }
        // minutes and seconds fields after the first must be < 60
        if i > 0 && v >= 60.0 {
            return None;
        }
        total = total * 60.0 + v;
    }
    Some(total)
}

/// Parse a pace like `4:10/km`, `6:42/mi` or `4:10` (taken in `default_units`) into m/s.
pub fn parse_pace(s: &str, default_units: Units) -> Option<f64> {
    let s = s.trim();
    let (clock, units) = match s.split_once('/') {
        Some((c, u)) => (c, Units::parse(u)?),
        None => (s, default_units),
    };
    let secs = parse_clock(clock)?;
    if secs <= 0.0 {
        return None;
    }
    Some(units.metres() / secs)
}

/// Seconds per km for a speed, `None` for a non-positive speed or one so small that the
/// pace is not a finite number.
pub fn pace_s_per_km(speed_mps: f64) -> Option<f64> {
    (speed_mps > 0.0 && speed_mps.is_finite())
        .then(|| 1000.0 / speed_mps)
        .filter(|p| p.is_finite())
}

/// Format a duration in seconds as `m:ss` or `h:mm:ss`.
pub fn format_clock(secs: f64) -> String {
    if !secs.is_finite() || secs < 0.0 {
        return "--:--".to_string();
    }
    let total = secs.round() as u64;
    let (h, m, s) = (total / 3600, (total / 60) % 60, total % 60);
    if h > 0 {
        format!("{h}:{m:02}:{s:02}")
    } else {
        format!("{m}:{s:02}")
    }
}

/// Format a speed as a pace in the given units, e.g. `4:10/km`.
pub fn format_pace(speed_mps: f64, units: Units) -> String {
    if speed_mps.is_nan() || speed_mps <= 0.0 || !speed_mps.is_finite() {
        return format!("--:--/{}", units.label());
    }
    format!(
        "{}/{}",
        format_clock(units.metres() / speed_mps),
        units.label()
    )
}

/// Format a distance in the given units with two decimals, e.g. `10.02 km`.
pub fn format_distance(metres: f64, units: Units) -> String {
    format!("{:.2} {}", metres / units.metres(), units.label())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pace_parsing_and_formatting() {
        // 4:10/km is 250 s per 1000 m = 4.0 m/s
        assert!((parse_pace("4:10/km", Units::Km).unwrap() - 4.0).abs() < 1e-12);
        // 8:00/mi: 1609.344 m in 480 s
        assert!((parse_pace("8:00/mi", Units::Km).unwrap() - 1609.344 / 480.0).abs() < 1e-12);
        assert!((parse_pace("5:00", Units::Mi).unwrap() - 1609.344 / 300.0).abs() < 1e-12);
        assert_eq!(parse_pace("4:61/km", Units::Km), None);
        assert_eq!(parse_pace("abc", Units::Km), None);
        assert_eq!(parse_pace("0:00", Units::Km), None);
        assert_eq!(format_pace(4.0, Units::Km), "4:10/km");
        assert_eq!(format_pace(1609.344 / 480.0, Units::Mi), "8:00/mi");
        assert_eq!(format_clock(3725.0), "1:02:05");
        assert_eq!(parse_clock("1:02:05"), Some(3725.0));
    }
}
