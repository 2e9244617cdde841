//! Exact selection of the largest candidate answer with an `f64` filter: every candidate
//! carries an approximation and a rigorous bound on its error; only when the bounds
//! cannot separate the leaders are exact values computed (never a tolerance).

use std::cmp::Ordering;

use num_rational::BigRational;

use super::Choice;

/// The unit roundoff 2^-53.
pub const U: f64 = f64::EPSILON / 2.0;
/// An absolute pad that covers the rounding of subnormal results.
pub const TINY: f64 = 1e-300;

/// One candidate answer: its value (in some common scale) within `err` of `approx`;
/// with `pair`, the value is exactly pair.0 + pair.1 with pair.0 = fl(pair.0 + pair.1),
/// so two pairs compare exactly.
#[derive(Clone, Copy, Debug)]
pub struct Candidate {
    /// The approximate value.
    pub approx: f64,
    /// A bound on |value - approx| (infinite when unknown).
    pub err: f64,
    /// The exact value as a TwoSum pair, when known.
    pub pair: Option<(f64, f64)>,
    /// The answer it stands for.
    pub choice: Choice,
}

/// (approx, err) with the error padded for its own rounding, or an infinite error when
/// anything overflowed.
pub fn finish(approx: f64, err: f64) -> (f64, f64) {
    let padded = err * (1.0 + 8.0 * U) + TINY;
    if approx.is_finite() && padded.is_finite() {
        (approx, padded)
    } else {
        (0.0, f64::INFINITY)
    }
}

fn cmp_pairs(a: (f64, f64), b: (f64, f64)) -> Ordering {
    let cmp = |x: f64, y: f64| x.partial_cmp(&y).unwrap_or(Ordering::Equal);
    cmp(a.0, b.0).then(cmp(a.1, b.1))
}

/// The largest lower end approx - err over the candidates with a finite error.
fn lower_end(candidates: &[Candidate]) -> f64 {
    candidates
        .iter()
        .filter(|c| c.err.is_finite())
        .map(|c| c.approx - c.err)
        .fold(f64::NEG_INFINITY, f64::max)
}

fn survives(c: &Candidate, lower: f64) -> bool {
    !c.err.is_finite() || c.approx + c.err >= lower
}

/// Exact values computed so far, by candidate index (few: only the filter's leaders).
struct Cache<'a> {
    exact: &'a dyn Fn(&Candidate) -> BigRational,
    known: Vec<(usize, BigRational)>,
}

impl Cache<'_> {
    fn get(&mut self, candidates: &[Candidate], k: usize) -> &BigRational {
        let at = match self.known.iter().position(|(j, _)| *j == k) {
            Some(at) => at,
            None => {
                self.known.push((k, (self.exact)(&candidates[k])));
                self.known.len() - 1
            }
        };
        &self.known[at].1
    }

    /// The exact order of the values of candidates `a` and `b`.
    fn compare(&mut self, candidates: &[Candidate], a: usize, b: usize) -> Ordering {
        if let (Some(pa), Some(pb)) = (candidates[a].pair, candidates[b].pair) {
            return cmp_pairs(pa, pb);
        }
        let va = self.get(candidates, a).clone();
        va.cmp(self.get(candidates, b))
    }
}

/// The first candidate's index among the survivors whose exact value is the largest.
fn best(candidates: &[Candidate], lower: f64, cache: &mut Cache<'_>) -> usize {
    let mut best: Option<usize> = None;
    for k in 0..candidates.len() {
        if !survives(&candidates[k], lower) {
            continue;
        }
        best = match best {
            None => Some(k),
            Some(b) if cache.compare(candidates, k, b) == Ordering::Greater => Some(k),
            keep => keep,
        };
    }
    best.expect("at least one candidate")
}

/// The index of the first candidate (in slice order) whose exact value is the largest.
pub fn argmax(candidates: &[Candidate], exact: impl Fn(&Candidate) -> BigRational) -> usize {
    let lower = lower_end(candidates);
    let mut cache = Cache {
        exact: &exact,
        known: Vec::new(),
    };
    best(candidates, lower, &mut cache)
}

/// Every candidate whose exact value is the largest, in slice order.
pub fn maximisers(
    candidates: &[Candidate],
    exact: impl Fn(&Candidate) -> BigRational,
) -> Vec<Choice> {
    let lower = lower_end(candidates);
    let mut cache = Cache {
        exact: &exact,
        known: Vec::new(),
    };
    let top = best(candidates, lower, &mut cache);
    (0..candidates.len())
        .filter(|&k| {
            survives(&candidates[k], lower) && cache.compare(candidates, k, top) == Ordering::Equal
        })
        .map(|k| candidates[k].choice)
        .collect()
}
