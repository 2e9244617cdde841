//! Mixed-integer witnesses (docs/theory.md §4): K = conv(F cup {v} x B(c, rho)), the convex
//! hull of finitely many points F and, optionally, one fibre ball.
//!
//! Every check here is exact, in rational arithmetic over the stored numbers. A strict
//! cut `{a.w < b}` contains such a hull iff it strictly contains every generating point
//! and the fibre ball, and it contains the fibre ball `{v} x B(c, rho)` iff
//! `a_x.v + a_y.c + rho ||a_y||_2 < b` (only the continuous part `a_y` of the normal
//! enters the norm; decided by squaring with the sign checked).
//!
//! The claim each witness makes about its mixed-integer points, and how it is checked
//! (the extreme-point argument): if every generating point's integer part lies in one
//! closed unit cube `z0 + [0,1]^n`, then every lattice point of conv(integer parts) is a
//! vertex of that cube, and a vertex is a convex combination only of generating points
//! whose integer part equals it. So when no point of F has an integral integer part, the
//! mixed-integer points of the hull are exactly `{v} x B(c, rho)` (or none without a
//! fibre ball).

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{Signed, Zero};
use serde::{Deserialize, Serialize};

use crate::class::lattice::{is_mixed_integer, LatticeClass};
use crate::exact::{f64_to_rational, Exact};
use crate::oracle::Cut;

/// The fibre ball `{integer} x B(center, radius)`; for d = 0 it is the lattice point
/// `integer` alone.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FibreBall {
    /// The integer part v.
    pub integer: Vec<i64>,
    /// The centre c of the ball in R^d, exact.
    pub center: Vec<Exact>,
    /// The radius (the class's rho).
    pub radius: f64,
}

/// K = conv(points cup fibre); its mixed-integer points are exactly the fibre ball (none
/// without one).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LatticeHull {
    /// Generating points in R^(n+d) (points declared inside), none mixed-integer.
    pub points: Vec<Vec<f64>>,
    /// The one fibre ball, if any (`null` on disk when there is none; the key is
    /// required).
    #[serde(deserialize_with = "required_fibre")]
    pub fibre: Option<FibreBall>,
}

/// Reads the `fibre` key, which must be present (`null` or a fibre ball), as
/// `tools/check_certificate.py` requires it.
fn required_fibre<'de, D: serde::Deserializer<'de>>(
    deserializer: D,
) -> Result<Option<FibreBall>, D::Error> {
    Option::<FibreBall>::deserialize(deserializer)
}

/// A [`LatticeHull`] in exact form, built once for the verifier.
#[derive(Clone, Debug)]
pub struct ExactHull {
    n: usize,
    points: Vec<Vec<BigRational>>,
    fibre: Option<ExactFibre>,
}

#[derive(Clone, Debug)]
struct ExactFibre {
    integer: Vec<BigRational>,
    center: Vec<BigRational>,
    radius2: BigRational,
}

fn integer(v: i64) -> BigRational {
    BigRational::from_integer(BigInt::from(v))
}

impl ExactHull {
    /// Checks that the hull is an instance of `class` and that its mixed-integer points
    /// are exactly what it claims; returns its exact form or the reason it fails.
    pub fn new(class: &LatticeClass, hull: &LatticeHull) -> Result<ExactHull, String> {
        let n = class.int_dim();
        let dim = class.query_dim();
        let big_r = f64_to_rational(class.half_width);
        let mut points = Vec::with_capacity(hull.points.len());
        for (k, p) in hull.points.iter().enumerate() {
            if p.len() != dim || p.iter().any(|v| !v.is_finite()) {
                return Err(format!(
                    "generating point #{} has the wrong length or a non-finite coordinate",
                    k + 1
                ));
            }
            if !class.in_box_real(p) {
                return Err(format!("generating point #{} lies outside the box", k + 1));
            }
            if is_mixed_integer(p, n) {
                return Err(format!(
                    "generating point #{} is itself a mixed-integer point, so the hull holds \
                     more mixed-integer points than its fibre ball",
                    k + 1
                ));
            }
            points.push(p.iter().map(|v| f64_to_rational(*v)).collect::<Vec<_>>());
        }
        let fibre = match &hull.fibre {
            None => None,
            Some(f) => {
                if f.integer.len() != n || f.center.len() != class.cont_dim {
                    return Err("the fibre ball has the wrong dimensions".into());
                }
                if (0..n).any(|i| f.integer[i] < class.lower[i] || f.integer[i] > class.upper[i]) {
                    return Err("the fibre's integer part lies outside the integer box".into());
                }
                if f.radius != class.rho {
                    return Err(format!(
                        "fibre radius {} differs from the class's rho {}",
                        f.radius, class.rho
                    ));
                }
                let r = f64_to_rational(f.radius);
                let center: Vec<BigRational> = f.center.iter().map(Exact::to_rational).collect();
                for (i, c) in center.iter().enumerate() {
                    if c - &r < -big_r.clone() || c + &r > big_r {
                        return Err(format!("the fibre ball leaves [-R, R]^d in coordinate {i}"));
                    }
                }
                Some(ExactFibre {
                    integer: f.integer.iter().map(|v| integer(*v)).collect(),
                    center,
                    radius2: &r * &r,
                })
            }
        };
        let exact = ExactHull { n, points, fibre };
        exact.check_unit_cube()?;
        Ok(exact)
    }

    /// The integer parts of all generating points (fibre included) lie in one closed
    /// unit cube z0 + [0,1]^n; returns z0.
    fn unit_cube_corner(&self) -> Option<Vec<BigInt>> {
        let parts: Vec<&[BigRational]> = self
            .points
            .iter()
            .map(|p| &p[..self.n])
            .chain(self.fibre.iter().map(|f| &f.integer[..]))
            .collect();
        if parts.is_empty() {
            return Some(vec![BigInt::zero(); self.n]);
        }
        let mut corner = Vec::with_capacity(self.n);
        for i in 0..self.n {
            let low = parts.iter().map(|p| p[i].floor()).min().expect("nonempty");
            let high = parts.iter().map(|p| p[i].clone()).max().expect("nonempty");
            if high > &low + integer(1) {
                return None;
            }
            corner.push(low.to_integer());
        }
        Some(corner)
    }

    fn check_unit_cube(&self) -> Result<(), String> {
        if self.unit_cube_corner().is_none() {
            return Err(
                "the integer parts of the generating points do not lie in one unit cube, so \
                 the extreme-point argument cannot show which mixed-integer points the hull \
                 holds"
                    .into(),
            );
        }
        Ok(())
    }

    /// Cross-check of the claim by enumeration: for every lattice point z (other than
    /// the fibre's), exhibits the functional a_i = +1 if z_i > z0_i else -1 and checks
    /// a.g_x < a.z for every generating integer part g_x, so z is not in the hull of
    /// the integer parts. Returns the first lattice point that fails.
    pub fn cross_check(&self, lattice: &[Vec<i64>]) -> Option<Vec<i64>> {
        let corner = self.unit_cube_corner()?;
        for z in lattice {
            let zr: Vec<BigRational> = z.iter().map(|v| integer(*v)).collect();
            if let Some(f) = &self.fibre {
                if f.integer == zr {
                    continue;
                }
            }
            let sign: Vec<bool> = (0..self.n)
                .map(|i| BigInt::from(z[i]) > corner[i])
                .collect();
            let value = |p: &[BigRational]| -> BigRational {
                (0..self.n)
                    .map(|i| if sign[i] { p[i].clone() } else { -p[i].clone() })
                    .sum()
            };
            let at_z = value(&zr);
            let separated = self.points.iter().all(|p| value(&p[..self.n]) < at_z)
                && self.fibre.iter().all(|f| value(&f.integer) < at_z);
            if !separated {
                return Some(z.clone());
            }
        }
        None
    }

    /// Whether the hull has a fibre ball (so mixed-integer points).
    pub fn has_fibre(&self) -> bool {
        self.fibre.is_some()
    }

    /// True when every generating point and the fibre ball lie strictly inside the cut.
    pub fn strictly_inside(&self, cut: &Cut) -> bool {
        let b = cut.offset.to_rational();
        if !self.points.iter().all(|p| cut.normal.dot_exact(p) < b) {
            return false;
        }
        match &self.fibre {
            None => true,
            Some(f) => {
                let mut full = f.integer.clone();
                full.extend(f.center.iter().cloned());
                let slack = &b - cut.normal.dot_exact(&full);
                if !slack.is_positive() {
                    return false;
                }
                let norm2: BigRational = (self.n..self.n + f.center.len())
                    .map(|i| {
                        let a = f64_to_rational(cut.normal.get(i));
                        &a * &a
                    })
                    .sum();
                &f.radius2 * norm2 < &slack * &slack
            }
        }
    }

    /// A sufficient exact test of `x in K`: x is a generating point, or lies in the
    /// fibre ball.
    pub fn contains(&self, x: &[BigRational]) -> bool {
        self.points.iter().any(|p| p[..] == x[..]) || self.fibre_contains(x)
    }

    /// True when x is a mixed-integer point of K: in the fibre ball.
    pub fn fibre_contains(&self, x: &[BigRational]) -> bool {
        match &self.fibre {
            None => false,
            Some(f) => {
                if x[..self.n] != f.integer[..] {
                    return false;
                }
                let dist2: BigRational = x[self.n..]
                    .iter()
                    .zip(&f.center)
                    .map(|(a, c)| {
                        let d = a - c;
                        &d * &d
                    })
                    .sum();
                dist2 <= f.radius2
            }
        }
    }

    /// True when the two hulls' mixed-integer point sets (their correct outputs) are
    /// disjoint; a hull without fibre has "none" as its only correct output.
    pub fn solutions_disjoint(&self, other: &ExactHull) -> bool {
        match (&self.fibre, &other.fibre) {
            (None, None) => false,
            (None, Some(_)) | (Some(_), None) => true,
            (Some(a), Some(b)) => {
                if a.integer != b.integer {
                    return true;
                }
                if a.center.is_empty() {
                    return false;
                }
                let dist2: BigRational = a
                    .center
                    .iter()
                    .zip(&b.center)
                    .map(|(x, y)| {
                        let d = x - y;
                        &d * &d
                    })
                    .sum();
                dist2 > &a.radius2 * integer(4)
            }
        }
    }
}

impl LatticeHull {
    /// A sufficient exact test of `x in K`: x is a generating point, or its integer part
    /// is the fibre's and its continuous part lies in the fibre ball.
    pub fn contains(&self, x: &[f64]) -> bool {
        if self.points.iter().any(|p| p[..] == x[..]) {
            return true;
        }
        let Some(f) = &self.fibre else {
            return false;
        };
        let n = f.integer.len();
        if x.len() != n + f.center.len() || (0..n).any(|i| x[i] != f.integer[i] as f64) {
            return false;
        }
        let r = f64_to_rational(f.radius);
        let dist2: BigRational = x[n..]
            .iter()
            .zip(&f.center)
            .map(|(a, c)| {
                let d = f64_to_rational(*a) - c.to_rational();
                &d * &d
            })
            .sum();
        dist2 <= &r * &r
    }
}
