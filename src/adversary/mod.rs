//! Resisting oracles: adversaries that answer each query so as to keep as much of the
//! problem undecided as they can, while staying consistent with some instance of the
//! class.
//!
//! To add an adversary: write `src/adversary/<name>.rs` with a type implementing
//! [`Adversary`], document its construction and the theorem (or the words "ours,
//! certified per run") it relies on, and register it in [`ADVERSARIES`] and [`build`].

pub mod corner;
pub mod fixed_function;
pub mod halving;
pub mod instance_oracle;
pub mod lattice_half;
pub mod mixed_corner;
pub mod orthant;
pub mod rotation;
pub mod rotation_chain;
pub mod slab_funnel;

use serde::{Deserialize, Serialize};

use crate::class::Class;
use crate::error::Error;
use crate::oracle::Answer;
use crate::transcript::{Demonstration, Witnesses};

pub use halving::Halving;

/// How much of the problem is still undecided.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", content = "value", rename_all = "kebab-case")]
#[non_exhaustive]
pub enum Undecided {
    /// log2 of the volume of the alive region.
    Log2Volume(f64),
    /// The number of alive lattice points (lattice classes, docs/theory.md §4).
    AlivePoints(f64),
    /// log2 of the mixed-integer measure: the sum over integer fibres of the alive
    /// fibre volume (docs/theory.md §4).
    Log2MixedMeasure(f64),
    /// The directions an adaptive-rotation adversary still hides (docs/theory.md §3).
    HiddenDirections(f64),
    /// The adversary keeps no measure (a fixed function answering as an oracle).
    Unmeasured,
}

impl Undecided {
    /// The measure as one number (for charts).
    pub fn value(&self) -> f64 {
        match self {
            Undecided::Log2Volume(v)
            | Undecided::AlivePoints(v)
            | Undecided::Log2MixedMeasure(v)
            | Undecided::HiddenDirections(v) => *v,
            Undecided::Unmeasured => f64::NAN,
        }
    }
}

/// A resisting oracle.
///
/// Invariants every implementation keeps (checked by property tests):
/// consistency (the witnesses agree exactly with every answer in their prefix),
/// resistance (each answer keeps the fraction of the undecided set the adversary's
/// construction promises), determinism (same queries, same answers, byte for byte),
/// portability (only +, -, *, /, sqrt, with documented tie rules).
pub trait Adversary {
    /// The registered name.
    fn name(&self) -> &str;
    /// Answers one query. The query is finite and has the class's dimension; the game
    /// loop checks both before calling.
    fn answer(&mut self, query: &[f64]) -> Answer;
    /// Explicit instances that agree with the longest prefix of answers that still has
    /// a certificate; `None` when not even the empty prefix has one.
    fn witnesses(&self) -> Option<Witnesses>;
    /// How much is still undecided.
    fn undecided(&self) -> Undecided;
    /// The most queries it can answer, when it is built for a horizon (the game loop
    /// refuses a larger budget before the first query); `None` (the default): no limit.
    fn capacity(&self) -> Option<u64> {
        None
    }
    /// What the adversary hands over when the game ends, given the method's output point
    /// (if it gave one): its witnesses for the certificate (the default), or, for the
    /// large-scale demonstrations, the completed function and the gap.
    fn conclude(&mut self, output: Option<&[f64]>) -> Result<Conclusion, Error> {
        let _ = output;
        Ok(Conclusion::Certificate(self.witnesses()))
    }
}

/// What an adversary hands over at the end of a game.
#[derive(Clone, Debug, PartialEq)]
pub enum Conclusion {
    /// Witnesses for the exact verifier (`None` when no prefix is certifiable).
    Certificate(Option<Witnesses>),
    /// A published-theorem demonstration, checked to a stated tolerance.
    Demonstration(Demonstration),
}

/// Which methods an adversary's bound binds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scope {
    /// Every method (the adversary answers adaptively; a randomized method run by run).
    EveryMethod,
    /// Span methods only: a fixed function, whose bound holds for methods whose iterates
    /// stay in x_0 plus the span of the past gradients (docs/theory.md §3).
    SpanMethods,
}

/// A registered adversary.
pub struct AdversaryInfo {
    /// Name used on the command line and in files.
    pub name: &'static str,
    /// The family of classes it plays (`feasibility`, `first-order`, `lattice`,
    /// `large-scale`).
    pub family: &'static str,
    /// One line: what it does and what it proves.
    pub description: &'static str,
    /// Which methods its bound binds.
    pub scope: Scope,
    /// A cheap check of a class of its family that it cannot play (`Err` says why), run
    /// before building it and when a scenario is read, if any.
    pub restriction: Option<crate::method::Restriction>,
    /// The bytes it holds in a game of a given number of queries on a class of its
    /// family, from its data structures, the witnesses or function it hands over
    /// included: each priced from above and counted as far as that many queries surely
    /// build it ([`crate::memory`]). A game that cannot fit is refused before it starts
    /// ([`crate::resources`]).
    pub memory: crate::method::Memory,
    /// What dominates that estimate, in a few words for messages.
    pub memory_note: &'static str,
    /// Builds it for a class of its family.
    pub build: fn(&Class) -> Result<Box<dyn Adversary + Send>, Error>,
}

/// Every registered adversary. To add one: write `src/adversary/<name>.rs` with its
/// type and an `INFO` entry, and list the entry here.
pub const ADVERSARIES: &[AdversaryInfo] = &[
    halving::INFO,
    slab_funnel::INFO,
    orthant::INFO,
    lattice_half::INFO,
    corner::INFO,
    mixed_corner::INFO,
    rotation::INFO,
    rotation_chain::INFO,
    fixed_function::DRORI_TEBOULLE,
    fixed_function::NESTEROV_NONSMOOTH,
    fixed_function::SMOOTH_CHAIN,
    fixed_function::STRONGLY_CONVEX_CHAIN,
];

/// The registry entry called `name`.
pub fn info(name: &str) -> Option<&'static AdversaryInfo> {
    ADVERSARIES.iter().find(|a| a.name == name)
}

/// Builds the adversary `name` for `class`.
pub fn build(name: &str, class: &Class) -> Result<Box<dyn Adversary + Send>, Error> {
    let Some(entry) = info(name) else {
        return Err(Error::UnknownAdversary { name: name.into() });
    };
    if let Some(check) = entry.restriction {
        if class.family_name() == entry.family {
            check(class).map_err(|reason| Error::Unsupported {
                what: format!("adversary {name:?}"),
                reason,
            })?;
        }
    }
    (entry.build)(class)
}

/// The error for an adversary built for a class of another family.
pub(crate) fn wrong_family(name: &str, family: &str) -> Error {
    Error::Unsupported {
        what: format!("adversary {name:?}"),
        reason: format!("it plays the {family} family (pass --class {family})"),
    }
}
