//! The projected subgradient method for convex L-Lipschitz f on X = [-R, R]^d
//! (Shor 1962; the guarantee as in Nesterov, Introductory Lectures on Convex
//! Optimization, 2004, sec. 3.2.3, from memory).
//!
//! x_0 = 0, x_{t+1} = P_X(x_t - eta_t g_t). With the fixed step eta = D / (L' sqrt(N)),
//! D = R sqrt(d) >= ||x_0 - x*||_2 and L' the l2 Lipschitz constant
//! ([`crate::bounds::l2_lipschitz`]: L, or L sqrt(d) for the l1 class), the best of the
//! N points x_0..x_(N-1) satisfies min_t f(x_t) - f* <= L' D / sqrt(N), so
//! N = ceil((L' D / eps)^2) queries ([`crate::bounds::subgradient_upper_bound`], exact)
//! guarantee eps-accuracy; the method plans that many and outputs the best point seen.
//! The decaying variant uses eta_t = D / (L' sqrt(t+1)) and the same number of queries
//! (it carries a log factor in its guarantee).

use crate::bounds::{l2_lipschitz, subgradient_upper_bound};
use crate::class::{Class, FirstOrderClass, LargeScale, LargeScaleClass};
use crate::error::Error;
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Step};

/// Step-size rule.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum StepRule {
    /// eta = D / (L' sqrt(N)), N the planned queries.
    Fixed,
    /// eta_t = D / (L sqrt(t+1)).
    Decaying,
}

/// Projected subgradient method; outputs the best point seen after its planned queries.
#[derive(Clone, Debug)]
pub struct Subgradient {
    rule: StepRule,
    half_width: f64,
    /// D / L'.
    scale: f64,
    planned: u64,
    asked: u64,
    point: Vec<f64>,
    best: Option<(f64, Vec<f64>)>,
    name: &'static str,
    /// A given fixed step (the unconstrained variant); `None` follows `rule`.
    step: Option<f64>,
}

/// The most queries the method plans (more would only be censored by any budget).
pub const MAX_PLANNED: u64 = 1 << 40;

impl Subgradient {
    /// Plans ceil((L' D / eps)^2) queries with D = R sqrt(d) (module doc).
    pub fn new(class: &FirstOrderClass, rule: StepRule) -> Subgradient {
        let diameter = class.half_width * (class.dim as f64).sqrt();
        let planned = subgradient_upper_bound(class).clamp(1, MAX_PLANNED);
        Subgradient {
            rule,
            half_width: class.half_width,
            scale: diameter / l2_lipschitz(class),
            planned,
            asked: 0,
            point: vec![0.0; class.dim],
            best: None,
            name: match rule {
                StepRule::Fixed => "subgradient",
                StepRule::Decaying => "subgradient-decaying",
            },
            step: None,
        }
    }

    /// The unconstrained variant with a given fixed step, for the large-scale classes
    /// (docs/theory.md §3): x_0 = 0, x_{t+1} = x_t - step g_t (no projection), `planned`
    /// queries, the best point seen as output. With step R / (M sqrt(N+1)) and N + 1
    /// planned queries it is the method Drori & Teboulle 2016 show tight.
    pub fn unconstrained(dim: usize, step: f64, planned: u64) -> Subgradient {
        Subgradient {
            rule: StepRule::Fixed,
            half_width: f64::INFINITY,
            scale: 0.0,
            planned: planned.max(1),
            asked: 0,
            point: vec![0.0; dim],
            best: None,
            name: "unconstrained-subgradient",
            step: Some(step),
        }
    }

    /// The unconstrained variant for a nonsmooth large-scale game: step R / (M sqrt(T))
    /// over the horizon T (docs/theory.md §3 and §5).
    pub fn for_large_scale(game: &LargeScale) -> Result<Subgradient, Error> {
        match game.function {
            LargeScaleClass::Nonsmooth {
                dim,
                lipschitz,
                radius,
            } => Ok(Subgradient::unconstrained(
                dim,
                radius / (lipschitz * (game.horizon as f64).sqrt()),
                game.horizon,
            )),
            _ => Err(wrong_family("unconstrained-subgradient", &["large-scale"])),
        }
    }

    /// The number of queries the method plans.
    pub fn planned(&self) -> u64 {
        self.planned
    }
}

impl Method for Subgradient {
    fn name(&self) -> &str {
        self.name
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked >= self.planned {
            let point = self
                .best
                .as_ref()
                .map_or_else(|| self.point.clone(), |(_, p)| p.clone());
            return Ok(Step::Output(Output::Point { point }));
        }
        query.copy_from_slice(&self.point);
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let Answer::FirstOrder(fo) = answer else {
            return Err(Error::MethodFailed {
                method: self.name.into(),
                reason: "needs first-order answers (value and subgradient)".into(),
            });
        };
        self.asked += 1;
        let value = fo.value.to_f64();
        if self.best.as_ref().is_none_or(|(v, _)| value < *v) {
            self.best = Some((value, query.to_vec()));
        }
        let eta = match (self.step, self.rule) {
            (Some(step), _) => step,
            (None, rule) => match rule {
                StepRule::Fixed => self.scale / (self.planned as f64).sqrt(),
                StepRule::Decaying => self.scale / ((self.asked as f64) + 1.0).sqrt(),
            },
        };
        for (x, g) in self.point.iter_mut().zip(&fo.subgradient) {
            *x = (*x - eta * g.to_f64()).clamp(-self.half_width, self.half_width);
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the iterate, the best point and scratch, 4 vectors of length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64))
}

/// The registry entry of `subgradient`.
pub const INFO: MethodInfo = MethodInfo {
    name: "subgradient",
    description: "first-order: projected subgradient, fixed step D/(L sqrt(N)) over its N \
                  planned queries, best point (Shor 1962; Nesterov 2004 sec. 3.2.3)",
    deterministic: true,
    span: false,
    families: &["first-order"],
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::FirstOrder(c) => Ok(Box::new(Subgradient::new(c, StepRule::Fixed))),
        _ => Err(wrong_family("subgradient", &["first-order"])),
    },
};

/// The registry entry of `subgradient-decaying`.
pub const DECAYING: MethodInfo = MethodInfo {
    name: "subgradient-decaying",
    description: "first-order: projected subgradient, step D/(L sqrt(t+1)), best point",
    deterministic: true,
    span: false,
    families: &["first-order"],
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::FirstOrder(c) => Ok(Box::new(Subgradient::new(c, StepRule::Decaying))),
        _ => Err(wrong_family("subgradient-decaying", &["first-order"])),
    },
};

/// The registry entry of `unconstrained-subgradient`.
pub const UNCONSTRAINED: MethodInfo = MethodInfo {
    name: "unconstrained-subgradient",
    description: "large-scale nonsmooth: unconstrained subgradient, step R/(M sqrt(T)), best \
                  point (Shor 1962; tight by Drori & Teboulle 2016)",
    deterministic: true,
    span: true,
    families: &["large-scale"],
    restriction: Some(crate::method::nonsmooth_only),
    memory,
    memory_note: "a few vectors of length d",
    build: |class, _seed| match class {
        Class::LargeScale(c) => Ok(Box::new(Subgradient::for_large_scale(c)?)),
        _ => Err(wrong_family("unconstrained-subgradient", &["large-scale"])),
    },
};
