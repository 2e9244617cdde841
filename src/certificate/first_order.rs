//! Exact verification of first-order certificates (docs/theory.md §2.1, §2.2).
//!
//! Witnesses are max-of-affine-plus-cone functions ([`FunctionWitness`]). For each
//! witness W the verifier checks, exactly:
//! - class membership: the centre lies in X, 0 < slope <= L, every piece's gradient has
//!   dual norm at most L (so W is L-Lipschitz in the class's norm), and every piece is at
//!   most `floor` at the centre (so min_X W = floor, attained at the centre);
//! - agreement with every answer (x_t, v_t, g_t) of the certified prefix: the answer's
//!   own affine piece y -> v_t + g_t.(y - x_t) is one of W's pieces (so g_t is a
//!   subgradient of W at x_t once W(x_t) = v_t), and W(x_t) <= v_t (every piece and the
//!   cone at x_t);
//! - the claim: the witnesses' eps-solution sets, which lie in c_W + (eps / sigma_W)
//!   B_inf, are pairwise disjoint (||c_A - c_B||_inf > eps/sigma_A + eps/sigma_B), or the
//!   certificate covers the whole game and the method's output x has W(x) > floor + eps
//!   for some witness.
//!
//! Evaluations first run in `f64` with a rigorous rounding-error bound; only when the
//! bound cannot decide does the check fall back to exact rational arithmetic, so the
//! outcome is always the exact one.

use std::collections::HashMap;

use num_rational::BigRational;
use num_traits::{Signed, Zero};

use crate::certificate::{ClassVerifier, Outcome};
use crate::class::{FirstOrderClass, LipschitzNorm};
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::{AffinePiece, FunctionWitness, Witness};
use crate::oracle::{Answer, Output};
use crate::transcript::QueryRecord;
use crate::transcript::{Ending, FinalRecord};

/// A piece prepared for filtered evaluation.
#[derive(Clone, Debug)]
pub struct FilteredPiece {
    exact: AffinePiece,
    terms: Vec<(usize, f64)>,
    intercept: f64,
}

impl FilteredPiece {
    /// Prepares a piece.
    pub fn new(piece: AffinePiece) -> FilteredPiece {
        let terms = piece
            .slope
            .iter()
            .enumerate()
            .filter(|(_, a)| **a != Exact::ZERO)
            .map(|(i, a)| (i, a.to_f64()))
            .collect();
        FilteredPiece {
            intercept: piece.intercept.to_f64(),
            terms,
            exact: piece,
        }
    }

    /// The exact piece.
    pub fn exact(&self) -> &AffinePiece {
        &self.exact
    }

    /// The piece's value at `x` in `f64` and a rigorous bound on its error; `None` when
    /// the sum overflows.
    pub fn approx_at(&self, x: &[f64]) -> Option<(f64, f64)> {
        let mut approx = self.intercept;
        let mut magnitude = self.intercept.abs();
        for (i, a) in &self.terms {
            let t = a * x[*i];
            approx += t;
            magnitude += t.abs();
        }
        let n = self.terms.len() as f64;
        let err = (n + 4.0) * f64::EPSILON * magnitude + (n + 2.0) * 1e-300;
        (approx.is_finite() && err.is_finite()).then_some((approx, err))
    }

    /// Compares the piece's value at `x` with `value`, exactly (`x` as f64 and, lazily,
    /// as rationals).
    pub fn cmp_at(&self, x: &[f64], value: &Exact) -> std::cmp::Ordering {
        let mut approx = self.intercept;
        let mut magnitude = self.intercept.abs();
        for (i, a) in &self.terms {
            let t = a * x[*i];
            approx += t;
            magnitude += t.abs();
        }
        let v = value.to_f64();
        let n = self.terms.len() as f64;
        let err = (n + 4.0) * f64::EPSILON * magnitude + (n + 2.0) * 1e-300;
        let err_v = f64::EPSILON * v.abs() + 1e-300;
        if approx.is_finite() && magnitude.is_finite() {
            if approx + err < v - err_v {
                return std::cmp::Ordering::Less;
            }
            if approx - err > v + err_v {
                return std::cmp::Ordering::Greater;
            }
        }
        let xr: Vec<BigRational> = x.iter().map(|xi| f64_to_rational(*xi)).collect();
        self.exact.value_at(&xr).cmp(&value.to_rational())
    }
}

/// The exact dual norm of `g` compared with `bound`: true when ||g||_* <= bound.
pub fn dual_norm_at_most(g: &[Exact], norm: LipschitzNorm, bound: f64) -> bool {
    let bound = f64_to_rational(bound);
    let abs: Vec<BigRational> = g
        .iter()
        .filter(|x| **x != Exact::ZERO)
        .map(|x| x.to_rational().abs())
        .collect();
    match norm {
        // Lipschitz in l1: subgradients bounded in l_inf.
        LipschitzNorm::L1 => abs.iter().all(|a| *a <= bound),
        LipschitzNorm::L2 => {
            let sum: BigRational = abs.iter().map(|a| a * a).sum();
            sum <= &bound * &bound
        }
        // Lipschitz in l_inf: subgradients bounded in l1.
        LipschitzNorm::Linf => abs.iter().sum::<BigRational>() <= bound,
    }
}

/// A function witness prepared for checks.
struct Prepared {
    witness: FunctionWitness,
    pieces: Vec<FilteredPiece>,
    keys: HashMap<String, usize>,
}

/// A canonical text key of a piece (exact values).
pub fn piece_key(piece: &AffinePiece) -> String {
    let mut key = piece.intercept.to_exact_string();
    for a in &piece.slope {
        key.push(',');
        key.push_str(&a.to_exact_string());
    }
    key
}

/// Verifies first-order transcripts.
pub struct FirstOrderVerifier {
    class: FirstOrderClass,
    ending: Ending,
    queries_used: u64,
    certified: bool,
    prefix: u64,
    witnesses: Vec<Prepared>,
}

impl FirstOrderVerifier {
    /// Checks the witnesses' membership in the class and the certificate's claim.
    pub fn new(
        class: FirstOrderClass,
        final_record: &FinalRecord,
        final_line: u64,
    ) -> Result<FirstOrderVerifier, Error> {
        let error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        let (prefix, instances) = match &final_record.certificate {
            None => (0, Vec::new()),
            Some(w) => (w.prefix, w.instances.clone()),
        };
        let mut witnesses = Vec::new();
        for (k, instance) in instances.into_iter().enumerate() {
            let label = format!("witness #{}", k + 1);
            let Witness::Function(w) = instance else {
                return Err(error(format!(
                    "{label} is a {}, not a function",
                    instance.label()
                )));
            };
            check_function(&class, &w).map_err(|r| error(format!("{label}: {r}")))?;
            let pieces: Vec<FilteredPiece> =
                w.pieces.iter().cloned().map(FilteredPiece::new).collect();
            let keys = w
                .pieces
                .iter()
                .enumerate()
                .map(|(i, p)| (piece_key(p), i))
                .collect();
            witnesses.push(Prepared {
                witness: w,
                pieces,
                keys,
            });
        }
        let verifier = FirstOrderVerifier {
            class,
            ending: final_record.ending.clone(),
            queries_used: final_record.queries_used,
            certified: final_record.certificate.is_some(),
            prefix,
            witnesses,
        };
        if verifier.certified && !verifier.separated() {
            let full = verifier.prefix == verifier.queries_used;
            let refuted = match (&verifier.ending, full) {
                (
                    Ending::Output {
                        output: Output::Point { point },
                    },
                    true,
                ) => verifier.refuting_witness(point).is_some(),
                _ => false,
            };
            if !refuted {
                return Err(error(
                    "the witnesses' eps-solution sets are not pairwise disjoint (centres too \
                     close for their cone slopes) and no witness refutes the output"
                        .into(),
                ));
            }
        }
        Ok(verifier)
    }

    /// Pairwise ||c_A - c_B||_inf > eps/sigma_A + eps/sigma_B, with at least two witnesses.
    fn separated(&self) -> bool {
        let n = self.witnesses.len();
        if n < 2 {
            return false;
        }
        let eps = f64_to_rational(self.class.eps);
        for i in 0..n {
            for j in (i + 1)..n {
                let a = &self.witnesses[i].witness;
                let b = &self.witnesses[j].witness;
                let distance = a
                    .center
                    .iter()
                    .zip(&b.center)
                    .map(|(x, y)| (x.to_rational() - y.to_rational()).abs())
                    .fold(BigRational::zero(), |m, v| if v > m { v } else { m });
                let needed = &eps / a.slope.to_rational() + &eps / b.slope.to_rational();
                if distance <= needed {
                    return false;
                }
            }
        }
        true
    }

    /// A witness W with W(x) > min W + eps.
    fn refuting_witness(&self, x: &[f64]) -> Option<usize> {
        let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
        let eps = f64_to_rational(self.class.eps);
        self.witnesses
            .iter()
            .position(|p| p.witness.value_at(&xr) > p.witness.floor.to_rational() + &eps)
    }

    /// The largest eps these witnesses certify: min over pairs of
    /// ||c_A - c_B||_inf / (1/sigma_A + 1/sigma_B) (docs/theory.md §2.2); `None` with fewer
    /// than two witnesses.
    pub fn certified_uncertainty(&self) -> Option<f64> {
        let n = self.witnesses.len();
        if n < 2 {
            return None;
        }
        let mut best: Option<BigRational> = None;
        for i in 0..n {
            for j in (i + 1)..n {
                let a = &self.witnesses[i].witness;
                let b = &self.witnesses[j].witness;
                let distance = a
                    .center
                    .iter()
                    .zip(&b.center)
                    .map(|(x, y)| (x.to_rational() - y.to_rational()).abs())
                    .fold(BigRational::zero(), |m, v| if v > m { v } else { m });
                let one = BigRational::from_integer(1.into());
                let value =
                    distance / (&one / a.slope.to_rational() + &one / b.slope.to_rational());
                best = Some(match best {
                    Some(m) if m < value => m,
                    _ => value,
                });
            }
        }
        // Rounded down, so that every eps below the reported figure is certified.
        best.map(|b| f64_at_most(&b))
    }
}

/// The largest `f64` at most `value` (saturating at -`f64::MAX`), exactly decided: a
/// certified lower estimate must not round up.
pub fn f64_at_most(value: &BigRational) -> f64 {
    let f = crate::exact::nearest_f64(value);
    if f.is_finite() && f64_to_rational(f) > *value {
        let down = if f == 0.0 {
            -f64::from_bits(1)
        } else if f > 0.0 {
            f64::from_bits(f.to_bits() - 1)
        } else {
            f64::from_bits(f.to_bits() + 1)
        };
        if down.is_finite() {
            return down;
        }
    }
    f
}

/// Class membership of a function witness: centre in X, 0 < slope <= L, every piece's
/// gradient within L in the class's dual norm, no piece above the floor at the centre
/// (so the minimum is the floor, at the centre). `Err` says what fails.
pub fn check_function(class: &FirstOrderClass, w: &FunctionWitness) -> Result<(), String> {
    let d = class.dim;
    if w.center.len() != d {
        return Err(format!(
            "centre has {} coordinates, expected {d}",
            w.center.len()
        ));
    }
    let r = f64_to_rational(class.half_width);
    for (i, c) in w.center.iter().enumerate() {
        if c.to_rational().abs() > r {
            return Err(format!("the centre leaves the box in coordinate {i}"));
        }
    }
    let slope = w.slope.to_rational();
    if !slope.is_positive() || slope > f64_to_rational(class.lipschitz) {
        return Err(format!(
            "cone slope {} must lie in (0, L = {}]",
            w.slope, class.lipschitz
        ));
    }
    let center_f64: Vec<f64> = w.center.iter().map(Exact::to_f64).collect();
    let center_exact = w.center.iter().all(Exact::is_f64);
    let center_r: Vec<BigRational> = w.center.iter().map(Exact::to_rational).collect();
    for (k, piece) in w.pieces.iter().enumerate() {
        if piece.slope.len() != d {
            return Err(format!(
                "piece {} has {} slope entries",
                k + 1,
                piece.slope.len()
            ));
        }
        if !dual_norm_at_most(&piece.slope, class.norm, class.lipschitz) {
            return Err(format!(
                "piece {} has a gradient longer than L = {} in the dual norm",
                k + 1,
                class.lipschitz
            ));
        }
        let above = if center_exact {
            FilteredPiece::new(piece.clone()).cmp_at(&center_f64, &w.floor)
                == std::cmp::Ordering::Greater
        } else {
            piece.value_at(&center_r) > w.floor.to_rational()
        };
        if above {
            return Err(format!(
                "piece {} exceeds the floor at the centre, so the minimum is not at the centre",
                k + 1
            ));
        }
    }
    Ok(())
}

impl ClassVerifier for FirstOrderVerifier {
    fn query(&mut self, line: u64, record: &QueryRecord, in_prefix: bool) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        let Answer::FirstOrder(answer) = &record.answer else {
            return Err(error(format!(
                "answer {}: a separation answer in a first-order transcript",
                record.index
            )));
        };
        if answer.subgradient.len() != self.class.dim {
            return Err(error(format!(
                "answer {}: the subgradient has {} entries, expected {}",
                record.index,
                answer.subgradient.len(),
                self.class.dim
            )));
        }
        if !dual_norm_at_most(&answer.subgradient, self.class.norm, self.class.lipschitz) {
            return Err(error(format!(
                "answer {}: the subgradient is longer than L = {} in the dual norm",
                record.index, self.class.lipschitz
            )));
        }
        if !in_prefix {
            return Ok(());
        }
        let own = AffinePiece::through(&record.point, &answer.value, &answer.subgradient);
        let key = piece_key(&own);
        let x = &record.point;
        for (k, prepared) in self.witnesses.iter().enumerate() {
            let label = format!("answer {}: witness #{}", record.index, k + 1);
            if !prepared.keys.contains_key(&key) {
                return Err(error(format!(
                    "{label} lacks the answer's affine piece, so the answered subgradient is \
                     not shown to be one of the witness"
                )));
            }
            for (p, piece) in prepared.pieces.iter().enumerate() {
                if piece.cmp_at(x, &answer.value) == std::cmp::Ordering::Greater {
                    return Err(error(format!(
                        "{label}: its piece {} exceeds the answered value at the query, so the \
                         witness does not reproduce the answer (or the transcript is not \
                         consistent with any convex function)",
                        p + 1
                    )));
                }
            }
            let w = &prepared.witness;
            let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
            let cone = w.floor.to_rational() + w.slope.to_rational() * w.center_distance(&xr);
            if cone > answer.value.to_rational() {
                return Err(error(format!(
                    "{label}: its cone exceeds the answered value at the query"
                )));
            }
        }
        Ok(())
    }

    fn finish(&mut self, _final_line: u64) -> Result<Outcome, Error> {
        Ok(match &self.ending {
            Ending::BudgetExhausted => Outcome::BudgetExhausted,
            Ending::MethodFailed { reason } => Outcome::MethodFailed {
                reason: reason.clone(),
            },
            Ending::Output {
                output: Output::Empty,
            } => Outcome::MethodFailed {
                reason: "an optimization method must output a point, not \"empty\"".into(),
            },
            Ending::Output {
                output: Output::Point { point },
            } => {
                let full = self.certified && self.prefix == self.queries_used;
                match (full, self.refuting_witness(point)) {
                    (true, Some(k)) => Outcome::OutputRefuted { witness: k },
                    _ => Outcome::OutputStands,
                }
            }
        })
    }

    fn certified_uncertainty(&self) -> Option<f64> {
        if self.certified {
            FirstOrderVerifier::certified_uncertainty(self)
        } else {
            None
        }
    }
}
