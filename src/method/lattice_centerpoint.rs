//! Lattice centerpoint: query a lattice point of the convex hull of the method's own
//! alive set A (the lattice points no cut has excluded) whose depth, the fewest points
//! of A that a closed halfspace containing it can hold, is the largest found. Pure
//! integer classes.
//!
//! Source: Oertel, Wagner & Weismantel, "Integer convex minimization by mixed integer
//! linear optimization", Oper. Res. Lett. 42 (2014): when A = K cap Z^n for a convex K,
//! some point of A has depth at least |A| / 2^n, so every answer removes at least that
//! many points. Depth is computed as |A| minus the best open halfspace through the point
//! found by [`crate::geometry::lattice_split::best_split`] (exact for n <= 2, a
//! candidate search above, where the depth found is an upper estimate). Candidates: the
//! lattice points of A's bounding box for n <= 2 (a point has positive depth exactly
//! when it lies in conv(A)), the points of A for n >= 3 (so every query removes a point).
//! Ties: the lowest lexicographic index.

use crate::class::{Class, LatticeClass};
use crate::error::Error;
use crate::geometry::lattice_split::best_split;
use crate::method::enumerate::{cut_excludes, lattice_of};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Output, Separation, Step};

/// The deepest lattice point of its alive set's hull.
#[derive(Clone, Debug)]
pub struct LatticeCenterpoint {
    lower: Vec<i64>,
    upper: Vec<i64>,
    alive: Vec<Vec<i64>>,
    found: Option<Vec<f64>>,
}

impl LatticeCenterpoint {
    /// Starts with every lattice point of the box alive.
    pub fn new(class: &LatticeClass) -> Result<LatticeCenterpoint, Error> {
        if class.cont_dim != 0 {
            return Err(Error::Unsupported {
                what: "method \"lattice-centerpoint\"".into(),
                reason: "it plays pure integer classes (d = 0); use mixed-centerpoint".into(),
            });
        }
        Ok(LatticeCenterpoint {
            lower: class.lower.clone(),
            upper: class.upper.clone(),
            alive: lattice_of(class, "lattice-centerpoint")?,
            found: None,
        })
    }

    /// The depth of `z` in `points`: |points| minus the best open halfspace through z.
    pub fn depth(points: &[Vec<i64>], z: &[i64]) -> usize {
        let x: Vec<f64> = z.iter().map(|v| *v as f64).collect();
        points.len() - best_split(points, &x).kept
    }

    fn candidates(&self) -> Vec<Vec<i64>> {
        let n = self.lower.len();
        if n >= 3 {
            return self.alive.clone();
        }
        let mut low = self.upper.clone();
        let mut high = self.lower.clone();
        for p in &self.alive {
            for i in 0..n {
                low[i] = low[i].min(p[i]);
                high[i] = high[i].max(p[i]);
            }
        }
        let mut out = Vec::new();
        let mut current = low.clone();
        loop {
            out.push(current.clone());
            let mut i = n;
            loop {
                if i == 0 {
                    return out;
                }
                i -= 1;
                if current[i] < high[i] {
                    current[i] += 1;
                    break;
                }
                current[i] = low[i];
            }
        }
    }
}

impl Method for LatticeCenterpoint {
    fn name(&self) -> &str {
        "lattice-centerpoint"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        if self.alive.is_empty() {
            return Ok(Step::Output(Output::Empty));
        }
        let mut best: Option<(usize, Vec<i64>)> = None;
        for z in self.candidates() {
            let depth = Self::depth(&self.alive, &z);
            if depth > 0 && best.as_ref().is_none_or(|(d, _)| depth > *d) {
                best = Some((depth, z));
            }
        }
        let z = match best {
            Some((_, z)) => z,
            None => self.alive[0].clone(),
        };
        for (q, v) in query.iter_mut().zip(&z) {
            *q = *v as f64;
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        match answer.to_separation(query) {
            Separation::Inside => self.found = Some(query.to_vec()),
            Separation::Cut(cut) => {
                let before = self.alive.len();
                self.alive.retain(|p| {
                    let x: Vec<f64> = p.iter().map(|v| *v as f64).collect();
                    !cut_excludes(&cut, &x)
                });
                let queried_alive = self
                    .alive
                    .iter()
                    .any(|p| p.iter().zip(query).all(|(a, b)| *a as f64 == *b));
                if before == self.alive.len() && queried_alive {
                    return Err(Error::MethodFailed {
                        method: "lattice-centerpoint".into(),
                        reason: "a cut at an alive lattice point did not exclude it".into(),
                    });
                }
            }
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the alive lattice points (n numbers and
/// a vector header each), held up to three times at once (the set, the candidates and a
/// split's scratch).
fn memory(class: &Class, _queries: u64) -> u64 {
    let Class::Lattice(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let n = c.int_dim() as f64;
    let points = crate::memory::lattice_points(&c.lower, &c.upper);
    crate::memory::bytes(
        3.0 * points * (crate::memory::F64 * n + crate::memory::VEC)
            + crate::memory::vectors(4.0, n),
    )
}

/// The registry entry of `lattice-centerpoint`.
pub const INFO: MethodInfo = MethodInfo {
    name: "lattice-centerpoint",
    description: "integer: deepest lattice point of the hull of its alive set (Oertel, \
                  Wagner & Weismantel, Oper. Res. Lett. 2014)",
    deterministic: true,
    span: false,
    families: &["lattice"],
    restriction: Some(crate::method::pure_integer_only),
    memory,
    memory_note: "every lattice point of the box, three times",
    build: |class, _seed| match class {
        Class::Lattice(c) => Ok(Box::new(LatticeCenterpoint::new(c)?)),
        _ => Err(wrong_family("lattice-centerpoint", &["lattice"])),
    },
};
