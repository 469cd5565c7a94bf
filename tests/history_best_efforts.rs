//! Best efforts of one session (analysis::best_efforts): the two-pointer search against a
//! brute-force reference on random irregular series, and the masking of flagged and paused
//! data on a real `Session`.

mod history_support;

use history_support::{close, session_1hz};
use splitdesk::analysis::best_efforts::{
    best_efforts, best_efforts_for, best_efforts_in, BestEffort, DURATIONS_S,
};
use splitdesk::model::{ChannelKind, Flag, FlagKind, Pause};

/// Seeded xorshift64 (Marsaglia 2003), so every run sees the same cases.
struct XorShift(u64);

impl XorShift {
    fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        self.0 = x;
        x
    }
    fn uniform(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }
    fn chance(&mut self, p: f64) -> bool {
        self.uniform() < p
    }
}

/// Brute force, written independently of the module: split into stretches of usable steps
/// by the same rules, then try every window that starts or ends on a sample, finding the
/// other end by a linear scan. O(n²).
fn brute(t: &[f64], d: &[Option<f64>], ok: &[bool], dur: f64) -> Option<f64> {
    let step_usable = |i: usize| -> bool {
        let (Some(d0), Some(d1)) = (d[i - 1], d[i]) else {
            return false;
        };
        let dt = t[i] - t[i - 1];
        ok[i] && dt > 0.0 && dt <= 10.0 && d1 >= d0
    };
    let mut best: Option<f64> = None;
    let mut i = 1;
    while i < t.len() {
        if !step_usable(i) {
            i += 1;
            continue;
        }
        let a = i - 1;
        let mut b = i;
        while b + 1 < t.len() && step_usable(b + 1) {
            b += 1;
        }
        let ts = &t[a..=b];
        let ds: Vec<f64> = d[a..=b].iter().map(|x| x.unwrap()).collect();
        let at = |x: f64| -> f64 {
            for k in 1..ts.len() {
                if ts[k] >= x {
                    let f = (x - ts[k - 1]) / (ts[k] - ts[k - 1]);
                    return ds[k - 1] + (ds[k] - ds[k - 1]) * f;
                }
            }
            ds[ds.len() - 1]
        };
        let mut starts: Vec<f64> = ts.to_vec();
        starts.extend(ts.iter().map(|x| x - dur));
        for s in starts {
            if s < ts[0] || s + dur > ts[ts.len() - 1] {
                continue;
            }
            let dist = at(s + dur) - at(s);
            if best.is_none_or(|b| dist > b) {
                best = Some(dist);
            }
        }
        i = b + 1;
    }
    best.map(|x| x / dur)
}

#[test]
fn two_pointer_search_matches_brute_force_on_random_series() {
    let mut rng = XorShift(0x9E37_79B9_7F4A_7C15);
    let mut compared = 0;
    for case in 0..400 {
        let n = 20 + (rng.next() % 400) as usize;
        let mut t = vec![0.0];
        let mut d = vec![Some(0.0)];
        let mut ok = vec![true];
        let mut acc = 0.0;
        for _ in 1..n {
            // Irregular sampling: mostly 1 s, sometimes "smart" 2-8 s, rarely a hole.
            let dt = if rng.chance(0.6) {
                1.0
            } else if rng.chance(0.97) {
                rng.range(0.3, 8.0)
            } else {
                rng.range(10.5, 40.0)
            };
            t.push(t[t.len() - 1] + dt);
            let v = rng.range(1.5, 6.5);
            acc += if rng.chance(0.004) { -5.0 } else { v * dt };
            d.push(if rng.chance(0.004) { None } else { Some(acc) });
            ok.push(!rng.chance(0.008));
        }
        let durations: Vec<f64> = (0..4).map(|_| rng.range(5.0, 400.0).round()).collect();
        let got = best_efforts_in(&t, &d, &ok, &durations);
        let mut k = 0;
        for &dur in &durations {
            let want = brute(&t, &d, &ok, dur);
            let found = got.iter().find(|e| e.duration_s == dur);
            match (want, found) {
                (None, None) => {}
                (Some(w), Some(e)) => {
                    assert!(
                        (e.speed_mps - w).abs() <= 1e-9 * w.abs().max(1.0),
                        "case {case}, {dur} s: got {} want {w}",
                        e.speed_mps
                    );
                    close(e.distance_m, e.speed_mps * dur, 1e-6);
                    compared += 1;
                    k += 1;
                }
                (w, f) => panic!("case {case}, {dur} s: brute {w:?}, search {f:?}"),
            }
        }
        assert_eq!(got.len(), k, "case {case}: extra results");
    }
    assert!(compared > 500, "only {compared} comparisons");
}

#[test]
fn regular_one_hertz_series_matches_the_plain_sliding_window() {
    // At 1 Hz with integer durations the best window is a plain difference d[i+T] - d[i].
    let mut rng = XorShift(42);
    for _ in 0..100 {
        let n = 600;
        let mut d = vec![0.0];
        for _ in 1..n {
            let last = d[d.len() - 1];
            d.push(last + rng.range(2.0, 5.0));
        }
        let t: Vec<f64> = (0..n).map(|i| i as f64).collect();
        let dist: Vec<Option<f64>> = d.iter().map(|&x| Some(x)).collect();
        let ok = vec![true; n];
        for dur in [1usize, 7, 60, 300, 599] {
            let want = (0..n - dur)
                .map(|i| d[i + dur] - d[i])
                .fold(f64::NEG_INFINITY, f64::max);
            let got = best_efforts_in(&t, &dist, &ok, &[dur as f64]);
            close(got[0].distance_m, want, 1e-6);
        }
    }
}

#[test]
fn flagged_and_paused_stretches_are_left_out() {
    // 40 min at 3 m/s; a 2-min burst at 6 m/s flagged as a GPS speed spike at 10:00;
    // a 3-min burst at 5 m/s inside a timer pause at 20:00; a real 4 m/s minute at 30:00.
    let mut s = session_1hz(2400, |t| {
        if (600.0..720.0).contains(&t) {
            6.0
        } else if (1200.0..1380.0).contains(&t) {
            5.0
        } else if (1800.0..1860.0).contains(&t) {
            4.0
        } else {
            3.0
        }
    });
    s.flags.push(Flag {
        from_s: 600.0,
        to_s: 720.0,
        channel: ChannelKind::Speed,
        kind: FlagKind::SpeedLimit,
        reason: "planted".into(),
    });
    s.pauses.push(Pause {
        from_s: 1200.0,
        to_s: 1380.0,
    });
    let be = best_efforts_for(&s, &[60.0, 120.0]);
    // The best minute is the real 4 m/s minute, sample 1800 (first at 4.0) stands for 1799..1800.
    close(be[0].speed_mps, 4.0, 1e-9);
    assert!(be[1].speed_mps < 4.0);
    // The flag and the pause cut the 40 min into stretches of at most 17 min, so no window
    // of 20 min or more fits.
    let all: Vec<BestEffort> = best_efforts(&s);
    let durs: Vec<f64> = all.iter().map(|e| e.duration_s).collect();
    assert_eq!(durs, DURATIONS_S[..5].to_vec());
    // Without them the whole 40 min is one stretch.
    s.flags.clear();
    s.pauses.clear();
    let durs: Vec<f64> = best_efforts(&s).iter().map(|e| e.duration_s).collect();
    assert_eq!(durs, DURATIONS_S[..7].to_vec());
    close(best_efforts_for(&s, &[60.0])[0].speed_mps, 6.0, 1e-9);
}

#[test]
fn speed_only_sessions_integrate_speed() {
    let mut s = session_1hz(900, |t| if t > 300.0 && t <= 600.0 { 5.0 } else { 3.0 });
    s.distance = None;
    let be = best_efforts_for(&s, &[300.0]);
    close(be[0].speed_mps, 5.0, 1e-9);
    close(be[0].start_s, 300.0, 1e-9);
}
