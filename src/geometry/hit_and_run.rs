//! Hit-and-run sampling of a polytope model (Smith, "Efficient Monte Carlo procedures
//! for generating points uniformly distributed over bounded regions", Oper. Res. 32(6),
//! 1984; mixing analysed by Lovasz, "Hit-and-run mixes fast", Math. Program. 86, 1999).
//!
//! One step from a point x strictly inside P: draw a direction u uniform on the unit
//! sphere (a standard Gaussian vector, normalised: Muller, Comm. ACM 2(4), 1959; the
//! Gaussians by the Box-Muller transform, Ann. Math. Statist. 29(2), 1958), find the
//! chord {x + t u : t_min <= t <= t_max} of P by the ratio test over every row (for a row
//! with slack s = b - a.x and rate r = a.u: t <= s / r when r > 0, t >= s / r when r < 0),
//! and move to x + t u with t uniform on [t_min, t_max]. The uniform distribution on P is
//! stationary. The generator is ChaCha8 seeded by a `u64`, so runs repeat exactly on one
//! platform (`ln`, `cos` and `sin` are not correctly rounded, so bits may differ
//! between platforms).

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::error::Error;
use crate::geometry::polytope::{dot, Polytope};

/// A seeded hit-and-run walker in a [`Polytope`]; it owns its generator and scratch.
#[derive(Clone, Debug)]
pub struct HitAndRun {
    rng: ChaCha8Rng,
    direction: Vec<f64>,
    /// Second Box-Muller deviate, kept for the next draw.
    spare: Option<f64>,
}

impl HitAndRun {
    /// A walker for dimension `dim` with generator seed `seed`.
    pub fn new(dim: usize, seed: u64) -> HitAndRun {
        HitAndRun {
            rng: ChaCha8Rng::seed_from_u64(seed),
            direction: vec![0.0; dim],
            spare: None,
        }
    }

    /// One standard normal deviate (Box-Muller: sqrt(-2 ln u1) (cos, sin)(2 pi u2)).
    fn gaussian(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        // u1 in (0, 1] so the logarithm is finite.
        let u1 = 1.0 - self.rng.random::<f64>();
        let u2: f64 = self.rng.random();
        let radius = (-2.0 * u1.ln()).sqrt();
        let angle = std::f64::consts::TAU * u2;
        self.spare = Some(radius * angle.sin());
        radius * angle.cos()
    }

    /// Draws a direction uniform on the unit sphere into the walker's scratch.
    fn draw_direction(&mut self) {
        loop {
            for j in 0..self.direction.len() {
                self.direction[j] = self.gaussian();
            }
            let norm = dot(&self.direction, &self.direction).sqrt();
            if norm > 1e-150 {
                self.direction.iter_mut().for_each(|u| *u /= norm);
                return;
            }
        }
    }

    /// The chord `[t_min, t_max]` of `polytope` through `point` along `direction`, by the
    /// ratio test over the box rows and every dense row; `None` when it is empty or not
    /// finite (a point on or outside the boundary, in rounding).
    pub fn chord(polytope: &Polytope, point: &[f64], direction: &[f64]) -> Option<(f64, f64)> {
        let d = polytope.dim();
        if point.len() != d || direction.len() != d {
            return None;
        }
        let (mut t_min, mut t_max) = (f64::NEG_INFINITY, f64::INFINITY);
        let mut limit = |slack: f64, rate: f64| {
            if rate > 0.0 {
                t_max = t_max.min(slack / rate);
            } else if rate < 0.0 {
                t_min = t_min.max(slack / rate);
            }
        };
        let (lower, upper) = (polytope.lower(), polytope.upper());
        for j in 0..point.len() {
            limit(upper[j] - point[j], direction[j]);
            limit(point[j] - lower[j], -direction[j]);
        }
        for i in 0..polytope.num_rows() {
            let row = polytope.row(i);
            limit(polytope.offset(i) - dot(row, point), dot(row, direction));
        }
        (t_min <= t_max && t_min.is_finite() && t_max.is_finite()).then_some((t_min, t_max))
    }

    /// One hit-and-run step from `point` (updated in place). A degenerate chord leaves
    /// the point where it is.
    pub fn step(&mut self, polytope: &Polytope, point: &mut [f64]) {
        self.draw_direction();
        if let Some((t_min, t_max)) = HitAndRun::chord(polytope, point, &self.direction) {
            let u: f64 = self.rng.random();
            let t = t_min + u * (t_max - t_min);
            for (x, d) in point.iter_mut().zip(&self.direction) {
                *x += t * d;
            }
        }
    }

    /// Walks from `start` (which must be strictly inside `polytope`): `burn_in` steps,
    /// then `count` samples taken every `thin` steps; writes their mean into `mean`.
    pub fn sample_mean(
        &mut self,
        polytope: &Polytope,
        start: &[f64],
        burn_in: usize,
        thin: usize,
        count: usize,
        mean: &mut [f64],
    ) -> Result<(), Error> {
        let fail = |reason: String| Error::MethodFailed {
            method: "hit-and-run".into(),
            reason,
        };
        if count == 0 || thin == 0 {
            return Err(fail(
                "needs at least one sample and one step per sample".into(),
            ));
        }
        if start.len() != polytope.dim() || mean.len() != polytope.dim() {
            return Err(fail("start or output has the wrong dimension".into()));
        }
        if !polytope.contains_strictly(start) {
            return Err(fail(
                "the start point is not strictly inside the polytope".into(),
            ));
        }
        let mut point = start.to_vec();
        for _ in 0..burn_in {
            self.step(polytope, &mut point);
        }
        mean.iter_mut().for_each(|m| *m = 0.0);
        for _ in 0..count {
            for _ in 0..thin {
                self.step(polytope, &mut point);
            }
            for (m, x) in mean.iter_mut().zip(&point) {
                *m += x;
            }
        }
        let inv = 1.0 / count as f64;
        mean.iter_mut().for_each(|m| *m *= inv);
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::Exact;
    use crate::geometry::polygon::Polygon;
    use crate::oracle::{Cut, Normal};

    #[test]
    fn directions_are_unit_and_chords_stay_inside() {
        let mut p = Polytope::cube(3, 1.0);
        p.add_cut(&Cut {
            normal: Normal::Dense(vec![1.0, 2.0, -0.5]),
            offset: Exact::Float(0.7),
        })
        .unwrap();
        let mut walker = HitAndRun::new(3, 1);
        let mut x = vec![0.0; 3];
        for _ in 0..2000 {
            walker.step(&p, &mut x);
            let norm = dot(&walker.direction, &walker.direction);
            assert!((norm - 1.0).abs() < 1e-12);
            assert!(p.contains(&x), "{x:?} left the polytope");
        }
    }

    #[test]
    fn sample_mean_of_a_box_is_its_centre() {
        // The uniform distribution is stationary for hit-and-run (Smith 1984), so the
        // sample mean tends to the centroid; the tolerance is loose (common practice, no
        // source) and the seed fixed.
        let mut p = Polytope::cube(3, 1.0);
        p.add_cut(&Cut {
            normal: Normal::axis(2, true),
            offset: Exact::Float(0.0),
        })
        .unwrap();
        let mut walker = HitAndRun::new(3, 42);
        let mut mean = vec![0.0; 3];
        walker
            .sample_mean(&p, &[0.1, -0.2, -0.5], 100, 3, 20_000, &mut mean)
            .unwrap();
        let centre = [0.0, 0.0, -0.5];
        for j in 0..3 {
            assert!((mean[j] - centre[j]).abs() < 0.03, "{mean:?}");
        }
    }

    #[test]
    fn sample_mean_of_a_triangle_matches_the_polygon_centroid() {
        // Cross-check of two independent computations: the walk in the triangle
        // x >= 0, y >= 0, 3x + y <= 1.5 against the shoelace centroid.
        let mut p = Polytope::cube(2, 1.0);
        for cut in [
            Cut {
                normal: Normal::axis(0, false),
                offset: Exact::Float(0.0),
            },
            Cut {
                normal: Normal::axis(1, false),
                offset: Exact::Float(0.0),
            },
            Cut {
                normal: Normal::Dense(vec![3.0, 1.0]),
                offset: Exact::Float(1.5),
            },
        ] {
            p.add_cut(&cut).unwrap();
        }
        let mut polygon = Polygon::from_box([-1.0, -1.0], [1.0, 1.0]);
        polygon.clip([-1.0, 0.0], 0.0);
        polygon.clip([0.0, -1.0], 0.0);
        polygon.clip([3.0, 1.0], 1.5);
        let c = polygon.centroid().unwrap();
        let mut walker = HitAndRun::new(2, 9);
        let mut mean = vec![0.0; 2];
        walker
            .sample_mean(&p, &[0.1, 0.1], 100, 2, 20_000, &mut mean)
            .unwrap();
        assert!(
            (mean[0] - c[0]).abs() < 0.01 && (mean[1] - c[1]).abs() < 0.02,
            "{mean:?} vs {c:?}"
        );
    }

    #[test]
    fn a_start_outside_is_an_error() {
        let p = Polytope::cube(2, 1.0);
        let mut walker = HitAndRun::new(2, 0);
        let mut mean = vec![0.0; 2];
        assert!(walker
            .sample_mean(&p, &[1.0, 0.0], 1, 1, 1, &mut mean)
            .is_err());
        assert!(walker
            .sample_mean(&p, &[0.0, 0.0], 1, 1, 0, &mut mean)
            .is_err());
    }
}
