//! The universal certificate for any first-order transcript (THEORY.md 2.2).
//!
//! For a slope sigma <= L and a centre c in X, let Lambda(c) = min_t [v_t - sigma
//! ||x_t - c||_inf] and M(y) = max_t [v_t + g_t.(y - x_t)]. When M(c) <= Lambda(c), the
//! function f_c(y) = max{M(y), Lambda(c) + sigma ||y - c||_inf} reproduces every answer,
//! is L-Lipschitz, and has its minimum Lambda(c) at c, with its eps-solution set inside
//! c + (eps/sigma) B_inf. Two admissible centres more than 2 eps / sigma apart in l_inf
//! give two instances no method can tell apart from these answers and whose
//! eps-solution sets are disjoint.
//!
//! Search: for each sigma of a geometric grid, the admissible set is a polytope in
//! (c, mu); its extent in each coordinate takes two LPs, solved by constraint
//! generation (start from the pieces M <= mu and a few cone rows, add the most violated
//! rows until none is violated), so each LP stays small. The two extreme centres are
//! pulled towards their midpoint (the admissible set is convex) until they verify
//! exactly: M(c) <= Lambda(c) decided in rational arithmetic with an f64 filter. The
//! floors are the exact Lambda(c). The longest certified prefix is found by binary search
//! (existence is monotone in the prefix length).
//!
//! What this yields is one-sided: eps_cert (the value reported) is a certified lower
//! estimate of the error that no method can rule out from these answers, for this class
//! and norm; the true threshold may be larger.

use std::collections::HashSet;

use num_rational::BigRational;
use num_traits::Signed;

use crate::certificate::first_order::{piece_key, FilteredPiece};
use crate::class::FirstOrderClass;
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::geometry::lp::{self, LpOutcome, Row};
use crate::instance::{AffinePiece, FunctionWitness, Witness, Witnesses};

/// One first-order exchange: the query, the answered value and subgradient.
#[derive(Clone, Debug, PartialEq)]
pub struct Exchange {
    /// The query x_t.
    pub point: Vec<f64>,
    /// The value v_t.
    pub value: Exact,
    /// The subgradient g_t.
    pub gradient: Vec<Exact>,
}

/// A certificate found for a prefix.
#[derive(Clone, Debug, PartialEq)]
pub struct Found {
    /// The witnesses (two functions) and the prefix they certify.
    pub witnesses: Witnesses,
    /// eps_cert: the largest accuracy these verified witnesses certify (THEORY.md 2.2).
    pub certified_uncertainty: f64,
}

/// The exchanges in f64 form for the LPs.
struct Data {
    d: usize,
    points: Vec<Vec<f64>>,
    values: Vec<f64>,
    gradients: Vec<Vec<(usize, f64)>>,
    pieces: Vec<FilteredPiece>,
}

impl Data {
    fn new(exchanges: &[Exchange], d: usize) -> Data {
        let mut seen = HashSet::new();
        let mut pieces = Vec::new();
        for e in exchanges {
            let piece = AffinePiece::through(&e.point, &e.value, &e.gradient);
            if seen.insert(piece_key(&piece)) {
                pieces.push(FilteredPiece::new(piece));
            }
        }
        Data {
            d,
            points: exchanges.iter().map(|e| e.point.clone()).collect(),
            values: exchanges.iter().map(|e| e.value.to_f64()).collect(),
            gradients: exchanges
                .iter()
                .map(|e| {
                    e.gradient
                        .iter()
                        .enumerate()
                        .filter(|(_, g)| **g != Exact::ZERO)
                        .map(|(i, g)| (i, g.to_f64()))
                        .collect()
                })
                .collect(),
            pieces,
        }
    }

    /// Row k of the full system in variables (c_1..c_d, mu):
    /// k < T: g_t.c - mu <= g_t.x_t - v_t; then for each t, i: mu - sigma c_i <= v_t -
    /// sigma x_ti and mu + sigma c_i <= v_t + sigma x_ti.
    fn row(&self, k: usize, sigma: f64) -> Row {
        let t_count = self.points.len();
        let d = self.d;
        if k < t_count {
            let g = &self.gradients[k];
            let mut entries: Vec<(usize, f64)> = g.clone();
            entries.push((d, -1.0));
            let gx: f64 = g.iter().map(|(i, v)| v * self.points[k][*i]).sum();
            (entries, gx - self.values[k])
        } else {
            let r = k - t_count;
            let (t, rest) = (r / (2 * d), r % (2 * d));
            let (i, upper) = (rest / 2, rest % 2 == 1);
            let x = self.points[t][i];
            if upper {
                (vec![(i, sigma), (d, 1.0)], self.values[t] + sigma * x)
            } else {
                (vec![(i, -sigma), (d, 1.0)], self.values[t] - sigma * x)
            }
        }
    }

    /// Loose bounds (upper, lower) on mu that every admissible point satisfies.
    fn mu_bounds(&self, half_width: f64) -> (f64, f64) {
        if self.values.is_empty() {
            return (0.0, -1.0);
        }
        let upper = self.values.iter().copied().fold(f64::INFINITY, f64::min);
        let lower = self
            .values
            .iter()
            .zip(&self.gradients)
            .zip(&self.points)
            .map(|((v, g), x)| {
                let reach: f64 = g
                    .iter()
                    .map(|(i, a)| a.abs() * (x[*i].abs() + half_width))
                    .sum();
                v - reach
            })
            .fold(f64::INFINITY, f64::min);
        let pad = 1.0 + upper.abs().max(lower.abs());
        (upper + 1e-9 * pad, lower.min(upper) - pad)
    }

    fn rows(&self) -> usize {
        self.points.len() * (1 + 2 * self.d)
    }

    fn violation(&self, k: usize, sigma: f64, z: &[f64]) -> f64 {
        let (entries, b) = self.row(k, sigma);
        let lhs: f64 = entries.iter().map(|(j, a)| a * z[*j]).sum();
        let scale = 1.0 + b.abs() + entries.iter().map(|(j, a)| (a * z[*j]).abs()).sum::<f64>();
        (lhs - b) / scale
    }
}

/// Extreme point of the admissible set in direction `objective`, by constraint
/// generation; `None` when the set is empty.
fn extreme(
    data: &Data,
    sigma: f64,
    objective: &[f64],
    half_width: f64,
    active: &mut Vec<usize>,
) -> Result<Option<Vec<f64>>, Error> {
    let d = data.d;
    let total = data.rows();
    for _round in 0..200 {
        let mut rows: Vec<Row> = active.iter().map(|&k| data.row(k, sigma)).collect();
        for i in 0..d {
            rows.push((vec![(i, 1.0)], half_width));
            rows.push((vec![(i, -1.0)], half_width));
        }
        // Loose bounds on mu keep the LP bounded when few rows involve it: Lambda(c) <=
        // min_t v_t, and M(c) >= v_t - (sum |g_t|)(|x_t| + R) for any t.
        let (upper, lower) = data.mu_bounds(half_width);
        rows.push((vec![(d, 1.0)], upper));
        rows.push((vec![(d, -1.0)], -lower));
        let z = match lp::minimise(objective, &rows, d + 1)? {
            LpOutcome::Optimal(z) => z,
            LpOutcome::Infeasible => return Ok(None),
            LpOutcome::Unbounded => {
                // mu unbounded below cannot happen once a cone row is active; add some.
                let extra: Vec<usize> = (data.points.len()..total)
                    .filter(|k| !active.contains(k))
                    .take(2 * d)
                    .collect();
                if extra.is_empty() {
                    return Ok(None);
                }
                active.extend(extra);
                continue;
            }
        };
        let mut violated: Vec<(f64, usize)> = (0..total)
            .map(|k| (data.violation(k, sigma, &z), k))
            .filter(|(v, _)| *v > 1e-10)
            .collect();
        if violated.is_empty() {
            return Ok(Some(z));
        }
        violated.sort_by(|a, b| b.0.total_cmp(&a.0));
        for (_, k) in violated.into_iter().take(4 * d + 8) {
            if !active.contains(&k) {
                active.push(k);
            }
        }
    }
    Ok(None)
}

/// Exact admissibility of centre `c` (f64) with slope sigma: returns the floor
/// Lambda(c) when M(c) <= Lambda(c), exactly.
fn admissible_floor(
    data: &Data,
    exchanges: &[Exchange],
    c: &[f64],
    sigma: f64,
) -> Option<BigRational> {
    if exchanges.is_empty() {
        // No answers: any floor works; take 0.
        return Some(BigRational::from_integer(0.into()));
    }
    let sigma_r = f64_to_rational(sigma);
    let c_r: Vec<BigRational> = c.iter().map(|v| f64_to_rational(*v)).collect();
    // Lambda(c) = min_t v_t - sigma ||x_t - c||_inf, exact (the filter picks candidates).
    let approx: Vec<f64> = exchanges
        .iter()
        .map(|e| {
            let dist = e
                .point
                .iter()
                .zip(c)
                .map(|(x, ci)| (x - ci).abs())
                .fold(0.0, f64::max);
            e.value.to_f64() - sigma * dist
        })
        .collect();
    let best = approx.iter().copied().fold(f64::INFINITY, f64::min);
    let slack = 1e-9 * (1.0 + best.abs());
    let mut floor: Option<BigRational> = None;
    for (t, e) in exchanges.iter().enumerate() {
        if approx[t] > best + slack {
            continue;
        }
        let dist = e
            .point
            .iter()
            .zip(&c_r)
            .map(|(x, ci)| (f64_to_rational(*x) - ci).abs())
            .fold(BigRational::from_integer(0.into()), |m, v| {
                if v > m {
                    v
                } else {
                    m
                }
            });
        let value = e.value.to_rational() - &sigma_r * dist;
        floor = Some(match floor {
            Some(f) if f <= value => f,
            _ => value,
        });
    }
    let floor = floor?;
    let floor_exact = Exact::from_rational(floor.clone());
    // M(c) <= floor, exactly (filtered).
    let ok = data
        .pieces
        .iter()
        .all(|p| p.cmp_at(c, &floor_exact) != std::cmp::Ordering::Greater);
    ok.then_some(floor)
}

/// Tries slope `sigma` on the exchanges: two verified admissible centres as far apart
/// as the LPs find, pulled inward until they verify. Returns the two witnesses and
/// eps_cert = sigma ||c_A - c_B||_inf / 2.
fn try_sigma(
    class: &FirstOrderClass,
    data: &Data,
    exchanges: &[Exchange],
    sigma: f64,
    needed_width: Option<f64>,
) -> Result<Option<(FunctionWitness, FunctionWitness, f64)>, Error> {
    let d = class.dim;
    let t_count = exchanges.len();
    // Start with the piece rows and the cone rows of the lowest values.
    let mut order: Vec<usize> = (0..t_count).collect();
    order.sort_by(|a, b| data.values[*a].total_cmp(&data.values[*b]));
    let mut active: Vec<usize> = (0..t_count).collect();
    for &t in order.iter().take(3) {
        for r in 0..2 * d {
            active.push(t_count + t * 2 * d + r);
        }
    }
    let mut best: Option<(f64, Vec<f64>, Vec<f64>)> = None;
    for j in 0..d {
        let mut objective = vec![0.0; d + 1];
        objective[j] = 1.0;
        let Some(low) = extreme(data, sigma, &objective, class.half_width, &mut active)? else {
            return Ok(None);
        };
        objective[j] = -1.0;
        let Some(high) = extreme(data, sigma, &objective, class.half_width, &mut active)? else {
            return Ok(None);
        };
        let width = high[j] - low[j];
        if best.as_ref().is_none_or(|(w, _, _)| width > *w) {
            best = Some((width, low[..d].to_vec(), high[..d].to_vec()));
        }
        if let (Some(needed), Some((w, _, _))) = (needed_width, &best) {
            if *w > needed * 1.01 {
                break;
            }
        }
    }
    let Some((_, low, high)) = best else {
        return Ok(None);
    };
    let mid: Vec<f64> = low
        .iter()
        .zip(&high)
        .map(|(a, b)| 0.5 * a + 0.5 * b)
        .collect();
    let pull = |c: &[f64], alpha: f64| -> Vec<f64> {
        c.iter()
            .zip(&mid)
            .map(|(ci, mi)| (ci + alpha * (mi - ci)).clamp(-class.half_width, class.half_width))
            .collect()
    };
    let mut verified: Vec<(Vec<f64>, BigRational)> = Vec::new();
    for end in [&low, &high] {
        let mut found = None;
        for alpha in [0.0, 1e-9, 1e-7, 1e-5, 1e-3, 1e-2, 0.1, 0.3] {
            let c = pull(end, alpha);
            if let Some(floor) = admissible_floor(data, exchanges, &c, sigma) {
                found = Some((c, floor));
                break;
            }
        }
        match found {
            Some(f) => verified.push(f),
            None => return Ok(None),
        }
    }
    let distance = verified[0]
        .0
        .iter()
        .zip(&verified[1].0)
        .map(|(a, b)| (f64_to_rational(*a) - f64_to_rational(*b)).abs())
        .fold(BigRational::from_integer(0.into()), |m, v| {
            if v > m {
                v
            } else {
                m
            }
        });
    // Rounded down: every eps below eps_cert is certified by these two centres.
    let eps_cert = crate::certificate::first_order::f64_at_most(
        &(&distance * f64_to_rational(sigma) / BigRational::from_integer(2.into())),
    );
    let pieces: Vec<AffinePiece> = data.pieces.iter().map(|p| p.exact().clone()).collect();
    let make = |(c, floor): &(Vec<f64>, BigRational)| FunctionWitness {
        pieces: pieces.clone(),
        center: c.iter().map(|v| Exact::Float(*v)).collect(),
        floor: Exact::from_rational(floor.clone()),
        slope: Exact::Float(sigma),
    };
    Ok(Some((make(&verified[0]), make(&verified[1]), eps_cert)))
}

/// The slopes tried: sigma = L 2^-j while sigma R >= eps / 2.
fn slope_grid(class: &FirstOrderClass) -> Vec<f64> {
    let mut grid = Vec::new();
    let mut sigma = class.lipschitz;
    while sigma * class.half_width >= 0.5 * class.eps && grid.len() < 200 {
        grid.push(sigma);
        sigma *= 0.5;
    }
    grid
}

/// A certificate for exactly these exchanges at the class's eps, if one is found:
/// eps_cert > eps. With `best`, every slope is tried and the largest eps_cert kept.
pub fn certificate_for(
    class: &FirstOrderClass,
    exchanges: &[Exchange],
    best: bool,
) -> Result<Option<Found>, Error> {
    let data = Data::new(exchanges, class.dim);
    let mut found: Option<Found> = None;
    for sigma in slope_grid(class) {
        let needed = 2.0 * class.eps / sigma;
        if needed > 2.0 * class.half_width {
            continue;
        }
        // A slope whose LPs fail numerically is skipped: it only loses a candidate.
        let Ok(Some((a, b, eps_cert))) =
            try_sigma(class, &data, exchanges, sigma, (!best).then_some(needed))
        else {
            continue;
        };
        if eps_cert <= class.eps {
            continue;
        }
        // Exact separation: ||c_A - c_B||_inf > 2 eps / sigma.
        let distance = a
            .center
            .iter()
            .zip(&b.center)
            .map(|(x, y)| (x.to_rational() - y.to_rational()).abs())
            .fold(BigRational::from_integer(0.into()), |m, v| {
                if v > m {
                    v
                } else {
                    m
                }
            });
        let two = BigRational::from_integer(2.into());
        if distance * f64_to_rational(sigma) <= two * f64_to_rational(class.eps) {
            continue;
        }
        let candidate = Found {
            witnesses: Witnesses {
                prefix: exchanges.len() as u64,
                instances: vec![Witness::Function(a), Witness::Function(b)],
            },
            certified_uncertainty: eps_cert,
        };
        if !best {
            return Ok(Some(candidate));
        }
        if found
            .as_ref()
            .is_none_or(|f| candidate.certified_uncertainty > f.certified_uncertainty)
        {
            found = Some(candidate);
        }
    }
    Ok(found)
}

/// The longest prefix of `exchanges` with a certificate at the class's eps (binary
/// search; existence is monotone in the prefix), with the best eps_cert found for it.
pub fn longest_certificate(
    class: &FirstOrderClass,
    exchanges: &[Exchange],
) -> Result<Option<Found>, Error> {
    if certificate_for(class, &[], false)?.is_none() {
        return Ok(None);
    }
    let total = exchanges.len();
    let (mut lo, mut hi) = (0usize, total);
    if certificate_for(class, exchanges, false)?.is_some() {
        lo = total;
    } else {
        // Invariant: prefix lo certifiable, prefix hi not.
        while hi - lo > 1 {
            let mid = lo + (hi - lo) / 2;
            if certificate_for(class, &exchanges[..mid], false)?.is_some() {
                lo = mid;
            } else {
                hi = mid;
            }
        }
    }
    // The exhaustive pass can fail numerically where the first-fit pass succeeded; keep
    // the first-fit certificate then.
    match certificate_for(class, &exchanges[..lo], true)? {
        Some(found) => Ok(Some(found)),
        None => certificate_for(class, &exchanges[..lo], false),
    }
}

/// Checks that a transcript is consistent with some convex L-Lipschitz function
/// (THEORY.md 2.1): every subgradient within L and v_s + g_s.(x_t - x_s) <= v_t for all
/// s, t. Returns the first violating pair `(s, t)` (0-based), exactly decided.
pub fn first_inconsistent_pair(exchanges: &[Exchange]) -> Option<(usize, usize)> {
    let pieces: Vec<FilteredPiece> = exchanges
        .iter()
        .map(|e| FilteredPiece::new(AffinePiece::through(&e.point, &e.value, &e.gradient)))
        .collect();
    for (t, e) in exchanges.iter().enumerate() {
        for (s, p) in pieces.iter().enumerate() {
            if s != t && p.cmp_at(&e.point, &e.value) == std::cmp::Ordering::Greater {
                return Some((s, t));
            }
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::class::LipschitzNorm;

    #[test]
    fn the_empty_transcript_is_certified_when_l_r_exceeds_eps() {
        for eps in [1e-2, 1e-4] {
            let class = FirstOrderClass::new(1, 1.0, eps, 1.0, LipschitzNorm::L2).unwrap();
            let found = certificate_for(&class, &[], true).unwrap();
            let found = found.expect("two cones at opposite corners certify prefix 0");
            assert!(found.certified_uncertainty > eps);
        }
    }
}
