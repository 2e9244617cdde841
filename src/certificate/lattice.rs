//! Exact verification of integer and mixed-integer feasibility certificates
//! (docs/theory.md §4): witnesses are the empty set and hulls conv(F cup {v} x B(c, rho))
//! ([`crate::instance::LatticeHull`]).
//!
//! Checked, all in exact rational arithmetic, no tolerance:
//! - every witness is an instance of the class: inside the box, radius rho, and its
//!   mixed-integer points are exactly its fibre ball (none without one), by the
//!   extreme-point argument on the generating points, cross-checked by enumerating the
//!   lattice points of the integer box when there are at most 4096 of them;
//! - every answer of the certified prefix holds for every witness: a cut strictly
//!   contains every generating point and the fibre ball (`a_x.v + a_y.c + rho ||a_y||_2
//!   < b`), and an `inside` answer's query is a generating point or lies in the fibre
//!   ball;
//! - every cut excludes its query (`a.x >= b`);
//! - the claim: the witnesses' correct outputs are pairwise disjoint (this certifies the
//!   lower bound), or the method's output is wrong for one of them at full length (this
//!   refutes the output and certifies no bound). A point output is correct for a
//!   witness only when it is mixed-integer (first n coordinates exactly integral) and
//!   lies in the witness's fibre ball.

use num_rational::BigRational;

use crate::certificate::{ClassVerifier, Outcome, MAX_CHECK_WORK};
use crate::class::lattice::{is_mixed_integer, LatticeClass};
use crate::error::Error;
use crate::exact::f64_to_rational;
use crate::instance::lattice::ExactHull;
use crate::instance::Witness;
use crate::oracle::{Answer, Output};
use crate::transcript::QueryRecord;
use crate::transcript::{Ending, FinalRecord};

/// Most lattice points the enumeration cross-check visits.
pub const CROSS_CHECK_LIMIT: u64 = 4096;

/// Verifies lattice-class transcripts.
pub struct LatticeVerifier {
    class: LatticeClass,
    ending: Ending,
    queries_used: u64,
    certified: bool,
    prefix: u64,
    labels: Vec<&'static str>,
    /// `None` is the empty set.
    hulls: Vec<Option<ExactHull>>,
    disjoint: bool,
}

impl LatticeVerifier {
    /// Checks the witnesses' membership in the class and the certificate's claim.
    pub fn new(
        class: LatticeClass,
        final_record: &FinalRecord,
        final_line: u64,
    ) -> Result<LatticeVerifier, Error> {
        let final_error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        let (prefix, witnesses) = match &final_record.certificate {
            None => (0, Vec::new()),
            Some(w) => (w.prefix, w.instances.clone()),
        };
        let points: u64 = witnesses
            .iter()
            .map(|w| match w {
                Witness::LatticeHull(h) => h.points.len() as u64,
                _ => 0,
            })
            .sum();
        let work = points.saturating_mul(class.query_dim() as u64);
        if work.saturating_mul(prefix) > MAX_CHECK_WORK {
            return Err(final_error(format!(
                "checking the certificate needs {prefix} answers x {points} generating points \
                 x {} coordinates, more than the limit of {MAX_CHECK_WORK} evaluations",
                class.query_dim()
            )));
        }
        let lattice = class.lattice_points(CROSS_CHECK_LIMIT);
        let mut hulls = Vec::with_capacity(witnesses.len());
        let mut labels = Vec::with_capacity(witnesses.len());
        for (k, witness) in witnesses.iter().enumerate() {
            let label = format!("witness #{} ({})", k + 1, witness.label());
            labels.push(witness.label());
            match witness {
                Witness::Empty => hulls.push(None),
                Witness::LatticeHull(hull) => {
                    let exact = ExactHull::new(&class, hull)
                        .map_err(|r| final_error(format!("{label}: {r}")))?;
                    if let Some(points) = &lattice {
                        if let Some(z) = exact.cross_check(points) {
                            return Err(final_error(format!(
                                "{label}: the enumeration cross-check cannot separate the \
                                 lattice point {z:?} from the hull"
                            )));
                        }
                    }
                    hulls.push(Some(exact));
                }
                _ => {
                    return Err(final_error(format!(
                        "{label}: not an instance of a lattice class"
                    )))
                }
            }
        }
        let mut verifier = LatticeVerifier {
            class,
            ending: final_record.ending.clone(),
            queries_used: final_record.queries_used,
            certified: final_record.certificate.is_some(),
            prefix,
            labels,
            hulls,
            disjoint: false,
        };
        verifier.disjoint = verifier.disjoint_solution_sets();
        if verifier.certified {
            verifier.check_claim(final_line)?;
        }
        Ok(verifier)
    }

    fn disjoint_solution_sets(&self) -> bool {
        let m = self.hulls.len();
        if m < 2 {
            return false;
        }
        for i in 0..m {
            for j in (i + 1)..m {
                let disjoint = match (&self.hulls[i], &self.hulls[j]) {
                    (None, None) => false,
                    (None, Some(h)) | (Some(h), None) => h.has_fibre(),
                    (Some(a), Some(b)) => a.solutions_disjoint(b),
                };
                if !disjoint {
                    return false;
                }
            }
        }
        true
    }

    fn check_claim(&self, final_line: u64) -> Result<(), Error> {
        if self.disjoint {
            return Ok(());
        }
        let full = self.prefix == self.queries_used;
        if let (true, Ending::Output { output }) = (full, &self.ending) {
            if self.refuting_witness(output).is_some() {
                return Ok(());
            }
        }
        Err(Error::Transcript {
            line: final_line,
            reason: "the witnesses' correct outputs are not pairwise disjoint and no witness \
                     refutes the method's output at full length"
                .into(),
        })
    }

    fn refuting_witness(&self, output: &Output) -> Option<usize> {
        match output {
            Output::Empty => self
                .hulls
                .iter()
                .position(|h| h.as_ref().is_some_and(ExactHull::has_fibre)),
            Output::Point { point } => {
                let n = self.class.int_dim();
                if point.len() != self.class.query_dim() || !is_mixed_integer(point, n) {
                    return (!self.hulls.is_empty()).then_some(0);
                }
                let x: Vec<BigRational> = point.iter().map(|v| f64_to_rational(*v)).collect();
                self.hulls.iter().position(|h| match h {
                    None => true,
                    Some(h) => !h.fibre_contains(&x),
                })
            }
        }
    }

    fn query_checks(
        &mut self,
        line: u64,
        query: &QueryRecord,
        in_prefix: bool,
    ) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        let dim = self.class.query_dim();
        if let Answer::FirstOrder(_) = &query.answer {
            return Err(error(format!(
                "answer {}: a first-order answer in a separation-oracle transcript",
                query.index
            )));
        }
        if let Answer::Cut(cut) = &query.answer {
            if !cut.normal.is_well_formed(dim) {
                return Err(error(format!(
                    "answer {}: the cut normal is malformed (wrong length, zero, or bad axis)",
                    query.index
                )));
            }
            if !excludes(cut, &query.point) {
                return Err(error(format!(
                    "answer {}: the query lies on the kept side of its own cut (a.x < b)",
                    query.index
                )));
            }
        }
        if !in_prefix || self.hulls.is_empty() {
            return Ok(());
        }
        let x: Vec<BigRational> = query.point.iter().map(|v| f64_to_rational(*v)).collect();
        for (k, hull) in self.hulls.iter().enumerate() {
            let consistent = match (&query.answer, hull) {
                (Answer::Inside, None) => false,
                (Answer::Inside, Some(h)) => h.contains(&x),
                (Answer::Cut(_), None) => true,
                (Answer::Cut(cut), Some(h)) => h.strictly_inside(cut),
                _ => false,
            };
            if !consistent {
                let what = match &query.answer {
                    Answer::Inside => {
                        "the answer `inside`: the query is neither a generating point nor in \
                         the fibre ball"
                    }
                    _ => "the cut: a generating point or the fibre ball is not strictly inside it",
                };
                return Err(error(format!(
                    "answer {}: witness #{} ({}) contradicts {what}",
                    query.index,
                    k + 1,
                    self.labels[k]
                )));
            }
        }
        Ok(())
    }

    fn judge(&self) -> Outcome {
        match &self.ending {
            Ending::BudgetExhausted => Outcome::BudgetExhausted,
            Ending::MethodFailed { reason } => Outcome::MethodFailed {
                reason: reason.clone(),
            },
            Ending::Output { output } => {
                let full = self.certified && self.prefix == self.queries_used;
                match (full, self.refuting_witness(output)) {
                    (true, Some(k)) if matches!(output, Output::Empty) => {
                        Outcome::EmptyRefuted { witness: k }
                    }
                    (true, Some(k)) => Outcome::OutputRefuted { witness: k },
                    _ => Outcome::OutputStands,
                }
            }
        }
    }
}

/// a.x >= b, exactly (f64 intervals first, rationals when they cannot decide).
fn excludes(cut: &crate::oracle::Cut, x: &[f64]) -> bool {
    use crate::certificate::filter::{dot, Interval};
    let ax = dot((0..x.len())
        .map(|i| (cut.normal.get(i), x[i]))
        .filter(|(a, _)| *a != 0.0)
        .map(|(a, xi)| (Interval::point(a), Interval::point(xi))));
    match ax.cmp(&Interval::of_exact(&cut.offset)) {
        Some(order) => order != std::cmp::Ordering::Less,
        None => {
            let exact: BigRational = (0..x.len())
                .map(|i| (cut.normal.get(i), x[i]))
                .filter(|(a, _)| *a != 0.0)
                .map(|(a, xi)| f64_to_rational(a) * f64_to_rational(xi))
                .sum();
            exact >= cut.offset.to_rational()
        }
    }
}

impl ClassVerifier for LatticeVerifier {
    fn query(&mut self, line: u64, record: &QueryRecord, in_prefix: bool) -> Result<(), Error> {
        self.query_checks(line, record, in_prefix)
    }

    fn finish(&mut self, _final_line: u64) -> Result<Outcome, Error> {
        Ok(self.judge())
    }

    fn bound_certified(&self) -> bool {
        self.certified && self.disjoint
    }
}
