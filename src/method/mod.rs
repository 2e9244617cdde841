//! Methods: the players under test.
//!
//! A method is an ask/tell object: [`Method::next`] writes its next query (or stops with
//! an output), [`Method::observe`] tells it the answer. The game loop
//! ([`crate::game`]) is the only place that counts queries. An external program is just
//! a `Method` whose `next` reads a line and whose `observe` writes one.
//!
//! To add a method: write `src/method/<name>.rs` with a type implementing [`Method`],
//! name its published source in the doc comment, make it decide "empty" only when its
//! own information proves that no rho-ball fits strictly inside what it knows, and
//! register it in [`METHODS`] and [`build`].

pub mod analytic_center;
pub mod centroid;
mod cut_model;
pub mod ellipsoid;
pub mod enumerate;
pub mod external;
pub mod fibre_bisection;
pub mod kelley;
pub mod large_scale;
pub mod lattice_centerpoint;
pub mod level;
pub mod midpoint;
pub mod mixed_centerpoint;
pub mod random;
pub mod sampled_centroid;
pub mod subgradient;

#[cfg(test)]
mod test_support;

use crate::class::{Class, Promise};
use crate::error::Error;
use crate::oracle::{Answer, Output, Step};

/// A player under test.
pub trait Method {
    /// The registered name (or the external program's name).
    fn name(&self) -> &str;
    /// Next move: write a query into `query` (whose length is the class's query
    /// dimension) and return [`Step::Query`], or stop with [`Step::Output`].
    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error>;
    /// Learn the answer to the last query.
    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error>;
    /// An independent copy of the method in its current state, so that a search
    /// ([`crate::hunt`]) can continue one game in several ways; `None` (the default) when
    /// the method cannot be copied, and then it is replayed from scratch instead.
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        None
    }
}

/// A registered built-in method.
pub struct MethodInfo {
    /// Name used on the command line and in files.
    pub name: &'static str,
    /// One line: the update and its published source.
    pub description: &'static str,
    /// Whether it is deterministic (no seed).
    pub deterministic: bool,
}

/// Every built-in method.
pub const METHODS: &[MethodInfo] = &[
    MethodInfo {
        name: "midpoint",
        description: "queries the centre of its own box model (bisection; common practice)",
        deterministic: true,
    },
    MethodInfo {
        name: "ellipsoid",
        description: "central-cut ellipsoid method (Yudin & Nemirovski 1976; Khachiyan 1979; \
                      Bertsimas & Tsitsiklis 1997 ch. 8); bisection in d = 1",
        deterministic: true,
    },
    MethodInfo {
        name: "random",
        description: "uniform random point of its own box model (seeded baseline)",
        deterministic: false,
    },
    MethodInfo {
        name: "centroid",
        description: "exact centre of gravity of its polytope model, d <= 2 (Levin 1965; \
                      Newman 1965; Grunbaum 1960)",
        deterministic: true,
    },
    MethodInfo {
        name: "sampled-centroid",
        description: "mean of hit-and-run samples of its polytope model (Bertsimas & \
                      Vempala 2004, J. ACM 51(4))",
        deterministic: false,
    },
    MethodInfo {
        name: "analytic-center",
        description: "analytic centre of its polytope model by damped Newton (ACCPM; \
                      Goffin & Vial 2002, Optim. Methods Softw. 17)",
        deterministic: true,
    },
    MethodInfo {
        name: "subgradient",
        description: "first-order: projected subgradient, fixed step D/(L sqrt(N+1)), best \
                      point (Shor 1962; Nesterov 2004 sec. 3.2.3)",
        deterministic: true,
    },
    MethodInfo {
        name: "subgradient-decaying",
        description: "first-order: projected subgradient, step D/(L sqrt(t+1)), best point",
        deterministic: true,
    },
    MethodInfo {
        name: "kelley",
        description: "first-order: cutting-plane method, next query minimises the \
                      max-of-affine model by LP (Kelley 1960, J. SIAM 8)",
        deterministic: true,
    },
    MethodInfo {
        name: "level",
        description: "first-order: level method, projects the last query onto the model's \
                      level set at the gap midpoint (Lemarechal, Nemirovskii & Nesterov \
                      1995, Math. Program. 69)",
        deterministic: true,
    },
    MethodInfo {
        name: "enumerate",
        description: "integer: queries the lattice points of the box in lexicographic order, \
                      skipping excluded ones (lattice enumeration; common practice)",
        deterministic: true,
    },
    MethodInfo {
        name: "lattice-centerpoint",
        description: "integer: deepest lattice point of the hull of its alive set (Oertel, \
                      Wagner & Weismantel, Oper. Res. Lett. 2014)",
        deterministic: true,
    },
    MethodInfo {
        name: "fibre-bisection",
        description: "mixed-integer: branches on the integer part, bisects each fibre \
                      (common practice; Basu & Oertel, SIAM J. Optim. 2017)",
        deterministic: true,
    },
    MethodInfo {
        name: "mixed-centerpoint",
        description: "mixed-integer: deepest of samples drawn fibre by fibre (sampled \
                      centerpoint; Basu & Oertel, SIAM J. Optim. 2017)",
        deterministic: false,
    },
];

/// Builds the built-in method `name` for `class`, seeded with `seed` where it is
/// randomized.
pub fn build(name: &str, class: &Class, seed: u64) -> Result<Box<dyn Method + Send>, Error> {
    let c = match class {
        Class::Feasibility(c) => c,
        Class::FirstOrder(c) => return build_first_order(name, c, seed),
        Class::Lattice(c) => return build_lattice(name, c, seed),
    };
    match name {
        "midpoint" => Ok(Box::new(midpoint::Midpoint::new(c))),
        "ellipsoid" => Ok(Box::new(ellipsoid::Ellipsoid::new(c))),
        "random" => Ok(Box::new(random::RandomPoint::new(c, seed))),
        "centroid" => Ok(Box::new(centroid::Centroid::new(c)?)),
        "sampled-centroid" => Ok(Box::new(sampled_centroid::SampledCentroid::new(c, seed)?)),
        "analytic-center" => Ok(Box::new(analytic_center::AnalyticCenter::new(c)?)),
        _ => Err(Error::UnknownMethod { name: name.into() }),
    }
}

/// The built-in methods of the lattice classes (docs/theory.md §4).
pub const LATTICE_METHODS: &[&str] = &[
    "enumerate",
    "lattice-centerpoint",
    "fibre-bisection",
    "mixed-centerpoint",
];

/// Builds a built-in method for a lattice class (docs/theory.md §4).
fn build_lattice(
    name: &str,
    class: &crate::class::LatticeClass,
    seed: u64,
) -> Result<Box<dyn Method + Send>, Error> {
    match name {
        "enumerate" => Ok(Box::new(enumerate::Enumerate::new(class)?)),
        "lattice-centerpoint" => Ok(Box::new(lattice_centerpoint::LatticeCenterpoint::new(
            class,
        )?)),
        "fibre-bisection" => Ok(Box::new(fibre_bisection::FibreBisection::new(class)?)),
        "mixed-centerpoint" => Ok(Box::new(mixed_centerpoint::MixedCenterpoint::new(
            class, seed,
        )?)),
        _ if METHODS.iter().any(|m| m.name == name) => Err(Error::Unsupported {
            what: format!("method {name:?}"),
            reason: format!("it does not play {}", class.describe()),
        }),
        _ => Err(Error::UnknownMethod { name: name.into() }),
    }
}

/// Builds a built-in method for a first-order class.
fn build_first_order(
    name: &str,
    class: &crate::class::FirstOrderClass,
    seed: u64,
) -> Result<Box<dyn Method + Send>, Error> {
    match name {
        "subgradient" => {
            return Ok(Box::new(subgradient::Subgradient::new(
                class,
                subgradient::StepRule::Fixed,
            )))
        }
        "subgradient-decaying" => {
            return Ok(Box::new(subgradient::Subgradient::new(
                class,
                subgradient::StepRule::Decaying,
            )))
        }
        "kelley" => return Ok(Box::new(kelley::Kelley::new(class))),
        "level" => return Ok(Box::new(level::Level::new(class))),
        "ellipsoid" => return Ok(Box::new(ellipsoid::Ellipsoid::first_order(class))),
        "sampled-centroid" => {
            return Ok(Box::new(sampled_centroid::SampledCentroid::first_order(
                class, seed,
            )?))
        }
        "analytic-center" => {
            return Ok(Box::new(analytic_center::AnalyticCenter::first_order(
                class,
            )?))
        }
        _ => {}
    }
    if METHODS.iter().any(|m| m.name == name) {
        return Err(Error::Unsupported {
            what: format!("method {name:?}"),
            reason: "it plays separation-oracle classes only".into(),
        });
    }
    Err(Error::UnknownMethod { name: name.into() })
}

/// Methods that need first-order answers (value and subgradient).
pub const FIRST_ORDER_METHODS: &[&str] =
    &["subgradient", "subgradient-decaying", "kelley", "level"];

/// Cutting-plane methods that also play first-order classes with objective cuts.
pub const OBJECTIVE_CUT_METHODS: &[&str] = &["ellipsoid", "sampled-centroid", "analytic-center"];

/// Whether built-in method `name` supports `class`; `Err` says why not. Only
/// `centroid` is restricted: its exact centre of gravity exists for d <= 2 only.
pub fn supports(name: &str, class: &Class) -> Result<(), String> {
    let first_order_only = FIRST_ORDER_METHODS.contains(&name);
    let objective_cut = OBJECTIVE_CUT_METHODS.contains(&name);
    let lattice_only = LATTICE_METHODS.contains(&name);
    match class {
        Class::Lattice(c) if !lattice_only => {
            return Err(format!(
                "{name} does not play lattice classes ({})",
                c.describe()
            ))
        }
        Class::Lattice(c)
            if c.cont_dim > 0 && (name == "enumerate" || name == "lattice-centerpoint") =>
        {
            return Err(format!("{name} plays pure integer classes (d = 0) only"))
        }
        _ if lattice_only && !matches!(class, Class::Lattice(_)) => {
            return Err(format!("{name} plays lattice classes only"))
        }
        Class::FirstOrder(_) if !first_order_only && !objective_cut => {
            return Err(format!("{name} plays separation-oracle classes only"))
        }
        Class::Feasibility(_) if first_order_only => {
            return Err(format!("{name} needs first-order answers"))
        }
        _ => {}
    }
    if name == "centroid" && class.query_dim() > 2 {
        return Err(format!(
            "centroid is exact only in d <= 2 (d = {}); use sampled-centroid",
            class.query_dim()
        ));
    }
    Ok(())
}

/// What a method outputs once its own information proves that no rho-ball fits inside
/// what it knows: "empty" when the class allows it; under the nonempty promise the
/// promise contradicts that proof, and the method answers `guess` (its model's centre).
pub(crate) fn give_up(promise: Promise, guess: impl FnOnce() -> Vec<f64>) -> Output {
    match promise {
        Promise::MayBeEmpty => Output::Empty,
        Promise::Nonempty => Output::Point { point: guess() },
    }
}

/// The error a polytope-model method returns when a cut at its query left its model
/// unchanged. Its queries lie strictly inside the model, so a valid cut through or beyond
/// one always changes it, unless outward rounding has swallowed the cut: the model has
/// reached floating-point resolution, and a deterministic method would repeat the same
/// query forever.
pub(crate) fn unchanged(method: &str) -> Error {
    Error::MethodFailed {
        method: method.into(),
        reason: "the last cut left the model unchanged: its outward rounding reached \
                 floating-point resolution (or the cut does not exclude the query)"
            .into(),
    }
}

/// Re-labels a geometry error ([`Error::MethodFailed`] from the polytope model or the
/// sampler) as a failure of `method`; other errors pass through.
pub(crate) fn blame(error: Error, method: &str) -> Error {
    match error {
        Error::MethodFailed {
            method: part,
            reason,
        } => Error::MethodFailed {
            method: method.into(),
            reason: format!("{part}: {reason}"),
        },
        other => other,
    }
}
