//! `splitdesk agreement [--coach A --coach B] [--json]`: how closely the coaches of a staff
//! agree in their blind interval scores, pair by pair and as a whole, and the intervals they
//! scored far apart. The head coach reads it to calibrate the staff.
//!
//! The numbers come from [`crate::analysis::agreement::staff_agreement`]; this module only
//! words them. Coach names and athlete ids are roster/journal text: the text output passes
//! them through [`crate::roster::printable`] (and the command's printing through
//! `cli::out::Safe` as well); JSON keeps them exact.

use std::fmt::Write as _;

use chrono::SecondsFormat;
use serde_json::{json, Value};

use crate::analysis::agreement::{
    staff_agreement, CoachGrade, NoKappa, PairAgreement, StaffAgreement, WideDisagreement,
    SCORE_POINTS, WIDE_GAP,
};
use crate::roster::printable;

/// Run the command on every coach's blind interval scores (from the journal); returns the
/// exit code. `only` holds the `--coach` names (empty: every coach).
pub fn run(grades: &[CoachGrade], only: &[String], json: bool) -> anyhow::Result<i32> {
    let agreement = staff_agreement(grades, only)?;
    if json {
        crate::cli::out::json(&render_json(&agreement))?;
    } else {
        print!("{}", render_text(&agreement));
    }
    Ok(0)
}

/// The interpretation word for a kappa.
///
/// Source: Landis J. R. & Koch G. G. (1977) The measurement of observer agreement for
/// categorical data, Biometrics 33:159 (bands from memory: below 0 poor, 0.00-0.20 slight,
/// 0.21-0.40 fair, 0.41-0.60 moderate, 0.61-0.80 substantial, 0.81-1.00 almost perfect).
/// The bands are a convention, not a test; the text says so. The word is chosen from the
/// kappa as printed (two decimals), so the word and the number shown never disagree.
pub fn landis_koch_word(kappa: f64) -> &'static str {
    let k = (kappa * 100.0).round() / 100.0;
    if k < 0.0 {
        "poor"
    } else if k <= 0.20 {
        "slight"
    } else if k <= 0.40 {
        "fair"
    } else if k <= 0.60 {
        "moderate"
    } else if k <= 0.80 {
        "substantial"
    } else {
        "almost perfect"
    }
}

/// Two decimals, never "-0.00".
fn two(x: f64) -> String {
    let r = (x * 100.0).round() / 100.0;
    if r == 0.0 {
        "0.00".to_string()
    } else {
        format!("{r:.2}")
    }
}

/// "1 interval" / "3 intervals".
fn intervals(n: usize) -> String {
    if n == 1 {
        "1 interval".to_string()
    } else {
        format!("{n} intervals")
    }
}

/// A kappa with its interval: "kappa 0.71 (95 % CI 0.55 to 0.87)".
fn kappa_with_ci(kappa: f64, ci95: Option<(f64, f64)>) -> String {
    match ci95 {
        Some((lo, hi)) => format!("kappa {} (95 % CI {} to {})", two(kappa), two(lo), two(hi)),
        None => format!("kappa {}", two(kappa)),
    }
}

/// What a head coach reads: one line per pair with its wide disagreements beneath (athlete,
/// date of the session's start in UTC, interval, both scores, session id), the staff's
/// overall line, and what the words for kappa mean.
pub fn render_text(a: &StaffAgreement) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "Agreement between coaches: blind interval scores 1-{SCORE_POINTS}, weighted kappa \
         with quadratic weights (Cohen 1968)."
    );
    let _ = writeln!(out);

    match a.coaches.as_slice() {
        [] => {
            let _ = writeln!(
                out,
                "No coach has scored an interval blind yet: agreement needs blind scores \
                 from two coaches or more."
            );
            return out;
        }
        [one] => {
            let _ = writeln!(
                out,
                "Only {} has scored intervals blind so far ({}): agreement needs blind \
                 scores from two coaches or more.",
                printable(&one.coach),
                intervals(one.items)
            );
            return out;
        }
        many => {
            let list: Vec<String> = many
                .iter()
                .map(|c| format!("{} ({})", printable(&c.coach), intervals(c.items)))
                .collect();
            let _ = writeln!(out, "Coaches: {}.", list.join(", "));
        }
    }
    let _ = writeln!(out);

    if a.overall.items == 0 {
        let _ = writeln!(
            out,
            "No interval was scored blind by two of these coaches yet, so there is nothing \
             to compare."
        );
        return out;
    }

    for p in &a.pairs {
        pair_text(&mut out, p);
    }
    let _ = writeln!(out);
    overall_text(&mut out, a);
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "The words for kappa are a convention (Landis & Koch 1977, Biometrics 33:159), not a \
         test: below 0 poor, 0 to 0.20 slight, 0.21 to 0.40 fair, 0.41 to 0.60 moderate, \
         0.61 to 0.80 substantial, 0.81 to 1 almost perfect."
    );
    out
}

fn pair_text(out: &mut String, p: &PairAgreement) {
    let a = printable(&p.coach_a);
    let b = printable(&p.coach_b);
    let n = p.kappa.n;
    match (p.kappa.kappa, p.no_kappa) {
        (Some(k), _) => {
            let _ = writeln!(
                out,
                "{a} and {b}: {}, {} in common; {}.",
                kappa_with_ci(k, p.kappa.ci95),
                intervals(n),
                landis_koch_word(k)
            );
        }
        (None, Some(NoKappa::NoSharedItems)) | (None, None) => {
            let _ = writeln!(out, "{a} and {b}: no interval scored by both yet.");
        }
        (None, Some(NoKappa::OneScoreThroughout)) => {
            let _ = writeln!(
                out,
                "{a} and {b}: {} in common, no kappa: both gave every one of them the same \
                 score, so chance alone explains the agreement.",
                intervals(n)
            );
        }
    }
    if !p.wide.is_empty() {
        let _ = writeln!(
            out,
            "  Scored {WIDE_GAP} or more points apart ({}):",
            p.wide.len()
        );
        let athletes: Vec<String> = p.wide.iter().map(|w| printable(&w.athlete_id)).collect();
        let width = athletes
            .iter()
            .map(|x| x.chars().count())
            .max()
            .unwrap_or(0);
        for (w, athlete) in p.wide.iter().zip(&athletes) {
            let _ = writeln!(
                out,
                "    {athlete:<width$}  {}  interval {}  {a} {}, {b} {}  (session {})",
                w.start_time.date_naive().format("%Y-%m-%d"),
                w.interval_no,
                w.score_a,
                w.score_b,
                printable(&w.session_id)
            );
        }
    }
}

fn overall_text(out: &mut String, a: &StaffAgreement) {
    let o = &a.overall;
    let items = format!("{} scored by two coaches or more", intervals(o.items));
    match o.kappa {
        None => {
            let _ = writeln!(
                out,
                "Overall: no pair has a kappa yet (see above); {items}."
            );
        }
        Some(k) if o.pairs_averaged == 1 && a.pairs.len() == 1 => {
            let _ = writeln!(
                out,
                "Overall: {}; {}; {items}.",
                kappa_with_ci(k, o.ci95),
                landis_koch_word(k)
            );
        }
        Some(k) if o.pairs_averaged == 1 => {
            let _ = writeln!(
                out,
                "Overall: {}; {}; only one pair has a kappa, so the staff's figure is that \
                 pair's; {items}.",
                kappa_with_ci(k, o.ci95),
                landis_koch_word(k)
            );
        }
        Some(k) => {
            let _ = writeln!(
                out,
                "Overall: Light's kappa {} ({}), the mean of {} pairwise kappas (Light 1971, \
                 Psychological Bulletin 76:365); {items}. The mean has no confidence \
                 interval: its pairs share coaches and intervals.",
                two(k),
                landis_koch_word(k),
                o.pairs_averaged
            );
        }
    }
}

/// A number, or `null` when it is not finite (JSON has no NaN).
fn num(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

fn ci_json(ci: Option<(f64, f64)>) -> Value {
    ci.map_or(Value::Null, |(lo, hi)| json!([num(lo), num(hi)]))
}

fn wide_json(w: &WideDisagreement) -> Value {
    json!({
        "athlete_id": w.athlete_id,
        "session_id": w.session_id,
        "start_time": w.start_time.to_rfc3339_opts(SecondsFormat::AutoSi, true),
        "interval_no": w.interval_no,
        "score_a": w.score_a,
        "score_b": w.score_b,
    })
}

fn pair_json(p: &PairAgreement) -> Value {
    let k = &p.kappa;
    // Observed and expected weighted disagreement (one minus agreement); none without items.
    let disagreement = |agreement: f64| {
        if k.n == 0 {
            Value::Null
        } else {
            num(1.0 - agreement)
        }
    };
    json!({
        "coach_a": p.coach_a,
        "coach_b": p.coach_b,
        "items": k.n,
        "kappa": k.kappa.map_or(Value::Null, num),
        "se": k.se.map_or(Value::Null, num),
        "ci95": ci_json(k.ci95),
        "observed_disagreement": disagreement(k.observed),
        "expected_disagreement": disagreement(k.expected),
        "no_kappa": match p.no_kappa {
            None => Value::Null,
            Some(NoKappa::NoSharedItems) => json!("no_shared_items"),
            Some(NoKappa::OneScoreThroughout) => json!("one_score_throughout"),
        },
        "wide_disagreements": p.wide.iter().map(wide_json).collect::<Vec<_>>(),
    })
}

/// The same as JSON, full precision, exact names. Keys (stable): `scale` {`min`, `max`},
/// `weights`, `wide_gap`, `coaches` [{`coach`, `items`}], `pairs` [{`coach_a`, `coach_b`,
/// `items`, `kappa`, `se`, `ci95` ([lo, hi]), `observed_disagreement`,
/// `expected_disagreement`, `no_kappa` (null, "no_shared_items" or "one_score_throughout"),
/// `wide_disagreements` [{`athlete_id`, `session_id`, `start_time` (RFC 3339, UTC),
/// `interval_no`, `score_a`, `score_b`}]}], `overall` {`method`, `kappa`, `pairs_averaged`,
/// `ci95`, `items`}. Missing values are `null`.
pub fn render_json(a: &StaffAgreement) -> Value {
    let o = &a.overall;
    json!({
        "scale": { "min": 1, "max": SCORE_POINTS },
        "weights": "quadratic",
        "wide_gap": WIDE_GAP,
        "coaches": a.coaches.iter().map(|c| json!({
            "coach": c.coach,
            "items": c.items,
        })).collect::<Vec<_>>(),
        "pairs": a.pairs.iter().map(pair_json).collect::<Vec<_>>(),
        "overall": {
            "method": "mean of pairwise kappas (Light 1971)",
            "kappa": o.kappa.map_or(Value::Null, num),
            "pairs_averaged": o.pairs_averaged,
            "ci95": ci_json(o.ci95),
            "items": o.items,
        },
    })
}
