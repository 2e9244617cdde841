//! A small linear-programming front end over Clarabel (interior point; Goulart & Chen
//! 2024): minimise q.z subject to sparse rows a_k.z <= b_k.

use clarabel::algebra::CscMatrix;
use clarabel::solver::{
    DefaultSettingsBuilder, DefaultSolver, IPSolver, NonnegativeConeT, SolverStatus,
};

use crate::error::Error;

/// One sparse row a.z <= b: `(entries (column, value), b)`.
pub type Row = (Vec<(usize, f64)>, f64);

/// How an LP ended.
#[derive(Clone, Debug, PartialEq)]
pub enum LpOutcome {
    /// An (approximately, about 1e-9) optimal point.
    Optimal(Vec<f64>),
    /// No feasible point.
    Infeasible,
    /// Unbounded below.
    Unbounded,
}

/// Minimises `objective . z` over `rows`, with `vars` variables.
pub fn minimise(objective: &[f64], rows: &[Row], vars: usize) -> Result<LpOutcome, Error> {
    let fail = |reason: String| Error::MethodFailed {
        method: "linear program".into(),
        reason,
    };
    if rows
        .iter()
        .any(|(r, b)| !b.is_finite() || r.iter().any(|(_, v)| !v.is_finite()))
    {
        return Err(fail("LP data is not finite".into()));
    }
    let mut columns: Vec<Vec<(usize, f64)>> = vec![Vec::new(); vars];
    for (k, (row, _)) in rows.iter().enumerate() {
        for &(j, v) in row {
            if v != 0.0 {
                columns[j].push((k, v));
            }
        }
    }
    let mut colptr = Vec::with_capacity(vars + 1);
    let mut rowval = Vec::new();
    let mut nzval = Vec::new();
    colptr.push(0);
    for column in &mut columns {
        column.sort_by_key(|(k, _)| *k);
        for &(k, v) in column.iter() {
            rowval.push(k);
            nzval.push(v);
        }
        colptr.push(rowval.len());
    }
    let a = CscMatrix::new(rows.len(), vars, colptr, rowval, nzval);
    let p = CscMatrix::zeros((vars, vars));
    let b: Vec<f64> = rows.iter().map(|(_, b)| *b).collect();
    let cones = [NonnegativeConeT(rows.len())];
    let settings = DefaultSettingsBuilder::default()
        .verbose(false)
        .tol_gap_abs(1e-10)
        .tol_gap_rel(1e-10)
        .tol_feas(1e-10)
        .build()
        .map_err(|e| fail(format!("solver settings rejected: {e}")))?;
    let mut solver = DefaultSolver::new(&p, objective, &a, &b, &cones, settings)
        .map_err(|e| fail(format!("solver rejected the LP: {e}")))?;
    solver.solve();
    let solution = &solver.solution;
    Ok(match solution.status {
        SolverStatus::Solved | SolverStatus::AlmostSolved => LpOutcome::Optimal(solution.x.clone()),
        SolverStatus::PrimalInfeasible | SolverStatus::AlmostPrimalInfeasible => {
            LpOutcome::Infeasible
        }
        SolverStatus::DualInfeasible | SolverStatus::AlmostDualInfeasible => LpOutcome::Unbounded,
        status => return Err(fail(format!("the solver ended with status {status:?}"))),
    })
}
