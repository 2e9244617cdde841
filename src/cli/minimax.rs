//! `naysayer minimax`: exact minimax values of small pure integer classes (docs/theory.md §6),
//! and the lattice class flags shared with `naysayer play`.

use std::time::Instant;

use clap::Args;

use crate::class::LatticeClass;
use crate::cli::{ClassArgs, EXIT_OK};
use crate::error::Error;
use crate::minimax::{Minimax, QuerySet};

/// The lattice classes (`--class lattice`), as raw arguments; R and rho come from
/// `--half-width` and `--rho`.
#[derive(Debug, Clone, Args)]
pub struct LatticeArgs {
    /// Integer dimension n (lattice classes).
    #[arg(long = "int-dim", default_value_t = 2, allow_negative_numbers = true)]
    pub int_dim: usize,
    /// Lower bound of every integer coordinate (lattice classes).
    #[arg(long = "int-lower", default_value_t = 0, allow_negative_numbers = true)]
    pub int_lower: i64,
    /// Upper bound of every integer coordinate (lattice classes).
    #[arg(long = "int-upper", default_value_t = 1, allow_negative_numbers = true)]
    pub int_upper: i64,
    /// Continuous dimension d (lattice classes; 0 is pure integer feasibility).
    #[arg(long = "cont-dim", default_value_t = 0, allow_negative_numbers = true)]
    pub cont_dim: usize,
}

impl LatticeArgs {
    /// Validates into a lattice class with R and rho from `shape`.
    pub fn to_class(&self, shape: &ClassArgs) -> Result<LatticeClass, Error> {
        LatticeClass::mixed(
            self.int_dim,
            self.int_lower,
            self.int_upper,
            self.cont_dim,
            shape.half_width,
            shape.rho,
        )
    }
}

/// Arguments of `naysayer minimax`.
#[derive(Debug, Args)]
pub struct MinimaxArgs {
    /// Integer dimension n (1 to 3).
    #[arg(long = "int-dim", default_value_t = 2, allow_negative_numbers = true)]
    pub int_dim: usize,
    /// Lower bound of every integer coordinate.
    #[arg(long = "int-lower", default_value_t = 0, allow_negative_numbers = true)]
    pub int_lower: i64,
    /// Upper bound of every integer coordinate.
    #[arg(long = "int-upper", default_value_t = 1, allow_negative_numbers = true)]
    pub int_upper: i64,
    /// The query set Q: `lattice` (lattice points of the box) or `half` (lattice and
    /// half-integer points).
    #[arg(long, default_value = "half", value_parser = ["lattice", "half"])]
    pub queries: String,
    /// Compute instead the exact worst case of this deterministic built-in method.
    #[arg(long)]
    pub method: Option<String>,
    /// Show no progress (by default a line every 10 s when standard error is not a
    /// terminal, a spinner on a terminal).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs `minimax`.
pub fn run(args: &MinimaxArgs) -> Result<u8, Error> {
    let class = LatticeClass::integer(args.int_dim, args.int_lower, args.int_upper)?;
    let queries = if args.queries == "lattice" {
        QuerySet::Lattice
    } else {
        QuerySet::HalfInteger
    };
    let start = Instant::now();
    // |Q|, before the search is prepared (which enumerates every halfspace trace on Q).
    let points: u64 = class
        .lower
        .iter()
        .zip(&class.upper)
        .map(|(l, u)| match queries {
            QuerySet::Lattice => (u - l + 1) as u64,
            QuerySet::HalfInteger => (2 * (u - l) + 1) as u64,
        })
        .fold(1u64, |a, b| a.saturating_mul(b));
    if points <= crate::minimax::MAX_QUERY_POINTS as u64 {
        if let Some(estimate) =
            crate::resources::time::minimax(points as usize, args.method.is_some())
        {
            crate::cli::progress::announce("minimax", &estimate);
        }
    }
    let mut search = Minimax::new(&class, queries)?;
    crate::say!("class                  {}", class.describe());
    let unit = if args.method.is_some() {
        "nodes"
    } else {
        "states"
    };
    let progress =
        crate::cli::progress::Report::start("minimax", unit, &crate::progress::SEARCH, args.quiet);
    let q_text = match queries {
        QuerySet::Lattice => "lattice points of the box",
        QuerySet::HalfInteger => "lattice and half-integer points of the box",
    };
    match &args.method {
        None => {
            let report = search.solve();
            progress.finish();
            crate::say!(
                "query set Q            {q_text} ({} points, {} lattice points)",
                report.query_points,
                report.lattice_points
            );
            crate::say!("V_Q                    {}", report.value);
            crate::say!(
                "inequalities           (count a proven adversary forces on every method) <= \
                 (true complexity) <= V_Q = {}",
                report.value
            );
            if class.contains_unit_cube() && args.int_lower == 0 && args.int_upper == 1 {
                crate::say!(
                    "                       corner forces 2^n = {} on every method (docs/theory.md §4)",
                    1u64 << args.int_dim
                );
            }
            match &report.first_query {
                Some(q) => crate::say!("optimal first query    {q:?}"),
                None => crate::say!("optimal first query    none needed"),
            }
            crate::say!(
                "search size            {} memoised states, {} halfspace traces on Q, {:.2?}",
                report.states,
                report.traces,
                start.elapsed()
            );
        }
        Some(name) => {
            let report = search.method_worst_case(&class, name);
            progress.finish();
            let report = report?;
            crate::say!(
                "query set Q            {q_text} ({} points, {} lattice points)",
                report.query_points,
                report.lattice_points
            );
            crate::say!("method                 {name}");
            crate::say!("worst case             {}", report.value);
            crate::say!(
                "inequalities           V_Q <= worst case of {name} = {} (one explicit cut per \
                 halfspace trace on Q)",
                report.value
            );
            if let Some(q) = &report.first_query {
                crate::say!("first query            {q:?}");
            }
            crate::say!(
                "search size            {} nodes, {:.2?}",
                report.states,
                start.elapsed()
            );
        }
    }
    Ok(EXIT_OK)
}
