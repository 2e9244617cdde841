//! Fibre bisection: branch on the integer part, bisect each fibre. The lattice points
//! of the integer box are taken in lexicographic order; on each fibre `{z} x [-R, R]^d`
//! the method bisects its own box model of the fibre (midpoint queries, as
//! [`crate::method::midpoint`]) until some side is at most 2 rho, which by the class
//! promise rules z out, then moves on; "none" once every fibre is ruled out (common
//! practice, no source; the branching follows Basu & Oertel, SIAM J. Optim. 27 (2017),
//! who treat Z^n x R^d fibre by fibre).
//!
//! The fibre model applies every cut restricted to x = z: a cut whose continuous part
//! is one axis bounds that coordinate (rounded outward, so the model always contains
//! the true fibre); a cut whose continuous part is zero keeps or drops the whole fibre;
//! other cuts tighten the box by interval bounds ([`BoxModel::apply`]). Against the
//! mixed-corner adversary it meets 2^n (d k + 1) queries exactly. For d = 0 it is
//! lattice enumeration.

use std::cmp::Ordering;

use num_rational::BigRational;
use num_traits::Zero;

use crate::class::{Class, LatticeClass};
use crate::error::Error;
use crate::exact::{f64_to_rational, nearest_f64, Exact};
use crate::geometry::BoxModel;
use crate::method::enumerate::{cut_excludes, lattice_of};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Cut, Normal, Output, Separation, Step};

/// The neighbouring `f64` of a finite `t` in the direction of `toward` (+-infinity).
fn step_toward(t: f64, toward: f64) -> f64 {
    if t == 0.0 {
        return f64::from_bits(1).copysign(toward);
    }
    let bits = t.to_bits();
    if (t > 0.0) == (toward > 0.0) {
        f64::from_bits(bits + 1)
    } else {
        f64::from_bits(bits - 1)
    }
}

/// The restriction of a cut to the fibre x = z, applied to a box model of that fibre;
/// returns false when the cut drops the whole fibre.
pub(crate) fn restrict(cut: &Cut, z: &[f64], model: &mut BoxModel) -> bool {
    let n = z.len();
    let d = model.dim();
    let a_y: Vec<f64> = (0..d).map(|j| cut.normal.get(n + j)).collect();
    let nonzero: Vec<usize> = (0..d).filter(|&j| a_y[j] != 0.0).collect();
    let zr: Vec<BigRational> = z.iter().map(|v| f64_to_rational(*v)).collect();
    let a_x_z: BigRational = (0..n)
        .filter(|&i| cut.normal.get(i) != 0.0)
        .map(|i| f64_to_rational(cut.normal.get(i)) * &zr[i])
        .sum();
    let rest = cut.offset.to_rational() - a_x_z;
    match nonzero.len() {
        0 => !rest.is_zero() && rest > BigRational::zero(),
        1 => {
            let j = nonzero[0];
            let bound = &rest / f64_to_rational(a_y[j]);
            let mut t = nearest_f64(&bound);
            if a_y[j] > 0.0 {
                // y_j < bound: an upper bound, rounded up.
                if f64_to_rational(t) < bound {
                    t = step_toward(t, f64::INFINITY);
                }
                model.upper[j] = model.upper[j].min(t);
            } else {
                // y_j > bound: a lower bound, rounded down.
                if f64_to_rational(t) > bound {
                    t = step_toward(t, f64::NEG_INFINITY);
                }
                model.lower[j] = model.lower[j].max(t);
            }
            true
        }
        _ => {
            model.apply(&Cut {
                normal: Normal::Dense(a_y),
                offset: Exact::from_rational(rest),
            });
            true
        }
    }
}

/// Branch on the integer part, bisect each fibre.
#[derive(Clone, Debug)]
pub struct FibreBisection {
    lattice: Vec<Vec<f64>>,
    d: usize,
    half_width: f64,
    rho: f64,
    current: usize,
    model: Option<BoxModel>,
    cuts: Vec<Cut>,
    found: Option<Vec<f64>>,
}

impl FibreBisection {
    /// Starts at the lowest lattice point of the integer box (at most 2^20 of them).
    pub fn new(class: &LatticeClass) -> Result<FibreBisection, Error> {
        Ok(FibreBisection {
            lattice: lattice_of(class, "fibre-bisection")?
                .into_iter()
                .map(|p| p.into_iter().map(|v| v as f64).collect())
                .collect(),
            d: class.cont_dim,
            half_width: class.half_width,
            rho: class.rho,
            current: 0,
            model: None,
            cuts: Vec::new(),
            found: None,
        })
    }

    /// The model of fibre `index` after every cut so far; `None` when a cut drops it.
    fn fibre_model(&self, index: usize) -> Option<BoxModel> {
        let z = &self.lattice[index];
        let mut model = BoxModel::cube(self.d, self.half_width);
        if self.d == 0 {
            return (!self.cuts.iter().any(|c| cut_excludes(c, z))).then_some(model);
        }
        for cut in &self.cuts {
            if !restrict(cut, z, &mut model) {
                return None;
            }
        }
        Some(model)
    }

    fn thin(&self, model: &BoxModel) -> bool {
        model
            .lower
            .iter()
            .zip(&model.upper)
            .any(|(l, u)| crate::exact::cmp_diff(*u, *l, 2.0 * self.rho) != Ordering::Greater)
    }
}

impl Method for FibreBisection {
    fn name(&self) -> &str {
        "fibre-bisection"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        let n = self.lattice.first().map_or(0, Vec::len);
        loop {
            if self.current >= self.lattice.len() {
                return Ok(Step::Output(Output::Empty));
            }
            if self.model.is_none() {
                self.model = self.fibre_model(self.current);
                if self.model.is_none() {
                    self.current += 1;
                    continue;
                }
            }
            let model = self.model.as_ref().expect("set above");
            if self.d > 0 && self.thin(model) {
                self.model = None;
                self.current += 1;
                continue;
            }
            query[..n].copy_from_slice(&self.lattice[self.current]);
            model.center_into(&mut query[n..]);
            if self.d == 0 {
                // One query settles a lattice point.
                self.model = None;
                self.current += 1;
            }
            return Ok(Step::Query);
        }
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        match answer.to_separation(query) {
            Separation::Inside => self.found = Some(query.to_vec()),
            Separation::Cut(cut) => {
                let cut = cut.into_owned();
                if let Some(model) = self.model.as_mut() {
                    let z = &self.lattice[self.current];
                    if !restrict(&cut, z, model) {
                        self.model = None;
                        self.current += 1;
                    }
                }
                self.cuts.push(cut);
            }
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the lattice points of the integer box
/// (n numbers and a vector header each), every cut answered (a dense
/// normal of n + d numbers and its offset), and the current fibre's box.
fn memory(class: &Class, queries: u64) -> u64 {
    let Class::Lattice(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let n = c.int_dim() as f64;
    let q = c.query_dim() as f64;
    let points = crate::memory::lattice_points(&c.lower, &c.upper);
    crate::memory::bytes(
        points * (crate::memory::F64 * n + crate::memory::VEC)
            + queries as f64 * (crate::memory::F64 * q + 64.0)
            + crate::memory::vectors(6.0, q),
    )
}

/// The registry entry of `fibre-bisection`.
pub const INFO: MethodInfo = MethodInfo {
    name: "fibre-bisection",
    description: "mixed-integer: branches on the integer part, bisects each fibre \
                  (common practice; Basu & Oertel, SIAM J. Optim. 2017)",
    deterministic: true,
    span: false,
    families: &["lattice"],
    restriction: None,
    memory,
    memory_note: "a cut a query (n + d numbers) and the lattice points",
    build: |class, _seed| match class {
        Class::Lattice(c) => Ok(Box::new(FibreBisection::new(c)?)),
        _ => Err(wrong_family("fibre-bisection", &["lattice"])),
    },
};
