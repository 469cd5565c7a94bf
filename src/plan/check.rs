//! Checking a parsed plan against an athlete's profile: every named pace must be one the
//! profile has, or the targets at that pace cannot be judged.

use crate::model::{AthleteProfile, Plan, Segment, Step, Target};

use super::error::line_col;

/// A named pace of a plan that the profile does not have.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnknownPace {
    /// The name as the plan writes it (lower case).
    pub name: String,
    /// The profile's pace name it most likely meant.
    pub suggestion: Option<String>,
    /// 1-based line and column of its first use in the plan text, when it can be found.
    pub position: Option<(usize, usize)>,
}

impl UnknownPace {
    /// One line: `line L, column C: pace "5kk" is not in the profile ...`.
    pub fn message(&self, profile: &AthleteProfile) -> String {
        let mut known: Vec<&str> = profile.paces.keys().map(String::as_str).collect();
        if profile.threshold_speed_mps.is_some() && !known.contains(&"threshold") {
            known.push("threshold");
        }
        let hint = match (&self.suggestion, known.is_empty()) {
            (Some(s), _) => format!(" (did you mean {s:?}?)"),
            (None, true) => " (the profile has no named paces)".to_string(),
            (None, false) => format!(" (it has: {})", known.join(", ")),
        };
        let what = format!(
            "pace {:?} is not in the athlete's profile{hint}: targets at that pace are not judged",
            self.name
        );
        match self.position {
            Some((line, column)) => format!("line {line}, column {column}: {what}"),
            None => what,
        }
    }
}

fn segments(plan: &Plan) -> impl Iterator<Item = &Segment> {
    plan.steps.iter().flat_map(|s| match s {
        Step::Single(seg) => std::slice::from_ref(seg).iter().chain(None),
        Step::Repeat { work, recovery, .. } => work.iter().chain(recovery.as_ref()),
    })
}

/// The named paces of `plan` that `profile` lacks, each once, in order of first use.
/// `text` (the plan file's text or the shorthand line) is searched for their positions.
pub fn unknown_paces(plan: &Plan, profile: &AthleteProfile, text: &str) -> Vec<UnknownPace> {
    let mut known: Vec<String> = profile.paces.keys().cloned().collect();
    if profile.threshold_speed_mps.is_some() {
        known.push("threshold".to_string());
    }
    let mut out: Vec<UnknownPace> = Vec::new();
    for seg in segments(plan) {
        let Target::NamedPace { name, .. } = &seg.target else {
            continue;
        };
        let name = name.trim().to_ascii_lowercase();
        if profile.pace(&name).is_some() || out.iter().any(|u| u.name == name) {
            continue;
        }
        out.push(UnknownPace {
            suggestion: closest_name(&name, known.iter().map(String::as_str)).map(str::to_string),
            position: name_position(text, &name),
            name,
        });
    }
    out
}

/// Where `name` is first used as a pace: after `@` (shorthand) or as a quoted `pace` value,
/// else its first use as a whole word (`2:00 jgo`); matched case-insensitively.
fn name_position(text: &str, name: &str) -> Option<(usize, usize)> {
    let lower = text.to_ascii_lowercase();
    let is_word = |c: char| c.is_alphanumeric() || c == '_' || c == '-';
    let mut from = 0;
    let mut any_word = None;
    while let Some(found) = lower.get(from..).and_then(|rest| rest.find(name)) {
        let start = from + found;
        let end = start + name.len();
        from = end;
        let before = lower.get(..start).unwrap_or("");
        let whole =
            !lower.get(end..).unwrap_or("").starts_with(is_word) && !before.ends_with(is_word);
        if !whole {
            continue;
        }
        let lead = before.trim_end_matches([' ', '\t']);
        if lead.ends_with('@') || lead.ends_with('"') || lead.ends_with('\'') {
            return Some(line_col(text, start));
        }
        // Not a key name (`name = ...`) but inside a value.
        let line_start = before.rfind('\n').map_or(0, |i| i + 1);
        if any_word.is_none() && before.get(line_start..).is_some_and(|l| l.contains('=')) {
            any_word = Some(start);
        }
    }
    any_word.map(|start| line_col(text, start))
}

/// Edit distance (insertions, deletions, substitutions; adjacent swaps count one).
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let w = b.len() + 1;
    let mut d = vec![0usize; (a.len() + 1) * w];
    for (i, row) in d.chunks_mut(w).enumerate() {
        if let Some(first) = row.first_mut() {
            *first = i;
        }
    }
    for (j, cell) in d.iter_mut().take(w).enumerate() {
        *cell = j;
    }
    // Every index below is inside the (a.len() + 1) x w table; a miss reads as "far".
    let at = |d: &[usize], i: usize, j: usize| d.get(i * w + j).copied().unwrap_or(usize::MAX / 2);
    for i in 1..=a.len() {
        for j in 1..=b.len() {
            let cost = usize::from(a.get(i - 1) != b.get(j - 1));
            let mut best = (at(&d, i - 1, j) + 1)
                .min(at(&d, i, j - 1) + 1)
                .min(at(&d, i - 1, j - 1) + cost);
            if i > 1 && j > 1 && a.get(i - 1) == b.get(j - 2) && a.get(i - 2) == b.get(j - 1) {
                best = best.min(at(&d, i - 2, j - 2) + 1);
            }
            if let Some(cell) = d.get_mut(i * w + j) {
                *cell = best;
            }
        }
    }
    at(&d, a.len(), b.len())
}

/// The candidate closest to `word` when it is close enough to be a likely typo: at most two
/// edits, and fewer than half the word's length.
pub fn closest_name<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<&'a str> {
    let lower = word.trim().to_ascii_lowercase();
    let limit = 2.min(lower.chars().count().saturating_sub(1) / 2 + 1);
    candidates
        .into_iter()
        .map(|c| (edit_distance(&lower, c), c))
        .filter(|(d, _)| *d <= limit)
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Units;

    fn profile() -> AthleteProfile {
        let mut p = AthleteProfile::bare("t");
        p.paces.insert("5k".into(), 4.2);
        p.paces.insert("easy".into(), 3.0);
        p.units = Units::Km;
        p
    }

    #[test]
    fn edit_distance_counts_edits_and_swaps() {
        assert_eq!(edit_distance("hr_mx", "hr_max"), 1);
        assert_eq!(edit_distance("hr_rset", "hr_rest"), 1);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(closest_name("5kk", ["5k", "10k", "easy"]), Some("5k"));
        assert_eq!(closest_name("tempo", ["5k", "10k", "easy"]), None);
    }

    #[test]
    fn an_unknown_pace_is_found_with_its_position_and_suggestion() {
        let line = "10:00 easy; 4 x 3:00 @ 5kk / 2:00 jog; 2:00 @ 5K; 1:00 @ 5kk";
        let steps = crate::plan::parse_line(line).unwrap();
        let plan = Plan {
            title: "t".into(),
            purpose: String::new(),
            date: None,
            steps,
        };
        let u = unknown_paces(&plan, &profile(), line);
        assert_eq!(u.len(), 1);
        assert_eq!(u[0].name, "5kk");
        assert_eq!(u[0].suggestion.as_deref(), Some("5k"));
        assert_eq!(u[0].position, Some((1, 24)));
        assert_eq!(
            name_position("title = \"x\"\nsteps = \"6 x 1:00 / 1:30 jgo\"", "jgo"),
            Some((2, 26))
        );
        assert_eq!(
            u[0].message(&profile()),
            "line 1, column 24: pace \"5kk\" is not in the athlete's profile (did you mean \
             \"5k\"?): targets at that pace are not judged"
        );
    }

    #[test]
    fn threshold_counts_only_when_the_profile_has_it() {
        let line = "3 x 8:00 @ threshold / 2:00 jog";
        let plan = Plan {
            title: "t".into(),
            purpose: String::new(),
            date: None,
            steps: crate::plan::parse_line(line).unwrap(),
        };
        let mut p = profile();
        let u = unknown_paces(&plan, &p, line);
        assert_eq!(u.len(), 1);
        assert_eq!(u[0].position, Some((1, 12)));
        assert!(
            u[0].message(&p).contains("(it has: 5k, easy)"),
            "{}",
            u[0].message(&p)
        );
        p.threshold_speed_mps = Some(4.0);
        assert!(unknown_paces(&plan, &p, line).is_empty());
    }
}
