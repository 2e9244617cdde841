//! The best strict cut through a point over a finite lattice set: the split search the
//! lattice-halving adversary answers with and the lattice centerpoint method measures
//! depth with (docs/theory.md §4.2).
//!
//! The search ([`best_split`]):
//! - n = 1: the larger side of x (ties: the lower side); exact;
//! - n = 2 with x on the grid 2^-20 Z^2 (|x_i| <= 2^40): an exact angular sweep. The
//!   critical directions are +-(s - x) for s in S; an open half-plane through x keeps the
//!   points strictly left of its boundary direction w, and that set only changes when w
//!   crosses a critical direction, so trying one w strictly inside every gap between
//!   consecutive critical directions (their sum, or a perpendicular for a gap of pi)
//!   finds the best open half-plane. All arithmetic is in `i128`, exact;
//! - n = 3 with x on the grid 2^-20 Z^3, |s - x| <= 1024 and |S| <= 300: every plane
//!   through x and two points of S (its normal, both sides), plus the candidates below.
//!   Planes are not tilted to take in points lying on them, so this is exhaustive over
//!   those splits but not proven optimal;
//! - otherwise: candidate directions only (axes and the generic ones below).
//!
//! Always among the candidates: generic directions a_t = (1, t, ..., t^(n-1)),
//! t = 1, 2, ...: for s != x, `a_t.(s - x)` is a nonzero polynomial in t of degree < n,
//! so at most n - 1 values of t put s on the boundary, and some t among the first
//! (n - 1)|S| + 1 puts no other point of S on it. Its larger open side keeps at least
//! (|S| - 1)/2 points; hence every method needs floor(log2 |S|) + 1 queries when "none"
//! is a possible answer. Every count is decided exactly (error-free floating point
//! where it is exact, rationals otherwise). Ties: the first candidate found, and the
//! side `a.(s - x) < 0` of a candidate before the other.

use std::cmp::Ordering;

use num_rational::BigRational;

use crate::exact::{f64_to_rational, two_diff, Exact};

/// Largest |S| for the plane search in n = 3.
pub const PLANE_SEARCH_LIMIT: usize = 300;

/// The best split found: the normal `a` of the cut `{w : a.(w - x) < 0}` and how many
/// of the given points it keeps.
#[derive(Clone, Debug, PartialEq)]
pub struct BestSplit {
    /// The normal; the kept side is `a.(s - x) < 0`.
    pub normal: Vec<f64>,
    /// Points strictly on the kept side.
    pub kept: usize,
}

/// `a.(s - x)` exactly when error-free floating point computes it, else `None`.
fn exact_dot_fast(a: &[f64], s: &[i64], x: &[f64]) -> Option<f64> {
    let mut sum = 0.0f64;
    for ((ai, si), xi) in a.iter().zip(s).zip(x) {
        let (d, e) = two_diff(*si as f64, *xi);
        if e != 0.0 {
            return None;
        }
        let p = ai * d;
        if !p.is_finite() || (p != 0.0 && p.abs() < 1e-290) || ai.mul_add(d, -p) != 0.0 {
            return None;
        }
        let (t, e) = two_diff(sum, -p);
        if e != 0.0 || !t.is_finite() {
            return None;
        }
        sum = t;
    }
    Some(sum)
}

/// The sign of `a.(s - x)`, exactly.
pub fn side(a: &[f64], s: &[i64], x: &[f64]) -> Ordering {
    if let Some(v) = exact_dot_fast(a, s, x) {
        return v.partial_cmp(&0.0).unwrap_or(Ordering::Equal);
    }
    let value: BigRational = a
        .iter()
        .zip(s)
        .zip(x)
        .filter(|((ai, _), _)| **ai != 0.0)
        .map(|((ai, si), xi)| {
            f64_to_rational(*ai) * (BigRational::from_integer((*si).into()) - f64_to_rational(*xi))
        })
        .sum();
    value.cmp(&BigRational::from_integer(0.into()))
}

/// (strictly negative, zero, strictly positive) counts of `a.(s - x)` over `points`.
fn counts(a: &[f64], points: &[Vec<i64>], x: &[f64]) -> (usize, usize, usize) {
    let mut c = (0, 0, 0);
    for s in points {
        match side(a, s, x) {
            Ordering::Less => c.0 += 1,
            Ordering::Equal => c.1 += 1,
            Ordering::Greater => c.2 += 1,
        }
    }
    c
}

/// Scales x by 2^20 to integers when it lies on that grid with |x_i| <= 2^40.
fn grid(x: &[f64]) -> Option<Vec<i128>> {
    x.iter()
        .map(|v| {
            let t = v * 1048576.0;
            (t.fract() == 0.0 && t.abs() <= 2f64.powi(60)).then_some(t as i128)
        })
        .collect()
}

fn reduce(v: &mut [i128]) {
    let mut g: i128 = 0;
    for x in v.iter() {
        g = gcd(g, x.abs());
    }
    if g > 1 {
        for x in v.iter_mut() {
            *x /= g;
        }
    }
}

fn gcd(mut a: i128, mut b: i128) -> i128 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

struct Best {
    normal: Vec<f64>,
    kept: usize,
}

impl Best {
    /// Tries both sides of candidate `a` (counted exactly).
    fn offer(&mut self, a: &[f64], points: &[Vec<i64>], x: &[f64]) -> usize {
        if a.iter().all(|v| *v == 0.0) || a.iter().any(|v| !v.is_finite()) {
            return usize::MAX;
        }
        let (neg, zero, pos) = counts(a, points, x);
        if neg > self.kept || self.normal.is_empty() {
            self.kept = neg;
            self.normal = a.to_vec();
        }
        if pos > self.kept {
            self.kept = pos;
            self.normal = a.iter().map(|v| -v).collect();
        }
        zero
    }
}

/// The 2-d exact sweep over integer vectors `v` (points minus x, scaled); returns the
/// boundary direction w of the best open half-plane {v : cross(w, v) > 0}.
fn sweep_2d(v: &[[i128; 2]]) -> Option<([i128; 2], usize)> {
    let mut dirs: Vec<[i128; 2]> = Vec::with_capacity(2 * v.len());
    for p in v {
        if p[0] != 0 || p[1] != 0 {
            dirs.push(*p);
            dirs.push([-p[0], -p[1]]);
        }
    }
    if dirs.is_empty() {
        return None;
    }
    let half = |p: &[i128; 2]| u8::from(!(p[1] > 0 || (p[1] == 0 && p[0] > 0)));
    let cross = |a: &[i128; 2], b: &[i128; 2]| a[0] * b[1] - a[1] * b[0];
    dirs.sort_by(|a, b| half(a).cmp(&half(b)).then_with(|| 0.cmp(&cross(a, b))));
    dirs.dedup_by(|b, a| half(a) == half(b) && cross(a, b) == 0);
    let mut best: Option<([i128; 2], usize)> = None;
    for j in 0..dirs.len() {
        let c1 = dirs[j];
        let c2 = dirs[(j + 1) % dirs.len()];
        let mut w = if dirs.len() > 1 && cross(&c1, &c2) > 0 {
            [c1[0] + c2[0], c1[1] + c2[1]]
        } else {
            [-c1[1], c1[0]]
        };
        reduce(&mut w);
        let count = v.iter().filter(|p| cross(&w, p) > 0).count();
        if best.is_none_or(|(_, k)| count > k) {
            best = Some((w, count));
        }
    }
    best
}

/// The best cut through `x` over `points` that the search finds (module docs). Points
/// equal to x are never kept. Returns the normal oriented so that the kept side is
/// `a.(s - x) < 0`.
pub fn best_split(points: &[Vec<i64>], x: &[f64]) -> BestSplit {
    let n = x.len();
    let mut best = Best {
        normal: Vec::new(),
        kept: 0,
    };
    let scaled = grid(x);
    if n == 1 {
        best.offer(&[1.0], points, x);
    } else if n == 2 {
        if let Some(xs) = &scaled {
            let v: Vec<[i128; 2]> = points
                .iter()
                .map(|s| {
                    [
                        i128::from(s[0]) * 1048576 - xs[0],
                        i128::from(s[1]) * 1048576 - xs[1],
                    ]
                })
                .collect();
            if let Some((w, _)) = sweep_2d(&v) {
                // Kept: cross(w, v) > 0, i.e. a.v < 0 with a = (w_y, -w_x).
                let a = [w[1] as f64, -(w[0] as f64)];
                best.offer(&a, points, x);
            }
        }
    } else if n == 3 && points.len() <= PLANE_SEARCH_LIMIT {
        if let Some(xs) = &scaled {
            plane_search(points, x, xs, &mut best);
        }
    }
    for i in 0..n {
        let mut a = vec![0.0; n];
        a[i] = 1.0;
        best.offer(&a, points, x);
    }
    // Generic directions: guarantee a boundary with no other point of S.
    let tries = (n.saturating_sub(1)) * points.len() + 2;
    for t in 1..=tries.max(2) {
        let mut a = Vec::with_capacity(n);
        let mut power = 1.0f64;
        for _ in 0..n {
            a.push(power);
            power *= t as f64;
        }
        let zero = best.offer(&a, points, x);
        let x_is_point = points
            .iter()
            .any(|s| s.iter().zip(x).all(|(si, xi)| *si as f64 == *xi));
        if zero <= usize::from(x_is_point) {
            break;
        }
    }
    BestSplit {
        normal: best.normal,
        kept: best.kept,
    }
}

/// n = 3: normals of planes through x and two points (module docs).
fn plane_search(points: &[Vec<i64>], x: &[f64], xs: &[i128], best: &mut Best) {
    let bound = 1024i128 * 1048576;
    let v: Vec<[i128; 3]> = points
        .iter()
        .map(|s| {
            [
                i128::from(s[0]) * 1048576 - xs[0],
                i128::from(s[1]) * 1048576 - xs[1],
                i128::from(s[2]) * 1048576 - xs[2],
            ]
        })
        .collect();
    if v.iter().any(|p| p.iter().any(|c| c.abs() > bound)) {
        return;
    }
    let mut top = best.kept;
    let mut top_normal: Option<[i128; 3]> = None;
    for i in 0..v.len() {
        for j in (i + 1)..v.len() {
            let (p, q) = (v[i], v[j]);
            let mut nrm = [
                p[1] * q[2] - p[2] * q[1],
                p[2] * q[0] - p[0] * q[2],
                p[0] * q[1] - p[1] * q[0],
            ];
            if nrm == [0, 0, 0] {
                continue;
            }
            reduce(&mut nrm);
            let (mut neg, mut pos) = (0usize, 0usize);
            for r in &v {
                let dot = nrm[0] * r[0] + nrm[1] * r[1] + nrm[2] * r[2];
                match dot.cmp(&0) {
                    Ordering::Less => neg += 1,
                    Ordering::Greater => pos += 1,
                    Ordering::Equal => {}
                }
            }
            if neg > top {
                top = neg;
                top_normal = Some(nrm);
            }
            if pos > top {
                top = pos;
                top_normal = Some([-nrm[0], -nrm[1], -nrm[2]]);
            }
        }
    }
    if let Some(nrm) = top_normal {
        let a: Vec<f64> = nrm.iter().map(|c| *c as f64).collect();
        best.offer(&a, points, x);
    }
}

/// `a.x` exactly.
pub fn offset_through(a: &[f64], x: &[f64]) -> Exact {
    Exact::from_rational(
        a.iter()
            .zip(x)
            .map(|(ai, xi)| f64_to_rational(*ai) * f64_to_rational(*xi))
            .sum(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn octagon_hole_has_depth_three() {
        // The octagon of docs/theory.md §4.2: depth 1 at its own points, depth 3 at the hole (1, 1)
        // (by hand: the line through (1, 1) with slope -0.9 has (0,1), (1,0), (2,0)
        // below it and the other five above, and no closed half-plane does better).
        // Depth = |S| - (best open half-plane through the point).
        let octagon = vec![
            vec![0, 1],
            vec![0, 2],
            vec![1, 3],
            vec![2, 3],
            vec![3, 2],
            vec![3, 1],
            vec![2, 0],
            vec![1, 0],
        ];
        assert_eq!(best_split(&octagon, &[1.0, 1.0]).kept, 5);
        // At a point of S the depth is 1: some open half-plane keeps the other 7.
        assert_eq!(best_split(&octagon, &[0.0, 1.0]).kept, 7);
    }
}
