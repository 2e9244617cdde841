//! The strongly convex worst-case chain of Nesterov, Introductory Lectures on Convex
//! Optimization, 2004, Thm 2.1.13 (docs/theory.md §3):
//!
//! f(x) = ((beta - mu)/8) [x_1^2 + sum (x_i - x_{i+1})^2 - 2 s x_1] + (mu/2) ||x||^2,
//!
//! truncated to a [`Chain`] of length p = 2k + 1 (coupling c = (beta - mu)/4), so f is
//! mu-strongly convex and beta-smooth. The book states the bound in infinite dimension;
//! docs/theory.md §3 records that it holds at p = 2k + 1 (checked there in high precision at
//! Q = 10, k = 60; the test suite checks it again for the k it uses).
//!
//! Bound demonstrated: every span method has f(x_k) - f* >= (mu/2) q^(2k) ||x_0 - x*||^2
//! after k queries, q = (sqrt(Q) - 1)/(sqrt(Q) + 1), Q = beta/mu. The gap is evaluated
//! as (1/2)(x - x*)^T H (x - x*) with the closed-form minimiser (no subtraction of
//! values); keep k where (mu/2) q^(2k) R^2 is far above the rounding of the minimiser,
//! about 1e-16 beta R^2 (docs/theory.md §3).

use crate::error::Error;
use crate::instance::large_scale::Chain;
use crate::instance::large_scale::{Function, KnownFunction};

/// Nesterov's strongly convex chain for horizon k.
#[derive(Clone, Debug)]
pub struct StronglyConvexChain {
    chain: Chain,
    smoothness: f64,
    strong_convexity: f64,
    radius: f64,
    horizon: usize,
}

impl StronglyConvexChain {
    /// The chain of length 2k + 1 in R^d with ||x*|| = R.
    pub fn new(
        dim: usize,
        smoothness: f64,
        strong_convexity: f64,
        radius: f64,
        horizon: usize,
    ) -> Result<Self, Error> {
        let length = 2 * horizon + 1;
        if dim < length {
            return Err(Error::DimensionTooSmall {
                dim,
                needed: length,
                what: format!(
                    "the strongly convex chain for k = {horizon} (Nesterov 2004 Thm 2.1.13)"
                ),
            });
        }
        let coupling = (smoothness - strong_convexity) / 4.0;
        let unit = Chain::unit_minimiser(length, coupling, strong_convexity);
        let unit_norm = crate::geometry::basis::norm(&unit);
        let chain = Chain::new(
            dim,
            length,
            coupling,
            strong_convexity,
            radius / unit_norm,
            "strongly-convex-chain",
        )?;
        Ok(StronglyConvexChain {
            chain,
            smoothness,
            strong_convexity,
            radius,
            horizon,
        })
    }

    /// The horizon k.
    pub fn horizon(&self) -> usize {
        self.horizon
    }

    /// The published lower bound after k queries: (mu/2) q^(2k) R^2.
    pub fn bound(&self) -> f64 {
        lower_bound(
            self.smoothness,
            self.strong_convexity,
            self.radius,
            self.horizon as f64,
        )
    }

    /// The chain's q, computed from its own recurrence (equal to
    /// (sqrt(Q) - 1)/(sqrt(Q) + 1) up to rounding).
    pub fn ratio(&self) -> f64 {
        self.chain.ratio()
    }
}

/// Nesterov 2004, Thm 2.1.13: (mu/2) q^(2k) R^2, q = (sqrt(Q) - 1)/(sqrt(Q) + 1).
pub fn lower_bound(smoothness: f64, strong_convexity: f64, radius: f64, queries: f64) -> f64 {
    let root = (smoothness / strong_convexity).sqrt();
    let q = (root - 1.0) / (root + 1.0);
    0.5 * strong_convexity * (2.0 * queries * q.ln()).exp() * radius * radius
}

impl Function for StronglyConvexChain {
    fn name(&self) -> &str {
        "strongly-convex-chain"
    }
    fn dim(&self) -> usize {
        self.chain.dim()
    }
    fn evaluate(&self, x: &[f64], gradient: &mut [f64]) -> f64 {
        self.chain.evaluate(x, gradient)
    }
}

impl KnownFunction for StronglyConvexChain {
    fn optimal_value(&self) -> f64 {
        self.chain.optimal_value()
    }
    fn minimiser(&self) -> Vec<f64> {
        self.chain.minimiser()
    }
    fn gap(&self, x: &[f64]) -> f64 {
        self.chain.gap(x)
    }
}
