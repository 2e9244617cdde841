//! `naysayer bounds`: every bound line for a class, with what it assumes and its source.

use clap::Args;

use crate::bounds::{feasibility_bounds, Side, Status};
use crate::class::Class;
use crate::cli::{describe_class, ClassArgs, EXIT_OK};
use crate::error::Error;

/// Arguments of `naysayer bounds`.
#[derive(Debug, Args)]
pub struct BoundsArgs {
    /// The class.
    #[command(flatten)]
    pub class: ClassArgs,
}

/// Runs `bounds`.
pub fn run(args: &BoundsArgs) -> Result<u8, Error> {
    let class = args.class.to_class()?;
    println!(
        "class: {}",
        describe_class(&Class::Feasibility(class.clone()))
    );
    println!("oracle: separation with strict cuts; accuracy rho is a Euclidean (l2) ball radius");
    println!();
    for bound in feasibility_bounds(&class) {
        let side = match bound.side {
            Side::Lower => "lower",
            Side::Upper => "upper",
        };
        let status = match bound.status {
            Status::Proven => "proven",
            Status::Guide => "guide only, constant unspecified",
        };
        let value = bound
            .queries
            .map_or_else(|| "-".to_string(), |q| q.to_string());
        println!("{side:5} {value:>12}  {}  [{status}]", bound.label);
        println!("      formula: {}", bound.formula);
        println!("      source:  {}", bound.source);
    }
    println!();
    println!(
        "A lower bound holds for every method, run by run; an upper bound is what the named \
         method needs at most on the whole class."
    );
    Ok(EXIT_OK)
}
