//! `naysayer demo`: every built-in method against the box-halving adversary at d = 8,
//! R/rho = 1e6, with the bound lines beside the measured counts.

use clap::Args;

use crate::bounds::feasibility_bounds;
use crate::class::{Class, FeasibilityClass, Promise};
use crate::cli::play::queries_used_text;
use crate::cli::{describe_class, EXIT_OK, EXIT_REJECTED};
use crate::error::Error;
use crate::game::Ending;
use crate::method::{self, METHODS};
use crate::runner::{self, GameSpec};

/// Arguments of `naysayer demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Seed for randomized methods.
    #[arg(long, default_value_t = 0)]
    pub seed: u64,
}

/// Runs `demo`.
pub fn run(args: &DemoArgs) -> Result<u8, Error> {
    let class = FeasibilityClass::new(8, 1.0, 1e-6, Promise::MayBeEmpty)?;
    let class_any = Class::Feasibility(class.clone());
    println!("naysayer demo: {}", describe_class(&class_any));
    println!("adversary: halving (box-halving resisting oracle)\n");
    println!(
        "{:<18} {:>14} {:>22} {:>10}  outcome",
        "method", "queries used", "certified lower bound", "verified"
    );
    let mut all_valid = true;
    for info in METHODS {
        if let Err(reason) = method::supports(info.name, &class_any) {
            println!("{:<18} skipped: {reason}", info.name);
            continue;
        }
        let spec = GameSpec {
            class: class_any.clone(),
            adversary: "halving".into(),
            method: info.name.into(),
            seed: args.seed,
            budget: 1_000_000,
            transcript: None,
        };
        let report = runner::run(&spec)?;
        let censored = matches!(report.record.ending, Ending::BudgetExhausted);
        let (lower, verified, outcome) = match &report.verdict {
            Ok(v) => (
                v.certified_lower_bound()
                    .map_or("none".to_string(), |b| b.to_string()),
                "yes",
                crate::cli::play::describe_outcome(&v.outcome, &v.ending),
            ),
            Err(e) => {
                all_valid = false;
                ("-".into(), "REJECTED", e.to_string())
            }
        };
        println!(
            "{:<18} {:>14} {:>22} {:>10}  {outcome}",
            info.name,
            queries_used_text(report.record.queries_used, censored),
            lower,
            verified
        );
    }
    println!("\nbounds for this class (queries):");
    for bound in feasibility_bounds(&class) {
        let value = bound
            .queries
            .map_or_else(|| "order only".to_string(), |q| q.to_string());
        println!("  {:<28} {:>12}  ({})", bound.label, value, bound.source);
    }
    Ok(if all_valid { EXIT_OK } else { EXIT_REJECTED })
}
