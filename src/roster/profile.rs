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
//!
//! Reading is forgiving: every valid key is used and each bad one becomes a
//! [`ProfileProblem`] (an unknown key with a "did you mean", a bad value with its line and
//! column and what was expected). A bad key never costs the athlete the rest of the profile.

use toml::de::{DeTable, DeValue};
use toml::Spanned;

use crate::model::units::parse_pace;
use crate::model::{AthleteProfile, Sex, Units, Zone};

/// The top-level keys of `athlete.toml`.
pub const PROFILE_KEYS: [&str; 9] = [
    "name",
    "sex",
    "birth_year",
    "hr_max",
    "hr_rest",
    "threshold_pace",
    "units",
    "paces",
    "hr_zones",
];

/// The keys of one `[[hr_zones]]` table.
const ZONE_KEYS: [&str; 3] = ["name", "from_bpm", "to_bpm"];

/// One thing wrong in an `athlete.toml`, with its 1-based position in the file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ProfileProblem {
    pub line: usize,
    pub column: usize,
    /// The key as written (`hr_mx`, `paces.5k`, `hr_zones`); empty for a syntax error.
    pub key: String,
    /// For an unknown key, the known key it most likely meant.
    pub suggestion: Option<String>,
    /// What is wrong, one line.
    pub message: String,
}

impl ProfileProblem {
    /// Whether this problem concerns `key` (written as it, or an unknown key meant as it).
    pub fn concerns(&self, key: &str) -> bool {
        self.key == key || self.suggestion.as_deref() == Some(key)
    }
}

impl std::fmt::Display for ProfileProblem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "line {}, column {}: {}",
            self.line, self.column, self.message
        )
    }
}

/// A profile read with every valid key, and what was wrong with the others.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileReport {
    pub profile: AthleteProfile,
    /// In file order.
    pub problems: Vec<ProfileProblem>,
}

/// An `athlete.toml` with at least one problem (strict reading, [`parse_profile`]).
#[derive(Debug, Clone, thiserror::Error, PartialEq)]
#[error("{first}{}", more_text(*.more))]
pub struct ProfileError {
    /// The first problem in file order.
    pub first: ProfileProblem,
    /// How many more problems the file has.
    pub more: usize,
}

fn more_text(more: usize) -> String {
    match more {
        0 => String::new(),
        1 => " (and 1 more problem)".to_string(),
        n => format!(" (and {n} more problems)"),
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

/// Collects problems while reading.
struct Reader<'t> {
    text: &'t str,
    problems: Vec<ProfileProblem>,
    /// Lines with a TOML syntax error: what the parser recovered there is not used.
    broken_lines: std::collections::BTreeSet<usize>,
}

impl Reader<'_> {
    /// Whether an entry can be read: not on a line with a syntax error, and with a real value.
    fn usable<K>(&self, k: &Spanned<K>, v: &Spanned<DeValue<'_>>) -> bool {
        let line = line_col(self.text, k.span().start).0;
        !self.broken_lines.contains(&line) && !v.span().is_empty()
    }

    fn at(&mut self, offset: usize, key: &str, suggestion: Option<String>, message: String) {
        let (line, column) = line_col(self.text, offset);
        self.problems.push(ProfileProblem {
            line,
            column,
            key: key.to_string(),
            suggestion,
            message,
        });
    }

    /// A bad value: `key: message`; the key is left out of the profile.
    fn bad(&mut self, v: &Spanned<DeValue<'_>>, key: &str, message: String) {
        self.at(
            v.span().start,
            key,
            None,
            format!("{key}: {message}; ignored"),
        );
    }

    fn unknown(&mut self, k: &Spanned<std::borrow::Cow<'_, str>>, prefix: &str, known: &[&str]) {
        let name = k.get_ref().as_ref();
        let full = format!("{prefix}{name}");
        let suggestion = crate::plan::closest_name(name, known.iter().copied()).map(str::to_string);
        let message = match &suggestion {
            Some(s) => format!("unknown key {full:?}; did you mean \"{prefix}{s}\"? ignored"),
            None => format!(
                "unknown key {full:?}; ignored (known keys: {})",
                known.join(", ")
            ),
        };
        self.at(k.span().start, &full, suggestion, message);
    }

    fn string(&mut self, v: &Spanned<DeValue<'_>>, key: &str, expected: &str) -> Option<String> {
        match v.get_ref() {
            DeValue::String(s) => Some(s.to_string()),
            other => {
                self.bad(
                    v,
                    key,
                    format!("expected {expected}, found {}", type_words(other)),
                );
                None
            }
        }
    }

    fn number(&mut self, v: &Spanned<DeValue<'_>>, key: &str, expected: &str) -> Option<f64> {
        match number_of(v.get_ref()) {
            Some(x) => Some(x),
            None => {
                let found = match v.get_ref() {
                    DeValue::String(s) => format!("the text {:?}", s.as_ref()),
                    other => type_words(other).to_string(),
                };
                self.bad(v, key, format!("expected {expected}, found {found}"));
                None
            }
        }
    }

    fn pace(&mut self, v: &Spanned<DeValue<'_>>, key: &str, units: Units) -> Option<f64> {
        let expected = "a pace like \"4:10/km\" or \"6:42/mi\"";
        let s = self.string(v, key, expected)?;
        let speed = parse_pace(&s, units);
        if speed.is_none() {
            self.bad(v, key, format!("expected {expected}, found {s:?}"));
        }
        speed
    }
}

fn number_of(v: &DeValue<'_>) -> Option<f64> {
    match v {
        DeValue::Integer(i) => {
            let digits = i.as_str().replace('_', "");
            i64::from_str_radix(&digits, i.radix())
                .ok()
                .map(|x| x as f64)
        }
        DeValue::Float(f) => f
            .as_str()
            .replace('_', "")
            .parse::<f64>()
            .ok()
            .filter(|x| x.is_finite()),
        _ => None,
    }
}

fn type_words(v: &DeValue<'_>) -> &'static str {
    match v {
        DeValue::String(_) => "text",
        DeValue::Integer(_) => "a whole number",
        DeValue::Float(_) => "a number",
        DeValue::Boolean(_) => "true/false",
        DeValue::Datetime(_) => "a date",
        DeValue::Array(_) => "a list",
        DeValue::Table(_) => "a table",
    }
}

/// Read an `athlete.toml`, keeping every valid key. `default_units` comes from the roster when
/// the file has none. Never fails: what cannot be used is listed in the report's problems.
pub fn read_profile(text: &str, id: &str, default_units: Units) -> ProfileReport {
    let mut r = Reader {
        text,
        problems: Vec::new(),
        broken_lines: Default::default(),
    };
    let (doc, errors) = DeTable::parse_recoverable(text);
    for e in &errors {
        let offset = e.span().map_or(0, |s| s.start);
        // One syntax error per line is enough to fix it.
        if r.broken_lines.insert(line_col(text, offset).0) {
            let msg = e.message().trim().replace('\n', " ");
            r.at(offset, "", None, format!("not valid TOML: {msg}"));
        }
    }
    let doc = doc.into_inner();
    let mut profile = AthleteProfile::bare(id);
    profile.units = default_units;

    // Units first: paces are read in them.
    let entries: Vec<_> = doc.iter().filter(|(k, v)| r.usable(k, v)).collect();
    let get = |name: &str| {
        entries
            .iter()
            .copied()
            .find(|(k, _)| k.get_ref().as_ref() == name)
    };
    if let Some((_, v)) = get("units") {
        if let Some(u) = r.string(v, "units", "\"km\" or \"mi\"") {
            match Units::parse(&u) {
                Some(u) => profile.units = u,
                None => r.bad(
                    v,
                    "units",
                    format!("expected \"km\" or \"mi\", found {u:?}"),
                ),
            }
        }
    }
    let units = profile.units;
    let mut threshold = None;
    for &(k, v) in &entries {
        let key = k.get_ref().as_ref();
        match key {
            "units" => {}
            "name" => {
                if let Some(n) = r.string(v, key, "the athlete's name in quotes") {
                    if n.trim().is_empty() {
                        r.bad(v, key, "the name is empty".into());
                    } else {
                        profile.name = n.trim().to_string();
                    }
                }
            }
            "sex" => {
                let expected = "\"female\", \"male\" or \"unspecified\"";
                if let Some(s) = r.string(v, key, expected) {
                    match s.trim().to_ascii_lowercase().as_str() {
                        "female" | "f" => profile.sex = Sex::Female,
                        "male" | "m" => profile.sex = Sex::Male,
                        "unspecified" | "" => profile.sex = Sex::Unspecified,
                        _ => r.bad(v, key, format!("expected {expected}, found {s:?}")),
                    }
                }
            }
            "birth_year" => {
                if let Some(y) = r.number(v, key, "a year like 1991") {
                    if y.fract() == 0.0 && (1900.0..=2100.0).contains(&y) {
                        profile.birth_year = Some(y as i32);
                    } else {
                        r.bad(v, key, format!("{y} is not a plausible year"));
                    }
                }
            }
            "hr_max" | "hr_rest" => {
                if let Some(bpm) = r.number(v, key, "beats per minute like 188") {
                    if (25.0..=250.0).contains(&bpm) {
                        if key == "hr_max" {
                            profile.hr_max = Some(bpm);
                        } else {
                            profile.hr_rest = Some(bpm);
                        }
                    } else {
                        r.bad(v, key, format!("{bpm} bpm is outside 25-250"));
                    }
                }
            }
            "threshold_pace" => threshold = Some(v),
            "paces" => match v.get_ref() {
                DeValue::Table(t) => {
                    for (name, pv) in t.iter() {
                        if !r.usable(name, pv) {
                            continue;
                        }
                        let raw = name.get_ref().as_ref();
                        let pkey = format!("paces.{raw}");
                        let norm = raw.trim().to_ascii_lowercase();
                        if norm.is_empty() {
                            r.bad(pv, &pkey, "a pace needs a name".into());
                            continue;
                        }
                        if let Some(speed) = r.pace(pv, &pkey, units) {
                            profile.paces.insert(norm, speed);
                        }
                    }
                }
                other => {
                    let found = type_words(other);
                    r.bad(v, key, format!("expected a [paces] table, found {found}"));
                }
            },
            "hr_zones" => profile.hr_zones = read_zones(&mut r, v),
            _ => r.unknown(k, "", &PROFILE_KEYS),
        }
    }
    if let Some(v) = threshold {
        profile.threshold_speed_mps = r.pace(v, "threshold_pace", units);
    }
    if let (Some(max), Some(rest)) = (profile.hr_max, profile.hr_rest) {
        if rest >= max {
            if let Some((_, v)) = get("hr_rest") {
                r.bad(v, "hr_rest", format!("{rest} is not below hr_max {max}"));
            }
            profile.hr_rest = None;
        }
    }
    let mut problems = r.problems;
    problems.sort_by_key(|p| (p.line, p.column));
    ProfileReport { profile, problems }
}

/// `[[hr_zones]]`: all or nothing (a partial zone set would shift every zone's share).
fn read_zones(r: &mut Reader<'_>, v: &Spanned<DeValue<'_>>) -> Option<Vec<Zone>> {
    let DeValue::Array(items) = v.get_ref() else {
        let found = type_words(v.get_ref());
        r.bad(
            v,
            "hr_zones",
            format!("expected [[hr_zones]] tables, found {found}"),
        );
        return None;
    };
    let before = r.problems.len();
    let mut out = Vec::with_capacity(items.len());
    for item in items.iter() {
        let DeValue::Table(t) = item.get_ref() else {
            let found = type_words(item.get_ref());
            r.bad(
                item,
                "hr_zones",
                format!("expected a zone table, found {found}"),
            );
            continue;
        };
        let mut name = None;
        let mut from = None;
        let mut to = None;
        for (k, zv) in t.iter() {
            if !r.usable(k, zv) {
                continue;
            }
            match k.get_ref().as_ref() {
                "name" => name = r.string(zv, "hr_zones.name", "a zone name in quotes"),
                "from_bpm" => from = r.number(zv, "hr_zones.from_bpm", "beats per minute"),
                "to_bpm" => to = r.number(zv, "hr_zones.to_bpm", "beats per minute"),
                _ => r.unknown(k, "hr_zones.", &ZONE_KEYS),
            }
        }
        match (name, from, to) {
            (Some(name), Some(from), Some(to)) if from < to => out.push(Zone { name, from, to }),
            (Some(name), Some(_), Some(_)) => r.bad(
                item,
                "hr_zones",
                format!("zone {name:?}: from_bpm must be below to_bpm"),
            ),
            _ if r.problems.len() > before => {}
            _ => r.bad(
                item,
                "hr_zones",
                "a zone needs name, from_bpm and to_bpm".into(),
            ),
        }
    }
    if r.problems.len() > before {
        if let Some(p) = r.problems.last_mut() {
            p.message.push_str(" (the zone override is not used)");
        }
        return None;
    }
    Some(out)
}

/// Parse an `athlete.toml` strictly: the profile only when the file has no problem at all.
/// The roster uses [`read_profile`], which keeps the valid keys.
pub fn parse_profile(
    text: &str,
    id: &str,
    default_units: Units,
) -> Result<AthleteProfile, ProfileError> {
    let report = read_profile(text, id, default_units);
    let mut problems = report.problems.into_iter();
    match problems.next() {
        None => Ok(report.profile),
        Some(first) => Err(ProfileError {
            first,
            more: problems.count(),
        }),
    }
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
    fn strict_errors_name_the_key_and_position() {
        let e = parse_profile("hr_max = 300", "x", Units::Km).unwrap_err();
        assert_eq!(
            e.to_string(),
            "line 1, column 10: hr_max: 300 bpm is outside 25-250; ignored"
        );
        let e = parse_profile("hr_max = 180\nhr_rest = 190", "x", Units::Km).unwrap_err();
        assert_eq!(
            e.to_string(),
            "line 2, column 11: hr_rest: 190 is not below hr_max 180; ignored"
        );
        let e =
            parse_profile("name = \"a\"\nthreshold_pace = \"fast\"", "x", Units::Km).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("line 2, column 18: threshold_pace:"),
            "{e}"
        );
        let e =
            parse_profile("name = \"a\"\nhr_maxx = 3\nhr_rset = 4", "x", Units::Km).unwrap_err();
        assert_eq!(
            e.to_string(),
            "line 2, column 1: unknown key \"hr_maxx\"; did you mean \"hr_max\"? ignored \
             (and 1 more problem)"
        );
    }

    #[test]
    fn a_typo_key_is_reported_with_a_suggestion_and_the_rest_is_used() {
        let text = "name = \"Ana\"\nhr_mx = 203\nhr_rest = 48\n[paces]\neasy = \"5:30/km\"\n";
        let r = read_profile(text, "ana", Units::Km);
        assert_eq!(r.problems.len(), 1);
        let p = &r.problems[0];
        assert_eq!((p.line, p.column), (2, 1));
        assert_eq!(p.key, "hr_mx");
        assert_eq!(p.suggestion.as_deref(), Some("hr_max"));
        assert!(p.concerns("hr_max"));
        assert_eq!(
            p.to_string(),
            "line 2, column 1: unknown key \"hr_mx\"; did you mean \"hr_max\"? ignored"
        );
        assert_eq!(r.profile.name, "Ana");
        assert_eq!(r.profile.hr_max, None);
        assert_eq!(r.profile.hr_rest, Some(48.0));
        assert!((r.profile.pace("easy").unwrap() - 1000.0 / 330.0).abs() < 1e-9);
    }

    #[test]
    fn a_bad_pace_names_line_and_column_and_other_keys_stay() {
        let text = "hr_max = 203\nthreshold_pace = \"3;20/km\"\nhr_rest = 44\n\
                    [paces]\n5k = \"3:10/km\"\n10k = \"3:2O/km\"\n";
        let r = read_profile(text, "kip", Units::Km);
        let lines: Vec<String> = r.problems.iter().map(|p| p.to_string()).collect();
        assert_eq!(
            lines,
            vec![
                "line 2, column 18: threshold_pace: expected a pace like \"4:10/km\" or \
                 \"6:42/mi\", found \"3;20/km\"; ignored"
                    .to_string(),
                "line 6, column 7: paces.10k: expected a pace like \"4:10/km\" or \
                 \"6:42/mi\", found \"3:2O/km\"; ignored"
                    .to_string(),
            ]
        );
        assert_eq!(r.profile.hr_max, Some(203.0));
        assert_eq!(r.profile.hr_rest, Some(44.0));
        assert_eq!(r.profile.threshold_speed_mps, None);
        assert!((r.profile.pace("5k").unwrap() - 1000.0 / 190.0).abs() < 1e-9);
        assert_eq!(r.profile.pace("10k"), None);
    }

    #[test]
    fn wrong_types_and_syntax_errors_are_problems_not_failures() {
        let text = "hr_max = \"188\"\nsex = \"robot\"\nbirth_year = 1991\nhr_rest = = 3\n";
        let r = read_profile(text, "z", Units::Mi);
        assert_eq!(r.profile.birth_year, Some(1991));
        assert_eq!(r.profile.units, Units::Mi);
        assert_eq!(r.profile.hr_max, None);
        let keys: Vec<&str> = r.problems.iter().map(|p| p.key.as_str()).collect();
        assert_eq!(keys, vec!["hr_max", "sex", ""], "{:?}", r.problems);
        assert_eq!(r.profile.hr_rest, None);
        assert!(r.problems[0]
            .message
            .contains("expected beats per minute like 188, found the text \"188\""));
        assert_eq!(r.problems[2].line, 4);
    }

    #[test]
    fn zone_problems_drop_the_override_only() {
        let text = "hr_max = 190\n[[hr_zones]]\nname = \"easy\"\nfrom_bpm = 100\nto_bmp = 140\n";
        let r = read_profile(text, "z", Units::Km);
        assert_eq!(r.profile.hr_zones, None);
        assert_eq!(r.profile.hr_max, Some(190.0));
        assert_eq!(r.problems.len(), 1, "{:?}", r.problems);
        assert_eq!(r.problems[0].suggestion.as_deref(), Some("to_bpm"));
        assert_eq!(r.problems[0].line, 5);
    }

    #[test]
    fn closest_only_suggests_likely_typos() {
        use crate::plan::closest_name;
        assert_eq!(
            closest_name("Treshold_pace", PROFILE_KEYS),
            Some("threshold_pace")
        );
        assert_eq!(closest_name("hr_rset", PROFILE_KEYS), Some("hr_rest"));
        assert_eq!(closest_name("weight", PROFILE_KEYS), None);
    }
}
