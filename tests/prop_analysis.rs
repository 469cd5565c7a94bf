//! Property tests of the analysis on bounded arbitrary sample arrays (invented data, for
//! self-consistency only).
//!
//! Proptest draws the shape of a session (sample count up to 3000, which channels exist,
//! the sampling rhythm, gaps, pauses, laps, a plan or none, the profile) and a seed; the
//! samples themselves come from a small deterministic generator driven by that seed, so a
//! 3000-sample case stays cheap to draw and a failure reproduces from its printed inputs.
//!
//! Properties: no NaN or infinity anywhere in the review; the intervals are in order,
//! contiguous and cover the session; scaling every speed and distance by k scales every
//! pace by 1/k; swapping the halves of a steady run flips the sign of its decoupling;
//! cleaning flags samples and never deletes them.

use chrono::{TimeZone, Utc};
use proptest::prelude::*;
use splitdesk::analysis::decoupling::decoupling_pct;
use splitdesk::analysis::intervals::find_intervals;
use splitdesk::analysis::review::{review, Review};
use splitdesk::analysis::{analyze, motion};
use splitdesk::ingest::{clean, derive};
use splitdesk::model::{
    AthleteProfile, Channel, ChannelKind, DeviceLap, FileFormat, Flag, FlagKind, IntervalSet,
    Pause, Plan, Session, Sport,
};

/// Cases per property: `default`, or `PROPTEST_CASES` for a longer local hunt.
fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// splitmix64: a tiny deterministic generator for the samples.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [0, 1).
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
    fn chance(&mut self, p: f64) -> bool {
        self.unit() < p
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

/// The shape of one arbitrary session.
#[derive(Debug, Clone)]
struct Shape {
    n: usize,
    seed: u64,
    /// 0: 1 s; 1: 1-5 s smart recording; 2: 1 s with repeated times and long gaps;
    /// 3: sub-second.
    rhythm: u8,
    speed: bool,
    /// 0: none; 1: from the speed; 2: its own noisy increments (sometimes backwards).
    distance: u8,
    hr: bool,
    cadence: bool,
    altitude: bool,
    positions: bool,
    /// Share of missing samples in each present channel.
    missing: f64,
    pauses: usize,
    laps: usize,
    /// Extra flags at arbitrary places (on top of ingest's own).
    extra_flags: usize,
    sport: u8,
    plan: bool,
    full_profile: bool,
    /// Share of samples replaced by extreme finite values (huge, tiny, negative).
    wild: f64,
}

fn shape() -> impl Strategy<Value = Shape> {
    (
        (0usize..=3000, any::<u64>(), 0u8..5, any::<bool>(), 0u8..3),
        (any::<bool>(), any::<bool>(), any::<bool>(), any::<bool>()),
        (
            prop_oneof![Just(0.0), 0.0..0.2f64, 0.5..1.0f64],
            0usize..4,
            0usize..10,
            0usize..4,
        ),
        (
            0u8..4,
            any::<bool>(),
            any::<bool>(),
            prop_oneof![3 => Just(0.0), 1 => 0.0..0.05f64],
        ),
    )
        .prop_map(
            |(
                (n, seed, rhythm, speed, distance),
                (hr, cadence, altitude, positions),
                (missing, pauses, laps, extra_flags),
                (sport, plan, full_profile, wild),
            )| Shape {
                n,
                seed,
                rhythm,
                speed,
                distance,
                hr,
                cadence,
                altitude,
                positions,
                missing,
                pauses,
                laps,
                extra_flags,
                sport,
                plan,
                full_profile,
                wild,
            },
        )
}

/// Extreme finite values a damaged or hostile file can carry.
const WILD: [f64; 10] = [
    -1e300,
    -1e9,
    -1.0,
    0.0,
    1e-300,
    1e-9,
    1e9,
    1e300,
    f64::MAX,
    f64::MIN_POSITIVE,
];

fn profile(full: bool) -> AthleteProfile {
    let mut p = AthleteProfile::bare("prop");
    if full {
        p.hr_max = Some(188.0);
        p.hr_rest = Some(48.0);
        p.threshold_speed_mps = Some(4.2);
        p.birth_year = Some(1990);
    }
    p
}

fn plan(on: bool) -> Option<Plan> {
    on.then(|| Plan {
        title: "prop".into(),
        purpose: "prop".into(),
        date: None,
        steps: splitdesk::plan::parse_line(
            "10:00 easy; 5 x (3:00 @ 5k, 1:00 @ threshold) / 2:00 jog; 8:00 easy",
        )
        .expect("a valid line"),
    })
}

fn channel(rng: &mut Rng, missing: f64, values: impl IntoIterator<Item = f64>) -> Option<Channel> {
    wild_channel(rng, missing, 0.0, values)
}

fn wild_channel(
    rng: &mut Rng,
    missing: f64,
    wild: f64,
    values: impl IntoIterator<Item = f64>,
) -> Option<Channel> {
    Channel::new(
        values
            .into_iter()
            .map(|v| {
                if rng.chance(wild) {
                    return Some(WILD[rng.below(WILD.len())]);
                }
                (!rng.chance(missing)).then_some(v)
            })
            .collect(),
    )
    .into_option()
}

/// Build the session of a shape (not yet derived or cleaned).
fn build(sh: &Shape) -> Session {
    let mut rng = Rng(sh.seed);
    let start = Utc.with_ymd_and_hms(2026, 5, 4, 6, 30, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = match sh.sport {
        0 | 1 => Sport::Running,
        2 => Sport::Unknown,
        _ => Sport::Cycling,
    };
    let n = sh.n;
    let mut t = Vec::with_capacity(n);
    let mut now = 0.0f64;
    for i in 0..n {
        if i > 0 {
            now += match sh.rhythm {
                0 => 1.0,
                1 => (1 + rng.below(5)) as f64,
                2 if rng.chance(0.01) => 0.0,
                2 if rng.chance(0.005) => rng.range(20.0, 900.0).round(),
                2 => 1.0,
                3 => rng.range(0.2, 1.0),
                // A time axis from a damaged file: steps of up to 136 years.
                _ if rng.chance(0.01) => rng.range(1e3, 4.3e9),
                _ => 1.0,
            };
        }
        t.push(now);
    }
    // Speed: pieces of random length at random levels (standing to sprinting), noisy, with
    // the odd spike above the human limit.
    let mut speed = Vec::with_capacity(n);
    let mut level = rng.range(0.0, 6.0);
    let mut left = 0usize;
    for _ in 0..n {
        if left == 0 {
            left = 5 + rng.below(400);
            level = match rng.below(5) {
                0 => 0.0,
                1 => rng.range(0.8, 2.0),
                _ => rng.range(2.0, 7.5),
            };
        }
        left -= 1;
        let mut v = (level + rng.range(-0.3, 0.3)).max(0.0);
        if rng.chance(0.003) {
            v = rng.range(13.0, 40.0);
        }
        speed.push(v);
    }
    // Cumulative distance.
    let dist: Vec<f64> = match sh.distance {
        1 => {
            let mut acc = 0.0;
            (0..n)
                .map(|i| {
                    if i > 0 {
                        acc += speed[i] * (t[i] - t[i - 1]);
                    }
                    acc
                })
                .collect()
        }
        _ => {
            let mut acc = rng.range(0.0, 5000.0);
            (0..n)
                .map(|_| {
                    acc += rng.range(-0.5, 5.0);
                    acc
                })
                .collect()
        }
    };
    let mut hr = 0.0;
    let hr_values: Vec<f64> = (0..n)
        .map(|_| {
            hr = (hr + rng.range(-2.0, 2.2)).clamp(0.0, 120.0);
            let mut h = 70.0 + hr;
            if rng.chance(0.002) {
                h = rng.range(0.0, 260.0);
            }
            h
        })
        .collect();
    let cadence: Vec<f64> = speed
        .iter()
        .map(|v| (v * 40.0 + 60.0 + rng.range(-5.0, 5.0)).clamp(0.0, 220.0))
        .collect();
    let mut alt = rng.range(-50.0, 2000.0);
    let altitude: Vec<f64> = (0..n)
        .map(|_| {
            alt += rng.range(-0.6, 0.6);
            if rng.chance(0.002) {
                alt += rng.range(-50.0, 50.0);
            }
            alt
        })
        .collect();
    let (mut lat, mut lon, mut heading) =
        (rng.range(-60.0, 60.0), rng.range(-170.0, 170.0), 0.0f64);
    let mut lats = Vec::with_capacity(n);
    let mut lons = Vec::with_capacity(n);
    for i in 0..n {
        if i > 0 {
            heading += rng.range(-0.3, 0.3);
            let step = speed[i] * (t[i] - t[i - 1]);
            lat += step * heading.cos() / 111_000.0;
            lon += step * heading.sin() / 111_000.0;
        }
        if rng.chance(0.002) {
            lats.push(lat + rng.range(-0.01, 0.01));
            lons.push(lon + rng.range(-0.01, 0.01));
        } else {
            lats.push(lat);
            lons.push(lon);
        }
    }
    s.speed = if sh.speed {
        wild_channel(&mut rng, sh.missing, sh.wild, speed)
    } else {
        None
    };
    s.distance = if sh.distance > 0 {
        wild_channel(&mut rng, sh.missing, sh.wild, dist)
    } else {
        None
    };
    s.hr = if sh.hr {
        wild_channel(&mut rng, sh.missing, sh.wild, hr_values)
    } else {
        None
    };
    s.cadence = if sh.cadence {
        wild_channel(&mut rng, sh.missing, sh.wild, cadence)
    } else {
        None
    };
    s.altitude = if sh.altitude {
        wild_channel(&mut rng, sh.missing, sh.wild, altitude)
    } else {
        None
    };
    if sh.positions {
        let keep: Vec<bool> = (0..n).map(|_| !rng.chance(sh.missing)).collect();
        let wild: Vec<Option<f64>> = (0..n)
            .map(|_| rng.chance(sh.wild).then(|| WILD[rng.below(WILD.len())]))
            .collect();
        let pick = |v: Vec<f64>| {
            Channel::new(
                v.into_iter()
                    .zip(&keep)
                    .zip(&wild)
                    .map(|((x, k), w)| w.or(k.then_some(x)))
                    .collect(),
            )
            .into_option()
        };
        s.lat = pick(lats);
        s.lon = pick(lons);
        if s.lat.is_none() || s.lon.is_none() {
            (s.lat, s.lon) = (None, None);
        }
    }
    let end = t.last().copied().unwrap_or(0.0);
    for _ in 0..sh.pauses {
        let a = rng.range(0.0, end);
        let b = a + rng.range(0.0, 300.0);
        s.pauses.push(Pause { from_s: a, to_s: b });
    }
    let mut marks: Vec<f64> = (0..sh.laps).map(|_| rng.range(0.0, end)).collect();
    marks.sort_by(f64::total_cmp);
    let mut prev = 0.0;
    for m in marks.into_iter().chain(std::iter::once(end)) {
        s.laps.push(DeviceLap {
            start_s: prev,
            end_s: m,
            trigger: Some("manual".into()),
        });
        prev = m;
    }
    s.time = t
        .iter()
        .map(|&x| start + chrono::Duration::milliseconds((x * 1000.0) as i64))
        .collect();
    s.t = t;
    s
}

/// A built session, derived and cleaned as ingest does, with arbitrary extra flags.
fn cleaned(sh: &Shape) -> Session {
    let mut s = build(sh);
    derive::fill_derived(&mut s);
    s.flags = clean::flag(&s, Some(&profile(sh.full_profile)));
    let mut rng = Rng(sh.seed ^ 0xF1A6);
    let end = s.duration_s();
    let kinds = [
        (ChannelKind::Speed, FlagKind::SpeedLimit),
        (ChannelKind::Hr, FlagKind::HrRange),
        (ChannelKind::Position, FlagKind::PositionJump),
        (ChannelKind::Cadence, FlagKind::FlatLine),
        (ChannelKind::Distance, FlagKind::Gap),
    ];
    for _ in 0..sh.extra_flags {
        let (channel, kind) = kinds[rng.below(kinds.len())];
        // Some flags reach past either end of the session.
        let a = rng.range(-30.0, end + 30.0);
        s.flags.push(Flag {
            from_s: a,
            to_s: a + rng.range(0.0, 400.0),
            channel,
            kind,
            reason: "prop".into(),
        });
    }
    s
}

/// Every number in the review's debug form is finite: `NaN` and `inf` never appear.
fn assert_all_finite(r: &Review) -> Result<(), TestCaseError> {
    // The flags' reasons are ingest's words (`ingest::clean`), checked there; the numbers
    // of the flags are checked here.
    let mut numbers = r.clone();
    for f in &mut numbers.flags {
        f.reason.clear();
    }
    let text = format!("{numbers:?}");
    prop_assert!(!text.contains("NaN"), "NaN in the review: {text}");
    let bytes = text.as_bytes();
    let mut from = 0;
    while let Some(k) = text[from..].find("inf") {
        let at = from + k;
        let before = at.checked_sub(1).map(|j| bytes[j]);
        let after = bytes.get(at + 3).copied();
        let word = |c: Option<u8>| c.is_some_and(|c| c.is_ascii_alphanumeric() || c == b'_');
        prop_assert!(
            word(before) || word(after),
            "infinity in the review near {:?}",
            &text[at.saturating_sub(60)..(at + 20).min(text.len())]
        );
        from = at + 3;
    }
    // The JSON contract reads back (floats to within serde_json's parsing, which is not
    // bit-exact on every value).
    let json = serde_json::to_string(r).map_err(|e| TestCaseError::fail(e.to_string()))?;
    let back: Review =
        serde_json::from_str(&json).map_err(|e| TestCaseError::fail(e.to_string()))?;
    prop_assert_eq!(back.intervals.len(), r.intervals.len());
    prop_assert_eq!(&back.findings, &r.findings);
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(64), failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn no_nan_or_infinity_in_any_output(sh in shape()) {
        let s = cleaned(&sh);
        // With extreme values, ingest's derived speed can overflow (distance steps of
        // 1e300 m): reported to ingest; the analysis must cope with it all the same.
        if sh.wild == 0.0 {
            prop_assert!(s.check_invariants().is_ok(), "{:?}", s.check_invariants());
        }
        let p = profile(sh.full_profile);
        let pl = plan(sh.plan);
        let r = analyze(&s, pl.as_ref(), &p);
        assert_all_finite(&r)?;
        // The history's cut of the review stays finite too.
        if let Some(sum) = splitdesk::analysis::history::SessionSummary::from_review("x", &r) {
            let text = format!("{sum:?}");
            prop_assert!(!text.contains("NaN") && !text.contains(": inf"), "{}", text);
        }
    }

    #[test]
    fn intervals_are_ordered_contiguous_and_cover_the_session(sh in shape()) {
        let s = cleaned(&sh);
        let p = profile(sh.full_profile);
        let pl = plan(sh.plan);
        let set = find_intervals(&s, pl.as_ref(), &p);
        let n = s.len();
        if n < 2 {
            // One sample spans no time: no interval (tests/intervals_behaviour.rs says so
            // for a one-sample session with a plan too).
            prop_assert!(set.intervals.is_empty());
        } else {
            prop_assert!(!set.intervals.is_empty(), "no interval for {} samples", n);
            let first = &set.intervals[0];
            let last = &set.intervals[set.intervals.len() - 1];
            prop_assert_eq!(first.start, 0);
            prop_assert_eq!(last.end, n - 1);
            for iv in &set.intervals {
                prop_assert!(iv.start <= iv.end && iv.end < n, "{:?}", iv);
                prop_assert_eq!(iv.start_s, s.t[iv.start]);
                prop_assert_eq!(iv.end_s, s.t[iv.end]);
            }
            for w in set.intervals.windows(2) {
                prop_assert_eq!(w[0].end, w[1].start, "{:?}", set.intervals);
                prop_assert!(w[0].start < w[1].start, "{:?}", set.intervals);
            }
        }
        // The review keeps them, in the same order.
        let r = review(&s, &set, pl.as_ref(), &p);
        if s.sport.analysed_as_running() {
            prop_assert_eq!(r.intervals.len(), set.intervals.len());
            for (m, iv) in r.intervals.iter().zip(&set.intervals) {
                prop_assert_eq!(m.start_s, iv.start_s);
                prop_assert_eq!(m.end_s, iv.end_s);
                prop_assert!(m.moving_s <= m.duration_s + 1e-9, "{:?}", m);
            }
        }
    }

    #[test]
    fn cleaning_flags_samples_and_never_deletes_them(sh in shape()) {
        let raw = build(&sh);
        let n = raw.len();
        let s = cleaned(&sh);
        prop_assert_eq!(s.len(), n);
        prop_assert_eq!(&s.t, &raw.t);
        prop_assert_eq!(s.time.len(), n);
        // Every recorded channel keeps every sample, flagged or not.
        for (a, b) in [
            (&raw.speed, &s.speed),
            (&raw.distance, &s.distance),
            (&raw.hr, &s.hr),
            (&raw.cadence, &s.cadence),
            (&raw.altitude, &s.altitude),
            (&raw.lat, &s.lat),
            (&raw.lon, &s.lon),
        ] {
            if a.is_some() {
                prop_assert_eq!(a, b);
            }
            if let Some(c) = b {
                prop_assert_eq!(c.len(), n);
            }
        }
        let end = s.duration_s();
        for f in s.flags.iter().filter(|f| f.reason != "prop") {
            prop_assert!(f.from_s <= f.to_s && f.from_s >= 0.0 && f.to_s <= end, "{:?}", f);
        }
        let r = analyze(&s, None, &profile(sh.full_profile));
        prop_assert_eq!(r.session.samples, n);
        prop_assert_eq!(motion::classify(&s).len(), n);
    }
}

/// A running session for the scaling property: speeds of 2.5-6 m/s (well above every
/// walking and standing threshold, under the human limit at twice the speed, and changing by
/// less than half the acceleration limit), no positions or altitude (they do not scale).
#[derive(Debug, Clone)]
struct RunShape {
    n: usize,
    seed: u64,
    rhythm: u8,
    speed: bool,
    distance: bool,
    hr: bool,
    missing: f64,
    pauses: usize,
}

fn run_shape() -> impl Strategy<Value = RunShape> {
    (
        (60usize..=3000, any::<u64>(), 0u8..3),
        (any::<bool>(), any::<bool>(), any::<bool>()),
        (prop_oneof![Just(0.0), 0.0..0.1f64], 0usize..3),
    )
        .prop_filter("speed or distance", |((_, _, _), (sp, d, _), _)| *sp || *d)
        .prop_map(
            |((n, seed, rhythm), (speed, distance, hr), (missing, pauses))| RunShape {
                n,
                seed,
                rhythm,
                speed,
                distance,
                hr,
                missing,
                pauses,
            },
        )
}

fn run_session(sh: &RunShape) -> Session {
    let mut rng = Rng(sh.seed);
    let start = Utc.with_ymd_and_hms(2026, 5, 4, 6, 30, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = Sport::Running;
    let n = sh.n;
    let mut t = Vec::with_capacity(n);
    let mut now = 0.0;
    for i in 0..n {
        if i > 0 {
            now += match sh.rhythm {
                0 => 1.0,
                1 => (1 + rng.below(4)) as f64,
                _ if rng.chance(0.004) => rng.range(30.0, 300.0).round(),
                _ => 1.0,
            };
        }
        t.push(now);
    }
    let mut speed = Vec::with_capacity(n);
    let (mut level, mut left) = (4.0, 0usize);
    for _ in 0..n {
        if left == 0 {
            left = 30 + rng.below(300);
            level = rng.range(2.8, 5.7);
        }
        left -= 1;
        speed.push(level + rng.range(-0.2, 0.2));
    }
    let mut acc = 0.0;
    let dist: Vec<f64> = (0..n)
        .map(|i| {
            if i > 0 {
                acc += speed[i] * (t[i] - t[i - 1]) * rng.range(0.95, 1.05);
            }
            acc
        })
        .collect();
    let mut h = 130.0;
    let hr: Vec<f64> = (0..n)
        .map(|_| {
            h = (h + rng.range(-1.0, 1.05)).clamp(100.0, 185.0);
            h
        })
        .collect();
    if sh.speed {
        s.speed = channel(&mut rng, sh.missing, speed);
    }
    if sh.distance {
        s.distance = channel(&mut rng, sh.missing, dist);
    }
    if sh.hr {
        s.hr = channel(&mut rng, sh.missing, hr);
    }
    let end = t.last().copied().unwrap_or(0.0);
    for _ in 0..sh.pauses {
        let a = rng.range(0.0, end);
        s.pauses.push(Pause {
            from_s: a,
            to_s: a + rng.range(5.0, 120.0),
        });
    }
    s.time = t
        .iter()
        .map(|&x| start + chrono::Duration::seconds(x as i64))
        .collect();
    s.t = t;
    s
}

fn scaled(s: &Session, k: f64) -> Session {
    let mut out = s.clone();
    let scale = |c: &mut Option<Channel>| {
        if let Some(c) = c {
            for v in c.values.iter_mut().flatten() {
                *v *= k;
            }
        }
    };
    scale(&mut out.speed);
    scale(&mut out.distance);
    out
}

fn close_scaled(a: Option<f64>, b: Option<f64>, k: f64, what: &str) -> Result<(), TestCaseError> {
    match (a, b) {
        (Some(x), Some(y)) => prop_assert!(
            (x - y * k).abs() <= 1e-6 * x.abs().max(1.0),
            "{}: {} vs {} scaled by {}",
            what,
            x,
            y,
            k
        ),
        (None, None) => {}
        _ => prop_assert!(false, "{}: {:?} vs {:?}", what, a, b),
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(48), failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn scaling_speed_by_k_scales_every_pace_by_one_over_k(
        sh in run_shape(),
        k in 1.0..2.0f64,
        full in any::<bool>(),
    ) {
        let mut s = run_session(&sh);
        let p = profile(full);
        s.flags = clean::flag(&s, Some(&p));
        let sk = scaled(&s, k);
        // The motion is the same: the property holds on the parts that must scale.
        prop_assert_eq!(&motion::classify(&s).state, &motion::classify(&sk).state);
        let set = find_intervals(&s, None, &p);
        let (r, rk) = (review(&s, &set, None, &p), review(&sk, &set, None, &p));
        prop_assert_eq!(r.intervals.len(), rk.intervals.len());
        for (m, mk) in r.intervals.iter().zip(&rk.intervals) {
            // pace(k·v) = pace(v) / k, so pace = k · pace_k.
            close_scaled(m.avg_pace_s_per_km, mk.avg_pace_s_per_km, k, "pace")?;
            close_scaled(
                m.hill_adjusted_pace_s_per_km,
                mk.hill_adjusted_pace_s_per_km,
                k,
                "hill-adjusted pace",
            )?;
            close_scaled(m.first_half_pace_s_per_km, mk.first_half_pace_s_per_km, k, "first half")?;
            close_scaled(m.second_half_pace_s_per_km, mk.second_half_pace_s_per_km, k, "second half")?;
            close_scaled(mk.relative_intensity, m.relative_intensity, k, "relative intensity")?;
            close_scaled(mk.distance_m, m.distance_m, k, "interval distance")?;
            prop_assert_eq!(m.moving_s, mk.moving_s);
        }
        close_scaled(rk.session.avg_speed_mps, r.session.avg_speed_mps, k, "session speed")?;
        close_scaled(rk.session.distance_m, r.session.distance_m, k, "session distance")?;
        prop_assert_eq!(r.session.moving_s, rk.session.moving_s);
        prop_assert_eq!(r.best_efforts.len(), rk.best_efforts.len());
        for (b, bk) in r.best_efforts.iter().zip(&rk.best_efforts) {
            close_scaled(Some(bk.speed_mps), Some(b.speed_mps), k, "best effort")?;
        }
    }

    #[test]
    fn swapping_the_halves_of_a_steady_run_flips_the_decoupling(
        half in 600usize..1800,
        seed in any::<u64>(),
        v in 2.5..5.5f64,
        h1 in 120.0..175.0f64,
        h2 in 120.0..175.0f64,
        dv in -0.4..0.4f64,
    ) {
        prop_assume!((h1 - h2).abs() > 1.0 || dv.abs() > 0.05);
        let mut rng = Rng(seed);
        // Two steady halves of equal length at 1 Hz: (speed, HR) about (v, h1), then
        // (v + dv, h2).
        let a: Vec<(f64, f64)> = (0..half)
            .map(|_| (v + rng.range(-0.1, 0.1), h1 + rng.range(-2.0, 2.0)))
            .collect();
        let b: Vec<(f64, f64)> = (0..half)
            .map(|_| (v + dv + rng.range(-0.1, 0.1), h2 + rng.range(-2.0, 2.0)))
            .collect();
        let dec = |first: &[(f64, f64)], second: &[(f64, f64)]| {
            let all: Vec<(f64, f64)> = first.iter().chain(second).copied().collect();
            let t: Vec<f64> = (0..all.len()).map(|i| i as f64).collect();
            let speed: Vec<Option<f64>> = all.iter().map(|x| Some(x.0)).collect();
            let hr: Vec<Option<f64>> = all.iter().map(|x| Some(x.1)).collect();
            decoupling_pct(&speed, &hr, &t, &vec![true; all.len()])
        };
        let (Some(d), Some(d_rev)) = (dec(&a, &b), dec(&b, &a)) else {
            return Err(TestCaseError::fail("no decoupling"));
        };
        // E1 and E2 trade places: (E1 − E2)/E1 becomes (E2 − E1)/E2 (each up to the one
        // sample at the very start that stands for no time).
        prop_assume!(d.abs() > 0.05);
        prop_assert!(d.signum() == -d_rev.signum(), "{} then {}", d, d_rev);
        let ratio = -d_rev / d;
        prop_assert!(ratio > 0.5 && ratio < 2.0, "{} then {}", d, d_rev);

        // The same through the whole review: a 10-minute warm-up at the same speed and
        // HR ramp, then the halves, and the review's own decoupling window.
        let session = |first: &[(f64, f64)], second: &[(f64, f64)]| {
            let warm: Vec<(f64, f64)> = (0..600)
                .map(|i| (v, 100.0 + (h1.min(h2) - 100.0) * i as f64 / 600.0))
                .collect();
            let all: Vec<(f64, f64)> = warm.iter().chain(first).chain(second).copied().collect();
            let start = Utc.with_ymd_and_hms(2026, 5, 4, 6, 30, 0).unwrap();
            let mut s = Session::empty(FileFormat::Fit, start);
            s.sport = Sport::Running;
            s.t = (0..all.len()).map(|i| i as f64).collect();
            s.time = s.t.iter().map(|&x| start + chrono::Duration::seconds(x as i64)).collect();
            s.speed = Some(Channel::from_values(all.iter().map(|x| x.0)));
            s.hr = Some(Channel::from_values(all.iter().map(|x| x.1)));
            s
        };
        let p = profile(false);
        let r = review(&session(&a, &b), &IntervalSet::default(), None, &p);
        let r_rev = review(&session(&b, &a), &IntervalSet::default(), None, &p);
        if let (Some(x), Some(y)) = (r.decoupling_pct, r_rev.decoupling_pct) {
            prop_assert!(x.signum() == -y.signum(), "review: {} then {}", x, y);
        } else {
            prop_assert!(false, "review gave no decoupling: {:?} {:?}", r.decoupling_pct, r_rev.decoupling_pct);
        }
    }
}

/// Found by the property above (a random case shrank to it): a session of one sample has no
/// interval (it spans no time), and its review stays finite, with or without channels and
/// plan.
#[test]
fn a_single_sample_session_is_covered_and_finite() {
    for (speed, hr, plan_on) in [
        (false, false, false),
        (true, true, true),
        (true, false, true),
    ] {
        let sh = Shape {
            n: 1,
            seed: 0,
            rhythm: 0,
            speed,
            distance: u8::from(speed),
            hr,
            cadence: false,
            altitude: false,
            positions: false,
            missing: 0.0,
            pauses: 0,
            laps: 0,
            extra_flags: 0,
            sport: 0,
            plan: plan_on,
            full_profile: true,
            wild: 0.0,
        };
        let s = cleaned(&sh);
        assert_eq!(s.len(), 1);
        let p = profile(sh.full_profile);
        let pl = plan(sh.plan);
        let set = find_intervals(&s, pl.as_ref(), &p);
        assert!(set.intervals.is_empty(), "{:?}", set.intervals);
        let r = analyze(&s, pl.as_ref(), &p);
        assert_all_finite(&r).unwrap();
    }
}
