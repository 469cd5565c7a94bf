//! Athlete words: numbers in the athlete's units and the small phrases the draft is built
//! from. The coach's terms stay in the verdict pane; [`COACH_ONLY_WORDS`] lists the ones a
//! draft must never use.

use crate::model::units::{format_clock, Units};

/// Words and symbols from the coach's side of the desk that an ordinary runner would not
/// understand. Drafts never contain them (a test checks every demo draft), whatever the
/// plan titles say. Compared in lowercase.
pub const COACH_ONLY_WORDS: &[&str] = &[
    "trough",
    "lag",
    "decoupling",
    "decoupled",
    "relative intensity",
    "trimp",
    "r²",
    "r2",
    "hill-adjusted",
    "efficiency",
    "m/beat",
    "acute",
    "chronic",
    "cadence lock",
    "heart-rate reserve",
    "karvonen",
    "flagged",
    "work interval",
    "hr lag",
    "spm",
];

/// The athlete-facing health caution: a coaching aid, not medical advice.
pub const ATHLETE_CAUTION: &str = "I'm your coach, not a doctor: if anything felt wrong, \
please get it checked by one.";

/// A pace in seconds per km as `4:26/km` or `7:08/mi`.
pub fn pace(s_per_km: f64, units: Units) -> String {
    format!("{}/{}", pace_clock(s_per_km, units), units.label())
}

/// A pace in seconds per km as a clock per the athlete's unit, without the unit (`4:26`).
pub fn pace_clock(s_per_km: f64, units: Units) -> String {
    format_clock(s_per_km * units.metres() / 1000.0)
}

/// A difference of paces (s/km) as whole seconds per the athlete's unit.
pub fn pace_gap_s(gap_s_per_km: f64, units: Units) -> f64 {
    (gap_s_per_km * units.metres() / 1000.0).abs().round()
}

/// `1 second` / `5 seconds`.
pub fn seconds(n: f64) -> String {
    let n = n.round();
    if n == 1.0 {
        "1 second".to_string()
    } else {
        format!("{n:.0} seconds")
    }
}

/// "per km" / "per mile".
pub fn per_unit(units: Units) -> &'static str {
    match units {
        Units::Km => "per km",
        Units::Mi => "per mile",
    }
}

/// "km" / "mile" (singular nouns for "km splits", "mile splits").
pub fn unit_noun(units: Units) -> &'static str {
    match units {
        Units::Km => "km",
        Units::Mi => "mile",
    }
}

/// A distance in the athlete's units: `10.0 km`, `3.11 miles` (two decimals under 10).
pub fn distance(metres: f64, units: Units) -> String {
    let v = metres / units.metres();
    let num = if v < 10.0 {
        format!("{v:.2}")
    } else {
        format!("{v:.1}")
    };
    match units {
        Units::Km => format!("{num} km"),
        Units::Mi if num == "1.00" => "1.00 mile".to_string(),
        Units::Mi => format!("{num} miles"),
    }
}

/// A duration in plain words: `45 minutes`, `1 hour 12 minutes`.
pub fn duration(secs: f64) -> String {
    let total_min = (secs / 60.0).round() as u64;
    let (h, m) = (total_min / 60, total_min % 60);
    let mins = |m: u64| {
        if m == 1 {
            "1 minute".to_string()
        } else {
            format!("{m} minutes")
        }
    };
    match (h, m) {
        (0, m) => mins(m),
        (1, 0) => "1 hour".to_string(),
        (h, 0) => format!("{h} hours"),
        (1, m) => format!("1 hour {}", mins(m)),
        (h, m) => format!("{h} hours {}", mins(m)),
    }
}

/// `2`, `2 and 5`, `1, 3 and 6`.
pub fn and_list(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [init @ .., last] => format!("{} and {last}", init.join(", ")),
    }
}

/// `Rep 3` / `Reps 2 and 5`.
pub fn reps(numbers: &[usize]) -> String {
    let items: Vec<String> = numbers.iter().map(ToString::to_string).collect();
    if numbers.len() == 1 {
        format!("Rep {}", and_list(&items))
    } else {
        format!("Reps {}", and_list(&items))
    }
}

/// A session day (`YYYY-MM-DD`) as `Tuesday 17 November`; the text itself when it is not a
/// date.
pub fn day(date: &str) -> String {
    match chrono::NaiveDate::parse_from_str(date, "%Y-%m-%d") {
        Ok(d) => d.format("%A %-d %B").to_string(),
        Err(_) => date.to_string(),
    }
}

/// Whether `text` (any case) holds a coach-only word, and which.
pub fn coach_word_in(text: &str) -> Option<&'static str> {
    let lower = text.to_lowercase();
    COACH_ONLY_WORDS
        .iter()
        .copied()
        .find(|w| crate::analysis::kind::has_word(&lower, w))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_in_the_athletes_units() {
        // 4:26/km is 266 s per km; a mile is 1.609344 km: 428.1 s = 7:08.
        assert_eq!(pace(266.0, Units::Km), "4:26/km");
        assert_eq!(pace(266.0, Units::Mi), "7:08/mi");
        assert_eq!(distance(10_000.0, Units::Km), "10.0 km");
        assert_eq!(distance(5_000.0, Units::Mi), "3.11 miles");
        assert_eq!(duration(15.0 * 60.0), "15 minutes");
        assert_eq!(duration(72.0 * 60.0), "1 hour 12 minutes");
        assert_eq!(reps(&[2, 5]), "Reps 2 and 5");
        assert_eq!(reps(&[1, 3, 6]), "Reps 1, 3 and 6");
        assert_eq!(day("2026-11-17"), "Tuesday 17 November");
    }

    #[test]
    fn coach_words_are_found_as_words() {
        assert_eq!(coach_word_in("the recovery trough rose"), Some("trough"));
        assert_eq!(coach_word_in("Decoupling 2.5 %"), Some("decoupling"));
        assert_eq!(coach_word_in("a flagellum"), None);
        assert_eq!(coach_word_in("slag heap"), None);
    }
}
