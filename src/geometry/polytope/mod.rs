//! A polytope model of what a cutting-plane method knows, and its largest inscribed ball.
//!
//! The model is P = {y : l <= y <= u, a_i . y <= b_i for every stored row i}: the box
//! [-R, R]^d tightened by every axis cut, intersected with the closed halfspaces of the
//! dense cuts (the closure of the strict cuts, docs/theory.md §0). Rows are stored with
//! unit l2 norm. Every rounding is done outward (bounds and offsets loosened by a bound on
//! the rounding error), so P always contains the set the cuts describe; knowing a hair
//! more than the truth would be unsafe, knowing a hair less is not.
//!
//! Redundancy is trimmed only where it is exact: an axis cut tightens the box bound of its
//! coordinate (so the box rows are never duplicated), a dense row identical to a stored
//! one keeps the smaller offset, and a row that holds on the whole bounding box T (below)
//! is not stored.
//!
//! Besides the box [l, u] of the description, the model keeps a bounding box T of P by
//! bound tightening (for row i and coordinate j, a_ij y_j <= b_i - sum_{k != j}
//! min_{y_k in T} a_ik y_k; common practice in presolve, no source), rounded outward. T
//! contains P and T intersected with the rows is P again, so geometry may use T in place
//! of [l, u]: the Chebyshev LP and the frame of every float computation do, which keeps
//! a small P inside a large box well scaled.
//!
//! The Chebyshev centre (largest inscribed Euclidean ball) is the LP
//!   maximise r  subject to  a_i . c + r ||a_i||_2 <= b_i (all rows, box rows included), r >= 0
//! (Boyd & Vandenberghe, Convex Optimization, 2004, sec. 8.5.1), solved with Clarabel
//! (Goulart & Chen 2024, arXiv:2405.12762, an interior-point solver; from memory). The
//! LP dual also yields an upper bound on the inscribed radius that holds whatever the
//! solver's accuracy (see [`Chebyshev::radius_bound`]), which is what a method may use to
//! declare "empty". The LP leaves out rows that hold on all of T (same optimum, better
//! scaling); when its centre is not strictly inside P in `f64`, a second LP in a small
//! trust box around it places one ([`Polytope::ball_test`]).

mod chebyshev;

use crate::error::Error;
use crate::exact::Exact;
use crate::oracle::{Cut, Normal};

const EPS: f64 = f64::EPSILON;

/// Relative tolerance of [`Polytope::contains`] (method-side float geometry; common
/// practice, no source): a row counts as satisfied when its slack is at least
/// `-CONTAINS_TOLERANCE * (|b_i| + sum_j |a_ij y_j|)`.
pub const CONTAINS_TOLERANCE: f64 = 1e-12;

fn fail(reason: String) -> Error {
    Error::MethodFailed {
        method: "polytope model".into(),
        reason,
    }
}

/// `x` plus a bound on its own rounding error of relative size `rel`, so that the
/// result is at least the exact value that `x` approximates (outward rounding).
fn loosen_up(x: f64, rel: f64) -> f64 {
    x + x.abs() * rel + f64::MIN_POSITIVE
}

/// `x` minus a bound on its rounding error of relative size `rel`.
fn loosen_down(x: f64, rel: f64) -> f64 {
    x - x.abs() * rel - f64::MIN_POSITIVE
}

/// An `f64` upper bound on an exact offset: the value itself when it is an `f64`,
/// otherwise its nearest `f64` loosened by one rounding.
fn offset_upper(offset: &Exact) -> f64 {
    let value = offset.to_f64();
    if offset.is_f64() {
        value
    } else {
        loosen_up(value, EPS)
    }
}

/// Error-free sum (Knuth's TwoSum, The Art of Computer Programming vol. 2, sec. 4.2.2):
/// returns `(s, e)` with `s = fl(a + b)` and `a + b = s + e` exactly.
fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bp = s - a;
    let ap = s - bp;
    (s, (a - ap) + (b - bp))
}

/// One cut as the polytope stores it.
#[derive(Clone, Debug, PartialEq)]
pub enum Halfspace {
    /// `y_axis <= bound` (`upper`) or `y_axis >= bound` (not `upper`).
    Axis {
        /// Coordinate index.
        axis: usize,
        /// Whether the bound is an upper bound.
        upper: bool,
        /// The bound, rounded outward.
        bound: f64,
    },
    /// `normal . y <= offset`, with `||normal||_2 = 1` up to rounding and the offset
    /// loosened by the rounding of the normalisation.
    Row {
        /// Unit normal.
        normal: Vec<f64>,
        /// Offset.
        offset: f64,
    },
    /// Holds on the whole current bounding box (or the cut's normal is zero): nothing new.
    Vacuous,
    /// Excludes the whole current bounding box: the model is empty.
    Infeasible,
}

impl Halfspace {
    /// The halfspace as a dense pair `(a, b)` meaning `a . y <= b`; `None` for
    /// [`Halfspace::Vacuous`] and [`Halfspace::Infeasible`].
    pub fn as_row(&self, dim: usize) -> Option<(Vec<f64>, f64)> {
        match self {
            Halfspace::Axis { axis, upper, bound } => {
                let mut a = vec![0.0; dim];
                if *upper {
                    a[*axis] = 1.0;
                    Some((a, *bound))
                } else {
                    a[*axis] = -1.0;
                    Some((a, -*bound))
                }
            }
            Halfspace::Row { normal, offset } => Some((normal.clone(), *offset)),
            Halfspace::Vacuous | Halfspace::Infeasible => None,
        }
    }
}

/// The result of the Chebyshev-centre LP.
#[derive(Clone, Debug, PartialEq)]
pub struct Chebyshev {
    /// Centre and radius of the largest inscribed ball as the solver found it (accurate
    /// to about 1e-10 of the frame scale); `None` when the LP is infeasible or the radius
    /// is not positive.
    pub ball: Option<(Vec<f64>, f64)>,
    /// An upper bound on the inscribed radius r* of the model, valid whatever the
    /// solver's accuracy: for any dual weights z >= 0 on the rows (in the frame where
    /// the bounding box is [L, U] with |L_j|, |U_j| <= 1), every feasible (c, r) with
    /// r >= 0 satisfies r sum_i z_i <= sum_i z_i b_i + max_j max(|L_j|, |U_j|)
    /// ||A^T z||_1 (weak LP duality; Boyd & Vandenberghe 2004, sec. 5.2), evaluated with
    /// outward rounding. Also at most half the shortest side of the bounding box.
    pub radius_bound: f64,
}

/// What a method may conclude about rho-balls from its model.
#[derive(Clone, Debug, PartialEq)]
pub enum BallTest {
    /// The model proves that no ball of radius rho fits strictly inside it.
    NoBall,
    /// A ball may still fit; here is the Chebyshev centre and its radius.
    Center(Vec<f64>, f64),
}

/// A box intersected with closed halfspaces with unit normals: a method's polytope
/// model P = {y : l <= y <= u, a_i . y <= b_i}, kept as a superset of what the cuts say.
#[derive(Clone, Debug, PartialEq)]
pub struct Polytope {
    dim: usize,
    lower: Vec<f64>,
    upper: Vec<f64>,
    /// Bounding box T of P by bound tightening (inside [lower, upper]).
    tight_lower: Vec<f64>,
    tight_upper: Vec<f64>,
    /// Row-major m x d matrix of unit normals.
    rows: Vec<f64>,
    offsets: Vec<f64>,
    /// Set once some cut excluded the whole box.
    infeasible: bool,
}

impl Polytope {
    /// The box [-R, R]^d with no cuts.
    pub fn cube(dim: usize, half_width: f64) -> Polytope {
        Polytope {
            dim,
            lower: vec![-half_width; dim],
            upper: vec![half_width; dim],
            tight_lower: vec![-half_width; dim],
            tight_upper: vec![half_width; dim],
            rows: Vec::new(),
            offsets: Vec::new(),
            infeasible: false,
        }
    }

    /// The dimension d.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// Lower corner l of the box part.
    pub fn lower(&self) -> &[f64] {
        &self.lower
    }

    /// Upper corner u of the box part.
    pub fn upper(&self) -> &[f64] {
        &self.upper
    }

    /// The bounding box T = (lower, upper) of the model by bound tightening: it lies in
    /// the box part and contains P.
    pub fn bounding_box(&self) -> (&[f64], &[f64]) {
        (&self.tight_lower, &self.tight_upper)
    }

    /// Number m of stored dense rows (box rows not counted).
    pub fn num_rows(&self) -> usize {
        self.offsets.len()
    }

    /// Unit normal of dense row `i`.
    pub fn row(&self, i: usize) -> &[f64] {
        &self.rows[i * self.dim..(i + 1) * self.dim]
    }

    /// Offset of dense row `i`.
    pub fn offset(&self, i: usize) -> f64 {
        self.offsets[i]
    }

    /// True once a cut excluded the whole box, or a side of the bounding box became
    /// negative.
    pub fn is_known_empty(&self) -> bool {
        self.infeasible
            || self
                .tight_lower
                .iter()
                .zip(&self.tight_upper)
                .any(|(l, u)| l > u)
    }

    /// Largest absolute coordinate of the bounding box.
    fn box_magnitude(&self, j: usize) -> f64 {
        self.tight_lower[j].abs().max(self.tight_upper[j].abs())
    }

    /// Converts a cut `a . y < b` into the closed halfspace the model stores, rounding
    /// outward. A zero dense normal gives [`Halfspace::Vacuous`] (skipped: knowing less
    /// is always safe). Malformed normals (wrong length, non-finite entries, bad axis or
    /// sign) are errors.
    pub fn halfspace(&self, cut: &Cut) -> Result<Halfspace, Error> {
        let d = self.dim;
        let b = offset_upper(&cut.offset);
        match &cut.normal {
            Normal::Axis { axis, sign } => {
                if *axis >= d || !(*sign == 1 || *sign == -1) {
                    return Err(fail(format!(
                        "axis cut (axis {axis}, sign {sign}) is malformed in dimension {d}"
                    )));
                }
                Ok(if *sign > 0 {
                    Halfspace::Axis {
                        axis: *axis,
                        upper: true,
                        bound: b,
                    }
                } else {
                    Halfspace::Axis {
                        axis: *axis,
                        upper: false,
                        bound: -b,
                    }
                })
            }
            Normal::Dense(a) => {
                if a.len() != d || a.iter().any(|x| !x.is_finite()) {
                    return Err(fail(format!(
                        "dense cut normal has length {} (expected {d}) or a non-finite entry",
                        a.len()
                    )));
                }
                let big = a.iter().fold(0.0f64, |m, x| m.max(x.abs()));
                if big == 0.0 {
                    return Ok(Halfspace::Vacuous);
                }
                let nonzero: Vec<usize> = (0..d).filter(|&j| a[j] != 0.0).collect();
                if let [j] = nonzero[..] {
                    // a_j y_j < b: one division, rounded outward unless it is exact
                    // (a normal quotient whose fused residual b - q a_j is zero).
                    let q = b / a[j];
                    let exact = if q == 0.0 {
                        b == 0.0
                    } else {
                        q.is_normal() && b.is_normal() && (-q).mul_add(a[j], b) == 0.0
                    };
                    let upper = a[j] > 0.0;
                    let bound = match (exact, upper) {
                        (true, _) => q,
                        (false, true) => loosen_up(q, EPS),
                        (false, false) => loosen_down(q, EPS),
                    };
                    return Ok(Halfspace::Axis {
                        axis: j,
                        upper,
                        bound,
                    });
                }
                self.dense_halfspace(a, b, big)
            }
        }
    }

    fn dense_halfspace(&self, a: &[f64], b: f64, big: f64) -> Result<Halfspace, Error> {
        let d = self.dim;
        // Scale by the largest entry first so the squares cannot overflow.
        let scaled: Vec<f64> = a.iter().map(|x| x / big).collect();
        let norm = scaled.iter().map(|x| x * x).sum::<f64>().sqrt();
        let normal: Vec<f64> = scaled.iter().map(|x| x / norm).collect();
        let offset = b / big / norm;
        if offset.is_nan() {
            return Err(fail(
                "dense cut offset became NaN after normalisation".into(),
            ));
        }
        if offset == f64::INFINITY {
            return Ok(Halfspace::Vacuous);
        }
        if offset == f64::NEG_INFINITY {
            return Ok(Halfspace::Infeasible);
        }
        // Rounding of the normalisation (each unit-normal entry and the offset carry a
        // relative error of at most (d + 8) eps): loosen the offset by its effect on
        // any point of the box.
        let reach: f64 = (0..d)
            .map(|j| normal[j].abs() * self.box_magnitude(j))
            .sum();
        let offset = offset + (d as f64 + 8.0) * EPS * (offset.abs() + reach) + f64::MIN_POSITIVE;
        // The range of normal . y over the box, with a rounding margin.
        let (mut low, mut high) = (0.0, 0.0);
        for ((a, l), u) in normal.iter().zip(&self.tight_lower).zip(&self.tight_upper) {
            let (p, q) = (a * l, a * u);
            low += p.min(q);
            high += p.max(q);
        }
        let margin = (d as f64 + 2.0) * EPS * reach;
        if offset >= high + margin {
            return Ok(Halfspace::Vacuous);
        }
        if offset < low - margin {
            return Ok(Halfspace::Infeasible);
        }
        Ok(Halfspace::Row { normal, offset })
    }

    /// Adds a halfspace produced by [`Polytope::halfspace`]; returns whether the
    /// description changed (a tighter box bound, a new row, a smaller offset of a stored
    /// row, or emptiness).
    pub fn add(&mut self, halfspace: &Halfspace) -> bool {
        match halfspace {
            Halfspace::Axis { axis, upper, bound } => {
                let j = *axis;
                let tighter = if *upper {
                    *bound < self.upper[j]
                } else {
                    *bound > self.lower[j]
                };
                if !tighter {
                    return false;
                }
                if *upper {
                    self.upper[j] = *bound;
                    self.tight_upper[j] = self.tight_upper[j].min(*bound);
                } else {
                    self.lower[j] = *bound;
                    self.tight_lower[j] = self.tight_lower[j].max(*bound);
                }
                self.tighten();
                true
            }
            Halfspace::Row { normal, offset } => {
                let d = self.dim;
                for i in 0..self.num_rows() {
                    if self.rows[i * d..(i + 1) * d] == normal[..] {
                        if *offset < self.offsets[i] {
                            self.offsets[i] = *offset;
                            self.tighten();
                            return true;
                        }
                        return false;
                    }
                }
                self.rows.extend_from_slice(normal);
                self.offsets.push(*offset);
                self.tighten();
                true
            }
            Halfspace::Vacuous => false,
            Halfspace::Infeasible => {
                self.infeasible = true;
                true
            }
        }
    }

    /// One pass of bound tightening over every row (module doc), rounded outward: the
    /// sum, the subtraction and the division each carry a relative error bounded by the
    /// margin below.
    fn tighten(&mut self) {
        let d = self.dim;
        let mut mins = vec![0.0; d];
        for (i, &b) in self.offsets.iter().enumerate() {
            let row = &self.rows[i * d..(i + 1) * d];
            let (mut total, mut size) = (0.0, 0.0);
            for j in 0..d {
                let (p, q) = (row[j] * self.tight_lower[j], row[j] * self.tight_upper[j]);
                mins[j] = p.min(q);
                total += mins[j];
                size += mins[j].abs();
            }
            if !total.is_finite() {
                continue;
            }
            for (j, &a) in row.iter().enumerate() {
                if a == 0.0 {
                    continue;
                }
                let q = (b - (total - mins[j])) / a;
                let margin = (d as f64 + 3.0) * EPS * (b.abs() + size) / a.abs()
                    + 2.0 * EPS * q.abs()
                    + f64::MIN_POSITIVE;
                if !(q.is_finite() && margin.is_finite()) {
                    continue;
                }
                if a > 0.0 {
                    self.tight_upper[j] = self.tight_upper[j].min(q + margin);
                } else {
                    self.tight_lower[j] = self.tight_lower[j].max(q - margin);
                }
            }
        }
    }

    /// Converts and adds a cut (see [`Polytope::halfspace`]); returns whether the
    /// description changed.
    pub fn add_cut(&mut self, cut: &Cut) -> Result<bool, Error> {
        let h = self.halfspace(cut)?;
        Ok(self.add(&h))
    }

    /// Slacks `b - a . y` of every row at `y`, in the order: the d upper box rows
    /// (`u_j - y_j`), the d lower box rows (`y_j - l_j`), then the m dense rows.
    /// `y` must have length d (the method's own query; a shorter slice panics).
    pub fn slacks(&self, y: &[f64]) -> Vec<f64> {
        let d = self.dim;
        let mut out = Vec::with_capacity(2 * d + self.num_rows());
        out.extend((0..d).map(|j| self.upper[j] - y[j]));
        out.extend((0..d).map(|j| y[j] - self.lower[j]));
        out.extend((0..self.num_rows()).map(|i| self.offsets[i] - dot(self.row(i), y)));
        out
    }

    /// True when `y` satisfies every row up to the relative tolerance
    /// [`CONTAINS_TOLERANCE`] (scaled by the sizes of the terms involved).
    pub fn contains(&self, y: &[f64]) -> bool {
        if self.infeasible || y.len() != self.dim {
            return false;
        }
        let tol = |a: f64, b: f64| CONTAINS_TOLERANCE * (a.abs() + b.abs());
        for ((l, u), x) in self.lower.iter().zip(&self.upper).zip(y) {
            if u - x < -tol(*u, *x) || x - l < -tol(*l, *x) {
                return false;
            }
        }
        (0..self.num_rows()).all(|i| {
            let row = self.row(i);
            let size: f64 = row.iter().zip(y).map(|(a, x)| (a * x).abs()).sum();
            self.offsets[i] - dot(row, y) >= -tol(self.offsets[i], size)
        })
    }

    /// True when every slack at `y` is positive (as computed in `f64`).
    pub fn contains_strictly(&self, y: &[f64]) -> bool {
        !self.infeasible && y.len() == self.dim && self.slacks(y).iter().all(|s| *s > 0.0)
    }

    /// True when some side `u_j - l_j` of the bounding box is at most `2 rho`, decided
    /// exactly (the rounding error of the subtraction is recovered by Knuth's TwoSum).
    /// Then no ball of radius rho fits strictly inside what the cuts say: a ball that
    /// touched both faces of an exact bounding box in direction j would touch, at each
    /// face, a constraint with a normal of -e_j resp. e_j in its cone, i.e. a strict cut
    /// or the initial box face, and both faces initial means a side of 2R > 2 rho.
    pub fn box_too_thin_for(&self, rho: f64) -> bool {
        let two_rho = 2.0 * rho;
        self.tight_lower
            .iter()
            .zip(&self.tight_upper)
            .any(|(l, u)| {
                let (s, e) = two_sum(*u, -*l);
                s < two_rho || (s == two_rho && e <= 0.0)
            })
    }
}

/// Dot product of two equally long slices.
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dense_cut(a: &[f64], b: f64) -> Cut {
        Cut {
            normal: Normal::Dense(a.to_vec()),
            offset: Exact::Float(b),
        }
    }

    #[test]
    fn axis_cuts_tighten_the_box_exactly() {
        let mut p = Polytope::cube(2, 1.0);
        p.add_cut(&Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(0.25),
        })
        .unwrap();
        p.add_cut(&Cut {
            normal: Normal::axis(1, false),
            offset: Exact::Float(0.5),
        })
        .unwrap();
        assert_eq!(p.upper(), &[0.25, 1.0]);
        assert_eq!(p.lower(), &[-1.0, -0.5]);
        assert_eq!(p.num_rows(), 0);
        // A dense normal with one non-zero entry is an axis cut: 2 y_1 < 1 exactly,
        // -3 y_0 < 1 rounded outward (checked in exact rationals).
        p.add_cut(&dense_cut(&[0.0, 2.0], 1.0)).unwrap();
        assert_eq!(p.upper()[1], 0.5);
        p.add_cut(&dense_cut(&[-3.0, 0.0], 1.0)).unwrap();
        let l = crate::exact::f64_to_rational(p.lower()[0]);
        let third = num_rational::BigRational::new((-1).into(), 3.into());
        assert!(l <= third && p.lower()[0] > -1.0 / 3.0 - 1e-15);
    }

    #[test]
    fn dense_rows_are_unit_and_loosened() {
        let mut p = Polytope::cube(2, 1.0);
        p.add_cut(&dense_cut(&[3.0, 4.0], 1.0)).unwrap();
        assert_eq!(p.num_rows(), 1);
        let row = p.row(0);
        assert!((row[0] - 0.6).abs() < 1e-15 && (row[1] - 0.8).abs() < 1e-15);
        assert!(p.offset(0) >= 0.2 && p.offset(0) < 0.2 + 1e-13);
        // The same normal again with a smaller offset replaces the first.
        p.add_cut(&dense_cut(&[6.0, 8.0], 1.0)).unwrap();
        assert_eq!(p.num_rows(), 1);
        assert!(p.offset(0) < 0.1 + 1e-13);
        // A row that holds on the whole box is not stored; one that excludes it empties.
        p.add_cut(&dense_cut(&[1.0, 1.0], 5.0)).unwrap();
        assert_eq!(p.num_rows(), 1);
        assert!(!p.is_known_empty());
        p.add_cut(&dense_cut(&[1.0, 1.0], -3.0)).unwrap();
        assert!(p.is_known_empty());
        // Zero normals are skipped, malformed ones rejected.
        let mut q = Polytope::cube(2, 1.0);
        q.add_cut(&dense_cut(&[0.0, 0.0], -1.0)).unwrap();
        assert_eq!(q, Polytope::cube(2, 1.0));
        assert!(q.add_cut(&dense_cut(&[1.0], 0.0)).is_err());
        assert!(q.add_cut(&dense_cut(&[1.0, f64::NAN], 0.0)).is_err());
        assert!(q
            .add_cut(&Cut {
                normal: Normal::axis(2, true),
                offset: Exact::ZERO
            })
            .is_err());
    }

    #[test]
    fn slacks_and_contains() {
        let mut p = Polytope::cube(2, 1.0);
        p.add_cut(&dense_cut(&[1.0, 1.0], 1.0)).unwrap();
        let s = p.slacks(&[0.5, 0.0]);
        assert_eq!(s.len(), 5);
        assert_eq!(&s[..4], &[0.5, 1.0, 1.5, 1.0]);
        assert!((s[4] - (1.0 - 0.5) / 2f64.sqrt()).abs() < 1e-12);
        assert!(p.contains(&[0.5, 0.5]));
        assert!(p.contains_strictly(&[0.25, 0.25]));
        assert!(!p.contains_strictly(&[1.0, -0.5]));
        assert!(!p.contains(&[0.6, 0.6]));
        assert!(!p.contains(&[1.1, -0.5]));
    }

    #[test]
    fn box_thinness_is_exact() {
        let mut p = Polytope::cube(1, 1.0);
        p.add_cut(&Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(-0.9375),
        })
        .unwrap();
        // Side 1/16 exactly: thin for rho = 1/32, not for a hair less.
        assert!(p.box_too_thin_for(1.0 / 32.0));
        assert!(!p.box_too_thin_for(1.0 / 32.0 * (1.0 - EPS)));
        // Side 0.1 + 0.2 computed with rounding: decided from the exact difference.
        let mut q = Polytope::cube(1, 1.0);
        q.add(&Halfspace::Axis {
            axis: 0,
            upper: true,
            bound: 0.2,
        });
        q.add(&Halfspace::Axis {
            axis: 0,
            upper: false,
            bound: -0.1,
        });
        let (s, e) = two_sum(0.2, 0.1);
        let rho = 0.5 * s;
        assert_eq!(q.box_too_thin_for(rho), e <= 0.0);
    }

    #[test]
    fn chebyshev_ball_of_a_box_and_of_a_triangle() {
        let mut p = Polytope::cube(2, 1.0);
        p.add_cut(&Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(0.0),
        })
        .unwrap();
        let c = p.chebyshev().unwrap();
        let (center, radius) = c.ball.unwrap();
        assert_eq!(center, vec![-0.5, 0.0]);
        assert_eq!(radius, 0.5);
        assert!(c.radius_bound >= 0.5 && c.radius_bound < 0.5 + 1e-12);

        // Triangle x >= 0, y >= 0, x + y <= 1 (inside [-1, 1]^2): inradius
        // 2 Area / perimeter = 1 / (2 + sqrt 2) (elementary geometry, from memory).
        let mut t = Polytope::cube(2, 1.0);
        t.add(&Halfspace::Axis {
            axis: 0,
            upper: false,
            bound: 0.0,
        });
        t.add(&Halfspace::Axis {
            axis: 1,
            upper: false,
            bound: 0.0,
        });
        t.add_cut(&dense_cut(&[1.0, 1.0], 1.0)).unwrap();
        let c = t.chebyshev().unwrap();
        let exact = 1.0 / (2.0 + 2f64.sqrt());
        let (center, radius) = c.ball.unwrap();
        assert!((radius - exact).abs() < 1e-8, "radius {radius}");
        assert!((center[0] - exact).abs() < 1e-7 && (center[1] - exact).abs() < 1e-7);
        assert!(c.radius_bound >= exact, "bound {} below r*", c.radius_bound);
        assert!(c.radius_bound < exact + 1e-7);
        assert_eq!(t.ball_test(exact * 1.001).unwrap(), BallTest::NoBall);
        assert!(matches!(
            t.ball_test(exact * 0.999).unwrap(),
            BallTest::Center(..)
        ));
    }

    #[test]
    fn chebyshev_of_an_empty_model() {
        let mut p = Polytope::cube(2, 1.0);
        // x + y <= -0.5 and x + y >= 0.5 (through -x - y <= -0.5): empty, though each row
        // alone meets the box.
        p.add_cut(&dense_cut(&[1.0, 1.0], -0.5)).unwrap();
        p.add_cut(&dense_cut(&[-1.0, -1.0], -0.5)).unwrap();
        assert!(!p.is_known_empty());
        let c = p.chebyshev().unwrap();
        assert!(c.ball.is_none());
        assert!(c.radius_bound <= 1e-6, "bound {}", c.radius_bound);
        assert_eq!(p.ball_test(1e-3).unwrap(), BallTest::NoBall);
    }

    #[test]
    fn radius_bound_is_never_below_the_true_radius() {
        // Random polytopes in d = 3: the inscribed radius certified by a direct check of
        // the LP ball never exceeds the dual bound.
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        for _ in 0..40 {
            let mut p = Polytope::cube(3, 2.0);
            for _ in 0..12 {
                let a: Vec<f64> = (0..3).map(|_| rng.random::<f64>() - 0.5).collect();
                let b = 0.3 + rng.random::<f64>();
                p.add_cut(&dense_cut(&a, b)).unwrap();
            }
            let c = p.chebyshev().unwrap();
            let (center, radius) = c
                .ball
                .expect("a ball around the origin fits: b / ||a|| >= 0.3 / 0.87");
            // The radius that provably fits around the returned centre.
            let fits = p.slacks(&center).into_iter().fold(f64::INFINITY, f64::min);
            assert!((fits - radius).abs() < 1e-7, "{fits} vs {radius}");
            assert!(c.radius_bound >= fits, "{} < {fits}", c.radius_bound);
            assert!(c.radius_bound <= fits + 1e-7);
        }
    }

    #[test]
    fn huge_boxes_are_rescaled() {
        let mut p = Polytope::cube(2, 1e300);
        p.add_cut(&dense_cut(&[1e-300, 1e-300], 0.0)).unwrap();
        let (center, radius) = p.chebyshev_ball().unwrap().unwrap();
        // The half of the box below the anti-diagonal is a right isosceles triangle with
        // legs 2R; its inradius is (leg + leg - hypotenuse) / 2 = 2R / (2 + sqrt 2)
        // (elementary geometry, from memory).
        let exact = 2e300 / (2.0 + 2f64.sqrt());
        assert!((radius / exact - 1.0).abs() < 1e-7, "{radius} vs {exact}");
        assert!(p.contains(&center));
    }

    #[test]
    fn a_thin_slab_far_below_the_box_scale_still_gets_an_interior_centre() {
        // The slab |0.6 x + 0.8 y| <= 1e-11 across [-1, 1]^2: inradius 1e-11, while the
        // bounding box stays [-1, 1]^2 (the normal is not an axis), ten orders below the
        // LP's frame scale.
        let mut p = Polytope::cube(2, 1.0);
        p.add_cut(&dense_cut(&[0.6, 0.8], 1e-11)).unwrap();
        p.add_cut(&dense_cut(&[-0.6, -0.8], 1e-11)).unwrap();
        match p.ball_test(1e-12).unwrap() {
            BallTest::Center(c, r) => {
                assert!(p.contains_strictly(&c), "{c:?}");
                // The first LP's radius is accurate to about 1e-10 of the frame scale.
                assert!((r - 1e-11).abs() < 1e-10, "{r}");
            }
            BallTest::NoBall => panic!("a 1e-11 ball fits"),
        }
        // The certified bound carries the same absolute accuracy.
        assert_eq!(p.ball_test(1e-9).unwrap(), BallTest::NoBall);
        // The trust-box LP directly, from a first centre 3e-11 outside the slab.
        let c0 = [0.4 + 1.8e-11, -0.3 + 2.4e-11];
        assert!(!p.contains_strictly(&c0));
        let (c, r) = p.refine_center(&c0, 1e-11).unwrap().unwrap();
        assert!(p.contains_strictly(&c));
        // In the trust box (scale 1e-8) the LP resolves the slab to about 1e-18; the
        // model's offsets are loosened by about 3e-15 (outward rounding, 10 eps * 1.4).
        assert!((r - 1e-11).abs() < 1e-14, "{r}");
    }
}
