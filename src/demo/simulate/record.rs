//! From the true run to what a device records: sampling, sensor noise, faults, laps, and
//! the truth at the recorded sample times.

// Generated data only (never a file's contents): every index is into arrays this module
// built to the run's own length, and the output is pinned byte for byte by
// tests/demo_regenerate.rs, so the indexing is kept as written rather than rewritten.
#![allow(clippy::indexing_slicing)]

use chrono::Duration;

use super::engine::{stream, Track};
use super::physiology::Physio;
use super::terrain::RoutePath;
use super::{
    GpsNoise, Sampling, SimInput, SimOutput, SteadyPart, TrueInterval, Truth, MOVING_SPEED_MPS,
};
use crate::analysis::gradient::flat_equivalent_speed;
use crate::demo::rng::Rng;
use crate::model::{Amount, Channel, DeviceLap, Pause, SegmentKind, Session};

// Sensor noise. Our own choices, sized like consumer devices (From memory).
/// Speed noise, standard deviation as a fraction of speed (independent per second). Zero
/// when stationary: a device standing still reports 0.
const SPEED_NOISE_FRAC: f64 = 0.012;
/// HR noise: AR(1), standard deviation bpm and lag-1 correlation.
const HR_NOISE_SD: f64 = 1.0;
const HR_NOISE_PHI: f64 = 0.7;
/// Barometric altitude noise: standard deviation 0.5 m, a smooth slow wander (AR(1) of
/// 120 s correlation time through a 20 s filter), so summed climb on flat ground stays small.
const ALT_NOISE_SD: f64 = 0.5;
const ALT_NOISE_CORR_S: f64 = 120.0;
const ALT_NOISE_SMOOTH_S: f64 = 20.0;
/// GPS position noise per axis: standard deviation 2.5 m, an AR(1) of 30 s correlation time
/// smoothed by a 10 s first-order filter (From memory: consumer GPS errors of a few metres
/// that wander slowly). The smoothing keeps the second-to-second steps of the error small,
/// so distance summed from the positions is within about 1 % of the true distance; white
/// or plain AR(1) error of the same size inflates it by several per cent.
const GPS_NOISE_SD: f64 = 2.5;
const GPS_NOISE_CORR_S: f64 = 30.0;
const GPS_NOISE_SMOOTH_S: f64 = 10.0;
/// Standing jitter: applies below this true speed, m/s, faded with this time constant, s.
const STAND_SPEED: f64 = 0.3;
const STAND_FADE_S: f64 = 5.0;
/// Cadence noise, steps/min.
const CADENCE_NOISE_SD: f64 = 1.0;
/// Smart recording: a sample when speed moved by this much (m/s) or HR by this much (bpm)
/// since the last one, or at random with this probability per second.
const SMART_SPEED_STEP: f64 = 0.3;
const SMART_HR_STEP: f64 = 2.5;
const SMART_RANDOM: f64 = 0.1;

/// An AR(1) series of `n` values with the given standard deviation and lag-1 correlation.
fn ar1(rng: &mut Rng, n: usize, sd: f64, phi: f64) -> Vec<f64> {
    let innov = (1.0 - phi * phi).sqrt() * sd;
    let mut x = rng.normal() * sd;
    (0..n)
        .map(|_| {
            x = phi * x + innov * rng.normal();
            x
        })
        .collect()
}

/// A smooth noise series: a unit AR(1) with correlation time `corr_s` passed through a
/// first-order filter of time constant `smooth_s`, scaled to standard deviation `sd`.
fn smooth_noise(rng: &mut Rng, n: usize, sd: f64, corr_s: f64, smooth_s: f64) -> Vec<f64> {
    let phi = (-1.0 / corr_s).exp();
    let beta = (-1.0 / smooth_s).exp();
    // Stationary variance of the filtered unit AR(1).
    let var =
        (1.0 - beta).powi(2) * (1.0 + phi * beta) / ((1.0 - phi * beta) * (1.0 - beta * beta));
    let scale = sd / var.sqrt();
    let x = ar1(rng, n, 1.0, phi);
    // Start the filter at its stationary spread so the first samples are not special.
    let mut y = rng.normal() * var.sqrt();
    x.iter()
        .map(|&xi| {
            y = beta * y + (1.0 - beta) * xi;
            y * scale
        })
        .collect()
}

/// Choose the recorded seconds.
fn sample_indices(input: &SimInput, tr: &Track) -> Vec<usize> {
    let n = tr.len();
    let mut forced = vec![false; n];
    forced[0] = true;
    forced[n - 1] = true;
    for &(a, b) in tr.bounds.iter().chain(&tr.pauses) {
        forced[a] = true;
        forced[b] = true;
    }
    let mut in_pause = vec![false; n];
    for &(a, b) in &tr.pauses {
        for p in in_pause.iter_mut().take(b).skip(a + 1) {
            *p = true;
        }
    }
    let skip = |k: usize| in_pause[k] && !forced[k];
    match input.conditions.sampling {
        Sampling::EverySecond => (0..n).filter(|&k| !skip(k)).collect(),
        Sampling::Smart { min_s, max_s } => {
            let min_s = min_s.max(1) as usize;
            let max_s = (max_s as usize).max(min_s);
            let mut rng = Rng::with_stream(input.seed, stream::SAMPLING);
            let mut out = vec![0];
            let mut last = 0;
            for (k, &force) in forced.iter().enumerate().skip(1) {
                let draw = rng.uniform();
                if skip(k) {
                    continue;
                }
                let gap = k - last;
                let changed = (tr.speed[k] - tr.speed[last]).abs() > SMART_SPEED_STEP
                    || (tr.hr[k] - tr.hr[last]).abs() >= SMART_HR_STEP
                    || draw < SMART_RANDOM;
                if force || gap >= max_s || (gap >= min_s && changed) {
                    out.push(k);
                    last = k;
                }
            }
            out
        }
    }
}

/// Time-weighted mean of `vals` over sample positions `a..=b`, skipping pause gaps.
fn weighted_mean(
    t: &[f64],
    vals: &[f64],
    a: usize,
    b: usize,
    is_pause: &dyn Fn(usize) -> bool,
) -> f64 {
    if b <= a {
        return vals[a];
    }
    let (mut num, mut den) = (0.0, 0.0);
    for q in a..b {
        if is_pause(q) {
            continue;
        }
        let dt = t[q + 1] - t[q];
        num += 0.5 * (vals[q] + vals[q + 1]) * dt;
        den += dt;
    }
    if den > 0.0 {
        num / den
    } else {
        vals[a]
    }
}

/// Build the recorded session and the truth.
pub(crate) fn record(input: &SimInput, physio: &Physio, tr: &Track) -> SimOutput {
    let c = &input.conditions;
    let n = tr.len();
    let idx = sample_indices(input, tr);
    let m = idx.len();
    let t: Vec<f64> = idx.iter().map(|&k| k as f64).collect();

    // Per-second noise series, each from its own stream.
    let seed = input.seed;
    let speed_noise = {
        let mut r = Rng::with_stream(seed, stream::SPEED_NOISE);
        (0..n).map(|_| r.normal()).collect::<Vec<_>>()
    };
    let hr_noise = ar1(
        &mut Rng::with_stream(seed, stream::HR_NOISE),
        n,
        HR_NOISE_SD,
        HR_NOISE_PHI,
    );
    let cad_noise = {
        let mut r = Rng::with_stream(seed, stream::CADENCE_NOISE);
        (0..n)
            .map(|_| r.normal() * CADENCE_NOISE_SD)
            .collect::<Vec<_>>()
    };

    let mut speed: Vec<Option<f64>> = idx
        .iter()
        .map(|&k| {
            let v = tr.speed[k];
            Some((v + SPEED_NOISE_FRAC * v * speed_noise[k]).max(0.0))
        })
        .collect();
    let distance: Vec<Option<f64>> = idx.iter().map(|&k| Some(tr.dist[k])).collect();
    let cadence: Vec<Option<f64>> = idx
        .iter()
        .map(|&k| {
            let cad = tr.cadence[k];
            Some(if cad > 0.0 { cad + cad_noise[k] } else { 0.0 })
        })
        .collect();
    let mut hr: Vec<Option<f64>> = idx
        .iter()
        .map(|&k| Some((tr.hr[k] + hr_noise[k]).clamp(physio.hr_rest, physio.hr_max)))
        .collect();

    // Positions and altitude (not on a treadmill), in local metres first.
    let mut local: Option<Vec<(f64, f64)>> = None;
    let mut altitude: Option<Vec<Option<f64>>> = None;
    let route = RoutePath::new(&c.route, c.origin);
    if !c.treadmill {
        let alt_noise = smooth_noise(
            &mut Rng::with_stream(seed, stream::ALTITUDE_NOISE),
            n,
            ALT_NOISE_SD,
            ALT_NOISE_CORR_S,
            ALT_NOISE_SMOOTH_S,
        );
        altitude = Some(
            idx.iter()
                .map(|&k| Some(tr.altitude[k] + alt_noise[k]))
                .collect(),
        );
        let mut r = Rng::with_stream(seed, stream::GPS_NOISE);
        let g = c.gps_noise.unwrap_or(GpsNoise {
            sd_m: GPS_NOISE_SD,
            corr_s: GPS_NOISE_CORR_S,
            smooth_s: GPS_NOISE_SMOOTH_S,
        });
        let mut ge = smooth_noise(&mut r, n, g.sd_m, g.corr_s, g.smooth_s);
        let mut gn = smooth_noise(&mut r, n, g.sd_m, g.corr_s, g.smooth_s);
        if let Some(j) = c.standing_jitter {
            let mut r = Rng::with_stream(seed, stream::STANDING_JITTER);
            let je = smooth_noise(&mut r, n, j.sd_m, j.corr_s, j.smooth_s);
            let jn = smooth_noise(&mut r, n, j.sd_m, j.corr_s, j.smooth_s);
            // Weight 1 while standing, faded in and out with a 5 s time constant both ways.
            let alpha = 1.0 - (-1.0f64 / STAND_FADE_S).exp();
            let mut w = if tr.speed[0] < STAND_SPEED { 1.0 } else { 0.0 };
            for k in 0..n {
                let goal = if tr.speed[k] < STAND_SPEED { 1.0 } else { 0.0 };
                w += (goal - w) * alpha;
                ge[k] += w * je[k];
                gn[k] += w * jn[k];
            }
        }
        local = Some(
            idx.iter()
                .map(|&k| {
                    let (e, no) = route.local(tr.dist[k]);
                    (e + ge[k], no + gn[k])
                })
                .collect(),
        );
    }

    // Faults.
    let mut frng = Rng::with_stream(seed, stream::FAULTS);
    if let Some(pos) = local.as_mut() {
        if m > 20 {
            for _ in 0..input.faults.gps_jumps {
                let p = 5 + frng.below((m - 13) as u64) as usize;
                let len = frng.int_range(1, 3) as usize;
                let r = frng.range(100.0, 300.0);
                let bearing = frng.range(0.0, std::f64::consts::TAU);
                let (de, dn) = (r * bearing.sin(), r * bearing.cos());
                for fix in pos.iter_mut().skip(p).take(len) {
                    fix.0 += de;
                    fix.1 += dn;
                }
                // The device's speed follows its positions into and out of the jump.
                for q in [p, p + len] {
                    let dist = ((pos[q].0 - pos[q - 1].0).powi(2)
                        + (pos[q].1 - pos[q - 1].1).powi(2))
                    .sqrt();
                    let dt = (t[q] - t[q - 1]).max(1.0);
                    speed[q] = Some(dist / dt);
                }
            }
        }
    }
    if let Some((start, dur)) = input.faults.cadence_lock {
        for (q, &tq) in t.iter().enumerate() {
            if tq >= start && tq <= start + dur {
                if let Some(cad) = cadence[q].filter(|c| *c > 40.0) {
                    hr[q] = Some(cad + 0.5 * frng.normal());
                }
            }
        }
    }
    let total = t.last().copied().unwrap_or(0.0);
    if total > 80.0 {
        for _ in 0..input.faults.hr_dropouts {
            let start = frng.range(30.0, total - 40.0);
            let dur = frng.int_range(5, 30) as f64;
            for (q, &tq) in t.iter().enumerate() {
                if tq >= start && tq <= start + dur {
                    hr[q] = None;
                }
            }
        }
    }

    // Session.
    let mut session = Session::empty(input.format, input.start);
    session.sport = c.sport.clone();
    session.time = idx
        .iter()
        .map(|&k| input.start + Duration::seconds(k as i64))
        .collect();
    session.t = t.clone();
    session.distance = Some(Channel::new(distance));
    session.speed = Some(Channel::new(speed));
    session.hr = Some(Channel::new(hr));
    session.cadence = Some(Channel::new(cadence));
    session.altitude = altitude.map(Channel::new);
    if let Some(pos) = local {
        let (lat, lon): (Vec<_>, Vec<_>) = pos
            .iter()
            .map(|&(e, no)| {
                let (la, lo) = route.to_lat_lon(e, no);
                (Some(la), Some(lo))
            })
            .unzip();
        session.lat = Some(Channel::new(lat));
        session.lon = Some(Channel::new(lon));
    }
    // Position of each second in the recorded samples (boundaries are always recorded).
    let mut pos_of = vec![usize::MAX; n];
    for (q, &k) in idx.iter().enumerate() {
        pos_of[k] = q;
    }
    session.laps = tr
        .bounds
        .iter()
        .zip(&tr.segs)
        .map(|(&(a, b), s)| DeviceLap {
            start_s: a as f64,
            end_s: b as f64,
            trigger: Some(
                match s.amount {
                    Amount::Duration(_) => "time",
                    Amount::Distance(_) => "distance",
                }
                .to_string(),
            ),
        })
        .collect();
    session.pauses = tr
        .pauses
        .iter()
        .zip(&tr.pause_marked)
        .filter(|(_, &marked)| marked)
        .map(|(&(a, b), _)| Pause {
            from_s: a as f64,
            to_s: b as f64,
        })
        .collect();

    // Truth at the recorded samples.
    let true_speed: Vec<f64> = idx.iter().map(|&k| tr.speed[k]).collect();
    let true_hr: Vec<f64> = idx.iter().map(|&k| tr.hr[k]).collect();
    let true_grade: Vec<f64> = idx.iter().map(|&k| tr.grade[k]).collect();
    let pause_start: Vec<bool> = {
        let mut v = vec![false; m];
        for &(a, b) in &tr.pauses {
            let (qa, qb) = (pos_of[a], pos_of[b]);
            if qa != usize::MAX && qb == qa + 1 {
                v[qa] = true;
            }
        }
        v
    };
    let is_pause = |q: usize| pause_start[q];
    let hr_extreme = |a: usize, b: usize, want_max: bool| -> Option<(usize, f64)> {
        let mut best: Option<(usize, f64)> = None;
        for (q, &h) in true_hr.iter().enumerate().take(b + 1).skip(a) {
            let better = match best {
                None => true,
                Some((_, bh)) => {
                    if want_max {
                        h > bh
                    } else {
                        h < bh
                    }
                }
            };
            if better {
                best = Some((q, h));
            }
        }
        best
    };
    let mut intervals = Vec::with_capacity(tr.segs.len());
    for (si, (seg, &(a, b))) in tr.segs.iter().zip(&tr.bounds).enumerate() {
        let (qa, qb) = (pos_of[a], pos_of[b]);
        let paused_s: f64 = tr
            .pauses
            .iter()
            .map(|&(pa, pb)| (pb.min(b) as f64 - pa.max(a) as f64).max(0.0))
            .sum();
        let moving = (b - a) as f64 - paused_s;
        let distance_m = tr.dist[b] - tr.dist[a];
        let mut iv = TrueInterval {
            kind: seg.kind,
            mode: seg.mode,
            repeat: seg.repeat,
            start_s: a as f64,
            end_s: b as f64,
            distance_m,
            avg_speed_mps: if moving > 0.0 {
                distance_m / moving
            } else {
                0.0
            },
            avg_hr: weighted_mean(&t, &true_hr, qa, qb, &is_pause),
            target_speed_mps: seg.base_speed,
            peak_hr_after_s: None,
            peak_hr: None,
            trough_hr: None,
            trough_at_s: None,
        };
        match seg.kind {
            SegmentKind::Work => {
                let q_end = t.partition_point(|&x| x <= b as f64 + 60.0) - 1;
                if let Some((q, h)) = hr_extreme(qb, q_end, true) {
                    iv.peak_hr_after_s = Some(t[q] - b as f64);
                    iv.peak_hr = Some(h);
                }
                if let (Some(next), Some(&(na, nb))) = (tr.segs.get(si + 1), tr.bounds.get(si + 1))
                {
                    if next.kind == SegmentKind::Recovery {
                        if let Some((q, h)) = hr_extreme(pos_of[na], pos_of[nb], false) {
                            iv.trough_hr = Some(h);
                            iv.trough_at_s = Some(t[q]);
                        }
                    }
                }
            }
            SegmentKind::Recovery => {
                if let Some((q, h)) = hr_extreme(qa, qb, false) {
                    iv.trough_hr = Some(h);
                    iv.trough_at_s = Some(t[q]);
                }
            }
            _ => {}
        }
        intervals.push(iv);
    }

    SimOutput {
        session,
        truth: Truth {
            intervals,
            hr_rest: physio.hr_rest,
            hr_max: physio.hr_max,
            threshold_speed_mps: physio.v_threshold,
            speed_mps: true_speed,
            hr_bpm: true_hr,
            grade: true_grade,
            moving_s: moving_steps(tr).iter().filter(|&&m| m).count() as f64,
            distance_m: tr.dist[n - 1] - tr.dist[0],
            steady: steady_part(tr),
        },
    }
}

/// Per 1-s step `k -> k+1`: whether the runner moved (mean true speed at least
/// [`MOVING_SPEED_MPS`] and not inside a pause or gap).
fn moving_steps(tr: &Track) -> Vec<bool> {
    let n = tr.len();
    let mut paused = vec![false; n.saturating_sub(1)];
    for &(a, b) in &tr.pauses {
        for p in paused.iter_mut().take(b).skip(a) {
            *p = true;
        }
    }
    (0..n.saturating_sub(1))
        .map(|k| !paused[k] && 0.5 * (tr.speed[k] + tr.speed[k + 1]) >= MOVING_SPEED_MPS)
        .collect()
}

/// Moving time the steady part leaves out at its start when the run has no warm-up, s.
/// The README's rule: heart rate settles over the first 10 minutes.
const STEADY_SKIP_S: f64 = 600.0;

/// The true steady part (see [`SteadyPart`] for the definitions).
fn steady_part(tr: &Track) -> Option<SteadyPart> {
    let segs = &tr.segs;
    let lead_or_trail = |k: SegmentKind| matches!(k, SegmentKind::Recovery);
    let mut first = 0;
    let mut warmup = false;
    while first < segs.len()
        && (segs[first].kind == SegmentKind::Warmup || lead_or_trail(segs[first].kind))
    {
        warmup |= segs[first].kind == SegmentKind::Warmup;
        first += 1;
    }
    let mut last = segs.len();
    while last > first
        && (segs[last - 1].kind == SegmentKind::Cooldown || lead_or_trail(segs[last - 1].kind))
    {
        last -= 1;
    }
    if last <= first {
        return None;
    }
    let main = &segs[first..last];
    let works = main.iter().filter(|s| s.kind == SegmentKind::Work).count();
    if works > 1
        || main
            .iter()
            .any(|s| !matches!(s.kind, SegmentKind::Work | SegmentKind::Steady))
    {
        return None;
    }
    let (a, b) = (tr.bounds[first].0, tr.bounds[last - 1].1);
    let moving = moving_steps(tr);
    let mut steps: Vec<usize> = (a..b).filter(|&k| moving[k]).collect();
    let mut start = a;
    if !warmup {
        let skip = STEADY_SKIP_S as usize;
        if steps.len() <= skip {
            return None;
        }
        start = steps[skip];
        steps.drain(..skip);
    }
    if steps.len() < 2 {
        return None;
    }
    let half = steps.len() / 2;
    let ef = |ks: &[usize]| {
        let (mut v, mut h) = (0.0, 0.0);
        for &k in ks {
            let vm = 0.5 * (tr.speed[k] + tr.speed[k + 1]);
            v += flat_equivalent_speed(vm, tr.grade[k + 1]);
            h += 0.5 * (tr.hr[k] + tr.hr[k + 1]);
        }
        v / h
    };
    let (ef_first, ef_second) = (ef(&steps[..half]), ef(&steps[half..]));
    Some(SteadyPart {
        start_s: start as f64,
        end_s: b as f64,
        moving_s: steps.len() as f64,
        ef_first,
        ef_second,
        decoupling_pct: (ef_first - ef_second) / ef_first * 100.0,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn smooth_noise_has_requested_spread() {
        let mut r = Rng::new(1);
        let x = smooth_noise(&mut r, 200_000, 2.5, 30.0, 10.0);
        let mean = x.iter().sum::<f64>() / x.len() as f64;
        let sd = (x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / x.len() as f64).sqrt();
        assert!((sd - 2.5).abs() < 0.15, "sd {sd}");
        let step = (x.windows(2).map(|w| (w[1] - w[0]).powi(2)).sum::<f64>()
            / (x.len() - 1) as f64)
            .sqrt();
        assert!(step < 0.2, "step {step}");
    }
}
