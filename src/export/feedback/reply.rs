//! A short reply to the athlete's note: how they felt, set beside what the numbers and the
//! coach's grades say. Where the two agree the reply says so; where they disagree it says
//! so kindly (heavy legs on a strong session, "felt great" on a fading set).
//!
//! The note's tone is the word-list measure of the bias check ([`crate::bias::tone`]); a few
//! more word lists pick out what the note is about (tired legs, a hard day, feeling slow,
//! pain). The note itself is never quoted: the athlete reads their own words back in the
//! coach's.

use super::body::{Ctx, PACE_CHANGE_SHARE};
use super::words::{self, pace_gap_s, per_unit, seconds};
use crate::analysis::kind::SessionKind;
use crate::journal::PurposeVerdict;

/// Words that point at something a coach should not answer with training advice.
/// ("Hurt" alone is how runners describe effort: "the last one hurt".)
const HEALTH_WORDS: &[&str] = &[
    "pain",
    "painful",
    "injury",
    "injured",
    "dizzy",
    "dizziness",
    "faint",
    "fainted",
    "chest",
    "palpitations",
    "numb",
    "limping",
    "limp",
];

/// Body parts a niggle is reported in.
const BODY_PARTS: &[&str] = &[
    "knee",
    "knees",
    "calf",
    "calves",
    "ankle",
    "ankles",
    "hip",
    "hips",
    "foot",
    "feet",
    "achilles",
    "shin",
    "shins",
    "hamstring",
    "hamstrings",
    "heel",
    "back",
    "groin",
    "quad",
    "quads",
];

/// Words that make a body part a niggle.
const NIGGLE_WORDS: &[&str] = &[
    "stiff",
    "tight",
    "tightness",
    "sore",
    "ache",
    "aching",
    "achy",
    "hurt",
    "hurts",
    "hurting",
    "niggle",
    "niggling",
    "twinge",
    "sharp",
    "swollen",
    "tweak",
    "tweaked",
];

/// Words that say the niggle went away.
const SETTLED_WORDS: &[&str] = &["gone", "eased", "settled", "fine", "quiet", "better"];

/// Negations that turn a health word off ("no pain", "nothing hurts").
const NEGATIONS: &[&str] = &[
    "no", "not", "nothing", "never", "without", "didn't", "wasn't",
];

const TIRED_WORDS: &[&str] = &[
    "sore",
    "tired",
    "heavy",
    "dead",
    "exhausted",
    "knackered",
    "sluggish",
    "drained",
    "wrecked",
    "fatigued",
    "lead",
];

const HARD_WORDS: &[&str] = &[
    "hard",
    "tough",
    "struggled",
    "struggle",
    "suffered",
    "suffering",
    "awful",
];

const SLOW_WORDS: &[&str] = &["slow", "slower", "slowed", "slowing"];

/// How the coach's grading and the numbers read the session.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outlook {
    Strong,
    Mixed,
    Weak,
}

/// The session as the coach graded it: a met verdict with good scores is strong; a missed
/// verdict or poor scores is weak.
pub fn outlook(c: &Ctx<'_>) -> Outlook {
    let mean = (!c.scores.is_empty())
        .then(|| c.scores.values().map(|s| f64::from(*s)).sum::<f64>() / c.scores.len() as f64);
    match c.verdict {
        Some(PurposeVerdict::Missed) => Outlook::Weak,
        _ if mean.is_some_and(|m| m <= 2.5) => Outlook::Weak,
        Some(PurposeVerdict::Met) if mean.is_none_or(|m| m >= 3.5) => Outlook::Strong,
        _ => Outlook::Mixed,
    }
}

fn note_words(note: &str) -> Vec<String> {
    note.to_lowercase()
        .replace('\u{2019}', "'")
        .split(|ch: char| !(ch.is_alphanumeric() || ch == '\''))
        .map(|w| w.trim_matches('\''))
        .filter(|w| !w.is_empty())
        .map(str::to_string)
        .collect()
}

fn has_any(words: &[String], list: &[&str]) -> bool {
    words.iter().any(|w| list.contains(&w.as_str()))
}

/// Whether a word of `list` appears not right after a negation.
fn has_unnegated(words: &[String], list: &[&str]) -> bool {
    words.iter().enumerate().any(|(i, w)| {
        list.contains(&w.as_str())
            && !words
                .get(i.saturating_sub(2)..i)
                .unwrap_or_default()
                .iter()
                .any(|p| NEGATIONS.contains(&p.as_str()))
    })
}

/// A body part the note reports a niggle in, and whether it settled: sentence by sentence.
fn niggle(note: &str) -> Option<(String, bool)> {
    for sentence in note.split(['.', '!', '?', '\n', ';']) {
        let w = note_words(sentence);
        let Some(part) = w.iter().find(|x| BODY_PARTS.contains(&x.as_str())) else {
            continue;
        };
        if has_unnegated(&w, NIGGLE_WORDS) {
            return Some((part.clone(), has_any(&w, SETTLED_WORDS)));
        }
    }
    None
}

/// What the numbers say about pace holding, for a note that felt otherwise.
fn fade_fact(c: &Ctx<'_>) -> Option<String> {
    if !c.faded() {
        return None;
    }
    let unit = per_unit(c.units);
    if c.kind.is_repeats() || c.reps.len() >= 2 {
        let (first, last) = (c.reps.first()?, c.reps.last()?);
        let gap = pace_gap_s(last.pace - first.pace, c.units);
        return (last.pace > first.pace && gap >= 1.0).then(|| {
            format!(
                "the last rep was {} {unit} slower than the first",
                seconds(gap)
            )
        });
    }
    let change = c.halves_change()?;
    (change >= PACE_CHANGE_SHARE).then(|| "the second half was slower than the first".to_string())
}

/// Whether the reps (or halves) held their pace.
fn held(c: &Ctx<'_>) -> bool {
    if c.reps.len() >= 3 {
        return c.rep_change().is_some_and(|x| x < PACE_CHANGE_SHARE);
    }
    c.halves_change().is_some_and(|x| x < PACE_CHANGE_SHARE)
}

/// The reply to `note`, or `None` for a blank note.
pub fn reply(note: &str, c: &Ctx<'_>) -> Option<String> {
    if note.trim().is_empty() {
        return None;
    }
    let w = note_words(note);
    if has_unnegated(&w, HEALTH_WORDS) {
        return Some(format!(
            "You mentioned something that hurt or felt wrong: please take it easy until it \
             settles, and tell me how it is before the next hard session. {}",
            words::ATHLETE_CAUTION
        ));
    }
    // A heart rate the athlete noticed that the analysis found to be the sensor.
    let sensor = c.review.findings.iter().any(|f| {
        f.code == "cadence_lock"
            || f.code == "hr_above_max"
                && f.severity != crate::analysis::findings::Severity::Caution
    });
    if sensor && (has_any(&w, &["heart", "hr", "bpm", "pulse"])) {
        return Some(
            "The high heart rate you saw was most likely the watch counting your steps \
             rather than your heart: it happens with wrist sensors. Wearing the watch a little \
             snugger, or a chest strap, helps."
                .to_string(),
        );
    }
    let body = niggle(note).map(|(part, settled)| {
        if settled {
            format!(" Good that the {part} settled; keep an eye on it and tell me if it comes back.")
        } else {
            format!(" Keep an eye on the {part}: ease off if it gets worse, and tell me how it is before the next hard session.")
        }
    });
    main_reply(note, &w, c).map(|r| r + body.as_deref().unwrap_or(""))
}

fn main_reply(note: &str, w: &[String], c: &Ctx<'_>) -> Option<String> {
    // "Good hurt" and "good pain" are how runners praise a hard effort.
    let lower = note.to_lowercase();
    let tone = crate::bias::tone(
        &lower
            .replace("good hurt", "good")
            .replace("good pain", "good"),
    );
    let tired = has_unnegated(w, TIRED_WORDS);
    let hard = has_unnegated(w, HARD_WORDS);
    let felt_slow = has_unnegated(w, SLOW_WORDS);
    let legs = w.iter().any(|x| x == "legs" || x == "leg");
    let feeling = if legs && has_unnegated(w, &["sore"]) {
        Some("your legs were sore")
    } else if tired && legs {
        Some("your legs felt heavy")
    } else if tired {
        Some("you felt tired")
    } else if hard {
        Some("it felt hard")
    } else if tone < -0.2 {
        Some("it didn't feel great")
    } else {
        None
    };
    let outlook = outlook(c);
    if felt_slow && held(c) && c.reps.len() >= 3 {
        let (first, last) = (c.reps.first()?, c.reps.last()?);
        let gap = pace_gap_s(last.pace - first.pace, c.units);
        let allowing = if c.on_hill {
            ", allowing for the hill,"
        } else {
            ""
        };
        return Some(format!(
            "You felt some reps were slow, but the numbers say they held up: your last rep{allowing} \
             was within {} {} of the first. It often feels slower than it is.",
            seconds(gap.max(1.0)),
            per_unit(c.units)
        ));
    }
    let easy_day = matches!(
        c.kind,
        SessionKind::Easy | SessionKind::Treadmill | SessionKind::LongRun
    );
    if let (Some(feeling), true) = (feeling, easy_day) {
        return Some(match outlook {
            Outlook::Weak => {
                format!("You said {feeling}, and it showed. Take the next day or two gently.")
            }
            _ => format!(
                "You said {feeling}, but the run itself went as it should: easy running like \
                 this is how tired legs come round."
            ),
        });
    }
    if let Some(feeling) = feeling {
        return Some(match outlook {
            Outlook::Strong => format!(
                "You said {feeling}, but the numbers say this was a strong session. Days that \
                 feel heavy and still go well are the ones that build confidence."
            ),
            Outlook::Weak => format!(
                "You said {feeling}, and it shows in the numbers too. No harm done: rest well \
                 and we go again."
            ),
            Outlook::Mixed => format!(
                "You said {feeling}. The numbers look steady enough, so don't read too much \
                 into one day."
            ),
        });
    }
    if tone > 0.2 {
        return Some(match (outlook, fade_fact(c)) {
            (Outlook::Strong, _) => "Glad it felt good: the numbers agree.".to_string(),
            (_, Some(fact)) => format!(
                "Glad it felt good. The numbers tell a slightly different story: {fact}, so \
                 there is a little more to come from holding back early."
            ),
            (Outlook::Weak, None) => "Glad it felt good, even if it didn't quite go to plan \
                                      on paper."
                .to_string(),
            (Outlook::Mixed, None) => "Glad you enjoyed it.".to_string(),
        });
    }
    Some(THANKS.to_string())
}

/// The reply to a note with nothing in it to answer.
pub const THANKS: &str = "Thanks for the note.";
