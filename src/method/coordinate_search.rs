//! Coordinate search (compass search along the axes; common practice, no source
//! pinned): x_best = 0 is queried first; then x_best + s h e_i for i = 1, 2, ... and
//! s = +1, -1, moving x_best whenever the value drops; h starts at R and halves after a
//! full sweep of all 2d trials without improvement. Outputs x_best after T queries.
//!
//! Deliberately not a span method (its queries ignore the gradients), to exercise the
//! adaptive-rotation adversary, which must hold against any deterministic method.

use crate::class::{Class, LargeScaleClass};
use crate::error::Error;
use crate::method::{read_answer, wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

/// Coordinate search.
#[derive(Clone, Debug)]
pub struct CoordinateSearch {
    best: Vec<f64>,
    best_value: Option<f64>,
    step: f64,
    trial: usize,
    improved: bool,
    planned: u64,
    asked: u64,
    gradient: Vec<f64>,
}

impl CoordinateSearch {
    /// Plans `queries` queries with first step R.
    pub fn new(class: &LargeScaleClass, queries: u64) -> CoordinateSearch {
        CoordinateSearch {
            best: vec![0.0; class.dim()],
            best_value: None,
            step: class.radius(),
            trial: 0,
            improved: false,
            planned: queries,
            asked: 0,
            gradient: Vec::new(),
        }
    }

    fn trial_point(&self, query: &mut [f64]) {
        query.copy_from_slice(&self.best);
        let (i, sign) = (self.trial / 2, if self.trial % 2 == 0 { 1.0 } else { -1.0 });
        query[i] += sign * self.step;
    }
}

impl Method for CoordinateSearch {
    fn name(&self) -> &str {
        "coordinate-search"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked >= self.planned {
            return Ok(Step::Output(Output::Point {
                point: self.best.clone(),
            }));
        }
        if self.best_value.is_none() {
            query.copy_from_slice(&self.best);
        } else {
            self.trial_point(query);
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let value = read_answer("coordinate-search", answer, &mut self.gradient)?;
        self.asked += 1;
        match self.best_value {
            None => self.best_value = Some(value),
            Some(best) => {
                if value < best {
                    self.best.copy_from_slice(query);
                    self.best_value = Some(value);
                    self.improved = true;
                }
                self.trial += 1;
                if self.trial == 2 * self.best.len() {
                    self.trial = 0;
                    if !self.improved {
                        self.step *= 0.5;
                    }
                    self.improved = false;
                }
            }
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the best point, its gradient and scratch, 5 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(5.0, class.query_dim() as f64))
}

/// The registry entry of `coordinate-search`.
pub const INFO: MethodInfo = MethodInfo {
    name: "coordinate-search",
    description: "large-scale, any class: tries +-h along coordinate axes from the best point, \
                  halves h after a full unsuccessful sweep (non-span; common practice)",
    deterministic: true,
    span: false,
    families: &["large-scale"],
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::LargeScale(c) => Ok(Box::new(CoordinateSearch::new(&c.function, c.horizon))),
        _ => Err(wrong_family("coordinate-search", &["large-scale"])),
    },
};
