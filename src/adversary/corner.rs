//! The corner adversary on {0,1}^n (docs/theory.md §4) [ours, checked per run by the exact
//! verifier] for pure integer feasibility.
//!
//! K is kept inside the cube \[0,1\]^n. For a query x:
//! - some x_i < 0 or x_i > 1 (lowest such i): the strict cut through x parallel to that
//!   face, `{w_i > x_i}` or `{w_i < x_i}`; it keeps the whole cube (never the face
//!   itself, which would remove vertices);
//! - x a vertex z of the cube (every coordinate exactly 0 or 1 as an `f64`): the central
//!   cut `{<1 - 2z, w - z> > 0}`, written `<2z - 1, w> < |z|`. On the cube
//!   `<1 - 2z, w - z> = ||w - z||_1`, so the cut removes the vertex z alone and keeps every
//!   point declared inside (none of them is a vertex). This is the cut of docs/theory.md §4 with
//!   delta_z = 0, which lies strictly below every l1 distance from z to a declared point;
//! - any other x in the cube: `inside` (no earlier cut excludes a non-vertex point of the
//!   cube, so the answer is consistent), and x joins the declared set F.
//!
//! Witnesses: conv(F) (the empty set while F is empty) and conv(F cup {v}) for the
//! alive vertex v of lowest index; conv(F) holds no lattice point because the cube's
//! vertices are extreme. They exist while some vertex is alive, so every method needs
//! 2^n queries (each vertex must be queried). Undecided measure: alive vertices.

use std::collections::HashSet;

use crate::adversary::{wrong_family, Adversary, AdversaryInfo, Scope, Undecided};
use crate::class::{Class, LatticeClass};
use crate::error::Error;
use crate::exact::Exact;
use crate::instance::{FibreBall, LatticeHull, Witness};
use crate::oracle::{Answer, Cut, Normal};
use crate::transcript::Witnesses;

/// The corner resisting oracle.
#[derive(Clone, Debug)]
pub struct Corner {
    n: usize,
    rho: f64,
    dead: HashSet<u64>,
    declared: Vec<Vec<f64>>,
    answered: u64,
    /// When the last vertex died: (prefix, declared count, that vertex).
    frozen: Option<(u64, usize, u64)>,
}

/// The vertex of {0,1}^n with coordinate i equal to bit i of `index`.
pub(crate) fn vertex(index: u64, n: usize) -> Vec<i64> {
    (0..n).map(|i| ((index >> i) & 1) as i64).collect()
}

/// The strict cut through x parallel to the first violated face of [0,1]^n, if any.
pub(crate) fn cube_face_cut(x: &[f64], n: usize) -> Option<Cut> {
    let i = (0..n).find(|&i| x[i] < 0.0 || x[i] > 1.0)?;
    Some(if x[i] < 0.0 {
        Cut {
            normal: Normal::axis(i, false),
            offset: Exact::Float(-x[i]),
        }
    } else {
        Cut {
            normal: Normal::axis(i, true),
            offset: Exact::Float(x[i]),
        }
    })
}

/// The vertex index of x when its first n coordinates are each exactly 0 or 1.
pub(crate) fn vertex_index(x: &[f64], n: usize) -> Option<u64> {
    let mut index = 0u64;
    for (i, v) in x[..n].iter().enumerate() {
        if *v == 1.0 {
            index |= 1 << i;
        } else if *v != 0.0 {
            return None;
        }
    }
    Some(index)
}

impl Corner {
    /// Starts with every vertex of {0,1}^n alive. The class must be pure integer
    /// (d = 0) with an integer box containing {0,1}^n.
    pub fn new(class: &LatticeClass) -> Result<Corner, Error> {
        if class.cont_dim != 0 || !class.contains_unit_cube() {
            return Err(Error::Unsupported {
                what: "adversary \"corner\"".into(),
                reason: "it needs a pure integer class (d = 0) whose box contains {0,1}^n; \
                         use mixed-corner for d >= 1"
                    .into(),
            });
        }
        Ok(Corner {
            n: class.int_dim(),
            rho: class.rho,
            dead: HashSet::new(),
            declared: Vec::new(),
            answered: 0,
            frozen: None,
        })
    }

    fn alive_count(&self) -> u128 {
        (1u128 << self.n) - self.dead.len() as u128
    }

    fn lowest_alive(&self) -> Option<u64> {
        if self.alive_count() == 0 {
            return None;
        }
        (0u64..).find(|i| !self.dead.contains(i))
    }
}

/// Pure integer classes whose box contains {0,1}^n.
fn restriction(class: &Class) -> Result<(), String> {
    match class {
        Class::Lattice(c) if c.cont_dim != 0 || !c.contains_unit_cube() => Err(
            "it needs a pure integer class (d = 0) whose box contains {0,1}^n; use \
             mixed-corner for d >= 1"
                .into(),
        ),
        _ => Ok(()),
    }
}

/// Memory ([`crate::memory`]): the dead vertices (at most one a query,
/// at most 2^n), the points answered `inside` (n numbers each), and the
/// hull witnesses built from them, held also by the final record and the verifier.
fn memory(class: &Class, queries: u64) -> u64 {
    let b = queries as f64;
    let n = match class {
        Class::Lattice(c) => c.int_dim() as f64,
        _ => class.query_dim() as f64,
    };
    let vertices = 2f64.powf(n).min(b);
    let point = crate::memory::F64 * n + crate::memory::VEC;
    crate::memory::bytes(32.0 * vertices + 4.0 * b * point + 4096.0)
}

/// The registry entry (docs/theory.md: see the description).
pub const INFO: AdversaryInfo = AdversaryInfo {
    name: "corner",
    family: "lattice",
    description: "integer, {0,1}^n: cuts each queried vertex off alone (forces 2^n; ours, \
                  docs/theory.md §4, every run certified)",
    scope: Scope::EveryMethod,
    restriction: Some(restriction),
    memory,
    memory_note: "the points declared inside (n numbers a query)",
    build: |class| match class {
        Class::Lattice(c) => Ok(Box::new(Corner::new(c)?)),
        _ => Err(wrong_family("corner", "lattice")),
    },
};

impl Adversary for Corner {
    fn name(&self) -> &str {
        "corner"
    }

    fn answer(&mut self, x: &[f64]) -> Answer {
        let n = self.n;
        let answer = if let Some(cut) = cube_face_cut(x, n) {
            Answer::Cut(cut)
        } else if let Some(index) = vertex_index(x, n) {
            if !self.dead.contains(&index) {
                if self.alive_count() == 1 {
                    self.frozen = Some((self.answered, self.declared.len(), index));
                }
                self.dead.insert(index);
            }
            let z = vertex(index, n);
            let normal: Vec<f64> = z.iter().map(|v| (2 * v - 1) as f64).collect();
            let ones = z.iter().sum::<i64>() as f64;
            Answer::Cut(Cut {
                normal: Normal::Dense(normal),
                offset: Exact::Float(ones),
            })
        } else {
            self.declared.push(x.to_vec());
            Answer::Inside
        };
        self.answered += 1;
        answer
    }

    fn witnesses(&self) -> Option<Witnesses> {
        let (prefix, declared, vertex_index) = match self.lowest_alive() {
            Some(v) => (self.answered, self.declared.len(), v),
            None => self.frozen?,
        };
        let points = self.declared[..declared].to_vec();
        let empty = if points.is_empty() {
            Witness::Empty
        } else {
            Witness::LatticeHull(LatticeHull {
                points: points.clone(),
                fibre: None,
            })
        };
        let with_vertex = Witness::LatticeHull(LatticeHull {
            points,
            fibre: Some(FibreBall {
                integer: vertex(vertex_index, self.n),
                center: Vec::new(),
                radius: self.rho,
            }),
        });
        Some(Witnesses {
            prefix,
            instances: vec![empty, with_vertex],
        })
    }

    fn undecided(&self) -> Undecided {
        Undecided::AlivePoints(self.alive_count() as f64)
    }
}
