//! Motion classification around stops (invented data, self-consistency only).

use chrono::{TimeZone, Utc};
use splitdesk::analysis::motion::{classify, MotionState};
use splitdesk::model::{Channel, FileFormat, Pause, Session, Sport};

/// A 1 Hz speed-only session (a treadmill or a watch without GPS): `speed(i)` m/s.
fn session(n: usize, speed: impl Fn(usize) -> f64) -> Session {
    let start = Utc.with_ymd_and_hms(2026, 3, 1, 7, 0, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = Sport::Running;
    s.t = (0..n).map(|i| i as f64).collect();
    s.time =
        s.t.iter()
            .map(|&x| start + chrono::Duration::seconds(x as i64))
            .collect();
    s.speed = Some(Channel::from_values((0..n).map(speed)));
    s
}

#[test]
fn a_steady_run_after_a_pause_is_running() {
    // Found by the pace-scaling property test. 10 min at 4 m/s, the athlete slows to a
    // halt (0.2 m/s for the last 20 s), the timer pauses for a minute, then 10 min of
    // steady jogging at 2.6 m/s. The jog after the pause is running on every sample: 2.6 m/s
    // is above every walking threshold and well above 0.65 x the median running speed.
    // Before the fix the speed average kept samples from before the pause in its running
    // sum for the rest of the session, and read the jog as a walk.
    let speed = |i: usize| match i {
        0..=579 => 4.0,
        580..=599 => 0.2,
        600..=659 => 0.0,
        _ => 2.6,
    };
    let mut s = session(1260, speed);
    s.pauses = vec![Pause {
        from_s: 600.0,
        to_s: 660.0,
    }];
    let m = classify(&s);
    let after: Vec<(usize, MotionState)> = (675..1260)
        .map(|i| (i, m.at(i)))
        .filter(|(_, st)| *st != MotionState::Run)
        .collect();
    assert!(
        after.is_empty(),
        "not running after the pause: {:?}",
        &after[..after.len().min(5)]
    );
    // 600 s before the pause and 599 s after it, less the 20-s halt, within the
    // averaging window at each edge.
    let moving = m.moving_total_s();
    assert!((moving - 1179.0).abs() <= 6.0, "{moving}");
}
