//! The universal certificate for any first-order transcript (docs/theory.md §2.2).
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

use std::collections::{HashMap, HashSet};

use num_rational::BigRational;
use num_traits::Signed;

use crate::certificate::filter::Interval;
use crate::certificate::pieces::{PieceKey, PieceSet};
use crate::class::FirstOrderClass;
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::geometry::lp::{self, LpOutcome, Row};
use crate::instance::{AffinePiece, FunctionWitness, Witness};
use crate::transcript::Witnesses;

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
    /// eps_cert: the largest accuracy these verified witnesses certify (docs/theory.md §2.2).
    pub certified_uncertainty: f64,
}

/// One row of the admissible-set system in variables (c_1..c_d, mu):
/// `Piece(u)`: g.c - mu <= g.x_t - v_t for the u-th distinct affine piece;
/// `Cone(t, i, upper)`: mu -+ sigma c_i <= v_t -+ sigma x_{t,i}.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
enum RowKey {
    Piece(u32),
    Cone(u32, u32, bool),
}

/// Rows kept from earlier LPs, per slope (warm start): valid for any prefix that still
/// holds their exchanges.
#[derive(Default)]
struct Warm {
    rows: HashMap<u64, Vec<RowKey>>,
    /// The coordinate of the largest width found last time, per slope.
    coordinate: HashMap<u64, usize>,
}

/// The exchanges in f64 form for the LPs.
struct Data {
    d: usize,
    points: Vec<Vec<f64>>,
    values: Vec<f64>,
    /// For each distinct affine piece (in order of first appearance): its gradient and
    /// g.x_t - v_t, in f64.
    piece_rows: Vec<(Vec<(usize, f64)>, f64)>,
    /// The distinct pieces, exact (for the witnesses and the exact checks).
    pieces: PieceSet,
    /// Loose bounds (upper, lower) on mu that every admissible point satisfies.
    mu_bounds: (f64, f64),
}

impl Data {
    fn new(exchanges: &[Exchange], d: usize, half_width: f64) -> Data {
        let mut seen = HashSet::new();
        let mut pieces = Vec::new();
        let mut piece_rows = Vec::new();
        let gradient_f64 = |e: &Exchange| -> Vec<(usize, f64)> {
            e.gradient
                .iter()
                .enumerate()
                .filter(|(_, g)| **g != Exact::ZERO)
                .map(|(i, g)| (i, g.to_f64()))
                .collect()
        };
        for e in exchanges {
            let piece = AffinePiece::through(&e.point, &e.value, &e.gradient);
            if seen.insert(PieceKey::of(&piece)) {
                let g = gradient_f64(e);
                let gx: f64 = g.iter().map(|(i, v)| v * e.point[*i]).sum();
                piece_rows.push((g, gx - e.value.to_f64()));
                pieces.push(piece);
            }
        }
        let pieces = PieceSet::new(pieces);
        let values: Vec<f64> = exchanges.iter().map(|e| e.value.to_f64()).collect();
        let mu_bounds = if values.is_empty() {
            (0.0, -1.0)
        } else {
            // Lambda(c) <= min_t v_t, and M(c) >= v_t - (sum |g_t|)(|x_t| + R) for any t.
            let upper = values.iter().copied().fold(f64::INFINITY, f64::min);
            let lower = exchanges
                .iter()
                .zip(&values)
                .map(|(e, v)| {
                    let reach: f64 = gradient_f64(e)
                        .iter()
                        .map(|(i, a)| a.abs() * (e.point[*i].abs() + half_width))
                        .sum();
                    v - reach
                })
                .fold(f64::INFINITY, f64::min);
            let pad = 1.0 + upper.abs().max(lower.abs());
            (upper + 1e-9 * pad, lower.min(upper) - pad)
        };
        Data {
            d,
            points: exchanges.iter().map(|e| e.point.clone()).collect(),
            values,
            piece_rows,
            pieces,
            mu_bounds,
        }
    }

    fn row(&self, key: RowKey, sigma: f64) -> Row {
        let d = self.d;
        match key {
            RowKey::Piece(u) => {
                let (g, b) = &self.piece_rows[u as usize];
                let mut entries = g.clone();
                entries.push((d, -1.0));
                (entries, *b)
            }
            RowKey::Cone(t, i, upper) => {
                let (t, i) = (t as usize, i as usize);
                let x = self.points[t][i];
                if upper {
                    (vec![(i, sigma), (d, 1.0)], self.values[t] + sigma * x)
                } else {
                    (vec![(i, -sigma), (d, 1.0)], self.values[t] - sigma * x)
                }
            }
        }
    }

    /// Whether the row exists for these exchanges (warm-started rows may not).
    fn has(&self, key: RowKey) -> bool {
        match key {
            RowKey::Piece(u) => (u as usize) < self.piece_rows.len(),
            RowKey::Cone(t, i, _) => (t as usize) < self.points.len() && (i as usize) < self.d,
        }
    }

    /// Every row with its scaled violation at z, when positive beyond 1e-10.
    fn violated(&self, sigma: f64, z: &[f64]) -> Vec<(f64, RowKey)> {
        let d = self.d;
        let mu = z[d];
        let mut out = Vec::new();
        for (u, (g, b)) in self.piece_rows.iter().enumerate() {
            let mut lhs = -mu;
            let mut size = mu.abs();
            for (i, a) in g {
                lhs += a * z[*i];
                size += (a * z[*i]).abs();
            }
            let v = (lhs - b) / (1.0 + b.abs() + size);
            if v > 1e-10 {
                out.push((v, RowKey::Piece(u as u32)));
            }
        }
        for (t, (x, v_t)) in self.points.iter().zip(&self.values).enumerate() {
            for (i, (xi, ci)) in x.iter().zip(z).enumerate() {
                let s = sigma * ci;
                let (b_up, b_low) = (v_t + sigma * xi, v_t - sigma * xi);
                let size = 1.0 + mu.abs() + s.abs();
                let up = (mu + s - b_up) / (size + b_up.abs());
                let low = (mu - s - b_low) / (size + b_low.abs());
                if up > 1e-10 {
                    out.push((up, RowKey::Cone(t as u32, i as u32, true)));
                }
                if low > 1e-10 {
                    out.push((low, RowKey::Cone(t as u32, i as u32, false)));
                }
            }
        }
        out
    }
}

/// Extreme point of the admissible set in direction `objective`, by constraint
/// generation (`active` holds the rows in the LP and grows); `None` when the set is
/// empty.
fn extreme(
    data: &Data,
    sigma: f64,
    objective: &[f64],
    half_width: f64,
    active: &mut Vec<RowKey>,
    in_active: &mut HashSet<RowKey>,
) -> Result<Option<Vec<f64>>, Error> {
    let d = data.d;
    let batch = 8 * d + 16;
    for _round in 0..200 {
        let mut rows: Vec<Row> = active.iter().map(|&k| data.row(k, sigma)).collect();
        for i in 0..d {
            rows.push((vec![(i, 1.0)], half_width));
            rows.push((vec![(i, -1.0)], half_width));
        }
        // Loose bounds on mu keep the LP bounded when few rows involve it.
        let (upper, lower) = data.mu_bounds;
        rows.push((vec![(d, 1.0)], upper));
        rows.push((vec![(d, -1.0)], -lower));
        let z = match lp::minimise(objective, &rows, d + 1)? {
            LpOutcome::Optimal(z) => z,
            LpOutcome::Infeasible => return Ok(None),
            // Cannot happen with mu bounded and the box; treat as a failed candidate.
            LpOutcome::Unbounded => return Ok(None),
        };
        let mut violated = data.violated(sigma, &z);
        if violated.is_empty() {
            return Ok(Some(z));
        }
        violated.sort_by(|a, b| b.0.total_cmp(&a.0));
        let before = active.len();
        for (_, k) in violated {
            if active.len() - before == batch {
                break;
            }
            if in_active.insert(k) {
                active.push(k);
            }
        }
        if active.len() == before {
            // Every violated row is already in the LP: the violation is the solver's
            // tolerance, and the exact check after pulling inward decides.
            return Ok(Some(z));
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
    // Lambda(c) = min_t v_t - sigma ||x_t - c||_inf, exact; the f64 filter (each value
    // with a rigorous error bound) picks the candidates for the minimum.
    let approx: Vec<(f64, f64)> = exchanges
        .iter()
        .zip(&data.values)
        .map(|(e, v)| {
            let mut dist = 0.0f64;
            let mut size = 0.0f64;
            for (x, ci) in e.point.iter().zip(c) {
                dist = dist.max((x - ci).abs());
                size = size.max(x.abs() + ci.abs());
            }
            let v = *v;
            let value = v - sigma * dist;
            let err = 4.0 * f64::EPSILON * (v.abs() + sigma * size + value.abs()) + 1e-300;
            (value, err)
        })
        .collect();
    let best = approx
        .iter()
        .map(|(v, e)| v + e)
        .fold(f64::INFINITY, f64::min);
    let mut floor: Option<BigRational> = None;
    for (t, e) in exchanges.iter().enumerate() {
        let (value, err) = approx[t];
        if value.is_finite() && err.is_finite() && value - err > best {
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
        .exceeding(c, &floor_exact, Interval::of_exact(&floor_exact))
        .is_none();
    ok.then_some(floor)
}

/// Tries slope `sigma` on the exchanges: two verified admissible centres as far apart
/// as the LPs find, pulled inward until they verify. Returns the two witnesses and
/// eps_cert = sigma ||c_A - c_B||_inf / 2 (rounded down). With `needed_width`, stops
/// at the first coordinate whose extent exceeds it.
fn try_sigma(
    class: &FirstOrderClass,
    data: &Data,
    exchanges: &[Exchange],
    sigma: f64,
    needed_width: Option<f64>,
    warm: &mut Warm,
) -> Result<Option<(FunctionWitness, FunctionWitness, f64)>, Error> {
    let d = class.dim;
    let t_count = exchanges.len();
    let key = sigma.to_bits();
    // Start from the rows kept for this slope, or the piece and cone rows of the lowest
    // values.
    let mut active: Vec<RowKey> = warm
        .rows
        .get(&key)
        .map(|rows| rows.iter().copied().filter(|k| data.has(*k)).collect())
        .unwrap_or_default();
    if active.is_empty() {
        let mut order: Vec<usize> = (0..t_count).collect();
        order.sort_by(|a, b| data.values[*a].total_cmp(&data.values[*b]));
        for &t in order.iter().take(3) {
            for i in 0..d {
                active.push(RowKey::Cone(t as u32, i as u32, false));
                active.push(RowKey::Cone(t as u32, i as u32, true));
            }
        }
        active.extend((0..data.piece_rows.len().min(2 * d + 2)).map(|u| RowKey::Piece(u as u32)));
    }
    let mut in_active: HashSet<RowKey> = active.iter().copied().collect();
    let first = warm.coordinate.get(&key).copied().unwrap_or(0).min(d - 1);
    let mut best: Option<(f64, usize, Vec<f64>, Vec<f64>)> = None;
    let mut empty = false;
    for j in (0..d).map(|k| (first + k) % d) {
        let mut objective = vec![0.0; d + 1];
        objective[j] = 1.0;
        let low = extreme(
            data,
            sigma,
            &objective,
            class.half_width,
            &mut active,
            &mut in_active,
        )?;
        objective[j] = -1.0;
        let high = match low {
            Some(_) => extreme(
                data,
                sigma,
                &objective,
                class.half_width,
                &mut active,
                &mut in_active,
            )?,
            None => None,
        };
        let (Some(low), Some(high)) = (low, high) else {
            empty = true;
            break;
        };
        let width = high[j] - low[j];
        if best.as_ref().is_none_or(|(w, _, _, _)| width > *w) {
            best = Some((width, j, low[..d].to_vec(), high[..d].to_vec()));
        }
        if let (Some(needed), Some((w, _, _, _))) = (needed_width, &best) {
            if *w > needed * 1.01 {
                break;
            }
        }
    }
    warm.rows.insert(key, active);
    if empty {
        return Ok(None);
    }
    let Some((_, coordinate, low, high)) = best else {
        return Ok(None);
    };
    warm.coordinate.insert(key, coordinate);
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
    let pieces: Vec<AffinePiece> = data
        .pieces
        .pieces()
        .iter()
        .map(|p| p.exact().clone())
        .collect();
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

/// One slope on one prefix: a certificate with eps_cert > `threshold` (when given), the
/// separation checked exactly.
fn attempt(
    class: &FirstOrderClass,
    data: &Data,
    exchanges: &[Exchange],
    sigma: f64,
    threshold: Option<f64>,
    first_fit: bool,
    warm: &mut Warm,
) -> Option<Found> {
    let needed = threshold.map(|eps| 2.0 * eps / sigma);
    if needed.is_some_and(|n| n > 2.0 * class.half_width) {
        return None;
    }
    // A slope whose LPs fail numerically is skipped: it only loses a candidate.
    let Ok(Some((a, b, eps_cert))) = try_sigma(
        class,
        data,
        exchanges,
        sigma,
        needed.filter(|_| first_fit),
        warm,
    ) else {
        return None;
    };
    if let Some(eps) = threshold {
        if eps_cert <= eps {
            return None;
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
        if distance * f64_to_rational(sigma) <= two * f64_to_rational(eps) {
            return None;
        }
    }
    Some(Found {
        witnesses: Witnesses {
            prefix: exchanges.len() as u64,
            instances: vec![Witness::Function(a), Witness::Function(b)],
        },
        certified_uncertainty: eps_cert,
    })
}

/// A certificate for exactly these exchanges at the class's eps, if one is found:
/// eps_cert > eps. With `best`, every slope is tried and the largest eps_cert kept.
pub fn certificate_for(
    class: &FirstOrderClass,
    exchanges: &[Exchange],
    best: bool,
) -> Result<Option<Found>, Error> {
    let data = Data::new(exchanges, class.dim, class.half_width);
    let mut warm = Warm::default();
    let mut found: Option<Found> = None;
    for sigma in slope_grid(class) {
        let Some(candidate) = attempt(
            class,
            &data,
            exchanges,
            sigma,
            Some(class.eps),
            !best,
            &mut warm,
        ) else {
            continue;
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

/// The largest eps_cert these exchanges certify, whatever the class's eps: the best
/// over sigma = L 2^-j, j = 0, 1, ..., stopping once sigma R (an upper bound on what a
/// smaller slope can certify, since the centres lie in X) is below the best found. The
/// two witnesses returned have disjoint eps-solution sets for every eps below the
/// reported eps_cert (docs/theory.md §2.2; the audit of `naysayer check` reports this).
/// `None` when no slope yields two verified centres.
pub fn best_certificate(
    class: &FirstOrderClass,
    exchanges: &[Exchange],
) -> Result<Option<Found>, Error> {
    let data = Data::new(exchanges, class.dim, class.half_width);
    let mut warm = Warm::default();
    let mut found: Option<Found> = None;
    let mut sigma = class.lipschitz;
    for _ in 0..200 {
        let bound = sigma * class.half_width;
        if found
            .as_ref()
            .is_some_and(|f| f.certified_uncertainty >= bound)
            || bound == 0.0
        {
            break;
        }
        if let Some(candidate) = attempt(class, &data, exchanges, sigma, None, false, &mut warm) {
            if found
                .as_ref()
                .is_none_or(|f| candidate.certified_uncertainty > f.certified_uncertainty)
            {
                found = Some(candidate);
            }
        }
        sigma *= 0.5;
    }
    Ok(found)
}

/// The longest prefix of `exchanges` with a certificate at the class's eps, with the
/// best eps_cert found for it.
///
/// Existence is monotone in the prefix for each slope (a longer prefix only adds
/// constraints), so the search runs slope by slope: a slope is first tried at one more
/// answer than the best prefix so far, and only when it succeeds is its own longest
/// prefix found by binary search. LP rows are kept per slope across prefixes (warm
/// start), and every certificate is verified exactly before it counts.
pub fn longest_certificate(
    class: &FirstOrderClass,
    exchanges: &[Exchange],
) -> Result<Option<Found>, Error> {
    if certificate_for(class, &[], false)?.is_none() {
        return Ok(None);
    }
    let total = exchanges.len();
    let mut warm = Warm::default();
    let works = |t: usize, sigma: f64, warm: &mut Warm| -> bool {
        let data = Data::new(&exchanges[..t], class.dim, class.half_width);
        attempt(
            class,
            &data,
            &exchanges[..t],
            sigma,
            Some(class.eps),
            true,
            warm,
        )
        .is_some()
    };
    let mut lo = 0usize;
    for sigma in slope_grid(class) {
        if lo == total {
            break;
        }
        if !works(lo + 1, sigma, &mut warm) {
            continue;
        }
        // Invariant: this slope certifies prefix `a`, and not prefix `b` (b = total + 1
        // until the whole transcript is tried).
        let (mut a, mut b) = (lo + 1, total + 1);
        if a < total && works(total, sigma, &mut warm) {
            a = total;
        }
        while b - a > 1 && a < total {
            let mid = a + (b - a) / 2;
            if works(mid, sigma, &mut warm) {
                a = mid;
            } else {
                b = mid;
            }
        }
        lo = a;
    }
    // The exhaustive pass can fail numerically where the first-fit pass succeeded; keep
    // the first-fit certificate then.
    match certificate_for(class, &exchanges[..lo], true)? {
        Some(found) => Ok(Some(found)),
        None => certificate_for(class, &exchanges[..lo], false),
    }
}

/// Checks that a transcript is consistent with some convex L-Lipschitz function
/// (docs/theory.md §2.1): every subgradient within L and v_s + g_s.(x_t - x_s) <= v_t for all
/// s, t. Returns the first violating pair `(s, t)` (0-based: the first t, then the first
/// s), exactly decided.
///
/// Answers from the same affine piece are one piece of M(y) = max_s [v_s + g_s.(y -
/// x_s)], so the check is M(x_t) <= v_t over the distinct pieces ([`PieceSet`]: a
/// binary search per coordinate for pieces with one nonzero slope entry), not a loop
/// over all pairs.
pub fn first_inconsistent_pair(exchanges: &[Exchange]) -> Option<(usize, usize)> {
    let mut first_of: HashMap<PieceKey, usize> = HashMap::new();
    let mut distinct: Vec<AffinePiece> = Vec::new();
    let mut origin: Vec<usize> = Vec::new();
    for (s, e) in exchanges.iter().enumerate() {
        let piece = AffinePiece::through(&e.point, &e.value, &e.gradient);
        if let std::collections::hash_map::Entry::Vacant(slot) =
            first_of.entry(PieceKey::of(&piece))
        {
            slot.insert(s);
            distinct.push(piece);
            origin.push(s);
        }
    }
    let set = PieceSet::new(distinct);
    for (t, e) in exchanges.iter().enumerate() {
        let iv = Interval::of_exact(&e.value);
        if set.exceeding(&e.point, &e.value, iv).is_none() {
            continue;
        }
        // The answer's own piece equals v_t at x_t, so it never exceeds: s != t.
        let u = set
            .pieces()
            .iter()
            .position(|p| p.cmp_with(&e.point, &e.value, iv) == std::cmp::Ordering::Greater)?;
        return Some((origin[u], t));
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
