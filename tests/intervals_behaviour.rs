//! Interval finding: device laps, auto-laps, missing reps, sets without a plan.

mod sim_support;

use sim_support::profile;
use splitdesk::analysis::intervals::{find_intervals, mode_from_speed, INFERRED_NOTE};
use splitdesk::demo::simulate::{simulate, SimInput, SimOutput};
use splitdesk::ingest::clean;
use splitdesk::model::{
    DeviceLap, IntervalSet, IntervalSource, Plan, RecoveryMode, SegmentKind, Session,
};
use splitdesk::plan::parse_line;

fn plan(line: &str) -> Plan {
    Plan {
        title: "t".into(),
        purpose: "p".into(),
        date: None,
        steps: parse_line(line).unwrap_or_else(|e| panic!("{line}: {e}")),
    }
}

fn run(line: &str, seed: u64) -> SimOutput {
    let mut out = simulate(&SimInput::new(profile(), plan(line), seed));
    out.session.flags = clean::flag(&out.session, Some(&profile()));
    out
}

fn without_laps(mut s: Session) -> Session {
    s.laps.clear();
    s
}

fn kinds(set: &IntervalSet) -> Vec<SegmentKind> {
    set.intervals.iter().map(|i| i.kind).collect()
}

/// Every set covers the session, boundaries shared, times equal to the sample times.
fn assert_well_formed(set: &IntervalSet, s: &Session) {
    let iv = &set.intervals;
    assert!(!iv.is_empty());
    assert_eq!(iv[0].start, 0);
    assert_eq!(iv.last().unwrap().end, s.len() - 1);
    for w in iv.windows(2) {
        assert_eq!(w[0].end, w[1].start);
    }
    for i in iv {
        assert!(i.end > i.start);
        assert_eq!(i.start_s, s.t[i.start]);
        assert_eq!(i.end_s, s.t[i.end]);
    }
}

const SIX: &str = "10:00 easy; 6 x 3:00 @ 5k / 2:00 jog; 8:00 easy";

#[test]
fn laps_that_fit_the_plan_are_used() {
    let out = run(SIX, 1);
    let p = plan(SIX);
    let set = find_intervals(&out.session, Some(&p), &profile());
    assert_well_formed(&set, &out.session);
    assert!(!set.inferred);
    assert_eq!(set.intervals.len(), p.expand().len());
    assert!(set
        .intervals
        .iter()
        .all(|i| i.source == IntervalSource::DeviceLap));
    for (k, (iv, tr)) in set.intervals.iter().zip(&out.truth.intervals).enumerate() {
        assert_eq!(iv.expected, Some(k));
        assert_eq!(iv.kind, tr.kind);
        assert_eq!(iv.start_s, tr.start_s);
        assert_eq!(iv.end_s, tr.end_s);
    }
    assert!(set.missing.is_empty() && set.extra.is_empty());
    assert!(set.notes.iter().any(|n| n.contains("device laps fitted")));
}

#[test]
fn laps_that_do_not_fit_the_plan_are_not_used() {
    // Laps from a 6-rep session, analysed against a plan of 3 x 8:00: the count differs.
    let out = run(SIX, 2);
    let other = plan("10:00 easy; 3 x 8:00 @ threshold / 2:00 jog; 8:00 easy");
    let set = find_intervals(&out.session, Some(&other), &profile());
    assert_well_formed(&set, &out.session);
    assert!(set
        .intervals
        .iter()
        .all(|i| i.source == IntervalSource::Detected));
    assert!(set.notes.iter().any(|n| n.contains("did not fit")));
}

/// Laps every kilometre (trigger "distance") at the times the distance passes each km.
fn auto_laps(s: &Session) -> Vec<DeviceLap> {
    let d = s.distance.as_ref().unwrap();
    let mut starts = vec![0.0];
    let mut next = 1000.0;
    for (i, v) in d.iter_present() {
        if v >= next {
            starts.push(s.t[i]);
            next += 1000.0;
        }
    }
    let end = s.duration_s();
    starts
        .iter()
        .enumerate()
        .map(|(k, &a)| DeviceLap {
            start_s: a,
            end_s: starts.get(k + 1).copied().unwrap_or(end),
            trigger: Some("distance".into()),
        })
        .collect()
}

#[test]
fn auto_laps_on_an_interval_session_are_not_used() {
    let out = run(SIX, 3);
    let mut s = out.session.clone();
    s.laps = auto_laps(&s);
    assert!(s.laps.len() > 5);
    for p in [Some(plan(SIX)), None] {
        let set = find_intervals(&s, p.as_ref(), &profile());
        assert_well_formed(&set, &s);
        assert!(set
            .intervals
            .iter()
            .all(|i| i.source == IntervalSource::Detected));
        assert_eq!(set.work().count(), 6, "{:?}", kinds(&set));
        for (w, t) in set.work().zip(out.truth.work()) {
            assert!((w.start_s - t.start_s).abs() <= 5.0);
            assert!((w.end_s - t.end_s).abs() <= 5.0);
        }
        if p.is_none() {
            assert!(set.notes.iter().any(|n| n.contains("auto-laps")));
        }
    }
}

#[test]
fn a_missing_rep_is_reported() {
    let out = run(SIX, 4);
    let s = without_laps(out.session);
    let seven = plan("10:00 easy; 7 x 3:00 @ 5k / 2:00 jog; 8:00 easy");
    let expected = seven.expand();
    let set = find_intervals(&s, Some(&seven), &profile());
    assert_well_formed(&set, &s);
    assert_eq!(set.work().count(), 6);
    assert!(set.extra.is_empty());
    let missing_work: Vec<usize> = set
        .missing
        .iter()
        .copied()
        .filter(|&i| expected[i].kind == SegmentKind::Work)
        .collect();
    // The athlete stopped after six: the seventh (expanded index 13) is the missing one.
    assert_eq!(missing_work, vec![13]);
    assert!(set.notes.iter().any(|n| n.contains("not found")));
    // Warm-up and cool-down still matched.
    assert_eq!(set.intervals[0].expected, Some(0));
    assert_eq!(set.intervals.last().unwrap().kind, SegmentKind::Cooldown);
    assert_eq!(
        set.intervals.last().unwrap().expected,
        Some(expected.len() - 1)
    );
}

#[test]
fn an_extra_rep_is_reported() {
    let out = run("10:00 easy; 7 x 3:00 @ 5k / 2:00 jog; 8:00 easy", 5);
    let s = without_laps(out.session);
    let six = plan(SIX);
    let set = find_intervals(&s, Some(&six), &profile());
    assert_well_formed(&set, &s);
    assert_eq!(set.work().count(), 7);
    assert_eq!(set.extra.len(), 1);
    let extra = &set.intervals[set.extra[0]];
    assert_eq!(extra.kind, SegmentKind::Work);
    assert_eq!(extra.expected, None);
    assert!(
        set.missing.is_empty()
            || set
                .missing
                .iter()
                .all(|&i| six.expand()[i].kind != SegmentKind::Work)
    );
}

#[test]
fn without_a_plan_the_set_is_inferred() {
    for (line, mode) in [
        (SIX, RecoveryMode::Jog),
        (
            "10:00 easy; 8 x 1:00 @ 5k / 1:00 walk; 8:00 easy",
            RecoveryMode::Walk,
        ),
        (
            "10:00 easy; 6 x 2:00 @ 5k / 1:00 stand; 8:00 easy",
            RecoveryMode::Stand,
        ),
    ] {
        let out = run(line, 6);
        let s = without_laps(out.session);
        let set = find_intervals(&s, None, &profile());
        assert_well_formed(&set, &s);
        assert!(set.inferred);
        assert!(set.notes.iter().any(|n| n == INFERRED_NOTE));
        let k = kinds(&set);
        let n_work = out.truth.work().count();
        assert_eq!(k.first(), Some(&SegmentKind::Warmup), "{line}: {k:?}");
        assert_eq!(k.last(), Some(&SegmentKind::Cooldown), "{line}: {k:?}");
        assert_eq!(set.work().count(), n_work, "{line}: {k:?}");
        assert_eq!(k.len(), 2 * n_work + 1, "{line}: {k:?}");
        for (i, iv) in set.intervals.iter().enumerate().skip(1) {
            let want = if i % 2 == 1 {
                SegmentKind::Work
            } else if i + 1 == k.len() {
                SegmentKind::Cooldown
            } else {
                SegmentKind::Recovery
            };
            assert_eq!(iv.kind, want, "{line}: {k:?}");
            if want == SegmentKind::Recovery {
                assert_eq!(iv.mode, Some(mode), "{line}");
            }
            assert_eq!(iv.expected, None);
        }
        for (w, t) in set.work().zip(out.truth.work()) {
            assert!((w.start_s - t.start_s).abs() <= 5.0, "{line}");
            assert!((w.end_s - t.end_s).abs() <= 5.0, "{line}");
        }
    }
}

#[test]
fn without_a_plan_laps_that_split_the_pace_are_used() {
    let out = run(SIX, 7);
    let set = find_intervals(&out.session, None, &profile());
    assert_well_formed(&set, &out.session);
    assert!(set.inferred);
    assert!(set
        .intervals
        .iter()
        .all(|i| i.source == IntervalSource::DeviceLap));
    assert_eq!(set.work().count(), 6);
    assert_eq!(set.intervals[0].kind, SegmentKind::Warmup);
    assert_eq!(set.intervals.last().unwrap().kind, SegmentKind::Cooldown);
}

#[test]
fn an_easy_steady_run_without_a_plan_has_no_work() {
    for seed in 0..5 {
        let out = run("50:00 easy", 10 + seed);
        let s = without_laps(out.session);
        let set = find_intervals(&s, None, &profile());
        assert_well_formed(&set, &s);
        assert!(set.inferred);
        assert_eq!(set.work().count(), 0, "seed {seed}: {:?}", kinds(&set));
        assert_eq!(kinds(&set), vec![SegmentKind::Steady]);
    }
}

#[test]
fn back_to_back_work_segments_are_split() {
    let line = "10:00 easy; 4 x (3:00 @ marathon, 1:00 @ 5k) / 2:00 jog; 8:00 easy";
    let out = run(line, 8);
    let s = without_laps(out.session);
    let p = plan(line);
    let set = find_intervals(&s, Some(&p), &profile());
    assert_well_formed(&set, &s);
    assert_eq!(set.work().count(), 8, "{:?}", kinds(&set));
    assert!(set.missing.is_empty(), "{:?}", set.missing);
    for (w, t) in set.work().zip(out.truth.work()) {
        assert!(
            (w.start_s - t.start_s).abs() <= 5.0,
            "{} vs {}",
            w.start_s,
            t.start_s
        );
        assert!(
            (w.end_s - t.end_s).abs() <= 5.0,
            "{} vs {}",
            w.end_s,
            t.end_s
        );
    }
}

#[test]
fn a_plan_without_work_is_cut_at_the_planned_amounts() {
    let line = "10:00 easy; 30:00 easy; 10:00 easy";
    let out = run(line, 9);
    let s = without_laps(out.session);
    let p = plan(line);
    let set = find_intervals(&s, Some(&p), &profile());
    assert_well_formed(&set, &s);
    assert_eq!(set.intervals.len(), p.expand().len());
    assert!((set.intervals[0].end_s - 600.0).abs() <= 1.0);
}

#[test]
fn recovery_mode_from_speed() {
    assert_eq!(mode_from_speed(0.2), RecoveryMode::Stand);
    assert_eq!(mode_from_speed(1.4), RecoveryMode::Walk);
    assert_eq!(mode_from_speed(2.6), RecoveryMode::Jog);
}

#[test]
fn empty_and_tiny_sessions() {
    let out = run(SIX, 11);
    let mut s = out.session.clone();
    s.t.truncate(1);
    s.time.truncate(1);
    for ch in [
        &mut s.distance,
        &mut s.speed,
        &mut s.hr,
        &mut s.cadence,
        &mut s.altitude,
        &mut s.lat,
        &mut s.lon,
    ]
    .into_iter()
    .flatten()
    {
        ch.values.truncate(1);
    }
    let set = find_intervals(&s, Some(&plan(SIX)), &profile());
    assert!(set.intervals.is_empty());
    assert_eq!(set.missing.len(), plan(SIX).expand().len());
    // No speed and no distance: one interval, said so.
    let mut s = without_laps(out.session);
    s.speed = None;
    s.distance = None;
    let set = find_intervals(&s, None, &profile());
    assert_well_formed(&set, &s);
    assert_eq!(set.intervals.len(), 1);
}

#[test]
fn hill_repeats_without_a_plan_are_still_a_set() {
    // Self-consistency with our simulator: up the 6 % hill at 5k effort, jog back down.
    let line = "10:00 easy; 6 x 1:30 @ 5k / 2:30 jog; 8:00 easy";
    let mut input = SimInput::new(profile(), plan(line), 4);
    input.conditions.terrain = splitdesk::demo::simulate::Terrain::Hill { grade: 0.06 };
    let mut out = simulate(&input);
    out.session.flags = clean::flag(&out.session, Some(&profile()));
    let s = without_laps(out.session);
    let set = find_intervals(&s, None, &profile());
    assert_well_formed(&set, &s);
    assert_eq!(set.work().count(), 6, "{:?} {:?}", kinds(&set), set.notes);
}

#[test]
fn a_trail_run_with_walked_climbs_is_not_a_set() {
    // Invented, self-consistency: an hour at a steady effort on a trail, 2.4 m/s on the
    // flat, power-hiking each 25 % climb at 1.5 m/s (hard work: hill-adjusted it is the
    // fastest going of the day) and running down at 2.8 m/s. The watch shows no repeats.
    use chrono::{TimeZone, Utc};
    use splitdesk::model::{Channel, FileFormat};
    let start = Utc.with_ymd_and_hms(2026, 6, 1, 7, 0, 0).single().unwrap();
    let mut s = Session::empty(FileFormat::Gpx, start);
    let (mut d, mut alt) = (0.0, 100.0);
    let (mut dist, mut alts, mut speed) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..3600 {
        let (v, grade) = match i % 600 {
            0..=299 => (2.4, 0.0),
            300..=419 => (1.5, 0.25),
            420..=539 => (2.8, -0.134),
            _ => (2.4, 0.0),
        };
        d += v;
        alt += v * grade;
        s.t.push(i as f64);
        s.time.push(start + chrono::Duration::seconds(i));
        dist.push(d);
        alts.push(alt);
        speed.push(v);
    }
    s.distance = Some(Channel::from_values(dist));
    s.altitude = Some(Channel::from_values(alts));
    s.speed = Some(Channel::from_values(speed));
    let set = find_intervals(&s, None, &profile());
    assert_well_formed(&set, &s);
    assert_eq!(kinds(&set), vec![SegmentKind::Steady], "{:?}", set.notes);
    assert!(
        set.notes.iter().any(|n| n.contains("climbs")),
        "{:?}",
        set.notes
    );
}
