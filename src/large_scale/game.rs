//! The demonstration loop of the large-scale regime: an ordinary [`Method`] asks, an
//! [`Oracle`] (an explicit instance or a rotation adversary) answers in `f64`, and the
//! loop counts queries. It mirrors [`crate::game::play`] but writes no certificate:
//! what comes out is a gap to compare with a published bound (docs/theory.md §0 and §3).

use std::time::{Duration, Instant};

use crate::class::LargeScaleClass;
use crate::error::Error;
use crate::exact::Exact;
use crate::large_scale::instances::{
    DroriTeboulle, NesterovNonsmooth, SmoothChain, StronglyConvexChain,
};
use crate::large_scale::rotation::Rotation;
use crate::large_scale::rotation_chain::RotationChain;
use crate::large_scale::witness::{DemoFinal, DemoHeader, DemoQuery, DemoRecord, RotatedWitness};
use crate::large_scale::{KnownFunction, Oracle};
use crate::method::large_scale as methods;
use crate::method::Method;
use crate::oracle::{Answer, FirstOrderAnswer, Output, Step};
use crate::transcript::Ending;

/// What one demonstration game produced.
#[derive(Clone, Debug)]
pub struct Played {
    /// Queries answered.
    pub queries_used: u64,
    /// The answered values, in order.
    pub values: Vec<f64>,
    /// The method's output point, when it gave one.
    pub output: Option<Vec<f64>>,
    /// How the game ended.
    pub ending: Ending,
    /// Every exchange, when recording was asked for (O(T d) memory).
    pub exchanges: Vec<DemoQuery>,
}

/// Plays `method` against `oracle` for at most `budget` queries. An oracle error (a
/// dimension too small) is returned as an error; a method failure is data.
pub fn play(
    method: &mut dyn Method,
    oracle: &mut dyn Oracle,
    budget: u64,
    record: bool,
) -> Result<Played, Error> {
    let d = oracle.dim();
    let mut query = vec![0.0; d];
    let mut gradient = vec![0.0; d];
    let mut played = Played {
        queries_used: 0,
        values: Vec::new(),
        output: None,
        ending: Ending::BudgetExhausted,
        exchanges: Vec::new(),
    };
    loop {
        match method.next(&mut query) {
            Err(e) => {
                played.ending = Ending::MethodFailed {
                    reason: e.to_string(),
                };
                break;
            }
            Ok(Step::Output(output)) => {
                if let Output::Point { point } = &output {
                    if point.len() == d && point.iter().all(|x| x.is_finite()) {
                        played.output = Some(point.clone());
                    } else {
                        played.ending = Ending::MethodFailed {
                            reason: "output point has the wrong length or a non-finite \
                                     coordinate"
                                .into(),
                        };
                        break;
                    }
                }
                played.ending = Ending::Output { output };
                break;
            }
            Ok(Step::Query) => {
                if played.queries_used == budget {
                    played.ending = Ending::BudgetExhausted;
                    break;
                }
                if let Some(i) = query.iter().position(|x| !x.is_finite()) {
                    played.ending = Ending::MethodFailed {
                        reason: format!(
                            "query {} has a non-finite coordinate at index {i}",
                            played.queries_used + 1
                        ),
                    };
                    break;
                }
                let value = oracle.answer(&query, &mut gradient)?;
                if !value.is_finite() || gradient.iter().any(|g| !g.is_finite()) {
                    // Only a query of enormous norm overflows the f64 evaluation.
                    played.ending = Ending::MethodFailed {
                        reason: format!(
                            "query {} is so large that f(x) or its gradient overflows f64",
                            played.queries_used + 1
                        ),
                    };
                    break;
                }
                played.queries_used += 1;
                played.values.push(value);
                if record {
                    played.exchanges.push(DemoQuery {
                        index: played.queries_used,
                        point: query.clone(),
                        value,
                        gradient: gradient.clone(),
                    });
                }
                let answer = Answer::FirstOrder(FirstOrderAnswer {
                    value: Exact::Float(value),
                    subgradient: gradient.iter().map(|g| Exact::Float(*g)).collect(),
                });
                if let Err(e) = method.observe(&query, &answer) {
                    played.ending = Ending::MethodFailed {
                        reason: e.to_string(),
                    };
                    break;
                }
            }
        }
    }
    Ok(played)
}

/// The gap of a played game in the class's accuracy measure on the function `f`:
/// nonsmooth, the smallest over the queried points (answered value minus f*) and the
/// output; smooth classes, at the output. `None` when the measure is undefined (no
/// output on a smooth class, nothing at all on the nonsmooth one).
pub fn class_gap(class: &LargeScaleClass, played: &Played, f: &dyn KnownFunction) -> Option<f64> {
    let at_output = played.output.as_ref().map(|x| f.gap(x));
    match class {
        LargeScaleClass::Nonsmooth { .. } => {
            let star = f.optimal_value();
            let queried = played
                .values
                .iter()
                .map(|v| v - star)
                .fold(None, |a: Option<f64>, g| Some(a.map_or(g, |a| a.min(g))));
            match (queried, at_output) {
                (Some(a), Some(b)) => Some(a.min(b)),
                (a, b) => a.or(b),
            }
        }
        _ => at_output,
    }
}

/// A registered large-scale oracle (instance or adversary).
pub struct OracleInfo {
    /// Name used in scenario files.
    pub name: &'static str,
    /// One line: what it is and its source.
    pub description: &'static str,
    /// Whether it is an adversary (valid against any deterministic method) rather than
    /// a fixed instance (valid for span methods).
    pub adversary: bool,
}

/// Every large-scale oracle.
pub const ORACLES: &[OracleInfo] = &[
    OracleInfo {
        name: "drori-teboulle",
        description: "nonsmooth instance, tight for the subgradient method (Drori & \
                      Teboulle 2016); N = T",
        adversary: false,
    },
    OracleInfo {
        name: "nesterov-nonsmooth",
        description: "nonsmooth instance of Nesterov 2004, Thm 3.2.1; k = T",
        adversary: false,
    },
    OracleInfo {
        name: "smooth-chain",
        description: "smooth chain quadratic of Nesterov 2004, Thm 2.1.7; k = T",
        adversary: false,
    },
    OracleInfo {
        name: "strongly-convex-chain",
        description: "strongly convex chain of Nesterov 2004, Thm 2.1.13; k = T",
        adversary: false,
    },
    OracleInfo {
        name: "rotation",
        description: "adaptive-rotation adversary, nonsmooth (rotated Drori-Teboulle, N = T; \
                      any deterministic method; d >= 2T + 2)",
        adversary: true,
    },
    OracleInfo {
        name: "rotation-chain",
        description: "adaptive-rotation adversary, smooth and strongly convex (rotated chain \
                      of length 2T + 1; any deterministic method; d >= 3T + 2)",
        adversary: true,
    },
];

/// Whether oracle `name` plays `class`.
pub fn oracle_supports(name: &str, class: &LargeScaleClass) -> bool {
    matches!(
        (name, class),
        (
            "drori-teboulle" | "nesterov-nonsmooth" | "rotation",
            LargeScaleClass::Nonsmooth { .. }
        ) | ("smooth-chain", LargeScaleClass::Smooth { .. })
            | (
                "strongly-convex-chain",
                LargeScaleClass::StronglyConvex { .. }
            )
            | (
                "rotation-chain",
                LargeScaleClass::Smooth { .. } | LargeScaleClass::StronglyConvex { .. }
            )
    )
}

/// The least dimension oracle `name` needs for T queries.
pub fn needed_dim(name: &str, queries: usize) -> usize {
    match name {
        "drori-teboulle" | "nesterov-nonsmooth" => queries + 1,
        "smooth-chain" | "strongly-convex-chain" => 2 * queries + 1,
        "rotation" => 2 * queries + 2,
        _ => 3 * queries + 2,
    }
}

/// One demonstration game.
#[derive(Clone, Debug, PartialEq)]
pub struct DemoSpec {
    /// The class (its dimension is the game's).
    pub class: LargeScaleClass,
    /// Oracle name ([`ORACLES`]).
    pub oracle: String,
    /// Method name ([`methods::LARGE_SCALE_METHODS`]).
    pub method: String,
    /// Planned queries T (the horizon of the instance or adversary).
    pub queries: u64,
    /// The method's seed.
    pub seed: u64,
    /// Keep every exchange (O(T d) memory) for export and replay.
    pub record: bool,
}

/// The result of one demonstration game.
#[derive(Clone, Debug)]
pub struct DemoReport {
    /// What was played.
    pub played: Played,
    /// The gap in the class's accuracy measure.
    pub gap: Option<f64>,
    /// The lower bound the oracle demonstrates at T.
    pub bound: f64,
    /// The rotated function, for the adversaries.
    pub witness: Option<RotatedWitness>,
    /// Wall time.
    pub wall_time: Duration,
}

impl DemoReport {
    /// The demonstration transcript of this game (header, queries, final record); needs
    /// a recorded game and a witness.
    pub fn records(&self, spec: &DemoSpec) -> Option<Vec<DemoRecord>> {
        let witness = self.witness.clone()?;
        let mut records = vec![DemoRecord::DemoHeader(DemoHeader {
            format: 1,
            tool: format!("naysayer {}", env!("CARGO_PKG_VERSION")),
            class: spec.class,
            oracle: spec.oracle.clone(),
            method: spec.method.clone(),
            seed: spec.seed,
            queries: spec.queries,
        })];
        records.extend(
            self.played
                .exchanges
                .iter()
                .cloned()
                .map(DemoRecord::DemoQuery),
        );
        records.push(DemoRecord::DemoFinal(DemoFinal {
            queries_used: self.played.queries_used,
            output: self.played.output.clone(),
            gap: self.gap.unwrap_or(f64::NAN),
            bound: self.bound,
            witness,
        }));
        Some(records)
    }
}

/// Builds the oracle and the method of `spec`, plays, and measures the gap.
pub fn run(spec: &DemoSpec) -> Result<DemoReport, Error> {
    let start = Instant::now();
    let class = &spec.class;
    if !oracle_supports(&spec.oracle, class) {
        return Err(if ORACLES.iter().any(|o| o.name == spec.oracle) {
            Error::Unsupported {
                what: format!("oracle {:?}", spec.oracle),
                reason: format!("it does not play the {} class", class.kind()),
            }
        } else {
            Error::UnknownAdversary {
                name: spec.oracle.clone(),
            }
        });
    }
    let t = spec.queries.max(1);
    let k = t as usize;
    let d = class.dim();
    let r = class.radius();
    let mut method = methods::build(&spec.method, class, t, spec.seed)?;
    let (played, gap, bound, witness) = match (spec.oracle.as_str(), *class) {
        ("rotation", LargeScaleClass::Nonsmooth { lipschitz, .. }) => {
            let mut adversary = Rotation::new(d, lipschitz, r, k, k)?;
            let played = play(method.as_mut(), &mut adversary, t, spec.record)?;
            let bound = adversary.bound();
            let witness = adversary.finish(played.output.as_deref())?;
            let gap = class_gap(class, &played, &witness);
            (played, gap, bound, Some(witness))
        }
        ("rotation-chain", _) => {
            let mut adversary = RotationChain::new(class, k)?;
            let played = play(method.as_mut(), &mut adversary, t, spec.record)?;
            let witness = adversary.finish(played.output.as_deref())?;
            let gap = class_gap(class, &played, &witness);
            let bound = lower_curve(class, t);
            (played, gap, bound, Some(witness))
        }
        (name, _) => {
            let mut instance = build_instance(name, class, k)?;
            let played = play(method.as_mut(), instance.as_mut(), t, spec.record)?;
            let gap = class_gap(class, &played, instance.as_known());
            (played, gap, instance.bound(), None)
        }
    };
    Ok(DemoReport {
        played,
        gap,
        bound,
        witness,
        wall_time: start.elapsed(),
    })
}

/// The lower curve an oracle demonstrates on `class` at T queries.
pub fn lower_curve(class: &LargeScaleClass, queries: u64) -> f64 {
    crate::large_scale::bounds::gap_bounds(class, queries)[0]
        .gap
        .unwrap_or(f64::NAN)
}

/// An explicit instance with its bound.
pub trait Instance: Oracle + KnownFunction {
    /// The lower bound it demonstrates at its horizon.
    fn bound(&self) -> f64;
    /// As a [`KnownFunction`].
    fn as_known(&self) -> &dyn KnownFunction;
}

macro_rules! instance {
    ($t:ty) => {
        impl Instance for $t {
            fn bound(&self) -> f64 {
                <$t>::bound(self)
            }
            fn as_known(&self) -> &dyn KnownFunction {
                self
            }
        }
    };
}
instance!(DroriTeboulle);
instance!(NesterovNonsmooth);
instance!(SmoothChain);
instance!(StronglyConvexChain);

/// Builds the explicit instance `name` for `class` and horizon k = T.
pub fn build_instance(
    name: &str,
    class: &LargeScaleClass,
    horizon: usize,
) -> Result<Box<dyn Instance>, Error> {
    let d = class.dim();
    let r = class.radius();
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
                what: format!("oracle {name:?}"),
                reason: format!("it is not an instance of the {} class", class.kind()),
            })
        }
    })
}
