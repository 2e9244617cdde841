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
//!   B_inf, are pairwise disjoint (||c_A - c_B||_inf > eps/sigma_A + eps/sigma_B), which
//!   certifies the lower bound; or the certificate covers the whole game and the
//!   method's output x has W(x) > floor + eps for some witness, which refutes the output
//!   and certifies no bound.
//!
//! Cost per certified answer and witness: a hash look-up of the answer's piece, O(log P)
//! per coordinate for the pieces with one nonzero slope entry ([`PieceSet`]), the
//! nonzeros of the dense pieces, and O(d) for the cone. Evaluations run on f64
//! intervals first and fall back to exact rational arithmetic only when those cannot
//! decide, so the outcome is always the exact one.

use std::cmp::Ordering;

use num_rational::BigRational;
use num_traits::{Signed, Zero};

use crate::certificate::filter::Interval;
use crate::certificate::pieces::PieceSet;
pub use crate::certificate::pieces::{FilteredPiece, PieceKey};
use crate::certificate::{ClassVerifier, Outcome, MAX_CHECK_WORK};
use crate::class::{FirstOrderClass, LipschitzNorm};
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::{AffinePiece, FunctionWitness, Witness};
use crate::oracle::{Answer, Output};
use crate::transcript::{Ending, FinalRecord};

/// The exact dual norm of `g` compared with `bound`: true when ||g||_* <= bound.
pub fn dual_norm_at_most(g: &[Exact], norm: LipschitzNorm, bound: f64) -> bool {
    let nonzero = || g.iter().filter(|x| **x != Exact::ZERO);
    let limit = Interval::point(bound);
    let filtered = match norm {
        LipschitzNorm::L1 => {
            let mut all = Some(Ordering::Less);
            for x in nonzero() {
                match Interval::of_exact(x).abs().compare(&limit) {
                    Some(Ordering::Greater) => return false,
                    Some(_) => {}
                    None => all = None,
                }
            }
            all
        }
        LipschitzNorm::L2 => nonzero()
            .fold(Interval::point(0.0), |acc, x| {
                acc.plus(Interval::of_exact(x).square())
            })
            .compare(&limit.square()),
        LipschitzNorm::Linf => nonzero()
            .fold(Interval::point(0.0), |acc, x| {
                acc.plus(Interval::of_exact(x).abs())
            })
            .compare(&limit),
    };
    if let Some(order) = filtered {
        return order != Ordering::Greater;
    }
    let bound = f64_to_rational(bound);
    let abs: Vec<BigRational> = nonzero().map(|x| x.to_rational().abs()).collect();
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

/// A canonical text key of a piece (exact values); [`PieceKey`] is the fast form.
pub fn piece_key(piece: &AffinePiece) -> String {
    let mut key = piece.intercept.to_exact_string();
    for a in &piece.slope {
        key.push(',');
        key.push_str(&a.to_exact_string());
    }
    key
}

/// A function witness prepared for checks.
struct Prepared {
    witness: FunctionWitness,
    pieces: PieceSet,
    center: Vec<Interval>,
    floor: Interval,
    slope: Interval,
}

impl Prepared {
    /// floor + sigma ||x - c||_inf compared with `value`, exactly.
    fn cone_cmp(&self, x: &[f64], value: &Exact, value_iv: Interval) -> Ordering {
        let dist = x
            .iter()
            .zip(&self.center)
            .fold(Interval::point(0.0), |m, (xi, ci)| {
                m.max(Interval::point(*xi).minus(*ci).abs())
            });
        let cone = self.floor.plus(self.slope.times(dist));
        if let Some(order) = cone.compare(&value_iv) {
            return order;
        }
        let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
        let w = &self.witness;
        let cone = w.floor.to_rational() + w.slope.to_rational() * w.center_distance(&xr);
        cone.cmp(&value.to_rational())
    }
}

/// Verifies first-order transcripts.
pub struct FirstOrderVerifier {
    class: FirstOrderClass,
    ending: Ending,
    queries_used: u64,
    certified: bool,
    prefix: u64,
    witnesses: Vec<Prepared>,
    separated: bool,
}

impl FirstOrderVerifier {
    /// A verifier for `class`, before the final record is known.
    pub fn for_class(class: FirstOrderClass) -> FirstOrderVerifier {
        FirstOrderVerifier {
            class,
            ending: Ending::BudgetExhausted,
            queries_used: 0,
            certified: false,
            prefix: 0,
            witnesses: Vec::new(),
            separated: false,
        }
    }

    /// Checks the witnesses' membership in the class and the certificate's claim.
    pub fn new(
        class: FirstOrderClass,
        final_record: &FinalRecord,
        final_line: u64,
    ) -> Result<FirstOrderVerifier, Error> {
        let mut verifier = FirstOrderVerifier::for_class(class);
        verifier.attach(final_record, final_line)?;
        Ok(verifier)
    }

    /// Pairwise ||c_A - c_B||_inf > eps/sigma_A + eps/sigma_B, with at least two witnesses.
    fn pairwise_separated(&self) -> bool {
        let n = self.witnesses.len();
        if n < 2 {
            return false;
        }
        let eps = f64_to_rational(self.class.eps);
        for i in 0..n {
            for j in (i + 1)..n {
                let a = &self.witnesses[i].witness;
                let b = &self.witnesses[j].witness;
                let needed = &eps / a.slope.to_rational() + &eps / b.slope.to_rational();
                if center_distance(a, b) <= needed {
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
        let one = BigRational::from_integer(1.into());
        for i in 0..n {
            for j in (i + 1)..n {
                let a = &self.witnesses[i].witness;
                let b = &self.witnesses[j].witness;
                let value = center_distance(a, b)
                    / (&one / a.slope.to_rational() + &one / b.slope.to_rational());
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

/// ||c_A - c_B||_inf, exact.
fn center_distance(a: &FunctionWitness, b: &FunctionWitness) -> BigRational {
    a.center
        .iter()
        .zip(&b.center)
        .map(|(x, y)| (x.to_rational() - y.to_rational()).abs())
        .fold(BigRational::zero(), |m, v| if v > m { v } else { m })
}

/// The largest `f64` at most `value` (saturating at -`f64::MAX`), exactly decided: a
/// certified lower estimate must not round up.
pub fn f64_at_most(value: &BigRational) -> f64 {
    let f = crate::exact::nearest_f64(value);
    if f.is_finite() && f64_to_rational(f) > *value {
        let down = crate::exact::next_down(f);
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
        let inside = match Interval::of_exact(c)
            .abs()
            .compare(&Interval::point(class.half_width))
        {
            Some(order) => order != Ordering::Greater,
            None => c.to_rational().abs() <= r,
        };
        if !inside {
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
    let center_r: OnceCenter<'_> = OnceCenter::new(&w.center);
    let floor_iv = Interval::of_exact(&w.floor);
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
            FilteredPiece::new(piece.clone()).cmp_with(&center_f64, &w.floor, floor_iv)
                == Ordering::Greater
        } else {
            piece.value_at(center_r.get()) > w.floor.to_rational()
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

/// The centre in rationals, converted on first use.
struct OnceCenter<'a> {
    center: &'a [Exact],
    cell: std::cell::OnceCell<Vec<BigRational>>,
}

impl<'a> OnceCenter<'a> {
    fn new(center: &'a [Exact]) -> OnceCenter<'a> {
        OnceCenter {
            center,
            cell: std::cell::OnceCell::new(),
        }
    }

    fn get(&self) -> &[BigRational] {
        self.cell
            .get_or_init(|| self.center.iter().map(Exact::to_rational).collect())
    }
}

impl ClassVerifier for FirstOrderVerifier {
    fn attach(&mut self, final_record: &FinalRecord, final_line: u64) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        let (prefix, instances) = match &final_record.certificate {
            None => (0, &[][..]),
            Some(w) => (w.prefix, &w.instances[..]),
        };
        let mut witnesses = Vec::new();
        for (k, instance) in instances.iter().enumerate() {
            let label = format!("witness #{}", k + 1);
            let Witness::Function(w) = instance else {
                return Err(error(format!(
                    "{label} is a {}, not a function",
                    instance.label()
                )));
            };
            check_function(&self.class, w).map_err(|r| error(format!("{label}: {r}")))?;
            witnesses.push(Prepared {
                pieces: PieceSet::new(w.pieces.clone()),
                center: w.center.iter().map(Interval::of_exact).collect(),
                floor: Interval::of_exact(&w.floor),
                slope: Interval::of_exact(&w.slope),
                witness: w.clone(),
            });
        }
        let dense: u64 = witnesses.iter().map(|w| w.pieces.dense_work()).sum();
        if dense.saturating_mul(prefix) > MAX_CHECK_WORK {
            return Err(error(format!(
                "checking the certificate needs {prefix} answers x {dense} dense piece \
                 entries, more than the limit of {MAX_CHECK_WORK} evaluations"
            )));
        }
        self.ending = final_record.ending.clone();
        self.queries_used = final_record.queries_used;
        self.certified = final_record.certificate.is_some();
        self.prefix = prefix;
        self.witnesses = witnesses;
        self.separated = self.pairwise_separated();
        if self.certified && !self.separated {
            let full = self.prefix == self.queries_used;
            let refuted = match (&self.ending, full) {
                (
                    Ending::Output {
                        output: Output::Point { point },
                    },
                    true,
                ) => self.refuting_witness(point).is_some(),
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
        Ok(())
    }

    fn answer(
        &mut self,
        line: u64,
        index: u64,
        _point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        let Answer::FirstOrder(answer) = answer else {
            return Err(error(format!(
                "answer {index}: a separation answer in a first-order transcript"
            )));
        };
        if answer.subgradient.len() != self.class.dim {
            return Err(error(format!(
                "answer {index}: the subgradient has {} entries, expected {}",
                answer.subgradient.len(),
                self.class.dim
            )));
        }
        if !dual_norm_at_most(&answer.subgradient, self.class.norm, self.class.lipschitz) {
            return Err(error(format!(
                "answer {index}: the subgradient is longer than L = {} in the dual norm",
                self.class.lipschitz
            )));
        }
        Ok(())
    }

    fn agree(&mut self, line: u64, index: u64, x: &[f64], answer: &Answer) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        let Answer::FirstOrder(answer) = answer else {
            return Ok(());
        };
        if self.witnesses.is_empty() {
            return Ok(());
        }
        let own = AffinePiece::through(x, &answer.value, &answer.subgradient);
        let key = PieceKey::of(&own);
        let value = &answer.value;
        let value_iv = Interval::of_exact(value);
        for (k, prepared) in self.witnesses.iter().enumerate() {
            let label = format!("answer {index}: witness #{}", k + 1);
            if !prepared.pieces.contains(&key) {
                return Err(error(format!(
                    "{label} lacks the answer's affine piece, so the answered subgradient is \
                     not shown to be one of the witness"
                )));
            }
            if let Some(p) = prepared.pieces.exceeding(x, value, value_iv) {
                return Err(error(format!(
                    "{label}: its piece {} exceeds the answered value at the query, so the \
                     witness does not reproduce the answer (or the transcript is not \
                     consistent with any convex function)",
                    p + 1
                )));
            }
            if prepared.cone_cmp(x, value, value_iv) == Ordering::Greater {
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
            Ending::Interrupted { .. } => Outcome::Interrupted,
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

    fn bound_certified(&self) -> bool {
        self.certified && self.separated
    }
}
