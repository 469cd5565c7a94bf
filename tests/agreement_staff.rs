//! Agreement across a staff of coaches: each pair's weighted kappa, the wide disagreements,
//! the mean of the pairwise kappas, the `--coach` filter, and the text and JSON a head coach
//! reads.

mod kappa_support;

use std::collections::{BTreeMap, BTreeSet};

use chrono::{DateTime, TimeZone, Utc};
use splitdesk::analysis::agreement::{
    staff_agreement, weighted_kappa, AgreementError, CoachGrade, NoKappa, StaffAgreement, Weights,
};
use splitdesk::cli::agreement_cmd::{landis_koch_word, render_json, render_text};

fn at(day: u32, hour: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 11, day, hour, 0, 0).unwrap()
}

fn grade(coach: &str, session: &str, interval_no: u32, score: u8) -> CoachGrade {
    // Session "s07" starts on 7 November at 07:00; its athlete is "ath-s07".
    let day: u32 = session.trim_start_matches('s').parse().unwrap_or(1);
    CoachGrade {
        coach: coach.to_string(),
        athlete_id: format!("ath-{session}"),
        session_id: session.to_string(),
        start_time: at(day, 7),
        interval_no,
        score,
    }
}

/// One coach's scores of intervals 1.. of one session.
fn scores(coach: &str, session: &str, s: &[u8]) -> Vec<CoachGrade> {
    s.iter()
        .enumerate()
        .map(|(i, &x)| grade(coach, session, i as u32 + 1, x))
        .collect()
}

fn names(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() < tol
}

/// Source: ../shared/design/methods.md, "Weighted kappa": the twelve-item check values
/// (computed with the formula and with scikit-learn's `cohen_kappa_score`).
#[test]
fn two_coaches_give_the_methods_check_value() {
    let a = [1, 2, 3, 4, 5, 3, 3, 4, 2, 5, 4, 3];
    let b = [1, 3, 3, 4, 4, 3, 2, 4, 2, 5, 5, 2];
    let mut grades = scores("Beth", "s10", &b);
    grades.extend(scores("Arne", "s10", &a));
    let got = staff_agreement(&grades, &[]).unwrap();
    assert_eq!(got.pairs.len(), 1);
    let p = &got.pairs[0];
    // Coach a is the first by name whatever the input order.
    assert_eq!((p.coach_a.as_str(), p.coach_b.as_str()), ("Arne", "Beth"));
    assert_eq!(p.kappa.n, 12);
    assert!(close(p.kappa.kappa.unwrap(), 0.852941, 5e-7));
    assert_eq!(p.no_kappa, None);
    // One pair: the overall figure is that pair's kappa with its interval.
    assert_eq!(got.overall.kappa, p.kappa.kappa);
    assert_eq!(got.overall.ci95, p.kappa.ci95);
    assert!(got.overall.ci95.is_some());
    assert_eq!(got.overall.pairs_averaged, 1);
    assert_eq!(got.overall.items, 12);
    // No interval is two points apart in this set.
    assert!(p.wide.is_empty());
}

/// Three coaches with kappas checkable by hand, and a fourth who shares nothing.
///
/// A = 1 2 3 4, B = 1 2 3 4, C = 2 3 4 5 on the same four intervals; D scored one interval of
/// another session. With quadratic weights a = 1 − (i − j)²/16:
/// - A and B agree exactly: kappa 1.
/// - A and C (and B and C) differ by one point on every interval: p_o = 15/16. Chance pairs
///   every A score with every C score: Σ(i − j)² over the 16 pairs is 56, so
///   p_e = 1 − 3.5/16 = 12.5/16 and kappa = (15 − 12.5)/(16 − 12.5) = 5/7.
/// - Light's kappa = (1 + 5/7 + 5/7)/3 = 17/21.
fn staff_of_four() -> Vec<CoachGrade> {
    let mut g = scores("C", "s03", &[2, 3, 4, 5]);
    g.extend(scores("A", "s03", &[1, 2, 3, 4]));
    g.extend(scores("D", "s05", &[4]));
    g.extend(scores("B", "s03", &[1, 2, 3, 4]));
    g
}

#[test]
fn three_coaches_give_the_hand_computed_kappas() {
    let got = staff_agreement(&staff_of_four(), &[]).unwrap();
    let counts: Vec<(&str, usize)> = got
        .coaches
        .iter()
        .map(|c| (c.coach.as_str(), c.items))
        .collect();
    assert_eq!(counts, vec![("A", 4), ("B", 4), ("C", 4), ("D", 1)]);
    let pairs: Vec<(&str, &str, Option<f64>, Option<NoKappa>)> = got
        .pairs
        .iter()
        .map(|p| {
            (
                p.coach_a.as_str(),
                p.coach_b.as_str(),
                p.kappa.kappa,
                p.no_kappa,
            )
        })
        .collect();
    let names: Vec<(&str, &str)> = pairs.iter().map(|p| (p.0, p.1)).collect();
    assert_eq!(
        names,
        vec![
            ("A", "B"),
            ("A", "C"),
            ("A", "D"),
            ("B", "C"),
            ("B", "D"),
            ("C", "D")
        ]
    );
    assert!(close(pairs[0].2.unwrap(), 1.0, 1e-12));
    assert!(close(pairs[1].2.unwrap(), 5.0 / 7.0, 1e-12));
    assert!(close(pairs[3].2.unwrap(), 5.0 / 7.0, 1e-12));
    for i in [2, 4, 5] {
        assert_eq!(pairs[i].2, None);
        assert_eq!(pairs[i].3, Some(NoKappa::NoSharedItems));
    }
    let ac = &got.pairs[1];
    assert!(close(1.0 - ac.kappa.observed, 1.0 / 16.0, 1e-12));
    assert!(close(1.0 - ac.kappa.expected, 3.5 / 16.0, 1e-12));
    assert!(close(got.overall.kappa.unwrap(), 17.0 / 21.0, 1e-12));
    assert_eq!(got.overall.pairs_averaged, 3);
    // The mean of several pairs carries no interval.
    assert_eq!(got.overall.ci95, None);
    // D's interval was scored by D alone.
    assert_eq!(got.overall.items, 4);
}

/// A small deterministic generator for self-consistency sets (invented data).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self, m: u64) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (self.0 >> 33) % m
    }
}

/// Three coaches each scoring part of 20 sessions × 6 intervals, mostly close to a true score.
fn random_staff(seed: u64) -> Vec<CoachGrade> {
    let mut r = Lcg(seed);
    let mut out = Vec::new();
    for s in 1..=20u32 {
        let session = format!("s{s:02}");
        for i in 1..=6u32 {
            let truth = 1 + r.next(5) as u8;
            for coach in ["Ines", "Hugo", "Gale"] {
                if r.next(3) == 0 {
                    continue; // this coach did not score this interval
                }
                let score = match r.next(5) {
                    0 => truth.saturating_sub(1).max(1),
                    1 => (truth + 1).min(5),
                    2 => 1 + r.next(5) as u8,
                    _ => truth,
                };
                out.push(grade(coach, &session, i, score));
            }
        }
    }
    out
}

#[test]
fn pairwise_kappas_equal_weighted_kappa_and_the_overall_is_their_mean() {
    for seed in [1, 2, 3, 4, 5] {
        let grades = random_staff(seed);
        let got = staff_agreement(&grades, &[]).unwrap();
        // Independently: each coach's scores by (session, interval).
        let mut by: BTreeMap<&str, BTreeMap<(&str, u32), u8>> = BTreeMap::new();
        for g in &grades {
            by.entry(&g.coach)
                .or_default()
                .insert((&g.session_id, g.interval_no), g.score);
        }
        assert_eq!(got.pairs.len(), 3);
        let mut kappas = Vec::new();
        for p in &got.pairs {
            let a = &by[p.coach_a.as_str()];
            let b = &by[p.coach_b.as_str()];
            let pairs: Vec<(u8, u8)> = a
                .iter()
                .filter_map(|(key, &sa)| b.get(key).map(|&sb| (sa, sb)))
                .collect();
            let want = weighted_kappa(&pairs, 5, Weights::Quadratic).unwrap();
            assert_eq!(p.kappa, want, "seed {seed} {}-{}", p.coach_a, p.coach_b);
            kappas.push(want.kappa.unwrap());
            let wide = pairs.iter().filter(|(a, b)| a.abs_diff(*b) >= 2).count();
            assert_eq!(p.wide.len(), wide);
        }
        let mean = kappas.iter().sum::<f64>() / 3.0;
        assert!(close(got.overall.kappa.unwrap(), mean, 1e-12));
        let mut seen: BTreeMap<(&str, u32), BTreeSet<&str>> = BTreeMap::new();
        for g in &grades {
            seen.entry((&g.session_id, g.interval_no))
                .or_default()
                .insert(&g.coach);
        }
        let shared = seen.values().filter(|c| c.len() >= 2).count();
        assert_eq!(got.overall.items, shared);
        for c in &got.coaches {
            assert_eq!(c.items, by[c.coach.as_str()].len());
        }
        // The order of the input changes nothing.
        let mut reversed = grades.clone();
        reversed.reverse();
        assert_eq!(staff_agreement(&reversed, &[]).unwrap(), got);
    }
}

#[test]
fn the_filter_keeps_the_named_coaches_only() {
    let g = staff_of_four();
    let got = staff_agreement(&g, &names(&["C", "A"])).unwrap();
    let coaches: Vec<&str> = got.coaches.iter().map(|c| c.coach.as_str()).collect();
    assert_eq!(coaches, vec!["A", "C"]);
    assert_eq!(got.pairs.len(), 1);
    assert!(close(got.pairs[0].kappa.kappa.unwrap(), 5.0 / 7.0, 1e-12));
    assert_eq!(got.overall.kappa, got.pairs[0].kappa.kappa);
    assert_eq!(got.overall.ci95, got.pairs[0].kappa.ci95);
    assert_eq!(got.overall.items, 4);
    // A coach with nothing shared with the other: a pair without kappa, items 0.
    let got = staff_agreement(&g, &names(&["A", "D"])).unwrap();
    assert_eq!(got.pairs[0].no_kappa, Some(NoKappa::NoSharedItems));
    assert_eq!(got.overall.kappa, None);
    assert_eq!(got.overall.pairs_averaged, 0);
    assert_eq!(got.overall.items, 0);
    // Three of four: three pairs, all with a kappa, and their mean.
    let got = staff_agreement(&g, &names(&["B", "A", "C"])).unwrap();
    assert_eq!(got.pairs.len(), 3);
    assert!(close(got.overall.kappa.unwrap(), 17.0 / 21.0, 1e-12));
}

#[test]
fn unknown_and_too_few_coaches_are_errors_naming_them() {
    let g = staff_of_four();
    let e = staff_agreement(&g, &names(&["A", "Zed"])).unwrap_err();
    assert_eq!(
        e,
        AgreementError::UnknownCoach {
            coach: "Zed".into()
        }
    );
    assert!(e.to_string().contains("\"Zed\""), "{e}");
    assert_eq!(
        staff_agreement(&g, &names(&["A"])).unwrap_err(),
        AgreementError::TooFewCoaches { found: 1 }
    );
    assert_eq!(
        staff_agreement(&g, &names(&["A", "A"])).unwrap_err(),
        AgreementError::TooFewCoaches { found: 1 }
    );
    // Without a filter, fewer than two coaches is nothing to compare, not an error.
    let one = staff_agreement(&scores("A", "s01", &[3, 4]), &[]).unwrap();
    assert!(one.pairs.is_empty());
    assert_eq!(one.overall.kappa, None);
    assert_eq!(one.coaches.len(), 1);
    let none = staff_agreement(&[], &[]).unwrap();
    assert!(none.coaches.is_empty() && none.pairs.is_empty());
}

#[test]
fn bad_scores_are_errors_and_a_repeated_score_counts_once() {
    let mut g = staff_of_four();
    g.push(grade("B", "s09", 2, 6));
    assert_eq!(
        staff_agreement(&g, &[]).unwrap_err(),
        AgreementError::GradeOutOfScale {
            coach: "B".into(),
            session_id: "s09".into(),
            interval_no: 2,
            score: 6
        }
    );
    let mut g = staff_of_four();
    g.push(grade("C", "s03", 1, 2)); // the same score again
    let got = staff_agreement(&g, &[]).unwrap();
    assert_eq!(got.coaches[2].items, 4);
    assert!(close(got.overall.kappa.unwrap(), 17.0 / 21.0, 1e-12));
    g.push(grade("C", "s03", 1, 4)); // a different one
    assert_eq!(
        staff_agreement(&g, &[]).unwrap_err(),
        AgreementError::ConflictingGrades {
            coach: "C".into(),
            session_id: "s03".into(),
            interval_no: 1,
            first: 2,
            second: 4
        }
    );
}

#[test]
fn one_score_throughout_has_no_kappa_and_says_why() {
    let mut g = scores("A", "s01", &[3, 3, 3]);
    g.extend(scores("B", "s01", &[3, 3, 3]));
    let got = staff_agreement(&g, &[]).unwrap();
    let p = &got.pairs[0];
    assert_eq!(p.kappa.n, 3);
    assert_eq!(p.kappa.kappa, None);
    assert_eq!(p.no_kappa, Some(NoKappa::OneScoreThroughout));
    // Expected disagreement 0: chance explains all the agreement.
    assert!(close(p.kappa.expected, 1.0, 1e-12));
    assert_eq!(got.overall.kappa, None);
    assert_eq!(got.overall.items, 3);
    let text = render_text(&got);
    assert!(
        text.contains(
            "A and B: 3 intervals in common, no kappa: both gave every one of them the same score"
        ),
        "{text}"
    );
    assert!(text.contains("Overall: no pair has a kappa yet"), "{text}");
}

#[test]
fn wide_disagreements_are_listed_by_start_then_interval() {
    // Given out of order: session s20 (20 Nov) before s02 (2 Nov); coach "Zoe" before "Ada".
    let mut g = vec![
        grade("Zoe", "s20", 4, 5),
        grade("Zoe", "s20", 1, 1),
        grade("Zoe", "s02", 3, 2),
        grade("Zoe", "s02", 1, 3),
        grade("Zoe", "s02", 2, 4),
    ];
    g.extend(vec![
        grade("Ada", "s20", 4, 3), // 2 apart: listed
        grade("Ada", "s20", 1, 5), // 4 apart: listed
        grade("Ada", "s02", 3, 5), // 3 apart: listed
        grade("Ada", "s02", 1, 3), // agree
        grade("Ada", "s02", 2, 3), // 1 apart: not listed
    ]);
    let got = staff_agreement(&g, &[]).unwrap();
    let p = &got.pairs[0];
    assert_eq!((p.coach_a.as_str(), p.coach_b.as_str()), ("Ada", "Zoe"));
    let listed: Vec<(&str, u32, u8, u8)> = p
        .wide
        .iter()
        .map(|w| (w.session_id.as_str(), w.interval_no, w.score_a, w.score_b))
        .collect();
    assert_eq!(
        listed,
        vec![("s02", 3, 5, 2), ("s20", 1, 5, 1), ("s20", 4, 3, 5)]
    );
    assert_eq!(p.wide[0].athlete_id, "ath-s02");
    assert_eq!(p.wide[0].start_time, at(2, 7));
    let text = render_text(&got);
    assert!(
        text.contains("  Scored 2 or more points apart (3):\n"),
        "{text}"
    );
    assert!(
        text.contains("    ath-s02  2026-11-02  interval 3  Ada 5, Zoe 2  (session s02)\n"),
        "{text}"
    );
    let first = text.find("2026-11-02  interval 3").unwrap();
    let last = text.find("2026-11-20  interval 4").unwrap();
    assert!(first < last);

    // By start time, not by session id: s20 moved to 1 November comes first.
    for x in g.iter_mut().filter(|x| x.session_id == "s20") {
        x.start_time = at(1, 7);
    }
    let got = staff_agreement(&g, &[]).unwrap();
    let order: Vec<(&str, u32)> = got.pairs[0]
        .wide
        .iter()
        .map(|w| (w.session_id.as_str(), w.interval_no))
        .collect();
    assert_eq!(order, vec![("s20", 1), ("s20", 4), ("s02", 3)]);
}

#[test]
fn the_text_words_each_pair_and_the_staff() {
    let got = staff_agreement(&staff_of_four(), &[]).unwrap();
    let text = render_text(&got);
    let ac = &got.pairs[1];
    let (lo, hi) = ac.kappa.ci95.unwrap();
    let line = format!(
        "A and C: kappa 0.71 (95 % CI {:.2} to {:.2}), 4 intervals in common; substantial.\n",
        lo, hi
    );
    assert!(text.contains(&line), "{line}\n{text}");
    assert!(
        text.contains(
            "A and B: kappa 1.00 (95 % CI 1.00 to 1.00), 4 intervals in common; almost perfect.\n"
        ),
        "{text}"
    );
    assert!(
        text.contains("A and D: no interval scored by both yet.\n"),
        "{text}"
    );
    assert!(
        text.contains(
            "Coaches: A (4 intervals), B (4 intervals), C (4 intervals), D (1 interval).\n"
        ),
        "{text}"
    );
    // 17/21 = 0.8095: printed 0.81, almost perfect.
    assert!(
        text.contains("Overall: Light's kappa 0.81 (almost perfect), the mean of 3 pairwise kappas (Light 1971, Psychological Bulletin 76:365); 4 intervals scored by two coaches or more. The mean has no confidence interval"),
        "{text}"
    );
    assert!(text.contains("a convention (Landis & Koch 1977, Biometrics 33:159)"));
    // Two coaches only: the overall line carries the pair's interval.
    let two = staff_agreement(&staff_of_four(), &names(&["A", "C"])).unwrap();
    let text = render_text(&two);
    assert!(
        text.contains(&format!(
            "Overall: kappa 0.71 (95 % CI {lo:.2} to {hi:.2}); substantial; 4 intervals scored by two coaches or more.\n"
        )),
        "{text}"
    );
}

#[test]
fn one_pair_with_a_kappa_among_several_carries_its_interval() {
    let got = staff_agreement(&staff_of_four(), &names(&["A", "C", "D"])).unwrap();
    assert_eq!(got.pairs.len(), 3);
    assert_eq!(got.overall.pairs_averaged, 1);
    assert_eq!(got.overall.kappa, got.pairs[0].kappa.kappa);
    assert_eq!(got.overall.ci95, got.pairs[0].kappa.ci95);
    let (lo, hi) = got.overall.ci95.unwrap();
    let text = render_text(&got);
    assert!(
        text.contains(&format!(
            "Overall: kappa 0.71 (95 % CI {lo:.2} to {hi:.2}); substantial; only one pair has a kappa, so the staff's figure is that pair's; 4 intervals scored by two coaches or more.\n"
        )),
        "{text}"
    );
}

#[test]
fn nothing_to_compare_is_said_in_a_sentence() {
    let mut g = scores("A", "s01", &[3, 4]);
    g.extend(scores("B", "s02", &[2, 5]));
    let text = render_text(&staff_agreement(&g, &[]).unwrap());
    assert!(
        text.contains("No interval was scored blind by two of these coaches yet"),
        "{text}"
    );
    assert!(!text.contains("Overall"), "{text}");
    let text = render_text(&staff_agreement(&scores("A", "s01", &[3]), &[]).unwrap());
    assert!(
        text.contains("Only A has scored intervals blind so far (1 interval): agreement needs blind scores from two coaches or more."),
        "{text}"
    );
    let text = render_text(&staff_agreement(&[], &[]).unwrap());
    assert!(
        text.contains("No coach has scored an interval blind yet"),
        "{text}"
    );
}

/// Source: Landis J. R. & Koch G. G. (1977) Biometrics 33:159 (from memory: the bands
/// below 0, 0-0.20, 0.21-0.40, 0.41-0.60, 0.61-0.80, 0.81-1.00).
#[test]
fn landis_koch_words_follow_the_printed_value() {
    let cases = [
        (-0.30, "poor"),
        (-0.004, "slight"), // printed 0.00
        (0.0, "slight"),
        (0.20, "slight"),
        (0.2049, "slight"), // printed 0.20
        (0.21, "fair"),
        (0.40, "fair"),
        (0.41, "moderate"),
        (0.60, "moderate"),
        (0.61, "substantial"),
        (0.80, "substantial"),
        (0.8049, "substantial"),
        (0.81, "almost perfect"),
        (1.0, "almost perfect"),
    ];
    for (k, word) in cases {
        assert_eq!(landis_koch_word(k), word, "{k}");
    }
}

fn keys(v: &serde_json::Value) -> Vec<&str> {
    let mut k: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    k.sort_unstable();
    k
}

#[test]
fn json_has_stable_keys_and_full_precision() {
    let mut g = staff_of_four();
    g.push(grade("A", "s04", 1, 1));
    g.push(grade("C", "s04", 1, 4));
    let got = staff_agreement(&g, &[]).unwrap();
    let v = render_json(&got);
    assert_eq!(
        keys(&v),
        vec!["coaches", "overall", "pairs", "scale", "weights", "wide_gap"]
    );
    assert_eq!(v["scale"], serde_json::json!({"min": 1, "max": 5}));
    assert_eq!(v["weights"], "quadratic");
    assert_eq!(v["wide_gap"], 2);
    assert_eq!(
        v["coaches"][3],
        serde_json::json!({"coach": "D", "items": 1})
    );
    let pairs = v["pairs"].as_array().unwrap();
    assert_eq!(pairs.len(), 6);
    for p in pairs {
        assert_eq!(
            keys(p),
            vec![
                "ci95",
                "coach_a",
                "coach_b",
                "expected_disagreement",
                "items",
                "kappa",
                "no_kappa",
                "observed_disagreement",
                "se",
                "wide_disagreements"
            ]
        );
    }
    let ac = &pairs[1];
    assert_eq!(
        (ac["coach_a"].as_str(), ac["coach_b"].as_str()),
        (Some("A"), Some("C"))
    );
    assert_eq!(ac["items"], 5);
    let want = &got.pairs[1].kappa;
    assert_eq!(ac["kappa"].as_f64(), want.kappa);
    assert_eq!(ac["se"].as_f64(), want.se);
    let (lo, hi) = want.ci95.unwrap();
    assert_eq!(ac["ci95"], serde_json::json!([lo, hi]));
    assert_eq!(
        ac["observed_disagreement"].as_f64(),
        Some(1.0 - want.observed)
    );
    assert_eq!(ac["no_kappa"], serde_json::Value::Null);
    assert_eq!(
        ac["wide_disagreements"],
        serde_json::json!([{
            "athlete_id": "ath-s04",
            "session_id": "s04",
            "start_time": "2026-11-04T07:00:00Z",
            "interval_no": 1,
            "score_a": 1,
            "score_b": 4,
        }])
    );
    let ad = &pairs[2];
    assert_eq!(ad["no_kappa"], "no_shared_items");
    assert_eq!(ad["items"], 0);
    for k in [
        "kappa",
        "se",
        "ci95",
        "observed_disagreement",
        "expected_disagreement",
    ] {
        assert_eq!(ad[k], serde_json::Value::Null, "{k}");
    }
    let o = &v["overall"];
    assert_eq!(
        keys(o),
        vec!["ci95", "items", "kappa", "method", "pairs_averaged"]
    );
    assert_eq!(o["kappa"].as_f64(), got.overall.kappa);
    assert_eq!(o["pairs_averaged"], 3);
    assert_eq!(o["ci95"], serde_json::Value::Null);
    assert_eq!(o["items"], 5);
    // The same input, the same document.
    assert_eq!(render_json(&staff_agreement(&g, &[]).unwrap()), v);
}

fn hostile() -> StaffAgreement {
    let evil_a = "Ann\u{1b}]52;c;SGVsbG8=\u{7}";
    let evil_b = "Bo\u{202E}b\r\n\u{9b}31m";
    let mut g = vec![
        grade(evil_a, "s01", 1, 1),
        grade(evil_a, "s01", 2, 4),
        grade(evil_b, "s01", 1, 4),
        grade(evil_b, "s01", 2, 4),
    ];
    for x in &mut g {
        x.athlete_id = "ath\u{1b}[2J\u{7f}".into();
        x.session_id = "s01\u{1b}[0m".into();
    }
    staff_agreement(&g, &[]).unwrap()
}

#[test]
fn text_holds_no_control_characters_from_names() {
    let a = hostile();
    assert_eq!(a.pairs[0].wide.len(), 1);
    let text = render_text(&a);
    let bad: Vec<char> = text
        .chars()
        .filter(|&c| splitdesk::roster::is_unsafe(c) && c != '\n')
        .collect();
    assert!(bad.is_empty(), "{bad:?} in {text}");
    // The stand-ins show that something was there.
    assert!(text.contains("Ann␛]52;c;SGVsbG8=␇"), "{text}");
    assert!(text.contains("ath␛[2J␡"), "{text}");
    assert!(text.contains("(session s01␛[0m)"), "{text}");
    // JSON keeps the exact names.
    let v = render_json(&a);
    assert_eq!(v["coaches"][0]["coach"], "Ann\u{1b}]52;c;SGVsbG8=\u{7}");
    assert_eq!(
        v["pairs"][0]["wide_disagreements"][0]["athlete_id"],
        "ath\u{1b}[2J\u{7f}"
    );
}

/// Each pair's kappa from a three-coach staff against scikit-learn's `cohen_kappa_score`
/// (PyPI), an independent implementation, through tests/kappa_check.py (as in
/// tests/agreement_sklearn.rs; skipped with a message without `SPLITDESK_PYTHON` or without
/// scikit-learn there).
#[test]
fn pairwise_kappas_agree_with_scikit_learn() {
    let mut cases = Vec::new();
    let mut ours = Vec::new();
    for seed in 10..30 {
        let grades = random_staff(seed);
        let got = staff_agreement(&grades, &[]).unwrap();
        let mut by: BTreeMap<(&str, &str, u32), u8> = BTreeMap::new();
        for g in &grades {
            by.insert((&g.coach, &g.session_id, g.interval_no), g.score);
        }
        for p in &got.pairs {
            // The shared items, found again here, in any order (kappa does not depend on it).
            let mut a = Vec::new();
            let mut b = Vec::new();
            for (&(coach, session, no), &sa) in &by {
                if coach == p.coach_a {
                    if let Some(&sb) = by.get(&(p.coach_b.as_str(), session, no)) {
                        a.push(sa);
                        b.push(sb);
                    }
                }
            }
            assert_eq!(a.len(), p.kappa.n);
            cases.push(serde_json::json!({"a": a, "b": b, "weights": "quadratic"}));
            ours.push(p.kappa.kappa);
        }
    }
    let Some(theirs) = kappa_support::sklearn_kappas(cases) else {
        return;
    };
    assert_eq!(theirs.len(), ours.len());
    for (i, (a, b)) in ours.iter().zip(&theirs).enumerate() {
        let (Some(a), Some(b)) = (a, b) else {
            panic!("pair {i}: ours {a:?}, scikit-learn {b:?}");
        };
        assert!((a - b).abs() < 1e-9, "pair {i}: ours {a}, scikit-learn {b}");
    }
    assert_eq!(ours.len(), 60);
    println!("compared {} pairwise kappas with scikit-learn", ours.len());
}
