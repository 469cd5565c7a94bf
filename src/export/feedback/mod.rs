//! The feedback draft: short, plain, in the coach's voice. What the workout was for,
//! whether it was met, the two or three facts that matter (in the athlete's units), and one
//! thing to do next time. No medical claims; health cautions carry the usual wording.

pub mod style;

use crate::analysis::findings::{Finding, Severity, MEDICAL_CAUTION};
use crate::analysis::review::Review;
use crate::journal::PurposeVerdict;
use crate::model::units::format_pace;
use crate::model::AthleteProfile;

pub use style::{FeedbackStyle, Format, Length};

/// The coach's grading of a session as the draft uses it.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Grades {
    /// `(work-interval number, score 1-5)` in force now.
    pub scores: Vec<(u32, u8)>,
    /// The purpose verdict in force now.
    pub verdict: Option<PurposeVerdict>,
}

impl Grades {
    /// The grades in force from a journal review state.
    pub fn from_state(state: &crate::journal::ReviewState) -> Grades {
        Grades {
            scores: state
                .scores
                .iter()
                .map(|c| (c.interval, c.current))
                .collect(),
            verdict: state.verdict.as_ref().map(|v| v.current),
        }
    }
}

/// Everything one session's draft is built from.
#[derive(Debug, Clone)]
pub struct DraftInput<'a> {
    pub review: &'a Review,
    pub profile: &'a AthleteProfile,
    pub grades: Grades,
    /// The athlete's note, once revealed (`None`: no note, or not revealed).
    pub note: Option<&'a str>,
}

/// One session of a day's message: the feedback the coach saved (used as edited), or a
/// draft to build.
#[derive(Debug, Clone)]
pub enum DayPart<'a> {
    Saved(&'a str),
    Draft(DraftInput<'a>),
}

/// The athlete's first name as the greeting uses it.
pub fn first_name(profile: &AthleteProfile) -> String {
    profile
        .name
        .split_whitespace()
        .next()
        .unwrap_or(&profile.name)
        .to_string()
}

/// The draft for one session: greeting, body, sign-off.
pub fn draft(input: &DraftInput<'_>, style: &FeedbackStyle) -> String {
    let verdict = input.grades.verdict.map(PurposeVerdict::as_str);
    let _ = style;
    old_draft(input.review, input.profile, verdict)
}

/// One message for an athlete's day: one greeting, the sessions in order, one sign-off.
/// A saved feedback text is used as the coach edited it.
pub fn day_message(
    profile: &AthleteProfile,
    parts: &[DayPart<'_>],
    style: &FeedbackStyle,
) -> String {
    let mut out = Vec::new();
    for p in parts {
        match p {
            DayPart::Saved(t) => out.push(t.trim_end().to_string()),
            DayPart::Draft(d) => out.push(draft(d, style).trim_end().to_string()),
        }
    }
    let _ = profile;
    let mut text = out.join("\n\n");
    text.push('\n');
    text
}

/// The coach's purpose verdict as the draft words it.
pub fn verdict_words(verdict: Option<&str>) -> Option<&'static str> {
    match verdict? {
        "met" => Some("You did what this session was for."),
        "partly" => Some("This session partly did its job."),
        "missed" => Some("This one missed what it was for, and that's fine to learn from."),
        _ => None,
    }
}

/// One thing to do next time, from the most important finding that has a remedy.
fn next_time(findings: &[Finding]) -> &'static str {
    for f in findings {
        let advice = match f.code.as_str() {
            "hr_above_max" | "hr_rate" => {
                "Check the heart-rate strap or watch fit before the next hard session."
            }
            "missing_planned" => "Run the full set next time, or tell me early if it needs cutting.",
            "fade_within" | "fade_set" | "uneven_pacing" => {
                "Start each repeat a touch slower and hold it: aim for an even or slightly faster second half."
            }
            "targets" if f.severity >= Severity::Note && f.text.contains(" fast ") => {
                "Hold back to the target pace, even when it feels easy early on."
            }
            "targets" if f.severity >= Severity::Note => {
                "Settle into the target pace in the first 30 seconds of each repeat and check it once midway."
            }
            "troughs_rising" => {
                "Take the recoveries fully and keep them truly easy, so each repeat starts fresh."
            }
            "decoupling_high" => {
                "On long or warm days start slower, drink early, and let pace drift rather than heart rate."
            }
            "hr_drift" => "Keep the steady runs steady: ease off when heart rate creeps up.",
            "cadence_lock" | "flagged" => {
                "Wear the watch snug (or a chest strap) so the data is clean next time."
            }
            _ => continue,
        };
        return advice;
    }
    "Same again: keep the effort where it was."
}

/// The facts worth telling the athlete: the top findings that are about the running
/// (not the data), at most three.
fn facts(findings: &[Finding]) -> Vec<String> {
    findings
        .iter()
        .filter(|f| {
            !matches!(
                f.code.as_str(),
                "no_hr_profile"
                    | "no_gps"
                    | "no_altitude"
                    | "decoupling_short"
                    | "inferred"
                    | "hr_drop_info"
                    | "targets_on_hill"
                    // Problems in the coach's own files, not about the running.
                    | "plan_not_used"
                    | "plan_pace_unknown"
                    | "profile_problems"
            ) && f.severity != Severity::Caution
        })
        .take(3)
        .map(|f| f.text.clone())
        .collect()
}

/// The draft text for one session.
fn old_draft(review: &Review, profile: &AthleteProfile, verdict: Option<&str>) -> String {
    let first = profile
        .name
        .split_whitespace()
        .next()
        .unwrap_or(&profile.name)
        .to_string();
    let mut out = format!("Hi {first},\n\n");
    let date = review.day();
    match &review.plan {
        Some(p) if !p.purpose.is_empty() => {
            out.push_str(&format!("{date} {}: {}\n", p.title, p.purpose));
        }
        Some(p) => out.push_str(&format!("{date} {}\n", p.title)),
        None => {
            let dist = review
                .session
                .distance_m
                .map(|d| {
                    format!(
                        " of {:.1} {}",
                        d / profile.units.metres(),
                        profile.units.label()
                    )
                })
                .unwrap_or_default();
            out.push_str(&format!("{date} run{dist}\n"));
        }
    }
    if let Some(v) = verdict_words(verdict) {
        out.push_str(v);
        out.push('\n');
    }
    let work: Vec<_> = review.work().collect();
    if !work.is_empty() {
        let paces: Vec<String> = work
            .iter()
            .filter_map(|m| m.avg_pace_s_per_km)
            .map(|p| format_pace(1000.0 / p, profile.units))
            .collect();
        if !paces.is_empty() {
            out.push_str(&format!("\nYour repeats: {}\n", paces.join(", ")));
        }
    }
    let facts = facts(&review.findings);
    if !facts.is_empty() {
        out.push('\n');
        for f in &facts {
            out.push_str(&format!("- {f}\n"));
        }
    }
    out.push_str(&format!("\nNext time: {}\n", next_time(&review.findings)));
    if review
        .findings
        .iter()
        .any(|f| f.severity == Severity::Caution)
    {
        out.push_str(&format!(
            "\nOne more thing: your heart-rate data looked unusual in places. It is most likely the \
             sensor, but if you felt anything odd, please get it checked. {MEDICAL_CAUTION}\n"
        ));
    }
    out
}
