//! Methods of the large-scale first-order regime (docs/theory.md §3 and §5): the span methods
//! `gradient`, `accelerated`, `heavy-ball` (and the existing `subgradient`, reused in its
//! unconstrained fixed-step form), and the deliberately non-span `coordinate-search` and
//! `random-direction`, which exercise the adaptive-rotation adversary.
//!
//! They implement the ordinary [`Method`] trait: each is built for a planned number of
//! queries T (the horizon of the large-scale bounds), asks T queries and outputs a
//! point. They are registered here, not in [`crate::method::METHODS`], because they play
//! only the large-scale classes ([`LargeScaleClass`]), which the box classes' registry
//! does not know.

pub mod accelerated;
pub mod coordinate_search;
pub mod gradient;
pub mod heavy_ball;
pub mod random_direction;

use crate::class::LargeScaleClass;
use crate::error::Error;
use crate::method::subgradient::Subgradient;
use crate::method::Method;
use crate::oracle::Answer;

/// A registered large-scale method.
pub struct LargeScaleMethodInfo {
    /// Name used in scenario files.
    pub name: &'static str,
    /// One line: the update and its source.
    pub description: &'static str,
    /// Whether it is deterministic (no seed).
    pub deterministic: bool,
    /// Whether its iterates stay in x_0 + span of the past gradients.
    pub span: bool,
}

/// Every large-scale method.
pub const LARGE_SCALE_METHODS: &[LargeScaleMethodInfo] = &[
    LargeScaleMethodInfo {
        name: "subgradient",
        description: "nonsmooth: unconstrained subgradient, step R/(M sqrt(T)), best point \
                      (Shor 1962; tight by Drori & Teboulle 2016)",
        deterministic: true,
        span: true,
    },
    LargeScaleMethodInfo {
        name: "gradient",
        description: "smooth: gradient descent with step 1/beta (Cauchy 1847; Beck & \
                      Teboulle 2009 Thm 3.1)",
        deterministic: true,
        span: true,
    },
    LargeScaleMethodInfo {
        name: "accelerated",
        description: "smooth: Nesterov's accelerated gradient (FISTA form, Beck & Teboulle \
                      2009); strongly convex: constant momentum (Nesterov 2004, (2.2.11))",
        deterministic: true,
        span: true,
    },
    LargeScaleMethodInfo {
        name: "heavy-ball",
        description: "smooth: heavy ball, step 1/beta, momentum t/(t+3) (no rate claimed); \
                      strongly convex: Polyak 1964 parameters",
        deterministic: true,
        span: true,
    },
    LargeScaleMethodInfo {
        name: "coordinate-search",
        description: "any class: tries +-h along coordinate axes from the best point, halves \
                      h after a full unsuccessful sweep (non-span; common practice)",
        deterministic: true,
        span: false,
    },
    LargeScaleMethodInfo {
        name: "random-direction",
        description: "any class: seeded random search from the best point, step R/sqrt(t+1), \
                      outputs an untested step along minus the best gradient (non-span)",
        deterministic: false,
        span: false,
    },
];

/// Whether `name` plays `class`; `Err` says why not.
pub fn supports(name: &str, class: &LargeScaleClass) -> Result<(), String> {
    let nonsmooth = matches!(class, LargeScaleClass::Nonsmooth { .. });
    match name {
        "subgradient" if !nonsmooth => Err("subgradient plays the nonsmooth class".into()),
        "gradient" | "accelerated" | "heavy-ball" if nonsmooth => {
            Err(format!("{name} needs a smooth class"))
        }
        _ if LARGE_SCALE_METHODS.iter().any(|m| m.name == name) => Ok(()),
        _ => Err(format!("unknown large-scale method {name:?}")),
    }
}

/// Builds method `name` for `class`, planned for `queries` queries, seeded with `seed`.
pub fn build(
    name: &str,
    class: &LargeScaleClass,
    queries: u64,
    seed: u64,
) -> Result<Box<dyn Method + Send>, Error> {
    supports(name, class).map_err(|reason| {
        if LARGE_SCALE_METHODS.iter().any(|m| m.name == name) {
            Error::Unsupported {
                what: format!("method {name:?}"),
                reason,
            }
        } else {
            Error::UnknownMethod { name: name.into() }
        }
    })?;
    let queries = queries.max(1);
    Ok(match (name, class) {
        (
            "subgradient",
            LargeScaleClass::Nonsmooth {
                dim,
                lipschitz,
                radius,
            },
        ) => Box::new(Subgradient::unconstrained(
            *dim,
            radius / (lipschitz * (queries as f64).sqrt()),
            queries,
        )),
        ("gradient", _) => Box::new(gradient::Gradient::new(class, queries)),
        ("accelerated", _) => Box::new(accelerated::Accelerated::new(class, queries)),
        ("heavy-ball", _) => Box::new(heavy_ball::HeavyBall::new(class, queries)),
        ("coordinate-search", _) => {
            Box::new(coordinate_search::CoordinateSearch::new(class, queries))
        }
        ("random-direction", _) => {
            Box::new(random_direction::RandomDirection::new(class, queries, seed))
        }
        _ => return Err(Error::UnknownMethod { name: name.into() }),
    })
}

/// The value and (sub)gradient of a first-order answer, as `f64`, into `gradient`.
pub(crate) fn read_answer(
    method: &str,
    answer: &Answer,
    gradient: &mut Vec<f64>,
) -> Result<f64, Error> {
    let Answer::FirstOrder(fo) = answer else {
        return Err(Error::MethodFailed {
            method: method.into(),
            reason: "needs first-order answers (value and gradient)".into(),
        });
    };
    gradient.clear();
    gradient.extend(fo.subgradient.iter().map(|g| g.to_f64()));
    Ok(fo.value.to_f64())
}

/// The smoothness beta and strong convexity mu (0 for the smooth class) of a smooth
/// class; `None` for the nonsmooth class.
pub(crate) fn smoothness(class: &LargeScaleClass) -> Option<(f64, f64)> {
    match *class {
        LargeScaleClass::Nonsmooth { .. } => None,
        LargeScaleClass::Smooth { smoothness, .. } => Some((smoothness, 0.0)),
        LargeScaleClass::StronglyConvex {
            smoothness,
            strong_convexity,
            ..
        } => Some((smoothness, strong_convexity)),
    }
}
