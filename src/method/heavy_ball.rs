//! The heavy-ball method (Polyak, USSR Comput. Math. Math. Phys. 4(5), 1964):
//! x_0 = x_{-1} = 0, query x_t, x_{t+1} = x_t - alpha grad f(x_t) + m_t (x_t - x_{t-1});
//! after T queries it outputs x_T. A span method.
//!
//! Strongly convex class: Polyak's parameters for quadratics, alpha = 4/(sqrt(beta) +
//! sqrt(mu))^2, m = ((sqrt(Q) - 1)/(sqrt(Q) + 1))^2 (from memory; his local rate is
//! asymptotic, so no upper curve is drawn). Smooth class: alpha = 1/beta and
//! m_t = t/(t+3) (ours; stable on quadratics since alpha beta <= 1 < 2(1 + m_t); no rate
//! claimed, no upper curve).

use crate::class::{Class, LargeScaleClass};
use crate::error::Error;
use crate::method::{read_answer, smoothness, wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

/// The heavy-ball method.
#[derive(Clone, Debug)]
pub struct HeavyBall {
    point: Vec<f64>,
    previous: Vec<f64>,
    step: f64,
    /// `Some(m)`: constant momentum; `None`: t/(t+3).
    momentum: Option<f64>,
    planned: u64,
    asked: u64,
    gradient: Vec<f64>,
}

impl HeavyBall {
    /// Plans `queries` queries.
    pub fn new(class: &LargeScaleClass, queries: u64) -> HeavyBall {
        let (beta, mu) = smoothness(class).unwrap_or((1.0, 0.0));
        let (step, momentum) = if mu > 0.0 {
            let (sb, sm) = (beta.sqrt(), mu.sqrt());
            let q = (sb - sm) / (sb + sm);
            (4.0 / ((sb + sm) * (sb + sm)), Some(q * q))
        } else {
            (1.0 / beta, None)
        };
        HeavyBall {
            point: vec![0.0; class.dim()],
            previous: vec![0.0; class.dim()],
            step,
            momentum,
            planned: queries,
            asked: 0,
            gradient: Vec::new(),
        }
    }
}

impl Method for HeavyBall {
    fn name(&self) -> &str {
        "heavy-ball"
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
        read_answer("heavy-ball", answer, &mut self.gradient)?;
        let t = self.asked as f64;
        let m = self.momentum.unwrap_or(t / (t + 3.0));
        for ((x, x_prev), g) in self
            .point
            .iter_mut()
            .zip(self.previous.iter_mut())
            .zip(&self.gradient)
        {
            let next = *x - self.step * g + m * (*x - *x_prev);
            *x_prev = *x;
            *x = next;
        }
        self.asked += 1;
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the iterates, the gradient and scratch, 6 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(6.0, class.query_dim() as f64))
}

/// The registry entry of `heavy-ball`.
pub const INFO: MethodInfo = MethodInfo {
    name: "heavy-ball",
    description: "large-scale smooth: heavy ball, step 1/beta, momentum t/(t+3) (no rate \
                  claimed); strongly convex: Polyak 1964 parameters",
    deterministic: true,
    span: true,
    families: &["large-scale"],
    restriction: Some(crate::method::smooth_only),
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::LargeScale(c) => Ok(Box::new(HeavyBall::new(&c.function, c.horizon))),
        _ => Err(wrong_family("heavy-ball", &["large-scale"])),
    },
};
