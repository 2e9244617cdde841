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
    /// A verifier for `class`, before the final record is known.
    pub fn for_class(class: LatticeClass) -> LatticeVerifier {
        LatticeVerifier {
            class,
            ending: Ending::BudgetExhausted,
            queries_used: 0,
            certified: false,
            prefix: 0,
            labels: Vec::new(),
            hulls: Vec::new(),
            disjoint: false,
        }
    }

    /// Checks the witnesses' membership in the class and the certificate's claim.
    pub fn new(
        class: LatticeClass,
        final_record: &FinalRecord,
        final_line: u64,
    ) -> Result<LatticeVerifier, Error> {
        let mut verifier = LatticeVerifier::for_class(class);
        verifier.attach(final_record, final_line)?;
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

    /// The checks of one answer that need no witness.
    fn answer_checks(
        &self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        let dim = self.class.query_dim();
        if let Answer::FirstOrder(_) = answer {
            return Err(error(format!(
                "answer {index}: a first-order answer in a separation-oracle transcript"
            )));
        }
        if let Answer::Cut(cut) = answer {
            if !cut.normal.is_well_formed(dim) {
                return Err(error(format!(
                    "answer {index}: the cut normal is malformed (wrong length, zero, or bad axis)"
                )));
            }
            if !excludes(cut, point) {
                return Err(error(format!(
                    "answer {index}: the query lies on the kept side of its own cut (a.x < b)"
                )));
            }
        }
        Ok(())
    }

    /// Every witness agrees with the answer.
    fn agree_checks(
        &self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        if self.hulls.is_empty() {
            return Ok(());
        }
        let x: Vec<BigRational> = match answer {
            Answer::Inside => point.iter().map(|v| f64_to_rational(*v)).collect(),
            _ => Vec::new(),
        };
        for (k, hull) in self.hulls.iter().enumerate() {
            let consistent = match (answer, hull) {
                (Answer::Inside, None) => false,
                (Answer::Inside, Some(h)) => h.contains(&x),
                (Answer::Cut(_), None) => true,
                (Answer::Cut(cut), Some(h)) => h.strictly_inside(cut),
                _ => false,
            };
            if !consistent {
                let what = match answer {
                    Answer::Inside => {
                        "the answer `inside`: the query is neither a generating point nor in \
                         the fibre ball"
                    }
                    _ => "the cut: a generating point or the fibre ball is not strictly inside it",
                };
                return Err(Error::Transcript {
                    line,
                    reason: format!(
                        "answer {index}: witness #{} ({}) contradicts {what}",
                        k + 1,
                        self.labels[k]
                    ),
                });
            }
        }
        Ok(())
    }

    fn judge(&self) -> Outcome {
        match &self.ending {
            Ending::BudgetExhausted => Outcome::BudgetExhausted,
            Ending::Interrupted { .. } => Outcome::Interrupted,
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
    match ax.compare(&Interval::of_exact(&cut.offset)) {
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
    fn attach(&mut self, final_record: &FinalRecord, final_line: u64) -> Result<(), Error> {
        let final_error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        let (prefix, witnesses) = match &final_record.certificate {
            None => (0, &[][..]),
            Some(w) => (w.prefix, &w.instances[..]),
        };
        let points: u64 = witnesses
            .iter()
            .map(|w| match w {
                Witness::LatticeHull(h) => h.points.len() as u64,
                _ => 0,
            })
            .sum();
        let work = points.saturating_mul(self.class.query_dim() as u64);
        if work.saturating_mul(prefix) > MAX_CHECK_WORK {
            return Err(final_error(format!(
                "checking the certificate needs {prefix} answers x {points} generating points \
                 x {} coordinates, more than the limit of {MAX_CHECK_WORK} evaluations",
                self.class.query_dim()
            )));
        }
        let lattice = self.class.lattice_points(CROSS_CHECK_LIMIT);
        let mut hulls = Vec::with_capacity(witnesses.len());
        let mut labels = Vec::with_capacity(witnesses.len());
        for (k, witness) in witnesses.iter().enumerate() {
            let label = format!("witness #{} ({})", k + 1, witness.label());
            labels.push(witness.label());
            match witness {
                Witness::Empty => hulls.push(None),
                Witness::LatticeHull(hull) => {
                    let exact = ExactHull::new(&self.class, hull)
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
        self.ending = final_record.ending.clone();
        self.queries_used = final_record.queries_used;
        self.certified = final_record.certificate.is_some();
        self.prefix = prefix;
        self.labels = labels;
        self.hulls = hulls;
        self.disjoint = self.disjoint_solution_sets();
        if self.certified {
            self.check_claim(final_line)?;
        }
        Ok(())
    }

    fn answer(
        &mut self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        self.answer_checks(line, index, point, answer)
    }

    fn agree(
        &mut self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        self.agree_checks(line, index, point, answer)
    }

    fn agree_reads_point(&self, answer: &Answer) -> bool {
        matches!(answer, Answer::Inside)
    }

    fn finish(&mut self, _final_line: u64) -> Result<Outcome, Error> {
        Ok(self.judge())
    }

    fn bound_certified(&self) -> bool {
        self.certified && self.disjoint
    }
}
