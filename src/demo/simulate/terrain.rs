//! Altitude and gradient along the run, and the route the positions follow.

use std::f64::consts::TAU;

use super::{Route, Terrain};
use crate::model::SegmentKind;

/// Altitude of the flat ground, metres. Invented.
pub(crate) const BASE_ALTITUDE_M: f64 = 420.0;

/// Mean earth radius (IUGG), metres.
const EARTH_RADIUS_M: f64 = 6_371_008.8;

/// Terrain with its moving state (how far up the hill the runner is).
#[derive(Debug, Clone)]
pub(crate) struct TerrainState {
    terrain: Terrain,
    /// Hill repeats: distance up the hill from its foot, metres.
    hill_m: f64,
}

impl TerrainState {
    pub fn new(terrain: &Terrain) -> TerrainState {
        let terrain = match terrain {
            Terrain::Profile(points) => {
                let mut p: Vec<(f64, f64)> = points
                    .iter()
                    .copied()
                    .filter(|(d, a)| d.is_finite() && a.is_finite())
                    .collect();
                p.sort_by(|a, b| a.0.total_cmp(&b.0));
                p.dedup_by(|b, a| b.0 == a.0);
                Terrain::Profile(p)
            }
            t => t.clone(),
        };
        TerrainState {
            terrain,
            hill_m: 0.0,
        }
    }

    /// Gradient (rise over run) underfoot at cumulative distance `d` during a segment of
    /// `kind`.
    pub fn grade(&self, d: f64, kind: SegmentKind) -> f64 {
        match &self.terrain {
            Terrain::Flat => 0.0,
            Terrain::Rolling {
                amplitude_m,
                wavelength_m,
            } => {
                if *wavelength_m <= 0.0 {
                    return 0.0;
                }
                amplitude_m * TAU / wavelength_m * (TAU * d / wavelength_m).cos()
            }
            Terrain::Hill { grade } => match kind {
                SegmentKind::Work => grade.abs(),
                SegmentKind::Recovery if self.hill_m > 0.0 => -grade.abs(),
                _ => 0.0,
            },
            Terrain::Downhill { grade, flat_m } => {
                if d < *flat_m {
                    0.0
                } else {
                    -grade.abs()
                }
            }
            Terrain::Profile(p) => {
                let j = p.partition_point(|(x, _)| *x <= d);
                let (Some(&(d0, a0)), Some(&(d1, a1))) =
                    (j.checked_sub(1).and_then(|i| p.get(i)), p.get(j))
                else {
                    return 0.0;
                };
                (a1 - a0) / (d1 - d0)
            }
        }
    }

    /// Move `dd` metres forward from cumulative distance `d` during a segment of `kind`.
    pub fn advance(&mut self, dd: f64, kind: SegmentKind) {
        if let Terrain::Hill { .. } = self.terrain {
            match kind {
                SegmentKind::Work => self.hill_m += dd,
                SegmentKind::Recovery => self.hill_m = (self.hill_m - dd).max(0.0),
                _ => {}
            }
        }
    }

    /// Altitude at cumulative distance `d` (for hill repeats: at the current hill position).
    pub fn altitude(&self, d: f64) -> f64 {
        match &self.terrain {
            Terrain::Flat => BASE_ALTITUDE_M,
            Terrain::Rolling {
                amplitude_m,
                wavelength_m,
            } => {
                if *wavelength_m <= 0.0 {
                    return BASE_ALTITUDE_M;
                }
                BASE_ALTITUDE_M + amplitude_m * (TAU * d / wavelength_m).sin()
            }
            Terrain::Hill { grade } => BASE_ALTITUDE_M + grade.abs() * self.hill_m,
            Terrain::Downhill { grade, flat_m } => {
                BASE_ALTITUDE_M - grade.abs() * (d - flat_m).max(0.0)
            }
            Terrain::Profile(p) => {
                let (Some(first), Some(last)) = (p.first(), p.last()) else {
                    return BASE_ALTITUDE_M;
                };
                let j = p.partition_point(|(x, _)| *x <= d);
                match (j.checked_sub(1).and_then(|i| p.get(i)), p.get(j)) {
                    (None, _) => first.1,
                    (_, None) => last.1,
                    (Some(&(d0, a0)), Some(&(d1, a1))) => a0 + (a1 - a0) * (d - d0) / (d1 - d0),
                }
            }
        }
    }
}

/// A route as a polyline in local metres (east, north) with cumulative lengths.
#[derive(Debug, Clone)]
pub(crate) struct RoutePath {
    pts: Vec<(f64, f64)>,
    cum: Vec<f64>,
    length: f64,
    out_and_back: bool,
    origin: (f64, f64),
}

impl RoutePath {
    /// Build the route. A loop is a smooth, irregular closed curve; an out-and-back is a
    /// gently winding line run out and back again. Both are scaled to the requested length.
    pub fn new(route: &Route, origin: (f64, f64)) -> RoutePath {
        let (shape, length, out_and_back): (Vec<(f64, f64)>, f64, bool) = match *route {
            Route::Loop { length_m } => {
                let n = 720;
                let radius =
                    |th: f64| 1.0 + 0.15 * (3.0 * th + 0.4).sin() + 0.06 * (5.0 * th).cos();
                // Shift so the start of the loop sits on the origin.
                let x0 = 1.35 * radius(0.0);
                let pts = (0..=n)
                    .map(|k| {
                        let th = TAU * k as f64 / n as f64;
                        let r = radius(th);
                        (1.35 * r * th.cos() - x0, r * th.sin())
                    })
                    .collect();
                (pts, length_m.max(50.0), false)
            }
            Route::OutAndBack { length_m } => {
                let n = 400;
                let pts = (0..=n)
                    .map(|k| {
                        let s = k as f64 / n as f64;
                        let (e, nn) = (s, 0.06 * (TAU * 1.5 * s).sin());
                        // Head off to the north-east.
                        (0.8 * e - 0.6 * nn, 0.6 * e + 0.8 * nn)
                    })
                    .collect();
                (pts, length_m.max(50.0), true)
            }
        };
        let mut cum = Vec::with_capacity(shape.len());
        let mut acc = 0.0;
        let mut prev: Option<(f64, f64)> = None;
        for &p in &shape {
            if let Some(q) = prev {
                acc += ((p.0 - q.0).powi(2) + (p.1 - q.1).powi(2)).sqrt();
            }
            cum.push(acc);
            prev = Some(p);
        }
        let scale = length / acc;
        RoutePath {
            pts: shape.iter().map(|&(e, n)| (e * scale, n * scale)).collect(),
            cum: cum.iter().map(|c| c * scale).collect(),
            length,
            out_and_back,
            origin,
        }
    }

    /// Position (east, north) in metres from the origin after `d` metres along the route.
    pub fn local(&self, d: f64) -> (f64, f64) {
        let s = if self.out_and_back {
            let s = d.rem_euclid(2.0 * self.length);
            if s > self.length {
                2.0 * self.length - s
            } else {
                s
            }
        } else {
            d.rem_euclid(self.length)
        };
        let j = self
            .cum
            .partition_point(|c| *c <= s)
            .clamp(1, self.cum.len().saturating_sub(1).max(1));
        let pair = |v: &[(f64, f64)]| Some((*v.get(j - 1)?, *v.get(j)?));
        let (Some(&c0), Some(&c1), Some((p0, p1))) =
            (self.cum.get(j - 1), self.cum.get(j), pair(&self.pts))
        else {
            // A route has at least two points (see `new`).
            return self.pts.first().copied().unwrap_or((0.0, 0.0));
        };
        let f = if c1 > c0 { (s - c0) / (c1 - c0) } else { 0.0 };
        (p0.0 + (p1.0 - p0.0) * f, p0.1 + (p1.1 - p0.1) * f)
    }

    /// Latitude and longitude in degrees of a local (east, north) offset: a spherical offset
    /// from the origin, accurate to well under a metre over a few kilometres.
    pub fn to_lat_lon(&self, east: f64, north: f64) -> (f64, f64) {
        let (lat0, lon0) = self.origin;
        let lat = lat0 + (north / EARTH_RADIUS_M).to_degrees();
        let lon = lon0 + (east / (EARTH_RADIUS_M * lat0.to_radians().cos())).to_degrees();
        (lat, lon)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn loop_closes_and_has_requested_length() {
        let r = RoutePath::new(&Route::Loop { length_m: 2000.0 }, (47.0, 8.0));
        let a = r.local(0.0);
        let b = r.local(2000.0);
        assert!((a.0 - b.0).abs() < 1e-6 && (a.1 - b.1).abs() < 1e-6);
        // Summed chords at 1 m steps match the length.
        let mut len = 0.0;
        let mut p = r.local(0.0);
        for k in 1..=2000 {
            let q = r.local(k as f64);
            len += ((q.0 - p.0).powi(2) + (q.1 - p.1).powi(2)).sqrt();
            p = q;
        }
        assert!((len - 2000.0).abs() < 2.0, "{len}");
    }

    #[test]
    fn out_and_back_returns() {
        let r = RoutePath::new(&Route::OutAndBack { length_m: 1000.0 }, (47.0, 8.0));
        let far = r.local(1000.0);
        assert!((far.0.powi(2) + far.1.powi(2)).sqrt() > 900.0);
        let home = r.local(2000.0);
        assert!(home.0.abs() < 1e-6 && home.1.abs() < 1e-6);
    }

    #[test]
    fn profile_terrain_interpolates() {
        let t = TerrainState::new(&Terrain::Profile(vec![(1000.0, 110.0), (0.0, 100.0)]));
        assert!((t.altitude(500.0) - 105.0).abs() < 1e-9);
        assert!((t.grade(500.0, SegmentKind::Steady) - 0.01).abs() < 1e-12);
        assert_eq!(t.grade(2000.0, SegmentKind::Steady), 0.0);
        assert_eq!(t.altitude(2000.0), 110.0);
    }
}
