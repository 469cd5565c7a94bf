//! The bias check: did grades move after the coach read the athlete's notes, and in which
//! direction relative to the notes' tone?
//!
//! Tone is a deliberately simple word-list measure: count the positive and the negative
//! words of a note (lowercased, split on anything that is not a letter or an apostrophe);
//! tone = (positive − negative) / (positive + negative), 0 when neither appears. A negation
//! word ("not", "never", "no", "didn't", ...) within the two words before flips a word's sign.
//! Common coaching practice (no published source); it is a nudge for reflection, not a
//! sentiment model.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::journal::{BiasInput, PurposeVerdict};

/// Words that usually mean the athlete liked the session.
pub const POSITIVE_WORDS: &[&str] = &[
    "great",
    "good",
    "strong",
    "easy",
    "smooth",
    "fresh",
    "relaxed",
    "comfortable",
    "fast",
    "happy",
    "loved",
    "love",
    "best",
    "solid",
    "controlled",
    "fun",
    "nice",
    "perfect",
    "awesome",
    "light",
    "confident",
    "brilliant",
    "excellent",
    "pleased",
    "enjoyed",
    "flew",
    "flying",
];

/// Words that usually mean the athlete did not.
pub const NEGATIVE_WORDS: &[&str] = &[
    "awful",
    "bad",
    "terrible",
    "hard",
    "heavy",
    "tired",
    "dead",
    "sore",
    "struggled",
    "struggle",
    "slow",
    "hurt",
    "hurts",
    "pain",
    "painful",
    "horrible",
    "exhausted",
    "rough",
    "weak",
    "sluggish",
    "miserable",
    "worst",
    "cramp",
    "cramped",
    "sick",
    "dizzy",
    "rubbish",
    "disappointed",
    "flat",
    "tough",
    "suffered",
    "suffering",
];

const NEGATIONS: &[&str] = &[
    "not", "no", "never", "didn't", "wasn't", "isn't", "don't", "hardly", "nothing",
];

/// Tone of a text in [-1, 1]: positive words push up, negative words down.
pub fn tone(text: &str) -> f64 {
    let words: Vec<String> = text
        .to_lowercase()
        .split(|c: char| !(c.is_alphabetic() || c == '\''))
        .filter(|w| !w.is_empty())
        .map(|w| w.replace('\u{2019}', "'"))
        .collect();
    let (mut pos, mut neg) = (0.0, 0.0);
    for (i, w) in words.iter().enumerate() {
        let sign = if POSITIVE_WORDS.contains(&w.as_str()) {
            1.0
        } else if NEGATIVE_WORDS.contains(&w.as_str()) {
            -1.0
        } else {
            continue;
        };
        let negated = words
            .get(i.saturating_sub(2)..i)
            .unwrap_or_default()
            .iter()
            .any(|p| NEGATIONS.contains(&p.as_str()));
        let s = if negated { -sign } else { sign };
        if s > 0.0 {
            pos += 1.0;
        } else {
            neg += 1.0;
        }
    }
    if pos + neg == 0.0 {
        0.0
    } else {
        (pos - neg) / (pos + neg)
    }
}

/// The tone words as a label.
pub fn tone_label(t: f64) -> &'static str {
    if t > 0.2 {
        "positive"
    } else if t < -0.2 {
        "negative"
    } else {
        "neutral"
    }
}

fn verdict_rank(v: PurposeVerdict) -> f64 {
    match v {
        PurposeVerdict::Missed => 0.0,
        PurposeVerdict::Partly => 1.0,
        PurposeVerdict::Met => 2.0,
    }
}

/// One revealed review with the tone of its note.
#[derive(Debug, Clone)]
pub struct BiasCase {
    pub input: BiasInput,
    /// Tone of the athlete's note; `None` without a note.
    pub tone: Option<f64>,
}

impl BiasCase {
    /// Sum of (revised − blind) over the scores, plus the verdict move (in ranks).
    pub fn shift(&self) -> f64 {
        let blind: BTreeMap<u32, u8> = self.input.blind_scores.iter().copied().collect();
        let mut total: f64 = self
            .input
            .revised_scores
            .iter()
            .filter_map(|(k, v)| blind.get(k).map(|b| f64::from(*v) - f64::from(*b)))
            .sum();
        if let (Some(b), Some(r)) = (self.input.blind_verdict, self.input.revised_verdict) {
            total += verdict_rank(r) - verdict_rank(b);
        }
        total
    }

    pub fn moved(&self) -> bool {
        self.input.revisions > 0 && self.shift() != 0.0
    }
}

/// The summary for one athlete, or for everyone.
#[derive(Debug, Clone, Serialize, PartialEq, Default)]
pub struct BiasSummary {
    pub reviews: usize,
    /// Reviews whose grades changed after the reveal.
    pub changed: usize,
    /// `changed / reviews`.
    pub changed_share: f64,
    /// Mean grade move per changed review (positive = up).
    pub mean_shift: Option<f64>,
    /// Changed reviews whose move followed the note's tone (up after a positive note, down
    /// after a negative one).
    pub with_tone: usize,
    /// Changed reviews whose move went against the note's tone.
    pub against_tone: usize,
    /// Sessions marked seen without a grade: not in the check (their notes stay hidden, so
    /// nothing could move after reading them), counted so the coach sees how many.
    pub seen_without_grade: usize,
    /// Plain-words summary.
    pub text: String,
}

fn summarise(cases: &[&BiasCase], seen_without_grade: usize) -> BiasSummary {
    let reviews = cases.len();
    let changed: Vec<&&BiasCase> = cases.iter().filter(|c| c.moved()).collect();
    let mean_shift = (!changed.is_empty())
        .then(|| changed.iter().map(|c| c.shift()).sum::<f64>() / changed.len() as f64);
    let (mut with_tone, mut against_tone) = (0, 0);
    for c in &changed {
        match (c.tone, c.shift()) {
            (Some(t), s) if t > 0.2 && s > 0.0 || t < -0.2 && s < 0.0 => with_tone += 1,
            (Some(t), s) if t > 0.2 && s < 0.0 || t < -0.2 && s > 0.0 => against_tone += 1,
            _ => {}
        }
    }
    let share = if reviews == 0 {
        0.0
    } else {
        changed.len() as f64 / reviews as f64
    };
    let text = if reviews == 0 {
        "no revealed reviews yet".to_string()
    } else if changed.is_empty() {
        format!("grades never moved after reading the notes ({reviews} reviews)")
    } else {
        format!(
            "grades moved after reading the notes in {} of {reviews} reviews ({:.0} %), by {:+.1} on average; \
             {with_tone} followed the note's tone, {against_tone} went against it",
            changed.len(),
            share * 100.0,
            mean_shift.unwrap_or(0.0)
        )
    };
    let text = match seen_without_grade {
        0 => text,
        1 => format!("{text}; 1 session seen without grading (not counted)"),
        n => format!("{text}; {n} sessions seen without grading (not counted)"),
    };
    BiasSummary {
        reviews,
        changed: changed.len(),
        changed_share: share,
        mean_shift,
        with_tone,
        against_tone,
        seen_without_grade,
        text,
    }
}

/// The bias check for every athlete and overall.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct BiasReport {
    pub overall: BiasSummary,
    pub athletes: BTreeMap<String, BiasSummary>,
}

pub fn report(cases: &[BiasCase]) -> BiasReport {
    report_with_seen(cases, &[])
}

/// The bias check, also counting the sessions marked seen without a grade (`seen`: the
/// athlete id of each such session).
pub fn report_with_seen(cases: &[BiasCase], seen: &[String]) -> BiasReport {
    let all: Vec<&BiasCase> = cases.iter().collect();
    let mut by: BTreeMap<String, Vec<&BiasCase>> = BTreeMap::new();
    for c in cases {
        by.entry(c.input.athlete.clone()).or_default().push(c);
    }
    let mut seen_by: BTreeMap<String, usize> = BTreeMap::new();
    for a in seen {
        *seen_by.entry(a.clone()).or_insert(0) += 1;
        by.entry(a.clone()).or_default();
    }
    BiasReport {
        overall: summarise(&all, seen.len()),
        athletes: by
            .into_iter()
            .map(|(a, cs)| {
                let n = seen_by.get(&a).copied().unwrap_or(0);
                (a, summarise(&cs, n))
            })
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tone_counts_words_and_negations() {
        assert_eq!(tone("Felt great, legs fresh and strong"), 1.0);
        assert_eq!(tone("awful. legs heavy, so tired"), -1.0);
        assert_eq!(tone("not bad at all"), 1.0);
        assert_eq!(tone("good start but then heavy and tired"), -1.0 / 3.0);
        assert_eq!(tone("ran 10k"), 0.0);
        assert_eq!(tone_label(0.5), "positive");
        assert_eq!(tone_label(0.0), "neutral");
    }

    fn case(athlete: &str, blind: u8, revised: u8) -> BiasCase {
        let t = chrono::DateTime::<chrono::Utc>::from_timestamp(1_700_000_000, 0).unwrap();
        BiasCase {
            input: BiasInput {
                session_id: format!("{athlete}/s"),
                athlete: athlete.into(),
                start: t,
                revealed_at: t,
                blind_scores: vec![(1, blind)],
                revised_scores: vec![(1, revised)],
                blind_verdict: Some(PurposeVerdict::Met),
                revised_verdict: Some(PurposeVerdict::Met),
                revisions: u32::from(blind != revised),
            },
            tone: Some(1.0),
        }
    }

    #[test]
    fn seen_sessions_are_counted_apart_from_the_reviews() {
        let cases = [case("ana", 3, 4), case("ben", 3, 3)];
        let seen = ["ana".to_string(), "ana".to_string(), "cleo".to_string()];
        let r = report_with_seen(&cases, &seen);
        assert_eq!(r.overall.reviews, 2);
        assert_eq!(r.overall.changed, 1);
        assert_eq!(r.overall.seen_without_grade, 3);
        assert!(
            r.overall
                .text
                .ends_with("; 3 sessions seen without grading (not counted)"),
            "{}",
            r.overall.text
        );
        assert_eq!(r.athletes["ana"].seen_without_grade, 2);
        assert_eq!(r.athletes["ben"].seen_without_grade, 0);
        assert!(!r.athletes["ben"].text.contains("seen"));
        // An athlete with only seen sessions is listed, with no reviews.
        assert_eq!(r.athletes["cleo"].reviews, 0);
        assert_eq!(
            r.athletes["cleo"].text,
            "no revealed reviews yet; 1 session seen without grading (not counted)"
        );
        // Without seen sessions the report is the plain one.
        assert_eq!(report(&cases).overall.seen_without_grade, 0);
        assert_eq!(report(&cases), report_with_seen(&cases, &[]));
    }
}
