//! The published worst-case instances of the large-scale classes (docs/theory.md §3),
//! checked against their sources written out here: each instance's lower bound, its
//! optimal value, ||x*|| = R (the instance is in the class it claims), the minimiser's
//! optimality and the instance's smoothness or Lipschitz constant. The tolerance is the
//! demonstrations' relative 1e-12 (`DEMONSTRATION_TOLERANCE`): the constants are
//! irrational (docs/theory.md §0). (Drori & Teboulle's function is checked the same way
//! in `tests/large_scale.rs`.)

use naysayer::geometry::basis::norm;
use naysayer::instance::large_scale::{
    Function, KnownFunction, NesterovNonsmooth, SmoothChain, StronglyConvexChain,
};
use naysayer::transcript::DEMONSTRATION_TOLERANCE;

const TOL: f64 = DEMONSTRATION_TOLERANCE;

fn close(got: f64, expected: f64, scale: f64, what: &str) {
    assert!(
        (got - expected).abs() <= TOL * scale,
        "{what}: {got:e} vs {expected:e} (scale {scale:e})"
    );
}

/// A deterministic spread of points: x* + offset, with offsets of norm `radius` in turn
/// along each axis, along the diagonal and along alternating signs, scaled by `fraction`.
fn around(centre: &[f64], radius: f64, fraction: f64) -> Vec<Vec<f64>> {
    let d = centre.len();
    let mut out = Vec::new();
    for i in 0..d.min(6) {
        let mut x = centre.to_vec();
        x[i] += fraction * radius;
        out.push(x);
    }
    let diagonal = fraction * radius / (d as f64).sqrt();
    out.push(centre.iter().map(|c| c + diagonal).collect());
    out.push(
        centre
            .iter()
            .enumerate()
            .map(|(i, c)| {
                if i % 2 == 0 {
                    c + diagonal
                } else {
                    c - diagonal
                }
            })
            .collect(),
    );
    out
}

fn gradient(f: &dyn Function, x: &[f64]) -> Vec<f64> {
    let mut g = vec![0.0; x.len()];
    f.evaluate(x, &mut g);
    g
}

fn distance(a: &[f64], b: &[f64]) -> f64 {
    let diff: Vec<f64> = a.iter().zip(b).map(|(x, y)| x - y).collect();
    norm(&diff)
}

#[test]
fn nesterov_nonsmooth_instance_matches_theorem_3_2_1() {
    // Nesterov, Introductory Lectures on Convex Optimization (2004), Thm 3.2.1:
    // f(x) = gamma max_{i <= k+1} x_i + (mu/2) ||x||^2 with gamma = sqrt(k+1) M /
    // (2 + sqrt(k+1)) and mu = M / ((2 + sqrt(k+1)) R); x*_i = -gamma / (mu (k+1)) on the
    // first k + 1 coordinates, f* = -gamma^2 / (2 mu (k+1)), and every span method has
    // f(x_k) - f* >= M R / (2 (2 + sqrt(k+1))).
    for (m, r) in [(1.0, 1.0), (3.0, 0.02), (1e-3, 500.0)] {
        for k in [0usize, 1, 4, 15, 99] {
            let d = k + 1 + 3;
            let f = NesterovNonsmooth::new(d, m, r, k).unwrap();
            let root = ((k + 1) as f64).sqrt();
            let bound = m * r / (2.0 * (2.0 + root));
            close(f.bound(), bound, bound, "the bound");
            let gamma = root * m / (2.0 + root);
            let mu = m / ((2.0 + root) * r);
            let f_star = -gamma * gamma / (2.0 * mu * (k + 1) as f64);
            close(f.optimal_value(), f_star, f_star.abs(), "f*");
            // f* = -M R / (2 (2 + sqrt(k+1))): the bound is -f*, the gap at x_0 = 0.
            close(f_star, -bound, bound, "f* = -bound");
            let star = f.minimiser();
            for (i, x) in star.iter().enumerate() {
                let expected = if i <= k {
                    -gamma / (mu * (k + 1) as f64)
                } else {
                    0.0
                };
                close(*x, expected, r, "x*");
            }
            close(norm(&star), r, r, "||x*|| = R");
            close(f.gap(&star), 0.0, bound, "gap at x*");
            // x* is optimal: f(y) >= f* for points around it.
            for y in around(&star, r, 0.3) {
                assert!(f.gap(&y) >= -TOL * bound, "k = {k}: gap below zero");
            }
            // Subgradients gamma e_i + mu x have norm at most M on ||x|| <= 2R, which
            // holds B(x*, R): the class's Lipschitz constant (docs/theory.md §3).
            for y in around(&star, r, 1.0) {
                assert!(norm(&y) <= 2.0 * r * (1.0 + TOL));
                let g = gradient(&f, &y);
                assert!(norm(&g) <= m * (1.0 + TOL), "k = {k}: |g| = {}", norm(&g));
            }
        }
    }
}

#[test]
fn smooth_chain_matches_theorem_2_1_7() {
    // Nesterov 2004, Thm 2.1.7: on the chain of length p = 2k + 1,
    // f(x) = (beta/4) [(1/2)(x_1^2 + sum (x_i - x_{i+1})^2 + x_p^2) - x_1] (scaled here by
    // a shift s so that ||x*|| = R), every span method has f(x_k) - f* >=
    // 3 beta ||x_0 - x*||^2 / (32 (k+1)^2). For s = 1: x*_i = 1 - i/(p+1), so
    // ||x*||^2 = p (2p+1) / (6 (p+1)), and f* = (beta/8)(-1 + 1/(p+1)); the shift
    // multiplies f* by s^2 (derived).
    for (beta, r) in [(1.0, 1.0), (40.0, 0.05), (1e-3, 70.0)] {
        for k in [1usize, 2, 7, 30, 200] {
            let p = 2 * k + 1;
            let d = p + 5;
            let f = SmoothChain::new(d, beta, r, k).unwrap();
            let bound = 3.0 * beta * r * r / (32.0 * ((k + 1) as f64).powi(2));
            close(f.bound(), bound, bound, "the bound");
            let pf = p as f64;
            let unit_norm2 = pf * (2.0 * pf + 1.0) / (6.0 * (pf + 1.0));
            let s2 = r * r / unit_norm2;
            let star = f.minimiser();
            for (i, x) in star.iter().enumerate() {
                let expected = if i < p {
                    s2.sqrt() * (1.0 - (i + 1) as f64 / (pf + 1.0))
                } else {
                    0.0
                };
                close(*x, expected, r, "x*");
            }
            close(norm(&star), r, r, "||x*|| = R");
            let f_star = s2 * beta / 8.0 * (-1.0 + 1.0 / (pf + 1.0));
            close(f.optimal_value(), f_star, f_star.abs(), "f*");
            // The gap at x_0 = 0 is -f*.
            close(f.gap(&vec![0.0; d]), -f_star, f_star.abs(), "gap at 0");
            // The gradient vanishes at x*.
            close(norm(&gradient(&f, &star)), 0.0, beta * r, "grad f(x*)");
            // beta-smooth: ||grad f(x) - grad f(y)|| <= beta ||x - y||.
            let points = around(&star, r, 0.7);
            for x in &points {
                for y in [&star, &points[0]] {
                    let dg = distance(&gradient(&f, x), &gradient(&f, y));
                    assert!(dg <= beta * distance(x, y) * (1.0 + TOL) + TOL * beta * r);
                }
            }
        }
    }
}

#[test]
fn strongly_convex_chain_matches_theorem_2_1_13() {
    // Nesterov 2004, Thm 2.1.13: f(x) = ((beta - mu)/8) [x_1^2 + sum (x_i - x_{i+1})^2 -
    // 2 x_1] + (mu/2) ||x||^2 (shifted so that ||x*|| = R), and every span method has
    // f(x_k) - f* >= (mu/2) q^(2k) ||x_0 - x*||^2, q = (sqrt(Q) - 1)/(sqrt(Q) + 1),
    // Q = beta/mu. The minimiser in infinite dimension is x*_i = q^i (the chain of length
    // 2k + 1 used here is a hair shorter; docs/theory.md §3).
    for (beta, mu, r) in [(4.0f64, 1.0f64, 1.0), (1000.0, 1.0, 0.3), (10.0, 0.1, 25.0)] {
        let q_book = ((beta / mu).sqrt() - 1.0) / ((beta / mu).sqrt() + 1.0);
        for k in [1usize, 3, 10, 30] {
            let p = 2 * k + 1;
            let d = p + 4;
            let f = StronglyConvexChain::new(d, beta, mu, r, k).unwrap();
            let bound = 0.5 * mu * q_book.powi(2 * k as i32) * r * r;
            close(f.bound(), bound, bound, "the bound");
            close(f.ratio(), q_book, q_book, "q");
            let star = f.minimiser();
            close(norm(&star), r, r, "||x*|| = R");
            assert!(
                star[p..].iter().all(|x| *x == 0.0),
                "zeros beyond the chain"
            );
            // The chain's minimiser decays by q per coordinate, like the book's x*_i = q^i,
            // up to the truncation at p: x*_{i+1} / x*_i = q (1 - q^(2(p-i))) / (1 - q^(2(p+1-i))).
            for i in 0..p.min(8) - 1 {
                let n = (p - i - 1) as i32;
                let expected = q_book * (1.0 - q_book.powi(2 * n)) / (1.0 - q_book.powi(2 * n + 2));
                close(star[i + 1] / star[i], expected, 1.0, "x*_(i+1) / x*_i");
            }
            // The gradient vanishes at x*.
            close(norm(&gradient(&f, &star)), 0.0, beta * r, "grad f(x*)");
            // mu-strongly convex and beta-smooth: mu ||x - y||^2 <= <grad f(x) - grad f(y),
            // x - y> and ||grad f(x) - grad f(y)|| <= beta ||x - y||.
            for x in around(&star, r, 0.5) {
                let gx = gradient(&f, &x);
                let gy = gradient(&f, &star);
                let dx: Vec<f64> = x.iter().zip(&star).map(|(a, b)| a - b).collect();
                let dg: Vec<f64> = gx.iter().zip(&gy).map(|(a, b)| a - b).collect();
                let inner: f64 = dx.iter().zip(&dg).map(|(a, b)| a * b).sum();
                let n2 = norm(&dx).powi(2);
                assert!(inner >= mu * n2 * (1.0 - TOL) - TOL * beta * r * r);
                assert!(norm(&dg) <= beta * norm(&dx) * (1.0 + TOL) + TOL * beta * r);
            }
        }
    }
}
