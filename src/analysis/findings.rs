//! Findings: a short ordered list of plain-language observations, each tied to the numbers
//! behind it. They seed the feedback draft.

use serde::{Deserialize, Serialize};

use crate::model::units::format_pace;
use crate::model::{AthleteProfile, IntervalSet, Session, Units};

use super::decoupling::DECOUPLING_COACHING_LINE_PCT;
use super::review::{AboveMax, HrChecks, IntervalMetrics, Review, Whole, HR_COVERAGE_MIN};

/// How much a finding matters. `Caution` is reserved for possible health signals.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Info,
    Note,
    Warning,
    Caution,
}

impl Severity {
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Info => "info",
            Severity::Note => "note",
            Severity::Warning => "warning",
            Severity::Caution => "caution",
        }
    }
}

/// One observation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Finding {
    pub severity: Severity,
    /// Stable machine name of the observation (e.g. `decoupling_high`), for the feedback draft.
    pub code: String,
    pub text: String,
    /// The review keys behind it, e.g. `intervals[3].avg_pace_s_per_km`.
    pub metrics: Vec<String>,
}

/// The wording every health caution carries.
pub const MEDICAL_CAUTION: &str = "splitdesk is a coaching aid, not medical advice: if this \
is not a sensor fault, the athlete should see a physician; defer to licensed medical practice.";

/// Share of flagged data above which the review says the numbers are less reliable.
// Common coaching practice (no published source).
pub const FLAGGED_NOTE_FRACTION: f64 = 0.05;

/// HR lag above this after a work interval is worth a note, seconds.
// Common coaching practice (no published source).
pub const LONG_HR_LAG_S: f64 = 20.0;

/// A decoupling between minus this and the 5 % line reads as steady; below it, the
/// negative decoupling gets its own note, percent.
// Common coaching practice (no published source): GPS and HR noise move a steady run's
// decoupling by a percentage point or two either way.
pub const NEGATIVE_DECOUPLING_NOTE_PCT: f64 = 2.0;

/// Extra descent in the second half that explains a negative decoupling, metres.
// Common coaching practice (no published source): our threshold for "clearly more downhill".
pub const DOWNHILL_EXPLAINS_M: f64 = 15.0;

/// Variation of 30-s split speeds above which a long effort counts as unevenly paced, %.
// Common coaching practice (no published source): GPS noise and ordinary pacing error
// give 1-3 % on a well-run effort.
pub const UNEVEN_PACING_PCT: f64 = 4.0;

/// A 60-s HR drop at or below this is shown as information (Cole et al. 1999 clinical
/// threshold, NEJM 341:1351, measured in a treadmill test, not on a field run).
pub const COLE_HRR_BPM: f64 = 12.0;

/// The finding for pace targets left unjudged on a climb (or a descent): which intervals,
/// their mean grade, the pace and hill-adjusted pace ranges and the targets.
fn hill_targets(group: &[&IntervalMetrics], climb: bool, u: Units) -> Option<Finding> {
    if group.is_empty() {
        return None;
    }
    let range = |vals: Vec<f64>| -> Option<String> {
        let lo = vals.iter().copied().reduce(f64::min)?;
        let hi = vals.iter().copied().reduce(f64::max)?;
        // Paces in s/km, so the lowest is the fastest: "3:50-3:55/km".
        let (a, b) = (format_pace(1000.0 / lo, u), format_pace(1000.0 / hi, u));
        let suffix = format!("/{}", u.label());
        Some(if a == b {
            a
        } else {
            format!("{}-{b}", a.trim_end_matches(&suffix))
        })
    };
    let raw = range(group.iter().filter_map(|m| m.avg_pace_s_per_km).collect());
    let adj = range(
        group
            .iter()
            .filter_map(|m| m.hill_adjusted_pace_s_per_km)
            .collect(),
    );
    let grades: Vec<f64> = group.iter().filter_map(|m| m.grade_pct).collect();
    let mean_grade = grades.iter().sum::<f64>() / grades.len().max(1) as f64;
    let reps: Vec<usize> = group.iter().filter_map(|m| m.work_number).collect();
    let others: Vec<usize> = group
        .iter()
        .filter(|m| m.work_number.is_none())
        .map(|m| m.index)
        .collect();
    let mut names = Vec::new();
    if !reps.is_empty() {
        let s = if reps.len() == 1 { "" } else { "s" };
        names.push(format!("Rep{s} {}", number_list(&reps)));
    }
    if !others.is_empty() {
        let s = if others.len() == 1 { "" } else { "s" };
        let lead = if names.is_empty() {
            "Interval"
        } else {
            "interval"
        };
        names.push(format!("{lead}{s} {}", number_list(&others)));
    }
    let mut targets: Vec<String> = Vec::new();
    for t in group.iter().filter_map(|m| m.target.clone()) {
        if !targets.contains(&t) {
            targets.push(t);
        }
    }
    let band = if targets.is_empty() {
        "the target".to_string()
    } else {
        targets.join(" / ")
    };
    let way = if climb { "a climb" } else { "a descent" };
    let mut text = format!(
        "{} ran on {way} (mean grade {:.1} %): a pace target is an effort there and is not \
         judged",
        names.join(" and "),
        mean_grade.abs()
    );
    match (raw, adj) {
        (Some(raw), Some(adj)) => text.push_str(&format!(
            "; pace {raw}, hill-adjusted {adj}, against {band}."
        )),
        (Some(raw), None) => text.push_str(&format!("; pace {raw} against {band}.")),
        _ => text.push('.'),
    }
    Some(f(
        Severity::Info,
        "targets_on_hill",
        text,
        group
            .iter()
            .flat_map(|m| {
                [
                    format!("intervals[{}].avg_pace_s_per_km", m.index),
                    format!("intervals[{}].hill_adjusted_pace_s_per_km", m.index),
                    format!("intervals[{}].grade_pct", m.index),
                ]
            })
            .collect(),
    ))
}

/// HR drift above this, bpm per hour at steady pace, is worth a note.
// Common coaching practice (no published source).
pub const HR_DRIFT_NOTE_BPM_PER_H: f64 = 10.0;

/// Numbers as text, runs of consecutive ones joined: `[1, 2, 3, 5]` gives "1-3, 5".
pub fn number_list(numbers: &[usize]) -> String {
    let mut parts: Vec<String> = Vec::new();
    let mut k = 0;
    while let Some(&start) = numbers.get(k) {
        let mut end = start;
        while numbers.get(k + 1) == Some(&(end + 1)) {
            end += 1;
            k += 1;
        }
        parts.push(if end > start + 1 {
            format!("{start}-{end}")
        } else if end == start + 1 {
            format!("{start}, {end}")
        } else {
            start.to_string()
        });
        k += 1;
    }
    parts.join(", ")
}

fn f(severity: Severity, code: &str, text: String, metrics: Vec<String>) -> Finding {
    Finding {
        severity,
        code: code.to_string(),
        text,
        metrics,
    }
}

/// The no-plan finding: what kind of run the finder read, in its own words.
fn inferred_text(set: &IntervalSet) -> String {
    if set
        .notes
        .iter()
        .any(|n| n.starts_with("no speed or distance"))
    {
        return "No plan for this session, and no speed or distance in the file: the \
                session is shown as one piece."
            .into();
    }
    let reading = set
        .notes
        .iter()
        .rev()
        .find(|n| {
            n.as_str() != crate::analysis::intervals::INFERRED_NOTE
                && !n.starts_with("standing or walking at the ends")
                && !n.starts_with("device laps")
        })
        .cloned();
    let work = set.work().count();
    match reading {
        Some(r) => format!("No plan for this session: read from the speed and heart rate as {r}."),
        None if work >= 2 => format!(
            "No plan for this session: read from the speed and heart rate as a set of {work} \
             repeats."
        ),
        None => "No plan for this session: the intervals were inferred from the speed.".into(),
    }
}

pub(crate) fn findings(
    r: &Review,
    session: &Session,
    set: &IntervalSet,
    profile: &AthleteProfile,
    whole: &Whole,
    hr: &HrChecks,
) -> Vec<Finding> {
    let u = profile.units;
    let mut out = Vec::new();

    // Health cautions first; HR above a stale profile maximum is a profile matter.
    if let Some(a) = &hr.above_max {
        out.push(above_max_finding(a));
    }
    let hr_rate_flags = session
        .flags
        .iter()
        .filter(|f| f.kind == crate::model::FlagKind::HrRate)
        .count();
    if hr_rate_flags >= 3 {
        out.push(f(
            Severity::Caution,
            "hr_rate",
            format!(
                "Heart rate jumped faster than a heart can {hr_rate_flags} times. This is usually the sensor; \
                 if the athlete felt palpitations or dizziness, take it seriously. {MEDICAL_CAUTION}"
            ),
            vec!["flags".into()],
        ));
    }

    // What ingest worked around in the file (dropped impossible timestamps, converted device
    // time, bytes after the data): the numbers stand, but the coach should know.
    for w in &session.warnings {
        out.push(f(
            Severity::Warning,
            "file_warning",
            format!("While reading the file: {w}."),
            vec!["file".into()],
        ));
    }

    // Plan fit.
    if !r.missing_planned.is_empty() {
        let list: Vec<String> = r.missing_planned.iter().map(|m| m.to_string()).collect();
        out.push(f(
            Severity::Warning,
            "missing_planned",
            format!(
                "{} planned interval{} not found in the recording (plan steps {}).",
                list.len(),
                if list.len() == 1 { " was" } else { "s were" },
                list.join(", ")
            ),
            vec!["missing_planned".into()],
        ));
    }
    if !set.extra.is_empty() {
        out.push(f(
            Severity::Note,
            "extra_work",
            format!(
                "{} work interval{} that the plan did not ask for.",
                set.extra.len(),
                if set.extra.len() == 1 { "" } else { "s" }
            ),
            vec!["intervals".into()],
        ));
    }

    // Targets, rep by rep.
    let work: Vec<_> = r.work().collect();
    let judged: Vec<_> = work.iter().filter(|m| m.target_hit.is_some()).collect();
    if !judged.is_empty() {
        let hit = judged.iter().filter(|m| m.target_hit == Some(true)).count();
        let missed: Vec<String> = judged
            .iter()
            .filter(|m| m.target_hit == Some(false))
            .map(|m| {
                let pace = m
                    .avg_pace_s_per_km
                    .map(|p| format_pace(1000.0 / p, u))
                    .unwrap_or_else(|| "no pace".into());
                let side = match (m.target_band_mps, m.avg_pace_s_per_km) {
                    (Some((slow, _)), Some(p)) if 1000.0 / p < slow => "slow",
                    (Some(_), Some(_)) => "fast",
                    _ => "off",
                };
                format!("rep {} {side} ({pace})", m.work_number.unwrap_or(0))
            })
            .collect();
        let severity = if missed.is_empty() {
            Severity::Info
        } else if hit * 2 >= judged.len() {
            Severity::Note
        } else {
            Severity::Warning
        };
        let mut text = format!("{hit} of {} work intervals on target", judged.len());
        if !missed.is_empty() {
            text.push_str(&format!(": {}", missed.join(", ")));
        }
        text.push('.');
        out.push(f(
            severity,
            "targets",
            text,
            judged
                .iter()
                .map(|m| format!("intervals[{}].target_hit", m.index))
                .collect(),
        ));
    }

    // Pace targets on a climb or descent: both paces beside the band, no verdict. Climbs and
    // descents are told apart (an out-and-back set has both).
    let on_hill: Vec<&IntervalMetrics> =
        r.intervals.iter().filter(|m| m.target_on_hill()).collect();
    for climb in [true, false] {
        let group: Vec<&IntervalMetrics> = on_hill
            .iter()
            .copied()
            .filter(|m| m.grade_pct.is_some_and(|g| (g >= 0.0) == climb))
            .collect();
        if let Some(finding) = hill_targets(&group, climb, u) {
            out.push(finding);
        }
    }

    // Progression or fade across the set, and within reps.
    if let Some(t) = r
        .trend("hill_adjusted_pace_s_per_km")
        .filter(|_| r.hill_adjusted)
        .or_else(|| r.trend("avg_pace_s_per_km"))
    {
        match t.direction.as_str() {
            "falling" => out.push(f(
                Severity::Info,
                "progression",
                format!("Progression: {}.", t.text),
                vec![format!("trends.{}", t.metric)],
            )),
            "rising" => out.push(f(
                Severity::Note,
                "fade_set",
                format!("Fade across the set: {}.", t.text),
                vec![format!("trends.{}", t.metric)],
            )),
            _ => {}
        }
    }
    let fades = work
        .iter()
        .filter(
            |m| match (m.first_half_pace_s_per_km, m.second_half_pace_s_per_km) {
                (Some(a), Some(b)) => b > a * 1.03,
                _ => false,
            },
        )
        .count();
    if !work.is_empty() && fades * 2 > work.len() {
        let text = match (
            work.len(),
            work.first()
                .and_then(|m| m.first_half_pace_s_per_km.zip(m.second_half_pace_s_per_km)),
        ) {
            (1, Some((a, b))) => format!(
                "The effort slowed by {:.0} % in its second half ({} then {}): started too fast?",
                (b / a - 1.0) * 100.0,
                format_pace(1000.0 / a, u),
                format_pace(1000.0 / b, u)
            ),
            _ => format!(
                "{fades} of {} work intervals slowed by more than 3 % in their second half: started too fast?",
                work.len()
            ),
        };
        out.push(f(
            Severity::Note,
            "fade_within",
            text,
            vec!["intervals[].second_half_pace_s_per_km".into()],
        ));
    }
    let uneven: Vec<String> = work
        .iter()
        .filter_map(|m| {
            let v = m.pace_variability_pct?;
            (v > UNEVEN_PACING_PCT).then(|| {
                if work.len() == 1 {
                    format!("{v:.1} %")
                } else {
                    format!("rep {} {v:.1} %", m.work_number.unwrap_or(0))
                }
            })
        })
        .collect();
    if !uneven.is_empty() {
        out.push(f(
            Severity::Note,
            "uneven_pacing",
            format!(
                "Uneven pacing: 30-s splits varied by {} (surges and slow-downs; even running \
                 usually stays under {UNEVEN_PACING_PCT:.0} %).",
                uneven.join(", ")
            ),
            vec!["intervals[].pace_variability_pct".into()],
        ));
    }

    // Recoveries.
    if let Some(t) = r
        .trend("recovery_trough_bpm")
        .filter(|t| t.direction == "rising")
    {
        out.push(f(
            Severity::Note,
            "troughs_rising",
            format!("Recoveries got less complete: {}.", t.text),
            vec!["trends.recovery_trough_bpm".into()],
        ));
    }
    let lags: Vec<f64> = r.recoveries.iter().filter_map(|x| x.hr_lag_s).collect();
    if let Some(longest) = lags.iter().copied().reduce(f64::max) {
        let lag_rising = r.trend("hr_lag_s").is_some_and(|t| t.direction == "rising");
        if longest > LONG_HR_LAG_S || lag_rising {
            let mut text = format!(
                "Heart rate kept rising for up to {longest:.0} s after the work intervals ended"
            );
            if let Some(t) = r.trend("hr_lag_s").filter(|_| lag_rising) {
                text.push_str(&format!("; {}", t.text));
            }
            text.push('.');
            out.push(f(
                Severity::Note,
                "hr_lag",
                text,
                vec!["recoveries[].hr_lag_s".into()],
            ));
        }
    }
    let low_drops: Vec<usize> = r
        .recoveries
        .iter()
        .filter(|x| x.hr_drop_60s_bpm.is_some_and(|d| d <= COLE_HRR_BPM))
        .map(|x| x.work_number)
        .collect();
    if !low_drops.is_empty() && !r.recoveries.is_empty() && low_drops.len() == r.recoveries.len() {
        out.push(f(
            Severity::Info,
            "hr_drop_info",
            format!(
                "HR fell by {COLE_HRR_BPM:.0} bpm or less in the minute after every work interval. Clinical tests \
                 (Cole et al. 1999) use a similar number after a set treadmill protocol; on a field run with a \
                 jog recovery it is information only."
            ),
            vec!["recoveries[].hr_drop_60s_bpm".into()],
        ));
    }

    // Whole-session efficiency: meaningful for steady running and for one sustained effort
    // (a race or tempo: the decoupling window is the effort), not across a set of repeats.
    let steady_session = work.is_empty()
        || (work.len() == 1
            && work
                .first()
                .is_some_and(|w| w.duration_s >= super::review::MIN_DECOUPLING_S));
    if let Some(d) = r.decoupling_pct.filter(|_| steady_session) {
        let kind = if r.hill_adjusted {
            "hill-adjusted "
        } else {
            ""
        };
        if d > DECOUPLING_COACHING_LINE_PCT {
            out.push(f(
                Severity::Warning,
                "decoupling_high",
                format!(
                    "Decoupling {d:.1} % ({kind}speed per heartbeat fell from the first half to the second), above \
                     the usual 5 % line (common coaching practice): heat, fuelling, fatigue or a pace beyond \
                     current aerobic fitness."
                ),
                vec!["decoupling_pct".into()],
            ));
        } else if d >= -NEGATIVE_DECOUPLING_NOTE_PCT {
            out.push(f(
                Severity::Info,
                "decoupling_ok",
                format!(
                    "Decoupling {d:.1} %: heart-rate cost held steady (within the usual 5 % line)."
                ),
                vec!["decoupling_pct".into()],
            ));
        }
    }
    // A negative decoupling is worth a note only beyond the noise band, and the note names
    // the number it is about: the raw one when downhill running explains it, otherwise the
    // reported (hill-adjusted where there is altitude) one.
    let below = |d: &f64| *d < -NEGATIVE_DECOUPLING_NOTE_PCT;
    let raw_negative = r.decoupling_raw_pct.filter(below);
    let reported_negative = r.decoupling_pct.filter(below);
    let downhill = whole
        .extra_descent_second_half_m
        .filter(|m| *m >= DOWNHILL_EXPLAINS_M);
    if steady_session && (raw_negative.is_some() || reported_negative.is_some()) {
        let raw = r.decoupling_raw_pct.unwrap_or(0.0);
        match downhill.filter(|_| raw_negative.is_some()) {
            Some(m) => out.push(f(
                Severity::Note,
                "decoupling_negative_downhill",
                format!(
                    "Negative decoupling ({raw:.1} % on raw speed) comes from downhill running: the second half \
                     dropped {m:.0} m more than the first, and running downhill costs less per metre{}.",
                    match (r.hill_adjusted, r.decoupling_pct) {
                        (true, Some(d)) => format!("; hill-adjusted, decoupling is {d:.1} %"),
                        _ => String::new(),
                    }
                ),
                vec![
                    "decoupling_raw_pct".into(),
                    "decoupling_pct".into(),
                    "elevation_loss_m".into(),
                ],
            )),
            None => {
                if let Some(d) = reported_negative {
                    out.push(f(
                        Severity::Note,
                        "decoupling_negative",
                        format!(
                            "Negative decoupling ({d:.1} %): HR cost fell in the second half. The elevation \
                             profile does not explain it; a slow warm-up, a cooler second half or an HR sensor \
                             settling in can."
                        ),
                        vec!["decoupling_pct".into()],
                    ));
                }
            }
        }
    }
    // HR drift says the same thing as the decoupling, in another unit: a note only when the
    // decoupling is above its line too (or could not be computed), so a run is not called
    // steady and drifting at once.
    let decoupling_steady = r
        .decoupling_pct
        .is_some_and(|d| d <= DECOUPLING_COACHING_LINE_PCT);
    if let Some(d) = r
        .hr_drift_bpm_per_h
        .filter(|d| *d > HR_DRIFT_NOTE_BPM_PER_H && !decoupling_steady)
    {
        out.push(f(
            Severity::Note,
            "hr_drift",
            format!("At steady pace, HR drifted up {d:.0} bpm per hour."),
            vec!["hr_drift_bpm_per_h".into()],
        ));
    }

    // Data quality and missing channels.
    if r.flagged_fraction >= FLAGGED_NOTE_FRACTION {
        let sev = if r.flagged_fraction >= 0.25 {
            Severity::Warning
        } else {
            Severity::Note
        };
        out.push(f(
            sev,
            "flagged",
            format!(
                "{:.0} % of the session is flagged as bad data and left out of the numbers.",
                r.flagged_fraction * 100.0
            ),
            vec!["flagged_fraction".into(), "flags".into()],
        ));
    }
    if session
        .flags
        .iter()
        .any(|f| f.kind == crate::model::FlagKind::CadenceLock)
    {
        out.push(f(
            Severity::Note,
            "cadence_lock",
            "The heart-rate sensor locked onto the step rate for a while; HR there is masked."
                .into(),
            vec!["flags".into()],
        ));
    }
    if session.hr.is_none() {
        out.push(f(
            Severity::Note,
            "no_hr",
            "No heart rate in this file: HR metrics, load and decoupling are not available.".into(),
            vec!["avg_hr".into(), "trimp".into(), "decoupling_pct".into()],
        ));
    } else if profile.hr_max.is_none() || profile.hr_rest.is_none() {
        out.push(f(
            Severity::Info,
            "no_hr_profile",
            "The profile lacks resting or maximum HR: load (TRIMP) is not computed.".into(),
            vec!["trimp".into()],
        ));
    }
    if session.lat.is_none() {
        out.push(f(
            Severity::Info,
            "no_gps",
            "No GPS positions (treadmill or indoor): pace comes from the device's own speed."
                .into(),
            vec!["session.channels".into()],
        ));
    }
    if session.altitude.is_none() && session.lat.is_some() {
        out.push(f(
            Severity::Info,
            "no_altitude",
            "No altitude: paces are not hill-adjusted.".into(),
            vec!["hill_adjusted".into()],
        ));
    }
    if steady_session
        && r.decoupling_pct.is_none()
        && session.hr.is_some()
        && whole.analysed_s < super::review::MIN_DECOUPLING_S
    {
        out.push(f(
            Severity::Info,
            "decoupling_short",
            format!(
                "Decoupling needs {:.0} minutes of steady running after the warm-up; this session had {}.",
                super::review::MIN_DECOUPLING_S / 60.0,
                minutes_short_of(whole.analysed_s, super::review::MIN_DECOUPLING_S)
            ),
            vec!["decoupling_pct".into()],
        ));
    }
    if set.inferred {
        out.push(f(
            Severity::Info,
            "inferred",
            inferred_text(set),
            vec!["inferred".into()],
        ));
    }
    if let Some(finding) = coverage_finding(r, hr) {
        out.push(finding);
    }
    if !r.running {
        // Another sport: only what does not assume running stays (health, data, load).
        out.retain(|f| NOT_RUNNING_KEEPS.contains(&f.code.as_str()));
        out.push(f(
            Severity::Info,
            "not_running",
            format!(
                "{} session, not a run: no running analysis (no intervals to score, no pace or \
                 decoupling); duration, distance, heart rate and load are shown.",
                session.sport.title()
            ),
            vec!["running".into(), "session.sport".into()],
        ));
    }
    out.sort_by_key(|f| std::cmp::Reverse(f.severity));
    out
}

/// Finding codes that still hold for a session that is not a run.
const NOT_RUNNING_KEEPS: &[&str] = &[
    "hr_above_max",
    "hr_max_stale",
    "hr_rate",
    "hr_coverage",
    "flagged",
    "cadence_lock",
    "no_hr",
    "no_hr_profile",
];

/// Time that fell short of `needed_s`, in minutes, never shown as the requirement itself:
/// 19.96 min is "19.9 min", not "20".
fn minutes_short_of(had_s: f64, needed_s: f64) -> String {
    let had = had_s.max(0.0) / 60.0;
    if format!("{had:.0}") != format!("{:.0}", needed_s / 60.0) {
        return format!("{had:.0} min");
    }
    // One decimal, rounded down so it stays under the requirement.
    format!("{:.1} min", (had * 10.0).floor() / 10.0)
}

/// The finding for HR above the profile's maximum: a stale profile when the pattern is
/// that of a real heart (sustained, climbing with the effort, not far above), else the
/// medical caution (methods.md §12).
fn above_max_finding(a: &AboveMax) -> Finding {
    let (top, max) = (a.top, a.max);
    let how_long = crate::model::units::format_clock(a.secs);
    if !a.implausible.is_empty() {
        return f(
            Severity::Caution,
            "hr_above_max",
            format!(
                "Heart rate reached {top:.0} bpm, above the profile's maximum of {max:.0} bpm, for \
                 {how_long} ({}). Check the sensor first. {MEDICAL_CAUTION}",
                a.implausible.join(", ")
            ),
            vec!["max_hr".into(), "intervals[].max_hr".into()],
        );
    }
    let (severity, text) = if a.sustained {
        (
            Severity::Warning,
            format!(
                "Heart rate reached {top:.0} bpm, above the profile's maximum of {max:.0} bpm, \
                 for {how_long} in total, climbing with the effort: the profile's maximum looks \
                 out of date; consider updating it (zones and load rest on it)."
            ),
        )
    } else {
        (
            Severity::Note,
            format!(
                "Heart rate reached {top:.0} bpm for {how_long}, above the profile's maximum of \
                 {max:.0} bpm: if it happens again, the profile's maximum is likely out of date."
            ),
        )
    };
    f(
        severity,
        "hr_max_stale",
        text,
        vec!["max_hr".into(), "intervals[].max_hr".into()],
    )
}

/// The finding for HR drop-outs: coverage under [`HR_COVERAGE_MIN`] of the moving time, or
/// a recovery resting on partial HR.
fn coverage_finding(r: &Review, hr: &HrChecks) -> Option<Finding> {
    let coverage = r.hr_coverage?;
    let partial: Vec<usize> = r
        .recoveries
        .iter()
        .filter(|x| x.hr_partial)
        .map(|x| x.work_number)
        .collect();
    if coverage >= HR_COVERAGE_MIN && partial.is_empty() {
        return None;
    }
    let mut parts = Vec::new();
    if coverage < HR_COVERAGE_MIN {
        let longest = hr
            .dropouts
            .iter()
            .copied()
            .reduce(|a, b| if b.1 > a.1 { b } else { a });
        let n = hr.dropouts.len();
        // Missing samples and masked ones (cadence lock, bad values) alike.
        let mut text = format!(
            "No usable heart rate for {:.0} % of the moving time",
            (1.0 - coverage) * 100.0
        );
        if let Some((at, secs)) = longest {
            let clock = crate::model::units::format_clock;
            text.push_str(&format!(
                " ({n} stretch{}, the longest {} from {})",
                if n == 1 { "" } else { "es" },
                clock(secs),
                clock(at)
            ));
        }
        if r.trimp.is_some() {
            text.push_str(": load (TRIMP) is a lower bound");
        }
        parts.push(text);
    }
    if !partial.is_empty() {
        let s = if partial.len() == 1 { "" } else { "s" };
        parts.push(format!(
            "the recovery figures after rep{s} {} rest on partial heart rate",
            number_list(&partial)
        ));
    }
    let joined = parts.join("; ");
    let mut chars = joined.chars();
    let mut text: String = match chars.next() {
        Some(c) => c.to_uppercase().chain(chars).collect(),
        None => joined,
    };
    text.push('.');
    let severity = if coverage < 0.75 {
        Severity::Warning
    } else {
        Severity::Note
    };
    let mut metrics = vec!["hr_coverage".to_string(), "intervals[].hr_coverage".into()];
    if r.trimp_lower_bound {
        metrics.push("trimp_lower_bound".into());
    }
    if !partial.is_empty() {
        metrics.push("recoveries[].hr_partial".into());
    }
    Some(f(severity, "hr_coverage", text, metrics))
}

#[cfg(test)]
mod tests {
    use super::{hill_targets, number_list};
    use crate::analysis::review::IntervalMetrics;
    use crate::model::Units;

    fn rep(index: usize, work: usize, grade: f64, pace: f64, adj: f64) -> IntervalMetrics {
        serde_json::from_value(serde_json::json!({
            "index": index, "work_number": work, "kind": "work", "source": "detected",
            "start_s": 0.0, "end_s": 60.0, "duration_s": 60.0, "moving_s": 60.0,
            "avg_pace_s_per_km": pace, "hill_adjusted_pace_s_per_km": adj,
            "grade_pct": grade, "target": "5k (3:02-3:12/km)",
            "target_basis": "not_judged_on_hill",
        }))
        .unwrap()
    }

    #[test]
    fn hill_targets_name_climbs_and_descents_apart() {
        // An out-and-back set: reps 1 and 3 up a 5 % hill, rep 2 down it.
        let up = [rep(2, 1, 5.0, 230.0, 175.0), rep(6, 3, 4.0, 235.0, 180.0)];
        let down = [rep(4, 2, -5.0, 170.0, 215.0)];
        let f = hill_targets(&up.iter().collect::<Vec<_>>(), true, Units::Km).unwrap();
        assert_eq!(
            f.text,
            "Reps 1, 3 ran on a climb (mean grade 4.5 %): a pace target is an effort there and \
             is not judged; pace 3:50-3:55/km, hill-adjusted 2:55-3:00/km, against 5k \
             (3:02-3:12/km)."
        );
        let f = hill_targets(&down.iter().collect::<Vec<_>>(), false, Units::Km).unwrap();
        assert!(
            f.text
                .starts_with("Rep 2 ran on a descent (mean grade 5.0 %)"),
            "{}",
            f.text
        );
        assert!(
            f.text.contains("pace 2:50/km, hill-adjusted 3:35/km"),
            "{}",
            f.text
        );
        assert!(hill_targets(&[], true, Units::Km).is_none());
    }

    #[test]
    fn number_lists_join_runs() {
        assert_eq!(number_list(&[1, 2, 3, 4, 5, 6, 7, 8]), "1-8");
        assert_eq!(number_list(&[1, 2, 3, 5]), "1-3, 5");
        assert_eq!(number_list(&[2, 3]), "2, 3");
        assert_eq!(number_list(&[4]), "4");
        assert_eq!(number_list(&[1, 3, 4, 5, 9]), "1, 3-5, 9");
        assert_eq!(number_list(&[]), "");
    }
}

#[cfg(test)]
mod wording_tests {
    use super::minutes_short_of;

    #[test]
    fn time_short_of_a_requirement_never_rounds_up_to_it() {
        assert_eq!(minutes_short_of(19.96 * 60.0, 1200.0), "19.9 min");
        assert_eq!(minutes_short_of(19.6 * 60.0, 1200.0), "19.6 min");
        assert_eq!(minutes_short_of(12.2 * 60.0, 1200.0), "12 min");
        assert_eq!(minutes_short_of(0.0, 1200.0), "0 min");
    }
}
