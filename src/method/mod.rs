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

pub mod ellipsoid;
pub mod midpoint;
pub mod random;

use crate::class::Class;
use crate::error::Error;
use crate::oracle::{Answer, Step};

/// A player under test.
pub trait Method {
    /// The registered name (or the external program's name).
    fn name(&self) -> &str;
    /// Next move: write a query into `query` (whose length is the class's query
    /// dimension) and return [`Step::Query`], or stop with [`Step::Output`].
    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error>;
    /// Learn the answer to the last query.
    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error>;
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
];

/// Builds the built-in method `name` for `class`, seeded with `seed` where it is
/// randomized.
pub fn build(name: &str, class: &Class, seed: u64) -> Result<Box<dyn Method + Send>, Error> {
    let Class::Feasibility(c) = class;
    match name {
        "midpoint" => Ok(Box::new(midpoint::Midpoint::new(c))),
        "ellipsoid" => Ok(Box::new(ellipsoid::Ellipsoid::new(c))),
        "random" => Ok(Box::new(random::RandomPoint::new(c, seed))),
        _ => Err(Error::UnknownMethod { name: name.into() }),
    }
}

/// Whether built-in method `name` supports `class`; `Err` says why not.
pub fn supports(name: &str, class: &Class) -> Result<(), String> {
    let _ = (name, class);
    Ok(())
}
