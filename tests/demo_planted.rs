//! The planted cases of the committed demo roster are really there. Simple arithmetic on the
//! ingested sessions only (not the analysis module).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use splitdesk::demo::scenario::{week_of, PlantedKind, Scenario, SessionKind};
use splitdesk::ingest::ingest_file;
use splitdesk::model::{AthleteProfile, SegmentKind, Session};
use splitdesk::roster::Roster;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes")
}

fn roster() -> Roster {
    Roster::open(&root()).expect("demo-athletes/ opens")
}

fn session(roster: &Roster, athlete: &str, stem: &str) -> (AthleteProfile, Session) {
    let (a, act) = roster
        .find_session(&format!("{athlete}/{stem}"))
        .unwrap_or_else(|| panic!("no session {athlete}/{stem}"));
    let s = ingest_file(&act.path, Some(&a.profile)).unwrap();
    (a.profile.clone(), s)
}

fn planted(kind: PlantedKind) -> (String, String) {
    let p = Scenario::default_demo().find_planted(kind).unwrap();
    (p.athlete, p.stem.unwrap())
}

/// Mean of `f(q)` over samples with HR whose time lies in `[from, to)`, with mean HR.
fn means(s: &Session, from: f64, to: f64, f: &dyn Fn(usize) -> Option<f64>) -> (f64, f64) {
    let hr = s.hr.as_ref().unwrap();
    let (mut sv, mut sh, mut n) = (0.0, 0.0, 0.0);
    for q in 0..s.len() {
        if s.t[q] >= from && s.t[q] < to {
            if let (Some(h), Some(v)) = (hr.get(q), f(q)) {
                sv += v;
                sh += h;
                n += 1.0;
            }
        }
    }
    (sv / n, sh / n)
}

/// Decoupling in %: E = mean speed / mean HR of the two halves (by time) after 10 minutes,
/// (E1 - E2) / E1 * 100. Raw recorded speed.
fn decoupling(s: &Session) -> f64 {
    let v = s.speed.as_ref().unwrap();
    let skip = 600.0;
    let end = s.duration_s();
    let mid = skip + (end - skip) / 2.0;
    let (v1, h1) = means(s, skip, mid, &|q| v.get(q));
    let (v2, h2) = means(s, mid, end + 1.0, &|q| v.get(q));
    let (e1, e2) = (v1 / h1, v2 / h2);
    (e1 - e2) / e1 * 100.0
}

/// Time-weighted integral of `f` over the samples (left rectangle, pauses included).
fn integral(s: &Session, f: &dyn Fn(usize) -> Option<f64>) -> f64 {
    (0..s.len().saturating_sub(1))
        .filter_map(|q| f(q).map(|v| v * (s.t[q + 1] - s.t[q])))
        .sum()
}

#[test]
fn hot_long_run_decouples_well_over_5_percent() {
    let r = roster();
    let (athlete, stem) = planted(PlantedKind::HotLongRun);
    let (_, s) = session(&r, &athlete, &stem);
    assert!(s.duration_s() >= 100.0 * 60.0);
    let d = decoupling(&s);
    println!("{stem}: decoupling {d:.2} %");
    assert!(d > 5.0, "{stem}: decoupling {d:.2} %");
}

#[test]
fn downhill_run_has_negative_decoupling() {
    let r = roster();
    let (athlete, stem) = planted(PlantedKind::DownhillRun);
    let (_, s) = session(&r, &athlete, &stem);
    let d = decoupling(&s);
    println!("{stem}: decoupling {d:.2} %");
    assert!(d < 0.0, "{stem}: decoupling {d:.2} %");
    // And the ground really falls: the last altitude well below the first.
    let alt = s.altitude.as_ref().unwrap();
    let first = alt.get(0).unwrap();
    let last = alt.values.iter().rev().find_map(|v| *v).unwrap();
    assert!(first - last > 100.0, "drop {}", first - last);
}

/// Recovery troughs (lowest HR of each recovery lap) and HR lags (seconds from the end of
/// each work lap to the highest HR within the next 60 s) of an interval session.
fn troughs_and_lags(r: &Roster, athlete: &str, stem: &str) -> (Vec<f64>, Vec<f64>) {
    let (_, s) = session(r, athlete, stem);
    let hr = s.hr.as_ref().unwrap();
    // Device laps follow the plan: warm-up, then work/recovery alternating, cool-down.
    let plan = Scenario::default_demo()
        .athlete(athlete)
        .unwrap()
        .sessions
        .iter()
        .find(|x| x.stem() == stem)
        .unwrap()
        .plan()
        .unwrap();
    let kinds: Vec<SegmentKind> = plan.expand().iter().map(|e| e.kind).collect();
    assert_eq!(kinds.len(), s.laps.len());
    let in_range = |a: f64, b: f64| -> Vec<(f64, f64)> {
        (0..s.len())
            .filter(|&q| s.t[q] >= a && s.t[q] <= b)
            .filter_map(|q| hr.get(q).map(|h| (s.t[q], h)))
            .collect()
    };
    let mut troughs = Vec::new();
    let mut lags = Vec::new();
    for (lap, kind) in s.laps.iter().zip(&kinds) {
        match kind {
            SegmentKind::Recovery => {
                let low = in_range(lap.start_s, lap.end_s)
                    .into_iter()
                    .map(|(_, h)| h)
                    .fold(f64::INFINITY, f64::min);
                troughs.push(low);
            }
            SegmentKind::Work => {
                let (t_peak, _) = in_range(lap.end_s, lap.end_s + 60.0).into_iter().fold(
                    (lap.end_s, f64::NEG_INFINITY),
                    |best, (t, h)| if h > best.1 { (t, h) } else { best },
                );
                lags.push(t_peak - lap.end_s);
            }
            _ => {}
        }
    }
    (troughs, lags)
}

/// Least-squares slope of `y` against 0, 1, 2, ...
fn slope(y: &[f64]) -> f64 {
    let n = y.len() as f64;
    let mx = (n - 1.0) / 2.0;
    let my = y.iter().sum::<f64>() / n;
    let sxy: f64 = y
        .iter()
        .enumerate()
        .map(|(i, v)| (i as f64 - mx) * (v - my))
        .sum();
    let sxx: f64 = (0..y.len()).map(|i| (i as f64 - mx).powi(2)).sum();
    sxy / sxx
}

#[test]
fn fatigued_intervals_troughs_climb_and_lag_lengthens() {
    let r = roster();
    let scenario = Scenario::default_demo();
    let (athlete, stem) = planted(PlantedKind::FatiguedIntervals);
    // The fresh execution of the same workout, by the same athlete.
    let fresh = scenario
        .planted()
        .into_iter()
        .find(|p| p.kind == PlantedKind::GoodExecution && p.athlete == athlete)
        .unwrap();
    let (troughs, lags) = troughs_and_lags(&r, &athlete, &stem);
    let (fresh_troughs, fresh_lags) = troughs_and_lags(&r, &athlete, &fresh.stem.unwrap());
    assert_eq!(troughs.len(), 5);
    assert_eq!(lags.len(), 6);
    // Troughs: up at least 2 bpm a rep, 8 bpm over the set, and faster than when fresh.
    assert!(slope(&troughs) >= 2.0, "troughs {troughs:?}");
    assert!(troughs[4] - troughs[0] >= 8.0, "troughs {troughs:?}");
    assert!(
        slope(&troughs) > slope(&fresh_troughs) + 1.0,
        "troughs {troughs:?}, fresh {fresh_troughs:?}"
    );
    // Lag: the last three reps' mean well above the first three's, and above the fresh run's.
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    assert!(mean(&lags[3..]) > mean(&lags[..3]) + 4.0, "lags {lags:?}");
    assert!(slope(&lags) >= 1.5, "lags {lags:?}");
    assert!(
        mean(&lags[3..]) > mean(&fresh_lags[3..]) + 5.0,
        "lags {lags:?}, fresh {fresh_lags:?}"
    );
}

#[test]
fn load_jumps_in_week_5() {
    let r = roster();
    let scenario = Scenario::default_demo();
    let p = scenario.find_planted(PlantedKind::LoadJump).unwrap();
    let athlete = r.athlete(&p.athlete).unwrap();
    let (rest, max) = (
        athlete.profile.hr_rest.unwrap(),
        athlete.profile.hr_max.unwrap(),
    );
    let mut weekly: BTreeMap<u32, f64> = BTreeMap::new();
    for act in &athlete.activities {
        let date = chrono::NaiveDate::parse_from_str(&act.stem[..10], "%Y-%m-%d").unwrap();
        let week = week_of(date).unwrap();
        let Ok(s) = ingest_file(&act.path, Some(&athlete.profile)) else {
            continue; // the damaged file
        };
        let hr = s.hr.as_ref().unwrap();
        let mean_hr = integral(&s, &|q| hr.get(q)) / s.duration_s();
        let reserve = (mean_hr - rest) / (max - rest);
        *weekly.entry(week).or_default() += s.duration_s() / 60.0 * reserve;
    }
    let base: f64 = (1..=4).map(|w| weekly[&w]).sum::<f64>() / 4.0;
    println!("weekly load {weekly:?}");
    assert!(
        weekly[&5] > 1.6 * base,
        "week 5 load {:.0} vs weeks 1-4 mean {base:.0}: {weekly:?}",
        weekly[&5]
    );
}

#[test]
fn easy_run_efficiency_rises_every_week() {
    let r = roster();
    let scenario = Scenario::default_demo();
    let p = scenario
        .find_planted(PlantedKind::ImprovingEfficiency)
        .unwrap();
    let spec = scenario.athlete(&p.athlete).unwrap();
    let athlete = r.athlete(&p.athlete).unwrap();
    // Metres per heartbeat of each planned easy run, averaged per week.
    let mut weekly: BTreeMap<u32, Vec<f64>> = BTreeMap::new();
    for s in spec
        .sessions
        .iter()
        .filter(|s| s.kind == SessionKind::Easy && s.plan_file)
    {
        let (_, rec) = session(&r, &athlete.id, &s.stem());
        let hr = rec.hr.as_ref().unwrap();
        let beats = integral(&rec, &|q| hr.get(q).map(|h| h / 60.0));
        let m_per_beat = rec.distance_m().unwrap() / beats;
        weekly
            .entry(week_of(s.date).unwrap())
            .or_default()
            .push(m_per_beat);
    }
    let means: Vec<f64> = weekly
        .values()
        .map(|v| v.iter().sum::<f64>() / v.len() as f64)
        .collect();
    assert_eq!(means.len(), 6);
    println!("m/beat by week {means:?}");
    assert!(
        means.windows(2).all(|w| w[1] > w[0]),
        "m/beat by week {means:?}"
    );
}

#[test]
fn time_trials_differ_in_pacing() {
    let r = roster();
    // Over the work lap (between warm-up and cool-down): the spread of 10 s mean speeds
    // (surges), and second-half over first-half mean speed (fade).
    let pacing = |kind| {
        let (athlete, stem) = planted(kind);
        let (_, s) = session(&r, &athlete, &stem);
        let lap = &s.laps[1];
        let v = s.speed.as_ref().unwrap();
        let mut blocks = Vec::new();
        let mut t = lap.start_s + 30.0;
        while t + 10.0 <= lap.end_s {
            let (m, _) = means(&s, t, t + 10.0, &|q| v.get(q));
            blocks.push(m);
            t += 10.0;
        }
        let mean = blocks.iter().sum::<f64>() / blocks.len() as f64;
        let sd = (blocks.iter().map(|b| (b - mean).powi(2)).sum::<f64>() / blocks.len() as f64)
            .sqrt()
            / mean;
        let mid = (lap.start_s + lap.end_s) / 2.0;
        let (v1, _) = means(&s, lap.start_s + 30.0, mid, &|q| v.get(q));
        let (v2, _) = means(&s, mid, lap.end_s, &|q| v.get(q));
        (sd, v2 / v1)
    };
    let (bad_sd, bad_fade) = pacing(PlantedKind::BadlyPacedTimeTrial);
    let (good_sd, good_fade) = pacing(PlantedKind::WellPacedTimeTrial);
    println!("surging: spread {bad_sd:.4}, fade {bad_fade:.4}; even: {good_sd:.4}, {good_fade:.4}");
    assert!(
        bad_sd > 1.25 * good_sd,
        "spread: surging {bad_sd:.4}, even {good_sd:.4}"
    );
    assert!(
        bad_fade < 0.99,
        "surging trial second/first half {bad_fade:.4}"
    );
    assert!(
        (good_fade - 1.0).abs() < 0.01,
        "even trial second/first half {good_fade:.4}"
    );
}
