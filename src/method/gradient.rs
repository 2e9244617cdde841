//! Gradient descent with the fixed step 1/beta (Cauchy 1847), x_0 = 0,
//! x_{t+1} = x_t - (1/beta) grad f(x_t); after T queries it outputs x_T.
//!
//! Guarantees (docs/theory.md §5; from memory): on a convex beta-smooth f,
//! f(x_T) - f* <= beta ||x_0 - x*||^2 / (2T) (Beck & Teboulle, SIAM J. Imaging Sci. 2,
//! 2009, Thm 3.1, with no nonsmooth part); on a mu-strongly convex one,
//! f(x_T) - f* <= (1 - mu/beta)^T (f(x_0) - f*) (common practice, no source pinned).

use crate::class::{Class, LargeScaleClass};
use crate::error::Error;
use crate::method::{read_answer, smoothness, wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

/// Gradient descent with step 1/beta.
#[derive(Clone, Debug)]
pub struct Gradient {
    point: Vec<f64>,
    step: f64,
    planned: u64,
    asked: u64,
    gradient: Vec<f64>,
}

impl Gradient {
    /// Plans `queries` queries on a smooth class (beta = 1 on the nonsmooth class, which
    /// `supports` refuses).
    pub fn new(class: &LargeScaleClass, queries: u64) -> Gradient {
        let beta = smoothness(class).map_or(1.0, |(b, _)| b);
        Gradient {
            point: vec![0.0; class.dim()],
            step: 1.0 / beta,
            planned: queries,
            asked: 0,
            gradient: Vec::new(),
        }
    }
}

impl Method for Gradient {
    fn name(&self) -> &str {
        "gradient"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked >= self.planned {
            return Ok(Step::Output(Output::Point {
                point: self.point.clone(),
            }));
        }
        query.copy_from_slice(&self.point);
        Ok(Step::Query)
    }

    fn observe(&mut self, _query: &[f64], answer: &Answer) -> Result<(), Error> {
        read_answer("gradient", answer, &mut self.gradient)?;
        for (x, g) in self.point.iter_mut().zip(&self.gradient) {
            *x -= self.step * g;
        }
        self.asked += 1;
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the iterate, the gradient and scratch, 4 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64))
}

/// The registry entry of `gradient`.
pub const INFO: MethodInfo = MethodInfo {
    name: "gradient",
    description: "large-scale smooth: gradient descent with step 1/beta (Cauchy 1847; Beck & \
                  Teboulle 2009 Thm 3.1)",
    deterministic: true,
    span: true,
    families: &["large-scale"],
    restriction: Some(crate::method::smooth_only),
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::LargeScale(c) => Ok(Box::new(Gradient::new(&c.function, c.horizon))),
        _ => Err(wrong_family("gradient", &["large-scale"])),
    },
};
