//! The same workout over time (`analysis::earlier`): on the demo roster the planted repeated
//! workouts find each other, the changes are the differences of the per-session reviews, and
//! the pace at a fixed heart rate is the least-squares fit computed here independently. Then
//! the comparison's rules on cards built for the test. (The demo data is our own invention:
//! self-consistency checks of the whole pipeline.)

use std::collections::BTreeMap;
use std::path::Path;
use std::sync::OnceLock;

use chrono::{NaiveDate, TimeZone, Utc};
use splitdesk::analysis::card::{RepCard, SessionCard};
use splitdesk::analysis::earlier::{
    self, Candidate, Comparison, FitnessTrend, MatchedBy, PaceBasis, CAUTION, MAX_EARLIER,
    PACE_AT_HR_CAUTION,
};
use splitdesk::analysis::kind::SessionKind;
use splitdesk::analysis::review::Review;
use splitdesk::analysis::shape::{self, ShapeSource};
use splitdesk::model::{AthleteProfile, Session, Units};
use splitdesk::roster::Roster;
use splitdesk::workspace::analyse_activity;

struct Run {
    card: SessionCard,
    review: Review,
    session: Session,
}

struct AthleteRuns {
    units: Units,
    profile: AthleteProfile,
    runs: Vec<Run>,
}

/// Every demo session's card, built the way the journal builds it, with its review.
fn demo() -> &'static BTreeMap<String, AthleteRuns> {
    static DEMO: OnceLock<BTreeMap<String, AthleteRuns>> = OnceLock::new();
    DEMO.get_or_init(|| {
        let roster = Roster::open(&Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes"))
            .expect("demo roster opens");
        let mut out = BTreeMap::new();
        for a in &roster.athletes {
            let mut runs = Vec::new();
            for act in &a.activities {
                // A damaged file (the demo plants one) has no analysis, hence no card.
                let Ok(an) = analyse_activity(a, act) else {
                    continue;
                };
                let card = SessionCard::build(&an.session_id, &an.review, Some(&an.session))
                    .expect("demo card");
                runs.push(Run {
                    card,
                    review: an.review,
                    session: an.session,
                });
            }
            out.insert(
                a.id.clone(),
                AthleteRuns {
                    units: a.profile.units,
                    profile: a.profile.clone(),
                    runs,
                },
            );
        }
        out
    })
}

fn candidates(runs: &[Run]) -> Vec<Candidate> {
    runs.iter()
        .map(|r| Candidate {
            session_id: r.card.session_id.clone(),
            start: r.card.start,
            kind: r.card.kind,
            shape: r.card.shape.clone(),
        })
        .collect()
}

fn athlete(id: &str) -> &'static AthleteRuns {
    demo().get(id).unwrap_or_else(|| panic!("no athlete {id}"))
}

fn find<'a>(a: &'a AthleteRuns, session_id: &str) -> &'a Run {
    a.runs
        .iter()
        .find(|r| r.card.session_id == session_id)
        .unwrap_or_else(|| panic!("no session {session_id}"))
}

/// The ids `pick_earlier` chooses for a session, latest first.
fn picked(a: &AthleteRuns, session_id: &str) -> Vec<String> {
    let cands = candidates(&a.runs);
    earlier::pick_earlier(&find(a, session_id).card, &cands)
        .into_iter()
        .map(|i| cands[i].session_id.clone())
        .collect()
}

/// The comparison of a session with the earlier runs `pick_earlier` chose.
fn comparison(a: &AthleteRuns, session_id: &str) -> Comparison {
    let earlier: Vec<SessionCard> = picked(a, session_id)
        .iter()
        .map(|id| find(a, id).card.clone())
        .collect();
    earlier::compare(&find(a, session_id).card, &earlier, a.units)
}

fn mean(v: &[f64]) -> f64 {
    assert!(!v.is_empty());
    v.iter().sum::<f64>() / v.len() as f64
}

/// Mean pace of a review's work intervals on a pace basis, and their mean HR.
fn review_means(r: &Review, basis: PaceBasis) -> (f64, f64) {
    let paces: Vec<f64> = r
        .work()
        .filter_map(|w| match basis {
            PaceBasis::Raw => w.avg_pace_s_per_km,
            PaceBasis::HillAdjusted => w.hill_adjusted_pace_s_per_km,
        })
        .collect();
    let hrs: Vec<f64> = r.work().filter_map(|w| w.avg_hr).collect();
    (mean(&paces), mean(&hrs))
}

#[test]
fn planted_repeated_workouts_find_each_other() {
    // (later session, earlier runs it must find, latest first).
    let cases: &[(&str, &str, &[&str])] = &[
        (
            "ansel-marchetti",
            "2026-11-12-cruise-miles",
            &["2026-10-22-cruise-miles"],
        ),
        (
            "ansel-marchetti",
            "2026-11-19-hill-repeats",
            &["2026-10-29-hill-repeats"],
        ),
        // The good tempo of week 2 and the poor one of week 4.
        (
            "tobias-wrenfield",
            "2026-11-12-tempo",
            &["2026-10-29-tempo"],
        ),
        (
            "tobias-wrenfield",
            "2026-11-19-progression-repeats",
            &[
                "2026-11-05-progression-repeats",
                "2026-10-22-progression-repeats",
            ],
        ),
        // 8 x 200 m finds the sets of 10 x 200 m (within 20 %).
        (
            "tobias-wrenfield",
            "2026-11-24-short-reps",
            &["2026-11-17-short-reps", "2026-10-27-short-reps"],
        ),
        ("mira-castellan", "2026-11-21-tempo", &["2026-11-07-tempo"]),
        (
            "mira-castellan",
            "2026-11-17-intervals",
            &["2026-10-27-intervals"],
        ),
        ("oren-falkner", "2026-11-04-tempo", &["2026-10-21-tempo"]),
    ];
    for (who, later, expected) in cases {
        let a = athlete(who);
        let id = format!("{who}/{later}");
        let want: Vec<String> = expected.iter().map(|s| format!("{who}/{s}")).collect();
        assert_eq!(picked(a, &id), want, "{id}");
        // The earlier run does not find the later one (later sessions are skipped).
        for e in &want {
            assert!(!picked(a, e).contains(&id), "{e} finds the later {id}");
        }
    }
    // Different workouts of one athlete stay apart: the cruise miles (3 x 1 mi / 1:30 jog)
    // are not the progression (4 x 1 mi / 2:00 jog) nor the hills (6 x 1:30); the 15-minute
    // tempo is not the 30-minute one.
    let ansel = athlete("ansel-marchetti");
    assert!(picked(ansel, "ansel-marchetti/2026-11-05-progression-repeats").is_empty());
    assert!(picked(ansel, "ansel-marchetti/2026-10-29-hill-repeats").is_empty());
    assert!(picked(athlete("oren-falkner"), "oren-falkner/2026-11-19-tempo").is_empty());
}

#[test]
fn every_pick_is_earlier_of_the_same_shape_or_kind_latest_first() {
    for (who, a) in demo() {
        for r in &a.runs {
            let got = picked(a, &r.card.session_id);
            assert!(got.len() <= MAX_EARLIER);
            let cards: Vec<&SessionCard> = got.iter().map(|id| &find(a, id).card).collect();
            for w in cards.windows(2) {
                assert!(w[0].start > w[1].start, "{who}: not latest first");
            }
            for c in &cards {
                assert!(c.start < r.card.start);
                match (&r.card.shape, &c.shape) {
                    (Some(x), Some(y)) => assert!(shape::same_workout(x, y)),
                    (None, None) => {
                        assert!(matches!(
                            r.card.kind,
                            SessionKind::Easy | SessionKind::LongRun
                        ));
                        assert_eq!(c.kind, r.card.kind);
                    }
                    _ => panic!(
                        "{}: picked {} across shape",
                        r.card.session_id, c.session_id
                    ),
                }
            }
            // Easy runs: five earlier easy runs once the athlete has had five.
            if r.card.kind == SessionKind::Easy && r.card.shape.is_none() {
                let before = a
                    .runs
                    .iter()
                    .filter(|o| {
                        o.card.kind == SessionKind::Easy
                            && o.card.shape.is_none()
                            && o.card.start < r.card.start
                    })
                    .count();
                assert_eq!(got.len(), before.min(MAX_EARLIER), "{}", r.card.session_id);
            }
        }
    }
}

#[test]
fn changes_are_the_differences_of_the_session_reviews() {
    let mut checked = 0;
    for a in demo().values() {
        for r in &a.runs {
            if r.card.shape.is_none() {
                continue;
            }
            let cmp = comparison(a, &r.card.session_id);
            assert_eq!(cmp.matched_by, MatchedBy::WorkoutShape);
            assert_eq!(cmp.caution, CAUTION);
            let last = cmp.runs.last().expect("the session is the last run");
            assert!(last.current && last.session_id == r.card.session_id);
            assert_eq!(cmp.runs.iter().filter(|o| o.current).count(), 1);
            for w in cmp.runs.windows(2) {
                assert!(w[0].day <= w[1].day, "oldest first");
            }
            // Per-rep rows are the review's work intervals.
            let work: Vec<_> = r.review.work().collect();
            assert_eq!(last.reps.len(), work.len());
            for (row, w) in last.reps.iter().zip(&work) {
                let pace = match cmp.pace_basis {
                    PaceBasis::Raw => w.avg_pace_s_per_km,
                    PaceBasis::HillAdjusted => w.hill_adjusted_pace_s_per_km,
                };
                assert_eq!(row.pace_s_per_km, pace);
                assert_eq!(row.avg_hr, w.avg_hr);
                assert_eq!(row.relative_intensity, w.relative_intensity);
            }
            let (now_pace, now_hr) = review_means(&r.review, cmp.pace_basis);
            assert_eq!(cmp.changes.len(), cmp.runs.len() - 1);
            for (k, ch) in cmp.changes.iter().enumerate() {
                // Latest first.
                if let Some(next) = cmp.changes.get(k + 1) {
                    assert!(ch.day >= next.day);
                }
                let then = find(a, &ch.session_id);
                let (then_pace, then_hr) = review_means(&then.review, cmp.pace_basis);
                let d = ch.pace_s_per_km.expect("pace change");
                // To the second (and far below it: the same numbers).
                assert!(
                    (d - (now_pace - then_pace)).abs() < 1e-9,
                    "{}: {d} vs {}",
                    r.card.session_id,
                    now_pace - then_pace
                );
                assert_eq!(
                    (d * 1.0).round(),
                    (now_pace - then_pace).round(),
                    "to the second"
                );
                let h = ch.hr_bpm.expect("hr change");
                assert!((h - (now_hr - then_hr)).abs() < 1e-9);
                // The words, in the athlete's units.
                let per = d * a.units.metres() / 1000.0;
                let amount = format!("{:.1} s/{}", per.abs(), a.units.label());
                if amount.starts_with("0.0 ") {
                    assert!(ch.text.starts_with("The same pace"), "{}", ch.text);
                } else {
                    let dir = if per < 0.0 { "faster" } else { "slower" };
                    assert!(
                        ch.text.starts_with(&format!("{amount} {dir}")),
                        "{}",
                        ch.text
                    );
                }
                assert!(
                    ch.text.contains(&format!("than on {}", ch.day)) || amount.starts_with("0.0 ")
                );
                let bpm = h.abs().round();
                if bpm == 0.0 {
                    assert!(ch.text.ends_with("at the same heart rate"), "{}", ch.text);
                } else {
                    let dir = if h < 0.0 { "lower" } else { "higher" };
                    assert!(
                        ch.text
                            .ends_with(&format!("at {bpm:.0} bpm {dir} heart rate")),
                        "{}",
                        ch.text
                    );
                }
                checked += 1;
            }
        }
    }
    // Every repeated structured workout of the roster has been through this.
    assert!(checked >= 15, "only {checked} changes checked");
}

#[test]
fn the_planted_changes_read_as_planted() {
    // Ansel's threshold rises 2.5 % a week (the scenario): three weeks later the cruise
    // miles are faster at much the same heart rate.
    let a = athlete("ansel-marchetti");
    let cmp = comparison(a, "ansel-marchetti/2026-11-12-cruise-miles");
    assert_eq!(cmp.units, "mi");
    let ch = &cmp.changes[0];
    assert!(ch.pace_s_per_km.unwrap() < -10.0, "{ch:?}");
    assert!(
        ch.text.contains("s/mi faster per rep than on 2026-10-22"),
        "{}",
        ch.text
    );
    assert_eq!(cmp.text[0], format!("{}.", ch.text));
    let p = cmp.pace_at_hr.as_ref().unwrap();
    assert_eq!(p.trend, FitnessTrend::Fitter, "{}", p.text);
    assert!(
        p.text.contains("getting fitter at this workout"),
        "{}",
        p.text
    );
    assert!(p.text.ends_with(PACE_AT_HR_CAUTION));
    // Tobias's poor tempo (week 4: fading, warm, tired) is slower than the good one at a
    // higher heart rate; a tempo is one work interval, so no "per rep".
    let t = athlete("tobias-wrenfield");
    let cmp = comparison(t, "tobias-wrenfield/2026-11-12-tempo");
    let ch = &cmp.changes[0];
    assert!(
        ch.pace_s_per_km.unwrap() > 0.0 && ch.hr_bpm.unwrap() > 0.0,
        "{ch:?}"
    );
    assert!(
        ch.text.contains("s/km slower than on 2026-10-29 at"),
        "{}",
        ch.text
    );
    // One work interval a run: too few points for the fit, said so.
    let p = cmp.pace_at_hr.as_ref().unwrap();
    assert_eq!(p.trend, FitnessTrend::Unclear);
    assert!(p.text.contains("2 work intervals"), "{}", p.text);
}

/// Closed-form least squares with two predictors on centred sums:
/// b1 = (S1y S22 - S2y S12) / (S11 S22 - S12^2), b2 = (S2y S11 - S1y S12) / (S11 S22 - S12^2),
/// Sjk the centred cross-products.
// Source: the two-predictor regression formulas of any statistics text (From memory:
// e.g. Snedecor & Cochran, Statistical Methods, 8th ed. 1989, ch. 17 "Multiple linear
// regression", the two-variable normal equations solved in closed form). Independent of
// the library's Gaussian elimination of the uncentred normal equations.
fn closed_form(points: &[(f64, f64, f64)]) -> (f64, f64) {
    let n = points.len() as f64;
    let (my, m1, m2) = points.iter().fold((0.0, 0.0, 0.0), |(a, b, c), p| {
        (a + p.0 / n, b + p.1 / n, c + p.2 / n)
    });
    let (mut s11, mut s22, mut s12, mut s1y, mut s2y) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for &(y, x1, x2) in points {
        let (dy, d1, d2) = (y - my, x1 - m1, x2 - m2);
        s11 += d1 * d1;
        s22 += d2 * d2;
        s12 += d1 * d2;
        s1y += d1 * dy;
        s2y += d2 * dy;
    }
    let det = s11 * s22 - s12 * s12;
    ((s1y * s22 - s2y * s12) / det, (s2y * s11 - s1y * s12) / det)
}

#[test]
fn pace_at_hr_is_the_least_squares_fit_computed_independently() {
    let mut fitted = 0;
    for a in demo().values() {
        for r in &a.runs {
            if r.card.shape.is_none() {
                continue;
            }
            let cmp = comparison(a, &r.card.session_id);
            let Some(p) = &cmp.pace_at_hr else { continue };
            let Some(b1) = p.slope_s_per_km_per_bpm else {
                continue;
            };
            // The points from the per-session reviews: every work interval with a pace (on
            // the comparison's basis) and a heart rate; date as days from the first run.
            let first = cmp.runs[0].day;
            let mut points = Vec::new();
            let mut current_hr = Vec::new();
            for o in &cmp.runs {
                let rev = &find(a, &o.session_id).review;
                for w in rev.work() {
                    let pace = match cmp.pace_basis {
                        PaceBasis::Raw => w.avg_pace_s_per_km,
                        PaceBasis::HillAdjusted => w.hill_adjusted_pace_s_per_km,
                    };
                    if let (Some(pace), Some(hr)) = (pace, w.avg_hr) {
                        points.push((pace, hr, (o.day - first).num_days() as f64));
                        if o.current {
                            current_hr.push(hr);
                        }
                    }
                }
            }
            assert_eq!(p.points, points.len());
            let (c1, c2) = closed_form(&points);
            assert!((b1 - c1).abs() < 1e-6 * c1.abs().max(1.0), "{b1} vs {c1}");
            let trend = p.trend_s_per_km_per_week.unwrap();
            assert!((trend - c2 * 7.0).abs() < 1e-6 * (c2 * 7.0).abs().max(1.0));
            // The fixed heart rate: the session's mean rep HR, rounded.
            assert_eq!(p.hr_bpm, mean(&current_hr).round());
            if p.trend == FitnessTrend::Unclear {
                assert!(c1 >= 0.0, "unclear with a negative slope: {}", p.text);
                continue;
            }
            // Each run's mean pace moved to the fixed HR along the slope.
            assert_eq!(p.runs.len(), cmp.runs.len());
            for pr in &p.runs {
                let mine: Vec<(f64, f64)> = points
                    .iter()
                    .zip(cmp.runs.iter().flat_map(|o| {
                        let rev = &find(a, &o.session_id).review;
                        let n = rev
                            .work()
                            .filter(|w| {
                                let pace = match cmp.pace_basis {
                                    PaceBasis::Raw => w.avg_pace_s_per_km,
                                    PaceBasis::HillAdjusted => w.hill_adjusted_pace_s_per_km,
                                };
                                pace.is_some() && w.avg_hr.is_some()
                            })
                            .count();
                        std::iter::repeat_n(o.session_id.clone(), n)
                    }))
                    .filter(|(_, id)| *id == pr.session_id)
                    .map(|(pt, _)| (pt.0, pt.1))
                    .collect();
                let mp = mean(&mine.iter().map(|m| m.0).collect::<Vec<_>>());
                let mh = mean(&mine.iter().map(|m| m.1).collect::<Vec<_>>());
                let want = mp + c1 * (p.hr_bpm - mh);
                assert!(
                    (pr.pace_s_per_km - want).abs() < 1e-6,
                    "{} vs {want}",
                    pr.pace_s_per_km
                );
            }
            // The verdict against 1 % of the session's pace at the fixed HR over the span.
            let span = points.iter().map(|q| q.2).fold(0.0, f64::max);
            let change = c2 * span;
            let reference = p.runs.last().unwrap().pace_s_per_km;
            let want = if change <= -0.01 * reference {
                FitnessTrend::Fitter
            } else if change >= 0.01 * reference {
                FitnessTrend::Slower
            } else {
                FitnessTrend::Same
            };
            assert_eq!(p.trend, want, "{}", p.text);
            assert!(p.text.ends_with(PACE_AT_HR_CAUTION));
            fitted += 1;
        }
    }
    assert!(fitted >= 5, "only {fitted} fits checked");
}

#[test]
fn easy_and_long_runs_compare_on_flat_ground_at_heart_rate() {
    for a in demo().values() {
        for r in &a.runs {
            if r.card.shape.is_some()
                || !matches!(r.card.kind, SessionKind::Easy | SessionKind::LongRun)
            {
                continue;
            }
            let cmp = comparison(a, &r.card.session_id);
            assert_eq!(cmp.matched_by, MatchedBy::Kind);
            for o in &cmp.runs {
                let c = &find(a, &o.session_id).card;
                assert!(o.reps.is_empty());
                assert_eq!(o.mean_hr, c.avg_hr);
                assert_eq!(o.decoupling_pct, c.decoupling_pct);
                match cmp.pace_basis {
                    PaceBasis::HillAdjusted => {
                        assert_eq!(o.mean_pace_s_per_km, c.flat_pace_s_per_km)
                    }
                    PaceBasis::Raw => {
                        let raw = c.moving_s / c.distance_m.unwrap() * 1000.0;
                        assert!((o.mean_pace_s_per_km.unwrap() - raw).abs() < 1e-9);
                    }
                }
            }
            for ch in &cmp.changes {
                assert!(
                    ch.text.contains(" on flat ground ")
                        || ch.text.starts_with("The same pace on flat ground"),
                    "{}",
                    ch.text
                );
            }
        }
    }
    // Ansel's easy runs: the same loop, the same pace, a falling heart rate (the planted
    // improving efficiency).
    let a = athlete("ansel-marchetti");
    let cmp = comparison(a, "ansel-marchetti/2026-11-25-easy-run");
    assert_eq!(cmp.runs.len(), MAX_EARLIER + 1);
    let oldest = cmp.changes.last().unwrap();
    assert!(oldest.hr_bpm.unwrap() <= -2.0, "{oldest:?}");
    assert!(oldest.text.contains("drift"), "{}", oldest.text);
}

#[test]
fn unplanned_sets_are_found_by_their_detected_shape() {
    // The cruise miles and hill repeats analysed without their plans: the detected sets
    // match each other and the planned shapes of the same workout, not the other workout.
    let a = athlete("ansel-marchetti");
    let detect = |id: &str| {
        let run = find(a, id);
        let review = splitdesk::analysis::analyze(&run.session, None, &a.profile);
        let s = shape::detected(&review).expect("a detected shape");
        assert_eq!(s.source, ShapeSource::Detected);
        s
    };
    let cruise1 = detect("ansel-marchetti/2026-10-22-cruise-miles");
    let cruise2 = detect("ansel-marchetti/2026-11-12-cruise-miles");
    let hills = detect("ansel-marchetti/2026-11-19-hill-repeats");
    assert!(
        shape::same_workout(&cruise1, &cruise2),
        "{} / {}",
        cruise1.label,
        cruise2.label
    );
    let planned = find(a, "ansel-marchetti/2026-11-12-cruise-miles")
        .card
        .shape
        .clone()
        .unwrap();
    assert!(
        shape::same_workout(&cruise1, &planned),
        "{} / {}",
        cruise1.label,
        planned.label
    );
    assert!(
        !shape::same_workout(&cruise1, &hills),
        "{} / {}",
        cruise1.label,
        hills.label
    );
    let planned_hills = find(a, "ansel-marchetti/2026-10-29-hill-repeats")
        .card
        .shape
        .clone()
        .unwrap();
    assert!(
        shape::same_workout(&hills, &planned_hills),
        "{} / {}",
        hills.label,
        planned_hills.label
    );
}

#[test]
fn report_table() {
    // The table for the report (`cargo test --test earlier_runs report_table -- --nocapture`).
    for (who, a) in demo() {
        for r in &a.runs {
            if r.card.shape.is_none() {
                continue;
            }
            let got = picked(a, &r.card.session_id);
            let cmp = comparison(a, &r.card.session_id);
            let verdict = cmp
                .pace_at_hr
                .as_ref()
                .map(|p| format!("{:?}", p.trend))
                .unwrap_or_else(|| "-".into());
            println!(
                "| {who} | {} | {} | {} | {} | {verdict} |",
                r.card.day,
                r.card.shape.as_ref().map_or("", |s| s.label.as_str()),
                if got.is_empty() {
                    "-".to_string()
                } else {
                    got.iter()
                        .map(|id| find(a, id).card.day.to_string())
                        .collect::<Vec<_>>()
                        .join(", ")
                },
                cmp.changes.first().map_or("-", |c| c.text.as_str()),
            );
        }
    }
    assert!(!demo().is_empty());
}

// ---------------------------------------------------------------------------------------
// Cards built for the test.

fn rep(number: usize, pace: f64, hr: f64, grade: Option<f64>, adjusted: Option<f64>) -> RepCard {
    RepCard {
        number,
        start_s: 900.0 + number as f64 * 300.0,
        end_s: 900.0 + number as f64 * 300.0 + 180.0,
        duration_s: 180.0,
        distance_m: Some(180.0 / pace * 1000.0),
        pace_s_per_km: Some(pace),
        hill_adjusted_pace_s_per_km: adjusted,
        avg_hr: Some(hr),
        relative_intensity: Some(0.9),
        grade_pct: grade,
        recovery_trough_bpm: Some(hr - 30.0),
        trace_mps: Vec::new(),
    }
}

fn card(id: &str, day: (i32, u32, u32), reps: Vec<RepCard>) -> SessionCard {
    let start = Utc
        .with_ymd_and_hms(day.0, day.1, day.2, 7, 0, 0)
        .single()
        .unwrap();
    let shape = splitdesk::analysis::shape::from_plan(&splitdesk::model::Plan {
        title: "t".into(),
        purpose: String::new(),
        date: None,
        steps: splitdesk::plan::parse_line("6 x 3:00 @ 5k / 2:00 jog").unwrap(),
    });
    SessionCard {
        session_id: format!("test/{id}"),
        start,
        day: NaiveDate::from_ymd_opt(day.0, day.1, day.2).unwrap(),
        kind: SessionKind::Intervals,
        running: true,
        sport: "running".into(),
        duration_s: 3600.0,
        moving_s: 3500.0,
        distance_m: Some(12000.0),
        trimp: Some(90.0),
        trimp_lower_bound: false,
        avg_hr: Some(150.0),
        flat_pace_s_per_km: Some(290.0),
        decoupling_pct: Some(2.0),
        elevation_gain_m: Some(20.0),
        hill_adjusted: reps.iter().all(|r| r.hill_adjusted_pace_s_per_km.is_some()),
        plan_title: Some("Threes".into()),
        plan_file: None,
        shape,
        reps,
    }
}

/// A set of six reps: paces `base + k`, HR `hr + k` (faster reps... no: the fit's data are
/// planted below explicitly where it matters).
fn set(id: &str, day: (i32, u32, u32), paces: &[f64], hrs: &[f64]) -> SessionCard {
    let reps = paces
        .iter()
        .zip(hrs)
        .enumerate()
        .map(|(k, (&p, &h))| rep(k + 1, p, h, Some(0.0), Some(p)))
        .collect();
    card(id, day, reps)
}

#[test]
fn fitter_same_and_slower_from_planted_fits() {
    // Pace = 600 - 2 * HR + trend * days, exactly, over three runs two weeks apart: the fit
    // finds the slope and trend back and the verdict follows the 1 % line.
    let hrs = [160.0, 162.0, 164.0, 166.0, 168.0, 170.0];
    let build = |trend_per_day: f64| {
        let days = [(2026, 10, 1), (2026, 10, 15), (2026, 10, 29)];
        let cards: Vec<SessionCard> = days
            .iter()
            .enumerate()
            .map(|(k, d)| {
                let t = 14.0 * k as f64;
                let paces: Vec<f64> = hrs
                    .iter()
                    .map(|h| 600.0 - 2.0 * (h + k as f64) + trend_per_day * t)
                    .collect();
                let hr: Vec<f64> = hrs.iter().map(|h| h + k as f64).collect();
                set(&format!("r{k}"), *d, &paces, &hr)
            })
            .collect();
        let (now, before) = cards.split_last().unwrap();
        earlier::compare(now, before, Units::Km)
    };
    // -0.2 s/km a day over 28 days: -5.6 s/km on a pace near 270 s/km (2 %): fitter.
    let p = build(-0.2).pace_at_hr.unwrap();
    assert!((p.slope_s_per_km_per_bpm.unwrap() + 2.0).abs() < 1e-9);
    assert!((p.trend_s_per_km_per_week.unwrap() + 1.4).abs() < 1e-9);
    assert_eq!(p.hr_bpm, 167.0); // the session's mean rep HR, 167
    assert_eq!(p.trend, FitnessTrend::Fitter, "{}", p.text);
    // All three runs at 167 bpm: 600 - 334 + trend * days.
    let at: Vec<f64> = p.runs.iter().map(|r| r.pace_s_per_km).collect();
    for (k, v) in at.iter().enumerate() {
        assert!((v - (266.0 - 0.2 * 14.0 * k as f64)).abs() < 1e-9, "{at:?}");
    }
    assert!(
        p.text.contains("getting fitter at this workout"),
        "{}",
        p.text
    );
    assert!(
        p.text.contains("5.6 s/km faster over 4 weeks"),
        "{}",
        p.text
    );
    // +0.05 s/km a day: 1.4 s/km over 28 days, 0.5 %: about the same.
    assert_eq!(build(0.05).pace_at_hr.unwrap().trend, FitnessTrend::Same);
    // +0.2 s/km a day: slower.
    assert_eq!(build(0.2).pace_at_hr.unwrap().trend, FitnessTrend::Slower);
}

#[test]
fn unclear_when_too_few_points_singular_or_hr_does_not_explain_pace() {
    // One earlier run of two reps and the session of two: four points.
    let a = set("a", (2026, 10, 1), &[250.0, 252.0], &[160.0, 161.0]);
    let b = set("b", (2026, 10, 8), &[248.0, 249.0], &[160.0, 162.0]);
    let p = earlier::compare(&b, std::slice::from_ref(&a), Units::Km)
        .pace_at_hr
        .unwrap();
    assert_eq!(p.trend, FitnessTrend::Unclear);
    assert!(
        p.text
            .contains("4 reps with pace and heart rate over 2 runs"),
        "{}",
        p.text
    );
    assert!(p.text.ends_with(PACE_AT_HR_CAUTION));
    // Every rep at one heart rate: pace cannot be put on HR (singular).
    let a = set("a", (2026, 10, 1), &[250.0, 252.0, 251.0], &[160.0; 3]);
    let b = set("b", (2026, 10, 8), &[248.0, 249.0, 247.0], &[160.0; 3]);
    let p = earlier::compare(&b, std::slice::from_ref(&a), Units::Km)
        .pace_at_hr
        .unwrap();
    assert_eq!(p.trend, FitnessTrend::Unclear);
    assert!(p.text.contains("cannot be told apart"), "{}", p.text);
    // Faster reps at lower heart rate: HR does not explain pace.
    let a = set(
        "a",
        (2026, 10, 1),
        &[250.0, 252.0, 254.0],
        &[160.0, 162.0, 164.0],
    );
    let b = set(
        "b",
        (2026, 10, 8),
        &[248.0, 250.0, 252.0],
        &[160.0, 162.0, 164.0],
    );
    let p = earlier::compare(&b, std::slice::from_ref(&a), Units::Km)
        .pace_at_hr
        .unwrap();
    assert_eq!(p.trend, FitnessTrend::Unclear);
    assert!(p.slope_s_per_km_per_bpm.unwrap() > 0.0);
    assert!(
        p.text.contains("heart rate does not explain pace"),
        "{}",
        p.text
    );
    // No earlier run: no fit, and the text says there is nothing to compare.
    let cmp = earlier::compare(&b, &[], Units::Km);
    assert!(cmp.changes.is_empty() && cmp.pace_at_hr.is_none());
    assert_eq!(cmp.runs.len(), 1);
    assert_eq!(
        cmp.text,
        vec!["No earlier run of this workout to compare with.".to_string()]
    );
}

#[test]
fn set_numbers_and_miles() {
    let a = set(
        "a",
        (2026, 10, 27),
        &[250.0, 252.0, 254.0],
        &[160.0, 162.0, 167.0],
    );
    let b = set(
        "b",
        (2026, 11, 10),
        &[248.0, 250.0, 250.0],
        &[158.0, 160.0, 162.0],
    );
    let cmp = earlier::compare(&b, std::slice::from_ref(&a), Units::Km);
    let then = &cmp.runs[0];
    assert_eq!(then.mean_pace_s_per_km, Some(252.0));
    // Sample SD of 250, 252, 254: 2.
    assert!((then.spread_s_per_km.unwrap() - 2.0).abs() < 1e-12);
    assert!((then.mean_hr.unwrap() - 163.0).abs() < 1e-12);
    assert!((then.mean_trough_bpm.unwrap() - 133.0).abs() < 1e-12);
    assert_eq!(then.mean_relative_intensity, Some(0.9));
    // 249.333 - 252 = -2.667 s/km, 160 - 163 = -3 bpm.
    assert_eq!(
        cmp.changes[0].text,
        "2.7 s/km faster per rep than on 2026-10-27 at 3 bpm lower heart rate"
    );
    // In miles: 2.667 s/km is 4.3 s/mi.
    let cmp = earlier::compare(&b, std::slice::from_ref(&a), Units::Mi);
    assert_eq!(cmp.units, "mi");
    assert_eq!(
        cmp.changes[0].text,
        "4.3 s/mi faster per rep than on 2026-10-27 at 3 bpm lower heart rate"
    );
    // The session itself and a later run given by mistake are left out.
    let later = set("c", (2026, 11, 20), &[240.0; 3], &[150.0; 3]);
    let cmp = earlier::compare(&b, &[later, b.clone(), a.clone()], Units::Km);
    assert_eq!(cmp.runs.len(), 2);
    assert_eq!(cmp.changes.len(), 1);
}

#[test]
fn hill_adjusted_pace_when_the_ground_differs() {
    // The same set on the flat and on a 2 % drag: the comparison goes on hill-adjusted pace.
    let flat = card(
        "flat",
        (2026, 10, 20),
        (1..=6)
            .map(|k| rep(k, 250.0, 165.0, Some(0.1), Some(250.5)))
            .collect(),
    );
    let hilly = card(
        "hilly",
        (2026, 11, 3),
        (1..=6)
            .map(|k| rep(k, 262.0, 166.0, Some(2.0), Some(245.0)))
            .collect(),
    );
    let cmp = earlier::compare(&hilly, std::slice::from_ref(&flat), Units::Km);
    assert_eq!(cmp.pace_basis, PaceBasis::HillAdjusted);
    assert_eq!(cmp.runs[1].reps[0].pace_s_per_km, Some(245.0));
    assert!((cmp.changes[0].pace_s_per_km.unwrap() + 5.5).abs() < 1e-9);
    assert!(cmp.text.iter().any(|t| t.contains("hill-adjusted")));
    // The same ground: raw pace.
    let flat2 = card(
        "flat2",
        (2026, 11, 3),
        (1..=6)
            .map(|k| rep(k, 248.0, 165.0, Some(0.3), Some(248.9)))
            .collect(),
    );
    let cmp = earlier::compare(&flat2, std::slice::from_ref(&flat), Units::Km);
    assert_eq!(cmp.pace_basis, PaceBasis::Raw);
    assert_eq!(cmp.runs[1].reps[0].pace_s_per_km, Some(248.0));
    // Ground differs but one run has no hill-adjusted pace (no altitude): raw.
    let no_alt = card(
        "noalt",
        (2026, 11, 3),
        (1..=6)
            .map(|k| rep(k, 262.0, 166.0, Some(2.0), None))
            .collect(),
    );
    let cmp = earlier::compare(&no_alt, std::slice::from_ref(&flat), Units::Km);
    assert_eq!(cmp.pace_basis, PaceBasis::Raw);
}

#[test]
fn nothing_to_compare_for_a_ride() {
    let mut ride = set("ride", (2026, 11, 3), &[200.0], &[140.0]);
    ride.running = false;
    ride.kind = SessionKind::NotRunning;
    ride.shape = None;
    let cands = vec![Candidate {
        session_id: "test/x".into(),
        start: ride.start - chrono::Duration::days(7),
        kind: SessionKind::NotRunning,
        shape: None,
    }];
    assert!(earlier::pick_earlier(&ride, &cands).is_empty());
    let cmp = earlier::compare(&ride, &[], Units::Km);
    assert_eq!(cmp.matched_by, MatchedBy::Nothing);
    assert!(cmp.runs.len() == 1 && cmp.changes.is_empty() && cmp.pace_at_hr.is_none());
}
