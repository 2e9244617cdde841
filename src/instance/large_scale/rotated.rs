//! The witness of a rotation adversary: the fully specified rotated function it completes
//! at the end of a game, written into the demonstration's final record and replayed
//! against every answer by [`crate::demonstration`].
//!
//! A witness stores its directions u_1..u_p as the exact `f64` numbers the adversary
//! used (JSON numbers written with shortest round-trip formatting, so they read back
//! bit for bit). It is a demonstration, not a certificate: the directions are
//! orthonormal only to rounding, so the replay check compares with a relative tolerance
//! ([`REPLAY_TOLERANCE`]), never exactly, and `naysayer check` does not accept these
//! files.
//!
//! ## Replay tolerance
//! Values are compared relative to the function's natural scale at x: M (R + ||x||) for
//! the rotated max, (4c + mu)(R + ||x||)^2 for the chain. A nonsmooth answer's
//! subgradient must equal, to 1e-12 M, the gradient of a piece whose value at x is within
//! the value tolerance of the max (a hidden direction is orthogonal to the query only to
//! rounding, so a tie may be broken the other way on replay); a chain answer's gradient
//! must equal the witness's gradient to 1e-12 (4c + mu)(R + ||x||).

use serde::{Deserialize, Serialize};

use crate::geometry::basis::{axpy, dot, norm};
use crate::instance::large_scale::chain::{chain_part, Chain};
use crate::instance::large_scale::{Function, KnownFunction};

/// The relative tolerance of a replay: answers must agree with the witness to this
/// fraction of the function's natural scale at the query (the module docs).
pub const REPLAY_TOLERANCE: f64 = 1e-12;

/// A fully specified rotated function.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum RotatedWitness {
    /// f(x) = M max{ max_i <u_i, x>, ||x|| - R (1 + 1/sqrt(p)) }, p directions.
    RotatedMax {
        /// Dimension d.
        dim: usize,
        /// M.
        lipschitz: f64,
        /// R.
        radius: f64,
        /// u_1..u_p.
        directions: Vec<Vec<f64>>,
    },
    /// f(x) = (c/2) z^T A z - c s z_1 + (mu/2) ||x||^2 with z = U^T x.
    RotatedChain {
        /// Dimension d.
        dim: usize,
        /// c.
        coupling: f64,
        /// mu.
        strong_convexity: f64,
        /// s.
        shift: f64,
        /// u_1..u_p.
        directions: Vec<Vec<f64>>,
    },
}

impl RotatedWitness {
    fn directions(&self) -> &[Vec<f64>] {
        match self {
            RotatedWitness::RotatedMax { directions, .. }
            | RotatedWitness::RotatedChain { directions, .. } => directions,
        }
    }

    fn projections(&self, x: &[f64]) -> Vec<f64> {
        self.directions().iter().map(|u| dot(u, x)).collect()
    }

    /// The largest deviation from orthonormality, max |<u_i, u_j> - delta_ij|.
    pub fn orthonormality_error(&self) -> f64 {
        let u = self.directions();
        let mut worst: f64 = 0.0;
        for i in 0..u.len() {
            for j in 0..=i {
                let target = if i == j { 1.0 } else { 0.0 };
                worst = worst.max((dot(&u[i], &u[j]) - target).abs());
            }
        }
        worst
    }

    /// Value scale and gradient scale at x (see the module docs).
    fn scales(&self, x: &[f64]) -> (f64, f64) {
        let r = norm(&self.minimiser());
        let nx = norm(x);
        match self {
            RotatedWitness::RotatedMax { lipschitz, .. } => (lipschitz * (r + nx), *lipschitz),
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                ..
            } => {
                let beta = 4.0 * coupling + strong_convexity;
                (beta * (r + nx) * (r + nx), beta * (r + nx))
            }
        }
    }

    /// Checks one recorded answer; returns (relative value error, relative gradient
    /// error), the latter the smallest over the pieces active within tolerance.
    pub fn check_answer(&self, x: &[f64], value: f64, gradient: &[f64]) -> (f64, f64) {
        let (value_scale, gradient_scale) = self.scales(x);
        match self {
            RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            } => {
                let m = *lipschitz;
                let p = directions.len() as f64;
                let z = self.projections(x);
                let nx = norm(x);
                let norm_part = m * (nx - radius * (1.0 + 1.0 / p.sqrt()));
                let top = z.iter().map(|a| m * a).fold(norm_part, f64::max);
                let value_error = (top - value).abs() / value_scale;
                let active = |piece_value: f64| top - piece_value <= REPLAY_TOLERANCE * value_scale;
                let mut gradient_error = f64::INFINITY;
                for (u, a) in directions.iter().zip(&z) {
                    if active(m * a) {
                        let e: f64 = gradient
                            .iter()
                            .zip(u)
                            .map(|(g, ui)| (g - m * ui) * (g - m * ui))
                            .sum();
                        gradient_error = gradient_error.min(e.sqrt() / gradient_scale);
                    }
                }
                if active(norm_part) && nx > 0.0 {
                    let e: f64 = gradient
                        .iter()
                        .zip(x)
                        .map(|(g, xi)| (g - m * xi / nx) * (g - m * xi / nx))
                        .sum();
                    gradient_error = gradient_error.min(e.sqrt() / gradient_scale);
                }
                (value_error, gradient_error)
            }
            RotatedWitness::RotatedChain { .. } => {
                let mut g = vec![0.0; x.len()];
                let v = self.evaluate(x, &mut g);
                let e: f64 = gradient
                    .iter()
                    .zip(&g)
                    .map(|(a, b)| (a - b) * (a - b))
                    .sum();
                ((v - value).abs() / value_scale, e.sqrt() / gradient_scale)
            }
        }
    }
}

impl Function for RotatedWitness {
    fn name(&self) -> &str {
        match self {
            RotatedWitness::RotatedMax { .. } => "rotated-max",
            RotatedWitness::RotatedChain { .. } => "rotated-chain",
        }
    }

    fn dim(&self) -> usize {
        match self {
            RotatedWitness::RotatedMax { dim, .. } | RotatedWitness::RotatedChain { dim, .. } => {
                *dim
            }
        }
    }

    fn evaluate(&self, x: &[f64], gradient: &mut [f64]) -> f64 {
        let z = self.projections(x);
        match self {
            RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            } => {
                let m = *lipschitz;
                let p = directions.len() as f64;
                let nx = norm(x);
                let norm_part = nx - *radius * (1.0 + 1.0 / p.sqrt());
                let mut best = 0;
                for i in 1..z.len() {
                    if z[i] > z[best] {
                        best = i;
                    }
                }
                if z[best] >= norm_part {
                    for (g, ui) in gradient.iter_mut().zip(&directions[best]) {
                        *g = m * ui;
                    }
                    m * z[best]
                } else {
                    for (g, xi) in gradient.iter_mut().zip(x) {
                        *g = m * xi / nx;
                    }
                    m * norm_part
                }
            }
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                ..
            } => {
                let mut w = Vec::new();
                let value = chain_part(&z, directions.len(), *coupling, *shift, &mut w)
                    + 0.5 * *strong_convexity * dot(x, x);
                for (g, xi) in gradient.iter_mut().zip(x) {
                    *g = *strong_convexity * xi;
                }
                for (wi, u) in w.iter().zip(directions.iter()) {
                    axpy(*wi, u, gradient);
                }
                value
            }
        }
    }
}

impl KnownFunction for RotatedWitness {
    fn optimal_value(&self) -> f64 {
        match self {
            RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            } => -lipschitz * radius / (directions.len() as f64).sqrt(),
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                ..
            } => {
                let z1 = Chain::unit_minimiser(directions.len(), *coupling, *strong_convexity)[0];
                -0.5 * coupling * shift * shift * z1
            }
        }
    }

    fn minimiser(&self) -> Vec<f64> {
        let (weights, dim): (Vec<f64>, usize) = match self {
            RotatedWitness::RotatedMax {
                radius,
                directions,
                dim,
                ..
            } => {
                let p = directions.len();
                (vec![-radius / (p as f64).sqrt(); p], *dim)
            }
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                dim,
            } => (
                Chain::unit_minimiser(directions.len(), *coupling, *strong_convexity)
                    .into_iter()
                    .map(|z| z * shift)
                    .collect(),
                *dim,
            ),
        };
        let mut x = vec![0.0; dim];
        for (w, u) in weights.iter().zip(self.directions()) {
            axpy(*w, u, &mut x);
        }
        x
    }

    fn gap(&self, x: &[f64]) -> f64 {
        match self {
            RotatedWitness::RotatedMax { .. } => {
                let mut g = vec![0.0; x.len()];
                self.evaluate(x, &mut g) - self.optimal_value()
            }
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                ..
            } => {
                // (1/2)(c Q(z - z*) + mu ||x - x*||^2), z = U^T x.
                let star: Vec<f64> =
                    Chain::unit_minimiser(directions.len(), *coupling, *strong_convexity)
                        .into_iter()
                        .map(|z| z * shift)
                        .collect();
                let e: Vec<f64> = self
                    .projections(x)
                    .iter()
                    .zip(&star)
                    .map(|(a, b)| a - b)
                    .collect();
                let mut quad = e[0] * e[0] + e[e.len() - 1] * e[e.len() - 1];
                for w in e.windows(2) {
                    quad += (w[0] - w[1]) * (w[0] - w[1]);
                }
                let far = if *strong_convexity > 0.0 {
                    let xs = self.minimiser();
                    x.iter()
                        .zip(&xs)
                        .map(|(a, b)| (a - b) * (a - b))
                        .sum::<f64>()
                } else {
                    0.0
                };
                0.5 * (coupling * quad + strong_convexity * far)
            }
        }
    }
}
