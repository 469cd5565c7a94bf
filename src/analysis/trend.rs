//! Straight-line trends by ordinary least squares (y on x).
//!
//! Used for the history trends, the ruler on the chart, HR drift and the critical-speed fit.
//! Source: the textbook ordinary-least-squares estimator, `slope = Sxy / Sxx`,
//! `intercept = ȳ - slope·x̄`, `R² = Sxy² / (Sxx·Syy)` (methods.md §6 uses the same form).

/// A fitted straight line `y = slope·x + intercept`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Fit {
    /// Change of y per unit of x.
    pub slope: f64,
    /// Value of y at x = 0.
    pub intercept: f64,
    /// Coefficient of determination in [0, 1]. 1 for a perfect fit, including the case where
    /// every y is equal (zero y-variance: the flat line explains the data exactly).
    pub r2: f64,
    /// Number of (x, y) pairs used.
    pub n: usize,
    /// Smallest x used.
    pub x_min: f64,
    /// Largest x used.
    pub x_max: f64,
}

/// Which way a fitted trend goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Direction {
    /// The fitted change over the whole set is above the flat threshold.
    Rising,
    /// The fitted change over the whole set is below minus the flat threshold.
    Falling,
    /// The fitted change is within the flat threshold either way.
    Flat,
}

impl Direction {
    /// Lowercase name for screens and JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            Direction::Rising => "rising",
            Direction::Falling => "falling",
            Direction::Flat => "flat",
        }
    }
}

impl Fit {
    /// The fitted y at `x`.
    pub fn predict(&self, x: f64) -> f64 {
        self.slope * x + self.intercept
    }

    /// Observed minus fitted: `y - predict(x)`.
    pub fn residual(&self, x: f64, y: f64) -> f64 {
        y - self.predict(x)
    }

    /// The fitted change of y from the first to the last x: `slope·(x_max - x_min)`.
    pub fn change(&self) -> f64 {
        self.slope * (self.x_max - self.x_min)
    }

    /// Rising, falling or flat: compares [`Fit::change`] with `flat_threshold` (in y units;
    /// its absolute value is used, and a non-finite threshold counts as 0).
    pub fn direction(&self, flat_threshold: f64) -> Direction {
        let thr = if flat_threshold.is_finite() {
            flat_threshold.abs()
        } else {
            0.0
        };
        let c = self.change();
        if c > thr {
            Direction::Rising
        } else if c < -thr {
            Direction::Falling
        } else {
            Direction::Flat
        }
    }
}

/// Least-squares line through the pairs `(xs[k], ys[k])`.
///
/// Pairs beyond the shorter slice, and pairs with a non-finite value, are ignored.
/// `None` for fewer than 2 usable pairs or when every x is equal (zero x-variance).
/// Computed with centred sums (two passes) for numerical stability.
pub fn fit(xs: &[f64], ys: &[f64]) -> Option<Fit> {
    let pairs = || {
        xs.iter()
            .zip(ys.iter())
            .filter(|(x, y)| x.is_finite() && y.is_finite())
            .map(|(&x, &y)| (x, y))
    };
    let (mut n, mut sx, mut sy) = (0usize, 0.0, 0.0);
    let (mut x_min, mut x_max) = (f64::INFINITY, f64::NEG_INFINITY);
    for (x, y) in pairs() {
        n += 1;
        sx += x;
        sy += y;
        x_min = x_min.min(x);
        x_max = x_max.max(x);
    }
    if n < 2 {
        return None;
    }
    let (mx, my) = (sx / n as f64, sy / n as f64);
    let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
    for (x, y) in pairs() {
        let (dx, dy) = (x - mx, y - my);
        sxx += dx * dx;
        sxy += dx * dy;
        syy += dy * dy;
    }
    if !sxx.is_finite() || sxx <= 0.0 {
        return None;
    }
    let slope = sxy / sxx;
    let intercept = my - slope * mx;
    let r2 = if syy > 0.0 {
        (sxy * sxy / (sxx * syy)).clamp(0.0, 1.0)
    } else {
        1.0
    };
    Some(Fit {
        slope,
        intercept,
        r2,
        n,
        x_min,
        x_max,
    })
}
