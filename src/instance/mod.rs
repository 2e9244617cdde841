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

    /// One line for people: what the instance is, with coordinates as nearest f64 (the
    /// exact values are in the transcript's final record), the first eight of them when
    /// there are more.
    pub fn describe(&self) -> String {
        match self {
            Witness::Empty => "K is the empty set".into(),
            Witness::Ball { center, radius } => format!(
                "K is the ball of radius {radius:e} around {}",
                coordinates(center.iter().map(Exact::to_f64))
            ),
            Witness::Function(f) => format!(
                "f is the maximum of {} affine pieces and a cone of slope {:e}; its minimum \
                 value {:e} is attained at {}",
                f.pieces.len(),
                f.slope.to_f64(),
                f.floor.to_f64(),
                coordinates(f.center.iter().map(Exact::to_f64))
            ),
            Witness::LatticeHull(h) => match &h.fibre {
                Some(b) => format!(
                    "K is the hull of {} points and the ball of radius {:e} around {} in the \
                     fibre of the integer part {}",
                    h.points.len(),
                    b.radius,
                    coordinates(b.center.iter().map(Exact::to_f64)),
                    coordinates(b.integer.iter().map(|&v| v as f64))
                ),
                None => format!(
                    "K is the hull of {} points and holds no mixed-integer point",
                    h.points.len()
                ),
            },
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

/// `(x1, x2, ...)` with at most eight coordinates shown.
fn coordinates(values: impl ExactSizeIterator<Item = f64>) -> String {
    const SHOWN: usize = 8;
    let count = values.len();
    let mut parts: Vec<String> = values.take(SHOWN).map(|v| format!("{v}")).collect();
    if count > SHOWN {
        parts.push(format!("... ({count} coordinates)"));
    }
    format!("({})", parts.join(", "))
}
