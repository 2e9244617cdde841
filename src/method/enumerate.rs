//! Enumerate: query the lattice points of the integer box one by one in lexicographic
//! order (last coordinate fastest), skipping every point an earlier cut already
//! excludes (lattice enumeration; common practice, no source). Pure integer classes.
//!
//! Against the corner adversary on {0,1}^n it meets the lower bound 2^n with equality
//! (docs/theory.md §4).

use num_rational::BigRational;

use crate::class::{Class, LatticeClass};
use crate::error::Error;
use crate::exact::{f64_to_rational, two_diff};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Cut, Output, Separation, Step};

/// Most lattice points the lattice methods enumerate.
pub const MAX_LATTICE_POINTS: u64 = 1 << 20;

/// `a.p` for an integer point p, exactly when error-free floating point computes it.
fn dot_fast(cut: &Cut, p: &[f64]) -> Option<f64> {
    let mut sum = 0.0f64;
    for (i, pi) in p.iter().enumerate() {
        let ai = cut.normal.get(i);
        let t = ai * pi;
        if !t.is_finite() || (t != 0.0 && t.abs() < 1e-290) || ai.mul_add(*pi, -t) != 0.0 {
            return None;
        }
        let (s, e) = two_diff(sum, -t);
        if e != 0.0 || !s.is_finite() {
            return None;
        }
        sum = s;
    }
    Some(sum)
}

/// True when the strict cut excludes the point p (`a.p >= b`), decided exactly.
pub(crate) fn cut_excludes(cut: &Cut, p: &[f64]) -> bool {
    cut_excludes_view(cut, cut.offset.to_f64(), p)
}

/// [`cut_excludes`] with the offset's nearest `f64` computed once by the caller.
pub(crate) fn cut_excludes_view(cut: &Cut, b: f64, p: &[f64]) -> bool {
    if let (Some(v), crate::exact::Exact::Float(b)) = (dot_fast(cut, p), &cut.offset) {
        return v >= *b;
    }
    // Filter: the floating sum is within (len + 2) 2^-52 sum|a_i p_i| of a.p, and the
    // offset's f64 view within 2^-52 |b| of b; decide exactly only inside that margin.
    let mut approx = 0.0f64;
    let mut magnitude = 0.0f64;
    for (i, pi) in p.iter().enumerate() {
        let t = cut.normal.get(i) * pi;
        approx += t;
        magnitude += t.abs();
    }
    let margin = (p.len() as f64 + 2.0) * f64::EPSILON * magnitude
        + f64::EPSILON * b.abs()
        + 4.0 * f64::MIN_POSITIVE;
    if approx.is_finite() && margin.is_finite() {
        if approx - b > margin {
            return true;
        }
        if b - approx > margin {
            return false;
        }
    }
    let x: Vec<BigRational> = p.iter().map(|v| f64_to_rational(*v)).collect();
    cut.normal.dot_exact(&x) >= cut.offset.to_rational()
}

/// The lattice points of a class's integer box, or an `Unsupported` error naming
/// `method` when there are too many.
pub(crate) fn lattice_of(class: &LatticeClass, method: &str) -> Result<Vec<Vec<i64>>, Error> {
    class
        .lattice_points(MAX_LATTICE_POINTS)
        .ok_or_else(|| Error::Unsupported {
            what: format!("method {method:?}"),
            reason: format!(
                "the integer box has {} lattice points, more than {MAX_LATTICE_POINTS}",
                class.lattice_count()
            ),
        })
}

/// Lattice enumeration in a fixed order.
#[derive(Clone, Debug)]
pub struct Enumerate {
    points: Vec<Vec<f64>>,
    next: usize,
    cuts: Vec<Cut>,
    found: Option<Vec<f64>>,
}

impl Enumerate {
    /// Starts at the lowest lattice point of the box (pure integer classes, at most
    /// 2^20 lattice points).
    pub fn new(class: &LatticeClass) -> Result<Enumerate, Error> {
        if class.cont_dim != 0 {
            return Err(Error::Unsupported {
                what: "method \"enumerate\"".into(),
                reason: "it plays pure integer classes (d = 0); use fibre-bisection".into(),
            });
        }
        let points = lattice_of(class, "enumerate")?
            .into_iter()
            .map(|p| p.into_iter().map(|v| v as f64).collect())
            .collect();
        Ok(Enumerate {
            points,
            next: 0,
            cuts: Vec::new(),
            found: None,
        })
    }
}

impl Method for Enumerate {
    fn name(&self) -> &str {
        "enumerate"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        while self.next < self.points.len() {
            let p = &self.points[self.next];
            self.next += 1;
            if self.cuts.iter().any(|c| cut_excludes(c, p)) {
                continue;
            }
            query.copy_from_slice(p);
            return Ok(Step::Query);
        }
        Ok(Step::Output(Output::Empty))
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        match answer.to_separation(query) {
            Separation::Inside => self.found = Some(query.to_vec()),
            Separation::Cut(cut) => self.cuts.push(cut.into_owned()),
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): the list of lattice points (n numbers
/// and a vector header each) and every cut answered (a dense normal of
/// n + d numbers and its offset).
fn memory(class: &Class, queries: u64) -> u64 {
    let Class::Lattice(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let n = c.int_dim() as f64;
    let q = c.query_dim() as f64;
    let points = crate::memory::lattice_points(&c.lower, &c.upper);
    crate::memory::bytes(
        points * (crate::memory::F64 * n + crate::memory::VEC)
            + queries as f64 * (crate::memory::F64 * q + 64.0)
            + crate::memory::vectors(4.0, q),
    )
}

/// The registry entry of `enumerate`.
pub const INFO: MethodInfo = MethodInfo {
    name: "enumerate",
    description: "integer: queries the lattice points of the box in lexicographic order, \
                  skipping excluded ones (lattice enumeration; common practice)",
    deterministic: true,
    span: false,
    families: &["lattice"],
    restriction: Some(crate::method::pure_integer_only),
    memory,
    memory_note: "every lattice point of the box and every cut",
    build: |class, _seed| match class {
        Class::Lattice(c) => Ok(Box::new(Enumerate::new(c)?)),
        _ => Err(wrong_family("enumerate", &["lattice"])),
    },
};
