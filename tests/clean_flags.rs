//! Bad-data flag rules: planted faults are found with the right channel, kind and range;
//! clean synthetic runs get no flags.

mod clean_common;

use clean_common::{clean_run, clean_run_at, one_hz, session_at, smart_times, track, XorShift};
use splitdesk::ingest::clean::{flag, flagged_fraction, sample_mask};
use splitdesk::ingest::derive::fill_derived;
use splitdesk::model::{AthleteProfile, Channel, ChannelKind, Flag, FlagKind, Pause, Session};

fn profile(hr_max: f64) -> AthleteProfile {
    let mut p = AthleteProfile::bare("test-runner");
    p.hr_max = Some(hr_max);
    p
}

fn of_kind(flags: &[Flag], kind: FlagKind) -> Vec<&Flag> {
    flags.iter().filter(|f| f.kind == kind).collect()
}

fn values(ch: &Option<Channel>) -> Vec<f64> {
    ch.as_ref()
        .map(|c| c.values.iter().map(|v| v.unwrap_or(f64::NAN)).collect())
        .unwrap_or_default()
}

fn set(ch: &mut Option<Channel>, range: std::ops::Range<usize>, f: impl Fn(usize, f64) -> f64) {
    if let Some(c) = ch {
        for i in range {
            if let Some(Some(v)) = c.values.get_mut(i) {
                *v = f(i, *v);
            }
        }
    }
}

/// A copy of `s` keeping only the samples whose time passes `keep` (t re-based is not
/// needed: the first sample is always kept).
fn retain(s: &Session, keep: impl Fn(f64) -> bool) -> Session {
    let idx: Vec<usize> = (0..s.len()).filter(|&i| keep(s.t[i])).collect();
    let pick = |c: &Option<Channel>| {
        c.as_ref()
            .map(|c| Channel::new(idx.iter().map(|&i| c.values[i]).collect()))
    };
    let mut out = session_at(idx.iter().map(|&i| s.t[i]).collect());
    out.speed = pick(&s.speed);
    out.hr = pick(&s.hr);
    out.cadence = pick(&s.cadence);
    out.altitude = pick(&s.altitude);
    out.lat = pick(&s.lat);
    out.lon = pick(&s.lon);
    out.distance = pick(&s.distance);
    out
}

fn assert_no_flags(flags: &[Flag]) {
    assert!(flags.is_empty(), "unexpected flags: {flags:#?}");
}

#[test]
fn clean_run_gets_no_flags() {
    for seed in [1u64, 2, 3] {
        let s = clean_run(seed);
        s.check_invariants().unwrap_or_else(|e| panic!("{e}"));
        let flags = flag(&s, Some(&profile(190.0)));
        assert_no_flags(&flags);
        assert_eq!(flagged_fraction(&s, &flags), 0.0);
    }
}

#[test]
fn clean_run_with_derived_distance_and_speed_gets_no_flags() {
    let mut s = clean_run(4);
    s.speed = None;
    fill_derived(&mut s);
    assert_eq!(s.derived, vec![ChannelKind::Distance, ChannelKind::Speed]);
    assert_no_flags(&flag(&s, None));
}

#[test]
fn smart_sampling_1_to_7_s_gets_no_flags() {
    for seed in [5u64, 6, 7, 8] {
        let s = clean_run_at(seed, smart_times(seed, 2400.0));
        assert_no_flags(&flag(&s, None));
        let mut derived = s.clone();
        derived.speed = None;
        fill_derived(&mut derived);
        assert_no_flags(&flag(&derived, None));
    }
}

#[test]
fn a_genuine_30_s_gap_is_flagged_once() {
    let s = retain(&clean_run(9), |t| !(1000.0..1030.0).contains(&t));
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 1, "{flags:#?}");
    let f = &flags[0];
    assert_eq!((f.kind, f.channel), (FlagKind::Gap, ChannelKind::Speed));
    assert_eq!((f.from_s, f.to_s), (999.0, 1030.0));
    assert!(f.reason.contains("31 s"), "{}", f.reason);
    // 31 s plus half a sample either side, of 2399 s.
    let frac = flagged_fraction(&s, &flags);
    assert!((frac - 32.0 / 2399.0).abs() < 1e-9, "{frac}");
    // A gap masks every channel: here the two samples at its ends.
    for ch in [ChannelKind::Hr, ChannelKind::Cadence, ChannelKind::Position] {
        let m = sample_mask(&s, &flags, ch);
        assert_eq!(m.iter().filter(|&&b| b).count(), 2);
        assert!(m[999] && m[1000]);
    }
}

#[test]
fn a_gap_under_a_timer_pause_is_not_a_gap() {
    let mut s = retain(&clean_run(9), |t| !(1000.0..1030.0).contains(&t));
    s.pauses.push(Pause {
        from_s: 999.5,
        to_s: 1029.5,
    });
    assert_no_flags(&flag(&s, None));
}

#[test]
fn speed_above_the_human_limit_is_flagged() {
    let mut s = clean_run(10);
    set(&mut s.speed, 500..503, |_, _| 15.0);
    let flags = flag(&s, None);
    let lim = of_kind(&flags, FlagKind::SpeedLimit);
    assert_eq!(lim.len(), 1, "{flags:#?}");
    assert_eq!(
        (lim[0].channel, lim[0].from_s, lim[0].to_s),
        (ChannelKind::Speed, 500.0, 502.0)
    );
    assert!(lim[0].reason.contains("15.0 m/s"), "{}", lim[0].reason);
    // The jump in and out is also far above 8 m/s² (di Prampero et al. 2005 anchor).
    let acc = of_kind(&flags, FlagKind::Acceleration);
    assert_eq!(acc.len(), 2, "{flags:#?}");
    assert_eq!((acc[0].from_s, acc[0].to_s), (499.0, 500.0));
    assert_eq!((acc[1].from_s, acc[1].to_s), (502.0, 503.0));
    assert_eq!(flags.len(), 3);
    // Speed flags mask speed and distance, not heart rate.
    assert_eq!(
        sample_mask(&s, &flags, ChannelKind::Speed)
            .iter()
            .filter(|&&b| b)
            .count(),
        5
    );
    assert!(sample_mask(&s, &flags, ChannelKind::Distance)[501]);
    assert!(!sample_mask(&s, &flags, ChannelKind::Hr).iter().any(|&b| b));
}

#[test]
fn acceleration_above_8_m_s2_is_flagged_without_speed_limit() {
    let mut s = clean_run(11);
    // Common coaching practice (no published source): |a| above 8 m/s²; here about
    // 8.5 m/s² in one second, still under the 12.5 m/s speed limit.
    let base = values(&s.speed)[799];
    set(&mut s.speed, 800..820, |_, _| base + 8.5);
    let flags = flag(&s, None);
    let acc = of_kind(&flags, FlagKind::Acceleration);
    assert_eq!(acc.len(), 2, "{flags:#?}");
    assert_eq!((acc[0].from_s, acc[0].to_s), (799.0, 800.0));
    assert_eq!((acc[1].from_s, acc[1].to_s), (819.0, 820.0));
    assert!(of_kind(&flags, FlagKind::SpeedLimit).is_empty());
}

#[test]
fn a_single_outlier_fix_flags_just_itself() {
    for metres in [60.0, 150.0, 1000.0] {
        let mut s = clean_run(12);
        // Common coaching practice (no published source): a jump of more than 50-100 m
        // between fixes 1 s apart that returns.
        set(&mut s.lat, 1200..1201, |_, v| v + metres / 111_320.0);
        let flags = flag(&s, None);
        assert_eq!(flags.len(), 1, "{metres} m: {flags:#?}");
        let f = &flags[0];
        assert_eq!(
            (f.kind, f.channel),
            (FlagKind::PositionJump, ChannelKind::Position)
        );
        assert_eq!((f.from_s, f.to_s), (1200.0, 1200.0));
        assert!(f.reason.contains("one fix"), "{}", f.reason);
        let pos = sample_mask(&s, &flags, ChannelKind::Position);
        assert_eq!(pos.iter().filter(|&&b| b).count(), 1);
        assert!(pos[1200]);
        // A position jump also masks speed and distance, not heart rate.
        assert!(sample_mask(&s, &flags, ChannelKind::Speed)[1200]);
        assert!(sample_mask(&s, &flags, ChannelKind::Distance)[1200]);
        assert!(!sample_mask(&s, &flags, ChannelKind::Hr).iter().any(|&b| b));
    }
}

#[test]
fn a_multi_fix_excursion_flags_those_fixes() {
    let mut s = clean_run(13);
    set(&mut s.lon, 1500..1504, |_, v| v + 0.002); // ~140 m east for four fixes
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 1, "{flags:#?}");
    assert_eq!(flags[0].kind, FlagKind::PositionJump);
    assert_eq!((flags[0].from_s, flags[0].to_s), (1500.0, 1503.0));
    assert!(flags[0].reason.contains("4 fixes"), "{}", flags[0].reason);
}

#[test]
fn a_step_that_never_returns_flags_just_that_step() {
    let mut s = clean_run(14);
    set(&mut s.lat, 1800..2400, |_, v| v + 200.0 / 111_320.0);
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 1, "{flags:#?}");
    assert_eq!(flags[0].kind, FlagKind::PositionJump);
    assert_eq!((flags[0].from_s, flags[0].to_s), (1799.0, 1800.0));
}

#[test]
fn hr_outside_30_230_is_flagged() {
    let mut s = clean_run(15);
    // Common coaching practice (no published source): keep 30-230 bpm.
    set(&mut s.hr, 300..305, |_, _| 250.0);
    set(&mut s.hr, 900..903, |_, _| 20.0);
    let flags = flag(&s, None);
    let range = of_kind(&flags, FlagKind::HrRange);
    assert_eq!(range.len(), 2, "{flags:#?}");
    assert_eq!(
        (range[0].channel, range[0].from_s, range[0].to_s),
        (ChannelKind::Hr, 300.0, 304.0)
    );
    assert!(range[0].reason.contains("250 bpm"), "{}", range[0].reason);
    assert_eq!((range[1].from_s, range[1].to_s), (900.0, 902.0));
    assert!(range[1].reason.contains("20 bpm"), "{}", range[1].reason);
    // Jumping there is also far faster than 15 bpm/s.
    assert_eq!(of_kind(&flags, FlagKind::HrRate).len(), 4);
    assert!(flags.iter().all(|f| f.channel == ChannelKind::Hr));
}

#[test]
fn hr_above_the_profile_max_is_kept_not_flagged() {
    let mut s = clean_run(16);
    // Ramp up over 5 s so the rate rule stays quiet, hold 182 bpm for 30 s.
    set(&mut s.hr, 1995..2000, |i, v| {
        v + (182.0 - v) * (i - 1994) as f64 / 6.0
    });
    set(&mut s.hr, 2000..2030, |_, _| 182.0);
    set(&mut s.hr, 2030..2035, |i, v| {
        182.0 + (v - 182.0) * (i - 2029) as f64 / 6.0
    });
    // methods.md §12: HR above the profile's maximum is usually a stale profile, not bad
    // data: the samples are kept (the review says the maximum looks out of date).
    assert_no_flags(&flag(&s, Some(&profile(170.0))));
    assert_no_flags(&flag(&s, None));
    // Above the absolute limit it is still bad data, profile or not.
    // Common coaching practice (no published source), methods.md §12: keep 30-230 bpm.
    set(&mut s.hr, 2010..2012, |_, _| 231.0);
    let flags = flag(&s, Some(&profile(170.0)));
    assert!(
        flags.iter().any(|f| f.kind == FlagKind::HrRange),
        "{flags:#?}"
    );
    assert!(flags.iter().all(|f| f.kind != FlagKind::HrAboveMax));
}

#[test]
fn hr_changing_faster_than_15_bpm_per_s_is_flagged() {
    let mut s = clean_run(17);
    set(&mut s.hr, 1000..1001, |_, v| v + 25.0);
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 1, "{flags:#?}");
    assert_eq!(
        (flags[0].kind, flags[0].channel),
        (FlagKind::HrRate, ChannelKind::Hr)
    );
    assert_eq!((flags[0].from_s, flags[0].to_s), (999.0, 1001.0));
}

/// HR ramps onto `target(i)` over `ramp` samples from `from`, follows it with ±1 bpm of
/// wobble until `to`, then ramps back to the original HR.
fn plant_lock(s: &mut Session, from: usize, to: usize, ramp: usize, target: impl Fn(f64) -> f64) {
    let cad = values(&s.cadence);
    let hr0 = values(&s.hr);
    let locked = |i: usize| target(cad[i]) + (i % 3) as f64 - 1.0;
    set(&mut s.hr, (from - ramp)..from, |i, v| {
        let k = (i + 1 + ramp - from) as f64 / (ramp + 1) as f64;
        (v + (locked(from) - v) * k).round()
    });
    set(&mut s.hr, from..to, |i, _| locked(i));
    set(&mut s.hr, to..(to + ramp), |i, _| {
        let k = (i + 1 - to) as f64 / (ramp + 1) as f64;
        (locked(to - 1) + (hr0[i] - locked(to - 1)) * k).round()
    });
}

#[test]
fn hr_locked_onto_cadence_is_flagged_from_the_jump() {
    let mut s = clean_run(18);
    // HR ~143 jumps onto the cadence (~175 spm, moving 170-180) over 3 s, follows it for
    // 90 s, then drops back.
    plant_lock(&mut s, 600, 690, 3, |c| c);
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 1, "{flags:#?}");
    let f = &flags[0];
    assert_eq!(
        (f.kind, f.channel),
        (FlagKind::CadenceLock, ChannelKind::Hr)
    );
    // Common coaching practice (no published source): within ±3 bpm for 30 s or more.
    assert!((594.0..=600.0).contains(&f.from_s), "{f:?}");
    assert!((688.0..=692.0).contains(&f.to_s), "{f:?}");
    assert!(f.reason.contains("the cadence"), "{}", f.reason);
    // The lock masks heart rate only: the cadence is fine.
    assert!(sample_mask(&s, &flags, ChannelKind::Hr)[650]);
    assert!(!sample_mask(&s, &flags, ChannelKind::Cadence)
        .iter()
        .any(|&b| b));
}

#[test]
fn hr_locked_onto_half_the_cadence_is_flagged() {
    let mut s = clean_run(19);
    plant_lock(&mut s, 1500, 1560, 5, |c| c / 2.0);
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 1, "{flags:#?}");
    assert_eq!(flags[0].kind, FlagKind::CadenceLock);
    assert!(
        (1494.0..=1500.0).contains(&flags[0].from_s),
        "{:?}",
        flags[0]
    );
    assert!((1558.0..=1562.0).contains(&flags[0].to_s), "{:?}", flags[0]);
    assert!(
        flags[0].reason.contains("half the cadence"),
        "{}",
        flags[0].reason
    );
}

#[test]
fn a_lock_at_the_start_is_found_by_its_exit_jump() {
    let mut s = clean_run(20);
    plant_lock(&mut s, 3, 80, 3, |c| c);
    let flags = flag(&s, None);
    let locks = of_kind(&flags, FlagKind::CadenceLock);
    assert_eq!(locks.len(), 1, "{flags:#?}");
    assert!(
        locks[0].to_s >= 78.0 && locks[0].to_s <= 82.0,
        "{:?}",
        locks[0]
    );
}

#[test]
fn hr_on_cadence_for_under_30_s_is_not_a_lock() {
    let mut s = clean_run(21);
    // Common coaching practice (no published source): a lock lasts 30 s or more.
    plant_lock(&mut s, 900, 920, 3, |c| c);
    assert!(of_kind(&flag(&s, None), FlagKind::CadenceLock).is_empty());
}

#[test]
fn hr_drifting_up_through_the_cadence_is_not_a_lock() {
    // HR drifts 150 -> 190 bpm over 20 min (0.033 bpm/s), crossing a steady cadence of
    // about 170 spm: it sits within ±3 bpm of the cadence for about three minutes.
    let n = 1200;
    let t = one_hz(n);
    let mut rng = XorShift::new(22);
    let (lat, lon, _) = track(&t, 51.5, -0.12, |_| 3.6, |_| 10.0);
    let mut s = session_at(t.clone());
    s.hr = Some(Channel::from_values(t.iter().map(|x| {
        (150.0 + 40.0 * x / 1200.0 + 0.8 * (x / 5.0).sin()).round()
    })));
    s.cadence = Some(Channel::from_values(
        t.iter().map(|x| (170.0 + 1.5 * (x / 11.0).sin()).round()),
    ));
    s.speed = Some(Channel::from_values(
        t.iter().map(|_| 3.6 + rng.range(-0.05, 0.05)),
    ));
    s.lat = Some(Channel::from_values(lat));
    s.lon = Some(Channel::from_values(lon));
    let hr = values(&s.hr);
    let cad = values(&s.cadence);
    let on = hr
        .iter()
        .zip(&cad)
        .filter(|(h, c)| (*h - *c).abs() <= 3.0)
        .count();
    assert!(
        on >= 120,
        "the drift should sit on the cadence a while: {on} s"
    );
    assert_no_flags(&flag(&s, None));
}

#[test]
fn flat_lines_while_moving_are_flagged() {
    let mut s = clean_run(23);
    // Common coaching practice (no published source): the same value for 60 s or more.
    set(&mut s.hr, 1200..1290, |_, _| 150.0);
    // A stuck cadence shows when the pace changes and the cadence does not.
    set(&mut s.cadence, 400..480, |_, _| 176.0);
    set(&mut s.speed, 400..440, |i, _| 3.0 + 0.01 * (i % 3) as f64);
    set(&mut s.speed, 440..480, |i, _| 4.2 + 0.01 * (i % 3) as f64);
    // At a steady pace an unchanged cadence is normal running (see CADENCE_FLAT_STEADY_MIN_S).
    set(&mut s.cadence, 600..680, |_, _| 174.0);
    set(&mut s.speed, 1600..1700, |_, _| 3.6);
    set(&mut s.hr, 1700..1750, |_, _| 160.0); // only 50 s: not flagged
    let flags = flag(&s, None);
    assert_eq!(flags.len(), 3, "{flags:#?}");
    assert!(flags.iter().all(|f| f.kind == FlagKind::FlatLine));
    let spans: Vec<(ChannelKind, f64, f64)> = flags
        .iter()
        .map(|f| (f.channel, f.from_s, f.to_s))
        .collect();
    assert_eq!(
        spans,
        vec![
            (ChannelKind::Cadence, 400.0, 479.0),
            (ChannelKind::Hr, 1200.0, 1289.0),
            (ChannelKind::Speed, 1600.0, 1699.0),
        ]
    );
    assert!(flags[1].reason.contains("150 bpm") && flags[1].reason.contains("89 s"));
}

#[test]
fn flat_hr_while_standing_is_not_flagged() {
    let mut s = clean_run(24);
    // Walk down to a stop over 5 s, stand for 100 s, then run again.
    set(&mut s.speed, 1195..1200, |i, v| v * (1200 - i) as f64 / 6.0);
    set(&mut s.speed, 1200..1300, |_, _| 0.0);
    set(&mut s.speed, 1300..1305, |i, v| v * (i - 1299) as f64 / 6.0);
    set(&mut s.hr, 1200..1300, |_, _| 150.0);
    let flags = flag(&s, None);
    assert!(of_kind(&flags, FlagKind::FlatLine).is_empty(), "{flags:#?}");
}

#[test]
fn flags_are_sorted_and_merged() {
    let mut s = clean_run(25);
    set(&mut s.hr, 100..101, |_, v| v + 30.0);
    set(&mut s.hr, 102..103, |_, v| v + 30.0); // rate edges 99..103 touch: one flag
    set(&mut s.speed, 50..52, |_, _| 14.0);
    set(&mut s.lat, 30..31, |_, v| v + 0.002);
    let flags = flag(&s, None);
    assert!(
        flags.windows(2).all(|w| w[0].from_s <= w[1].from_s),
        "{flags:#?}"
    );
    let rate = of_kind(&flags, FlagKind::HrRate);
    assert_eq!(rate.len(), 1, "{flags:#?}");
    assert_eq!((rate[0].from_s, rate[0].to_s), (99.0, 103.0));
    for (i, a) in flags.iter().enumerate() {
        for b in &flags[i + 1..] {
            let same = a.kind == b.kind && a.channel == b.channel;
            assert!(!same || b.from_s > a.to_s + 1.0, "not merged: {a:?} {b:?}");
        }
    }
    assert_eq!(flags.first().map(|f| f.kind), Some(FlagKind::PositionJump));
}

fn flag_at(from_s: f64, to_s: f64, channel: ChannelKind, kind: FlagKind) -> Flag {
    Flag {
        from_s,
        to_s,
        channel,
        kind,
        reason: String::new(),
    }
}

#[test]
fn flagged_fraction_is_the_union_of_ranges() {
    let s = session_at(one_hz(1001));
    assert_eq!(flagged_fraction(&s, &[]), 0.0);
    let flags = vec![
        flag_at(100.0, 199.0, ChannelKind::Hr, FlagKind::HrRate),
        flag_at(150.0, 299.0, ChannelKind::Speed, FlagKind::SpeedLimit),
        flag_at(900.0, 900.0, ChannelKind::Position, FlagKind::PositionJump),
    ];
    // [99.5, 299.5] and [899.5, 900.5]: 201 s of 1000 s.
    assert!((flagged_fraction(&s, &flags) - 0.201).abs() < 1e-12);
    let all = vec![flag_at(0.0, 1000.0, ChannelKind::Hr, FlagKind::HrRange)];
    assert_eq!(flagged_fraction(&s, &all), 1.0);
}

#[test]
fn sample_mask_follows_the_channel_table() {
    let s = session_at(one_hz(11));
    let flags = vec![
        flag_at(2.0, 3.0, ChannelKind::Speed, FlagKind::Gap),
        flag_at(5.0, 6.0, ChannelKind::Hr, FlagKind::HrRate),
        flag_at(8.0, 8.0, ChannelKind::Position, FlagKind::PositionJump),
        flag_at(10.0, 10.0, ChannelKind::Speed, FlagKind::SpeedLimit),
    ];
    let on = |ch| -> Vec<usize> {
        sample_mask(&s, &flags, ch)
            .iter()
            .enumerate()
            .filter_map(|(i, &b)| b.then_some(i))
            .collect()
    };
    assert_eq!(on(ChannelKind::Cadence), vec![2, 3]);
    assert_eq!(on(ChannelKind::Altitude), vec![2, 3]);
    assert_eq!(on(ChannelKind::Hr), vec![2, 3, 5, 6]);
    assert_eq!(on(ChannelKind::Speed), vec![2, 3, 8, 10]);
    assert_eq!(on(ChannelKind::Distance), vec![2, 3, 8, 10]);
    assert_eq!(on(ChannelKind::Position), vec![2, 3, 8]);
    // With speed and distance derived from positions, a speed flag points at the positions.
    let mut d = s.clone();
    d.derived = vec![ChannelKind::Distance, ChannelKind::Speed];
    let pos: Vec<bool> = sample_mask(&d, &flags, ChannelKind::Position);
    assert!(pos[10]);
}

#[test]
fn three_hour_clean_session_gets_no_flags() {
    // Speed is measured in benches/ingest.rs, not here.
    let s = clean_run_at(26, one_hz(10_800));
    let flags = flag(&s, None);
    assert!(flags.is_empty(), "{flags:?}");
}
