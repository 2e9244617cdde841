//! The ellipsoid method's volume ratio against its published value.

use nalgebra::DMatrix;
use naysayer::adversary::{Adversary, Halving};
use naysayer::bounds::ellipsoid_log_volume_ratio as log_volume_ratio;
use naysayer::class::{FeasibilityClass, Promise};
use naysayer::method::ellipsoid::Ellipsoid;
use naysayer::method::Method;
use naysayer::oracle::Step;

/// (1/2) ln det P of a column-major shape matrix, by Cholesky.
fn half_log_det(shape: &[f64], d: usize) -> f64 {
    let p = DMatrix::from_column_slice(d, d, shape);
    let chol = p.cholesky().expect("shape matrix stays positive definite");
    chol.l().diagonal().iter().map(|x| x.ln()).sum()
}

#[test]
fn each_central_cut_shrinks_the_volume_by_the_published_ratio() {
    // vol(E') / vol(E) = (d/(d+1)) (d^2/(d^2-1))^((d-1)/2) for a central cut
    // (Bertsimas & Tsitsiklis, Introduction to Linear Optimization, 1997, ch. 8; Bubeck
    // 2015, Lemma 2.3). Measured here on the running method, from ln det P.
    for d in [2usize, 3, 5, 10, 40] {
        let class = FeasibilityClass::new(d, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
        let mut method = Ellipsoid::new(&class);
        let mut adversary = Halving::new(&class);
        let mut query = vec![0.0; d];
        for step in 0..(5 * d) {
            let before = half_log_det(method.shape(), d);
            assert_eq!(method.next(&mut query).unwrap(), Step::Query);
            let answer = adversary.answer(&query);
            method.observe(&query, &answer).unwrap();
            let after = half_log_det(method.shape(), d);
            let measured = after - before;
            let expected = log_volume_ratio(d);
            assert!(
                (measured - expected).abs() < 1e-9 * expected.abs().max(1.0),
                "d = {d}, step {step}: ln ratio {measured} vs {expected}"
            );
        }
    }
}

#[test]
fn the_formula_for_the_ratio_matches_its_definition() {
    // r_d = (d/(d+1)) (d^2/(d^2-1))^((d-1)/2), evaluated directly for small d where
    // there is no cancellation (Bertsimas & Tsitsiklis 1997, ch. 8).
    for d in 2..=50usize {
        let df = d as f64;
        let direct = (df / (df + 1.0)) * (df * df / (df * df - 1.0)).powf((df - 1.0) / 2.0);
        assert!((log_volume_ratio(d) - direct.ln()).abs() < 1e-13, "d = {d}");
    }
}

#[test]
fn the_ratio_is_below_exp_of_minus_one_over_two_d_plus_one() {
    // r_d < exp(-1/(2(d+1))) (Bertsimas & Tsitsiklis 1997, ch. 8), compared in logarithms
    // computed with ln_1p so that the comparison stays reliable for large d
    // (docs/theory.md §1.2). The sharper r_d < exp(-1/(2d)) (Bubeck 2015, Lemma 2.3) has a
    // margin of order 1/d^3, still far above rounding for d up to 2000.
    for d in (2..=2000usize).chain([10_000, 100_000, 1_000_000]) {
        let ln_r = log_volume_ratio(d);
        let df = d as f64;
        assert!(ln_r < -1.0 / (2.0 * (df + 1.0)), "d = {d}: {ln_r}");
        if d <= 2000 {
            assert!(ln_r < -1.0 / (2.0 * df), "d = {d}: {ln_r}");
        }
    }
}
