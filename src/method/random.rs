//! Random: query a uniform random point of the method's own box model (a seeded
//! baseline; common practice, no source).

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::class::{Class, FeasibilityClass, Promise};
use crate::error::Error;
use crate::geometry::BoxModel;
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Separation, Step};

/// Uniform point of its box; "empty" once some side is at most 2 rho.
#[derive(Clone, Debug)]
pub struct RandomPoint {
    model: BoxModel,
    rho: f64,
    promise: Promise,
    rng: ChaCha8Rng,
    found: Option<Vec<f64>>,
}

impl RandomPoint {
    /// Starts from the class's box with generator seed `seed`.
    pub fn new(class: &FeasibilityClass, seed: u64) -> RandomPoint {
        RandomPoint {
            model: BoxModel::cube(class.dim, class.half_width),
            rho: class.rho,
            promise: class.promise,
            rng: ChaCha8Rng::seed_from_u64(seed),
            found: None,
        }
    }
}

impl RandomPoint {
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

impl Method for RandomPoint {
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        Some(Box::new(self.clone()))
    }

    fn name(&self) -> &str {
        "random"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        if self.model.too_thin_for(self.rho) {
            return Ok(Step::Output(self.give_up()));
        }
        for ((q, l), u) in query
            .iter_mut()
            .zip(&self.model.lower)
            .zip(&self.model.upper)
        {
            let t: f64 = self.rng.random();
            *q = (l + t * (u - l)).clamp(*l, *u);
        }
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

/// The registry entry of `random`.
pub const INFO: MethodInfo = MethodInfo {
    name: "random",
    description: "uniform random point of its own box model (seeded baseline)",
    deterministic: false,
    span: false,
    families: &["feasibility"],
    restriction: None,
    memory,
    memory_note: "its box, 4 d numbers",
    build: |class, seed| match class {
        Class::Feasibility(c) => Ok(Box::new(RandomPoint::new(c, seed))),
        _ => Err(wrong_family("random", &["feasibility"])),
    },
};
