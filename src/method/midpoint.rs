//! Midpoint: query the centre of the method's own box model (multidimensional
//! bisection; common practice, no source). Against the box-halving adversary it is
//! optimal: it meets the lower bound d*k + 1 exactly (docs/theory.md §1.1).

use crate::class::{Class, FeasibilityClass, Promise};
use crate::error::Error;
use crate::geometry::BoxModel;
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Separation, Step};

/// Queries the centre of its box; declares "empty" once some side is at most 2 rho.
/// An `inside` answer ends the game with that point.
#[derive(Clone, Debug)]
pub struct Midpoint {
    model: BoxModel,
    rho: f64,
    promise: Promise,
    found: Option<Vec<f64>>,
}

impl Midpoint {
    /// Starts from the class's box.
    pub fn new(class: &FeasibilityClass) -> Midpoint {
        Midpoint {
            model: BoxModel::cube(class.dim, class.half_width),
            rho: class.rho,
            promise: class.promise,
            found: None,
        }
    }
}

impl Midpoint {
    /// "Empty" when the class allows it; under the nonempty promise, the box centre
    /// (a guess: the method's information no longer pins K down).
    fn give_up(&self) -> Output {
        match self.promise {
            Promise::MayBeEmpty => Output::Empty,
            Promise::Nonempty => {
                let mut point = vec![0.0; self.model.dim()];
                self.model.center_into(&mut point);
                Output::Point { point }
            }
        }
    }
}

impl Method for Midpoint {
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        Some(Box::new(self.clone()))
    }

    fn name(&self) -> &str {
        "midpoint"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        if self.model.too_thin_for(self.rho) {
            return Ok(Step::Output(self.give_up()));
        }
        self.model.center_into(query);
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        match answer.to_separation(query) {
            Separation::Inside => self.found = Some(query.to_vec()),
            Separation::Cut(cut) => self.model.apply(&cut),
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): its box model (lower and upper corners) and scratch, 4 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64))
}

/// The registry entry of `midpoint`.
pub const INFO: MethodInfo = MethodInfo {
    name: "midpoint",
    description: "queries the centre of its own box model (bisection; common practice)",
    deterministic: true,
    span: false,
    families: &["feasibility"],
    restriction: None,
    memory,
    memory_note: "its box, 4 d numbers",
    build: |class, _seed| match class {
        Class::Feasibility(c) => Ok(Box::new(Midpoint::new(c))),
        _ => Err(wrong_family("midpoint", &["feasibility"])),
    },
};
