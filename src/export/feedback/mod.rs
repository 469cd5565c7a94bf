//! The feedback draft: a message a coach would send, in the athlete's words and the coach's
//! voice.
//!
//! Built after the reveal from four things: the kind of session (a race gets its finish
//! time and splits, an interval set its reps, a long run its pacing and heart-rate drift,
//! an easy run whether it stayed easy), the coach's grading (the verdict sentence, the reps
//! scored high praised by number, the low ones where the advice goes), the athlete's note
//! (a short reply that sets how they felt beside the numbers) and the coach's style
//! (`[feedback]` in `config.toml`). One thing to do next time, a greeting and a sign-off.
//! No coach-only words ([`words::COACH_ONLY_WORDS`]), no questions, numbers in the
//! athlete's units. Health cautions carry the usual wording: a coaching aid, not medical
//! advice.

pub mod advice;
pub mod body;
pub mod reply;
pub mod style;
pub mod words;

use crate::analysis::findings::Severity;
use crate::analysis::review::Review;
use crate::journal::PurposeVerdict;
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
    /// The stretches the coach marked with rulers on the chart, fitted.
    pub marks: Vec<crate::analysis::ruler::RulerFit>,
    /// The session beside its earlier runs of the same workout, when known: a clear gain
    /// on the last one is said ([`body::against_earlier`]).
    pub earlier: Option<&'a crate::analysis::earlier::Comparison>,
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

/// At most this many of the coach's ruler marks are put into words.
pub const MAX_MARKS: usize = 2;

/// Which part of the draft a line belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Part {
    /// What the session was and when.
    Opening,
    /// The coach's purpose verdict.
    Verdict,
    /// The numbers, by session kind.
    Facts,
    /// What the coach's scores say.
    Scores,
    /// The reply to the athlete's note.
    NoteReply,
    /// The one thing to do next time.
    NextTime,
    /// A health or load caution.
    Caution,
}

/// One sentence of a draft.
#[derive(Debug, Clone, PartialEq)]
pub struct Line {
    pub part: Part,
    pub text: String,
}

/// A draft before it is laid out: the greeting, the sentences by part, the sign-off.
#[derive(Debug, Clone, PartialEq)]
pub struct Draft {
    pub greeting: String,
    pub lines: Vec<Line>,
    pub sign_off: String,
    pub signature: String,
}

impl Draft {
    /// The sentences of one part, in order.
    pub fn part(&self, part: Part) -> impl Iterator<Item = &str> {
        self.lines
            .iter()
            .filter(move |l| l.part == part)
            .map(|l| l.text.as_str())
    }
}

/// Text from the roster (plan titles) without control or bidi-format characters.
fn clean(text: &str) -> String {
    let format_char = |c: char| matches!(c, '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{FEFF}');
    text.chars()
        .map(|c| {
            if c.is_control() || format_char(c) {
                ' '
            } else {
                c
            }
        })
        .collect::<String>()
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

/// The opening: what the session was and when.
fn opening(review: &Review, kind: crate::analysis::kind::SessionKind) -> String {
    use crate::analysis::kind::SessionKind as K;
    let day = words::day(&review.day());
    // A plan title in the coach's shorthand ("Decoupling check") is left for the kind.
    match review.plan.as_ref().map(|p| clean(&p.title)) {
        Some(t) if !t.is_empty() && words::coach_word_in(&t).is_none() => {
            format!("{t}, {day}.")
        }
        _ => {
            let what = match kind {
                K::Race => "race",
                K::LongRun => "long run",
                K::Intervals | K::Hills | K::Progression => "session",
                K::Tempo => "tempo",
                K::Treadmill => "treadmill run",
                K::NotRunning => "session",
                K::Easy => "run",
            };
            format!("Your {what} on {day}.")
        }
    }
}

/// The cautions, in athlete words.
fn cautions(review: &Review) -> Vec<String> {
    let mut out = Vec::new();
    let caution = |code: &str| {
        review
            .findings
            .iter()
            .any(|f| f.code == code && f.severity == Severity::Caution)
    };
    if review
        .findings
        .iter()
        .any(|f| f.severity == Severity::Caution && f.code.starts_with("hr_"))
    {
        out.push(format!(
            "One more thing: your heart rate read unusually high in places. It is most likely \
             the sensor, but if you felt anything odd (dizziness, a racing heart, chest \
             discomfort), please get it checked. {}",
            words::ATHLETE_CAUTION
        ));
    }
    if caution("load_spike") {
        out.push(
            "Your training has stepped up quickly over the last week or so: keep the next few \
             days easy and tell me how your body feels."
                .to_string(),
        );
    }
    out
}

/// The draft's sentences, by part.
pub fn compose(input: &DraftInput<'_>, style: &FeedbackStyle) -> Draft {
    let units = input.profile.units;
    let review = input.review;
    let c = body::Ctx::new(review, units, input.grades.verdict, &input.grades.scores);
    let name = first_name(input.profile);
    let title = review
        .plan
        .as_ref()
        .map(|p| clean(&p.title))
        .filter(|t| !t.is_empty() && words::coach_word_in(t).is_none())
        .unwrap_or_else(|| "run".to_string());
    let vars = [("{name}", name.as_str()), ("{title}", title.as_str())];
    let mut lines = Vec::new();
    let mut push = |part: Part, text: String| {
        if !text.trim().is_empty() {
            lines.push(Line { part, text });
        }
    };
    push(Part::Opening, opening(review, c.kind));
    if let Some(v) = input.grades.verdict {
        push(Part::Verdict, style.phrase(v.as_str(), &vars));
    }
    for f in body::facts(&c) {
        push(Part::Facts, f);
    }
    // A set run faster than its target is not cheered for being faster than last time.
    let earlier = input.earlier.filter(|_| !body::ran_above_target(review));
    if let Some(t) = earlier.and_then(|e| body::against_earlier(e, units)) {
        push(Part::Facts, t);
    }
    for m in input.marks.iter().take(MAX_MARKS) {
        if let Some(t) = body::mark(m, units) {
            push(Part::Facts, t);
        }
    }
    for s in advice::from_scores(&c) {
        push(Part::Scores, s);
    }
    if let Some(r) = input.note.and_then(|n| reply::reply(n, &c)) {
        push(Part::NoteReply, r);
    }
    let next = advice::next_time(&c).unwrap_or_else(|| {
        if input.grades.verdict == Some(PurposeVerdict::Missed) {
            "Let's talk it through before the next one.".to_string()
        } else {
            style.phrase("keep_going", &vars)
        }
    });
    push(Part::NextTime, next);
    for t in cautions(review) {
        push(Part::Caution, t);
    }
    Draft {
        greeting: style.phrase("greeting", &vars),
        lines,
        sign_off: style.phrase("sign_off", &vars),
        signature: clean(style.signature()),
    }
}

/// The draft laid out as text (or Markdown), without greeting and sign-off.
fn body_text(d: &Draft, style: &FeedbackStyle) -> String {
    let join = |parts: &[Part]| -> String {
        d.lines
            .iter()
            .filter(|l| parts.contains(&l.part))
            .map(|l| l.text.as_str())
            .collect::<Vec<_>>()
            .join(" ")
    };
    match style.length {
        Length::Brief => {
            // Two to four lines for a chat message: the verdict with the headline number,
            // the reply to the note, the one thing for next time (with any caution).
            let mut first = join(&[Part::Verdict]);
            if let Some(h) = d.part(Part::Facts).next() {
                if !first.is_empty() {
                    first.push(' ');
                }
                first.push_str(h);
            }
            let mut out = vec![first];
            // A reply that only thanks is left out of a chat message.
            let reply = join(&[Part::NoteReply]);
            if reply != reply::THANKS {
                out.push(reply);
            }
            out.push(join(&[Part::NextTime, Part::Caution]));
            out.retain(|l| !l.trim().is_empty());
            out.join("\n")
        }
        Length::Full => {
            let mut opening = join(&[Part::Opening, Part::Verdict]);
            if style.format == Format::Markdown {
                opening = format!("**{opening}**");
            }
            let paragraphs = [
                opening,
                join(&[Part::Facts]),
                join(&[Part::NoteReply]),
                join(&[Part::Scores, Part::NextTime]),
                join(&[Part::Caution]),
            ];
            paragraphs
                .into_iter()
                .filter(|p| !p.trim().is_empty())
                .collect::<Vec<_>>()
                .join("\n\n")
        }
    }
}

/// The sign-off lines.
fn sign_off_text(d: &Draft, style: &FeedbackStyle) -> String {
    match (style.length, d.sign_off.trim().is_empty()) {
        (_, true) => d.signature.clone(),
        (Length::Brief, false) => format!("{} {}", d.sign_off.trim(), d.signature),
        (Length::Full, false) => format!("{}\n{}", d.sign_off.trim(), d.signature),
    }
}

/// The draft for one session: greeting, body, sign-off.
pub fn draft(input: &DraftInput<'_>, style: &FeedbackStyle) -> String {
    let d = compose(input, style);
    let mut out = String::new();
    if !d.greeting.trim().is_empty() {
        out.push_str(d.greeting.trim());
        out.push_str(if style.length == Length::Brief {
            "\n"
        } else {
            "\n\n"
        });
    }
    out.push_str(&body_text(&d, style));
    out.push_str(if style.length == Length::Brief {
        "\n"
    } else {
        "\n\n"
    });
    out.push_str(&sign_off_text(&d, style));
    out.push('\n');
    out
}

/// A saved text without the greeting and sign-off the day's message puts around it (only
/// when they are exactly the style's; anything the coach wrote stays).
fn unframed(text: &str, greeting: &str, style: &FeedbackStyle) -> String {
    let mut lines: Vec<&str> = text.trim().lines().collect();
    if lines
        .first()
        .is_some_and(|l| l.trim() == greeting.trim() && !greeting.trim().is_empty())
    {
        lines.remove(0);
    }
    let signature = clean(style.signature());
    if lines.last().is_some_and(|l| l.trim() == signature) {
        lines.pop();
        let sign_off = style.phrase("sign_off", &[]);
        if lines
            .last()
            .is_some_and(|l| !l.trim().is_empty() && l.trim() == sign_off.trim())
        {
            lines.pop();
        }
    } else if let Some(last) = lines.last() {
        // The brief sign-off on one line.
        let one_line = format!("{} {signature}", style.phrase("sign_off", &[]).trim());
        if last.trim() == one_line.trim() {
            lines.pop();
        }
    }
    lines.join("\n").trim().to_string()
}

/// One message for an athlete's day: one greeting, the sessions in order, one sign-off.
/// Saved feedback is used as the coach edited it (a single saved session is the whole
/// message; with several, each saved text goes in as it is).
pub fn day_message(
    profile: &AthleteProfile,
    parts: &[DayPart<'_>],
    style: &FeedbackStyle,
) -> String {
    match parts {
        [] => String::new(),
        [DayPart::Saved(t)] => format!("{}\n", t.trim_end()),
        [DayPart::Draft(d)] => draft(d, style),
        _ => {
            let name = first_name(profile);
            let greeting = style.phrase("greeting", &[("{name}", name.as_str())]);
            let mut blocks = Vec::new();
            let mut signature = None;
            for p in parts {
                match p {
                    DayPart::Saved(t) => blocks.push(unframed(t, &greeting, style)),
                    DayPart::Draft(d) => {
                        let c = compose(d, style);
                        signature.get_or_insert_with(|| sign_off_text(&c, style));
                        blocks.push(body_text(&c, style));
                    }
                }
            }
            let mut out = String::new();
            if !greeting.trim().is_empty() {
                out.push_str(greeting.trim());
                out.push_str("\n\n");
            }
            out.push_str(&blocks.join("\n\n"));
            out.push_str("\n\n");
            let sig = signature.unwrap_or_else(|| {
                let probe = Draft {
                    greeting: String::new(),
                    lines: Vec::new(),
                    sign_off: style.phrase("sign_off", &[("{name}", name.as_str())]),
                    signature: clean(style.signature()),
                };
                sign_off_text(&probe, style)
            });
            out.push_str(&sig);
            out.push('\n');
            out
        }
    }
}
