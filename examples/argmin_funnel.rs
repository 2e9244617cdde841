//! argmin's steepest descent and L-BFGS against the slab-funnel adversary
//! (docs/theory.md §2.4, the first-order family's default: every deterministic method
//! needs d * ceil(log_7(L R / (2 eps))) queries), through the argmin adapter; each game's
//! certificate is verified exactly.
//!
//! ```sh
//! cargo run --release --features argmin --example argmin_funnel
//! ```

use std::process::ExitCode;

use argmin::solver::gradientdescent::SteepestDescent;
use argmin::solver::linesearch::MoreThuenteLineSearch;
use argmin::solver::quasinewton::LBFGS;
use naysayer::argmin_adapter::{self, ArgminStats};
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::runner::{GameSpec, Report};

fn show(label: &str, result: Result<(Report, ArgminStats), naysayer::Error>) -> bool {
    match result {
        Err(error) => {
            eprintln!("{label}: {error}");
            false
        }
        Ok((report, stats)) => {
            println!("{label}");
            println!("  queries used           {}", report.record.queries_used);
            println!(
                "  argmin calls           {} cost, {} gradient, {} distinct points",
                stats.cost_calls, stats.gradient_calls, stats.distinct_points
            );
            println!("  ending                 {:?}", report.record.ending);
            match &report.verdict {
                Ok(verdict) => {
                    println!(
                        "  certified lower bound  {}",
                        verdict
                            .certified_lower_bound()
                            .map_or("none".into(), |b| b.to_string())
                    );
                    if let Some(eps) = verdict.certified_uncertainty {
                        println!("  certified uncertainty  {eps:e}");
                    }
                    println!("  verifier               certificate valid (exact)");
                    true
                }
                Err(error) => {
                    println!("  verifier               REJECTED: {error}");
                    false
                }
            }
        }
    }
}

fn main() -> ExitCode {
    let dim = 2;
    let class = match FirstOrderClass::new(dim, 1.0, 1e-3, 1.0, LipschitzNorm::L2) {
        Ok(c) => Class::FirstOrder(c),
        Err(e) => {
            eprintln!("{e}");
            return ExitCode::FAILURE;
        }
    };
    let spec = GameSpec {
        class,
        adversary: "slab-funnel".into(),
        method: String::new(),
        seed: 0,
        budget: 500,
        transcript: None,
    };
    // Start off the origin so that the first gradient is not a tie.
    let init = vec![0.3; dim];
    let steepest = SteepestDescent::new(MoreThuenteLineSearch::new());
    let lbfgs = LBFGS::new(MoreThuenteLineSearch::new(), 5);
    let ok_sd = show(
        "steepest descent (More-Thuente line search)",
        argmin_adapter::play(&spec, "steepest descent", steepest, init.clone(), 100),
    );
    let ok_lbfgs = show(
        "L-BFGS, m = 5 (More-Thuente line search)",
        argmin_adapter::play(&spec, "L-BFGS", lbfgs, init, 100),
    );
    if ok_sd && ok_lbfgs {
        ExitCode::SUCCESS
    } else {
        ExitCode::FAILURE
    }
}
