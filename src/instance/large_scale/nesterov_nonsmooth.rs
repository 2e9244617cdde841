//! The nonsmooth worst-case function of Nesterov, Introductory Lectures on Convex
//! Optimization, 2004, Thm 3.2.1 (docs/theory.md §3):
//!
//! f(x) = gamma max_{i <= k+1} x_i + (mu/2) ||x||^2,
//! gamma = sqrt(k+1) M / (2 + sqrt(k+1)), mu = M / ((2 + sqrt(k+1)) R).
//!
//! Minimiser x*_i = -gamma / (mu (k+1)) for i <= k + 1 (zero beyond), so ||x*|| = R, and
//! f* = -gamma^2 / (2 mu (k+1)) = -M R / (2 (2 + sqrt(k+1))) \[derived\]. Subgradients
//! gamma e_i + mu x have norm at most gamma + 2 mu R = M on ||x|| <= 2R, which contains
//! B(x*, R): f is in the class P(x_0 = 0, R, M).
//!
//! Oracle: the subgradient uses the lowest index attaining the max. Bound demonstrated:
//! a span method's x_0..x_k have coordinate k + 1 equal to zero, so f >= 0 there and
//! f(x_i) - f* >= M R / (2 (2 + sqrt(k+1))) for every i <= k, for k <= d - 1.

use crate::error::Error;
use crate::instance::large_scale::{Function, KnownFunction};

/// Nesterov's nonsmooth function for horizon k.
#[derive(Clone, Debug)]
pub struct NesterovNonsmooth {
    dim: usize,
    pieces: usize,
    gamma: f64,
    mu: f64,
    lipschitz: f64,
    radius: f64,
}

impl NesterovNonsmooth {
    /// The function for horizon k in R^d (needs d >= k + 1).
    pub fn new(dim: usize, lipschitz: f64, radius: f64, horizon: usize) -> Result<Self, Error> {
        let pieces = horizon + 1;
        if dim < pieces {
            return Err(Error::DimensionTooSmall {
                dim,
                needed: pieces,
                what: format!("Nesterov's nonsmooth function for k = {horizon} (Thm 3.2.1)"),
            });
        }
        let root = (pieces as f64).sqrt();
        Ok(NesterovNonsmooth {
            dim,
            pieces,
            gamma: root * lipschitz / (2.0 + root),
            mu: lipschitz / ((2.0 + root) * radius),
            lipschitz,
            radius,
        })
    }

    /// The published lower bound: M R / (2 (2 + sqrt(k+1))).
    pub fn bound(&self) -> f64 {
        lower_bound(self.lipschitz, self.radius, (self.pieces - 1) as f64)
    }
}

/// Nesterov 2004, Thm 3.2.1: M R / (2 (2 + sqrt(k+1))).
pub fn lower_bound(lipschitz: f64, radius: f64, queries: f64) -> f64 {
    lipschitz * radius / (2.0 * (2.0 + (queries + 1.0).sqrt()))
}

impl Function for NesterovNonsmooth {
    fn name(&self) -> &str {
        "nesterov-nonsmooth"
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
        let norm2 = crate::geometry::basis::dot(x, x);
        for (g, xi) in gradient.iter_mut().zip(x) {
            *g = self.mu * xi;
        }
        gradient[best] += self.gamma;
        self.gamma * x[best] + 0.5 * self.mu * norm2
    }
}

impl KnownFunction for NesterovNonsmooth {
    fn optimal_value(&self) -> f64 {
        -self.gamma * self.gamma / (2.0 * self.mu * self.pieces as f64)
    }
    fn minimiser(&self) -> Vec<f64> {
        let mut x = vec![-self.gamma / (self.mu * self.pieces as f64); self.pieces];
        x.resize(self.dim, 0.0);
        x
    }
    fn gap(&self, x: &[f64]) -> f64 {
        let mut scratch = vec![0.0; self.dim];
        let value = self.evaluate(x, &mut scratch);
        value - self.optimal_value()
    }
}
