//! Seeded random search (common practice, no source pinned): x_best = 0 is queried
//! first; query t >= 1 is x_best + (R / sqrt(t+1)) r_t with r_t a pseudo-random unit
//! vector (normalised Gaussian coordinates by Box-Muller, ChaCha8 stream from the
//! seed), and x_best moves when the value drops. After T queries it outputs a point it
//! never queried: x_best - (R / sqrt(T+1)) g_best / ||g_best||.
//!
//! Deliberately not a span method, and its output is not a queried point: it exercises
//! the rotation adversary's "output need not be a queried point" case. Deterministic
//! given its seed; a claim about it is about that seed.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::class::{Class, LargeScaleClass};
use crate::error::Error;
use crate::method::{read_answer, wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

/// Seeded random-direction search.
#[derive(Clone, Debug)]
pub struct RandomDirection {
    best: Vec<f64>,
    best_value: Option<f64>,
    best_gradient: Vec<f64>,
    radius: f64,
    planned: u64,
    asked: u64,
    rng: ChaCha8Rng,
    gradient: Vec<f64>,
}

impl RandomDirection {
    /// Plans `queries` queries.
    pub fn new(class: &LargeScaleClass, queries: u64, seed: u64) -> RandomDirection {
        RandomDirection {
            best: vec![0.0; class.dim()],
            best_value: None,
            best_gradient: vec![0.0; class.dim()],
            radius: class.radius(),
            planned: queries,
            asked: 0,
            rng: ChaCha8Rng::seed_from_u64(seed),
            gradient: Vec::new(),
        }
    }
}

impl Method for RandomDirection {
    fn name(&self) -> &str {
        "random-direction"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked >= self.planned {
            let n = crate::geometry::basis::norm(&self.best_gradient);
            let h = self.radius / ((self.planned as f64) + 1.0).sqrt();
            let mut point = self.best.clone();
            if n > 0.0 {
                for (x, g) in point.iter_mut().zip(&self.best_gradient) {
                    *x -= h * g / n;
                }
            }
            return Ok(Step::Output(Output::Point { point }));
        }
        query.copy_from_slice(&self.best);
        if self.best_value.is_some() {
            let mut direction: Vec<f64> = (0..query.len())
                .map(|_| {
                    let u1: f64 = 1.0 - self.rng.random::<f64>();
                    let u2: f64 = self.rng.random::<f64>();
                    (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
                })
                .collect();
            let n = crate::geometry::basis::norm(&direction);
            let h = self.radius / ((self.asked as f64) + 1.0).sqrt();
            direction
                .iter_mut()
                .for_each(|r| *r *= h / n.max(f64::MIN_POSITIVE));
            for (x, r) in query.iter_mut().zip(&direction) {
                *x += r;
            }
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let value = read_answer("random-direction", answer, &mut self.gradient)?;
        self.asked += 1;
        if self.best_value.is_none_or(|b| value < b) {
            self.best.copy_from_slice(query);
            self.best_value = Some(value);
            self.best_gradient.copy_from_slice(&self.gradient);
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the best point, its gradient, the direction and scratch, 6 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(6.0, class.query_dim() as f64))
}

/// The registry entry of `random-direction`.
pub const INFO: MethodInfo = MethodInfo {
    name: "random-direction",
    description: "large-scale, any class: seeded random search from the best point, step \
                  R/sqrt(t+1), outputs an untested step along minus the best gradient \
                  (non-span)",
    deterministic: false,
    span: false,
    families: &["large-scale"],
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class, seed| match class {
        Class::LargeScale(c) => Ok(Box::new(RandomDirection::new(&c.function, c.horizon, seed))),
        _ => Err(wrong_family("random-direction", &["large-scale"])),
    },
};
