//! The lattice-halving adversary (docs/theory.md §4) for pure integer feasibility \[derived\].
//!
//! State: the alive set S, the lattice points of the box consistent with every answer.
//! Each query x gets a strict cut whose boundary passes through x (`a.w < a.x`, so x is
//! excluded) and that keeps as many points of S as the search finds; S shrinks to the
//! kept points. The answer is never `inside`.
//!
//! The search is [`crate::geometry::lattice_split::best_split`]; its strategies and
//! why the kept side holds at least (|S| - 1)/2 points are documented there, hence every
//! method needs floor(log2 |S|) + 1 queries when "none" is a possible answer. Ties:
//! the first candidate found, and the side `a.(s - x) < 0` of a candidate before the
//! other.
//!
//! Witnesses while S is nonempty: the empty set and the single lattice point of S of
//! lowest index (a fibre ball of dimension 0). Undecided measure: |S|.

use std::cmp::Ordering;

use crate::adversary::{wrong_family, Adversary, AdversaryInfo, Scope, Undecided};
use crate::class::{Class, LatticeClass};
use crate::error::Error;
use crate::geometry::lattice_split::{best_split, offset_through, side};
use crate::instance::{FibreBall, LatticeHull, Witness};
use crate::oracle::{Answer, Cut, Normal};
use crate::transcript::Witnesses;

/// Most lattice points the adversary tracks.
pub const MAX_ALIVE: u64 = 1 << 20;

/// The lattice-halving resisting oracle.
#[derive(Clone, Debug)]
pub struct LatticeHalf {
    alive: Vec<Vec<i64>>,
    rho: f64,
    answered: u64,
    frozen: Option<(u64, Vec<i64>)>,
}

impl LatticeHalf {
    /// Starts with every lattice point of the box alive (pure integer classes with at
    /// most 2^20 lattice points).
    pub fn new(class: &LatticeClass) -> Result<LatticeHalf, Error> {
        let unsupported = |reason: String| Error::Unsupported {
            what: "adversary \"lattice-half\"".into(),
            reason,
        };
        if class.cont_dim != 0 {
            return Err(unsupported("it plays pure integer classes (d = 0)".into()));
        }
        let alive = class.lattice_points(MAX_ALIVE).ok_or_else(|| {
            unsupported(format!(
                "the box has {} lattice points, more than {MAX_ALIVE}",
                class.lattice_count()
            ))
        })?;
        Ok(LatticeHalf {
            alive,
            rho: class.rho,
            answered: 0,
            frozen: None,
        })
    }

    /// Starts from an explicit alive set (for tests and for `minimax`-style studies);
    /// `dim` is n.
    pub fn from_points(points: Vec<Vec<i64>>, rho: f64) -> LatticeHalf {
        LatticeHalf {
            alive: points,
            rho,
            answered: 0,
            frozen: None,
        }
    }

    /// The alive lattice set S.
    pub fn alive(&self) -> &[Vec<i64>] {
        &self.alive
    }
}

/// Pure integer classes with at most [`MAX_ALIVE`] lattice points.
fn restriction(class: &Class) -> Result<(), String> {
    match class {
        Class::Lattice(c) if c.cont_dim != 0 => {
            Err("it plays pure integer classes (d = 0); use mixed-corner for d >= 1".into())
        }
        Class::Lattice(c) if c.lattice_count() > MAX_ALIVE => Err(format!(
            "the integer box has {} lattice points, more than the {MAX_ALIVE} it tracks",
            c.lattice_count()
        )),
        _ => Ok(()),
    }
}

/// Memory ([`crate::memory`]): the alive lattice points (at most
/// [`MAX_ALIVE`], n numbers and a vector header each, twice while splitting), the points
/// answered `inside`, and the hull witnesses built from them, held also
/// by the final record and the verifier.
fn memory(class: &Class, queries: u64) -> u64 {
    let Class::Lattice(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let point = crate::memory::F64 * c.query_dim() as f64 + crate::memory::VEC;
    let alive = crate::memory::lattice_points(&c.lower, &c.upper).min(MAX_ALIVE as f64);
    crate::memory::bytes(2.0 * alive * point + 4.0 * queries as f64 * point + 4096.0)
}

/// The registry entry (docs/theory.md: see the description).
pub const INFO: AdversaryInfo = AdversaryInfo {
    name: "lattice-half",
    family: "lattice",
    description: "integer, box: cut through the query keeping the most alive lattice \
                  points it finds, at least (|S| - 1)/2 (forces floor(log2 |S|) + 1; \
                  docs/theory.md §4)",
    scope: Scope::EveryMethod,
    restriction: Some(restriction),
    memory,
    memory_note: "the alive lattice points and the points declared inside",
    build: |class| match class {
        Class::Lattice(c) => Ok(Box::new(LatticeHalf::new(c)?)),
        _ => Err(wrong_family("lattice-half", "lattice")),
    },
};

impl Adversary for LatticeHalf {
    fn name(&self) -> &str {
        "lattice-half"
    }

    fn answer(&mut self, x: &[f64]) -> Answer {
        let split = best_split(&self.alive, x);
        let a = split.normal;
        let kept: Vec<Vec<i64>> = self
            .alive
            .iter()
            .filter(|s| side(&a, s, x) == Ordering::Less)
            .cloned()
            .collect();
        if kept.is_empty() && !self.alive.is_empty() {
            self.frozen = Some((self.answered, self.alive[0].clone()));
        }
        self.alive = kept;
        self.answered += 1;
        let offset = offset_through(&a, x);
        Answer::Cut(Cut {
            normal: Normal::Dense(a),
            offset,
        })
    }

    fn witnesses(&self) -> Option<Witnesses> {
        let (prefix, point) = match self.alive.first() {
            Some(p) => (self.answered, p.clone()),
            None => self.frozen.clone()?,
        };
        Some(Witnesses {
            prefix,
            instances: vec![
                Witness::Empty,
                Witness::LatticeHull(LatticeHull {
                    points: Vec::new(),
                    fibre: Some(FibreBall {
                        integer: point,
                        center: Vec::new(),
                        radius: self.rho,
                    }),
                }),
            ],
        })
    }

    fn undecided(&self) -> Undecided {
        Undecided::AlivePoints(self.alive.len() as f64)
    }
}
