//! Kelley's cutting-plane method (J. E. Kelley, "The cutting-plane method for solving
//! convex programs", J. SIAM 8(4), 1960), and the bundle of first-order answers it and
//! the other first-order methods keep ([`Bundle`]).
//!
//! After answers (x_s, v_s, g_s), s = 1..t, the cutting-plane model
//!   M_t(y) = max_s [v_s + g_s . (y - x_s)]
//! lies below f (each piece is a subgradient inequality), so min_X M_t <= f* = min_X f.
//! Kelley's next query is a minimiser of M_t over X = [-R, R]^d, found by the LP
//!   minimise t  subject to  g_s . y - t <= g_s . x_s - v_s (all s),  -R <= y_i <= R
//! (solved by [`crate::geometry::lp`]). The method starts at the box centre, keeps the
//! best point seen (value f_up) and stops, outputting it, once f_up - f_low <= eps, where
//! f_low is the LP's optimal value minus [`LP_MARGIN`] (below). Then f(best) - f* <=
//! f_up - f_low <= eps, up to the LP's accuracy.
//!
//! LP accuracy: Clarabel (an interior-point solver) reports an optimum to about 1e-10 of
//! the data's scale. The method lowers the reported value by
//! `LP_MARGIN * (|t*| + L R d)` before using it as a lower bound (a hundredfold margin
//! over the solver's tolerance; common practice, no source). The bound is the method's
//! own belief: what it claims is judged by the exact verifier, not by this margin.
//! When the LP's minimiser repeats a query already asked (the model no longer changes,
//! so the gap cannot close further at the LP's resolution), the method stops and outputs
//! its best point rather than repeat the query.

use crate::class::{Class, FirstOrderClass, LipschitzNorm};
use crate::error::Error;
use crate::geometry::lp::{self, LpOutcome, Row};
use crate::geometry::polytope::Polytope;
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, FirstOrderAnswer, Output, Step};

const NAME: &str = "kelley";

/// Relative safety margin subtracted from an LP optimum before it is used as a lower
/// bound (module doc; common practice, no source).
pub const LP_MARGIN: f64 = 1e-8;

/// The first-order answers a method has received, with its best point, its best lower
/// bound on f* and the cutting-plane model M_t (Kelley 1960) built from them.
///
/// Values and subgradients are kept as their nearest `f64` (a method that reads only the
/// `f64` views knows less than one that reads the exact values, which never helps it
/// beat the lower bound; docs/theory.md §0).
#[derive(Clone, Debug)]
pub struct Bundle {
    dim: usize,
    half_width: f64,
    /// L R d, a bound on |g . y| over X in every norm the class allows: the scale of the
    /// LP margin.
    scale: f64,
    points: Vec<Vec<f64>>,
    values: Vec<f64>,
    gradients: Vec<Vec<f64>>,
    best: Option<(f64, Vec<f64>)>,
    lower: f64,
}

/// The minimum of the cutting-plane model of Kelley (1960) over a polytope.
#[derive(Clone, Debug, PartialEq)]
pub enum ModelMinimum {
    /// A minimiser (as the LP solver found it, clamped into the box) and a lower bound on
    /// the minimum value (the LP value lowered by the margin of the module doc).
    Optimal {
        /// The minimiser.
        point: Vec<f64>,
        /// A lower bound on min M_t over the polytope.
        lower_bound: f64,
    },
    /// The LP found no feasible point.
    Infeasible,
}

impl Bundle {
    /// An empty bundle for `class`.
    pub fn new(class: &FirstOrderClass) -> Bundle {
        // |g . y| <= ||g||_* ||y|| <= L R d on X whatever the norm (l2: L R sqrt d; l_inf
        // class, ||g||_1 <= L: L R; l1 class, ||g||_inf <= L: L R d; derived).
        let d = class.dim as f64;
        Bundle {
            dim: class.dim,
            half_width: class.half_width,
            scale: class.lipschitz * class.half_width * d,
            points: Vec::new(),
            values: Vec::new(),
            gradients: Vec::new(),
            best: None,
            lower: f64::NEG_INFINITY,
        }
    }

    /// Records the answer to `query`; an answer of the wrong length or with a value or
    /// subgradient whose `f64` view is not finite is an error.
    pub fn add(&mut self, query: &[f64], answer: &FirstOrderAnswer) -> Result<(), Error> {
        let value = answer.value.to_f64();
        let gradient: Vec<f64> = answer.subgradient.iter().map(|g| g.to_f64()).collect();
        if query.len() != self.dim
            || gradient.len() != self.dim
            || !value.is_finite()
            || gradient.iter().any(|g| !g.is_finite())
        {
            return Err(Error::MethodFailed {
                method: "first-order bundle".into(),
                reason: format!(
                    "answer with {} subgradient entries (dimension {}) or a non-finite value",
                    gradient.len(),
                    self.dim
                ),
            });
        }
        if self.best.as_ref().is_none_or(|(v, _)| value < *v) {
            self.best = Some((value, query.to_vec()));
        }
        self.points.push(query.to_vec());
        self.values.push(value);
        self.gradients.push(gradient);
        Ok(())
    }

    /// Number of answers recorded.
    pub fn len(&self) -> usize {
        self.values.len()
    }

    /// True before the first answer.
    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// The best value seen, f_up (`None` before the first answer).
    pub fn best_value(&self) -> Option<f64> {
        self.best.as_ref().map(|(v, _)| *v)
    }

    /// The best point seen (the box centre before the first answer).
    pub fn best_point(&self) -> Vec<f64> {
        self.best
            .as_ref()
            .map_or_else(|| vec![0.0; self.dim], |(_, p)| p.clone())
    }

    /// The best lower bound f_low on f* recorded so far (-infinity at first).
    pub fn lower_bound(&self) -> f64 {
        self.lower
    }

    /// Records a lower bound on f* valid for points not yet excluded by the method's
    /// own cuts: the bound kept is min(f_up, `bound`), since a minimiser that some cut
    /// excluded has a value at least that of the cut's query (Kelley 1960; derived).
    pub fn raise_lower_bound(&mut self, bound: f64) {
        let Some(best) = self.best_value() else {
            return;
        };
        let bound = if bound.is_nan() {
            f64::NEG_INFINITY
        } else {
            bound
        };
        self.lower = self.lower.max(bound.min(best));
    }

    /// f_up - f_low (infinite before the first answer or the first lower bound).
    pub fn gap(&self) -> f64 {
        match self.best_value() {
            Some(best) if self.lower.is_finite() => best - self.lower,
            _ => f64::INFINITY,
        }
    }

    /// The recorded queries.
    pub fn points(&self) -> &[Vec<f64>] {
        &self.points
    }

    /// Row s of the model's epigraph in variables (y, t): g_s . y - t <= g_s . x_s - v_s.
    pub fn piece_row(&self, s: usize) -> Row {
        let g = &self.gradients[s];
        let mut entries: Vec<(usize, f64)> = g
            .iter()
            .enumerate()
            .filter(|(_, v)| **v != 0.0)
            .map(|(i, v)| (i, *v))
            .collect();
        entries.push((self.dim, -1.0));
        let gx: f64 = g.iter().zip(&self.points[s]).map(|(a, x)| a * x).sum();
        (entries, gx - self.values[s])
    }

    /// M_t(y) in floating point.
    pub fn model_value(&self, y: &[f64]) -> f64 {
        (0..self.len())
            .map(|s| {
                let g = &self.gradients[s];
                self.values[s]
                    + g.iter()
                        .zip(y.iter().zip(&self.points[s]))
                        .map(|(a, (yi, xi))| a * (yi - xi))
                        .sum::<f64>()
            })
            .fold(f64::NEG_INFINITY, f64::max)
    }

    /// The margin subtracted from an LP value `t` (module doc).
    pub fn margin(&self, t: f64) -> f64 {
        LP_MARGIN * (t.abs() + self.scale)
    }

    /// Minimises M_t over {lower <= y <= upper, a . y <= b for (a, b) in `rows`} by the
    /// LP of the module doc (in variables (y, t)). Needs at least one answer.
    pub fn minimise(
        &self,
        lower: &[f64],
        upper: &[f64],
        rows: &[(Vec<f64>, f64)],
    ) -> Result<ModelMinimum, Error> {
        let d = self.dim;
        if self.is_empty() {
            return Err(Error::MethodFailed {
                method: "first-order bundle".into(),
                reason: "the cutting-plane model has no piece yet".into(),
            });
        }
        let mut lp_rows: Vec<Row> = (0..self.len()).map(|s| self.piece_row(s)).collect();
        for j in 0..d {
            lp_rows.push((vec![(j, 1.0)], upper[j]));
            lp_rows.push((vec![(j, -1.0)], -lower[j]));
        }
        for (a, b) in rows {
            let entries = a
                .iter()
                .enumerate()
                .filter(|(_, v)| **v != 0.0)
                .map(|(i, v)| (i, *v))
                .collect();
            lp_rows.push((entries, *b));
        }
        let mut objective = vec![0.0; d + 1];
        objective[d] = 1.0;
        match lp::minimise(&objective, &lp_rows, d + 1)? {
            LpOutcome::Optimal(z) => {
                let point: Vec<f64> = (0..d).map(|j| z[j].clamp(lower[j], upper[j])).collect();
                let t = z[d];
                if !t.is_finite() || point.iter().any(|x| !x.is_finite()) {
                    return Err(Error::MethodFailed {
                        method: "first-order bundle".into(),
                        reason: "the model LP returned a non-finite point".into(),
                    });
                }
                Ok(ModelMinimum::Optimal {
                    point,
                    lower_bound: t - self.margin(t),
                })
            }
            LpOutcome::Infeasible => Ok(ModelMinimum::Infeasible),
            LpOutcome::Unbounded => Err(Error::MethodFailed {
                method: "first-order bundle".into(),
                reason: "the model LP is unbounded on a bounded set".into(),
            }),
        }
    }

    /// Minimises M_t over the box X = [-R, R]^d.
    pub fn minimise_over_box(&self) -> Result<ModelMinimum, Error> {
        let r = self.half_width;
        self.minimise(&vec![-r; self.dim], &vec![r; self.dim], &[])
    }
}

/// A radius rho such that, when eps < f(best) - f*, the set {y in X : f(y) < f(best)}
/// contains a Euclidean ball of radius 2 rho; so a method whose own model (which contains
/// that set) provably holds no rho-ball may stop with its best point (the volume argument
/// of the centre-of-gravity and ellipsoid methods; Nemirovski & Yudin 1983, from memory).
///
/// Derivation: |f(y) - f(x*)| <= L' ||y - x*||_2 with L' = L (l2 and l_inf classes) or
/// L sqrt(d) (l1 class), so {f <= f* + eps} contains X intersected with B(x*, r),
/// r = eps / L'; that set contains the ball B(x* + s sigma, s), s = r / (1 + sqrt d),
/// sigma_i = -sign(x*_i) (+1 at 0), whenever s <= R / 2 (derived). rho = min(s, R/2) / 2.
pub fn volume_radius(class: &FirstOrderClass) -> f64 {
    let d = class.dim as f64;
    let lipschitz = match class.norm {
        LipschitzNorm::L1 => class.lipschitz * d.sqrt(),
        LipschitzNorm::L2 | LipschitzNorm::Linf => class.lipschitz,
    };
    let s = class.eps / lipschitz / (1.0 + d.sqrt());
    0.5 * s.min(0.5 * class.half_width)
}

/// Objective-cut bookkeeping for a polytope-model cutting-plane method playing a
/// first-order class (`sampled-centroid`, `analytic-center`).
///
/// The model P is the box cut by every objective cut `g_s . y < g_s . x_s`, so it
/// contains every point of X better than all queries. A minimiser x* of f either lies
/// outside P, and then f* >= f(x_s) >= f_best for the cut s that excluded it, or lies in
/// P, and then f* >= M_t(x*) >= min_P M_t (an LP, [`Bundle::minimise`]). Hence
/// f* >= min(f_best, min_P M_t) (derived; the bound of Kelley's method restricted to the
/// localisation set). An empty model (or an LP the solver finds infeasible) gives
/// f* >= f_best.
#[derive(Clone, Debug)]
pub struct PolytopeObjective {
    bundle: Bundle,
    eps: f64,
}

impl PolytopeObjective {
    /// Nothing recorded yet.
    pub fn new(class: &FirstOrderClass) -> PolytopeObjective {
        PolytopeObjective {
            bundle: Bundle::new(class),
            eps: class.eps,
        }
    }

    /// Records the answer to `query`; `method` names the caller in errors. Anything but a
    /// first-order answer is an error.
    pub fn record(&mut self, method: &str, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let Answer::FirstOrder(fo) = answer else {
            return Err(Error::MethodFailed {
                method: method.into(),
                reason: "a first-order class needs first-order answers".into(),
            });
        };
        self.bundle.add(query, fo)
    }

    /// Raises the lower bound by the LP min_P M_t over `polytope` (struct doc).
    pub fn update_bound(&mut self, polytope: &Polytope) -> Result<(), Error> {
        let Some(best) = self.bundle.best_value() else {
            return Ok(());
        };
        if polytope.is_known_empty() {
            self.bundle.raise_lower_bound(best);
            return Ok(());
        }
        let (lower, upper) = polytope.bounding_box();
        let rows: Vec<(Vec<f64>, f64)> = (0..polytope.num_rows())
            .map(|i| (polytope.row(i).to_vec(), polytope.offset(i)))
            .collect();
        match self.bundle.minimise(lower, upper, &rows)? {
            ModelMinimum::Optimal { lower_bound, .. } => self.bundle.raise_lower_bound(lower_bound),
            ModelMinimum::Infeasible => self.bundle.raise_lower_bound(best),
        }
        Ok(())
    }

    /// True once f_best - f_low <= eps.
    pub fn done(&self) -> bool {
        self.bundle.gap() <= self.eps
    }

    /// The best point seen (the box centre before the first answer).
    pub fn best_point(&self) -> Vec<f64> {
        self.bundle.best_point()
    }

    /// The answers, best value and lower bound.
    pub fn bundle(&self) -> &Bundle {
        &self.bundle
    }
}

/// Kelley's cutting-plane method (Kelley 1960, J. SIAM 8; module doc).
#[derive(Clone, Debug)]
pub struct Kelley {
    bundle: Bundle,
    eps: f64,
    next_point: Vec<f64>,
    done: bool,
}

impl Kelley {
    /// Starts at the centre of X.
    pub fn new(class: &FirstOrderClass) -> Kelley {
        Kelley {
            bundle: Bundle::new(class),
            eps: class.eps,
            next_point: vec![0.0; class.dim],
            done: false,
        }
    }

    /// The answers received, the best point and the lower bound.
    pub fn bundle(&self) -> &Bundle {
        &self.bundle
    }
}

impl Method for Kelley {
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        Some(Box::new(self.clone()))
    }

    fn name(&self) -> &str {
        NAME
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.done || self.bundle.gap() <= self.eps {
            return Ok(Step::Output(Output::Point {
                point: self.bundle.best_point(),
            }));
        }
        query.copy_from_slice(&self.next_point);
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let Answer::FirstOrder(fo) = answer else {
            return Err(Error::MethodFailed {
                method: NAME.into(),
                reason: "needs first-order answers (value and subgradient)".into(),
            });
        };
        self.bundle.add(query, fo)?;
        match self.bundle.minimise_over_box()? {
            ModelMinimum::Optimal { point, lower_bound } => {
                self.bundle.raise_lower_bound(lower_bound);
                if self.bundle.points().contains(&point) {
                    self.done = true;
                }
                self.next_point = point;
            }
            ModelMinimum::Infeasible => {
                return Err(Error::MethodFailed {
                    method: NAME.into(),
                    reason: "the model LP over the box reported infeasibility".into(),
                })
            }
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the bundle of every answer
/// ([`crate::memory::bundle`]) and the LP over the cutting-plane model (one row an
/// answer with d + 1 entries, two box rows a coordinate, d + 1 variables).
fn memory(class: &Class, queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    let b = queries as f64;
    let lp = crate::memory::lp_work(b + 2.0 * d, d + 1.0, b * (d + 1.0) + 2.0 * d);
    crate::memory::bytes(crate::memory::bundle(d, b) + lp + crate::memory::vectors(4.0, d))
}

/// The registry entry of `kelley`.
pub const INFO: MethodInfo = MethodInfo {
    name: "kelley",
    description: "first-order: cutting-plane method, next query minimises the \
                  max-of-affine model by LP (Kelley 1960, J. SIAM 8)",
    deterministic: true,
    span: false,
    families: &["first-order"],
    restriction: None,
    memory,
    memory_note: "every answer's point and subgradient (2 d numbers a query) and the LP over them",
    build: |class, _seed| match class {
        Class::FirstOrder(c) => Ok(Box::new(Kelley::new(c))),
        _ => Err(wrong_family("kelley", &["first-order"])),
    },
};
