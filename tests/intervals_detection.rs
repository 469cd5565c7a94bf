//! Accuracy of interval detection from the speed signal against the simulator's ground
//! truth, device laps removed.
//!
//! Run with `cargo test --release --test intervals_detection -- --nocapture` to see the
//! figures.

mod sim_support;

use sim_support::profile;
use splitdesk::analysis::intervals::find_intervals;
use splitdesk::demo::simulate::{simulate, Faults, Pacing, Sampling, SimInput, Terrain};
use splitdesk::ingest::clean;
use splitdesk::model::{IntervalSet, Plan};
use splitdesk::plan::parse_line;

/// Boundary tolerance for a found rep, seconds (the acceptance bar).
const TOLERANCE_S: f64 = 5.0;

fn plan(line: &str) -> Plan {
    Plan {
        title: "t".into(),
        purpose: "p".into(),
        date: None,
        steps: parse_line(line).unwrap_or_else(|e| panic!("{line}: {e}")),
    }
}

/// One test session: a plan line and how the day went.
struct Case {
    name: String,
    line: &'static str,
    terrain: Terrain,
    pacing: Pacing,
    sampling: Sampling,
    faults: Faults,
    seed: u64,
}

fn case(name: &str, line: &'static str, seed: u64) -> Case {
    Case {
        name: name.to_string(),
        line,
        terrain: Terrain::Flat,
        pacing: Pacing::Even,
        sampling: Sampling::EverySecond,
        faults: Faults::default(),
        seed,
    }
}

const SMART: Sampling = Sampling::Smart { min_s: 1, max_s: 7 };

fn faults() -> Faults {
    Faults {
        gps_jumps: 3,
        cadence_lock: Some((900.0, 120.0)),
        hr_dropouts: 3,
    }
}

fn rolling() -> Terrain {
    Terrain::Rolling {
        amplitude_m: 12.0,
        wavelength_m: 900.0,
    }
}

fn cases() -> Vec<Case> {
    let lines: &[(&str, &'static str)] = &[
        (
            "6x3min 5k jog",
            "10:00 easy; 6 x 3:00 @ 5k / 2:00 jog; 8:00 easy",
        ),
        (
            "5x4min 10k jog",
            "10:00 easy; 5 x 4:00 @ 10k / 1:30 jog; 8:00 easy",
        ),
        (
            "10x400 jog200",
            "10:00 easy; 10 x 400m @ 5k / 200m jog; 8:00 easy",
        ),
        (
            "5x1km 10k",
            "12:00 easy; 5 x 1km @ 10k / 2:00 jog; 8:00 easy",
        ),
        (
            "8x1min walk",
            "10:00 easy; 8 x 1:00 @ 5k / 1:00 walk; 8:00 easy",
        ),
        (
            "12x30s stand",
            "10:00 easy; 12 x 0:30 @ 5k / 0:45 stand; 8:00 easy",
        ),
        (
            "3x8min threshold",
            "10:00 easy; 3 x 8:00 @ threshold / 2:00 jog; 8:00 easy",
        ),
        (
            "4x6min marathon",
            "10:00 easy; 4 x 6:00 @ marathon / 1:30 jog; 8:00 easy",
        ),
        (
            "6x2min stand",
            "10:00 easy; 6 x 2:00 @ 5k / 1:00 stand; 8:00 easy",
        ),
        (
            "pyramid",
            "10:00 easy; 1:00 @ 5k; 1:00 jog; 2:00 @ 5k; 1:00 jog; 3:00 @ 10k; 1:30 jog; \
             2:00 @ 5k; 1:00 jog; 1:00 @ 5k; 8:00 easy",
        ),
        (
            "2x2km threshold",
            "12:00 easy; 2 x 2km @ threshold / 3:00 jog; 10:00 easy",
        ),
        (
            "12x200 walk",
            "10:00 easy; 12 x 200m @ 5k / 200m walk; 8:00 easy",
        ),
    ];
    let mut out = Vec::new();
    let mut seed = 100;
    for (name, line) in lines {
        // Flat, even, every second.
        out.push(case(name, line, seed));
        seed += 1;
        // Smart sampling with faults.
        let mut c = case(&format!("{name} smart+faults"), line, seed);
        c.sampling = SMART;
        c.faults = faults();
        out.push(c);
        seed += 1;
    }
    // Pacing styles on rolling ground.
    for (k, pacing) in [Pacing::Fading, Pacing::Surging, Pacing::Progression]
        .into_iter()
        .enumerate()
    {
        for (name, line) in lines.iter().take(6) {
            let mut c = case(&format!("{name} rolling {pacing:?}"), line, seed + k as u64);
            c.terrain = rolling();
            c.pacing = pacing;
            out.push(c);
            seed += 1;
        }
    }
    // Hill repeats.
    for (name, line, grade) in [
        (
            "hill 8x1min",
            "10:00 easy; 8 x 1:00 @ 5k / 1:30 jog; 8:00 easy",
            0.06,
        ),
        (
            "hill 6x90s",
            "10:00 easy; 6 x 1:30 @ 5k / 2:00 jog; 8:00 easy",
            0.08,
        ),
        (
            "hill 10x45s",
            "10:00 easy; 10 x 0:45 @ 5k / 1:15 jog; 8:00 easy",
            0.05,
        ),
        (
            "hill 5x2min walk",
            "10:00 easy; 5 x 2:00 @ 10k / 2:30 walk; 8:00 easy",
            0.07,
        ),
    ] {
        let mut c = case(name, line, seed);
        c.terrain = Terrain::Hill { grade };
        out.push(c);
        seed += 1;
        let mut c = case(&format!("{name} smart"), line, seed);
        c.terrain = Terrain::Hill { grade };
        c.sampling = Sampling::Smart { min_s: 2, max_s: 7 };
        c.faults = faults();
        out.push(c);
        seed += 1;
    }
    out
}

/// Overlap of two time ranges, seconds.
fn overlap(a: (f64, f64), b: (f64, f64)) -> f64 {
    (a.1.min(b.1) - a.0.max(b.0)).max(0.0)
}

fn percentile(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let k = ((sorted.len() - 1) as f64 * q).round() as usize;
    sorted[k.min(sorted.len() - 1)]
}

fn check_structure(set: &IntervalSet, n: usize, t: &[f64]) {
    let iv = &set.intervals;
    assert!(!iv.is_empty());
    assert_eq!(iv[0].start, 0);
    assert_eq!(iv.last().unwrap().end, n - 1);
    for w in iv.windows(2) {
        assert_eq!(w[0].end, w[1].start);
    }
    for i in iv {
        assert!(i.end > i.start);
        assert_eq!(i.start_s, t[i.start]);
        assert_eq!(i.end_s, t[i.end]);
    }
}

#[test]
fn detection_matches_the_truth() {
    let prof = profile();
    let cases = cases();
    assert!(cases.len() >= 40, "{} cases", cases.len());
    let (mut total, mut found) = (0usize, 0usize);
    let (mut detected, mut overlapping) = (0usize, 0usize);
    let mut errors: Vec<f64> = Vec::new();
    let mut failures: Vec<String> = Vec::new();
    for c in &cases {
        let p = plan(c.line);
        let mut inp = SimInput::new(prof.clone(), p.clone(), c.seed);
        inp.conditions.terrain = c.terrain.clone();
        inp.conditions.pacing = c.pacing;
        inp.conditions.sampling = c.sampling;
        inp.faults = c.faults.clone();
        let out = simulate(&inp);
        let mut session = out.session;
        session.laps.clear();
        session.flags = clean::flag(&session, Some(&prof));
        let set = find_intervals(&session, Some(&p), &prof);
        check_structure(&set, session.len(), &session.t);
        let truth: Vec<(f64, f64)> = out.truth.work().map(|w| (w.start_s, w.end_s)).collect();
        let mine: Vec<(f64, f64)> = set.work().map(|w| (w.start_s, w.end_s)).collect();
        for &tw in &truth {
            total += 1;
            let best = mine
                .iter()
                .copied()
                .max_by(|a, b| overlap(*a, tw).total_cmp(&overlap(*b, tw)))
                .filter(|m| overlap(*m, tw) > 0.0);
            match best {
                Some(m) => {
                    let (es, ee) = (m.0 - tw.0, m.1 - tw.1);
                    errors.push(es.abs());
                    errors.push(ee.abs());
                    if es.abs() <= TOLERANCE_S && ee.abs() <= TOLERANCE_S {
                        found += 1;
                    } else {
                        failures.push(format!(
                            "{}: true {:.0}-{:.0}, found {:.0}-{:.0} ({es:+.0}/{ee:+.0})",
                            c.name, tw.0, tw.1, m.0, m.1
                        ));
                    }
                }
                None => failures.push(format!(
                    "{}: true {:.0}-{:.0} not found",
                    c.name, tw.0, tw.1
                )),
            }
        }
        for &m in &mine {
            detected += 1;
            if truth.iter().any(|&tw| overlap(m, tw) > 0.0) {
                overlapping += 1;
            } else {
                failures.push(format!("{}: invented rep {:.0}-{:.0}", c.name, m.0, m.1));
            }
        }
    }
    errors.sort_by(f64::total_cmp);
    let recall = found as f64 / total as f64;
    let precision = overlapping as f64 / detected.max(1) as f64;
    let median = percentile(&errors, 0.5);
    let p95 = percentile(&errors, 0.95);
    eprintln!(
        "intervals: {} sessions, {total} true work intervals, {detected} detected; \
         recall {:.1} % (both boundaries within {TOLERANCE_S} s), precision {:.1} %, \
         boundary error median {median:.1} s, p95 {p95:.1} s",
        cases.len(),
        recall * 100.0,
        precision * 100.0
    );
    for f in &failures {
        eprintln!("  {f}");
    }
    assert!(recall >= 0.95, "recall {recall}");
    assert_eq!(overlapping, detected, "invented reps");
    assert!(p95 <= TOLERANCE_S, "p95 {p95}");
}
