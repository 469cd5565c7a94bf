//! Injected sensor faults show in the recording the way real ones do.

mod sim_support;

use sim_support::*;
use splitdesk::demo::simulate::{simulate, Faults, SimOutput};
use splitdesk::model::{Amount, RecoveryMode, Session};

fn faulty(faults: Faults, seed: u64) -> SimOutput {
    let mut inp = input(
        intervals(
            5,
            Amount::Duration(240.0),
            named("10k"),
            recovery(Amount::Duration(90.0), RecoveryMode::Jog),
        ),
        seed,
    );
    inp.faults = faults;
    simulate(&inp)
}

/// Distance between consecutive fixes, metres (equirectangular, fine at this scale).
fn fix_step(s: &Session, q: usize) -> f64 {
    let (la0, lo0) = s.position(q - 1).unwrap();
    let (la1, lo1) = s.position(q).unwrap();
    let r = 6_371_008.8;
    let dn = (la1 - la0).to_radians() * r;
    let de = (lo1 - lo0).to_radians() * r * la0.to_radians().cos();
    (dn * dn + de * de).sqrt()
}

#[test]
fn gps_jumps_displace_fixes_and_spike_speed() {
    for seed in 0..5 {
        let out = faulty(
            Faults {
                gps_jumps: 3,
                ..Faults::default()
            },
            seed,
        );
        let s = &out.session;
        let v = s.speed.as_ref().unwrap();
        let spikes = v.iter_present().filter(|&(_, x)| x > 12.5).count();
        let jumps = (1..s.len()).filter(|&q| fix_step(s, q) > 90.0).count();
        assert!((4..=6).contains(&spikes), "seed {seed}: {spikes} spikes");
        assert_eq!(jumps, spikes, "seed {seed}");
        for (q, x) in v.iter_present().filter(|&(_, x)| x > 12.5) {
            assert!((fix_step(s, q) - x * (s.t[q] - s.t[q - 1])).abs() < 0.5);
            assert!(x < 320.0);
        }
        // Without faults: no jumps, GPS noise of a few metres.
        let clean = faulty(Faults::default(), seed).session;
        assert!((1..clean.len()).all(|q| fix_step(&clean, q) < 12.0));
    }
}

#[test]
fn cadence_lock_makes_hr_follow_cadence() {
    let out = faulty(
        Faults {
            cadence_lock: Some((1000.0, 60.0)),
            ..Faults::default()
        },
        1,
    );
    let s = &out.session;
    let hr = s.hr.as_ref().unwrap();
    let cad = s.cadence.as_ref().unwrap();
    let (mut inside, mut before, mut before_close) = (0, 0, 0);
    for q in 0..s.len() {
        let diff = (hr.get(q).unwrap() - cad.get(q).unwrap()).abs();
        if (1000.0..=1060.0).contains(&s.t[q]) {
            assert!(diff <= 3.0, "t {} diff {diff}", s.t[q]);
            inside += 1;
        } else if (700.0..1000.0).contains(&s.t[q]) {
            before += 1;
            if diff <= 3.0 {
                before_close += 1;
            }
        }
    }
    assert_eq!(inside, 61);
    // Before the lock HR and cadence only cross by chance.
    assert!(before_close * 3 < before, "{before_close} of {before}");
}

#[test]
fn hr_dropouts_leave_gaps_of_five_to_thirty_seconds() {
    for seed in 0..5 {
        let out = faulty(
            Faults {
                hr_dropouts: 3,
                ..Faults::default()
            },
            seed,
        );
        let s = &out.session;
        let hr = s.hr.as_ref().unwrap();
        let mut runs = Vec::new();
        let mut start = None;
        for q in 0..s.len() {
            match (hr.get(q), start) {
                (None, None) => start = Some(s.t[q]),
                (Some(_), Some(a)) => {
                    runs.push(s.t[q - 1] - a + 1.0);
                    start = None;
                }
                _ => {}
            }
        }
        assert!(start.is_none(), "trailing drop-out");
        assert!(!runs.is_empty() && runs.len() <= 3, "seed {seed}: {runs:?}");
        assert!(runs.iter().all(|&r| (5.0..=62.0).contains(&r)), "{runs:?}");
        // Other channels keep every sample.
        assert_eq!(s.speed.as_ref().unwrap().present(), s.len());
    }
}
