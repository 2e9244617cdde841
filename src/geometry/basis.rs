//! An orthonormal basis grown one vector at a time, for the adaptive-rotation
//! adversaries (docs/theory.md §3), with the dense vector kernels they and the
//! large-scale functions share.
//!
//! The basis spans every query seen so far and every revealed direction. A new hidden
//! direction is a deterministic pseudo-random vector orthogonalised against the whole
//! basis, so it is orthogonal (to rounding) to every query and every earlier direction.
//!
//! Orthogonalisation is classical Gram-Schmidt with re-orthogonalisation ("twice is
//! enough", Giraud, Langou & Rozloznik, Comput. Math. Appl. 50, 2005; the criterion
//! "repeat while the norm drops by more than half" is Kahan's, as reported by Parlett,
//! The Symmetric Eigenvalue Problem, 1980, sec. 6-9; from memory). A residual below
//! [`IN_SPAN`] times the vector's norm after a pass is taken as "already in the span":
//! the part of the vector outside the basis is then below 1e-14 of its norm, so every
//! later direction is orthogonal to it to that accuracy.
//!
//! Portability: only +, -, *, / and sqrt; the pseudo-random coordinates come from an
//! integer generator (splitmix64), so the same queries give the same directions on every
//! IEEE 754 platform (the summation order of the dot products is fixed in the code).
//!
//! Memory: the vectors are stored row by row in one `Vec<f64>` of length m d.

use crate::error::Error;

/// Relative residual below which a vector counts as lying in the span of the basis.
pub const IN_SPAN: f64 = 1e-14;

/// Dot product with eight independent accumulators (vectorises; fixed order).
pub fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; 8];
    let chunks = n / 8;
    for c in 0..chunks {
        let (x, y) = (&a[c * 8..c * 8 + 8], &b[c * 8..c * 8 + 8]);
        for k in 0..8 {
            acc[k] += x[k] * y[k];
        }
    }
    let mut tail = 0.0;
    for i in chunks * 8..n {
        tail += a[i] * b[i];
    }
    ((acc[0] + acc[4]) + (acc[1] + acc[5])) + ((acc[2] + acc[6]) + (acc[3] + acc[7])) + tail
}

/// Euclidean norm, from [`dot`].
pub fn norm(x: &[f64]) -> f64 {
    dot(x, x).sqrt()
}

/// y += alpha x.
pub fn axpy(alpha: f64, x: &[f64], y: &mut [f64]) {
    for (yi, xi) in y.iter_mut().zip(x) {
        *yi += alpha * xi;
    }
}

/// splitmix64 (Steele, Lea & Flood, OOPSLA 2014): a portable integer generator.
fn splitmix64(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// An orthonormal basis b_1..b_m of R^d, stored row by row.
#[derive(Clone, Debug)]
pub struct Basis {
    dim: usize,
    rows: Vec<f64>,
    count: usize,
    generator: u64,
    coefficients: Vec<f64>,
    /// Reused buffer for the residual of each absorbed query (no allocation per answer).
    scratch: Vec<f64>,
}

impl Basis {
    /// An empty basis of R^d; `seed` fixes the pseudo-random fresh directions.
    pub fn new(dim: usize, seed: u64) -> Basis {
        Basis {
            dim,
            rows: Vec::new(),
            count: 0,
            generator: seed,
            coefficients: Vec::new(),
            scratch: Vec::new(),
        }
    }

    /// Reserves room for `vectors` vectors (so that memory is allocated once).
    pub fn reserve(&mut self, vectors: usize) {
        self.rows.reserve(vectors.saturating_mul(self.dim));
    }

    /// The number of vectors m.
    pub fn len(&self) -> usize {
        self.count
    }

    /// True when the basis is empty.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }

    /// The dimension d.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// Vector `i` (from 0).
    pub fn vector(&self, i: usize) -> &[f64] {
        &self.rows[i * self.dim..(i + 1) * self.dim]
    }

    /// The coefficients <b_i, v> of the last [`Basis::project_out`] call's first pass,
    /// one per basis vector that existed then.
    pub fn first_coefficients(&self) -> &[f64] {
        &self.coefficients
    }

    /// One classical Gram-Schmidt pass: v -= sum_i <b_i, v> b_i; the coefficients go to
    /// `out`.
    fn pass(&self, v: &mut [f64], out: &mut Vec<f64>) {
        out.clear();
        for i in 0..self.count {
            out.push(dot(self.vector(i), v));
        }
        for (i, c) in out.iter().enumerate() {
            if *c != 0.0 {
                axpy(-c, self.vector(i), v);
            }
        }
    }

    /// Removes from `v` its component in the span of the basis (re-orthogonalising while
    /// the norm drops by more than half, at most four passes) and returns the residual
    /// norm relative to the original norm (0 for v = 0). The first pass's coefficients,
    /// which are the inner products <b_i, v>, stay available in
    /// [`Basis::first_coefficients`].
    pub fn project_out(&mut self, v: &mut [f64]) -> f64 {
        let original = dot(v, v).sqrt();
        if original == 0.0 {
            self.coefficients.clear();
            self.coefficients.resize(self.count, 0.0);
            return 0.0;
        }
        let mut coefficients = std::mem::take(&mut self.coefficients);
        self.pass(v, &mut coefficients);
        let mut scratch = Vec::new();
        let mut before = original;
        let mut after = dot(v, v).sqrt();
        let mut passes = 1;
        while after > IN_SPAN * original && after <= 0.5 * before && passes < 4 {
            self.pass(v, &mut scratch);
            before = after;
            after = dot(v, v).sqrt();
            passes += 1;
        }
        self.coefficients = coefficients;
        after / original
    }

    /// Adds the query `x` to the span: its residual, normalised, unless x already lies
    /// in the span (relative residual at most [`IN_SPAN`]). Returns the inner products
    /// <b_i, x> with the vectors that existed before (first pass).
    pub fn absorb(&mut self, x: &[f64]) -> Result<&[f64], Error> {
        let mut v = std::mem::take(&mut self.scratch);
        v.clear();
        v.extend_from_slice(x);
        let relative = self.project_out(&mut v);
        let full = relative > IN_SPAN && self.count == self.dim;
        if relative > IN_SPAN && !full {
            let n = dot(&v, &v).sqrt();
            v.iter_mut().for_each(|c| *c /= n);
            self.rows.extend_from_slice(&v);
            self.count += 1;
        }
        self.scratch = v;
        if full {
            return Err(self.full());
        }
        Ok(&self.coefficients)
    }

    /// A fresh unit vector orthogonal to the whole basis, appended to it; returns its
    /// index. Deterministic given the seed and the basis.
    pub fn fresh(&mut self) -> Result<usize, Error> {
        for _attempt in 0..8 {
            if self.count >= self.dim {
                return Err(self.full());
            }
            let mut v = std::mem::take(&mut self.scratch);
            v.clear();
            for _ in 0..self.dim {
                // 53 random bits -> [-1, 1), exact.
                let bits = splitmix64(&mut self.generator) >> 11;
                v.push((bits as f64) * (1.0 / (1u64 << 52) as f64) - 1.0);
            }
            let relative = self.project_out(&mut v);
            let kept = relative > 1e-3;
            if kept {
                // The residual kept more than half its norm in its last pass (Kahan's
                // criterion in project_out), so it is orthogonal to rounding.
                let n = dot(&v, &v).sqrt();
                v.iter_mut().for_each(|c| *c /= n);
                self.rows.extend_from_slice(&v);
                self.count += 1;
            }
            self.scratch = v;
            if kept {
                return Ok(self.count - 1);
            }
        }
        Err(Error::DimensionTooSmall {
            dim: self.dim,
            needed: self.count + 1,
            what: "a fresh direction orthogonal to the basis (eight pseudo-random attempts \
                   left almost nothing outside its span)"
                .into(),
        })
    }

    fn full(&self) -> Error {
        Error::DimensionTooSmall {
            dim: self.dim,
            needed: self.count + 1,
            what: "one more direction orthogonal to every query and every revealed direction"
                .into(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fresh_directions_are_orthonormal_to_queries() {
        let d = 50;
        let mut basis = Basis::new(d, 7);
        let queries: Vec<Vec<f64>> = (0..10)
            .map(|k| {
                (0..d)
                    .map(|i| ((i * 7 + k * 13) % 11) as f64 - 5.0)
                    .collect()
            })
            .collect();
        for q in &queries {
            basis.absorb(q).unwrap();
        }
        let u = basis.fresh().unwrap();
        let u = basis.vector(u).to_vec();
        assert!((dot(&u, &u) - 1.0).abs() < 1e-15);
        for q in &queries {
            assert!(dot(&u, q).abs() < 1e-13 * dot(q, q).sqrt());
        }
    }

    #[test]
    fn a_full_basis_is_a_typed_error() {
        let mut basis = Basis::new(2, 1);
        basis.fresh().unwrap();
        basis.fresh().unwrap();
        let e = basis.fresh().unwrap_err();
        assert!(e.to_string().contains("d = 2"), "{e}");
    }
}
