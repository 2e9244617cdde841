//! The smooth worst-case chain of Nesterov, Introductory Lectures on Convex
//! Optimization, 2004, Thm 2.1.7 (docs/theory.md §3):
//!
//! f(x) = (beta/4) [ (1/2)(x_1^2 + sum_{i=1}^{2k} (x_i - x_{i+1})^2 + x_{2k+1}^2) - s x_1 ],
//!
//! a [`Chain`] of length p = 2k + 1 with coupling c = beta/4 and mu = 0, so it is convex
//! and beta-smooth on R^d for any d >= 2k + 1. The shift s (s = 1 in the book) scales the
//! minimiser to ||x*|| = R; the theorem's bound is invariant under that scaling
//! (s^2 f(x/s) keeps the Hessian and multiplies both sides by s^2).
//!
//! Bound demonstrated: every method whose iterates stay in x_0 + span of the past
//! gradients has f(x_k) - f* >= 3 beta ||x_0 - x*||^2 / (32 (k+1)^2) after k queries
//! (x_k has zeros beyond coordinate k, where f is at least the minimum of the k-chain).

use crate::error::Error;
use crate::instance::large_scale::Chain;
use crate::instance::large_scale::{Function, KnownFunction};

/// Nesterov's smooth chain for horizon k.
#[derive(Clone, Debug)]
pub struct SmoothChain {
    chain: Chain,
    smoothness: f64,
    radius: f64,
    horizon: usize,
}

impl SmoothChain {
    /// The chain of length 2k + 1 in R^d, beta-smooth, with ||x*|| = R.
    pub fn new(dim: usize, smoothness: f64, radius: f64, horizon: usize) -> Result<Self, Error> {
        let length = 2 * horizon + 1;
        if dim < length {
            return Err(Error::DimensionTooSmall {
                dim,
                needed: length,
                what: format!("the smooth chain for k = {horizon} (Nesterov 2004 Thm 2.1.7)"),
            });
        }
        let p = length as f64;
        // ||z||^2 for s = 1: sum_{i=1}^p (1 - i/(p+1))^2 = p (2p + 1) / (6 (p + 1)).
        let unit_norm = (p * (2.0 * p + 1.0) / (6.0 * (p + 1.0))).sqrt();
        let coupling = smoothness / 4.0;
        let chain = Chain::new(
            dim,
            length,
            coupling,
            0.0,
            radius / unit_norm,
            "smooth-chain",
        )?;
        Ok(SmoothChain {
            chain,
            smoothness,
            radius,
            horizon,
        })
    }

    /// The horizon k.
    pub fn horizon(&self) -> usize {
        self.horizon
    }

    /// The published lower bound after k queries: 3 beta R^2 / (32 (k+1)^2).
    pub fn bound(&self) -> f64 {
        lower_bound(self.smoothness, self.radius, self.horizon as f64)
    }
}

/// Nesterov 2004, Thm 2.1.7: 3 beta R^2 / (32 (k+1)^2).
pub fn lower_bound(smoothness: f64, radius: f64, queries: f64) -> f64 {
    3.0 * smoothness * radius * radius / (32.0 * (queries + 1.0) * (queries + 1.0))
}

impl Function for SmoothChain {
    fn name(&self) -> &str {
        "smooth-chain"
    }
    fn dim(&self) -> usize {
        self.chain.dim()
    }
    fn evaluate(&self, x: &[f64], gradient: &mut [f64]) -> f64 {
        self.chain.evaluate(x, gradient)
    }
}

impl KnownFunction for SmoothChain {
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
