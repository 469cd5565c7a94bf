//! What the coach's scores say (the reps praised by number, the reps to look at) and the
//! one thing to do next time.

use super::body::{Ctx, Side, ABOVE_EASY_ADVICE_S, DRIFT_PCT, PACE_CHANGE_SHARE};
use super::words::{self, pace_gap_s, per_unit, seconds};
use crate::analysis::kind::SessionKind;
use crate::journal::PurposeVerdict;

/// A score at or above this is praise.
// Common coaching practice (no published source): on a 1-5 scale 4 and 5 are good reps.
pub const GOOD_SCORE: u8 = 4;
/// A score at or below this is where the advice goes.
// Common coaching practice (no published source): 1 and 2 are poor reps.
pub const POOR_SCORE: u8 = 2;

/// Reps scored high and low, from the coach's scores (sets of two or more reps only).
pub struct ScoreRead {
    pub best: Vec<usize>,
    pub poor: Vec<usize>,
    /// Every rep got the same good score.
    pub all_good: bool,
}

pub fn read_scores(c: &Ctx<'_>) -> Option<ScoreRead> {
    if c.reps.len() < 2 || c.scores.len() < 2 {
        return None;
    }
    let max = c.scores.values().copied().max()?;
    let min = c.scores.values().copied().min()?;
    let best: Vec<usize> = if max >= GOOD_SCORE && max > min {
        c.scores
            .iter()
            .filter(|(_, s)| **s == max)
            .map(|(n, _)| *n)
            .collect()
    } else {
        Vec::new()
    };
    let poor: Vec<usize> = c
        .scores
        .iter()
        .filter(|(_, s)| **s <= POOR_SCORE)
        .map(|(n, _)| *n)
        .collect();
    Some(ScoreRead {
        best,
        poor,
        all_good: min == max && min >= GOOD_SCORE,
    })
}

/// Why a poorly scored rep stands out, from its numbers.
fn why_poor(c: &Ctx<'_>, number: usize) -> Option<String> {
    let rep = c.reps.iter().find(|r| r.number == number)?;
    match rep.side {
        Some(Side::Fast) => return Some("it was quicker than your target range".to_string()),
        Some(Side::Slow) => return Some("it was slower than your target range".to_string()),
        _ => {}
    }
    // In a progression each rep is meant to be quicker than the last: against the set's
    // average pace says nothing.
    if c.kind == SessionKind::Progression {
        return None;
    }
    let mean = c.mean_pace()?;
    let gap = pace_gap_s(rep.pace - mean, c.units);
    (gap >= 2.0).then(|| {
        format!(
            "it was {} {} {} than your average rep",
            seconds(gap),
            per_unit(c.units),
            if rep.pace > mean { "slower" } else { "quicker" }
        )
    })
}

/// The sentences the scores give: praise by number, then where to look.
pub fn from_scores(c: &Ctx<'_>) -> Vec<String> {
    let Some(read) = read_scores(c) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    if read.all_good && c.verdict != Some(PurposeVerdict::Missed) {
        out.push("Every rep was a good one.".to_string());
    } else if !read.best.is_empty() && read.best.len() < c.reps.len() {
        let verb = if read.best.len() == 1 { "was" } else { "were" };
        out.push(format!(
            "{} {verb} the pick of the set.",
            words::reps(&read.best)
        ));
    }
    if !read.poor.is_empty() && read.poor.len() < c.reps.len() {
        let reasons: Vec<(usize, Option<String>)> =
            read.poor.iter().map(|n| (*n, why_poor(c, *n))).collect();
        let first = reasons.first().and_then(|(_, w)| w.clone());
        let same = reasons.iter().all(|(_, w)| *w == first);
        let whys: Vec<String> = match (&first, same, read.poor.len()) {
            (Some(w), _, 1) => vec![w.clone()],
            (Some(w), true, _) => vec![format!("each {}", w.trim_start_matches("it "))],
            _ => reasons
                .iter()
                .filter_map(|(n, w)| {
                    w.as_ref()
                        .map(|w| format!("rep {n} {}", w.trim_start_matches("it ")))
                })
                .collect(),
        };
        let head = if read.poor.len() == 1 {
            format!("{} is the one to look at", words::reps(&read.poor))
        } else {
            format!("{} are the ones to look at", words::reps(&read.poor))
        };
        if whys.is_empty() {
            out.push(format!("{head}."));
        } else {
            out.push(format!("{head}: {}.", words::and_list(&whys)));
        }
    }
    out
}

/// Whether the poorly scored reps sit in the second half of the set.
fn poor_late(c: &Ctx<'_>) -> bool {
    let Some(read) = read_scores(c) else {
        return false;
    };
    let n = c.reps.len();
    !read.poor.is_empty() && read.poor.iter().all(|p| *p * 2 > n)
}

/// Reps quicker and slower than their targets.
fn off_target(c: &Ctx<'_>) -> (usize, usize, usize) {
    let judged = c.reps.iter().filter(|r| r.side.is_some()).count();
    let fast = c.reps.iter().filter(|r| r.side == Some(Side::Fast)).count();
    let slow = c.reps.iter().filter(|r| r.side == Some(Side::Slow)).count();
    (judged, fast, slow)
}

/// Advice for the reps the coach scored low, when nothing else asks for any.
fn poor_reps_advice(c: &Ctx<'_>) -> Option<String> {
    let read = read_scores(c)?;
    if read.poor.is_empty() || read.poor.len() == c.reps.len() {
        return None;
    }
    let mean = c.mean_pace()?;
    let poor: Vec<_> = c
        .reps
        .iter()
        .filter(|r| read.poor.contains(&r.number))
        .collect();
    let quicker = poor.iter().filter(|r| r.pace < mean).count();
    if c.kind == SessionKind::Progression {
        return Some(format!(
            "Next time, keep each step up small, a few seconds {} quicker each rep, so the \
             last one is still under control.",
            per_unit(c.units)
        ));
    }
    let last = c.reps.last().map(|r| r.number);
    let only_last = read.poor.len() == 1 && read.poor.first().copied() == last;
    Some(if quicker * 2 > poor.len() && only_last {
        "Next time, run the last rep at the same effort as the rest instead of racing it."
            .to_string()
    } else if quicker * 2 > poor.len() {
        "Next time, run every rep at the same effort: a rep run too quick costs the ones after \
         it."
        .to_string()
    } else if poor_late(c) {
        "Next time, start the first reps a touch slower so the last ones hold their pace."
            .to_string()
    } else {
        "Next time, aim to make every rep look like your best ones: same effort, same rhythm."
            .to_string()
    })
}

/// The one thing to do next time: a full sentence, or `None` when there is nothing the
/// numbers ask for (the caller then uses the coach's "keep going" wording).
pub fn next_time(c: &Ctx<'_>) -> Option<String> {
    let r = c.review;
    if r.findings.iter().any(|f| f.code == "missing_planned") || !r.missing_planned.is_empty() {
        return Some(
            "Next time, run the full set, or tell me early if it needs cutting.".to_string(),
        );
    }
    let (judged, fast, slow) = off_target(c);
    match c.kind {
        k if k.is_repeats() || (c.reps.len() >= 2 && k != SessionKind::Race) => {
            if k == SessionKind::Progression
                && c.reps
                    .windows(2)
                    .any(|w| matches!(w, [a, b] if b.pace >= a.pace))
            {
                return Some(
                    "Next time, start the first rep slower than feels natural so each one can \
                     be a little quicker than the last."
                        .to_string(),
                );
            }
            if (c.faded() || poor_late(c)) && c.rep_change().is_some_and(|x| x > 0.0) {
                return Some(
                    "Next time, start the first reps a touch slower so the last ones hold \
                     their pace."
                        .to_string(),
                );
            }
            if judged > 0 && fast * 2 > judged {
                return Some(
                    "Next time, hold back to your target range, even when the first reps feel \
                     easy."
                        .to_string(),
                );
            }
            if judged > 0 && slow * 2 > judged {
                return Some(
                    "Next time, settle into your target pace in the first 30 seconds of each \
                     rep and check it once halfway."
                        .to_string(),
                );
            }
            poor_reps_advice(c)
        }
        SessionKind::Race => Some(
            if c.halves_change().is_some_and(|x| x >= PACE_CHANGE_SHARE) {
                "Next time, go out a little more patiently: an even first half leaves more for \
                 the finish."
            } else {
                // Common coaching practice (no published source): easy running only for a
                // few days after a race or time trial.
                "Keep the next few days easy: a race takes more out of you than it feels like."
            }
            .to_string(),
        ),
        SessionKind::Tempo => {
            if c.faded()
                || r.work()
                    .next()
                    .and_then(|w| w.first_half_pace_s_per_km.zip(w.second_half_pace_s_per_km))
                    .is_some_and(|(a, b)| a > 0.0 && (b - a) / a >= PACE_CHANGE_SHARE)
            {
                return Some(
                    "Next time, start the block a little slower and build into it.".to_string(),
                );
            }
            if judged > 0 && fast * 2 > judged {
                return Some(
                    "Next time, hold back to your target range: the block should feel \
                     comfortably hard, not like a race."
                        .to_string(),
                );
            }
            None
        }
        SessionKind::LongRun => {
            if r.decoupling_pct.is_some_and(|d| d > DRIFT_PCT) {
                Some(
                    "On the next long run, start slower, drink early, and take something to \
                     eat if you are out for more than 90 minutes."
                        .to_string(),
                )
            } else if c.faded() {
                Some("On the next long run, start slower so the last part holds.".to_string())
            } else {
                None
            }
        }
        SessionKind::Easy | SessionKind::Treadmill => {
            // Slowing down is asked for when the pace was quicker than easy too (or there is
            // no heart rate): a heart rate above the easy range at easy pace is heat,
            // tiredness or zones set low, not running too fast.
            let hr_above = c
                .above_easy_s()
                .filter(|_| r.avg_hr.is_some())
                .map(|(s, _)| s);
            let pace_above = c.above_easy_pace_s();
            let above = match (hr_above, pace_above) {
                (Some(h), Some(p)) => Some(h.min(p)),
                (h, p) => h.or(p),
            };
            above.filter(|s| *s >= ABOVE_EASY_ADVICE_S).map(|_| {
                "Keep the easy days truly easy: slow down enough to hold a conversation, even \
                 if it feels very slow."
                    .to_string()
            })
        }
        _ => None,
    }
}
