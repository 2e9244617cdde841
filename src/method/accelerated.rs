//! Nesterov's accelerated gradient method.
//!
//! Smooth class (the FISTA form without a nonsmooth part; Beck & Teboulle, SIAM J.
//! Imaging Sci. 2, 2009, sec. 4): y_1 = x_0 = 0, t_1 = 1; query y_k;
//! x_k = y_k - (1/beta) grad f(y_k); t_{k+1} = (1 + sqrt(1 + 4 t_k^2))/2;
//! y_{k+1} = x_k + ((t_k - 1)/t_{k+1})(x_k - x_{k-1}). After T queries it outputs x_T, with
//! f(x_T) - f* <= 2 beta ||x_0 - x*||^2 / (T+1)^2 (their Thm 4.4; docs/theory.md §5).
//!
//! Strongly convex class (Nesterov, Introductory Lectures, 2004, constant step scheme
//! (2.2.11)): y_0 = x_0 = 0; query y_k; x_{k+1} = y_k - (1/beta) grad f(y_k);
//! y_{k+1} = x_{k+1} + m (x_{k+1} - x_k), m = (sqrt(beta) - sqrt(mu))/(sqrt(beta) + sqrt(mu)).
//! After T queries it outputs x_T, with f(x_T) - f* <= (1 - sqrt(mu/beta))^T (f(x_0) - f* +
//! (mu/2) ||x_0 - x*||^2) (Nesterov 2004, Thm 2.2.3; from memory; docs/theory.md §5).
//!
//! Both keep every iterate in x_0 + span of the past gradients.

use crate::class::{Class, LargeScaleClass};
use crate::error::Error;
use crate::method::{read_answer, smoothness, wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

/// The accelerated gradient method (variant chosen by the class).
#[derive(Clone, Debug)]
pub struct Accelerated {
    query_point: Vec<f64>,
    last: Vec<f64>,
    step: f64,
    /// `Some(m)`: constant momentum (strongly convex); `None`: the t_k sequence.
    momentum: Option<f64>,
    t: f64,
    planned: u64,
    asked: u64,
    gradient: Vec<f64>,
}

impl Accelerated {
    /// Plans `queries` queries.
    pub fn new(class: &LargeScaleClass, queries: u64) -> Accelerated {
        let (beta, mu) = smoothness(class).unwrap_or((1.0, 0.0));
        let momentum = (mu > 0.0).then(|| (beta.sqrt() - mu.sqrt()) / (beta.sqrt() + mu.sqrt()));
        Accelerated {
            query_point: vec![0.0; class.dim()],
            last: vec![0.0; class.dim()],
            step: 1.0 / beta,
            momentum,
            t: 1.0,
            planned: queries,
            asked: 0,
            gradient: Vec::new(),
        }
    }
}

impl Method for Accelerated {
    fn name(&self) -> &str {
        "accelerated"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked >= self.planned {
            return Ok(Step::Output(Output::Point {
                point: self.last.clone(),
            }));
        }
        query.copy_from_slice(&self.query_point);
        Ok(Step::Query)
    }

    fn observe(&mut self, _query: &[f64], answer: &Answer) -> Result<(), Error> {
        read_answer("accelerated", answer, &mut self.gradient)?;
        let m = match self.momentum {
            Some(m) => m,
            None => {
                let next_t = 0.5 * (1.0 + (1.0 + 4.0 * self.t * self.t).sqrt());
                let m = (self.t - 1.0) / next_t;
                self.t = next_t;
                m
            }
        };
        for ((y, x), g) in self
            .query_point
            .iter_mut()
            .zip(self.last.iter_mut())
            .zip(&self.gradient)
        {
            let new_x = *y - self.step * g;
            *y = new_x + m * (new_x - *x);
            *x = new_x;
        }
        self.asked += 1;
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the iterates, the gradient and scratch, 6 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(6.0, class.query_dim() as f64))
}

/// The registry entry of `accelerated`.
pub const INFO: MethodInfo = MethodInfo {
    name: "accelerated",
    description: "large-scale smooth: Nesterov's accelerated gradient (FISTA form, Beck & \
                  Teboulle 2009); strongly convex: constant momentum (Nesterov 2004, (2.2.11))",
    deterministic: true,
    span: true,
    families: &["large-scale"],
    restriction: Some(crate::method::smooth_only),
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::LargeScale(c) => Ok(Box::new(Accelerated::new(&c.function, c.horizon))),
        _ => Err(wrong_family("accelerated", &["large-scale"])),
    },
};
