//! The tight nonsmooth function of Drori & Teboulle, "An optimal variant of Kelley's
//! cutting-plane method", Math. Program. 160, 2016 (docs/theory.md §3):
//!
//! f(x) = M max{ max_{i <= N+1} x_i, ||x|| - R (1 + 1/sqrt(N+1)) }.
//!
//! f is convex and M-Lipschitz on all of R^d (d >= N + 1). Minimiser \[derived\]:
//! x* = -(R/sqrt(N+1)) (e_1 + ... + e_{N+1}), where both parts equal -R/sqrt(N+1) and
//! 0 lies in the convex hull of their subgradients; ||x*|| = R and
//! f* = -M R / sqrt(N+1).
//!
//! Oracle: the max part wins ties with the norm part; within the max, the lowest index.
//! Bound demonstrated: a span method's x_0..x_N each have a zero among the first N + 1
//! coordinates, so f >= 0 there and the gap is at least M R / sqrt(N+1); the subgradient
//! method with step R / (M sqrt(N+1)) from x_0 = 0 meets it exactly (its iterates are
//! x_k = -(R/sqrt(N+1)) (e_1 + ... + e_k), all with f = 0).

use crate::error::Error;
use crate::instance::large_scale::{Function, KnownFunction};

/// The Drori-Teboulle function for N steps.
#[derive(Clone, Debug)]
pub struct DroriTeboulle {
    dim: usize,
    pieces: usize,
    lipschitz: f64,
    radius: f64,
}

impl DroriTeboulle {
    /// The function for N steps (N + 1 pieces) in R^d (needs d >= N + 1).
    pub fn new(dim: usize, lipschitz: f64, radius: f64, steps: usize) -> Result<Self, Error> {
        let pieces = steps + 1;
        if dim < pieces {
            return Err(Error::DimensionTooSmall {
                dim,
                needed: pieces,
                what: format!("the Drori-Teboulle function for N = {steps}"),
            });
        }
        Ok(DroriTeboulle {
            dim,
            pieces,
            lipschitz,
            radius,
        })
    }

    /// The published bound M R / sqrt(N+1).
    pub fn bound(&self) -> f64 {
        lower_bound(self.lipschitz, self.radius, (self.pieces - 1) as f64)
    }

    /// R (1 + 1/sqrt(N+1)): the offset of the norm part.
    fn offset(&self) -> f64 {
        self.radius * (1.0 + 1.0 / (self.pieces as f64).sqrt())
    }
}

/// Drori & Teboulle 2016: M R / sqrt(N+1) after N + 1 points.
pub fn lower_bound(lipschitz: f64, radius: f64, steps: f64) -> f64 {
    lipschitz * radius / (steps + 1.0).sqrt()
}

impl Function for DroriTeboulle {
    fn name(&self) -> &str {
        "drori-teboulle"
    }
    fn dim(&self) -> usize {
        self.dim
    }
    fn evaluate(&self, x: &[f64], gradient: &mut [f64]) -> f64 {
        let mut best = 0;
        for i in 1..self.pieces {
            if x[i] > x[best] {
                best = i;
            }
        }
        let norm = crate::geometry::basis::norm(x);
        let norm_part = norm - self.offset();
        if x[best] >= norm_part {
            gradient.iter_mut().for_each(|g| *g = 0.0);
            gradient[best] = self.lipschitz;
            self.lipschitz * x[best]
        } else {
            for (g, xi) in gradient.iter_mut().zip(x) {
                *g = self.lipschitz * xi / norm;
            }
            self.lipschitz * norm_part
        }
    }
}

impl KnownFunction for DroriTeboulle {
    fn optimal_value(&self) -> f64 {
        -self.lipschitz * self.radius / (self.pieces as f64).sqrt()
    }
    fn minimiser(&self) -> Vec<f64> {
        let mut x = vec![-self.radius / (self.pieces as f64).sqrt(); self.pieces];
        x.resize(self.dim, 0.0);
        x
    }
    fn gap(&self, x: &[f64]) -> f64 {
        let mut scratch = vec![0.0; self.dim];
        let value = self.evaluate(x, &mut scratch);
        value - self.optimal_value()
    }
}
