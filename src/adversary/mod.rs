//! Resisting oracles: adversaries that answer each query so as to keep as much of the
//! problem undecided as they can, while staying consistent with some instance of the
//! class.
//!
//! To add an adversary: write `src/adversary/<name>.rs` with a type implementing
//! [`Adversary`], document its construction and the theorem (or the words "ours,
//! certified per run") it relies on, and register it in [`ADVERSARIES`] and [`build`].

pub mod corner;
pub mod halving;
pub mod instance_oracle;
pub mod lattice_half;
pub mod mixed_corner;
pub mod orthant;
pub mod slab_funnel;

use serde::{Deserialize, Serialize};

use crate::class::Class;
use crate::error::Error;
use crate::oracle::Answer;
use crate::transcript::Witnesses;

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
}

impl Undecided {
    /// The measure as one number (for charts).
    pub fn value(&self) -> f64 {
        match self {
            Undecided::Log2Volume(v)
            | Undecided::AlivePoints(v)
            | Undecided::Log2MixedMeasure(v) => *v,
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
}

/// A registered adversary: its name and a one-line description.
pub struct AdversaryInfo {
    /// Name used on the command line and in files.
    pub name: &'static str,
    /// One line: what it does and what it proves.
    pub description: &'static str,
}

/// Every registered adversary.
pub const ADVERSARIES: &[AdversaryInfo] = &[
    AdversaryInfo {
        name: "halving",
        description: "separation, box: cuts the least-cut axis through the query, keeping \
                      the larger half (forces d*k + 1 queries; theorem, docs/theory.md §1.1)",
    },
    AdversaryInfo {
        name: "slab-funnel",
        description: "first-order, box: nested slab levels revealing one sign per query \
                      (forces d*ceil(log_7(L R/(2 eps))) on every deterministic method; theorem, \
                      docs/theory.md §2.4; every run also certified)",
    },
    AdversaryInfo {
        name: "orthant",
        description: "first-order, box: nested orthant levels; leaks (ours, no proven count, \
                      docs/theory.md §2.3; kept for comparison with slab-funnel)",
    },
    AdversaryInfo {
        name: "lattice-half",
        description: "integer, box: cut through the query keeping the most alive lattice \
                      points it finds, at least (|S| - 1)/2 (forces floor(log2 |S|) + 1; \
                      docs/theory.md §4)",
    },
    AdversaryInfo {
        name: "corner",
        description: "integer, {0,1}^n: cuts each queried vertex off alone (forces 2^n; ours, \
                      docs/theory.md §4, every run certified)",
    },
    AdversaryInfo {
        name: "mixed-corner",
        description: "mixed-integer, {0,1}^n x [-R,R]^d: box halving per vertex fibre with \
                      exact lifted cuts (forces 2^n (d k + 1); ours, docs/theory.md §4, every run \
                      certified)",
    },
];

/// Builds the adversary `name` for `class`.
pub fn build(name: &str, class: &Class) -> Result<Box<dyn Adversary + Send>, Error> {
    match (name, class) {
        ("halving", Class::Feasibility(c)) => Ok(Box::new(Halving::new(c))),
        ("slab-funnel", Class::FirstOrder(c)) => Ok(Box::new(slab_funnel::SlabFunnel::new(
            c,
            slab_funnel::FunnelSettings::default(),
        )?)),
        ("orthant", Class::FirstOrder(c)) => Ok(Box::new(orthant::Orthant::new(
            c,
            orthant::OrthantSettings::default(),
        )?)),
        ("lattice-half", Class::Lattice(c)) => Ok(Box::new(lattice_half::LatticeHalf::new(c)?)),
        ("corner", Class::Lattice(c)) => Ok(Box::new(corner::Corner::new(c)?)),
        ("mixed-corner", Class::Lattice(c)) => Ok(Box::new(mixed_corner::MixedCorner::new(c)?)),
        _ if ADVERSARIES.iter().any(|a| a.name == name) => Err(Error::Unsupported {
            what: format!("adversary {name:?}"),
            reason: "wrong class".into(),
        }),
        _ => Err(Error::UnknownAdversary { name: name.into() }),
    }
}
