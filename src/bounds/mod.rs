//! Lower and upper bounds on the number of queries, each with what it assumes and its
//! source.
//!
//! Notation: X = [-R, R]^d, accuracy rho (radius of a Euclidean ball inside K when K is
//! nonempty), separation oracle with strict cuts (docs/theory.md §0); first-order: accuracy
//! eps, Lipschitz constant L. A lower bound holds run by run (the adversary answers
//! adaptively): the box-halving bound for every method, deterministic or randomized; the
//! slab-funnel bound (docs/theory.md §2.4) is stated for deterministic methods. An upper bound is what one named method is proven to need at
//! most on the whole class. A guide is a published order of growth whose constant is
//! not verified here; it is printed without a number.

pub mod large_scale;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::ToPrimitive;
use serde::Serialize;

use crate::class::LatticeClass;
use crate::class::{FeasibilityClass, FirstOrderClass, LipschitzNorm, Promise};

/// Whether a bound is a lower or an upper bound.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Side {
    /// No method needs fewer queries.
    Lower,
    /// The named method never needs more.
    Upper,
}

/// How much a bound's number is worth.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Status {
    /// Follows from a published theorem plus a few derived lines (checked by tests).
    Proven,
    /// An order of growth only; the constant is unspecified.
    Guide,
    /// Our construction: the count is forced in every run the verifier certified, with
    /// no general proof (docs/theory.md §4 marks it "ours").
    Construction,
}

/// One bound line.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Bound {
    /// Short label for tables and charts.
    pub label: &'static str,
    /// Lower or upper.
    pub side: Side,
    /// The number of queries, when the bound has one.
    pub queries: Option<u64>,
    /// The formula, in words a reader can check.
    pub formula: &'static str,
    /// Proven or guide.
    pub status: Status,
    /// Published source.
    pub source: &'static str,
}

/// The box-halving lower bound (docs/theory.md §1.1): every method needs d*k + 1 queries when
/// K may be empty and d*k under the nonempty promise, k = max{j >= 0 : R 2^-j > rho}.
pub fn halving_lower_bound(class: &FeasibilityClass) -> u64 {
    let dk = class.dim as u64 * u64::from(class.halvings());
    match class.promise {
        Promise::MayBeEmpty => dk + 1,
        Promise::Nonempty => dk,
    }
}

/// ln of the volume of the unit Euclidean ball in R^d, kappa_d = pi^(d/2) / Gamma(d/2 + 1),
/// with Gamma at integers and half-integers computed as exact products of logarithms.
pub fn ln_unit_ball_volume(d: usize) -> f64 {
    let ln_pi = std::f64::consts::PI.ln();
    let ln_gamma_half_d_plus_one = if d % 2 == 0 {
        // Gamma(m + 1) = m!, m = d/2.
        (1..=d / 2).map(|j| (j as f64).ln()).sum::<f64>()
    } else {
        // Gamma(m + 1/2) = (2m)! sqrt(pi) / (4^m m!), m = (d + 1)/2.
        let m = d.div_ceil(2);
        let ln_fact = |n: usize| (1..=n).map(|j| (j as f64).ln()).sum::<f64>();
        ln_fact(2 * m) + 0.5 * ln_pi - (m as f64) * 4f64.ln() - ln_fact(m)
    };
    0.5 * d as f64 * ln_pi - ln_gamma_half_d_plus_one
}

/// Queries the exact centre-of-gravity method needs at most: the least N with
/// (2R)^d (1 - (d/(d+1))^d)^N < kappa_d rho^d, since each central cut keeps at most
/// 1 - (d/(d+1))^d of the volume (Grunbaum 1960) and a rho-ball has volume kappa_d rho^d.
pub fn centre_of_gravity_upper_bound(class: &FeasibilityClass) -> u64 {
    let d = class.dim as f64;
    let kept = -(-(d * (-(1.0 / (d + 1.0))).ln_1p()).exp()).ln_1p();
    let numerator = d * (2.0 * class.half_width / class.rho).ln() - ln_unit_ball_volume(class.dim);
    (numerator / kept).floor().max(0.0) as u64 + 1
}

/// Queries the central-cut ellipsoid method needs at most, starting from the ball of
/// radius R sqrt(d): the least N with (R sqrt(d))^d r_d^N < rho^d (volume ratio r_d per
/// cut, Bertsimas & Tsitsiklis 1997 ch. 8). In d = 1 the method is bisection of
/// [-R, R], and its interval of length 2R 2^-N holds no rho-ball once R 2^-N < rho: the
/// least such N, which is k + 1 unless R/rho is a power of two, and then k + 2 (exact
/// halving would stop at length exactly 2 rho after k + 1, but f64 midpoints of a
/// non-dyadic R are not exact, and the halving adversary keeps the longer part).
pub fn ellipsoid_upper_bound(class: &FeasibilityClass) -> u64 {
    let d = class.dim;
    if d == 1 {
        let k = class.halvings();
        // R 2^-(k+1) <= rho < R 2^-k; scaling by a power of two is exact.
        let tight = class.half_width / 2f64.powi(k as i32 + 1) == class.rho;
        return u64::from(k) + if tight { 2 } else { 1 };
    }
    let df = d as f64;
    let numerator = df * ((class.half_width / class.rho).ln() + 0.5 * df.ln());
    (numerator / -ellipsoid_log_volume_ratio(d)).floor() as u64 + 1
}

/// The l2 Lipschitz constant L' of an L-Lipschitz first-order class: L for the l2 and
/// l_inf classes (subgradients bounded by L in l2, or in l1, which bounds l2), L sqrt(d)
/// for the l1 class (subgradients bounded by L in l_inf only, so up to L sqrt(d) in l2).
pub fn l2_lipschitz(class: &FirstOrderClass) -> f64 {
    match class.norm {
        LipschitzNorm::L1 => class.lipschitz * (class.dim as f64).sqrt(),
        LipschitzNorm::L2 | LipschitzNorm::Linf => class.lipschitz,
    }
}

/// Queries the exact centre-of-gravity method needs at most on convex L-Lipschitz f
/// over [-R, R]^d to reach accuracy eps: ceil(d ln(2 L' R sqrt(d) / eps) / 0.458675),
/// L' = [`l2_lipschitz`], since each cut keeps at most 1 - 1/e of the volume (Grunbaum
/// 1960) and the argument of Bubeck 2015, Thm 2.1, with l2 diameter 2R sqrt(d)
/// (docs/theory.md §2.5, derived; the sqrt(d) is an l2 artefact).
pub fn first_order_centre_of_gravity_upper_bound(class: &FirstOrderClass) -> u64 {
    let d = class.dim as f64;
    let shrink = -(-(-1f64).exp()).ln_1p(); // -ln(1 - 1/e) = 0.458675...
    let n = d * (2.0 * l2_lipschitz(class) * class.half_width * d.sqrt() / class.eps).ln() / shrink;
    n.ceil().max(1.0) as u64
}

/// Queries the projected subgradient method plans (and needs) on convex L-Lipschitz f
/// over [-R, R]^d to reach accuracy eps: N = ceil((L' D / eps)^2), D = R sqrt(d),
/// L' = [`l2_lipschitz`], since with step D / (L' sqrt(N)) the best of N queries is
/// within L' D / sqrt(N) of f* (Nesterov 2004, sec. 3.2.3, from memory). (L' D / eps)^2
/// is L^2 R^2 d / eps^2 (times d for the l1 class), a rational number of the `f64`
/// inputs, so the ceiling is exact; saturates at `u64::MAX`.
pub fn subgradient_upper_bound(class: &FirstOrderClass) -> u64 {
    let d = BigRational::from_integer(BigInt::from(class.dim));
    let l = crate::exact::f64_to_rational(class.lipschitz);
    let r = crate::exact::f64_to_rational(class.half_width);
    let eps = crate::exact::f64_to_rational(class.eps);
    let mut squared = &l * &l * &r * &r * &d / (&eps * &eps);
    if class.norm == LipschitzNorm::L1 {
        squared *= &d;
    }
    squared.ceil().to_integer().to_u64().unwrap_or(u64::MAX)
}

/// Every bound line for a feasibility class, lower bound first.
pub fn feasibility_bounds(class: &FeasibilityClass) -> Vec<Bound> {
    vec![
        Bound {
            label: "lower bound (box halving)",
            side: Side::Lower,
            queries: Some(halving_lower_bound(class)),
            formula: "d*k + 1 (d*k if K is promised nonempty), k = max{j >= 0 : R 2^-j > rho}",
            status: Status::Proven,
            source: "box-halving adversary, docs/theory.md §1.1; order Theta(d log(R/rho)): \
                     Nemirovski & Yudin 1983",
        },
        Bound {
            label: "centre of gravity",
            side: Side::Upper,
            queries: Some(centre_of_gravity_upper_bound(class)),
            formula: "least N with (2R)^d (1 - (d/(d+1))^d)^N < kappa_d rho^d",
            status: Status::Proven,
            source: "Grunbaum 1960, Pacific J. Math. 10; Levin 1965, Newman 1965",
        },
        Bound {
            label: "ellipsoid",
            side: Side::Upper,
            queries: Some(ellipsoid_upper_bound(class)),
            formula: "least N with (R sqrt(d))^d r_d^N < rho^d, \
                      r_d = (d/(d+1)) (d^2/(d^2-1))^((d-1)/2); in d = 1 bisection, the least N with \
                      R 2^-N < rho (k + 1, or k + 2 when R/rho is a power of two)",
            status: Status::Proven,
            source: "Bertsimas & Tsitsiklis 1997, ch. 8; Bubeck 2015, Lemma 2.3",
        },
        Bound {
            label: "sampled centre of gravity",
            side: Side::Upper,
            queries: None,
            formula: "O(d log(R/rho)) with high probability (constant unspecified)",
            status: Status::Guide,
            source: "Bertsimas & Vempala 2004, J. ACM 51(4)",
        },
    ]
}

/// The number of slab-funnel levels K >= 0 with beta L R r^K > eps, where beta = 1/2 and
/// r = theta (1 - beta) / 2 (docs/theory.md §2.4), decided exactly in rational arithmetic (not
/// with a floating logarithm). With theta = 4/7, r = 1/7 and the count is
/// ceil(log_7(L R / (2 eps))) for eps < L R / 2, else 0.
pub fn slab_funnel_levels(class: &FirstOrderClass, theta: &BigRational) -> u64 {
    let eps = crate::exact::f64_to_rational(class.eps);
    let r = theta / BigRational::from_integer(BigInt::from(4));
    let mut reach = crate::exact::f64_to_rational(class.lipschitz)
        * crate::exact::f64_to_rational(class.half_width)
        / BigRational::from_integer(BigInt::from(2));
    let mut levels = 0u64;
    while reach > eps {
        levels += 1;
        reach *= &r;
    }
    levels
}

/// The slab-funnel lower bound (docs/theory.md §2.4, derived with proof): every deterministic
/// method needs at least d * ceil(log_7(L R / (2 eps))) queries to minimise, to accuracy
/// eps < L R / 2, convex functions on [-R, R]^d whose subgradients have l1 norm at most L
/// (so L-Lipschitz in every l_p norm); 0 when eps >= L R / 2.
pub fn slab_funnel_lower_bound(class: &FirstOrderClass) -> u64 {
    let theta = BigRational::new(BigInt::from(4), BigInt::from(7));
    class.dim as u64 * slab_funnel_levels(class, &theta)
}

/// Every bound line for a first-order class (docs/theory.md §2, §2.4, §2.5).
pub fn first_order_bounds(class: &FirstOrderClass) -> Vec<Bound> {
    vec![
        Bound {
            label: "lower bound (slab funnel)",
            side: Side::Lower,
            queries: Some(slab_funnel_lower_bound(class)),
            formula: "d * ceil(log_7(L R / (2 eps))) for eps < L R / 2, every deterministic \
                      method; the hard instances have subgradients of l1 norm <= L, so the \
                      bound holds for the l1, l2 and l_inf classes alike",
            status: Status::Proven,
            source: "slab-funnel adversary, docs/theory.md §2.4 (derived, with proof)",
        },
        Bound {
            label: "lower bound (information complexity)",
            side: Side::Lower,
            queries: None,
            formula: "Theta(d log(L R / eps)) for d large enough relative to log(LR/eps); \
                      constant unspecified (measured runs are certified per game)",
            status: Status::Guide,
            source: "Nemirovski & Yudin 1983; randomized methods: Braun, Guzman & Pokutta, \
                     IEEE Trans. Inf. Theory 63(7), 2017",
        },
        Bound {
            label: "centre of gravity",
            side: Side::Upper,
            queries: Some(first_order_centre_of_gravity_upper_bound(class)),
            formula: "ceil(d ln(2 L' R sqrt(d) / eps) / 0.458675), L' the l2 Lipschitz \
                      constant: L for the l2 and l_inf classes, L sqrt(d) for the l1 class",
            status: Status::Proven,
            source: "Grunbaum 1960; Bubeck 2015, Thm 2.1 (derived, docs/theory.md §2.5)",
        },
        Bound {
            label: "subgradient method",
            side: Side::Upper,
            queries: Some(subgradient_upper_bound(class)),
            formula: "N = ceil((L' D / eps)^2), D = R sqrt(d), step D / (L' sqrt(N)), L' the \
                      l2 Lipschitz constant: L for the l2 and l_inf classes, L sqrt(d) for the \
                      l1 class",
            status: Status::Proven,
            source: "Nesterov 2004, sec. 3.2.3 (from memory)",
        },
    ]
}

/// |S| for the lattice points S of a pure integer class's box, as f64 (exact up to 2^53).
fn lattice_size(class: &LatticeClass) -> f64 {
    class
        .lower
        .iter()
        .zip(&class.upper)
        .map(|(l, u)| (u - l + 1) as f64)
        .product()
}

/// Every method needs at least floor(log2 |S|) + 1 queries on a pure integer class with
/// S the lattice points of the box, when "none" is a possible answer (docs/theory.md §4,
/// derived: some strict cut through any query keeps at least (|S| - 1)/2 points of the
/// alive set). `None` for mixed-integer classes.
pub fn lattice_half_lower_bound(class: &LatticeClass) -> Option<u64> {
    if class.cont_dim != 0 {
        return None;
    }
    Some(u64::from(63 - class.lattice_count().leading_zeros()) + 1)
}

/// What the corner constructions force when the box holds {0,1}^n: 2^n (pure integer,
/// `corner`) or 2^n (d k + 1) with k as in docs/theory.md §1.1 (`mixed-corner`). Ours,
/// certified run by run; not a theorem.
pub fn corner_count(class: &LatticeClass) -> Option<u64> {
    if !class.contains_unit_cube() || class.int_dim() > 62 {
        return None;
    }
    let cube = 1u64 << class.int_dim();
    let fibre = (class.cont_dim as u64)
        .checked_mul(u64::from(class.halvings()))?
        .checked_add(1)?;
    cube.checked_mul(fibre)
}

/// Queries an exact centerpoint method needs at most. Pure integer: a lattice point of
/// the alive set with depth at least |S|/2^n exists (Oertel, Wagner & Weismantel, Oper.
/// Res. Lett. 2014: S stays all lattice points of a convex set under strict cuts), so
/// each cut removes at least that fraction: floor(ln|S| / -ln(1 - 2^-n)) + 1 queries
/// empty S. Mixed-integer (docs/theory.md §4, derived from the depth 1/(2^n (d+1)) of Basu &
/// Oertel, SIAM J. Optim. 2017): ceil(ln(mu_0 / mu_min) / -ln(1 - 1/(2^n (d+1)))) with
/// mu_0 = |S| (2R)^d and mu_min = kappa_d rho^d.
pub fn centerpoint_upper_bound(class: &LatticeClass) -> u64 {
    let n = class.int_dim() as i32;
    let size = lattice_size(class);
    if class.cont_dim == 0 {
        let shrink = -(-(0.5f64.powi(n))).ln_1p();
        return (size.ln() / shrink).floor() as u64 + 1;
    }
    let d = class.cont_dim;
    let ln_mu0 = size.ln() + d as f64 * (2.0 * class.half_width).ln();
    let ln_mu_min = ln_unit_ball_volume(d) + d as f64 * class.rho.ln();
    let depth = 0.5f64.powi(n) / (d as f64 + 1.0);
    let shrink = -(-depth).ln_1p();
    ((ln_mu0 - ln_mu_min) / shrink).ceil().max(1.0) as u64
}

/// Every bound line for an integer or mixed-integer class (docs/theory.md §4).
pub fn lattice_bounds(class: &LatticeClass) -> Vec<Bound> {
    let mut out = Vec::new();
    if let Some(lower) = lattice_half_lower_bound(class) {
        out.push(Bound {
            label: "lower bound (lattice halving)",
            side: Side::Lower,
            queries: Some(lower),
            formula: "floor(log2 |S|) + 1, S the lattice points of the box, when \"none\" \
                      is a possible answer; strict cuts",
            status: Status::Proven,
            source: "docs/theory.md §4 (derived: a strict cut through any query keeps at least \
                     (|S| - 1)/2 points)",
        });
    }
    if let Some(count) = corner_count(class) {
        out.push(Bound {
            label: if class.cont_dim == 0 {
                "corner construction"
            } else {
                "mixed-corner construction"
            },
            side: Side::Lower,
            queries: Some(count),
            formula: if class.cont_dim == 0 {
                "2^n on {0,1}^n inside the box"
            } else {
                "2^n (d k + 1), k = max{j >= 0 : R 2^-j > rho}, {0,1}^n inside the box"
            },
            status: Status::Construction,
            source: "ours (docs/theory.md §4); forced in every certified run, no general proof",
        });
    }
    if class.cont_dim > 0 {
        out.push(Bound {
            label: "lower bound (information complexity)",
            side: Side::Lower,
            queries: None,
            formula: "of order 2^n d log(R/rho)",
            status: Status::Guide,
            source: "Basu, Jiang, Kerger & Molinaro, information complexity of mixed-integer \
                     convex optimization; Basu, Math. Program. 2023 (from memory)",
        });
    }
    out.push(Bound {
        label: if class.cont_dim == 0 {
            "integer centerpoint method"
        } else {
            "mixed-integer centerpoint method"
        },
        side: Side::Upper,
        queries: Some(centerpoint_upper_bound(class)),
        formula: if class.cont_dim == 0 {
            "floor(ln |S| / -ln(1 - 2^-n)) + 1 (depth |S| / 2^n per query)"
        } else {
            "ceil(ln(mu_0 / mu_min) / -ln(1 - 1/(2^n (d+1)))), mu_0 = |S| (2R)^d, \
             mu_min = kappa_d rho^d, for a method querying an exact centerpoint (the \
             built-in mixed-centerpoint samples one and is not held to this line)"
        },
        status: Status::Proven,
        source: if class.cont_dim == 0 {
            "Oertel, Wagner & Weismantel, Oper. Res. Lett. 2014 (derived)"
        } else {
            "Basu & Oertel, SIAM J. Optim. 2017 (derived, docs/theory.md §4)"
        },
    });
    if class.cont_dim == 0 {
        out.push(Bound {
            label: "enumeration",
            side: Side::Upper,
            queries: Some(class.lattice_count()),
            formula: "|S|: query every lattice point of the box",
            status: Status::Proven,
            source: "common practice, no source",
        });
    }
    out
}

/// The ellipsoid method's volume ratio per central cut, as a logarithm (d >= 2):
/// ln r_d = ln(d/(d+1)) + ((d-1)/2) ln(d^2/(d^2-1)), computed with `ln_1p` so the
/// tiny second term keeps its digits (docs/theory.md §1.2).
pub fn ellipsoid_log_volume_ratio(d: usize) -> f64 {
    let df = d as f64;
    let first = -(1.0 / df).ln_1p();
    let second = 0.5 * (df - 1.0) * (1.0 / (df * df - 1.0)).ln_1p();
    first + second
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unit_ball_volumes_match_closed_forms() {
        // kappa_1 = 2, kappa_2 = pi, kappa_3 = 4 pi / 3, kappa_4 = pi^2 / 2
        // (textbook closed forms, e.g. any calculus text; from memory).
        let pi = std::f64::consts::PI;
        let cases = [(1, 2.0), (2, pi), (3, 4.0 * pi / 3.0), (4, pi * pi / 2.0)];
        for (d, kappa) in cases {
            let got = ln_unit_ball_volume(d).exp();
            assert!(
                (got - kappa).abs() < 1e-12 * kappa,
                "d = {d}: {got} vs {kappa}"
            );
        }
    }

    #[test]
    fn lower_bound_never_exceeds_upper_bounds() {
        for d in [1, 2, 3, 5, 10, 50] {
            for ratio in [4.0, 64.0, 1000.0, 1e6] {
                let class =
                    FeasibilityClass::new(d, 1.0, 1.0 / ratio, Promise::MayBeEmpty).unwrap();
                let lower = halving_lower_bound(&class);
                assert!(
                    lower <= centre_of_gravity_upper_bound(&class),
                    "d {d} ratio {ratio}"
                );
                assert!(
                    lower <= ellipsoid_upper_bound(&class),
                    "d {d} ratio {ratio}"
                );
            }
        }
    }

    #[test]
    fn slab_funnel_levels_match_the_closed_form() {
        use crate::class::{FirstOrderClass, LipschitzNorm};
        // docs/theory.md §2.4 (derived): ceil(log_7(L R / (2 eps))) with L = R = 1:
        // 50 -> 3 (7^2 = 49 < 50 <= 343), 5000 -> 5 (2401 < 5000 <= 16807),
        // 500000 -> 7 (117649 < 500000 <= 823543); eps >= L R / 2 -> 0.
        for (d, eps, count) in [
            (1, 1e-2, 3),
            (2, 1e-4, 10),
            (5, 1e-6, 35),
            (3, 0.5, 0),
            (3, 0.9, 0),
        ] {
            let class = FirstOrderClass::new(d, 1.0, eps, 1.0, LipschitzNorm::L2).unwrap();
            assert_eq!(
                slab_funnel_lower_bound(&class),
                count,
                "d = {d}, eps = {eps}"
            );
        }
        // L R / (2 eps) = 49 exactly (L = 49, R = 1, eps = 1/2): 7^K < 49 for K = 0, 1
        // only, so ceil(log_7 49) = 2 levels; the exact predicate does not round up.
        let class = FirstOrderClass::new(1, 1.0, 0.5, 49.0, LipschitzNorm::L2).unwrap();
        assert_eq!(slab_funnel_lower_bound(&class), 2);
        let class = FirstOrderClass::new(1, 1.0, 0.5, 49.5, LipschitzNorm::L2).unwrap();
        assert_eq!(slab_funnel_lower_bound(&class), 3);
    }

    #[test]
    fn lattice_bounds_are_ordered_and_match_small_cases() {
        use crate::class::LatticeClass;
        // {0,1}^2: |S| = 4, lattice halving floor(log2 4) + 1 = 3; corner 2^2 = 4;
        // centerpoint floor(ln 4 / -ln(3/4)) + 1 = floor(4.82) + 1 = 5 (by hand);
        // enumeration 4.
        let c = LatticeClass::integer(2, 0, 1).unwrap();
        assert_eq!(lattice_half_lower_bound(&c), Some(3));
        assert_eq!(corner_count(&c), Some(4));
        assert_eq!(centerpoint_upper_bound(&c), 5);
        // n = 1, {0..7}: the median halves: floor(ln 8 / ln 2) + 1 = 4 = floor(log2 8) + 1,
        // bisection is optimal in one dimension (common practice, no source).
        let line = LatticeClass::integer(1, 0, 7).unwrap();
        assert_eq!(centerpoint_upper_bound(&line), 4);
        assert_eq!(lattice_half_lower_bound(&line), Some(4));
        // Mixed (n, d) = (2, 1), R/rho = 16: k = 3, so 2^2 (1 * 3 + 1) = 16.
        let m = LatticeClass::mixed(2, 0, 1, 1, 1.0, 1.0 / 16.0).unwrap();
        assert_eq!(corner_count(&m), Some(16));
        for n in 1..=6 {
            let c = LatticeClass::integer(n, 0, 1).unwrap();
            let lower = lattice_half_lower_bound(&c).unwrap();
            assert!(lower <= corner_count(&c).unwrap());
            assert!(corner_count(&c).unwrap() <= c.lattice_count());
            assert!(lower <= centerpoint_upper_bound(&c));
        }
    }
}
