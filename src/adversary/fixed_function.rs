//! The published worst-case functions of the large-scale classes played as oracles
//! (docs/theory.md §3): `drori-teboulle` and `nesterov-nonsmooth` (nonsmooth),
//! `smooth-chain` (smooth) and `strongly-convex-chain` (strongly convex), each built for
//! the game's horizon T (N = k = T).
//!
//! These are not adaptive: the function is fixed before the game, so the bound it
//! demonstrates holds for span methods only (methods whose iterates stay in x_0 plus the
//! span of the past gradients; docs/theory.md §3). The adaptive-rotation adversaries
//! ([`super::rotation`], [`super::rotation_chain`]) extend the same bounds to every
//! deterministic method.
//!
//! Demonstration, not certificate: the answers are the `f64` evaluations of closed
//! formulas with irrational constants; the game's final record names the function (the
//! adversary's name, with the class and horizon of the header) and its gap, and the gap is
//! compared with the published curve to a stated relative tolerance
//! ([`crate::demonstration`]).

use crate::adversary::rotation::first_order_answer;
use crate::adversary::{wrong_family, Adversary, AdversaryInfo, Conclusion, Scope, Undecided};
use crate::class::{Class, LargeScale, LargeScaleClass};
use crate::error::Error;
use crate::instance::large_scale::{
    DroriTeboulle, KnownFunction, NesterovNonsmooth, SmoothChain, StronglyConvexChain,
};
use crate::oracle::Answer;
use crate::transcript::Demonstration;

/// A published instance with the bound it demonstrates at its horizon.
pub trait Instance: KnownFunction + Send {
    /// The published lower bound on the gap at the instance's horizon.
    fn bound(&self) -> f64;
}

macro_rules! instance {
    ($t:ty) => {
        impl Instance for $t {
            fn bound(&self) -> f64 {
                <$t>::bound(self)
            }
        }
    };
}
instance!(DroriTeboulle);
instance!(NesterovNonsmooth);
instance!(SmoothChain);
instance!(StronglyConvexChain);

/// Builds the published instance `name` for a game: the class and horizon k = T.
pub fn build_instance(name: &str, game: &LargeScale) -> Result<Box<dyn Instance>, Error> {
    let class = &game.function;
    let d = class.dim();
    let r = class.radius();
    let horizon = game.horizon as usize;
    Ok(match (name, *class) {
        ("drori-teboulle", LargeScaleClass::Nonsmooth { lipschitz, .. }) => {
            Box::new(DroriTeboulle::new(d, lipschitz, r, horizon)?)
        }
        ("nesterov-nonsmooth", LargeScaleClass::Nonsmooth { lipschitz, .. }) => {
            Box::new(NesterovNonsmooth::new(d, lipschitz, r, horizon)?)
        }
        ("smooth-chain", LargeScaleClass::Smooth { smoothness, .. }) => {
            Box::new(SmoothChain::new(d, smoothness, r, horizon)?)
        }
        (
            "strongly-convex-chain",
            LargeScaleClass::StronglyConvex {
                smoothness,
                strong_convexity,
                ..
            },
        ) => Box::new(StronglyConvexChain::new(
            d,
            smoothness,
            strong_convexity,
            r,
            horizon,
        )?),
        _ => {
            return Err(Error::Unsupported {
                what: format!("adversary {name:?}"),
                reason: format!("it is not an instance of the {} class", class.kind()),
            })
        }
    })
}

/// Memory ([`crate::memory`]): the published instance is a formula in
/// the coordinates: the gradient buffer, its minimiser when judged, and a few vectors of
/// length d.
fn memory(class: &Class, _queries: u64) -> u64 {
    crate::memory::bytes(crate::memory::vectors(6.0, class.query_dim() as f64))
}

/// The registry entry of `drori-teboulle`.
pub const DRORI_TEBOULLE: AdversaryInfo = AdversaryInfo {
    name: "drori-teboulle",
    family: "large-scale",
    description: "large-scale nonsmooth instance, tight for the subgradient method (Drori & Teboulle 2016); N = T (span methods; demonstration)",
    scope: Scope::SpanMethods,
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class| match class {
        Class::LargeScale(c) => Ok(Box::new(FixedFunction::new("drori-teboulle", c)?)),
        _ => Err(wrong_family("drori-teboulle", "large-scale")),
    },
};

/// The registry entry of `nesterov-nonsmooth`.
pub const NESTEROV_NONSMOOTH: AdversaryInfo = AdversaryInfo {
    name: "nesterov-nonsmooth",
    family: "large-scale",
    description: "large-scale nonsmooth instance of Nesterov 2004, Thm 3.2.1; k = T (span methods; demonstration)",
    scope: Scope::SpanMethods,
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class| match class {
        Class::LargeScale(c) => Ok(Box::new(FixedFunction::new("nesterov-nonsmooth", c)?)),
        _ => Err(wrong_family("nesterov-nonsmooth", "large-scale")),
    },
};

/// The registry entry of `smooth-chain`.
pub const SMOOTH_CHAIN: AdversaryInfo = AdversaryInfo {
    name: "smooth-chain",
    family: "large-scale",
    description: "large-scale smooth chain quadratic of Nesterov 2004, Thm 2.1.7; k = T (span methods; demonstration)",
    scope: Scope::SpanMethods,
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class| match class {
        Class::LargeScale(c) => Ok(Box::new(FixedFunction::new("smooth-chain", c)?)),
        _ => Err(wrong_family("smooth-chain", "large-scale")),
    },
};

/// The registry entry of `strongly-convex-chain`.
pub const STRONGLY_CONVEX_CHAIN: AdversaryInfo = AdversaryInfo {
    name: "strongly-convex-chain",
    family: "large-scale",
    description: "large-scale strongly convex chain of Nesterov 2004, Thm 2.1.13; k = T (span methods; demonstration)",
    scope: Scope::SpanMethods,
    restriction: None,
    memory,
    memory_note: "a few vectors of length d",
    build: |class| match class {
        Class::LargeScale(c) => Ok(Box::new(FixedFunction::new("strongly-convex-chain", c)?)),
        _ => Err(wrong_family("strongly-convex-chain", "large-scale")),
    },
};

/// A published instance answering as an oracle.
pub struct FixedFunction {
    name: &'static str,
    instance: Box<dyn Instance>,
    nonsmooth: bool,
    best_value: f64,
    answered: u64,
    gradient: Vec<f64>,
}

impl FixedFunction {
    /// The instance `name` (one of the registered names) for a game.
    pub fn new(name: &'static str, game: &LargeScale) -> Result<FixedFunction, Error> {
        let instance = build_instance(name, game)?;
        let nonsmooth = matches!(game.function, LargeScaleClass::Nonsmooth { .. });
        Ok(FixedFunction::from_instance(name, instance, nonsmooth))
    }

    /// Any instance as an oracle, under the name `name`; `nonsmooth` says whether the gap
    /// is measured at the best queried point and the output (the nonsmooth class) or at
    /// the output alone.
    pub fn from_instance(
        name: &'static str,
        instance: Box<dyn Instance>,
        nonsmooth: bool,
    ) -> FixedFunction {
        FixedFunction {
            name,
            gradient: vec![0.0; instance.dim()],
            instance,
            nonsmooth,
            best_value: f64::INFINITY,
            answered: 0,
        }
    }
}

impl Adversary for FixedFunction {
    fn name(&self) -> &str {
        self.name
    }

    fn answer(&mut self, x: &[f64]) -> Answer {
        let mut gradient = std::mem::take(&mut self.gradient);
        let value = self.instance.evaluate(x, &mut gradient);
        self.best_value = self.best_value.min(value);
        self.answered += 1;
        let answer = first_order_answer(value, &gradient);
        self.gradient = gradient;
        answer
    }

    fn witnesses(&self) -> Option<crate::transcript::Witnesses> {
        None
    }

    fn undecided(&self) -> Undecided {
        Undecided::Unmeasured
    }

    fn conclude(&mut self, output: Option<&[f64]>) -> Result<Conclusion, Error> {
        let at_output = output.map(|x| self.instance.gap(x));
        let gap = if self.nonsmooth {
            // The nonsmooth class measures the best of the queried points and the output.
            let queried =
                (self.answered > 0).then_some(self.best_value - self.instance.optimal_value());
            match (queried, at_output) {
                (Some(a), Some(b)) => Some(a.min(b)),
                (a, b) => a.or(b),
            }
        } else {
            at_output
        };
        Ok(Conclusion::Demonstration(Demonstration::new(
            gap,
            self.instance.bound(),
            None,
        )))
    }
}
