//! `naysayer bounds`: every bound line for a class, with what it assumes and its source.

use clap::Args;

use crate::bounds::{feasibility_bounds, first_order_bounds, lattice_bounds, Side, Status};
use crate::class::Class;
use crate::cli::{describe_class, ClassArgs, Family, FirstOrderArgs, EXIT_OK};
use crate::error::Error;

/// Arguments of `naysayer bounds`.
#[derive(Debug, Args)]
pub struct BoundsArgs {
    /// The family of classes.
    #[arg(long = "class", value_enum, default_value_t = Family::Feasibility)]
    pub family: Family,
    /// The class's dimension, box and separation accuracy.
    #[command(flatten)]
    pub class: ClassArgs,
    /// First-order parameters.
    #[command(flatten)]
    pub first_order: FirstOrderArgs,
    /// Lattice class parameters (`--class lattice`).
    #[command(flatten)]
    pub lattice: crate::cli::minimax::LatticeArgs,
}

/// Runs `bounds`.
pub fn run(args: &BoundsArgs) -> Result<u8, Error> {
    let (described, oracle, bounds) = match args.family {
        Family::Feasibility => {
            let class = args.class.to_class()?;
            (
                describe_class(&Class::Feasibility(class.clone())),
                "separation with strict cuts; accuracy rho is a Euclidean (l2) ball radius",
                feasibility_bounds(&class),
            )
        }
        Family::FirstOrder => {
            let class = args.first_order.to_class(&args.class)?;
            (
                describe_class(&Class::FirstOrder(class.clone())),
                "value and one subgradient; accuracy eps is an additive gap f(x) - min f",
                first_order_bounds(&class),
            )
        }
        Family::Lattice => {
            let class = args.lattice.to_class(&args.class)?;
            (
                describe_class(&Class::Lattice(class.clone())),
                "separation with strict cuts over Z^n x R^d; a method outputs a mixed-integer \
                 point of K or declares none; rho is the radius of the fibre ball K holds \
                 when it has a mixed-integer point",
                lattice_bounds(&class),
            )
        }
    };
    println!("class: {described}");
    println!("oracle: {oracle}");
    println!();
    for bound in bounds {
        let side = match bound.side {
            Side::Lower => "lower",
            Side::Upper => "upper",
        };
        let status = match bound.status {
            Status::Proven => "proven",
            Status::Guide => "guide only, constant unspecified",
            Status::Construction => "ours, forced in every certified run, not a theorem",
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
