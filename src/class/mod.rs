//! Problem classes and their validation.
//!
//! A class fixes what the method faces: the oracle kind, the dimension, the box, the
//! accuracy. Validation happens once, at construction; every later stage may rely on
//! the invariants documented here.

pub mod first_order;
pub mod large_scale;
pub mod lattice;

use serde::{Deserialize, Serialize};

use crate::error::Error;

pub use first_order::{FirstOrderClass, LipschitzNorm};
pub use large_scale::{LargeScale, LargeScaleClass};
pub use lattice::LatticeClass;

/// Largest half-width accepted, so that sums and differences of box coordinates and
/// doubled radii stay finite in `f64`.
pub const MAX_HALF_WIDTH: f64 = 1e300;

/// Whether the class allows K to be empty.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum Promise {
    /// K is empty or contains a ball of radius rho; a method may answer "empty".
    #[default]
    MayBeEmpty,
    /// K contains a ball of radius rho; a method must find a point of K.
    Nonempty,
}

/// Separation-oracle feasibility over a box (docs/theory.md §1).
///
/// K is convex, K lies in X = [-R, R]^d, and either K is empty or K contains a
/// Euclidean ball of radius rho ([`Promise::MayBeEmpty`]), or K surely contains such a
/// ball ([`Promise::Nonempty`]). The oracle answers `inside` or a strict cut. A method
/// must output a point of K, or declare K empty.
///
/// Invariants: `dim >= 1`; `0 < rho < half_width <= MAX_HALF_WIDTH`; all finite.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FeasibilityClass {
    /// Dimension d.
    pub dim: usize,
    /// Box half-width R: X = [-R, R]^d.
    pub half_width: f64,
    /// Accuracy rho: radius of the ball K contains when nonempty.
    pub rho: f64,
    /// Whether K may be empty.
    pub promise: Promise,
}

impl FeasibilityClass {
    /// Validates and builds the class.
    pub fn new(
        dim: usize,
        half_width: f64,
        rho: f64,
        promise: Promise,
    ) -> Result<FeasibilityClass, Error> {
        let bad = |reason: String| Err(Error::InvalidClass { reason });
        if dim == 0 {
            return bad("dimension d must be at least 1".into());
        }
        if dim > 1_000_000 {
            return bad(format!("dimension d = {dim} is larger than 1000000"));
        }
        if !half_width.is_finite() || half_width <= 0.0 || half_width > MAX_HALF_WIDTH {
            return bad(format!(
                "half-width R = {half_width} must be finite, positive and at most {MAX_HALF_WIDTH:e}"
            ));
        }
        if !rho.is_finite() || rho <= 0.0 || rho.is_subnormal() {
            return bad(format!(
                "rho = {rho} must be a finite positive normal number"
            ));
        }
        if rho >= half_width {
            return bad(format!(
                "rho = {rho} must be smaller than the half-width R = {half_width}"
            ));
        }
        Ok(FeasibilityClass {
            dim,
            half_width,
            rho,
            promise,
        })
    }

    /// k = max{ j >= 0 : R * 2^-j > rho }, computed by that exact predicate
    /// (docs/theory.md §1.1). Multiplying by 1/2 is exact in binary floating point while the
    /// result stays normal, which it does because R * 2^-j > rho >= f64::MIN_POSITIVE.
    pub fn halvings(&self) -> u32 {
        let mut j = 0;
        let mut scaled = self.half_width;
        while scaled * 0.5 > self.rho {
            scaled *= 0.5;
            j += 1;
        }
        j
    }
}

/// A problem class.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
#[non_exhaustive]
pub enum Class {
    /// Separation-oracle feasibility over a box.
    Feasibility(FeasibilityClass),
    /// First-order (value and subgradient) minimisation over a box.
    FirstOrder(FirstOrderClass),
    /// Separation-oracle feasibility over Z^n x R^d (integer and mixed-integer).
    Lattice(LatticeClass),
    /// A large-scale first-order class at a horizon T (demonstrations, docs/theory.md §3).
    LargeScale(LargeScale),
}

impl Class {
    /// The dimension of a query point.
    pub fn query_dim(&self) -> usize {
        match self {
            Class::Feasibility(c) => c.dim,
            Class::FirstOrder(c) => c.dim,
            Class::Lattice(c) => c.query_dim(),
            Class::LargeScale(c) => c.function.dim(),
        }
    }

    /// The name of the family the class belongs to, as scenario files and `--class`
    /// spell it: `feasibility`, `first-order`, `lattice` or `large-scale`.
    pub fn family_name(&self) -> &'static str {
        match self {
            Class::Feasibility(_) => "feasibility",
            Class::FirstOrder(_) => "first-order",
            Class::Lattice(_) => "lattice",
            Class::LargeScale(_) => "large-scale",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn halvings_match_the_exact_predicate() {
        // k = ceil(log2(R/rho)) - 1 (docs/theory.md §1.1), derived by hand for these ratios.
        let cases = [
            (64.0, 5),
            (1000.0, 9),
            (1e6, 19),
            (4.0, 1),
            (3.0, 1),
            (2.0, 0),
        ];
        for (ratio, k) in cases {
            let class = FeasibilityClass::new(1, 1.0, 1.0 / ratio, Promise::MayBeEmpty).unwrap();
            assert_eq!(class.halvings(), k, "R/rho = {ratio}");
        }
    }

    #[test]
    fn invalid_parameters_are_named() {
        let err = FeasibilityClass::new(0, 1.0, 0.1, Promise::MayBeEmpty).unwrap_err();
        assert!(err.to_string().contains("dimension"));
        let err = FeasibilityClass::new(2, 1.0, 2.0, Promise::MayBeEmpty).unwrap_err();
        assert!(err.to_string().contains("smaller than the half-width"));
        let err = FeasibilityClass::new(2, f64::NAN, 0.1, Promise::MayBeEmpty).unwrap_err();
        assert!(err.to_string().contains("half-width"));
    }
}
