//! A seeded random-number source with platform-independent conversions.
//!
//! The bit stream comes from ChaCha8 (`rand_chacha`), which is specified bit for bit, so
//! the same seed gives the same `u64`s on every platform. The conversions to floats are our
//! own and use only exact integer arithmetic and one multiplication, so [`Rng::uniform`] is
//! identical everywhere too. [`Rng::normal`] uses the Box-Muller transform, which calls
//! `ln`, `sqrt`, `cos` and `sin`; those may differ in the last bit across platforms' maths
//! libraries. The simulator's output is quantised by the file writers, so a last-bit
//! difference never reaches a file.

use rand_chacha::ChaCha8Rng;
use rand_core::{RngCore, SeedableRng};

/// 2^-53: the spacing of `f64` values in [0.5, 1).
const TWO_POW_MINUS_53: f64 = 1.0 / 9_007_199_254_740_992.0;

/// A deterministic random-number source.
#[derive(Debug, Clone)]
pub struct Rng {
    inner: ChaCha8Rng,
    /// The second value of the last Box-Muller pair, not yet handed out.
    spare_normal: Option<f64>,
}

impl Rng {
    /// A generator seeded from a single number (stream 0).
    pub fn new(seed: u64) -> Rng {
        Rng::with_stream(seed, 0)
    }

    /// A generator for one of 2^64 independent streams of the same seed. The simulator
    /// gives each part of the model its own stream, so switching one feature on or off does
    /// not shift the numbers every other part draws.
    pub fn with_stream(seed: u64, stream: u64) -> Rng {
        let mut inner = ChaCha8Rng::seed_from_u64(seed);
        inner.set_stream(stream);
        Rng {
            inner,
            spare_normal: None,
        }
    }

    /// The next raw 64 bits.
    pub fn next_u64(&mut self) -> u64 {
        self.inner.next_u64()
    }

    /// Uniform in [0, 1): the top 53 bits scaled by 2^-53.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * TWO_POW_MINUS_53
    }

    /// Uniform in [lo, hi) (returns `lo` when `hi <= lo`).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        if hi <= lo {
            return lo;
        }
        lo + (hi - lo) * self.uniform()
    }

    /// Uniform integer in `0..n` without modulo bias (0 when `n == 0`).
    pub fn below(&mut self, n: u64) -> u64 {
        if n == 0 {
            return 0;
        }
        // Reject the top partial block so every residue is equally likely.
        let zone = u64::MAX - (u64::MAX % n);
        loop {
            let x = self.next_u64();
            if x < zone {
                return x % n;
            }
        }
    }

    /// Uniform integer in `lo..=hi` (returns `lo` when `hi <= lo`).
    pub fn int_range(&mut self, lo: i64, hi: i64) -> i64 {
        if hi <= lo {
            return lo;
        }
        let span = (hi - lo) as u64 + 1;
        lo + self.below(span) as i64
    }

    /// True with probability `p` (clamped to [0, 1]).
    pub fn chance(&mut self, p: f64) -> bool {
        self.uniform() < p.clamp(0.0, 1.0)
    }

    /// Standard normal deviate (mean 0, standard deviation 1), Box-Muller transform.
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare_normal.take() {
            return z;
        }
        // 1 - uniform() lies in (0, 1], so the logarithm is finite.
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        let r = (-2.0 * u1.ln()).sqrt();
        let theta = std::f64::consts::TAU * u2;
        self.spare_normal = Some(r * theta.sin());
        r * theta.cos()
    }

    /// Normal deviate with the given mean and standard deviation.
    pub fn gauss(&mut self, mean: f64, sd: f64) -> f64 {
        mean + sd * self.normal()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_numbers_and_streams_differ() {
        let mut a = Rng::new(42);
        let mut b = Rng::new(42);
        let mut c = Rng::with_stream(42, 1);
        let xa: Vec<u64> = (0..16).map(|_| a.next_u64()).collect();
        let xb: Vec<u64> = (0..16).map(|_| b.next_u64()).collect();
        let xc: Vec<u64> = (0..16).map(|_| c.next_u64()).collect();
        assert_eq!(xa, xb);
        assert_ne!(xa, xc);
    }

    #[test]
    fn uniform_in_unit_interval_with_sane_moments() {
        let mut r = Rng::new(7);
        let n = 100_000;
        let mut sum = 0.0;
        for _ in 0..n {
            let u = r.uniform();
            assert!((0.0..1.0).contains(&u));
            sum += u;
        }
        let mean = sum / n as f64;
        assert!((mean - 0.5).abs() < 0.01, "mean {mean}");
    }

    #[test]
    fn normal_has_mean_zero_sd_one() {
        let mut r = Rng::new(11);
        let n = 100_000;
        let xs: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
        assert!(mean.abs() < 0.02, "mean {mean}");
        assert!((var.sqrt() - 1.0).abs() < 0.02, "sd {}", var.sqrt());
    }

    #[test]
    fn integer_ranges_cover_their_ends() {
        let mut r = Rng::new(3);
        let mut seen = [false; 7];
        for _ in 0..1000 {
            let k = r.int_range(1, 7);
            assert!((1..=7).contains(&k));
            seen[(k - 1) as usize] = true;
        }
        assert!(seen.iter().all(|&s| s));
        assert_eq!(r.below(0), 0);
        assert_eq!(r.int_range(5, 5), 5);
    }

    #[test]
    fn chance_extremes() {
        let mut r = Rng::new(5);
        assert!((0..100).all(|_| !r.chance(0.0)));
        assert!((0..100).all(|_| r.chance(1.0)));
    }
}
