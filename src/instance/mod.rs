//! Witnesses: explicit instances of a class, each with its own exact oracle.
//!
//! An adversary hands these over at the end of a game; the verifier
//! ([`crate::certificate`]) checks them against the transcript without trusting the
//! adversary.

pub mod function;
pub mod large_scale;
pub mod lattice;

use num_rational::BigRational;
use serde::{Deserialize, Serialize};

use crate::exact::{f64_to_rational, Exact};

pub use function::{AffinePiece, FunctionWitness};
pub use lattice::{FibreBall, LatticeHull};

/// An explicit instance: a feasibility set or a function.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
#[non_exhaustive]
pub enum Witness {
    /// K = the empty set. Its only correct output is "empty".
    Empty,
    /// K = the closed Euclidean ball of radius `radius` around `center`.
    Ball {
        /// The centre, exact.
        center: Vec<Exact>,
        /// The radius (the class's rho).
        radius: f64,
    },
    /// A convex function: max of affine pieces and an l_inf cone (first-order classes).
    Function(FunctionWitness),
    /// A mixed-integer hull conv(F cup {v} x B(c, rho)) (lattice classes, docs/theory.md §4).
    LatticeHull(LatticeHull),
}

impl Witness {
    /// Exact membership: is x in K? (For a ball: ||x - c||_2^2 <= r^2, decided exactly.)
    pub fn contains(&self, x: &[f64]) -> bool {
        match self {
            Witness::Empty | Witness::Function(_) => false,
            Witness::LatticeHull(hull) => hull.contains(x),
            Witness::Ball { center, radius } => {
                let r = f64_to_rational(*radius);
                let dist2: BigRational = center
                    .iter()
                    .zip(x)
                    .map(|(c, xi)| {
                        let diff = f64_to_rational(*xi) - c.to_rational();
                        &diff * &diff
                    })
                    .sum();
                dist2 <= &r * &r
            }
        }
    }

    /// A short name for messages.
    pub fn label(&self) -> &'static str {
        match self {
            Witness::Empty => "empty set",
            Witness::Ball { .. } => "ball",
            Witness::Function(_) => "function",
            Witness::LatticeHull(_) => "lattice hull",
        }
    }
}
