//! Function witnesses for first-order classes (docs/theory.md §2.2): a max of affine pieces
//! and an l_inf cone,
//!   f(y) = max( max_p [a_p . y + b_p], floor + slope * ||y - center||_inf ),
//! all numbers exact. When every piece is at most `floor` at `center`, f attains its
//! minimum `floor` at `center`, and {f <= floor + eps} lies in
//! center + (eps / slope) B_inf.

use num_rational::BigRational;
use num_traits::{Signed, Zero};
use serde::{Deserialize, Serialize};

use crate::exact::{f64_to_rational, Exact};

/// One affine piece y -> slope . y + intercept.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AffinePiece {
    /// The gradient of the piece.
    pub slope: Vec<Exact>,
    /// Its value at the origin.
    pub intercept: Exact,
}

impl AffinePiece {
    /// The piece through (x, value) with gradient g: intercept = value - g . x, exact.
    pub fn through(x: &[f64], value: &Exact, gradient: &[Exact]) -> AffinePiece {
        let gx: BigRational = gradient
            .iter()
            .zip(x)
            .filter(|(g, _)| **g != Exact::ZERO)
            .map(|(g, xi)| g.to_rational() * f64_to_rational(*xi))
            .sum();
        AffinePiece {
            slope: gradient.to_vec(),
            intercept: Exact::from_rational(value.to_rational() - gx),
        }
    }

    /// The exact value at y.
    pub fn value_at(&self, y: &[BigRational]) -> BigRational {
        let mut total = self.intercept.to_rational();
        for (a, yi) in self.slope.iter().zip(y) {
            if *a != Exact::ZERO {
                total += a.to_rational() * yi;
            }
        }
        total
    }
}

/// A max-of-affine-plus-cone function, exact.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FunctionWitness {
    /// The affine pieces (the answers of the certified prefix, deduplicated).
    pub pieces: Vec<AffinePiece>,
    /// The cone's apex, where f attains its minimum.
    pub center: Vec<Exact>,
    /// The minimum value of f.
    pub floor: Exact,
    /// The cone's slope sigma (0 < sigma <= L).
    pub slope: Exact,
}

impl FunctionWitness {
    /// The exact value f(y).
    pub fn value_at(&self, y: &[BigRational]) -> BigRational {
        let cone = self.floor.to_rational() + self.slope.to_rational() * self.center_distance(y);
        self.pieces
            .iter()
            .map(|p| p.value_at(y))
            .fold(cone, |m, v| if v > m { v } else { m })
    }

    /// ||y - center||_inf, exact.
    pub fn center_distance(&self, y: &[BigRational]) -> BigRational {
        self.center
            .iter()
            .zip(y)
            .map(|(c, yi)| (yi - c.to_rational()).abs())
            .fold(BigRational::zero(), |m, v| if v > m { v } else { m })
    }
}
