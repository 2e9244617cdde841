//! The tridiagonal chain quadratic behind Nesterov's smooth lower bounds (Introductory
//! Lectures on Convex Optimization, 2004, sec. 2.1.2 and 2.1.4):
//!
//! f(x) = (c/2) [x_1^2 + sum_{i=1}^{p-1} (x_i - x_{i+1})^2 + x_p^2] + (mu/2) ||x||^2 - c s x_1
//!
//! on R^d with chain length p <= d. Its Hessian is H = c A + mu I with A = tridiag(-1, 2,
//! -1) on the first p coordinates, so mu I <= H < (4c + mu) I. The gradient at x is
//! c (A x - s e_1) + mu x on the chain and mu x beyond it: a tridiagonal product, O(d).
//!
//! The minimiser has zeros beyond p and, on the chain, solves (A + (mu/c) I) z = s e_1:
//! z_i = s (1 - i/(p+1)) when mu = 0 \[derived\]; otherwise z_i = s (q^i - q^(2(p+1)-i)) /
//! (1 - q^(2(p+1))) with q the root in (0, 1) of q^2 - (2 + mu/c) q + 1 = 0 [derived: the
//! recurrence -z_(i-1) + (2 + mu/c) z_i - z_(i+1) = 0 with z_0 = s, z_(p+1) = 0]. The
//! optimal value is f* = -(c s / 2) z_1, and the gap is evaluated as
//! (1/2)(x - x*)^T H (x - x*), a sum of non-negative terms with no cancellation.

use crate::error::Error;
use crate::instance::large_scale::{Function, KnownFunction};

/// The chain quadratic with its parameters.
#[derive(Clone, Debug)]
pub struct Chain {
    dim: usize,
    length: usize,
    coupling: f64,
    strong_convexity: f64,
    shift: f64,
    name: &'static str,
}

impl Chain {
    /// The chain f above with d = `dim`, p = `length`, c = `coupling`, mu =
    /// `strong_convexity`, s = `shift`.
    pub fn new(
        dim: usize,
        length: usize,
        coupling: f64,
        strong_convexity: f64,
        shift: f64,
        name: &'static str,
    ) -> Result<Chain, Error> {
        if length == 0 || length > dim {
            return Err(Error::DimensionTooSmall {
                dim,
                needed: length.max(1),
                what: format!("a chain of length {length}"),
            });
        }
        Ok(Chain {
            dim,
            length,
            coupling,
            strong_convexity,
            shift,
            name,
        })
    }

    /// Chain length p.
    pub fn length(&self) -> usize {
        self.length
    }

    /// The root q in (0, 1) of q^2 - (2 + mu/c) q + 1 = 0 (1 when mu = 0), computed as
    /// 2 / ((2 + m) + sqrt(m (4 + m))), m = mu/c, without cancellation.
    pub fn ratio(&self) -> f64 {
        let m = self.strong_convexity / self.coupling;
        2.0 / ((2.0 + m) + (m * (4.0 + m)).sqrt())
    }

    /// The minimiser's chain part z_1..z_p for shift s = 1.
    pub fn unit_minimiser(length: usize, coupling: f64, strong_convexity: f64) -> Vec<f64> {
        let p = length;
        if strong_convexity == 0.0 {
            let denominator = (p + 1) as f64;
            return (1..=p).map(|i| 1.0 - i as f64 / denominator).collect();
        }
        let m = strong_convexity / coupling;
        let q = 2.0 / ((2.0 + m) + (m * (4.0 + m)).sqrt());
        let mut powers = Vec::with_capacity(2 * p + 3);
        let mut power = 1.0;
        for _ in 0..=2 * p + 2 {
            powers.push(power);
            power *= q;
        }
        let top = powers[2 * p + 2];
        (1..=p)
            .map(|i| (powers[i] - powers[2 * p + 2 - i]) / (1.0 - top))
            .collect()
    }

    /// (1/2) e^T H e for e = x - x* given through its chain part `e_chain` and the
    /// coordinates beyond the chain.
    fn half_quadratic_form(&self, e_chain: &[f64], beyond: &[f64]) -> f64 {
        let mut chain_terms =
            e_chain[0] * e_chain[0] + e_chain[self.length - 1] * e_chain[self.length - 1];
        for w in e_chain.windows(2) {
            let diff = w[0] - w[1];
            chain_terms += diff * diff;
        }
        let norm2 = crate::geometry::basis::dot(e_chain, e_chain)
            + crate::geometry::basis::dot(beyond, beyond);
        0.5 * (self.coupling * chain_terms + self.strong_convexity * norm2)
    }
}

impl Function for Chain {
    fn name(&self) -> &str {
        self.name
    }

    fn dim(&self) -> usize {
        self.dim
    }

    fn evaluate(&self, x: &[f64], gradient: &mut [f64]) -> f64 {
        let (c, mu, p) = (self.coupling, self.strong_convexity, self.length);
        // Straight-line loops over slices (no branches inside), so they vectorise.
        let chain = &x[..p];
        let chain_terms = chain[0] * chain[0]
            + chain[p - 1] * chain[p - 1]
            + squared_differences(&chain[..p - 1], &chain[1..]);
        let norm2 = crate::geometry::basis::dot(x, x);
        if p == 1 {
            gradient[0] = 2.0 * c * chain[0] + mu * chain[0];
        } else {
            gradient[0] = c * (2.0 * chain[0] - chain[1]) + mu * chain[0];
            gradient[p - 1] = c * (2.0 * chain[p - 1] - chain[p - 2]) + mu * chain[p - 1];
            for (g, ((left, middle), right)) in gradient[1..p - 1]
                .iter_mut()
                .zip(chain[..p - 2].iter().zip(&chain[1..p - 1]).zip(&chain[2..]))
            {
                *g = c * ((2.0 * middle - left) - right) + mu * middle;
            }
        }
        gradient[0] -= c * self.shift;
        for (g, xi) in gradient[p..].iter_mut().zip(&x[p..]) {
            *g = mu * xi;
        }
        0.5 * (c * chain_terms + mu * norm2) - c * self.shift * x[0]
    }
}

/// Value and chain gradient of h(z) = (c/2) z^T A z - c s z_1 for z given on its first
/// `z.len()` coordinates (zero beyond), chain length p: returns h and writes
/// w_i = c (A z - s e_1)_i for i < min(len + 1, p) into `w`.
pub fn chain_part(z: &[f64], length: usize, coupling: f64, shift: f64, w: &mut Vec<f64>) -> f64 {
    let j = z.len();
    let at = |i: usize| if i < j { z[i] } else { 0.0 };
    let mut quad = 0.0;
    let mut previous = 0.0;
    for &zi in z {
        let diff = previous - zi;
        quad += diff * diff;
        previous = zi;
    }
    quad += previous * previous;
    w.clear();
    for i in 0..(j + 1).min(length) {
        let left = if i == 0 { 0.0 } else { at(i - 1) };
        let mut wi = coupling * ((at(i) - left) + (at(i) - at(i + 1)));
        if i == 0 {
            wi -= coupling * shift;
        }
        w.push(wi);
    }
    0.5 * coupling * quad - coupling * shift * at(0)
}

/// sum_i (a_i - b_i)^2 with eight independent accumulators (fixed order).
fn squared_differences(a: &[f64], b: &[f64]) -> f64 {
    let mut acc = [0.0f64; 8];
    let chunks = a.len() / 8;
    for k in 0..chunks {
        for j in 0..8 {
            let diff = a[8 * k + j] - b[8 * k + j];
            acc[j] += diff * diff;
        }
    }
    let mut tail = 0.0;
    for i in chunks * 8..a.len() {
        let diff = a[i] - b[i];
        tail += diff * diff;
    }
    acc.iter().sum::<f64>() + tail
}

impl KnownFunction for Chain {
    fn optimal_value(&self) -> f64 {
        let z1 = Self::unit_minimiser(self.length, self.coupling, self.strong_convexity)[0];
        -0.5 * self.coupling * self.shift * self.shift * z1
    }

    fn minimiser(&self) -> Vec<f64> {
        let mut x: Vec<f64> =
            Self::unit_minimiser(self.length, self.coupling, self.strong_convexity)
                .into_iter()
                .map(|z| z * self.shift)
                .collect();
        x.resize(self.dim, 0.0);
        x
    }

    fn gap(&self, x: &[f64]) -> f64 {
        let star = self.minimiser();
        let e_chain: Vec<f64> = x[..self.length]
            .iter()
            .zip(&star)
            .map(|(a, b)| a - b)
            .collect();
        self.half_quadratic_form(&e_chain, &x[self.length..])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_gradient_vanishes_at_the_minimiser() {
        for mu in [0.0, 0.01, 0.5] {
            let chain = Chain::new(12, 9, 0.25, mu, 1.7, "test").unwrap();
            let star = chain.minimiser();
            let mut g = vec![0.0; 12];
            let value = chain.evaluate(&star, &mut g);
            assert!(g.iter().all(|gi| gi.abs() < 1e-14), "mu {mu}: {g:?}");
            let expected = chain.optimal_value();
            assert!((value - expected).abs() < 1e-14, "{value} vs {expected}");
            assert_eq!(chain.gap(&star), 0.0);
        }
    }

    #[test]
    fn the_gradient_matches_central_differences() {
        // For a quadratic the central difference is exact up to rounding (common
        // practice, no source).
        for (d, p) in [(1, 1), (2, 2), (9, 9), (20, 13)] {
            let chain = Chain::new(d, p, 0.7, 0.05, 1.3, "test").unwrap();
            let x: Vec<f64> = (0..d).map(|i| (i as f64 * 0.91 + 0.3).cos()).collect();
            let mut g = vec![0.0; d];
            chain.evaluate(&x, &mut g);
            let mut scratch = vec![0.0; d];
            for i in 0..d {
                let h = 1e-3;
                let (mut plus, mut minus) = (x.clone(), x.clone());
                plus[i] += h;
                minus[i] -= h;
                let fp = chain.evaluate(&plus, &mut scratch);
                let fm = chain.evaluate(&minus, &mut scratch);
                let numeric = (fp - fm) / (2.0 * h);
                assert!(
                    (numeric - g[i]).abs() < 1e-9,
                    "d {d} p {p} i {i}: {numeric} vs {}",
                    g[i]
                );
            }
        }
    }

    #[test]
    fn the_gap_agrees_with_the_difference_of_values() {
        let chain = Chain::new(10, 7, 0.3, 0.02, 0.9, "test").unwrap();
        let x: Vec<f64> = (0..10).map(|i| (i as f64 * 0.37).sin()).collect();
        let mut g = vec![0.0; 10];
        let value = chain.evaluate(&x, &mut g);
        let gap = chain.gap(&x);
        assert!((value - chain.optimal_value() - gap).abs() < 1e-14 * (1.0 + gap));
    }
}
