//! Pace from a distance and a time over the same samples (issue 12, defect 9).
//!
//! Sessions are built in code (invented data, self-consistency only); the correct paces are
//! worked out by hand in the comments.

use chrono::{TimeZone, Utc};
use splitdesk::analysis::review::review;
use splitdesk::model::{
    AthleteProfile, Channel, ChannelKind, FileFormat, Flag, FlagKind, Interval, IntervalSet,
    IntervalSource, SegmentKind, Session,
};

/// A 1 Hz treadmill-like session (speed and distance, no positions) at `speed(i)` m/s for
/// sample `i`'s stretch, with the distance accumulating `dist_step(i)` metres.
fn session(n: usize, speed: impl Fn(usize) -> f64, dist_step: impl Fn(usize) -> f64) -> Session {
    let start = Utc.with_ymd_and_hms(2026, 3, 1, 7, 0, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = splitdesk::model::Sport::Running;
    s.t = (0..n).map(|i| i as f64).collect();
    s.time =
        s.t.iter()
            .map(|&x| start + chrono::Duration::seconds(x as i64))
            .collect();
    s.speed = Some(Channel::from_values((0..n).map(&speed)));
    let mut acc = 0.0;
    s.distance = Some(Channel::from_values((0..n).map(|i| {
        if i > 0 {
            acc += dist_step(i);
        }
        acc
    })));
    s
}

fn interval(s: &Session, kind: SegmentKind, a: usize, b: usize) -> Interval {
    Interval {
        kind,
        source: IntervalSource::DeviceLap,
        start: a,
        end: b,
        start_s: s.t[a],
        end_s: s.t[b],
        expected: None,
        mode: None,
    }
}

fn three_parts(s: &Session) -> IntervalSet {
    IntervalSet {
        intervals: vec![
            interval(s, SegmentKind::Warmup, 0, 300),
            interval(s, SegmentKind::Work, 300, 900),
            interval(s, SegmentKind::Cooldown, 900, s.len() - 1),
        ],
        ..IntervalSet::default()
    }
}

#[test]
fn flagged_speed_inside_an_interval_does_not_speed_up_its_pace() {
    // 3 m/s throughout (1000 / 3 = 333.3 s/km = 5:33/km), the distance advancing 3 m
    // every second. Inside the work interval (samples 300..=900) the speed sensor reads
    // 15 m/s for samples 500..=599, flagged by ingest as above the human limit (a speed flag
    // masks the distance too). Before the fix the interval's distance covered all 600 s
    // (1800 m) while its moving time left the 100 flagged seconds out (500 s):
    // 1800 / 500 = 3.6 m/s, 277.8 s/km = 4:38/km. The truth is 5:33/km.
    let mut s = session(
        1200,
        |i| if (500..600).contains(&i) { 15.0 } else { 3.0 },
        |_| 3.0,
    );
    s.flags = vec![Flag {
        from_s: 500.0,
        to_s: 599.0,
        channel: ChannelKind::Speed,
        kind: FlagKind::SpeedLimit,
        reason: "speed up to 15.0 m/s, above the 12.5 m/s human limit".into(),
    }];
    let set = three_parts(&s);
    let r = review(&s, &set, None, &AthleteProfile::bare("a"));
    let work = &r.intervals[1];
    assert_eq!(work.kind, "work");
    let pace = work.avg_pace_s_per_km.unwrap();
    assert!(
        (pace - 1000.0 / 3.0).abs() < 0.5,
        "work pace {pace:.1} s/km, expected 333.3"
    );
    // The distance is still the whole interval's: 600 s at 3 m/s.
    assert!((work.distance_m.unwrap() - 1800.0).abs() < 1e-9);
    // The hill-adjusted pace (flat here) agrees with the pace.
    let adj = work.hill_adjusted_pace_s_per_km.unwrap();
    assert!(
        (adj - pace).abs() < 0.5,
        "hill-adjusted {adj:.1} vs {pace:.1}"
    );
    // The session's own mean speed leaves the flagged stretch out of both sides as well.
    let v = r.session.avg_speed_mps.unwrap();
    assert!((v - 3.0).abs() < 1e-6, "session speed {v}");
}

#[test]
fn flags_from_ingest_give_the_same_pace() {
    // The same session, flagged by ingest's own rules rather than by hand.
    let mut s = session(
        1200,
        |i| if (500..600).contains(&i) { 15.0 } else { 3.0 },
        |_| 3.0,
    );
    s.flags = splitdesk::ingest::clean::flag(&s, None);
    assert!(
        s.flags
            .iter()
            .any(|f| f.kind == FlagKind::SpeedLimit && f.from_s <= 500.0 && f.to_s >= 599.0),
        "{:?}",
        s.flags
    );
    let r = review(&s, &three_parts(&s), None, &AthleteProfile::bare("a"));
    let pace = r.intervals[1].avg_pace_s_per_km.unwrap();
    assert!(
        (pace - 1000.0 / 3.0).abs() < 0.5,
        "work pace {pace:.1} s/km"
    );
}

#[test]
fn a_recording_gap_is_left_out_of_both_distance_and_time() {
    // 3 m/s at 1 Hz for 1200 samples, except that after sample 700 the recording stops for
    // 60 s (a tunnel) while the athlete runs on: the distance jumps 180 m across the gap.
    // Moving time leaves the gap out (a stopped stretch), the session distance keeps the
    // 180 m (the athlete covered them), so distance / moving time would read
    // (1199 * 3 + 180) / 1199 = 3.15 m/s. The same samples on both sides give 3 m/s.
    let mut s = session(1200, |_| 3.0, |i| if i == 701 { 180.0 } else { 3.0 });
    for (i, x) in s.t.iter_mut().enumerate() {
        if i > 700 {
            *x += 59.0;
        }
    }
    let start = s.start;
    s.time =
        s.t.iter()
            .map(|&x| start + chrono::Duration::seconds(x as i64))
            .collect();
    s.flags = splitdesk::ingest::clean::flag(&s, None);
    let r = review(
        &s,
        &IntervalSet::default(),
        None,
        &AthleteProfile::bare("a"),
    );
    let d = r.session.distance_m.unwrap();
    assert!((d - (1198.0 * 3.0 + 180.0)).abs() < 1e-6, "distance {d}");
    let v = r.session.avg_speed_mps.unwrap();
    assert!((v - 3.0).abs() < 1e-6, "session speed {v}");
}

#[test]
fn without_flags_the_pace_is_distance_over_moving_time() {
    // A steady 3.2 m/s session without flags: pace 1000 / 3.2 = 312.5 s/km, and the
    // interval's distance over its moving time gives the same.
    let s = session(1200, |_| 3.2, |_| 3.2);
    let r = review(&s, &three_parts(&s), None, &AthleteProfile::bare("a"));
    let w = &r.intervals[1];
    let pace = w.avg_pace_s_per_km.unwrap();
    assert!((pace - 312.5).abs() < 1e-6, "{pace}");
    let from_totals = 1000.0 * w.moving_s / w.distance_m.unwrap();
    assert!((from_totals - pace).abs() < 1e-6, "{from_totals} vs {pace}");
}

#[test]
fn a_flagged_speed_stretch_does_not_read_as_standing_before_a_high_heart_rate() {
    // 20 min at 3 m/s, then a 3-min hard effort at 4 m/s with HR climbing to 195 bpm, above
    // the profile's maximum of 185, from sample 1348 (140 + 55 x 148 / 180 > 185). The speed
    // sensor spikes (15 m/s, flagged) for samples 1290..=1345, most of the minute before.
    // The effort in the minute from 1288 to the end is 4 m/s on every trusted sample, above
    // 0.95 x the 3 m/s median: the HR matches the effort. Before the fix the 56 flagged
    // seconds counted as time without distance (4 x 37 / 93 = 1.6 m/s) and the HR was
    // called "not matched by the effort".
    let n = 1381;
    let speed = |i: usize| match i {
        1290..=1345 => 15.0,
        1200.. => 4.0,
        _ => 3.0,
    };
    let mut s = session(n, speed, |i| if i >= 1200 { 4.0 } else { 3.0 });
    s.hr = Some(Channel::from_values((0..n).map(|i| {
        if i < 1200 {
            140.0
        } else {
            // 140 -> 195 over the 3 minutes, a beat every ~3 s: a heart following effort.
            140.0 + 55.0 * (i - 1200) as f64 / 180.0
        }
    })));
    s.flags = vec![Flag {
        from_s: 1290.0,
        to_s: 1345.0,
        channel: ChannelKind::Speed,
        kind: FlagKind::SpeedLimit,
        reason: "speed up to 15.0 m/s, above the 12.5 m/s human limit".into(),
    }];
    let mut p = AthleteProfile::bare("a");
    p.hr_max = Some(185.0);
    p.hr_rest = Some(50.0);
    let r = review(&s, &IntervalSet::default(), None, &p);
    let finding = r
        .findings
        .iter()
        .find(|f| f.code == "hr_above_max" || f.code == "hr_max_stale")
        .unwrap();
    assert!(
        !finding.text.contains("not matched by the effort"),
        "{}",
        finding.text
    );
    // A heart following a hard effort for 33 s: the profile's maximum looks out of date.
    assert_eq!(finding.code, "hr_max_stale", "{}", finding.text);
}
