//! `naysayer bounds`: every bound line for a class, with what it assumes and its source.

use clap::Args;

use crate::bounds::large_scale::gap_bounds;
use crate::bounds::{feasibility_bounds, first_order_bounds, lattice_bounds, Side, Status};
use crate::class::{Class, LargeScale};
use crate::cli::{describe_class, ClassSelection, EXIT_OK};
use crate::error::Error;

/// Arguments of `naysayer bounds`.
#[derive(Debug, Args)]
pub struct BoundsArgs {
    /// The class: family and parameters.
    #[command(flatten)]
    pub class: ClassSelection,
}

/// Prints the large-scale gap curves (docs/theory.md §3 and §5).
fn run_large_scale(game: &LargeScale) -> Result<u8, Error> {
    let class = &game.function;
    let d = class.dim();
    let t = game.horizon;
    crate::say!("class: {}", class.describe());
    crate::say!("oracle: value and one (sub)gradient, l2 norm, x_0 = 0; T = {t} queries");
    crate::say!();
    for bound in gap_bounds(class, t) {
        let side = match bound.side {
            Side::Lower => "lower",
            Side::Upper => "upper",
        };
        let value = bound
            .gap
            .map_or_else(|| "-".to_string(), |g| format!("{g:.6e}"));
        crate::say!("{side:5} {value:>14}  {}", bound.label);
        crate::say!("      formula: {}", bound.formula);
        crate::say!("      source:  {}", bound.source);
    }
    crate::say!();
    crate::say!(
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
    let (described, oracle, bounds) = match args.class.to_class()? {
        Class::LargeScale(game) => return run_large_scale(&game),
        Class::Feasibility(class) => (
            describe_class(&Class::Feasibility(class.clone())),
            "separation with strict cuts; accuracy rho is a Euclidean (l2) ball radius",
            feasibility_bounds(&class),
        ),
        Class::FirstOrder(class) => (
            describe_class(&Class::FirstOrder(class.clone())),
            "value and one subgradient; accuracy eps is an additive gap f(x) - min f",
            first_order_bounds(&class),
        ),
        Class::Lattice(class) => (
            describe_class(&Class::Lattice(class.clone())),
            "separation with strict cuts over Z^n x R^d; a method outputs a mixed-integer \
                 point of K or declares none; rho is the radius of the fibre ball K holds \
                 when it has a mixed-integer point",
            lattice_bounds(&class),
        ),
    };
    crate::say!("class: {described}");
    crate::say!("oracle: {oracle}");
    crate::say!();
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
        crate::say!("{side:5} {value:>12}  {}  [{status}]", bound.label);
        crate::say!("      formula: {}", bound.formula);
        crate::say!("      source:  {}", bound.source);
    }
    crate::say!();
    crate::say!(
        "A proven lower bound holds run by run for every method (the slab-funnel bound: for \
         every deterministic method); an upper bound is what the named method needs at most \
         on the whole class."
    );
    Ok(EXIT_OK)
}
