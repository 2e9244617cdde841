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
    /// Large-scale class parameters (docs/theory.md §3).
    #[command(flatten)]
    pub large_scale: LargeScaleArgs,
}

/// Parameters of the large-scale classes (docs/theory.md §3): given `--large-scale KIND`,
/// `bounds` prints the gap curves at T queries instead of query counts.
#[derive(Debug, Args)]
pub struct LargeScaleArgs {
    /// A large-scale class: nonsmooth (uses --lipschitz), smooth or strongly-convex.
    #[arg(long = "large-scale", value_parser = ["nonsmooth", "smooth", "strongly-convex"])]
    pub kind: Option<String>,
    /// Number of queries T at which the gap curves are evaluated.
    #[arg(long, default_value_t = 100)]
    pub queries: u64,
    /// R >= ||x_0 - x*|| (large-scale classes).
    #[arg(long, default_value_t = 1.0)]
    pub radius: f64,
    /// Smoothness beta (smooth and strongly-convex).
    #[arg(long, default_value_t = 1.0)]
    pub smoothness: f64,
    /// Strong convexity mu (strongly-convex), 0 < mu < beta.
    #[arg(long = "strong-convexity", default_value_t = 0.01)]
    pub strong_convexity: f64,
}

/// Prints the large-scale gap curves (docs/theory.md §3 and §5).
fn run_large_scale(kind: &str, args: &BoundsArgs) -> Result<u8, Error> {
    use crate::class::LargeScaleClass;
    let ls = &args.large_scale;
    let d = args.class.dim;
    let class = match kind {
        "nonsmooth" => LargeScaleClass::nonsmooth(d, args.first_order.lipschitz, ls.radius)?,
        "smooth" => LargeScaleClass::smooth(d, ls.smoothness, ls.radius)?,
        _ => LargeScaleClass::strongly_convex(d, ls.smoothness, ls.strong_convexity, ls.radius)?,
    };
    let t = ls.queries.max(1);
    println!("class: {}", class.describe());
    println!("oracle: value and one (sub)gradient, l2 norm, x_0 = 0; T = {t} queries");
    println!();
    for bound in crate::large_scale::bounds::gap_bounds(&class, t) {
        let side = match bound.side {
            Side::Lower => "lower",
            Side::Upper => "upper",
        };
        let value = bound
            .gap
            .map_or_else(|| "-".to_string(), |g| format!("{g:.6e}"));
        println!("{side:5} {value:>14}  {}", bound.label);
        println!("      formula: {}", bound.formula);
        println!("      source:  {}", bound.source);
    }
    println!();
    println!(
        "Published-theorem demonstrations, not certificates: the constants are irrational, \
         so games compare gaps with these curves to a relative 1e-12 (docs/theory.md §0, §3). \
         A lower curve holds for span methods on the explicit instances and for every \
         deterministic method against the rotation adversaries when d is large enough \
         (nonsmooth d >= 2T + 2, smooth d >= 3T + 2; here d = {d})."
    );
    Ok(EXIT_OK)
}

/// Runs `bounds`.
pub fn run(args: &BoundsArgs) -> Result<u8, Error> {
    if let Some(kind) = &args.large_scale.kind {
        return run_large_scale(kind, args);
    }
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
        "A proven lower bound holds run by run for every method (the slab-funnel bound: for \
         every deterministic method); an upper bound is what the named method needs at most \
         on the whole class."
    );
    Ok(EXIT_OK)
}
