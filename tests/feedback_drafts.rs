//! Feedback drafts over every demo session: athlete words only, verdict and facts agree,
//! numbers equal the analysis in the athlete's units, the coach's scores and the note shape
//! what is said.

mod feedback_support;

use feedback_support::*;
use splitdesk::analysis::kind::SessionKind;
use splitdesk::export::feedback::words::{coach_word_in, pace};
use splitdesk::export::feedback::{
    compose, day_message, draft, DayPart, FeedbackStyle, Length, Part,
};
use splitdesk::journal::PurposeVerdict;
use splitdesk::model::units::format_clock;
use splitdesk::model::Units;

const VERDICTS: [PurposeVerdict; 3] = [
    PurposeVerdict::Met,
    PurposeVerdict::Partly,
    PurposeVerdict::Missed,
];

/// Claims of full success: never in the facts or scores of a session the coach did not
/// call met.
const SUCCESS_CLAIMS: &[&str] = &[
    "every rep was inside",
    "for 100 % of it",
    "each rep was inside",
];

/// Claims of failure: never in the facts, scores or advice of a session called met.
const FAILURE_CLAIMS: &[&str] = &[
    "didn't quite",
    "missed",
    "fell short",
    "talk it through",
    "not what it was",
];

/// Punctuation a careful writer never doubles.
const DOUBLED: &[&str] = &[
    "::", "..", ",,", ";;", ": :", ".:", ":.", ",.", ".,", "  ", " ,", " .", " :", "!!",
];

fn style(length: Length) -> FeedbackStyle {
    FeedbackStyle {
        coach: Some("Sam Adeyemi".into()),
        length,
        ..Default::default()
    }
}

/// Score patterns a coach might give: all good, all poor, a set that faded, mixed.
type Pattern = (&'static str, fn(u32) -> u8);

fn patterns() -> Vec<Pattern> {
    vec![
        ("all 4", |_| 4),
        ("all 2", |_| 2),
        ("fading", |k| {
            if k <= 2 {
                5
            } else if k <= 4 {
                3
            } else {
                1
            }
        }),
        ("mixed", |k| [3, 5, 2, 4][(k as usize) % 4]),
    ]
}

#[test]
fn every_draft_in_athlete_words_and_agreeing_with_its_verdict() {
    let sessions = every_kind();
    assert!(sessions.len() > 150, "the demo roster is analysed");
    // Every kind is covered.
    for k in SessionKind::ALL {
        assert!(
            sessions.iter().any(|s| s.review.kind == k),
            "no {k:?} session"
        );
    }
    let mut checked = 0;
    for s in sessions {
        let units = s.profile.units;
        let first = s.profile.name.split_whitespace().next().unwrap();
        for v in VERDICTS {
            for (pname, p) in patterns() {
                for length in [Length::Full, Length::Brief] {
                    for with_note in [true, false] {
                        let st = style(length);
                        let input = input(s, grades(&s.review, v, p), with_note);
                        let d = compose(&input, &st);
                        let text = draft(&input, &st);
                        let ctx =
                            format!("{} {v} {pname} {length:?} note={with_note}\n{text}", s.id);
                        // Athlete words only.
                        assert_eq!(coach_word_in(&text), None, "{ctx}");
                        // No question aimed at the coach; only the note reply may ask.
                        for l in &d.lines {
                            if l.part != Part::NoteReply {
                                assert!(!l.text.contains('?'), "{ctx}");
                            }
                        }
                        for dbl in DOUBLED {
                            assert!(!text.contains(dbl), "doubled {dbl:?}: {ctx}");
                        }
                        // Greeting and sign-off in the coach's name.
                        assert!(text.starts_with(&format!("Hi {first},")), "{ctx}");
                        assert!(text.trim_end().ends_with("Sam Adeyemi"), "{ctx}");
                        // The athlete's units only.
                        match units {
                            Units::Km => {
                                assert!(!text.contains("/mi") && !text.contains("mile"), "{ctx}")
                            }
                            Units::Mi => {
                                assert!(!text.contains("/km") && !text.contains(" km"), "{ctx}")
                            }
                        }
                        // The verdict sentence is the verdict's, and the facts agree with it.
                        let verdict_line: Vec<&str> = d.part(Part::Verdict).collect();
                        assert_eq!(
                            verdict_line,
                            vec![st
                                .phrase(v.as_str(), &[("{name}", first), ("{title}", "")])
                                .as_str()],
                            "{ctx}"
                        );
                        let judged: String = d
                            .lines
                            .iter()
                            .filter(|l| {
                                matches!(l.part, Part::Facts | Part::Scores | Part::NextTime)
                            })
                            .map(|l| l.text.to_lowercase())
                            .collect::<Vec<_>>()
                            .join(" ");
                        match v {
                            PurposeVerdict::Met => {
                                for w in FAILURE_CLAIMS {
                                    assert!(!judged.contains(w), "met but {w:?}: {ctx}");
                                }
                            }
                            _ => {
                                for w in SUCCESS_CLAIMS {
                                    assert!(!judged.contains(w), "{v} but {w:?}: {ctx}");
                                }
                                if v == PurposeVerdict::Missed {
                                    assert!(!judged.contains("every rep was a good one"), "{ctx}");
                                }
                            }
                        }
                        // The note is answered only when there is one to answer.
                        let replied = d.part(Part::NoteReply).count();
                        let has_note =
                            with_note && s.note.as_deref().is_some_and(|n| !n.trim().is_empty());
                        assert_eq!(replied, usize::from(has_note), "{ctx}");
                        if length == Length::Brief {
                            let lines = text.trim_end().lines().count();
                            // Greeting, two to four lines, sign-off.
                            assert!((3..=6).contains(&lines), "{lines} lines: {ctx}");
                        }
                        checked += 1;
                    }
                }
            }
        }
    }
    assert!(checked > 3000, "{checked}");
}

#[test]
fn numbers_equal_the_analysis_in_the_athletes_units() {
    let st = style(Length::Full);
    let mut races = 0;
    let mut sets = 0;
    for s in demo() {
        let r = &s.review;
        let units = s.profile.units;
        let input = input(s, grades(r, PurposeVerdict::Met, |_| 4), true);
        let text = draft(&input, &st);
        match r.kind {
            SessionKind::Race => {
                let sp = r
                    .splits
                    .as_ref()
                    .unwrap_or_else(|| panic!("{}: splits", s.id));
                // Finish time and every full split, to the second.
                assert!(text.contains(&format_clock(sp.time_s)), "{}\n{text}", s.id);
                for x in sp.full(units) {
                    assert!(
                        text.contains(&format_clock(x.time_s)),
                        "split {}: {text}",
                        x.number
                    );
                }
                races += 1;
            }
            SessionKind::Intervals | SessionKind::Hills => {
                let on_hill = text.contains("Allowing for the climb");
                let paces: Vec<f64> = r
                    .work()
                    .filter_map(|w| {
                        if on_hill {
                            w.hill_adjusted_pace_s_per_km
                        } else {
                            w.avg_pace_s_per_km
                        }
                    })
                    .collect();
                let fastest = paces.iter().copied().fold(f64::INFINITY, f64::min);
                let slowest = paces.iter().copied().fold(0.0, f64::max);
                assert!(text.contains(&pace(fastest, units)), "{}\n{text}", s.id);
                assert!(text.contains(&pace(slowest, units)), "{}\n{text}", s.id);
                // On flat ground the draft does not talk about hills.
                let climb = r.work().filter_map(|w| w.grade_pct).sum::<f64>()
                    / r.work().count().max(1) as f64;
                if climb < 1.0 {
                    assert!(!on_hill, "{}: flat set read as a hill: {text}", s.id);
                }
                sets += 1;
            }
            SessionKind::LongRun | SessionKind::Easy => {
                assert!(
                    text.contains(&format_clock(r.session.moving_s)),
                    "{}\n{text}",
                    s.id
                );
            }
            _ => {}
        }
    }
    assert!(races >= 5 && sets >= 10, "{races} races, {sets} sets");
}

#[test]
fn the_coachs_scores_name_the_best_and_the_poor_reps() {
    let s = session("mira-castellan/2026-10-27-intervals");
    let g = grades(&s.review, PurposeVerdict::Partly, |k| match k {
        2 | 5 => 5,
        6 => 1,
        _ => 3,
    });
    let d = compose(&input(s, g, false), &style(Length::Full));
    let scores: Vec<&str> = d.part(Part::Scores).collect();
    assert!(
        scores[0].starts_with("Reps 2 and 5 were the pick of the set"),
        "{scores:?}"
    );
    assert!(
        scores[1].starts_with("Rep 6 is the one to look at"),
        "{scores:?}"
    );
    // A set scored evenly high is praised as a whole; not on a missed session.
    let g = grades(&s.review, PurposeVerdict::Met, |_| 5);
    let d = compose(&input(s, g, false), &style(Length::Full));
    assert_eq!(
        d.part(Part::Scores).collect::<Vec<_>>(),
        vec!["Every rep was a good one."]
    );
    let g = grades(&s.review, PurposeVerdict::Missed, |_| 5);
    let d = compose(&input(s, g, false), &style(Length::Full));
    assert_eq!(d.part(Part::Scores).count(), 0);
}

fn reply_to(id: &str, verdict: PurposeVerdict, score: u8, note: &str) -> String {
    let s = session(id);
    let mut i = input(s, grades(&s.review, verdict, |_| score), false);
    i.note = Some(note);
    let d = compose(&i, &style(Length::Full));
    d.part(Part::NoteReply).collect::<Vec<_>>().join(" ")
}

#[test]
fn the_note_reply_sets_the_feeling_beside_the_numbers() {
    // Tired legs on a tempo the coach called strong: the numbers disagree, kindly.
    let r = reply_to(
        "oren-falkner/2026-11-04-tempo",
        PurposeVerdict::Met,
        5,
        "legs dead today, no idea how I held it",
    );
    assert!(
        r.starts_with(
            "You said your legs felt heavy, but the numbers say this was a strong session"
        ),
        "{r}"
    );
    // "Best session in ages" on a set that faded.
    let s = session("mira-castellan/2026-11-17-intervals");
    let reps: Vec<f64> = s
        .review
        .work()
        .filter_map(|w| w.avg_pace_s_per_km)
        .collect();
    assert!(
        reps.last().unwrap() - reps.first().unwrap() >= 4.0,
        "the set fades: {reps:?}"
    );
    let r = reply_to(
        "mira-castellan/2026-11-17-intervals",
        PurposeVerdict::Partly,
        3,
        "best session in ages, felt great",
    );
    assert!(
        r.starts_with(
            "Glad it felt good. The numbers tell a slightly different story: the last rep was"
        ),
        "{r}"
    );
    // Agreement both ways.
    let r = reply_to(
        "mira-castellan/2026-10-27-intervals",
        PurposeVerdict::Met,
        5,
        "felt smooth and strong",
    );
    assert_eq!(r, "Glad it felt good: the numbers agree.");
    let r = reply_to(
        "mira-castellan/2026-11-17-intervals",
        PurposeVerdict::Missed,
        2,
        "awful, legs like lead",
    );
    assert!(r.contains("and it shows in the numbers too"), "{r}");
    // Pain gets the health caution, not training advice; effort words do not.
    let r = reply_to(
        "mira-castellan/2026-10-27-intervals",
        PurposeVerdict::Met,
        4,
        "sharp pain in my shin on rep 4",
    );
    assert!(r.contains("not a doctor"), "{r}");
    let r = reply_to(
        "mira-castellan/2026-10-27-intervals",
        PurposeVerdict::Met,
        4,
        "last one hurt but good hurt. no pain anywhere",
    );
    assert!(!r.contains("not a doctor"), "{r}");
    // A niggle is noted, and whether it settled.
    let r = reply_to(
        "keziah-brandt/2026-10-25-long-run",
        PurposeVerdict::Met,
        4,
        "Slight tightness in the left calf, gone after ten minutes.",
    );
    assert!(r.contains("Good that the calf settled"), "{r}");
    let r = reply_to(
        "keziah-brandt/2026-10-25-long-run",
        PurposeVerdict::Met,
        4,
        "Knee a bit stiff in the last mile.",
    );
    assert!(r.contains("Keep an eye on the knee"), "{r}");
}

#[test]
fn the_coachs_voice_shapes_greeting_sign_off_and_length() {
    let s = session("mira-castellan/2026-10-27-intervals");
    let mut st = style(Length::Brief);
    st.phrases
        .insert("greeting".into(), "Morning {name}!".into());
    st.phrases.insert("sign_off".into(), "".into());
    st.phrases.insert("met".into(), "Nailed it, {name}.".into());
    let text = draft(
        &input(s, grades(&s.review, PurposeVerdict::Met, |_| 4), true),
        &st,
    );
    let lines: Vec<&str> = text.trim_end().lines().collect();
    assert_eq!(lines.first(), Some(&"Morning Mira!"), "{text}");
    assert_eq!(lines.last(), Some(&"Sam Adeyemi"), "{text}");
    assert!(
        lines[1].starts_with("Nailed it, Mira. Your 6 reps averaged"),
        "{text}"
    );
    assert!((3..=6).contains(&lines.len()), "{text}");
    // No coach name configured: the draft signs "Coach".
    let text = draft(
        &input(s, grades(&s.review, PurposeVerdict::Met, |_| 4), true),
        &FeedbackStyle::default(),
    );
    assert!(text.trim_end().ends_with("Cheers,\nCoach"), "{text}");
}

#[test]
fn a_days_message_has_one_greeting_and_one_sign_off() {
    let a = session("mira-castellan/2026-10-27-intervals");
    let b = session("mira-castellan/2026-10-29-easy-run");
    let st = style(Length::Full);
    let parts = [
        DayPart::Draft(input(
            a,
            grades(&a.review, PurposeVerdict::Met, |_| 4),
            true,
        )),
        DayPart::Draft(input(
            b,
            grades(&b.review, PurposeVerdict::Met, |_| 4),
            true,
        )),
    ];
    let text = day_message(&a.profile, &parts, &st);
    assert_eq!(text.matches("Hi Mira,").count(), 1, "{text}");
    assert_eq!(text.matches("Sam Adeyemi").count(), 1, "{text}");
    assert!(
        text.contains("Intervals at 5k pace") && text.contains("Easy run"),
        "{text}"
    );
    // A saved text goes in as edited, without its own greeting and sign-off twice.
    let saved = "Hi Mira,\n\nGreat reps today, proud of you.\n\nCheers,\nSam Adeyemi\n";
    let parts = [
        DayPart::Saved(saved),
        DayPart::Draft(input(
            b,
            grades(&b.review, PurposeVerdict::Met, |_| 4),
            true,
        )),
    ];
    let text = day_message(&a.profile, &parts, &st);
    assert!(text.contains("Great reps today, proud of you."), "{text}");
    assert_eq!(text.matches("Hi Mira,").count(), 1, "{text}");
    assert_eq!(text.matches("Sam Adeyemi").count(), 1, "{text}");
}

#[test]
fn kinds_without_demo_sessions_read_right() {
    // A treadmill run: the same easy run without positions.
    let s = session("mira-castellan/2026-10-29-easy-run");
    let mut r = s.review.clone();
    r.session.channels.retain(|c| c != "position");
    r.plan = None;
    assert_eq!(
        splitdesk::analysis::kind::classify(&r, None),
        SessionKind::Treadmill
    );
    r.kind = SessionKind::Treadmill;
    let mut i = input(s, grades(&r, PurposeVerdict::Met, |_| 4), false);
    i.review = &r;
    let text = draft(&i, &style(Length::Full));
    assert!(
        text.contains("Your treadmill run on Thursday 29 October."),
        "{text}"
    );
    assert!(text.contains("On the treadmill: 7.86 km"), "{text}");
    // Not a run: no running numbers.
    let mut r = s.review.clone();
    r.running = false;
    r.session.sport = "cycling".into();
    r.kind = splitdesk::analysis::kind::classify(&r, None);
    assert_eq!(r.kind, SessionKind::NotRunning);
    let mut i = input(s, grades(&r, PurposeVerdict::Met, |_| 4), false);
    i.review = &r;
    let text = draft(&i, &style(Length::Full));
    assert!(
        text.contains("Thanks for logging the ride: 40 minutes."),
        "{text}"
    );
    assert!(!text.contains("/km"), "{text}");
}

#[test]
fn the_coachs_ruler_marks_are_put_into_words() {
    let roster =
        splitdesk::roster::Roster::open(&splitdesk::config::demo_roster()).expect("demo roster");
    let (a, act) = roster
        .find_session("keziah-brandt/2026-11-29-long-run")
        .expect("session");
    let an = splitdesk::workspace::analyse_activity(a, act).expect("analysed");
    let fit = splitdesk::analysis::ruler::fit_window(&an.session, 600.0, 2400.0);
    let s = session("keziah-brandt/2026-11-29-long-run");
    let mut i = input(s, grades(&s.review, PurposeVerdict::Met, |_| 4), false);
    i.marks = vec![fit];
    let d = compose(&i, &style(Length::Full));
    let facts: Vec<&str> = d.part(Part::Facts).collect();
    let line = facts
        .iter()
        .find(|l| l.starts_with("From 10:00 to 40:00 into the run, your pace"))
        .unwrap_or_else(|| panic!("{facts:?}"));
    let p0 = pace(1000.0 / fit.speed_at(600.0).unwrap(), Units::Km);
    assert!(line.contains(&p0), "{line} {p0}");
    assert_eq!(coach_word_in(line), None);
}

#[test]
fn a_long_race_gives_the_range_of_its_splits() {
    // A half marathon's 21 splits, made from the demo 10 km race's first split.
    let s = session("tobias-wrenfield/2026-11-29-race");
    let mut r = s.review.clone();
    let sp = r.splits.as_mut().unwrap();
    let one = sp.splits[0].clone();
    sp.splits = (1..=21)
        .map(|k| {
            let mut x = one.clone();
            x.number = k;
            x.time_s = 180.0 + k as f64;
            x.distance_m = 1000.0;
            x
        })
        .collect();
    let mut i = input(s, grades(&r, PurposeVerdict::Met, |_| 4), false);
    i.review = &r;
    let text = draft(&i, &style(Length::Full));
    assert!(
        text.contains("Your km splits ranged from 3:01 (km 1) to 3:21 (km 21)."),
        "{text}"
    );
    assert!(text.contains("Keep the next few days easy"), "{text}");
}

#[test]
fn the_readme_examples_are_what_splitdesk_drafts() {
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap();
    let section = readme
        .split("### The feedback draft")
        .nth(1)
        .expect("README section");
    let blocks: Vec<&str> = section
        .split("```text\n")
        .skip(1)
        .take(2)
        .map(|b| b.split("```").next().unwrap())
        .collect();
    let st = FeedbackStyle {
        coach: Some("Sam".into()),
        ..Default::default()
    };
    let mira = session("mira-castellan/2026-11-17-intervals");
    let g = grades(&mira.review, PurposeVerdict::Partly, |k| {
        [4, 4, 3, 3, 2, 2][(k - 1) as usize]
    });
    assert_eq!(blocks[0], draft(&input(mira, g, true), &st));
    let tobias = session("tobias-wrenfield/2026-11-29-race");
    let g = grades(&tobias.review, PurposeVerdict::Met, |_| 5);
    assert_eq!(blocks[1], draft(&input(tobias, g, true), &st));
}

#[test]
fn hostile_or_coachy_plan_titles_stay_out_of_the_draft() {
    let s = session("mira-castellan/2026-10-27-intervals");
    for (title, shown) in [
        ("Decoupling check \u{1b}]52;c;AAAA\u{7}", false),
        ("Reps \u{202E}evil\u{202C} day", true),
    ] {
        let mut r = s.review.clone();
        r.plan.as_mut().unwrap().title = title.to_string();
        let mut i = input(s, grades(&r, PurposeVerdict::Met, |_| 4), false);
        i.review = &r;
        let text = draft(&i, &style(Length::Full));
        assert!(
            !text.chars().any(|c| c.is_control() && c != '\n'),
            "{text:?}"
        );
        assert!(!text.contains('\u{202E}'), "{text:?}");
        assert_eq!(coach_word_in(&text), None, "{text}");
        assert_eq!(text.contains("Reps evil day"), shown, "{text}");
    }
}
