//! Admissible answers for the separation feasibility class (docs/theory.md §0 and §1).
//!
//! The hunt's adversary state after a line of answers is the alive set: the box
//! X = [-R, R]^d intersected with every strict cut given. Its witnesses are the empty
//! set (consistent with every strict cut) and one closed rho-ball B(c, rho) strictly
//! inside every cut and inside X; their solution sets are disjoint, so while such a ball
//! exists no method can stop (docs/theory.md §1.1, same pair as the halving adversary).
//!
//! An answer to a query x is a strict cut `{y : a.y < b}` with `a.x >= b` (exactly).
//! Candidates are central cuts (`b` = a.x rounded down to an `f64`, so the cut passes
//! through x or a hair beyond it) along: the coordinate axes; the direction from the
//! alive set's Chebyshev centre to x; the directions from the method's last queries to
//! x; the normals of earlier cuts that x violates or touches (a cut through x parallel
//! to them keeps all of the alive set); and seeded random directions; each with both
//! signs. A candidate is admissible when a rho-ball still fits strictly inside the alive
//! set cut by it: the largest inscribed ball of the method-side polytope model
//! ([`Polytope::chebyshev`], an LP, about 1e-10 accurate) gives a centre c with radius
//! r; c is the point with the most slack, so a rho-ball around it has slack about r - rho
//! in every row, and it is then checked exactly against every cut and the box
//! ([`ball_fits_exactly`]). Only centres that pass the exact check are kept (when the LP
//! centre fails, the previous centre is tried against the new cut); nothing is claimed
//! from the LP alone.

use std::cmp::Ordering;

use num_rational::BigRational;
use num_traits::{Signed, Zero};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::class::FeasibilityClass;
use crate::exact::{cmp_diff, f64_to_rational, nearest_f64, Exact};
use crate::geometry::polytope::Polytope;
use crate::oracle::{Cut, Normal};

/// Largest magnitude for the fast exact comparisons of [`crate::exact::cmp_diff`].
const FAST_LIMIT: f64 = 1e300;

/// The alive set of a line of admissible answers and its exactly checked witness ball.
///
/// Invariant: the closed ball B(`center`, rho) lies in X and strictly inside every cut
/// in `cuts` (checked exactly when the cut was admitted).
#[derive(Clone, Debug)]
pub struct Alive {
    rho: f64,
    half_width: f64,
    cuts: Vec<Cut>,
    model: Polytope,
    center: Vec<f64>,
    radius: f64,
    potential: f64,
}

/// The result of testing one candidate answer.
#[derive(Clone, Debug)]
pub enum Admission {
    /// A rho-ball still fits strictly inside, checked exactly: the new alive set.
    Admitted(Box<Alive>),
    /// The LP found a ball larger than rho, but no centre passed the exact check.
    NotExact,
    /// No rho-ball fits (by the LP), or the LP failed.
    NoBall,
}

impl Alive {
    /// The whole box, with the witness ball at the origin.
    pub fn new(class: &FeasibilityClass) -> Alive {
        Alive {
            rho: class.rho,
            half_width: class.half_width,
            cuts: Vec::new(),
            model: Polytope::cube(class.dim, class.half_width),
            center: vec![0.0; class.dim],
            radius: class.half_width,
            potential: class.dim as f64 * (class.half_width / class.rho).ln(),
        }
    }

    /// Centre of the witness ball (exact `f64` values).
    pub fn center(&self) -> &[f64] {
        &self.center
    }

    /// Radius of the largest inscribed ball as the LP found it (a ranking heuristic,
    /// never a claim).
    pub fn radius(&self) -> f64 {
        self.radius
    }

    /// The cuts admitted so far, in order.
    pub fn cuts(&self) -> &[Cut] {
        &self.cuts
    }

    /// The polytope model (outward-rounded superset of the alive set).
    pub fn model(&self) -> &Polytope {
        &self.model
    }

    /// The ranking potential: sum over the axes of the Dikin ellipsoid at the analytic
    /// centre of ln(max(axis, rho) / rho) (a heuristic estimate of how many more cuts the
    /// set can take, exact in shape for boxes; never a claim). The Dikin ellipsoid
    /// {y : (y - z)^T H (y - z) <= 1}, H the Hessian of the log barrier at an interior z,
    /// lies inside the polytope (Nesterov & Nemirovski 1994, from memory).
    pub fn potential(&self) -> f64 {
        self.potential
    }

    /// Tests the answer `cut` (module doc).
    pub fn admit(&self, cut: &Cut) -> Admission {
        let mut model = self.model.clone();
        if model.add_cut(cut).is_err() || model.is_known_empty() {
            return Admission::NoBall;
        }
        let ball = match model.chebyshev() {
            Ok(chebyshev) => chebyshev.ball,
            Err(_) => return Admission::NoBall,
        };
        let Some((center, radius)) = ball else {
            return Admission::NoBall;
        };
        if radius <= self.rho {
            return Admission::NoBall;
        }
        let mut cuts = self.cuts.clone();
        cuts.push(cut.clone());
        let center = if ball_fits_exactly(&center, self.rho, self.half_width, &cuts) {
            center
        } else if ball_inside_cut(&self.center, self.rho, cut) {
            self.center.clone()
        } else {
            return Admission::NotExact;
        };
        let potential = dikin_potential(&model, &center, self.rho);
        Admission::Admitted(Box::new(Alive {
            rho: self.rho,
            half_width: self.half_width,
            cuts,
            model,
            center,
            radius,
            potential,
        }))
    }
}

/// See [`Alive::potential`]; `start` is a point strictly inside the model. Falls back to
/// the Hessian at `start` when Newton fails, and to d ln(r / rho) style zero when the
/// Hessian cannot be decomposed.
fn dikin_potential(model: &Polytope, start: &[f64], rho: f64) -> f64 {
    let d = model.dim();
    let z = match crate::method::analytic_center::analytic_center(model, start) {
        Ok(result) if model.contains_strictly(&result.point) => result.point,
        _ => start.to_vec(),
    };
    let slacks = model.slacks(&z);
    let mut h = nalgebra::DMatrix::<f64>::zeros(d, d);
    for j in 0..d {
        h[(j, j)] += 1.0 / (slacks[j] * slacks[j]) + 1.0 / (slacks[d + j] * slacks[d + j]);
    }
    for i in 0..model.num_rows() {
        let row = model.row(i);
        let s2 = slacks[2 * d + i] * slacks[2 * d + i];
        for j in 0..d {
            for k in 0..d {
                h[(j, k)] += row[j] * row[k] / s2;
            }
        }
    }
    if h.iter().any(|v| !v.is_finite()) {
        return 0.0;
    }
    let eigen = nalgebra::SymmetricEigen::new(h);
    eigen
        .eigenvalues
        .iter()
        .map(|&lambda| {
            let axis = if lambda > 0.0 {
                1.0 / lambda.sqrt()
            } else {
                f64::MAX
            };
            (axis.max(rho) / rho).ln()
        })
        .sum()
}

/// True when the closed ball B(`center`, rho) lies in [-R, R]^d and strictly inside
/// every cut, decided exactly (the verifier's test, docs/theory.md §0: `s = b - a.c > 0` and
/// `rho^2 ||a||^2 < s^2`).
pub fn ball_fits_exactly(center: &[f64], rho: f64, half_width: f64, cuts: &[Cut]) -> bool {
    let in_box = center.iter().all(|c| {
        c.abs() <= FAST_LIMIT
            && cmp_diff(half_width, *c, rho) != Ordering::Less
            && cmp_diff(*c, -half_width, rho) != Ordering::Less
    });
    in_box && cuts.iter().all(|cut| ball_inside_cut(center, rho, cut))
}

/// B(`center`, rho) strictly inside the cut, exactly.
pub fn ball_inside_cut(center: &[f64], rho: f64, cut: &Cut) -> bool {
    if let (Normal::Axis { axis, sign }, Exact::Float(b)) = (&cut.normal, &cut.offset) {
        let Some(c) = center.get(*axis) else {
            return false;
        };
        // ||a|| = 1: need b - sign c > rho. Negation is exact.
        let signed = f64::from(*sign) * c;
        if b.abs() <= FAST_LIMIT && signed.abs() <= FAST_LIMIT {
            return cmp_diff(*b, signed, rho) == Ordering::Greater;
        }
    }
    let c: Vec<BigRational> = center.iter().map(|v| f64_to_rational(*v)).collect();
    let s = cut.offset.to_rational() - cut.normal.dot_exact(&c);
    if !s.is_positive() {
        return false;
    }
    let r = f64_to_rational(rho);
    &r * &r * cut.normal.norm_squared_exact() < &s * &s
}

/// The largest `f64` at most a.x (exact dot product, rounded down); `None` when it is
/// not finite.
pub fn dot_rounded_down(a: &[f64], x: &[f64]) -> Option<f64> {
    let exact: BigRational = a
        .iter()
        .zip(x)
        .filter(|(ai, _)| **ai != 0.0)
        .map(|(ai, xi)| f64_to_rational(*ai) * f64_to_rational(*xi))
        .fold(BigRational::zero(), |acc, t| acc + t);
    let mut b = nearest_f64(&exact);
    if f64_to_rational(b) > exact {
        b = next_down(b);
    }
    b.is_finite().then_some(b)
}

/// The next `f64` below a finite `x`.
fn next_down(x: f64) -> f64 {
    if x == 0.0 {
        return -f64::from_bits(1);
    }
    let bits = x.to_bits();
    if x > 0.0 {
        f64::from_bits(bits - 1)
    } else {
        f64::from_bits(bits + 1)
    }
}

/// Where the candidate directions come from (module doc).
#[derive(Clone, Debug, PartialEq)]
pub struct CandidateSettings {
    /// Directions from this many of the method's most recent earlier queries.
    pub recent_queries: usize,
    /// Seeded random directions per query.
    pub random_directions: usize,
}

/// The central cut through `x` with normal `a` (rounded down; module doc), unless `a`
/// is zero or not finite.
fn central_cut(a: &[f64], x: &[f64]) -> Option<Cut> {
    let nonzero: Vec<usize> = (0..a.len()).filter(|&j| a[j] != 0.0).collect();
    if nonzero.is_empty() || a.iter().any(|v| !v.is_finite()) {
        return None;
    }
    if let [j] = nonzero[..] {
        // An axis direction: exact without rounding.
        let positive = a[j] > 0.0;
        let offset = if positive { x[j] } else { -x[j] };
        return Some(Cut {
            normal: Normal::axis(j, positive),
            offset: Exact::Float(offset),
        });
    }
    let big = a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let normal: Vec<f64> = a.iter().map(|v| v / big).collect();
    let offset = dot_rounded_down(&normal, x)?;
    Some(Cut {
        normal: Normal::Dense(normal),
        offset: Exact::Float(offset),
    })
}

/// True when `a.x >= b` exactly (the query lies on the excluded side of `cut`).
fn touches(cut: &Cut, x: &[f64]) -> bool {
    let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
    cut.normal.dot_exact(&xr) >= cut.offset.to_rational()
}

/// The candidate answers to query `x` at a node with alive set `alive` and earlier
/// queries `history` (oldest first), deduplicated, in a fixed order.
pub fn candidate_cuts(
    x: &[f64],
    alive: &Alive,
    history: &[Vec<f64>],
    settings: &CandidateSettings,
    rng: &mut ChaCha8Rng,
) -> Vec<Cut> {
    let d = x.len();
    let mut directions: Vec<Vec<f64>> = Vec::new();
    for i in 0..d {
        let mut e = vec![0.0; d];
        e[i] = 1.0;
        directions.push(e);
    }
    directions.push(x.iter().zip(&alive.center).map(|(a, c)| a - c).collect());
    for earlier in history.iter().rev().take(settings.recent_queries) {
        directions.push(x.iter().zip(earlier).map(|(a, b)| a - b).collect());
    }
    for cut in alive.cuts.iter().rev().take(8) {
        if touches(cut, x) {
            directions.push(cut.normal.to_dense(d));
        }
    }
    for _ in 0..settings.random_directions {
        directions.push((0..d).map(|_| rng.random::<f64>() * 2.0 - 1.0).collect());
    }
    let mut cuts: Vec<Cut> = Vec::with_capacity(2 * directions.len());
    for a in &directions {
        let minus: Vec<f64> = a.iter().map(|v| -v).collect();
        for normal in [a, &minus] {
            if let Some(cut) = central_cut(normal, x) {
                if !cuts.contains(&cut) {
                    cuts.push(cut);
                }
            }
        }
    }
    cuts
}

/// The random generator for the candidates of one node: a fixed function of the hunt
/// seed, the pass, the depth and the node's place in the beam.
pub fn node_rng(seed: u64, pass: u64, depth: u64, slot: u64) -> ChaCha8Rng {
    // SplitMix64-style mixing (common practice, no source) of the four numbers.
    let mut z = seed;
    for v in [pass, depth, slot] {
        z = z.wrapping_add(0x9E37_79B9_7F4A_7C15).wrapping_add(v);
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
    }
    ChaCha8Rng::seed_from_u64(z)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::class::Promise;

    #[test]
    fn exact_ball_test_sees_the_boundary() {
        // B(0, 1/4) and the cut y_0 < 1/4: slack exactly rho, not strictly inside.
        let cut = Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(0.25),
        };
        assert!(!ball_inside_cut(&[0.0, 0.0], 0.25, &cut));
        assert!(ball_inside_cut(&[-1e-17, 0.0], 0.25, &cut));
        // Dense: (3, 4).y < 5 at c = 0 has slack 5 = rho ||a|| for rho = 1.
        let dense = Cut {
            normal: Normal::Dense(vec![3.0, 4.0]),
            offset: Exact::Float(5.0),
        };
        assert!(!ball_inside_cut(&[0.0, 0.0], 1.0, &dense));
        assert!(ball_inside_cut(&[0.0, 0.0], 0.999, &dense));
        // The box: a ball touching the face from inside is allowed (closed ball in X).
        assert!(ball_fits_exactly(&[0.75], 0.25, 1.0, &[]));
        assert!(!ball_fits_exactly(&[0.76], 0.25, 1.0, &[]));
    }

    #[test]
    fn rounded_down_dot_never_exceeds_the_exact_value() {
        let a = [0.1, 0.7, -0.3];
        let x = [1.0 / 3.0, 0.2, 5.0];
        let b = dot_rounded_down(&a, &x).unwrap();
        let exact: BigRational = a
            .iter()
            .zip(&x)
            .map(|(p, q)| f64_to_rational(*p) * f64_to_rational(*q))
            .sum();
        assert!(f64_to_rational(b) <= exact);
        assert!(f64_to_rational(next_up_for_test(b)) > exact);
    }

    fn next_up_for_test(x: f64) -> f64 {
        -next_down(-x)
    }

    #[test]
    fn candidates_exclude_the_query_and_admission_is_exact() {
        let class = FeasibilityClass::new(2, 1.0, 0.01, Promise::MayBeEmpty).unwrap();
        let alive = Alive::new(&class);
        let settings = CandidateSettings {
            recent_queries: 2,
            random_directions: 3,
        };
        let x = [0.1, -0.2];
        let cuts = candidate_cuts(
            &x,
            &alive,
            &[vec![0.5, 0.5]],
            &settings,
            &mut node_rng(1, 0, 0, 0),
        );
        // 2 axes + centre direction + 1 recent + 3 random, both signs.
        assert_eq!(cuts.len(), 14);
        for cut in &cuts {
            assert!(touches(cut, &x), "{cut:?} does not exclude the query");
            match alive.admit(cut) {
                Admission::Admitted(next) => {
                    assert!(ball_fits_exactly(next.center(), 0.01, 1.0, next.cuts()));
                }
                other => panic!("a cut near the centre of the box must be admissible: {other:?}"),
            }
        }
        // A cut that leaves no room for the ball: y_0 < -0.99 keeps a slab of width 0.01.
        let thin = Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(-0.99),
        };
        assert!(matches!(alive.admit(&thin), Admission::NoBall));
    }
}
