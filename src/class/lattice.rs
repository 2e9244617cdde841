//! Integer and mixed-integer feasibility over Z^n x R^d with a separation oracle
//! (docs/theory.md §0 and §4).
//!
//! K is convex and lies in the box `prod [lower_i, upper_i] x [-R, R]^d` (integer bounds
//! on the n integer coordinates, half-width R on the d continuous ones). The class
//! promise: K cap (Z^n x R^d) is either empty or contains `{z} x B(c, rho)` for some
//! integer z (for d = 0, `B(c, rho)` is the single point z: pure integer feasibility).
//! Queries are any points of R^(n+d); the oracle answers `inside` or a strict cut. A
//! method must output a mixed-integer point of K (its first n coordinates exactly
//! integral as `f64`), or declare that K holds none.
//! Helly numbers of these lattices: 2^n (Doignon 1973; Bell 1977; Scarf 1977) and
//! 2^n (d + 1) (Hoffman 1979; Averkov & Weismantel 2012).

use serde::{Deserialize, Serialize};

use crate::class::MAX_HALF_WIDTH;
use crate::error::Error;

/// Largest absolute integer bound accepted: every lattice coordinate and every
/// difference of two of them is then an exact `f64` (well below 2^53).
pub const MAX_INTEGER_BOUND: i64 = 1 << 40;

/// Most integer coordinates accepted.
pub const MAX_INTEGER_DIM: usize = 64;

/// Separation-oracle feasibility over Z^n x R^d (pure integer when d = 0).
///
/// Invariants: `1 <= n <= 64`; `lower.len() == upper.len() == n`;
/// `-2^40 <= lower_i <= upper_i <= 2^40`; when d >= 1, `0 < rho < R <= 1e300` and rho
/// is a normal number (when d = 0 the values of R and rho are kept but play no part).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LatticeClass {
    /// Lower integer bounds of the n integer coordinates.
    pub lower: Vec<i64>,
    /// Upper integer bounds of the n integer coordinates.
    pub upper: Vec<i64>,
    /// Continuous dimension d (0 for pure integer feasibility).
    pub cont_dim: usize,
    /// Half-width R of the continuous box [-R, R]^d.
    pub half_width: f64,
    /// Radius rho of the fibre ball the promise guarantees (continuous part only).
    pub rho: f64,
}

impl LatticeClass {
    /// Validates and builds the class.
    pub fn new(
        lower: Vec<i64>,
        upper: Vec<i64>,
        cont_dim: usize,
        half_width: f64,
        rho: f64,
    ) -> Result<LatticeClass, Error> {
        let bad = |reason: String| Err(Error::InvalidClass { reason });
        let n = lower.len();
        if n == 0 {
            return bad("the integer dimension n must be at least 1".into());
        }
        if n > MAX_INTEGER_DIM {
            return bad(format!(
                "integer dimension n = {n} is larger than {MAX_INTEGER_DIM}"
            ));
        }
        if upper.len() != n {
            return bad(format!(
                "{} lower bounds but {} upper bounds",
                n,
                upper.len()
            ));
        }
        for i in 0..n {
            if lower[i].abs() > MAX_INTEGER_BOUND || upper[i].abs() > MAX_INTEGER_BOUND {
                return bad(format!(
                    "integer bounds of coordinate {i} must lie in [-2^40, 2^40]"
                ));
            }
            if lower[i] > upper[i] {
                return bad(format!(
                    "integer coordinate {i}: lower bound {} exceeds upper bound {}",
                    lower[i], upper[i]
                ));
            }
        }
        if cont_dim > 1_000_000 {
            return bad(format!(
                "continuous dimension d = {cont_dim} is larger than 1000000"
            ));
        }
        if !half_width.is_finite() || half_width <= 0.0 || half_width > MAX_HALF_WIDTH {
            return bad(format!(
                "half-width R = {half_width} must be finite, positive and at most \
                 {MAX_HALF_WIDTH:e}"
            ));
        }
        if !rho.is_finite() || rho <= 0.0 || rho.is_subnormal() {
            return bad(format!(
                "rho = {rho} must be a finite positive normal number"
            ));
        }
        if cont_dim > 0 && rho >= half_width {
            return bad(format!(
                "rho = {rho} must be smaller than the half-width R = {half_width}"
            ));
        }
        Ok(LatticeClass {
            lower,
            upper,
            cont_dim,
            half_width,
            rho,
        })
    }

    /// The pure integer class on the box `{lower..=upper}^n`.
    pub fn integer(n: usize, lower: i64, upper: i64) -> Result<LatticeClass, Error> {
        LatticeClass::new(vec![lower; n], vec![upper; n], 0, 1.0, 0.5)
    }

    /// The mixed-integer class on `{lower..=upper}^n x [-R, R]^d` with radius rho.
    pub fn mixed(
        n: usize,
        lower: i64,
        upper: i64,
        cont_dim: usize,
        half_width: f64,
        rho: f64,
    ) -> Result<LatticeClass, Error> {
        LatticeClass::new(vec![lower; n], vec![upper; n], cont_dim, half_width, rho)
    }

    /// One line for messages and summaries.
    pub fn describe(&self) -> String {
        let n = self.int_dim();
        let uniform = self.lower.iter().all(|l| *l == self.lower[0])
            && self.upper.iter().all(|u| *u == self.upper[0]);
        let int_box = if uniform {
            format!("{{{}..{}}}^{n}", self.lower[0], self.upper[0])
        } else {
            format!(
                "prod {{lower_i..upper_i}}, lower {:?}, upper {:?}",
                self.lower, self.upper
            )
        };
        if self.cont_dim == 0 {
            format!("integer feasibility, n = {n}, K inside the box {int_box}")
        } else {
            format!(
                "mixed-integer feasibility, n = {n}, d = {d}, box {int_box} x [-{R}, {R}]^{d}, \
                 rho = {rho} (K cap (Z^n x R^d) empty or holding a fibre rho-ball)",
                d = self.cont_dim,
                R = self.half_width,
                rho = self.rho
            )
        }
    }

    /// The integer dimension n.
    pub fn int_dim(&self) -> usize {
        self.lower.len()
    }

    /// The dimension n + d of a query point.
    pub fn query_dim(&self) -> usize {
        self.lower.len() + self.cont_dim
    }

    /// The number of lattice points of the integer box, saturating at `u64::MAX`.
    pub fn lattice_count(&self) -> u64 {
        self.lower
            .iter()
            .zip(&self.upper)
            .map(|(l, u)| (u - l + 1) as u64)
            .fold(1u64, |acc, k| acc.saturating_mul(k))
    }

    /// True when the integer box contains the cube {0,1}^n (what the corner
    /// constructions of docs/theory.md §4 need).
    pub fn contains_unit_cube(&self) -> bool {
        self.lower.iter().all(|l| *l <= 0) && self.upper.iter().all(|u| *u >= 1)
    }

    /// k = max{ j >= 0 : R 2^-j > rho } (docs/theory.md §1.1), by that exact predicate.
    pub fn halvings(&self) -> u32 {
        let mut j = 0;
        let mut scaled = self.half_width;
        while scaled * 0.5 > self.rho {
            scaled *= 0.5;
            j += 1;
        }
        j
    }

    /// The lattice points of the integer box in lexicographic order (last coordinate
    /// fastest); `None` when there are more than `limit`.
    pub fn lattice_points(&self, limit: u64) -> Option<Vec<Vec<i64>>> {
        let count = self.lattice_count();
        if count > limit {
            return None;
        }
        let n = self.int_dim();
        let mut out = Vec::with_capacity(count as usize);
        let mut current = self.lower.clone();
        loop {
            out.push(current.clone());
            let mut i = n;
            loop {
                if i == 0 {
                    return Some(out);
                }
                i -= 1;
                if current[i] < self.upper[i] {
                    current[i] += 1;
                    break;
                }
                current[i] = self.lower[i];
            }
        }
    }

    /// True when the integer part of `x` lies in the real box prod [lower_i, upper_i]
    /// and the continuous part in [-R, R]^d (no integrality asked).
    pub fn in_box_real(&self, x: &[f64]) -> bool {
        let n = self.int_dim();
        x.len() == self.query_dim()
            && (0..n).all(|i| x[i] >= self.lower[i] as f64 && x[i] <= self.upper[i] as f64)
            && x[n..]
                .iter()
                .all(|y| *y >= -self.half_width && *y <= self.half_width)
    }
}

/// True when every one of the first `n` coordinates is exactly an integer.
pub fn is_mixed_integer(x: &[f64], n: usize) -> bool {
    x[..n].iter().all(|v| v.is_finite() && v.fract() == 0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lattice_points_are_listed_in_order() {
        let class = LatticeClass::integer(2, 0, 1).unwrap();
        assert_eq!(
            class.lattice_points(10).unwrap(),
            vec![vec![0, 0], vec![0, 1], vec![1, 0], vec![1, 1]]
        );
        assert!(class.lattice_points(3).is_none());
        assert_eq!(class.lattice_count(), 4);
    }

    #[test]
    fn invalid_classes_are_named() {
        assert!(LatticeClass::integer(0, 0, 1).is_err());
        assert!(LatticeClass::integer(2, 1, 0)
            .unwrap_err()
            .to_string()
            .contains("exceeds"));
        assert!(LatticeClass::mixed(2, 0, 1, 2, 1.0, 2.0).is_err());
        assert!(LatticeClass::integer(1, 0, 1 << 41).is_err());
    }

    #[test]
    fn halvings_match_theory() {
        // k = ceil(log2(R/rho)) - 1: R/rho = 16 gives 3, 1000 gives 9 (by hand).
        assert_eq!(
            LatticeClass::mixed(1, 0, 1, 1, 1.0, 1.0 / 16.0)
                .unwrap()
                .halvings(),
            3
        );
        assert_eq!(
            LatticeClass::mixed(1, 0, 1, 1, 1.0, 1e-3)
                .unwrap()
                .halvings(),
            9
        );
    }
}
