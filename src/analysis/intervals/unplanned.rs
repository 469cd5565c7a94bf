//! Intervals of a run without a plan: what kind of run it was, then its pieces.
//!
//! # Method
//!
//! 1. **Ends.** Standing, walking and stopped stretches at the start and the end (the
//!    watch started before the run, a walk home, the watch left running) are cut off as
//!    a warm-up and a cool-down of that mode ([`crate::analysis::motion`]); ends shorter
//!    than [`MIN_END_S`] stay with the run. The rest is the *main part*.
//! 2. **Two levels?** The main part's hill-adjusted speed is classified fast and slow
//!    ([`super::detect`]) twice: with the finder's damped correction (which places
//!    boundaries well for runners who only partly slow on climbs) and with the full
//!    correction of the table's hill-adjusted pace (Minetti et al. 2002, for runners who
//!    hold an even hill-adjusted pace). Unless both show two clear levels, the run is
//!    steady, or a progression (step 5).
//! 3. **Effort rises.** A fast stretch is work only when the effort really rose: it was
//!    run, not mostly walked (a walked climb on a trail is not a rep), and heart rate
//!    responded by at least [`HR_RESPONSE_BPM`] (so a descent, or a stretch the hill
//!    adjustment over-corrects, is not a rep); without heart rate, it must be faster in
//!    recorded speed too ([`super::RAW_STRUCTURE_RATIO`]). Fast stretches that fail are
//!    merged back.
//! 4. **Stops are not recoveries.** When every slow stretch between fast ones is mostly
//!    (over half its time) standing, walking or stopped and the fast stretches are long ([`STOPS_MIN_EFFORT_S`]), the
//!    run was one effort with stops (traffic lights), not a set.
//! 5. **Progression.** A run whose minute-by-minute hill-adjusted speed climbs in at least
//!    [`PROGRESSION_MIN_STAGES`] stages, each faster than the one before, is a progression:
//!    its stages are shown as steady pieces with their own paces, and nothing is scored.
//! 6. **One effort.** A single fast stretch with at least [`ONE_EFFORT_MIN_SLOW_S`] of
//!    slower running around it is a warm-up, one effort (a race, time trial or tempo) and a
//!    cool-down, when the effort is at least [`ONE_EFFORT_MIN_INTENSITY`] of threshold speed
//!    (when the profile has one); otherwise it is a steady run after a slower start.
//! 7. Two or more fast stretches are a **set**: slow before the first is the warm-up, after
//!    the last the cool-down, between them recovery.

use super::detect;
use super::trace::{window_mean, Trace};
use super::{build, label_inferred, recovery_mode, Piece};
use crate::analysis::motion::{Motion, MotionState};
use crate::ingest::clean::sample_mask;
use crate::model::{
    AthleteProfile, ChannelKind, Interval, IntervalSource, RecoveryMode, SegmentKind, Session,
};

/// Standing or walking at either end shorter than this stays with the run, seconds. Our
/// design choice: a few seconds of getting going are not worth a row in the table.
pub const MIN_END_S: f64 = 30.0;

/// The main part starts (ends) at the first (last) stretch of running at least this long,
/// seconds. Our design choice.
pub const MIN_MAIN_RUN_S: f64 = 30.0;

/// Heart rate must rise by at least this much during a fast stretch, over the level just
/// before it, for the stretch to be work, bpm. Common coaching practice (no published
/// source): a rep of 30 s or more lifts heart rate well over 5 bpm; a descent or an even
/// effort over rolling ground moves it by a few beats.
pub const HR_RESPONSE_BPM: f64 = 5.0;

/// Fast stretches separated only by standing or walking are one effort with stops when
/// their median length is at least this, seconds. Our design choice: reps with standing
/// recoveries are short (200 m to 2 km); running on after a traffic light is not a rep.
pub const STOPS_MIN_EFFORT_S: f64 = 300.0;

/// A single effort needs this much slower running (warm-up plus cool-down) to be an
/// effort rather than a slow start, seconds. Our design choice.
pub const ONE_EFFORT_MIN_SLOW_S: f64 = 300.0;

/// A single effort must be at least this fraction of the athlete's threshold speed.
/// Common coaching practice (no published source): easy running is about 70-80 % of
/// threshold speed, marathon pace about 90 %.
pub const ONE_EFFORT_MIN_INTENSITY: f64 = 0.85;

/// Block of moving time whose mean speed is one point of the progression test, seconds.
pub const PROGRESSION_BLOCK_S: f64 = 60.0;
/// Shortest stage of a progression, in blocks.
pub const PROGRESSION_MIN_STAGE_BLOCKS: usize = 4;
/// Fewest stages of a progression.
pub const PROGRESSION_MIN_STAGES: usize = 3;
/// Each stage at least this much faster than the one before (fraction). Our design choice.
pub const PROGRESSION_STEP: f64 = 0.02;
/// The last stage at least this much faster than the first (fraction). Our design choice.
pub const PROGRESSION_TOTAL: f64 = 0.06;

/// The note on a steady run.
pub const STEADY_NOTE: &str = "no clear change of pace: one steady interval";

/// Find the pieces of an unplanned run. Returns intervals and notes.
pub(super) fn find(
    session: &Session,
    trace: &Trace,
    grads: Option<&[Option<f64>]>,
    motion: &Motion,
    profile: &AthleteProfile,
) -> (Vec<Interval>, Vec<String>) {
    let n = trace.len();
    let mut notes = Vec::new();
    let Some((a, b)) = main_span(motion, &trace.t) else {
        notes.push("no stretch of running found: one interval".into());
        let p = whole(0, n.saturating_sub(1), SegmentKind::Steady);
        return (build(&trace.t, &[p], IntervalSource::Detected), notes);
    };
    let full = grads.and_then(|g| Trace::with_full_hill(session, Some(g), motion));
    let mut main = main_pieces(
        session,
        trace,
        full.as_ref(),
        motion,
        profile,
        (a, b),
        &mut notes,
    );
    let mut pieces = Vec::new();
    let mut trimmed = false;
    if a > 0 {
        if trace.time(a) - trace.time(0) >= MIN_END_S {
            trimmed = true;
            pieces.push(Piece {
                start: 0,
                end: a,
                kind: SegmentKind::Warmup,
                expected: None,
                mode: Some(end_mode(motion, 0, a)),
            });
        } else if let Some(first) = main.first_mut() {
            first.start = 0;
        }
    }
    let mut trailing = None;
    if b + 1 < n {
        if trace.time(n - 1) - trace.time(b) >= MIN_END_S {
            trimmed = true;
            trailing = Some(Piece {
                start: b,
                end: n - 1,
                kind: SegmentKind::Cooldown,
                expected: None,
                mode: Some(end_mode(motion, b, n - 1)),
            });
        } else if let Some(last) = main.last_mut() {
            last.end = n - 1;
        }
    }
    pieces.extend(main);
    pieces.extend(trailing);
    if trimmed {
        notes.push("standing or walking at the ends left out of the run".into());
    }
    (build(&trace.t, &pieces, IntervalSource::Detected), notes)
}

fn whole(start: usize, end: usize, kind: SegmentKind) -> Piece {
    Piece {
        start,
        end,
        kind,
        expected: None,
        mode: None,
    }
}

/// The mode of a trimmed end: walking when it walked more than it stood, else standing.
fn end_mode(motion: &Motion, a: usize, b: usize) -> RecoveryMode {
    let (mut walk, mut stand) = (0.0, 0.0);
    for i in a + 1..=b {
        let dt = motion.dt.get(i).copied().unwrap_or(0.0);
        match motion.at(i) {
            MotionState::Walk | MotionState::Run => walk += dt,
            MotionState::Stand | MotionState::Stopped => stand += dt,
        }
    }
    if walk > stand {
        RecoveryMode::Walk
    } else {
        RecoveryMode::Stand
    }
}

/// First and last sample of the main part: from the start of the first stretch of running
/// of at least [`MIN_MAIN_RUN_S`] to the end of the last one. `None` when there is none.
fn main_span(motion: &Motion, t: &[f64]) -> Option<(usize, usize)> {
    let n = motion.len();
    // Runs of running samples: (first, last) sample of each stretch.
    let mut runs: Vec<(usize, usize)> = Vec::new();
    for i in 1..n {
        if motion.running(i) {
            match runs.last_mut() {
                Some(r) if r.1 + 1 == i => r.1 = i,
                _ => runs.push((i, i)),
            }
        }
    }
    let long = |r: &&(usize, usize)| {
        t.get(r.1).copied().unwrap_or(0.0) - t.get(r.0 - 1).copied().unwrap_or(0.0)
            >= MIN_MAIN_RUN_S
    };
    let first = runs.iter().find(long)?;
    let last = runs.iter().rev().find(long)?;
    // Sample i stands for t[i-1]..t[i]: the stretch starts at sample first.0 - 1.
    Some((first.0 - 1, last.1))
}

/// Heart rate smoothed over 10 s, `None` where missing or flagged.
fn smoothed_hr(session: &Session, trace: &Trace) -> Option<Vec<Option<f64>>> {
    let hr = session.hr.as_ref()?;
    let mask = sample_mask(session, &session.flags, ChannelKind::Hr);
    let vals: Vec<Option<f64>> = (0..session.len())
        .map(|i| {
            if mask.get(i).copied().unwrap_or(false) {
                None
            } else {
                hr.get(i)
            }
        })
        .collect();
    if vals.iter().filter(|v| v.is_some()).count() * 2 < vals.len() {
        return None;
    }
    let sm = window_mean(&trace.t, &vals, &trace.w, 5.0);
    Some(
        sm.into_iter()
            .zip(&vals)
            .map(|(s, v)| v.map(|_| s))
            .collect(),
    )
}

/// Pieces of the main part `a..=b` (indices of the whole session).
fn main_pieces(
    session: &Session,
    trace: &Trace,
    full: Option<&Trace>,
    motion: &Motion,
    profile: &AthleteProfile,
    (a, b): (usize, usize),
    notes: &mut Vec<String>,
) -> Vec<Piece> {
    let sub = trace.slice(a, b);
    let det = detect::detect(&sub, None);
    let mut runs: Vec<(usize, usize, bool)> = det
        .runs
        .iter()
        .map(|r| (r.start + a, r.end + a, r.fast))
        .collect();
    // A slow run of a few seconds at either end of the main part (getting going, easing
    // off) belongs to its neighbour.
    absorb_short_ends(&mut runs, trace);
    let steady = |notes: &mut Vec<String>, text: &str| {
        notes.push(text.to_string());
        vec![whole(a, b, SegmentKind::Steady)]
    };
    // Either hill adjustment may show the stages more clearly (see step 2).
    if let Some(stages) =
        progression(trace, a, b).or_else(|| full.and_then(|f| progression(f, a, b)))
    {
        notes.push(format!(
            "progression: {} stages, each faster than the one before",
            stages.len() - 1
        ));
        return super::pairs(&stages)
            .map(|(x, y)| whole(x, y, SegmentKind::Steady))
            .collect();
    }
    if runs.is_empty() {
        return steady(notes, STEADY_NOTE);
    }
    // With altitude, the table's hill-adjusted pace (the full correction) must show two
    // levels too: a runner who holds an even hill-adjusted pace over rolling ground runs
    // the descents fast on the watch and on the damped trace, but not at a higher effort.
    if full.is_some_and(|f| detect::detect(&f.slice(a, b), None).runs.is_empty()) {
        return steady(
            notes,
            "the faster stretches were descents at an even hill-adjusted pace: one steady \
             interval",
        );
    }
    // Walked climbs (a trail) are not reps: fast stretches spent mostly walking go back.
    loop {
        let walked = runs
            .iter()
            .position(|r| r.2 && motion.running_s(r.0, r.1) < 0.5 * motion.moving_s(r.0, r.1));
        let Some(k) = walked else { break };
        flip_run(&mut runs, k);
    }
    if !runs.iter().any(|r| r.2) {
        return steady(
            notes,
            "the faster stretches were walked climbs, not repeats: one steady interval",
        );
    }
    let hr = smoothed_hr(session, trace);
    // Without heart rate, the watch's own speed must rise too (a climb at an even effort
    // is fast only once hill-adjusted); with it, the heart rate decides below (hill
    // repeats run up at effort are slow on the watch).
    if hr.is_none() && !super::raw_structure(&runs, trace) {
        return steady(
            notes,
            "the faster stretches were climbs at a steady effort, not repeats: one steady \
             interval",
        );
    }
    if let Some(hr) = hr {
        loop {
            let weak = runs
                .iter()
                .enumerate()
                .filter(|(_, r)| r.2)
                .map(|(k, _)| (k, hr_response(&runs, k, &hr, trace)))
                .filter(|(_, resp)| resp.is_some_and(|r| r < HR_RESPONSE_BPM))
                .min_by(|x, y| x.1.unwrap_or(0.0).total_cmp(&y.1.unwrap_or(0.0)));
            let Some((k, _)) = weak else { break };
            flip_run(&mut runs, k);
        }
        if !runs.iter().any(|r| r.2) {
            return steady(
                notes,
                "the faster stretches did not raise the heart rate (downhill or an even \
                 effort): one steady interval",
            );
        }
    }
    let fast: Vec<&(usize, usize, bool)> = runs.iter().filter(|r| r.2).collect();
    let slow_between: Vec<&(usize, usize, bool)> = {
        let first = runs.iter().position(|r| r.2).unwrap_or(0);
        let last = runs.iter().rposition(|r| r.2).unwrap_or(0);
        runs.iter()
            .enumerate()
            .filter(|(k, r)| !r.2 && *k > first && *k < last)
            .map(|(_, r)| r)
            .collect()
    };
    if !slow_between.is_empty()
        && slow_between
            .iter()
            .all(|r| motion.running_s(r.0, r.1) < 0.5 * (trace.time(r.1) - trace.time(r.0)))
    {
        let mut lens: Vec<f64> = fast.iter().map(|r| motion.moving_s(r.0, r.1)).collect();
        lens.sort_by(f64::total_cmp);
        let median = lens.get(lens.len() / 2).copied().unwrap_or(0.0);
        if median >= STOPS_MIN_EFFORT_S {
            return steady(
                notes,
                &format!(
                    "one steady effort with {} stop{}: not a set",
                    slow_between.len(),
                    if slow_between.len() == 1 { "" } else { "s" }
                ),
            );
        }
    }
    if fast.len() == 1 {
        let slow_running: f64 = runs
            .iter()
            .filter(|r| !r.2)
            .map(|r| motion.running_s(r.0, r.1))
            .sum();
        let effort = fast
            .first()
            .and_then(|r| trace.stats(r.0, r.1).adj_speed)
            .unwrap_or(0.0);
        let hard_enough = profile
            .threshold_speed_mps
            .is_none_or(|th| effort >= ONE_EFFORT_MIN_INTENSITY * th);
        if slow_running < ONE_EFFORT_MIN_SLOW_S || !hard_enough {
            // A slower start (or finish) of an easy run: warm-up and cool-down, no work.
            let why = if hard_enough {
                "only a short slower start or finish"
            } else {
                "the faster part was still easy running"
            };
            notes.push(format!("one steady run ({why}): nothing to score"));
            return runs
                .iter()
                .enumerate()
                .map(|(k, r)| {
                    let kind = if r.2 {
                        SegmentKind::Steady
                    } else if k == 0 {
                        SegmentKind::Warmup
                    } else {
                        SegmentKind::Cooldown
                    };
                    whole(r.0, r.1, kind)
                })
                .collect();
        }
        notes.push(
            "one sustained effort with a warm-up and cool-down (a race, time trial or tempo)"
                .into(),
        );
    }
    let pieces = label_inferred(&runs, trace);
    pieces
        .into_iter()
        .map(|mut p| {
            if p.kind == SegmentKind::Recovery {
                p.mode = recovery_mode(p.kind, None, trace, p.start, p.end);
            }
            p
        })
        .collect()
}

/// Heart-rate response of fast run `k`: the highest smoothed HR from its start to 20 s
/// after its end, over the lowest in the 60 s before it starts (from the slow run before;
/// from its own first 20 s when it opens the main part). `None` without HR there.
fn hr_response(
    runs: &[(usize, usize, bool)],
    k: usize,
    hr: &[Option<f64>],
    trace: &Trace,
) -> Option<f64> {
    let &(s, e, _) = runs.get(k)?;
    let (ts, te) = (trace.time(s), trace.time(e));
    let in_range = |lo: f64, hi: f64| {
        let from = trace.t.partition_point(|&x| x < lo);
        let to = trace.t.partition_point(|&x| x <= hi);
        (from..to).filter_map(|i| hr.get(i).copied().flatten())
    };
    let peak = in_range(ts, te + 20.0).reduce(f64::max)?;
    let base = if k > 0 {
        in_range(ts - 60.0, ts + 5.0).reduce(f64::min)
    } else {
        in_range(ts, ts + 20.0).reduce(f64::min)
    }?;
    Some(peak - base)
}

/// Merge slow runs shorter than [`MIN_END_S`] at either end into their neighbour.
fn absorb_short_ends(runs: &mut Vec<(usize, usize, bool)>, trace: &Trace) {
    let short = |r: &(usize, usize, bool)| !r.2 && trace.time(r.1) - trace.time(r.0) < MIN_END_S;
    if runs.len() >= 2 && runs.first().is_some_and(short) {
        let first = runs.remove(0);
        if let Some(next) = runs.first_mut() {
            next.0 = first.0;
        }
    }
    if runs.len() >= 2 && runs.last().is_some_and(short) {
        if let Some(last) = runs.pop() {
            if let Some(prev) = runs.last_mut() {
                prev.1 = last.1;
            }
        }
    }
    if runs.iter().all(|r| r.2) {
        runs.clear();
    }
}

/// Turn fast run `k` slow, merging it with slow neighbours.
fn flip_run(runs: &mut Vec<(usize, usize, bool)>, k: usize) {
    let Some(r) = runs.get_mut(k) else { return };
    r.2 = false;
    let mut merged: Vec<(usize, usize, bool)> = Vec::with_capacity(runs.len());
    for &r in runs.iter() {
        match merged.last_mut() {
            Some(m) if m.2 == r.2 => m.1 = r.1,
            _ => merged.push(r),
        }
    }
    *runs = merged;
}

/// Stage boundaries (sample indices, first `a`, last `b`) when `a..=b` is a progression.
fn progression(trace: &Trace, a: usize, b: usize) -> Option<Vec<usize>> {
    // Blocks of moving time.
    let mut blocks: Vec<(usize, f64)> = Vec::new(); // (end sample, mean adj speed)
    let (mut acc_t, mut acc_v, mut acc_w) = (0.0, 0.0, 0.0);
    let mut bounds = vec![a];
    for i in a + 1..=b {
        let g = trace.gap.get(i).copied().unwrap_or(0.0);
        if let Some(v) = trace.adj.get(i).copied().flatten() {
            acc_v += v * g;
            acc_w += g;
        }
        acc_t += g;
        if acc_t >= PROGRESSION_BLOCK_S || i == b {
            if acc_w > 0.5 * PROGRESSION_BLOCK_S {
                blocks.push((i, acc_v / acc_w));
            } else if let Some(last) = blocks.last_mut() {
                last.0 = i;
            }
            acc_t = 0.0;
            acc_v = 0.0;
            acc_w = 0.0;
        }
    }
    let m = blocks.len();
    let min = PROGRESSION_MIN_STAGE_BLOCKS;
    if m < PROGRESSION_MIN_STAGES * min {
        return None;
    }
    let vals: Vec<f64> = blocks.iter().map(|x| x.1).collect();
    // Binary segmentation on the mean: split where the two sides differ most (in squared
    // error reduction), while both sides keep `min` blocks and differ by PROGRESSION_STEP.
    let mut cuts: Vec<usize> = vec![0, m];
    loop {
        let mut best: Option<(f64, usize)> = None;
        for (lo, hi) in super::pairs(&cuts) {
            if hi < lo + 2 * min {
                continue;
            }
            for c in lo + min..=hi - min {
                let mean = |x: &[f64]| x.iter().sum::<f64>() / x.len().max(1) as f64;
                let (Some(l), Some(r)) = (vals.get(lo..c), vals.get(c..hi)) else {
                    continue;
                };
                let (ml, mr) = (mean(l), mean(r));
                if (mr / ml - 1.0).abs() < PROGRESSION_STEP {
                    continue;
                }
                let gain = (l.len() * r.len()) as f64 / (hi - lo) as f64 * (mr - ml).powi(2);
                if best.is_none_or(|bb| gain > bb.0) {
                    best = Some((gain, c));
                }
            }
        }
        let Some((_, c)) = best else { break };
        cuts.push(c);
        cuts.sort_unstable();
    }
    if cuts.len() - 1 < PROGRESSION_MIN_STAGES {
        return None;
    }
    let means: Vec<f64> = super::pairs(&cuts)
        .map(|(x, y)| {
            let part = vals.get(x..y).unwrap_or_default();
            part.iter().sum::<f64>() / part.len() as f64
        })
        .collect();
    let rising = means
        .iter()
        .zip(means.iter().skip(1))
        .all(|(x, y)| *y >= x * (1.0 + PROGRESSION_STEP));
    let first = *means.first()?;
    let last = *means.last()?;
    if !rising || last < first * (1.0 + PROGRESSION_TOTAL) {
        return None;
    }
    for &c in cuts.iter().skip(1).take(cuts.len() - 2) {
        bounds.push(blocks.get(c - 1).map(|x| x.0)?);
    }
    bounds.push(b);
    Some(bounds)
}
