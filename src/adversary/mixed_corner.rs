//! The mixed-corner adversary on {0,1}^n x [-R, R]^d (docs/theory.md §4) [ours, checked per
//! run by the exact verifier].
//!
//! Every vertex z of {0,1}^n carries its own box-halving adversary
//! ([`crate::adversary::Halving`], docs/theory.md §1.1) on its fibre `{z} x [-R, R]^d`. For a
//! query (x, y):
//! 1. some x_i outside [0, 1]: the strict cut through the query parallel to that face of
//!    the cube (it keeps every fibre);
//! 2. some |y_j| > R: the strict cut through the query parallel to that face of
//!    [-R, R]^d;
//! 3. x a vertex z and y in z's alive fibre box: z's halving adversary gives the fibre
//!    cut `s y_i < o` (s = +-1), lifted to
//!    `s y_i - o < M <1 - 2z, x - z>`  (on the cube, `<1 - 2z, x - z> = ||x - z||_1`)
//!    with M = 2^k the least power of two with M > 4R and `M ||p_x - z||_1 > s p_{y,i} - o`
//!    for every declared point p whose integer part lies within l1 distance 1/2 of z
//!    (points farther away satisfy it already: s p_{y,i} - o <= 2R < M/2). The cut keeps
//!    every other vertex's fibre (M > 2R) and every declared point strictly, so every
//!    point declared inside stays strictly inside. Its coefficients are exact: the cut is
//!    scaled by 2^(a-k), a = max(0, k - 1074), so the normal is `(2z - 1) 2^a` on x and
//!    `s 2^(a-k)` on y_i, every entry an exact `f64` power of two; the offset
//!    `o 2^(a-k) + |z| 2^a` is an exact rational ([`Exact`]). M is unbounded as declared
//!    points approach z; the scaling keeps the `f64` view finite. (The bounded
//!    near-vertex shortcut is not used: it is wrong.)
//! 4. x a vertex z and y outside z's alive fibre box (but in [-R, R]^d): the face it
//!    violates was set by an earlier lifted cut at (z, i, s); that cut is repeated.
//! 5. x in the cube but not a vertex: with z the nearest vertex (rounding; lambda =
//!    ||x - z||_1), the query is excluded by an earlier cut only if lambda < 1/2 and one
//!    of z's lifted cuts excludes it (cuts at other vertices keep it: their M > 4R).
//!    z's lifted cuts are kept per (i, s) as a lower envelope: a new cut has the lowest
//!    offset o at (i, s), so it makes every earlier one with M at least its own
//!    redundant (their excluded sets lie inside its excluded set); at most one cut per
//!    power of two survives. If an envelope cut excludes the query it is repeated;
//!    otherwise the answer is `inside` and the query joins the declared set F.
//!
//! Cost per answer: O(n + d) for vertex queries plus O(|F near z|) exact work when
//! declared points lie near z; non-vertex queries near z scan z's envelope (one cut per
//! power of two of M actually used, normally one per face). Nothing scans the whole
//! history.
//!
//! Witnesses: C0 = conv(F) (empty set while F is empty) and C1 = conv(F cup {v} x
//! B(c_v, rho)) for the alive vertex v of lowest index, c_v the centre of its fibre box.
//! A fibre is alive while every side of its box exceeds 2 rho. Each query halves at most
//! one side of one fibre box, so every method needs 2^n (d k + 1) queries,
//! k = max{j >= 0 : R 2^-j > rho} (needs R >= 1 only so that the cube fits the integer
//! box; the class here has a separate integer box containing {0,1}^n). Undecided
//! measure: log2 of the summed fibre-box volume.

use std::collections::HashMap;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, Signed};

use crate::adversary::corner::{cube_face_cut, vertex, vertex_index};
use crate::adversary::{wrong_family, Adversary, AdversaryInfo, Halving, Scope, Undecided};
use crate::class::{Class, FeasibilityClass, LatticeClass, Promise};
use crate::error::Error;
use crate::exact::{cmp_diff, f64_to_rational, two_diff, Exact};
use crate::instance::{FibreBall, LatticeHull, Witness};
use crate::oracle::{Answer, Cut, Normal};
use crate::transcript::Witnesses;

/// Largest exponent of M: declared points have excess at most 2R < 2^998 and l1
/// distance at least 2^-1074, so 2^2073 always suffices; the cap keeps 2^a finite.
const MAX_LOG2_M: i32 = 2090;

/// One lifted cut at (z, i, s): excludes `s y_i - offset >= 2^log2_m ||x - z||_1`.
#[derive(Clone, Debug)]
struct Line {
    offset: f64,
    log2_m: i32,
    cut: Cut,
}

/// One vertex's fibre: its halving adversary and its envelopes per (axis, sign).
#[derive(Clone, Debug)]
struct Fibre {
    halving: Halving,
    /// Index 2 i for s = +1 (keep y_i < o), 2 i + 1 for s = -1 (keep -y_i < o).
    envelope: Vec<Vec<Line>>,
    alive: bool,
}

/// The state at the longest certified prefix once every fibre has died: the prefix, the
/// number of declared points then, the last vertex alive and its box before its last cut.
type Frozen = (u64, usize, u64, Vec<f64>, Vec<f64>);

/// The mixed-corner resisting oracle.
#[derive(Clone, Debug)]
pub struct MixedCorner {
    n: usize,
    d: usize,
    half_width: f64,
    rho: f64,
    fibre_class: FeasibilityClass,
    /// Least k with 2^k > 4R.
    base_log2: i32,
    fibres: HashMap<u64, Fibre>,
    /// Declared points with l1 distance below 1/2 from a vertex, by vertex.
    near: HashMap<u64, Vec<usize>>,
    declared: Vec<Vec<f64>>,
    dead: u64,
    answered: u64,
    /// When the last fibre died: prefix, declared count, vertex, its box before the cut.
    frozen: Option<Frozen>,
}

/// 2^e as an exact `f64` (normal or subnormal), for -1074 <= e <= 1023.
fn pow2(e: i32) -> f64 {
    if e >= -1022 {
        f64::from_bits(((e + 1023) as u64) << 52)
    } else {
        f64::from_bits(1u64 << (e + 1074))
    }
}

fn pow2_rational(e: i32) -> BigRational {
    let one = BigInt::one();
    if e >= 0 {
        BigRational::from_integer(one << e as usize)
    } else {
        BigRational::new(one.clone(), one << (-e) as usize)
    }
}

/// ||x - z||_1 over the integer part, exactly.
fn l1_exact(x: &[f64], z: &[i64]) -> BigRational {
    z.iter()
        .zip(x)
        .map(|(zi, xi)| (f64_to_rational(*xi) - BigRational::from_integer((*zi).into())).abs())
        .sum()
}

impl MixedCorner {
    /// Starts with every fibre box equal to [-R, R]^d. The class must have d >= 1 and an
    /// integer box containing {0,1}^n; n <= 62.
    pub fn new(class: &LatticeClass) -> Result<MixedCorner, Error> {
        if class.cont_dim == 0 || !class.contains_unit_cube() || class.int_dim() > 62 {
            return Err(Error::Unsupported {
                what: "adversary \"mixed-corner\"".into(),
                reason: "it needs a mixed-integer class (d >= 1, n <= 62) whose integer box \
                         contains {0,1}^n; use corner for d = 0"
                    .into(),
            });
        }
        let fibre_class = FeasibilityClass::new(
            class.cont_dim,
            class.half_width,
            class.rho,
            Promise::MayBeEmpty,
        )?;
        let four_r = 4.0 * class.half_width;
        let mut base_log2 = 0;
        while pow2(base_log2) <= four_r {
            base_log2 += 1;
        }
        Ok(MixedCorner {
            n: class.int_dim(),
            d: class.cont_dim,
            half_width: class.half_width,
            rho: class.rho,
            fibre_class,
            base_log2,
            fibres: HashMap::new(),
            near: HashMap::new(),
            declared: Vec::new(),
            dead: 0,
            answered: 0,
            frozen: None,
        })
    }

    fn alive_count(&self) -> u128 {
        (1u128 << self.n) - u128::from(self.dead)
    }

    fn fibre_fits(&self, h: &Halving) -> bool {
        let two_rho = 2.0 * self.rho;
        h.lower()
            .iter()
            .zip(h.upper())
            .all(|(l, u)| cmp_diff(*u, *l, two_rho) == std::cmp::Ordering::Greater)
    }

    /// The least k >= base with 2^k ||p_x - z||_1 > s p_{y,i} - o for every declared
    /// point p near z.
    fn lift_exponent(&self, z_index: u64, z: &[i64], axis: usize, sign: i8, offset: f64) -> i32 {
        let mut k = self.base_log2;
        let Some(near) = self.near.get(&z_index) else {
            return k;
        };
        for &p in near {
            let point = &self.declared[p];
            let y = f64::from(sign) * point[self.n + axis];
            let (hi, lo) = two_diff(y, offset);
            if hi < 0.0 || (hi == 0.0 && lo <= 0.0) {
                continue;
            }
            let excess = f64_to_rational(hi) + f64_to_rational(lo);
            let lambda = l1_exact(point, z);
            // Start from the floating estimate, then settle exactly.
            let mut k_p = self.base_log2;
            let estimate = (hi / lambda_estimate(point, z)).log2().ceil();
            if estimate.is_finite() && estimate as i32 > k_p {
                k_p = (estimate as i32).min(MAX_LOG2_M);
            }
            while k_p > self.base_log2 && pow2_rational(k_p - 1) * &lambda > excess {
                k_p -= 1;
            }
            while k_p < MAX_LOG2_M && pow2_rational(k_p) * &lambda <= excess {
                k_p += 1;
            }
            k = k.max(k_p);
        }
        k
    }

    /// The lifted cut `s y_i - o < 2^k <1 - 2z, x - z>`, scaled by 2^(a - k).
    fn lifted_cut(&self, z: &[i64], axis: usize, sign: i8, offset: f64, k: i32) -> Cut {
        let a = (k - 1074).max(0);
        let x_coefficient = pow2(a);
        let y_coefficient = f64::from(sign) * pow2(a - k);
        let mut normal = Vec::with_capacity(self.n + self.d);
        normal.extend(z.iter().map(|v| (2 * v - 1) as f64 * x_coefficient));
        normal.extend((0..self.d).map(|j| if j == axis { y_coefficient } else { 0.0 }));
        let ones = z.iter().sum::<i64>();
        // Fast path: o 2^(a-k) and |z| 2^a exact in f64 and their sum exact.
        let scaled = offset * pow2(a - k);
        let base = ones as f64 * x_coefficient;
        let sum = scaled + base;
        let exact_fast = a == 0
            && scaled * pow2(k.min(1023)) == offset
            && k <= 1023
            && two_diff(sum, base) == (scaled, 0.0);
        let offset = if exact_fast {
            Exact::Float(sum)
        } else {
            Exact::from_rational(
                f64_to_rational(offset) * pow2_rational(a - k)
                    + BigRational::from_integer(ones.into()) * pow2_rational(a),
            )
        };
        Cut {
            normal: Normal::Dense(normal),
            offset,
        }
    }

    fn vertex_answer(&mut self, index: u64, y: &[f64]) -> Cut {
        let z = vertex(index, self.n);
        let fibre_class = self.fibre_class.clone();
        let fibre = self.fibres.entry(index).or_insert_with(|| Fibre {
            halving: Halving::new(&fibre_class),
            envelope: vec![Vec::new(); 2 * fibre_class.dim],
            alive: true,
        });
        // A face of the alive fibre box that y violates: repeat the cut that set it.
        let outside = (0..self.d).find_map(|i| {
            if y[i] > fibre.halving.upper()[i] {
                Some(2 * i)
            } else if y[i] < fibre.halving.lower()[i] {
                Some(2 * i + 1)
            } else {
                None
            }
        });
        if let Some(slot) = outside {
            if let Some(line) = fibre.envelope[slot].last() {
                return line.cut.clone();
            }
        }
        let before = (fibre.alive && self.dead + 1 == 1u64 << self.n).then(|| {
            (
                fibre.halving.lower().to_vec(),
                fibre.halving.upper().to_vec(),
            )
        });
        let (axis, sign, offset) = match outside {
            // Unreachable by the invariant above (a face inside [-R, R] was set by a
            // lifted cut); answered soundly anyway by a fresh cut through the query.
            Some(slot) => {
                let axis = slot / 2;
                let sign: i8 = if slot % 2 == 0 { 1 } else { -1 };
                (axis, sign, f64::from(sign) * y[axis])
            }
            None => match fibre.halving.answer(y) {
                Answer::Cut(Cut {
                    normal: Normal::Axis { axis, sign },
                    offset: Exact::Float(o),
                }) => (axis, sign, o),
                // The halving adversary answers in-box queries with axis cuts and f64
                // offsets; anything else is met by a fresh lifted cut through the query.
                _ => (0, 1, y[0]),
            },
        };
        let k = self.lift_exponent(index, &z, axis, sign, offset);
        let cut = self.lifted_cut(&z, axis, sign, offset, k);
        let fits = {
            let fibre = &self.fibres[&index];
            self.fibre_fits(&fibre.halving)
        };
        let fibre = self.fibres.get_mut(&index).expect("inserted above");
        let slot = 2 * axis + usize::from(sign < 0);
        let envelope = &mut fibre.envelope[slot];
        if outside.is_none() {
            envelope.retain(|line| line.log2_m < k);
        }
        envelope.push(Line {
            offset,
            log2_m: k,
            cut: cut.clone(),
        });
        if fibre.alive && !fits {
            fibre.alive = false;
            self.dead += 1;
            if self.dead == 1u64 << self.n {
                if let Some((lower, upper)) = before {
                    self.frozen = Some((self.answered, self.declared.len(), index, lower, upper));
                }
            }
        }
        cut
    }

    /// A non-vertex query in the cube: the envelope cut excluding it, if any.
    fn excluding_cut(&self, x: &[f64]) -> Option<Cut> {
        let n = self.n;
        let mut index = 0u64;
        for (i, v) in x[..n].iter().enumerate() {
            if *v > 0.5 {
                index |= 1 << i;
            }
        }
        let fibre = self.fibres.get(&index)?;
        let z = vertex(index, n);
        let lambda = l1_exact(x, &z);
        if lambda >= BigRational::new(1.into(), 2.into()) {
            return None;
        }
        for (slot, lines) in fibre.envelope.iter().enumerate() {
            let axis = slot / 2;
            let sign = if slot % 2 == 0 { 1.0 } else { -1.0 };
            let y = sign * x[n + axis];
            for line in lines {
                let excess = f64_to_rational(y) - f64_to_rational(line.offset);
                if excess >= pow2_rational(line.log2_m) * &lambda {
                    return Some(line.cut.clone());
                }
            }
        }
        None
    }

    fn declare(&mut self, x: &[f64]) {
        let n = self.n;
        let index = self.declared.len();
        let mut vertex_index = 0u64;
        let mut lambda = 0.0;
        for (i, v) in x[..n].iter().enumerate() {
            if *v > 0.5 {
                vertex_index |= 1 << i;
                lambda += 1.0 - v;
            } else {
                lambda += v;
            }
        }
        // Rounded sums can only misjudge points within rounding of 1/2; keep those too
        // (a point listed as near but farther away only raises M, which stays valid).
        if lambda < 0.5 + 1e-9 {
            self.near.entry(vertex_index).or_default().push(index);
        }
        self.declared.push(x.to_vec());
    }

    fn lowest_alive(&self) -> Option<u64> {
        if self.alive_count() == 0 {
            return None;
        }
        (0u64..).find(|i| self.fibres.get(i).is_none_or(|f| f.alive))
    }
}

fn lambda_estimate(x: &[f64], z: &[i64]) -> f64 {
    z.iter()
        .zip(x)
        .map(|(zi, xi)| (xi - *zi as f64).abs())
        .sum::<f64>()
        .max(f64::MIN_POSITIVE)
}

/// Mixed-integer classes (d >= 1, n <= 62) whose integer box contains {0,1}^n.
fn restriction(class: &Class) -> Result<(), String> {
    match class {
        Class::Lattice(c) if c.cont_dim == 0 || !c.contains_unit_cube() || c.int_dim() > 62 => Err(
            "it needs a mixed-integer class (d >= 1, n <= 62) whose integer box \
                 contains {0,1}^n; use corner for d = 0"
                .into(),
        ),
        _ => Ok(()),
    }
}

/// Memory ([`crate::memory`]): a fibre per vertex queried (at most
/// min(2^n, queries)), each a box-halving adversary on d coordinates (20 d bytes) and two
/// envelopes a coordinate (48 d bytes); every lifted cut kept in an envelope (a dense
/// normal of n + d numbers, at most one a query); the points answered `inside` (n + d
/// numbers each) and the hull witnesses built from them, held also by the final record
/// and the verifier.
fn memory(class: &Class, queries: u64) -> u64 {
    let Class::Lattice(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let b = queries as f64;
    let d = c.cont_dim as f64;
    let q = c.query_dim() as f64;
    let fibres = 2f64.powf(c.int_dim() as f64).min(b.max(1.0));
    let point = crate::memory::F64 * q + crate::memory::VEC;
    crate::memory::bytes(
        fibres * (68.0 * d + 128.0) + b * (point + 96.0) + 4.0 * b * point + 8.0 * b + 4096.0,
    )
}

/// The registry entry (docs/theory.md: see the description).
pub const INFO: AdversaryInfo = AdversaryInfo {
    name: "mixed-corner",
    family: "lattice",
    description: "mixed-integer, {0,1}^n x [-R,R]^d: box halving per vertex fibre with \
                  exact lifted cuts (forces 2^n (d k + 1); ours, docs/theory.md §4, every run \
                  certified)",
    scope: Scope::EveryMethod,
    restriction: Some(restriction),
    memory,
    memory_note: "a fibre box per vertex queried and a lifted cut a query (n + d numbers)",
    build: |class| match class {
        Class::Lattice(c) => Ok(Box::new(MixedCorner::new(c)?)),
        _ => Err(wrong_family("mixed-corner", "lattice")),
    },
};

impl Adversary for MixedCorner {
    fn name(&self) -> &str {
        "mixed-corner"
    }

    fn answer(&mut self, query: &[f64]) -> Answer {
        let n = self.n;
        let answer = if let Some(cut) = cube_face_cut(query, n) {
            Answer::Cut(cut)
        } else if let Some(j) = (0..self.d).find(|&j| query[n + j].abs() > self.half_width) {
            let positive = query[n + j] > 0.0;
            Answer::Cut(Cut {
                normal: Normal::axis(n + j, positive),
                offset: Exact::Float(query[n + j].abs()),
            })
        } else if let Some(index) = vertex_index(query, n) {
            Answer::Cut(self.vertex_answer(index, &query[n..]))
        } else if let Some(cut) = self.excluding_cut(query) {
            Answer::Cut(cut)
        } else {
            self.declare(query);
            Answer::Inside
        };
        self.answered += 1;
        answer
    }

    fn witnesses(&self) -> Option<Witnesses> {
        let (prefix, declared, index, lower, upper) = match self.lowest_alive() {
            Some(v) => {
                let (lower, upper) = match self.fibres.get(&v) {
                    Some(f) => (f.halving.lower().to_vec(), f.halving.upper().to_vec()),
                    None => (
                        vec![-self.half_width; self.d],
                        vec![self.half_width; self.d],
                    ),
                };
                (self.answered, self.declared.len(), v, lower, upper)
            }
            None => self.frozen.clone()?,
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
        let center = lower
            .iter()
            .zip(&upper)
            .map(|(l, u)| Exact::midpoint(*l, *u))
            .collect();
        let with_fibre = Witness::LatticeHull(LatticeHull {
            points,
            fibre: Some(FibreBall {
                integer: vertex(index, self.n),
                center,
                radius: self.rho,
            }),
        });
        Some(Witnesses {
            prefix,
            instances: vec![empty, with_fibre],
        })
    }

    fn undecided(&self) -> Undecided {
        // log2 of sum over vertices of prod(u_i - l_i), by a running log-sum-exp.
        let full = self.d as f64 * (2.0 * self.half_width).log2();
        let untouched = (1u128 << self.n) - self.fibres.len() as u128;
        let mut terms: Vec<f64> = self
            .fibres
            .values()
            .map(|f| {
                f.halving
                    .lower()
                    .iter()
                    .zip(f.halving.upper())
                    .map(|(l, u)| (u - l).log2())
                    .sum()
            })
            .collect();
        // Sum in a fixed order: the map's iteration order varies from run to run, and
        // floating-point sums depend on it.
        terms.sort_by(f64::total_cmp);
        if untouched > 0 {
            terms.push(full + (untouched as f64).log2());
        }
        let top = terms.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        if !top.is_finite() {
            return Undecided::Log2MixedMeasure(top);
        }
        let sum: f64 = terms.iter().map(|t| (t - top).exp2()).sum();
        Undecided::Log2MixedMeasure(top + sum.log2())
    }
}

impl MixedCorner {
    /// The fibre box of vertex `index` (the whole [-R, R]^d when never queried).
    pub fn fibre_box(&self, index: u64) -> (Vec<f64>, Vec<f64>) {
        match self.fibres.get(&index) {
            Some(f) => (f.halving.lower().to_vec(), f.halving.upper().to_vec()),
            None => (
                vec![-self.half_width; self.d],
                vec![self.half_width; self.d],
            ),
        }
    }

    /// Points declared inside so far.
    pub fn declared(&self) -> &[Vec<f64>] {
        &self.declared
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn powers_of_two_are_exact() {
        assert_eq!(pow2(0), 1.0);
        assert_eq!(pow2(-1074), f64::from_bits(1));
        assert_eq!(pow2(-1), 0.5);
        assert_eq!(pow2(10), 1024.0);
        assert_eq!(pow2_rational(-3), f64_to_rational(0.125));
    }
}
