//! What the draft says about the running, by session kind, in athlete words.
//!
//! Every number comes from the review as it is (paces to the second per unit, times to the
//! second). Sentences that judge (on target, even, strong) are only said where the coach's
//! verdict agrees with them: the facts never argue with the verdict.

use std::collections::BTreeMap;

use super::words::{self, pace, pace_gap_s, per_unit, seconds};
use crate::analysis::kind::SessionKind;
use crate::analysis::review::{IntervalMetrics, Review};
use crate::analysis::splits::Splits;
use crate::journal::PurposeVerdict;
use crate::model::units::{format_clock, Units};

/// Mean work-interval gradient, percent, from which paces are read hill-adjusted and said
/// so ("allowing for the climb").
// Common coaching practice (no published source): below about 2 % a slope changes pace by
// a few seconds per km; the analysis judges targets on the same bound (HILL_TARGET_GRADE).
pub const HILL_WORDS_GRADE_PCT: f64 = 2.0;

/// A change of pace of at least this share (last reps against the first, second half
/// against the first) is a fade or a pick-up worth saying.
// Common coaching practice (no published source): 2 % is about 5 s/km at 4:10/km, the
// smallest change a coach reads as more than noise over a set.
pub const PACE_CHANGE_SHARE: f64 = 0.02;

/// Decoupling above this (percent) is heart rate climbing for the same pace.
// Common coaching practice (no published source): 5 % is the usual line for aerobic
// decoupling (methods.md).
pub const DRIFT_PCT: f64 = 5.0;

/// An easy run with at least this long above the easy zone gets advice to slow down.
// Common coaching practice (no published source).
pub const ABOVE_EASY_ADVICE_S: f64 = 10.0 * 60.0;

/// Up to this many full splits are listed one by one; a longer race gives the range.
pub const MAX_LISTED_SPLITS: usize = 13;

/// Which side of its target range a rep was.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    Inside,
    Fast,
    Slow,
}

/// One work interval as the draft sees it.
#[derive(Debug, Clone)]
pub struct Rep {
    /// Work-interval number, 1-based.
    pub number: usize,
    /// Pace, s/km: hill-adjusted on a climb, else as run.
    pub pace: f64,
    /// Where the pace sat against the target range, when it was judged.
    pub side: Option<Side>,
    /// The target range, m/s (slow, fast).
    pub band: Option<(f64, f64)>,
}

/// What every part of the draft reads from.
pub struct Ctx<'a> {
    pub review: &'a Review,
    pub units: Units,
    pub kind: SessionKind,
    pub verdict: Option<PurposeVerdict>,
    /// Score in force by work-interval number.
    pub scores: BTreeMap<usize, u8>,
    pub reps: Vec<Rep>,
    /// Reps read hill-adjusted.
    pub on_hill: bool,
}

impl<'a> Ctx<'a> {
    pub fn new(
        review: &'a Review,
        units: Units,
        verdict: Option<PurposeVerdict>,
        scores: &[(u32, u8)],
    ) -> Ctx<'a> {
        let work: Vec<&IntervalMetrics> = review.work().collect();
        let grades: Vec<f64> = work.iter().filter_map(|w| w.grade_pct).collect();
        let on_hill = review.hill_adjusted
            && !grades.is_empty()
            && grades.iter().sum::<f64>() / grades.len() as f64 >= HILL_WORDS_GRADE_PCT;
        let reps = work
            .iter()
            .enumerate()
            .filter_map(|(k, w)| {
                let p = if on_hill {
                    w.hill_adjusted_pace_s_per_km.or(w.avg_pace_s_per_km)
                } else {
                    w.avg_pace_s_per_km
                }?;
                let judged_pace = w.target_basis.as_deref() == Some("pace");
                let side = match (judged_pace, w.target_band_mps, w.target_hit) {
                    (true, _, Some(true)) => Some(Side::Inside),
                    (true, Some((slow, fast)), Some(false)) => {
                        let v = 1000.0 / p;
                        if v > fast {
                            Some(Side::Fast)
                        } else if v < slow {
                            Some(Side::Slow)
                        } else {
                            // Inside on average, outside too much of the time.
                            None
                        }
                    }
                    _ => None,
                };
                p.is_finite().then_some(Rep {
                    number: w.work_number.unwrap_or(k + 1),
                    pace: p,
                    side,
                    band: if judged_pace { w.target_band_mps } else { None },
                })
            })
            .collect();
        Ctx {
            review,
            units,
            kind: review.kind,
            verdict,
            scores: scores.iter().map(|&(i, s)| (i as usize, s)).collect(),
            reps,
            on_hill,
        }
    }

    pub fn met(&self) -> bool {
        self.verdict == Some(PurposeVerdict::Met)
    }

    /// Mean pace of the reps, s/km.
    pub fn mean_pace(&self) -> Option<f64> {
        (!self.reps.is_empty())
            .then(|| self.reps.iter().map(|r| r.pace).sum::<f64>() / self.reps.len() as f64)
    }

    /// Mean of the last third of the reps against the first third, as a share (positive:
    /// slower at the end). `None` with fewer than 3 reps.
    pub fn rep_change(&self) -> Option<f64> {
        let n = self.reps.len();
        if n < 3 {
            return None;
        }
        let k = n.div_ceil(3);
        let mean = |rs: &[Rep]| rs.iter().map(|r| r.pace).sum::<f64>() / rs.len() as f64;
        let first = mean(self.reps.get(..k)?);
        let last = mean(self.reps.get(n - k..)?);
        (first > 0.0).then(|| (last - first) / first)
    }

    /// Second half of the splits against the first, as a share (positive: slower).
    pub fn halves_change(&self) -> Option<f64> {
        let s = self.review.splits.as_ref()?;
        let (a, b) = (s.first_half_s?, s.second_half_s?);
        (a > 0.0).then(|| (b - a) / a)
    }

    /// Whether the run lost pace: reps slower at the end, or a slower second half.
    pub fn faded(&self) -> bool {
        match self.kind {
            k if k.is_repeats() => self.rep_change().is_some_and(|c| c >= PACE_CHANGE_SHARE),
            SessionKind::Race | SessionKind::Tempo | SessionKind::LongRun => {
                self.halves_change().is_some_and(|c| c >= PACE_CHANGE_SHARE)
            }
            _ => false,
        }
    }

    /// Minutes above the easy heart-rate zone (seconds), when the zones are known.
    pub fn above_easy_s(&self) -> Option<(f64, f64)> {
        let z = &self.review.zones.hr;
        let k = z.iter().position(|z| z.name == "easy")?;
        let top = z.get(k)?.to_bpm;
        Some((z.iter().skip(k + 1).map(|z| z.seconds).sum(), top))
    }

    /// Time faster than the easy pace zone (seconds), when the pace zones are known.
    pub fn above_easy_pace_s(&self) -> Option<f64> {
        let z = &self.review.zones.pace;
        let k = z.iter().position(|z| z.name == "easy")?;
        Some(z.iter().skip(k + 1).map(|z| z.seconds).sum())
    }
}

/// A target range in the athlete's units: `3:35-3:45/km`.
fn band_words(band: (f64, f64), units: Units) -> String {
    let (slow, fast) = band;
    format!(
        "{}-{}",
        words::pace_clock(1000.0 / fast, units),
        pace(1000.0 / slow, units)
    )
}

/// The facts about the running, in order; the first is the headline (the brief draft
/// keeps only it).
pub fn facts(c: &Ctx<'_>) -> Vec<String> {
    let mut out = kind_facts(c);
    if c.kind != SessionKind::Treadmill && crate::analysis::kind::treadmill(c.review) {
        out.push(
            "On a treadmill the watch's pace can be a few percent off the belt's, so take these \
             paces as a guide."
                .to_string(),
        );
    }
    if c.review.findings.iter().any(|f| f.code == "cadence_lock") {
        out.push(
            "For part of the run the watch picked up your steps instead of your heart, so \
             those minutes are left out of the heart-rate numbers."
                .to_string(),
        );
    }
    out
}

fn kind_facts(c: &Ctx<'_>) -> Vec<String> {
    match c.kind {
        SessionKind::Race => race(c),
        SessionKind::Tempo if c.reps.len() == 1 => tempo(c),
        SessionKind::Intervals | SessionKind::Hills | SessionKind::Tempo if c.reps.len() >= 2 => {
            repeats(c)
        }
        SessionKind::Progression if c.reps.len() >= 2 => progression(c),
        SessionKind::NotRunning => not_running(c),
        SessionKind::Treadmill => treadmill(c),
        SessionKind::LongRun => long_run(c),
        _ if c.reps.len() >= 2 => repeats(c),
        _ if c.reps.len() == 1 => tempo(c),
        _ => easy(c),
    }
}

/// `8.20 km at 5:45/km` from the moving distance and time.
fn distance_and_pace(c: &Ctx<'_>) -> Option<String> {
    let s = &c.review.session;
    let d = s.distance_m.filter(|d| *d > 0.0)?;
    let p = (s.moving_s > 0.0).then(|| s.moving_s / d * 1000.0)?;
    Some(format!(
        "{} in {} on the move, {} on average",
        words::distance(d, c.units),
        format_clock(s.moving_s),
        pace(p, c.units)
    ))
}

fn easy(c: &Ctx<'_>) -> Vec<String> {
    let mut out = easy_headline(c);
    out.extend(easy_effort(c));
    out
}

/// The time above the easy zone, in words.
fn easy_effort(c: &Ctx<'_>) -> Option<String> {
    let pace_above = c.above_easy_pace_s();
    if let Some((above, top)) = c.above_easy_s().filter(|_| c.review.avg_hr.is_some()) {
        return Some(if above < 60.0 {
            "Your heart rate stayed in the easy range almost the whole way.".to_string()
        } else if pace_above.is_some_and(|p| p < 60.0) {
            // Easy pace, higher heart rate: heat, tiredness or zones set low. A fact, not a
            // reason to slow down (advice::next_time asks for both).
            format!(
                "You kept to easy pace, though your heart rate sat above the easy range (over \
                 {top:.0} bpm) for {}.",
                words::duration(above)
            )
        } else {
            format!(
                "You spent {} above easy heart rate (over {top:.0} bpm).",
                words::duration(above)
            )
        });
    }
    let above = c.above_easy_pace_s()?;
    Some(if above < 60.0 {
        "You kept to easy pace almost the whole way.".to_string()
    } else {
        format!(
            "You spent {} quicker than easy pace.",
            words::duration(above)
        )
    })
}

fn treadmill(c: &Ctx<'_>) -> Vec<String> {
    let mut out = easy(c);
    if let Some(first) = out.first_mut() {
        *first = format!("On the treadmill: {}", lower_first(first));
    }
    out.push(
        "A watch reads pace on a treadmill from your arm or a foot pod, so it can be a few \
         percent off the belt: go by the belt where they differ."
            .to_string(),
    );
    out
}

fn not_running(c: &Ctx<'_>) -> Vec<String> {
    let s = &c.review.session;
    let sport = s.sport.replace('_', " ");
    let what = match sport.as_str() {
        "" | "unknown" => "session".to_string(),
        "cycling" => "ride".to_string(),
        "walking" => "walk".to_string(),
        _ => sport
            .chars()
            .filter(|c| c.is_alphanumeric() || *c == ' ')
            .collect(),
    };
    vec![format!(
        "Thanks for logging the {what}: {}.",
        words::duration(s.duration_s)
    )]
}

fn long_run(c: &Ctx<'_>) -> Vec<String> {
    let mut out = easy_headline(c);
    if let Some(t) = thirds(c) {
        out.push(t);
    }
    match c.review.decoupling_pct {
        Some(d) if d > DRIFT_PCT => out.push(format!(
            "In the second half it took about {d:.0} % more heartbeats to cover the same \
             ground: that is what tiredness, heat or too little to drink and eat do."
        )),
        Some(d) if d >= -DRIFT_PCT => {
            out.push("Your heart rate held steady for the pace right to the end.".to_string())
        }
        _ => {}
    }
    out
}

/// Distance and pace on the move (or the moving time without a distance), as a sentence.
fn easy_headline(c: &Ctx<'_>) -> Vec<String> {
    match distance_and_pace(c) {
        Some(d) => vec![format!("{}.", capitalise(&d))],
        None => vec![format!(
            "{} on the move.",
            capitalise(&words::duration(c.review.session.moving_s))
        )],
    }
}

/// The first third of the splits against the last third, by moving pace.
fn thirds(c: &Ctx<'_>) -> Option<String> {
    let s = c.review.splits.as_ref()?;
    let full: Vec<_> = s.full(c.units).collect();
    if full.len() < 3 {
        return None;
    }
    let k = full.len() / 3;
    let mean = |xs: &[&crate::analysis::splits::Split]| {
        let (d, t) = xs
            .iter()
            .fold((0.0, 0.0), |(d, t), x| (d + x.distance_m, t + x.moving_s));
        (d > 0.0 && t > 0.0).then(|| t / d * 1000.0)
    };
    let first = mean(full.get(..k)?)?;
    let last = mean(full.get(full.len() - k..)?)?;
    let gap = pace_gap_s(last - first, c.units);
    let unit = per_unit(c.units);
    Some(if gap < 3.0 {
        format!(
            "Your first and last thirds were within {} {unit} of each other.",
            seconds(gap.max(0.0))
        )
    } else if last > first {
        format!(
            "The last third was {} {unit} slower than the first ({} against {}).",
            seconds(gap),
            pace(last, c.units),
            pace(first, c.units)
        )
    } else {
        format!(
            "The last third was {} {unit} quicker than the first ({} against {}).",
            seconds(gap),
            pace(last, c.units),
            pace(first, c.units)
        )
    })
}

/// Splits as `4:20, 4:17 and 4:15`, with the part left over.
fn split_list(s: &Splits, units: Units) -> String {
    let unit_m = units.metres();
    let mut items: Vec<String> = s.full(units).map(|x| format_clock(x.time_s)).collect();
    if let Some(last) = s.splits.last().filter(|x| x.distance_m < unit_m * 0.999) {
        items.push(format!(
            "the last {} at {}",
            words::distance(last.distance_m, units),
            pace(last.pace_s_per_km, units)
        ));
    }
    words::and_list(&items)
}

fn race(c: &Ctx<'_>) -> Vec<String> {
    let mut out = Vec::new();
    let Some(s) = c.review.splits.as_ref().filter(|s| s.distance_m > 0.0) else {
        // No distance: the finish time alone.
        let t = c
            .review
            .work()
            .next()
            .map(|w| w.duration_s)
            .unwrap_or(c.review.session.duration_s);
        out.push(format!("Your time: {}.", format_clock(t)));
        return out;
    };
    out.push(format!(
        "You covered {} in {}, {} on average.",
        words::distance(s.distance_m, c.units),
        format_clock(s.time_s),
        pace(s.time_s / s.distance_m * 1000.0, c.units)
    ));
    let full: Vec<_> = s.full(c.units).collect();
    if full.len() > MAX_LISTED_SPLITS {
        // A marathon's 42 splits do not fit a message: the range says it.
        let fastest = full.iter().min_by(|a, b| a.time_s.total_cmp(&b.time_s));
        let slowest = full.iter().max_by(|a, b| a.time_s.total_cmp(&b.time_s));
        if let (Some(f), Some(w)) = (fastest, slowest) {
            let noun = words::unit_noun(c.units);
            out.push(format!(
                "Your {noun} splits ranged from {} ({noun} {}) to {} ({noun} {}).",
                format_clock(f.time_s),
                f.number,
                format_clock(w.time_s),
                w.number
            ));
        }
    } else if !s.splits.is_empty() {
        out.push(format!(
            "Your {} splits: {}.",
            words::unit_noun(c.units),
            split_list(s, c.units)
        ));
    }
    if let (Some(a), Some(b)) = (s.first_half_s, s.second_half_s) {
        let gap = (b - a).round();
        out.push(if gap.abs() <= 5.0 {
            format!(
                "You ran the two halves within {} of each other ({} and {}).",
                seconds(gap.abs()),
                format_clock(a),
                format_clock(b)
            )
        } else if gap < 0.0 {
            format!(
                "Your second half was {} quicker than the first ({} against {}).",
                seconds(-gap),
                format_clock(b),
                format_clock(a)
            )
        } else {
            format!(
                "Your second half was {} slower than the first ({} against {}).",
                seconds(gap),
                format_clock(b),
                format_clock(a)
            )
        });
    }
    out
}

fn tempo(c: &Ctx<'_>) -> Vec<String> {
    let mut out = Vec::new();
    let Some(w) = c.review.work().next() else {
        return easy(c);
    };
    let Some(rep) = c.reps.first() else {
        return easy(c);
    };
    let length = match w.distance_m {
        Some(d) if w.duration_s >= 3600.0 => words::distance(d, c.units),
        _ => format!("{:.0}-minute", (w.duration_s / 60.0).round()),
    };
    let halves = match (w.first_half_pace_s_per_km, w.second_half_pace_s_per_km) {
        (Some(a), Some(b)) => format!(
            " (first half {}, second half {})",
            pace(a, c.units),
            pace(b, c.units)
        ),
        _ => String::new(),
    };
    let worth = if c.on_hill {
        ", allowing for the hills"
    } else {
        ""
    };
    out.push(format!(
        "Your {length} block averaged {}{worth}{halves}.",
        pace(rep.pace, c.units)
    ));
    if let (Some(band), Some(pct)) = (rep.band, w.in_target_pct) {
        // Judging words only where the verdict agrees: a high share on a session the coach
        // did not call met is left unsaid.
        if c.met() || pct < 80.0 {
            out.push(format!(
                "You were inside your target range ({}) for {pct:.0} % of it.",
                band_words(band, c.units)
            ));
        }
    }
    if let Some(d) = w.decoupling_pct.filter(|d| *d > DRIFT_PCT) {
        out.push(format!(
            "Towards the end it took about {d:.0} % more heartbeats for the same pace, so it \
             was getting harder than the watch shows."
        ));
    }
    out
}

/// The reps' numbers, shared by interval sets and hills.
fn rep_summary(c: &Ctx<'_>) -> Option<String> {
    let n = c.reps.len();
    let mean = c.mean_pace()?;
    let fastest = c.reps.iter().min_by(|a, b| a.pace.total_cmp(&b.pace))?;
    let slowest = c.reps.iter().max_by(|a, b| a.pace.total_cmp(&b.pace))?;
    let range = format!(
        "from {} (rep {}) to {} (rep {})",
        pace(fastest.pace, c.units),
        fastest.number,
        pace(slowest.pace, c.units),
        slowest.number
    );
    Some(if c.on_hill {
        format!(
            "Allowing for the climb, your {n} reps were worth {} on the flat on average, {range}.",
            pace(mean, c.units)
        )
    } else {
        format!("Your {n} reps averaged {}, {range}.", pace(mean, c.units))
    })
}

/// The last rep against the first.
fn first_last(c: &Ctx<'_>) -> Option<String> {
    let (first, last) = (c.reps.first()?, c.reps.last()?);
    let gap = pace_gap_s(last.pace - first.pace, c.units);
    let unit = per_unit(c.units);
    Some(if gap < 1.0 {
        "The last rep was as quick as the first.".to_string()
    } else if gap < 2.0 {
        format!(
            "The last rep was within {} {unit} of the first.",
            seconds(gap)
        )
    } else if last.pace > first.pace {
        format!(
            "The last rep was {} {unit} slower than the first.",
            seconds(gap)
        )
    } else {
        format!(
            "The last rep was {} {unit} quicker than the first.",
            seconds(gap)
        )
    })
}

/// How many reps were inside their target range, when it was judged.
fn targets(c: &Ctx<'_>) -> Option<String> {
    let judged: Vec<&Rep> = c.reps.iter().filter(|r| r.band.is_some()).collect();
    let band = judged.first()?.band?;
    let same_band = judged.iter().all(|r| r.band == Some(band));
    let inside = judged
        .iter()
        .filter(|r| r.side == Some(Side::Inside))
        .count();
    let fast = judged.iter().filter(|r| r.side == Some(Side::Fast)).count();
    let slow = judged.iter().filter(|r| r.side == Some(Side::Slow)).count();
    let n = judged.len();
    let range = if same_band {
        format!(" ({})", band_words(band, c.units))
    } else {
        String::new()
    };
    if inside == n {
        // All inside: a success claim, said only where the coach called the session met.
        return c
            .met()
            .then(|| format!("Every rep was inside your target range{range}."));
    }
    let verb = if inside == 1 { "was" } else { "were" };
    let mut s = format!("{inside} of {n} reps {verb} inside your target range{range}");
    let mut off = Vec::new();
    if fast > 0 {
        off.push(format!("{fast} quicker"));
    }
    if slow > 0 {
        off.push(format!("{slow} slower"));
    }
    if !off.is_empty() {
        s.push_str(&format!("; {}", words::and_list(&off)));
    }
    s.push('.');
    Some(s)
}

fn repeats(c: &Ctx<'_>) -> Vec<String> {
    let mut out = Vec::new();
    out.extend(rep_summary(c));
    out.extend(first_last(c));
    if !c.on_hill {
        out.extend(targets(c));
    }
    if out.is_empty() {
        return easy(c);
    }
    out
}

fn progression(c: &Ctx<'_>) -> Vec<String> {
    let mut out = Vec::new();
    let quicker: Vec<bool> = c
        .reps
        .windows(2)
        .map(|w| match w {
            [a, b] => b.pace < a.pace,
            _ => false,
        })
        .collect();
    let list: Vec<String> = c
        .reps
        .iter()
        .map(|r| words::pace_clock(r.pace, c.units))
        .collect();
    let unit = c.units.label();
    let worth = if c.on_hill {
        ", allowing for the hills"
    } else {
        ""
    };
    if quicker.iter().all(|q| *q) {
        out.push(format!(
            "Each rep was quicker than the one before{worth}: {}/{unit}.",
            words::and_list(&list)
        ));
    } else {
        let stalled: Vec<usize> = c
            .reps
            .iter()
            .skip(1)
            .zip(&quicker)
            .filter(|(_, q)| !**q)
            .map(|(r, _)| r.number)
            .collect();
        out.push(format!(
            "Your reps{worth}: {}/{unit}.",
            words::and_list(&list)
        ));
        let items: Vec<String> = stalled.iter().map(ToString::to_string).collect();
        out.push(format!(
            "{} no quicker than the one before.",
            if stalled.len() == 1 {
                format!("Rep {} was", words::and_list(&items))
            } else {
                format!("Reps {} were", words::and_list(&items))
            }
        ));
    }
    if !c.on_hill {
        out.extend(targets(c));
    }
    out
}

/// `text` with its first letter upper-case.
pub fn capitalise(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(f) => f.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

fn lower_first(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(f) => f.to_lowercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// A stretch the coach marked with a ruler, in words: the pace (and heart rate) at its
/// start and end along the fitted line.
pub fn mark(m: &crate::analysis::ruler::RulerFit, units: Units) -> Option<String> {
    let (a, b) = (m.from_s, m.to_s);
    if b - a < 60.0 || !(b - a).is_finite() {
        return None;
    }
    let (v0, v1) = (m.speed_at(a)?, m.speed_at(b)?);
    if v0 <= 0.0 || v1 <= 0.0 || !v0.is_finite() || !v1.is_finite() {
        return None;
    }
    let (p0, p1) = (1000.0 / v0, 1000.0 / v1);
    let span = format!(
        "From {} to {} into the run",
        format_clock(a),
        format_clock(b)
    );
    let gap = pace_gap_s(p1 - p0, units);
    let pace_words = if gap < 2.0 {
        format!("your pace held at about {}", pace(p0, units))
    } else {
        format!(
            "your pace went from {} to {}",
            pace(p0, units),
            pace(p1, units)
        )
    };
    let hr_words = match (m.hr_at(a), m.hr_at(b)) {
        (Some(h0), Some(h1)) if (h1 - h0).abs() >= 3.0 => format!(
            " while your heart rate {} from {h0:.0} to {h1:.0} bpm",
            if h1 > h0 { "rose" } else { "fell" }
        ),
        (Some(h0), Some(_)) => format!(" with your heart rate steady at about {h0:.0} bpm"),
        _ => String::new(),
    };
    Some(format!("{span}, {pace_words}{hr_words}."))
}

/// A pace gain on the earlier run of the same workout at least this big (in whole seconds
/// per the athlete's unit) is said in the draft.
// Our design choice: under 2 s the difference is within what GPS and the day's conditions
// move a set by.
pub const CLEAR_GAIN_S: f64 = 2.0;
/// Most the heart rate may have risen for the gain to count as "at the same effort", bpm.
// Common coaching practice (no published source): a beat or two is within sensor noise.
pub const SAME_EFFORT_BPM: f64 = 2.0;

/// Whether a work interval ran faster than its pace target (a pace target judged on flat
/// ground; the display slack allowed): then a gain on the last run is no praise, the set
/// was meant to be held back.
pub fn ran_above_target(review: &Review) -> bool {
    review.work().any(|w| {
        !w.target_on_hill()
            && matches!(
                (w.target_band_mps, w.avg_pace_s_per_km),
                (Some((_, fast)), Some(p)) if fast > 0.0
                    && p < 1000.0 / fast - crate::analysis::review::PACE_DISPLAY_SLACK_S
            )
    })
}

/// "Faster than last time at the same effort", when the comparison with the latest earlier
/// run of the same workout says so clearly: the reps quicker by at least
/// [`CLEAR_GAIN_S`] at a heart rate no more than [`SAME_EFFORT_BPM`] higher. Nothing is
/// said otherwise (a slower set is the coach's to explain, in their own words).
pub fn against_earlier(c: &crate::analysis::earlier::Comparison, units: Units) -> Option<String> {
    use crate::analysis::earlier::MatchedBy;
    if c.matched_by != MatchedBy::WorkoutShape {
        return None;
    }
    let latest = c.changes.first()?;
    let gap = latest.pace_s_per_km.filter(|g| g.is_finite() && *g < 0.0)?;
    let hr = latest.hr_bpm.filter(|h| h.is_finite())?;
    let gain = pace_gap_s(gap, units);
    if gain < CLEAR_GAIN_S || hr > SAME_EFFORT_BPM {
        return None;
    }
    let effort = if hr <= -SAME_EFFORT_BPM {
        "at a lower heart rate"
    } else {
        "at the same heart rate"
    };
    let reps = c
        .runs
        .iter()
        .find(|r| r.current)
        .map(|r| r.reps.len())
        .unwrap_or(0);
    let what = if reps > 1 {
        "repeats averaged"
    } else {
        "effort was"
    };
    Some(format!(
        "Your {what} {} {} quicker than when you ran this session on {}, {effort}.",
        seconds(gain),
        per_unit(units),
        words::day(&latest.day.to_string()),
    ))
}
