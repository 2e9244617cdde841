//! The level method (C. Lemarechal, A. Nemirovskii & Yu. Nesterov, "New variants of
//! bundle methods", Math. Program. 69, 1995; as presented in Nesterov, Introductory
//! Lectures on Convex Optimization, 2004, sec. 3.3.3, from memory).
//!
//! With the cutting-plane model M_t of [`crate::method::kelley`], the method keeps
//!   f_up = the best value seen,  f_low = max over steps of min_X M_s (an LP, as in
//!   Kelley's method),
//! and the level l_t = f_low + lambda (f_up - f_low) with lambda = 1/2 (the paper leaves
//! lambda in (0, 1) free; 1/2 is our choice, the midpoint of the gap). The next query is
//! the Euclidean projection of the LAST query x_t (the choice of Nesterov 2004, sec.
//! 3.3.3) onto the level set {y in X : M_t(y) <= l_t}, the quadratic program
//!   minimise (1/2) ||y - x_t||_2^2  subject to  g_s . y <= l_t - v_s + g_s . x_s (all s),
//!   -R <= y_i <= R,
//! solved with Clarabel (Goulart & Chen 2024, arXiv:2405.12762; an interior-point solver
//! for quadratic objectives over cones). The method starts at the box centre and stops,
//! outputting its best point, once f_up - f_low <= eps.
//!
//! f_low carries the LP margin of [`crate::method::kelley`]. When the level set is empty
//! at the solvers' resolution (the gap is then of the order of that margin), or the
//! projection repeats a query, the method stops and outputs its best point rather than
//! repeat a query.

use clarabel::algebra::CscMatrix;
use clarabel::solver::{
    DefaultSettingsBuilder, DefaultSolver, IPSolver, NonnegativeConeT, SolverStatus,
};

use crate::class::{Class, FirstOrderClass};
use crate::error::Error;
use crate::method::kelley::{Bundle, ModelMinimum};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

const NAME: &str = "level";

/// The level parameter lambda of l_t = f_low + lambda (f_up - f_low) (module doc).
pub const LAMBDA: f64 = 0.5;

fn fail(reason: String) -> Error {
    Error::MethodFailed {
        method: NAME.into(),
        reason,
    }
}

/// Euclidean projection of `x` onto {y : lower <= y <= upper, a . y <= b for every
/// (a, b) in `rows`}, a quadratic program solved by Clarabel (Goulart & Chen 2024);
/// `Ok(None)` when the solver reports the set empty.
pub fn project(
    x: &[f64],
    lower: &[f64],
    upper: &[f64],
    rows: &[(Vec<f64>, f64)],
) -> Result<Option<Vec<f64>>, Error> {
    let d = x.len();
    if lower.len() != d || upper.len() != d || rows.iter().any(|(a, _)| a.len() != d) {
        return Err(fail("projection data has inconsistent lengths".into()));
    }
    let finite = x.iter().chain(lower).chain(upper).all(|v| v.is_finite())
        && rows
            .iter()
            .all(|(a, b)| b.is_finite() && a.iter().all(|v| v.is_finite()));
    if !finite {
        return Err(fail("projection data is not finite".into()));
    }
    // Constraint rows: the dense rows, then y_j <= u_j and -y_j <= -l_j.
    let m = rows.len();
    let total = m + 2 * d;
    let mut colptr = Vec::with_capacity(d + 1);
    let mut rowval = Vec::new();
    let mut nzval = Vec::new();
    colptr.push(0);
    for j in 0..d {
        for (k, (a, _)) in rows.iter().enumerate() {
            if a[j] != 0.0 {
                rowval.push(k);
                nzval.push(a[j]);
            }
        }
        rowval.push(m + j);
        nzval.push(1.0);
        rowval.push(m + d + j);
        nzval.push(-1.0);
        colptr.push(rowval.len());
    }
    let a_matrix = CscMatrix::new(total, d, colptr, rowval, nzval);
    let mut b: Vec<f64> = rows.iter().map(|(_, b)| *b).collect();
    b.extend_from_slice(upper);
    b.extend(lower.iter().map(|l| -l));
    // (1/2) y^T I y - x . y; P is given by its upper triangle (here the diagonal).
    let p_matrix = CscMatrix::new(d, d, (0..=d).collect(), (0..d).collect(), vec![1.0; d]);
    let q: Vec<f64> = x.iter().map(|v| -v).collect();
    let cones = [NonnegativeConeT(total)];
    let settings = DefaultSettingsBuilder::default()
        .verbose(false)
        .tol_gap_abs(1e-10)
        .tol_gap_rel(1e-10)
        .tol_feas(1e-10)
        .build()
        .map_err(|e| fail(format!("solver settings rejected: {e}")))?;
    let mut solver = DefaultSolver::new(&p_matrix, &q, &a_matrix, &b, &cones, settings)
        .map_err(|e| fail(format!("solver rejected the projection: {e}")))?;
    solver.solve();
    let solution = &solver.solution;
    match solution.status {
        SolverStatus::Solved | SolverStatus::AlmostSolved => {
            let y: Vec<f64> = (0..d)
                .map(|j| solution.x[j].clamp(lower[j], upper[j]))
                .collect();
            if y.iter().any(|v| !v.is_finite()) {
                return Err(fail("the projection returned a non-finite point".into()));
            }
            Ok(Some(y))
        }
        SolverStatus::PrimalInfeasible | SolverStatus::AlmostPrimalInfeasible => Ok(None),
        status => Err(fail(format!(
            "the solver ended the projection with status {status:?}"
        ))),
    }
}

/// The level method of Lemarechal, Nemirovskii & Nesterov 1995 (module doc).
#[derive(Clone, Debug)]
pub struct Level {
    bundle: Bundle,
    eps: f64,
    half_width: f64,
    next_point: Vec<f64>,
    done: bool,
}

impl Level {
    /// Starts at the centre of X.
    pub fn new(class: &FirstOrderClass) -> Level {
        Level {
            bundle: Bundle::new(class),
            eps: class.eps,
            half_width: class.half_width,
            next_point: vec![0.0; class.dim],
            done: false,
        }
    }

    /// The answers received, the best point and the lower bound.
    pub fn bundle(&self) -> &Bundle {
        &self.bundle
    }

    /// The level l_t = f_low + lambda (f_up - f_low) for the current bounds (`None`
    /// before the first lower bound).
    pub fn level(&self) -> Option<f64> {
        let up = self.bundle.best_value()?;
        let low = self.bundle.lower_bound();
        low.is_finite().then_some(low + LAMBDA * (up - low))
    }
}

impl Method for Level {
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
            return Err(fail(
                "needs first-order answers (value and subgradient)".into(),
            ));
        };
        self.bundle.add(query, fo)?;
        match self.bundle.minimise_over_box()? {
            ModelMinimum::Optimal { lower_bound, .. } => self.bundle.raise_lower_bound(lower_bound),
            ModelMinimum::Infeasible => {
                return Err(fail(
                    "the model LP over the box reported infeasibility".into(),
                ))
            }
        }
        if self.bundle.gap() <= self.eps {
            return Ok(());
        }
        let level = self
            .level()
            .ok_or_else(|| fail("no level after an answer".into()))?;
        let d = query.len();
        let rows: Vec<(Vec<f64>, f64)> = (0..self.bundle.len())
            .map(|s| {
                // piece_row is g_s . y - t <= g_s . x_s - v_s; with t = l it reads
                // g_s . y <= g_s . x_s - v_s + l, i.e. piece s at most l.
                let (entries, rhs) = self.bundle.piece_row(s);
                let mut a = vec![0.0; d];
                for (j, v) in entries {
                    if j < d {
                        a[j] = v;
                    }
                }
                (a, rhs + level)
            })
            .collect();
        let r = self.half_width;
        match project(query, &vec![-r; d], &vec![r; d], &rows)? {
            Some(point) if !self.bundle.points().contains(&point) => self.next_point = point,
            _ => self.done = true,
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the bundle of every answer
/// ([`crate::memory::bundle`]), the LP over the cutting-plane model (as Kelley's),
/// and the projection: a dense copy of every piece (d numbers a query) and its
/// quadratic program (a row a query and 2 d more, d variables).
fn memory(class: &Class, queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    let b = queries as f64;
    let model = crate::memory::lp_work(b + 2.0 * d, d + 1.0, b * (d + 1.0) + 2.0 * d);
    let projection = crate::memory::F64 * b * (d + 1.0)
        + crate::memory::lp_work(b + 2.0 * d, d, b * d + 2.0 * d);
    crate::memory::bytes(
        crate::memory::bundle(d, b) + model + projection + crate::memory::vectors(4.0, d),
    )
}

/// The registry entry of `level`.
pub const INFO: MethodInfo = MethodInfo {
    name: "level",
    description: "first-order: level method, projects the last query onto the model's \
                  level set at the gap midpoint (Lemarechal, Nemirovskii & Nesterov \
                  1995, Math. Program. 69)",
    deterministic: true,
    span: false,
    families: &["first-order"],
    restriction: None,
    memory,
    memory_note: "every answer's point and subgradient (2 d numbers a query) and two LPs over them",
    build: |class, _seed| match class {
        Class::FirstOrder(c) => Ok(Box::new(Level::new(c))),
        _ => Err(wrong_family("level", &["first-order"])),
    },
};
