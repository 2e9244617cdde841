//! The upper-bound lines `naysayer bounds` prints, each recomputed here from its formula
//! written out in the test (with its published source beside it) and checked at points
//! worked out by hand. That each named method stays within its line over a grid of classes
//! and every adversary that plays them is in `tests/upper_bounds_methods.rs` (feasibility,
//! first-order, lattice) and `tests/upper_bounds_large_scale.rs` (the gap curves).
//!
//! [`every_upper_line_is_held_to_account`] lists every upper line with the tests that
//! check it, so a new line without tests fails here.

use std::collections::BTreeSet;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, ToPrimitive, Zero};

use naysayer::bounds::large_scale::gap_bounds;
use naysayer::bounds::{
    centerpoint_upper_bound, centre_of_gravity_upper_bound, ellipsoid_upper_bound,
    feasibility_bounds, first_order_bounds, first_order_centre_of_gravity_upper_bound,
    lattice_bounds, Side, Status,
};
use naysayer::class::{
    FeasibilityClass, FirstOrderClass, LargeScaleClass, LatticeClass, LipschitzNorm, Promise,
};
use naysayer::exact::f64_to_rational;

/// Every upper line `bounds` prints: (family, label, value test, method test). The tests
/// named are in this file and in the two files named in the module doc.
const UPPER_LINES: &[(&str, &str, &str, &str)] = &[
    (
        "feasibility",
        "centre of gravity",
        "feasibility_centre_of_gravity_line_follows_grunbaum",
        "centroid_stays_within_its_line",
    ),
    (
        "feasibility",
        "ellipsoid",
        "ellipsoid_line_follows_the_volume_ratio",
        "ellipsoid_stays_within_its_line",
    ),
    (
        "feasibility",
        "sampled centre of gravity",
        "sampled_centre_of_gravity_is_a_guide_without_a_number",
        "none: a guide has no number to stay within",
    ),
    (
        "first-order",
        "centre of gravity",
        "first_order_centre_of_gravity_line_follows_grunbaum_and_bubeck",
        "exact_centre_of_gravity_stays_within_its_first_order_line",
    ),
    (
        "first-order",
        "subgradient method",
        "subgradient_line_is_the_exact_ceiling",
        "subgradient_stays_within_its_line",
    ),
    (
        "lattice",
        "integer centerpoint method",
        "integer_centerpoint_line_follows_oertel_wagner_weismantel",
        "lattice_centerpoint_stays_within_its_line",
    ),
    (
        "lattice",
        "enumeration",
        "enumeration_line_counts_the_lattice_points",
        "enumerate_stays_within_its_line",
    ),
    (
        "lattice",
        "mixed-integer centerpoint method",
        "mixed_centerpoint_line_follows_basu_oertel",
        "mixed_centerpoint_stays_within_its_line",
    ),
    (
        "large-scale",
        "unconstrained-subgradient, upper: M R / sqrt(T)",
        "large_scale_upper_curves_follow_their_sources",
        "unconstrained_subgradient_stays_within_its_curve",
    ),
    (
        "large-scale",
        "accelerated, upper: 2 beta R^2 / (T+1)^2",
        "large_scale_upper_curves_follow_their_sources",
        "smooth_methods_stay_within_their_curves",
    ),
    (
        "large-scale",
        "gradient, upper: beta R^2 / (2T)",
        "large_scale_upper_curves_follow_their_sources",
        "smooth_methods_stay_within_their_curves",
    ),
    (
        "large-scale",
        "accelerated, upper: (1 - sqrt(mu/beta))^T (beta + mu) R^2 / 2",
        "large_scale_upper_curves_follow_their_sources",
        "strongly_convex_methods_stay_within_their_curves",
    ),
    (
        "large-scale",
        "gradient, upper: (1 - mu/beta)^T beta R^2 / 2",
        "large_scale_upper_curves_follow_their_sources",
        "strongly_convex_methods_stay_within_their_curves",
    ),
];

#[test]
fn every_upper_line_is_held_to_account() {
    let mut printed = BTreeSet::new();
    for d in [1, 2, 5] {
        for promise in [Promise::MayBeEmpty, Promise::Nonempty] {
            let class = FeasibilityClass::new(d, 1.0, 1e-3, promise).unwrap();
            for b in feasibility_bounds(&class) {
                if b.side == Side::Upper {
                    printed.insert(("feasibility", b.label.to_string()));
                }
            }
        }
        for norm in [LipschitzNorm::L1, LipschitzNorm::L2, LipschitzNorm::Linf] {
            let class = FirstOrderClass::new(d, 1.0, 1e-2, 1.0, norm).unwrap();
            for b in first_order_bounds(&class) {
                if b.side == Side::Upper {
                    printed.insert(("first-order", b.label.to_string()));
                }
            }
        }
    }
    for class in [
        LatticeClass::integer(2, 0, 1).unwrap(),
        LatticeClass::integer(3, -2, 4).unwrap(),
        LatticeClass::mixed(2, 0, 1, 1, 1.0, 0.01).unwrap(),
        LatticeClass::mixed(1, -1, 3, 3, 2.0, 0.1).unwrap(),
    ] {
        for b in lattice_bounds(&class) {
            if b.side == Side::Upper {
                printed.insert(("lattice", b.label.to_string()));
            }
        }
    }
    for class in [
        LargeScaleClass::nonsmooth(50, 1.0, 1.0).unwrap(),
        LargeScaleClass::smooth(50, 1.0, 1.0).unwrap(),
        LargeScaleClass::strongly_convex(50, 10.0, 1.0, 1.0).unwrap(),
    ] {
        for b in gap_bounds(&class, 7) {
            if b.side == Side::Upper {
                printed.insert(("large-scale", b.label.to_string()));
            }
        }
    }
    let listed: BTreeSet<(&str, String)> = UPPER_LINES
        .iter()
        .map(|(family, label, _, _)| (*family, label.to_string()))
        .collect();
    assert_eq!(
        printed, listed,
        "every upper line printed by `bounds` needs a value test and a method test"
    );
    // The tests named exist.
    let sources = [
        include_str!("upper_bounds.rs"),
        include_str!("upper_bounds_methods.rs"),
        include_str!("upper_bounds_large_scale.rs"),
    ];
    for (_, label, value_test, method_test) in UPPER_LINES {
        for name in [value_test, method_test] {
            if name.starts_with("none:") {
                continue;
            }
            let found = sources
                .iter()
                .any(|s| s.contains(&format!("#[test]\nfn {name}()")));
            assert!(found, "{label}: no test {name}");
        }
    }
}

// ---------------------------------------------------------------------------------------
// Helpers: the formulas' ingredients, written independently of src/bounds.
// ---------------------------------------------------------------------------------------

/// kappa_d, the volume of the unit ball in R^d, by the recurrence kappa_0 = 1, kappa_1 = 2,
/// kappa_d = kappa_(d-2) 2 pi / d (textbook; from memory).
fn unit_ball_volume(d: usize) -> f64 {
    let mut kappa = if d % 2 == 0 { 1.0 } else { 2.0 };
    let mut j = 2 + d % 2;
    while j <= d {
        kappa *= 2.0 * std::f64::consts::PI / j as f64;
        j += 2;
    }
    kappa
}

/// The least N >= 0 with `start + N * step < target` (all logarithms; step < 0).
fn least_n_below(start: f64, step: f64, target: f64) -> u64 {
    assert!(step < 0.0);
    let mut n = 0u64;
    while start + n as f64 * step >= target {
        n += 1;
    }
    n
}

/// k = max{j >= 0 : R 2^-j > rho} (docs/theory.md §1.1), by halving R exactly.
fn halvings(half_width: f64, rho: f64) -> u64 {
    let mut k = 0;
    let mut side = half_width;
    while side / 2.0 > rho {
        side /= 2.0;
        k += 1;
    }
    k
}

fn feasibility(d: usize, half_width: f64, rho: f64) -> FeasibilityClass {
    FeasibilityClass::new(d, half_width, rho, Promise::MayBeEmpty).unwrap()
}

fn first_order(
    d: usize,
    half_width: f64,
    eps: f64,
    lipschitz: f64,
    norm: LipschitzNorm,
) -> FirstOrderClass {
    FirstOrderClass::new(d, half_width, eps, lipschitz, norm).unwrap()
}

/// The grid of feasibility classes the formula tests sweep: R over six orders of magnitude,
/// R/rho from 3 to 10^7 (no ratio a power of two, so no point sits on a boundary of the
/// "least N" where rounding could decide).
fn feasibility_grid() -> Vec<(usize, f64, f64)> {
    let mut grid = Vec::new();
    for d in [1usize, 2, 3, 4, 6, 9, 12, 20] {
        for half_width in [1e-3, 0.7, 1.0, 37.0, 1e3] {
            for ratio in [3.0, 10.0, 1e3, 12345.0, 1e7] {
                grid.push((d, half_width, half_width / ratio));
            }
        }
    }
    grid
}

// ---------------------------------------------------------------------------------------
// Feasibility lines.
// ---------------------------------------------------------------------------------------

#[test]
fn feasibility_centre_of_gravity_line_follows_grunbaum() {
    // Grunbaum, Pacific J. Math. 10 (1960): a hyperplane through the centroid of a convex
    // body in R^d leaves at least (d/(d+1))^d of its volume on each side, so each central
    // cut keeps at most 1 - (d/(d+1))^d. Starting from (2R)^d, the model holds no rho-ball
    // (volume kappa_d rho^d) once (2R)^d (1 - (d/(d+1))^d)^N < kappa_d rho^d.
    for (d, r, rho) in feasibility_grid() {
        let df = d as f64;
        let kept = 1.0 - (df / (df + 1.0)).powi(d as i32);
        let expected = least_n_below(
            df * (2.0 * r).ln(),
            kept.ln(),
            unit_ball_volume(d).ln() + df * rho.ln(),
        );
        assert_eq!(
            centre_of_gravity_upper_bound(&feasibility(d, r, rho)),
            expected,
            "d = {d}, R = {r}, rho = {rho}"
        );
    }
    // By hand. d = 1: kept 1/2, kappa_1 = 2, so the least N with 2^N > R/rho:
    // R/rho = 1000 -> 10 (2^10 = 1024), R/rho = 300 -> 9 (2^9 = 512, 2^8 = 256), and
    // R/rho = 64 -> 7 (2^6 = 64 is not above 64: the boundary, decided right).
    assert_eq!(
        centre_of_gravity_upper_bound(&feasibility(1, 1.0, 1e-3)),
        10
    );
    assert_eq!(centre_of_gravity_upper_bound(&feasibility(1, 3.0, 0.01)), 9);
    assert_eq!(
        centre_of_gravity_upper_bound(&feasibility(1, 1.0, 1.0 / 64.0)),
        7
    );
    // d = 2: kept 5/9, kappa_2 = pi: (9/5)^N > 4 (R/rho)^2 / pi; R/rho = 10: 127.3, and
    // 1.8^8 = 110.2, 1.8^9 = 198.4 -> 9.
    assert_eq!(centre_of_gravity_upper_bound(&feasibility(2, 1.0, 0.1)), 9);
    // d = 3: kept 37/64, kappa_3 = 4 pi / 3: (64/37)^N > 6 (R/rho)^3 / pi; R/rho = 10:
    // ln(1909.9) / ln(1.7297) = 7.555 / 0.5480 = 13.79 -> 14.
    assert_eq!(centre_of_gravity_upper_bound(&feasibility(3, 1.0, 0.1)), 14);
}

#[test]
fn ellipsoid_line_follows_the_volume_ratio() {
    // Bertsimas & Tsitsiklis, Introduction to Linear Optimization (1997), ch. 8 (Khachiyan
    // 1979): a central cut multiplies the ellipsoid's volume by
    // r_d = (d/(d+1)) (d^2/(d^2-1))^((d-1)/2). From the ball of radius R sqrt(d), which
    // holds [-R, R]^d, the ellipsoid holds no rho-ball once (R sqrt d)^d r_d^N < rho^d.
    // In d = 1 the method is bisection, and its interval of length 2R 2^-N holds no
    // rho-ball once R 2^-N < rho (common practice, no source).
    for (d, r, rho) in feasibility_grid() {
        let class = feasibility(d, r, rho);
        let expected = if d == 1 {
            least_n_below(r.ln(), -std::f64::consts::LN_2, rho.ln())
        } else {
            let df = d as f64;
            let ratio = (df / (df + 1.0)) * (df * df / (df * df - 1.0)).powf((df - 1.0) / 2.0);
            least_n_below(df * (r * df.sqrt()).ln(), ratio.ln(), df * rho.ln())
        };
        assert_eq!(
            ellipsoid_upper_bound(&class),
            expected,
            "d = {d}, R = {r}, rho = {rho}"
        );
    }
    // By hand. d = 2: r_2 = (2/3) sqrt(4/3) = 0.76980, (R sqrt 2 / rho)^2 = 200 at
    // R/rho = 10: N > ln 200 / -ln r_2 = 5.2983 / 0.26162 = 20.25 -> 21.
    assert_eq!(ellipsoid_upper_bound(&feasibility(2, 1.0, 0.1)), 21);
    // d = 10, R/rho = 10^6: ln r_10 = -ln 1.1 + 4.5 ln(100/99) = -0.050078, and
    // 10 (ln 10^6 + ln sqrt 10) = 149.67: 149.67 / 0.050078 = 2988.6 -> 2989 (the count
    // the method uses against the halving adversary, tests/halving.rs).
    assert_eq!(ellipsoid_upper_bound(&feasibility(10, 1.0, 1e-6)), 2989);
    // d = 1: R/rho = 1000, k = 9 (2^-9 > 1/1000 > 2^-10), bisection needs 10 = k + 1.
    assert_eq!(ellipsoid_upper_bound(&feasibility(1, 1.0, 1e-3)), 10);
    // d = 1, R/rho = 64: k = 5 (R 2^-6 = rho is not above rho), and R 2^-N < rho first at
    // N = 7 = k + 2: exact bisection would stop at length exactly 2 rho after 6, but the
    // f64 midpoints of a non-dyadic R are not exact and the halving adversary keeps the
    // longer part (tests/upper_bounds_methods.rs plays it: 7 queries at R = 10^-3).
    assert_eq!(halvings(1e-3, 1e-3 / 64.0), 5);
    assert_eq!(ellipsoid_upper_bound(&feasibility(1, 1e-3, 1e-3 / 64.0)), 7);
    assert_eq!(ellipsoid_upper_bound(&feasibility(1, 1.0, 1.0 / 64.0)), 7);
}

#[test]
fn sampled_centre_of_gravity_is_a_guide_without_a_number() {
    // Bertsimas & Vempala, J. ACM 51(4) (2004): O(d log(R/rho)) with high probability,
    // constant unspecified. A guide carries no number, so no method is held to it.
    let class = feasibility(3, 1.0, 1e-3);
    let line = feasibility_bounds(&class)
        .into_iter()
        .find(|b| b.label == "sampled centre of gravity")
        .unwrap();
    assert_eq!(line.side, Side::Upper);
    assert_eq!(line.status, Status::Guide);
    assert_eq!(line.queries, None);
    assert!(line.source.contains("Bertsimas & Vempala"));
}

// ---------------------------------------------------------------------------------------
// First-order lines.
// ---------------------------------------------------------------------------------------

/// The l2 Lipschitz constant of an L-Lipschitz class: L for the l2 and l_inf classes
/// (subgradients bounded in l2, or in l1 >= l2), L sqrt(d) for the l1 class
/// (subgradients bounded in l_inf only).
fn l2_lipschitz(class: &FirstOrderClass) -> f64 {
    match class.norm {
        LipschitzNorm::L1 => class.lipschitz * (class.dim as f64).sqrt(),
        LipschitzNorm::L2 | LipschitzNorm::Linf => class.lipschitz,
    }
}

fn first_order_grid() -> Vec<FirstOrderClass> {
    let mut grid = Vec::new();
    for d in [1usize, 2, 3, 5, 8] {
        for (r, lipschitz) in [(1.0, 1.0), (0.01, 30.0), (250.0, 0.5)] {
            for ratio in [1.5, 7.0, 100.0, 3e4] {
                for norm in [LipschitzNorm::L1, LipschitzNorm::L2, LipschitzNorm::Linf] {
                    grid.push(first_order(d, r, lipschitz * r / ratio, lipschitz, norm));
                }
            }
        }
    }
    grid
}

#[test]
fn first_order_centre_of_gravity_line_follows_grunbaum_and_bubeck() {
    // Grunbaum (1960): a cut through the centroid keeps at most 1 - (d/(d+1))^d <= 1 - 1/e
    // of the volume. Bubeck, Convex Optimization: Algorithms and Complexity (2015),
    // Thm 2.1: once vol < (eps / (L' D))^d vol(X), D the l2 diameter 2 R sqrt(d) of X and
    // L' the l2 Lipschitz constant, the best query is eps-optimal (the scaled copy
    // x* + (eps / (L' D)) (X - x*) cannot have been cut away entirely). So the least N
    // with (1 - 1/e)^N <= (eps / (2 L' R sqrt d))^d (docs/theory.md §2.5).
    for class in first_order_grid() {
        let d = class.dim as f64;
        let shrink = (1.0 - (-1.0f64).exp()).ln();
        let target =
            d * (class.eps / (2.0 * l2_lipschitz(&class) * class.half_width * d.sqrt())).ln();
        let expected = least_n_below(0.0, shrink, target).max(1);
        // "<=" in the theorem, "<" in least_n_below: the two differ only on a boundary,
        // which this grid avoids.
        assert_eq!(
            first_order_centre_of_gravity_upper_bound(&class),
            expected,
            "{class:?}"
        );
    }
    // By hand (-ln(1 - 1/e) = 0.458675). d = 1, L = R = 1, eps = 0.01 (l2):
    // ln 200 / 0.458675 = 5.2983 / 0.458675 = 11.55 -> 12.
    let class = first_order(1, 1.0, 0.01, 1.0, LipschitzNorm::L2);
    assert_eq!(first_order_centre_of_gravity_upper_bound(&class), 12);
    // d = 2, L = 2, R = 1, eps = 0.1 (l2): 2 ln(4 sqrt 2 / 0.1) = 2 ln 56.569 = 8.0709,
    // / 0.458675 = 17.60 -> 18.
    let class = first_order(2, 1.0, 0.1, 2.0, LipschitzNorm::L2);
    assert_eq!(first_order_centre_of_gravity_upper_bound(&class), 18);
    // The same with l_inf: subgradients bounded in l1, hence in l2 by the same L -> 18.
    let class = first_order(2, 1.0, 0.1, 2.0, LipschitzNorm::Linf);
    assert_eq!(first_order_centre_of_gravity_upper_bound(&class), 18);
    // With l1 the subgradients are bounded in l_inf only, so L' = L sqrt(2):
    // 2 ln(4 * 2 / 0.1) = 2 ln 80 = 8.7640, / 0.458675 = 19.11 -> 20.
    let class = first_order(2, 1.0, 0.1, 2.0, LipschitzNorm::L1);
    assert_eq!(first_order_centre_of_gravity_upper_bound(&class), 20);
}

/// ceil(x) for a nonnegative rational.
fn ceil(x: &BigRational) -> BigInt {
    let floor = x.numer() / x.denom();
    if BigRational::from_integer(floor.clone()) == *x {
        floor
    } else {
        floor + BigInt::one()
    }
}

/// The subgradient line of the class, as printed by `bounds`.
fn printed_subgradient_line(class: &FirstOrderClass) -> u64 {
    first_order_bounds(class)
        .into_iter()
        .find(|b| b.label == "subgradient method")
        .and_then(|b| b.queries)
        .unwrap()
}

#[test]
fn subgradient_line_is_the_exact_ceiling() {
    // Nesterov, Introductory Lectures on Convex Optimization (2004), sec. 3.2.3 (from
    // memory): the projected subgradient method with step D / (L' sqrt(N)) over N queries
    // has min_k f(x_k) - f* <= L' D / sqrt(N), D = R sqrt(d) >= ||x_0 - x*||_2. So
    // N = ceil((L' D / eps)^2) = ceil(L'^2 R^2 d / eps^2), with L'^2 = L^2 (l2, l_inf) or
    // L^2 d (l1): a rational number of the f64 inputs, so its ceiling is computed exactly.
    for class in first_order_grid() {
        let d = BigRational::from_integer(BigInt::from(class.dim));
        let l = f64_to_rational(class.lipschitz);
        let r = f64_to_rational(class.half_width);
        let eps = f64_to_rational(class.eps);
        let mut squared = &l * &l * &r * &r * &d / (&eps * &eps);
        if class.norm == LipschitzNorm::L1 {
            squared *= &d;
        }
        assert!(!squared.is_zero());
        let expected = ceil(&squared).to_u64().unwrap();
        assert_eq!(printed_subgradient_line(&class), expected, "{class:?}");
    }
    // By hand. d = 2, L = R = 1, eps = 0.1: (sqrt 2 / 0.1)^2 = 200 (the double 0.1 is a
    // hair above 1/10, so the exact value is a hair below 200) -> 200.
    assert_eq!(
        printed_subgradient_line(&first_order(2, 1.0, 0.1, 1.0, LipschitzNorm::L2)),
        200
    );
    // d = 2, eps = 0.2: 2 / 0.04 = 50 -> 50.
    assert_eq!(
        printed_subgradient_line(&first_order(2, 1.0, 0.2, 1.0, LipschitzNorm::L2)),
        50
    );
    // d = 1, eps = 0.3: 1 / 0.09 = 11.1 -> 12.
    assert_eq!(
        printed_subgradient_line(&first_order(1, 1.0, 0.3, 1.0, LipschitzNorm::L2)),
        12
    );
    // d = 3, L = 2, R = 0.5, eps = 0.07: 3 / 0.0049 = 612.2 -> 613; l_inf the same;
    // l1: 9 / 0.0049 = 1836.7 -> 1837.
    for (norm, n) in [
        (LipschitzNorm::L2, 613),
        (LipschitzNorm::Linf, 613),
        (LipschitzNorm::L1, 1837),
    ] {
        assert_eq!(
            printed_subgradient_line(&first_order(3, 0.5, 0.07, 2.0, norm)),
            n
        );
    }
}

// ---------------------------------------------------------------------------------------
// Lattice lines.
// ---------------------------------------------------------------------------------------

#[test]
fn integer_centerpoint_line_follows_oertel_wagner_weismantel() {
    // Oertel, Wagner & Weismantel, Oper. Res. Lett. 42 (2014): the lattice points of a
    // convex set hold a point of depth at least |S| / 2^n, so each cut at it keeps at most
    // (1 - 2^-n) of the alive points; the alive set is empty after the least N with
    // |S| (1 - 2^-n)^N < 1, i.e. |S| (2^n - 1)^N < 2^(n N): decided here in integers.
    for n in 1..=4usize {
        for (lower, upper) in [(0i64, 1i64), (0, 2), (-3, 4), (0, 15), (-20, 40)] {
            let class = LatticeClass::integer(n, lower, upper).unwrap();
            if class.lattice_count() > 1 << 24 {
                continue;
            }
            let size = BigInt::from(class.lattice_count());
            let base = BigInt::from((1u64 << n) - 1);
            let full = BigInt::from(1u64 << n);
            let mut steps = 0u32;
            while &size * base.pow(steps) >= full.pow(steps) {
                steps += 1;
            }
            assert_eq!(
                centerpoint_upper_bound(&class),
                u64::from(steps),
                "n = {n}, box {lower}..{upper}"
            );
        }
    }
    // By hand. {0,1}^2: |S| = 4, (3/4)^4 = 0.316 >= 1/4 > (3/4)^5 = 0.237 -> 5.
    assert_eq!(
        centerpoint_upper_bound(&LatticeClass::integer(2, 0, 1).unwrap()),
        5
    );
    // {0..7}: |S| = 8, bisection: 2^3 = 8 is not above 8, 2^4 is -> 4.
    assert_eq!(
        centerpoint_upper_bound(&LatticeClass::integer(1, 0, 7).unwrap()),
        4
    );
    // {0,1}^3: |S| = 8, (7/8)^15 = 0.135 >= 1/8 > (7/8)^16 = 0.118 -> 16.
    assert_eq!(
        centerpoint_upper_bound(&LatticeClass::integer(3, 0, 1).unwrap()),
        16
    );
}

#[test]
fn enumeration_line_counts_the_lattice_points() {
    // Querying every lattice point of the box ends any game (common practice, no source).
    for (n, lower, upper, count) in [(1, 0, 7, 8), (2, 0, 2, 9), (3, -1, 1, 27), (4, 0, 1, 16)] {
        let class = LatticeClass::integer(n, lower, upper).unwrap();
        let line = lattice_bounds(&class)
            .into_iter()
            .find(|b| b.label == "enumeration")
            .unwrap();
        assert_eq!(line.queries, Some(count), "n = {n}, {lower}..{upper}");
    }
}

#[test]
fn mixed_centerpoint_line_follows_basu_oertel() {
    // Basu & Oertel, SIAM J. Optim. 27 (2017): a mixed-integer centerpoint of depth
    // 1/(2^n (d+1)) exists, so each cut at it keeps at most 1 - 1/(2^n (d+1)) of the
    // mixed-integer measure mu, which starts at mu_0 = |S| (2R)^d; no fibre holds a
    // rho-ball once mu < kappa_d rho^d (docs/theory.md §4, derived).
    for n in 1..=3usize {
        for d in [1usize, 2, 3, 5] {
            for (r, rho) in [(1.0, 0.3), (1.0, 1e-2), (50.0, 0.07), (2e-3, 1e-7)] {
                let class = LatticeClass::mixed(n, -1, 2, d, r, rho).unwrap();
                let df = d as f64;
                let size = 4f64.powi(n as i32);
                let depth = 1.0 / (2f64.powi(n as i32) * (df + 1.0));
                let expected = least_n_below(
                    size.ln() + df * (2.0 * r).ln(),
                    (1.0 - depth).ln(),
                    unit_ball_volume(d).ln() + df * rho.ln(),
                );
                assert_eq!(
                    centerpoint_upper_bound(&class),
                    expected,
                    "n = {n}, d = {d}, R = {r}, rho = {rho}"
                );
            }
        }
    }
    // By hand. n = 1, d = 1, {0,1} x [-1, 1], rho = 0.01: mu_0 = 2 * 2 = 4, mu_min = 0.02,
    // depth 1/4: ln 200 / -ln(3/4) = 5.2983 / 0.28768 = 18.42 -> 19.
    let class = LatticeClass::mixed(1, 0, 1, 1, 1.0, 0.01).unwrap();
    assert_eq!(centerpoint_upper_bound(&class), 19);
    // n = 2, d = 2, {0,1}^2 x [-1, 1]^2, rho = 0.1: mu_0 = 4 * 4 = 16, mu_min = 0.01 pi,
    // depth 1/12: ln 509.3 / -ln(11/12) = 6.2329 / 0.087011 = 71.63 -> 72.
    let class = LatticeClass::mixed(2, 0, 1, 2, 1.0, 0.1).unwrap();
    assert_eq!(centerpoint_upper_bound(&class), 72);
}

// ---------------------------------------------------------------------------------------
// Large-scale upper curves.
// ---------------------------------------------------------------------------------------

/// The printed upper curve called `label` of `class` at T queries.
fn curve(class: &LargeScaleClass, t: u64, label: &str) -> f64 {
    gap_bounds(class, t)
        .into_iter()
        .find(|b| b.side == Side::Upper && b.label == label)
        .unwrap_or_else(|| panic!("no upper curve {label:?}"))
        .gap
        .unwrap()
}

fn close(got: f64, expected: f64, what: &str) {
    assert!(
        (got - expected).abs() <= 1e-12 * expected.abs(),
        "{what}: {got:e} vs {expected:e}"
    );
}

#[test]
fn large_scale_upper_curves_follow_their_sources() {
    for t in [1u64, 2, 3, 10, 99, 1000] {
        let tf = t as f64;
        for (a, r) in [(1.0, 1.0), (2.0, 3.0), (1e-3, 40.0), (700.0, 0.02)] {
            // Nesterov 2004, sec. 3.2.3 (from memory; tight by Drori & Teboulle, Math.
            // Program. 160, 2016): the subgradient method with step R / (M sqrt(T)) has
            // min_k f(x_k) - f* <= M R / sqrt(T) after T queries.
            let class = LargeScaleClass::nonsmooth(10, a, r).unwrap();
            close(
                curve(&class, t, "unconstrained-subgradient, upper: M R / sqrt(T)"),
                a * r / tf.sqrt(),
                "nonsmooth",
            );
            // Beck & Teboulle, SIAM J. Imaging Sci. 2 (2009), Thm 4.4 (FISTA, from
            // memory): f(x_T) - f* <= 2 beta R^2 / (T+1)^2; their Thm 3.1 (gradient with
            // step 1/beta): f(x_T) - f* <= beta R^2 / (2T).
            let class = LargeScaleClass::smooth(10, a, r).unwrap();
            close(
                curve(&class, t, "accelerated, upper: 2 beta R^2 / (T+1)^2"),
                2.0 * a * r * r / ((tf + 1.0) * (tf + 1.0)),
                "accelerated",
            );
            close(
                curve(&class, t, "gradient, upper: beta R^2 / (2T)"),
                a * r * r / (2.0 * tf),
                "gradient",
            );
            // Strongly convex, Q = beta/mu = 4 and 1000. Nesterov 2004, Thm 2.2.3, scheme
            // (2.2.11) (from memory): f(x_T) - f* <= (1 - sqrt(mu/beta))^T (f(x_0) - f* +
            // (mu/2) R^2) <= (1 - sqrt(mu/beta))^T (beta + mu) R^2 / 2. Gradient with step
            // 1/beta (common practice, no source pinned): (1 - mu/beta)^T beta R^2 / 2.
            for q in [4.0, 1000.0] {
                let (beta, mu) = (a, a / q);
                let class = LargeScaleClass::strongly_convex(10, beta, mu, r).unwrap();
                close(
                    curve(
                        &class,
                        t,
                        "accelerated, upper: (1 - sqrt(mu/beta))^T (beta + mu) R^2 / 2",
                    ),
                    (1.0 - (mu / beta).sqrt()).powi(t as i32) * (beta + mu) * r * r / 2.0,
                    "strongly convex accelerated",
                );
                close(
                    curve(&class, t, "gradient, upper: (1 - mu/beta)^T beta R^2 / 2"),
                    (1.0 - mu / beta).powi(t as i32) * beta * r * r / 2.0,
                    "strongly convex gradient",
                );
            }
        }
    }
    // By hand. M = 2, R = 3, T = 9: 6 / 3 = 2.
    let class = LargeScaleClass::nonsmooth(10, 2.0, 3.0).unwrap();
    close(
        curve(&class, 9, "unconstrained-subgradient, upper: M R / sqrt(T)"),
        2.0,
        "M R / sqrt T",
    );
    // beta = 4, R = 1.5, T = 2: accelerated 2 * 4 * 2.25 / 9 = 2; gradient 9 / 4 = 2.25.
    let class = LargeScaleClass::smooth(10, 4.0, 1.5).unwrap();
    close(
        curve(&class, 2, "accelerated, upper: 2 beta R^2 / (T+1)^2"),
        2.0,
        "FISTA",
    );
    close(
        curve(&class, 2, "gradient, upper: beta R^2 / (2T)"),
        2.25,
        "gradient",
    );
    // beta = 4, mu = 1, R = 2, T = 3: accelerated (1/2)^3 * 5 * 4 / 2 = 1.25; gradient
    // (3/4)^3 * 4 * 4 / 2 = 3.375.
    let class = LargeScaleClass::strongly_convex(10, 4.0, 1.0, 2.0).unwrap();
    close(
        curve(
            &class,
            3,
            "accelerated, upper: (1 - sqrt(mu/beta))^T (beta + mu) R^2 / 2",
        ),
        1.25,
        "accelerated, strongly convex",
    );
    close(
        curve(&class, 3, "gradient, upper: (1 - mu/beta)^T beta R^2 / 2"),
        3.375,
        "gradient, strongly convex",
    );
}
