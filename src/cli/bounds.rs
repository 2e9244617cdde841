//! `naysayer bounds`: every bound line for a class, with what it assumes and its source.

use clap::Args;

use crate::bounds::{feasibility_bounds, first_order_bounds, Side, Status};
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
            return Err(Error::Unsupported {
                what: "naysayer bounds".into(),
                reason: "no bound lines for lattice classes yet; the corner and mixed-corner \
                         counts are in `naysayer list`, exact small values in \
                         `naysayer minimax`"
                    .into(),
            })
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
