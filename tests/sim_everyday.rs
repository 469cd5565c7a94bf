//! The simulator options the everyday-run test set needs: gaps without pause markers,
//! standing GPS jitter, the GPS noise level, cycling, even effort on hills, and the truth's
//! moving time, distance and steady part. (Self-consistency: the simulator is ours.)

mod sim_support;

use sim_support::profile;
use splitdesk::analysis::gradient::flat_equivalent_speed;
use splitdesk::demo::simulate::{
    simulate, Conditions, GpsNoise, SimInput, SimOutput, Stop, Terrain,
};
use splitdesk::model::{Plan, Session, Sport};
use splitdesk::plan::parse_line;

fn plan(line: &str) -> Plan {
    Plan {
        title: "t".into(),
        purpose: "p".into(),
        date: None,
        steps: parse_line(line).unwrap(),
    }
}

fn sim(line: &str, seed: u64, c: Conditions) -> SimOutput {
    let mut input = SimInput::new(profile(), plan(line), seed);
    input.conditions = c;
    simulate(&input)
}

/// Positions in local metres (east, north) from the route origin.
fn local(s: &Session) -> Vec<(f64, f64)> {
    let (lat0, lon0) = Conditions::default().origin;
    let r = 6_371_008.8_f64;
    (0..s.len())
        .map(|i| {
            let (la, lo) = s.position(i).unwrap();
            (
                (lo - lon0).to_radians() * r * lat0.to_radians().cos(),
                (la - lat0).to_radians() * r,
            )
        })
        .collect()
}

fn sd(x: &[f64]) -> f64 {
    let m = x.iter().sum::<f64>() / x.len() as f64;
    (x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / x.len() as f64).sqrt()
}

#[test]
fn gaps_leave_no_pause_marker_and_stops_do() {
    let c = Conditions {
        stops: vec![Stop {
            at_s: 600.0,
            dur_s: 45.0,
        }],
        gaps: vec![Stop {
            at_s: 1200.0,
            dur_s: 60.0,
        }],
        ..Conditions::default()
    };
    let out = sim("30:00 easy", 3, c);
    let s = &out.session;
    assert_eq!(s.pauses.len(), 1);
    assert!((s.pauses[0].to_s - s.pauses[0].from_s - 45.0).abs() <= 1.0);
    // The gap: one step of 60 s in the sample times after 1200 s, outside any pause.
    let gap =
        s.t.windows(2)
            .find(|w| w[0] >= 1200.0 && w[1] - w[0] > 30.0)
            .expect("a gap in the samples");
    assert_eq!(gap[1] - gap[0], 60.0);
    assert!(!s.pauses.iter().any(|p| p.from_s >= 1200.0));
    // Both still the timer runs its 30 minutes; neither counts as moving.
    let elapsed = s.t.last().unwrap() - s.t[0];
    assert!(elapsed >= 1800.0 + 105.0, "{elapsed}");
    assert!(out.truth.moving_s <= elapsed - 105.0);
    assert!(
        out.truth.moving_s >= 1800.0 - 30.0,
        "{}",
        out.truth.moving_s
    );
}

#[test]
fn standing_jitter_moves_the_positions_only_while_standing() {
    let line = "rec 3:00 stand; 20:00 easy; rec 3:00 stand";
    let jitter = GpsNoise {
        sd_m: 6.0,
        corr_s: 20.0,
        smooth_s: 2.0,
    };
    let quiet = sim(line, 5, Conditions::default());
    let loud = sim(
        line,
        5,
        Conditions {
            standing_jitter: Some(jitter),
            ..Conditions::default()
        },
    );
    // Same true run, same samples.
    assert_eq!(quiet.truth, loud.truth);
    let (pq, pl) = (local(&quiet.session), local(&loud.session));
    let t = &quiet.session.t;
    // The first 3 minutes are standing (skip the fade-in of the first seconds).
    let stand: Vec<usize> = (0..t.len())
        .filter(|&i| t[i] >= 10.0 && t[i] < 175.0)
        .collect();
    let spread = |p: &[(f64, f64)]| {
        let e: Vec<f64> = stand.iter().map(|&i| p[i].0).collect();
        let n: Vec<f64> = stand.iter().map(|&i| p[i].1).collect();
        (sd(&e).powi(2) + sd(&n).powi(2)).sqrt()
    };
    let path = |p: &[(f64, f64)]| {
        stand
            .windows(2)
            .map(|w| ((p[w[1]].0 - p[w[0]].0).powi(2) + (p[w[1]].1 - p[w[0]].1).powi(2)).sqrt())
            .sum::<f64>()
    };
    // The jitter alone (the difference of the two tracks): 6 m per axis, about 8.5 m
    // radially; under 3 minutes of a 20 s process gives a rough estimate.
    let diff: Vec<(f64, f64)> = pl
        .iter()
        .zip(&pq)
        .map(|(a, b)| (a.0 - b.0, a.1 - b.1))
        .collect();
    assert!(
        (4.0..=14.0).contains(&spread(&diff)),
        "jitter spread {}",
        spread(&diff)
    );
    // Differentiated, the jitter is fake movement: well over 100 m in under 3 minutes.
    assert!(
        path(&pl) > 100.0 && path(&pl) > 5.0 * path(&pq),
        "{} vs {}",
        path(&pl),
        path(&pq)
    );
    // Once running (after a minute of fade-out), the positions are the same.
    for i in (0..t.len()).filter(|&i| t[i] >= 300.0 && t[i] < 1350.0) {
        let d = ((pl[i].0 - pq[i].0).powi(2) + (pl[i].1 - pq[i].1).powi(2)).sqrt();
        assert!(d < 0.01, "t {}: {d}", t[i]);
    }
}

#[test]
fn gps_noise_level_sets_the_position_spread() {
    let noise = |sd_m| Conditions {
        gps_noise: Some(GpsNoise {
            sd_m,
            corr_s: 30.0,
            smooth_s: 10.0,
        }),
        ..Conditions::default()
    };
    let clean = sim("60:00 easy", 9, noise(0.0));
    let noisy = sim("60:00 easy", 9, noise(6.0));
    let (pc, pn) = (local(&clean.session), local(&noisy.session));
    let de: Vec<f64> = pc.iter().zip(&pn).map(|(c, n)| n.0 - c.0).collect();
    let dn: Vec<f64> = pc.iter().zip(&pn).map(|(c, n)| n.1 - c.1).collect();
    for x in [sd(&de), sd(&dn)] {
        // About 120 independent stretches of 30 s: the estimate is within about 15 %.
        assert!((4.5..=7.5).contains(&x), "sd {x}");
    }
    // The default is the documented 2.5 m process.
    let default = sim("60:00 easy", 9, Conditions::default());
    let pd = local(&default.session);
    let de: Vec<f64> = pc.iter().zip(&pd).map(|(c, n)| n.0 - c.0).collect();
    assert!((1.8..=3.2).contains(&sd(&de)), "{}", sd(&de));
}

#[test]
fn a_ride_is_written_as_cycling_at_bike_speeds() {
    let c = Conditions {
        sport: Sport::Cycling,
        ..Conditions::default()
    };
    let out = sim("60:00 easy", 11, c);
    assert_eq!(out.session.sport, Sport::Cycling);
    let v = out.truth.distance_m / out.truth.moving_s;
    assert!((7.0..=9.0).contains(&v), "{v} m/s");
    // Pedalling cadence, and the heart rate of an easy effort (as the easy run's).
    let cad = out.session.cadence.as_ref().unwrap();
    let mid = out.session.len() / 2;
    assert!((80.0..=90.0).contains(&cad.get(mid).unwrap()));
    let run = sim("60:00 easy", 11, Conditions::default());
    let mean = |o: &SimOutput| o.truth.hr_bpm.iter().sum::<f64>() / o.truth.hr_bpm.len() as f64;
    assert!(
        (mean(&out) - mean(&run)).abs() < 3.0,
        "{} vs {}",
        mean(&out),
        mean(&run)
    );
    assert_eq!(run.session.sport, Sport::Running);
}

#[test]
fn even_effort_keeps_hill_adjusted_speed_and_heart_rate_flat() {
    let hills = Terrain::Rolling {
        amplitude_m: 0.08 * 800.0 / std::f64::consts::TAU,
        wavelength_m: 800.0,
    };
    let run = |even| {
        sim(
            "50:00 easy",
            13,
            Conditions {
                terrain: hills.clone(),
                even_hill_effort: even,
                ..Conditions::default()
            },
        )
    };
    let spread = |o: &SimOutput| {
        let tr = &o.truth;
        let from = tr.hr_bpm.len() / 4;
        let adj: Vec<f64> = (from..tr.speed_mps.len())
            .map(|q| flat_equivalent_speed(tr.speed_mps[q], tr.grade[q]))
            .collect();
        let hr = &tr.hr_bpm[from..];
        let mean = adj.iter().sum::<f64>() / adj.len() as f64;
        (sd(&adj) / mean, sd(hr))
    };
    let (adj_even, hr_even) = spread(&run(true));
    let (adj_usual, hr_usual) = spread(&run(false));
    assert!(
        adj_even < 0.05,
        "even: hill-adjusted speed varies {adj_even}"
    );
    assert!(hr_even < 1.5, "even: HR sd {hr_even}");
    assert!(adj_usual > 2.0 * adj_even && hr_usual > 2.0 * hr_even);
}

#[test]
fn truth_steady_part_follows_its_definition() {
    // No warm-up: the first 10 minutes of moving time are left out; standing at either end
    // is not part of it.
    let out = sim(
        "rec 1:00 stand; 40:00 easy; rec 2:00 stand",
        17,
        Conditions::default(),
    );
    let s = out.truth.steady.as_ref().unwrap();
    assert!((s.start_s - 660.0).abs() <= 3.0, "{}", s.start_s);
    assert_eq!(s.end_s, 60.0 + 2400.0);
    assert!((s.moving_s - 1800.0).abs() <= 3.0, "{}", s.moving_s);
    // Standing is not moving time; walking is.
    let walk = sim("40:00 easy; rec 5:00 walk", 17, Conditions::default());
    let stand = sim("40:00 easy; rec 5:00 stand", 17, Conditions::default());
    let diff = walk.truth.moving_s - stand.truth.moving_s;
    assert!((290.0..=300.0).contains(&diff), "{diff}");
    // A race: the steady part is the race itself, warm-up and cool-down left out.
    let race = sim(
        "wu 15:00; work 8km @ 10k; cd 10:00",
        19,
        Conditions::default(),
    );
    let w = race.truth.work().next().unwrap();
    let s = race.truth.steady.as_ref().unwrap();
    assert_eq!((s.start_s, s.end_s), (w.start_s, w.end_s));
    // A set has none.
    let set = sim(
        "10:00 easy; 5 x 3:00 @ 5k / 2:00 jog; 8:00 easy",
        19,
        Conditions::default(),
    );
    assert!(set.truth.steady.is_none());
    // Heat makes the heart work harder late in a long run: the true decoupling shows it.
    let hot = sim(
        "90:00 easy",
        23,
        Conditions {
            temperature_c: 28.0,
            ..Conditions::default()
        },
    );
    let cool = sim(
        "90:00 easy",
        23,
        Conditions {
            temperature_c: 10.0,
            ..Conditions::default()
        },
    );
    let (h, c) = (
        hot.truth.steady.unwrap().decoupling_pct,
        cool.truth.steady.unwrap().decoupling_pct,
    );
    assert!(h > 4.0 && c < 2.0, "hot {h} cool {c}");
}
