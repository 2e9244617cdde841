//! An axis-aligned box that a method shrinks with every cut it learns.

use std::cmp::Ordering;

use crate::exact::cmp_diff;
use crate::oracle::{Cut, Normal};

/// A box model prod [l_i, u_i] of what a method knows: it contains every point that
/// satisfies every cut answered so far (bound tightening for dense cuts, exact
/// shrinking for axis cuts).
#[derive(Clone, Debug, PartialEq)]
pub struct BoxModel {
    /// Lower corner.
    pub lower: Vec<f64>,
    /// Upper corner.
    pub upper: Vec<f64>,
}

impl BoxModel {
    /// The box [-R, R]^d.
    pub fn cube(dim: usize, half_width: f64) -> BoxModel {
        BoxModel {
            lower: vec![-half_width; dim],
            upper: vec![half_width; dim],
        }
    }

    /// The dimension.
    pub fn dim(&self) -> usize {
        self.lower.len()
    }

    /// Writes the centre into `out`.
    pub fn center_into(&self, out: &mut [f64]) {
        for ((o, l), u) in out.iter_mut().zip(&self.lower).zip(&self.upper) {
            *o = 0.5 * l + 0.5 * u;
        }
    }

    /// True when some side is at most 2 rho (decided exactly), so no closed rho-ball
    /// fits strictly inside: K lies in the open slab of every cut coordinate.
    pub fn too_thin_for(&self, rho: f64) -> bool {
        let two_rho = 2.0 * rho;
        self.lower
            .iter()
            .zip(&self.upper)
            .any(|(l, u)| cmp_diff(*u, *l, two_rho) != Ordering::Greater)
    }

    /// Shrinks the box by the cut `a.y < offset`: axis cuts exactly, dense cuts by
    /// interval bound tightening (y_i < (b - sum_{j != i} min_j a_j y_j) / a_i).
    pub fn apply(&mut self, cut: &Cut) {
        let b = cut.offset.to_f64();
        match &cut.normal {
            Normal::Axis { axis, sign } => {
                let i = *axis;
                if *sign > 0 {
                    self.upper[i] = self.upper[i].min(b);
                } else {
                    self.lower[i] = self.lower[i].max(-b);
                }
            }
            Normal::Dense(a) => {
                let min_terms: Vec<f64> = a
                    .iter()
                    .zip(self.lower.iter().zip(&self.upper))
                    .map(|(ai, (l, u))| (ai * l).min(ai * u))
                    .collect();
                let total: f64 = min_terms.iter().sum();
                if !total.is_finite() {
                    return;
                }
                for i in 0..a.len() {
                    if a[i] == 0.0 {
                        continue;
                    }
                    let rest = total - min_terms[i];
                    let bound = (b - rest) / a[i];
                    // Loosen by a relative hair so rounding never cuts off a point of K.
                    let slack = 8.0 * f64::EPSILON * (b.abs() + rest.abs()) / a[i].abs();
                    if a[i] > 0.0 {
                        self.upper[i] = self.upper[i].min(bound + slack);
                    } else {
                        self.lower[i] = self.lower[i].max(bound - slack);
                    }
                }
            }
        }
    }
}
