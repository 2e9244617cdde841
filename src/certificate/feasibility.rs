//! Exact verification of separation-oracle feasibility certificates (docs/theory.md §1):
//! witnesses are the empty set and closed Euclidean balls of radius rho.

use num_rational::BigRational;
use num_traits::{Signed, Zero};

use crate::certificate::{ClassVerifier, Outcome};
use crate::class::{FeasibilityClass, Promise};
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::Witness;
use crate::oracle::{Answer, Cut, Normal, Output};
use crate::transcript::QueryRecord;
use crate::transcript::{Ending, FinalRecord};

/// A ball witness prepared for exact checks.
struct ExactBall {
    center: Vec<BigRational>,
    radius2: BigRational,
}

/// Verifies separation-oracle feasibility transcripts (balls and the empty set as
/// witnesses).
pub struct FeasibilityVerifier {
    class: FeasibilityClass,
    ending: Ending,
    queries_used: u64,
    certified: bool,
    prefix: u64,
    witnesses: Vec<Witness>,
    balls: Vec<Option<ExactBall>>,
}

impl FeasibilityVerifier {
    /// Checks the witnesses' membership in the class and the certificate's claim.
    pub fn new(
        class: FeasibilityClass,
        final_record: &FinalRecord,
        final_line: u64,
    ) -> Result<FeasibilityVerifier, Error> {
        let final_error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        let (prefix, witnesses) = match &final_record.certificate {
            None => (0, Vec::new()),
            Some(w) => (w.prefix, w.instances.clone()),
        };
        let mut balls = Vec::with_capacity(witnesses.len());
        for (k, witness) in witnesses.iter().enumerate() {
            let label = format!("witness #{} ({})", k + 1, witness.label());
            balls.push(
                check_membership(&class, witness)
                    .map_err(|r| final_error(format!("{label}: {r}")))?,
            );
        }
        let verifier = FeasibilityVerifier {
            class,
            ending: final_record.ending.clone(),
            queries_used: final_record.queries_used,
            certified: final_record.certificate.is_some(),
            prefix,
            witnesses,
            balls,
        };
        if verifier.certified {
            verifier.check_claim(final_line)?;
        }
        Ok(verifier)
    }

    /// The claim: pairwise disjoint solution sets, or the output refuted at full length.
    fn check_claim(&self, final_line: u64) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        if self.disjoint_solution_sets() {
            return Ok(());
        }
        let full = self.prefix == self.queries_used;
        if let (true, Ending::Output { output }) = (full, &self.ending) {
            if self.refuting_witness(output).is_some() {
                return Ok(());
            }
            return Err(error(
                "no witness refutes the method's output and the witnesses' solution sets \
                 are not pairwise disjoint"
                    .into(),
            ));
        }
        Err(error(
            "the witnesses' solution sets are not pairwise disjoint, so they do not show that \
             the method could not have stopped"
                .into(),
        ))
    }

    fn disjoint_solution_sets(&self) -> bool {
        let n = self.witnesses.len();
        if n < 2 {
            return false;
        }
        for i in 0..n {
            for j in (i + 1)..n {
                let disjoint = match (&self.balls[i], &self.balls[j]) {
                    (Some(a), Some(b)) => {
                        // Closed balls of radii r are disjoint iff |ca - cb|^2 > (2r)^2.
                        let dist2: BigRational = a
                            .center
                            .iter()
                            .zip(&b.center)
                            .map(|(x, y)| {
                                let d = x - y;
                                &d * &d
                            })
                            .sum();
                        let four = BigRational::from_integer(4.into());
                        dist2 > &a.radius2 * four
                    }
                    // The empty set's only correct output is "empty"; a ball's are points.
                    (None, Some(_)) | (Some(_), None) => true,
                    (None, None) => false,
                };
                if !disjoint {
                    return false;
                }
            }
        }
        true
    }

    fn refuting_witness(&self, output: &Output) -> Option<usize> {
        match output {
            Output::Empty => self
                .witnesses
                .iter()
                .position(|w| !matches!(w, Witness::Empty)),
            Output::Point { point } => {
                let x: Vec<BigRational> = point.iter().map(|v| f64_to_rational(*v)).collect();
                (0..self.witnesses.len()).find(|&k| match &self.balls[k] {
                    None => true,
                    Some(ball) => !in_ball(ball, &x),
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
        let d = self.class.dim;
        let x: Vec<BigRational> = query.point.iter().map(|v| f64_to_rational(*v)).collect();
        match &query.answer {
            Answer::FirstOrder(_) => {
                return Err(error(format!(
                    "answer {}: a first-order answer in a separation-oracle transcript",
                    query.index
                )))
            }
            Answer::Inside => {}
            Answer::Cut(cut) => {
                if !cut.normal.is_well_formed(d) {
                    return Err(error(format!(
                        "answer {}: the cut normal is malformed (wrong length, zero, or bad axis)",
                        query.index
                    )));
                }
                if !excludes(cut, &query.point, &x) {
                    return Err(error(format!(
                        "answer {}: the query lies on the kept side of its own cut \
                         (a.x < b), so the cut does not separate it",
                        query.index
                    )));
                }
            }
        }
        if !in_prefix {
            return Ok(());
        }
        for (k, witness) in self.witnesses.iter().enumerate() {
            let consistent = match (&query.answer, &self.balls[k]) {
                (Answer::Inside, None) => false,
                (Answer::Inside, Some(ball)) => in_ball(ball, &x),
                (Answer::Cut(_), None) => true,
                (Answer::Cut(cut), Some(ball)) => ball_strictly_inside(ball, cut),
                (Answer::FirstOrder(_), _) => false,
            };
            if !consistent {
                let what = match &query.answer {
                    Answer::Inside => "the answer `inside` but the query is not in it",
                    _ => "the cut but does not lie strictly inside it",
                };
                return Err(error(format!(
                    "answer {}: witness #{} ({}) contradicts {what}",
                    query.index,
                    k + 1,
                    witness.label()
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
            Ending::Output {
                output: Output::Empty,
            } if self.class.promise == Promise::Nonempty => Outcome::EmptyBreaksPromise,
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

impl ClassVerifier for FeasibilityVerifier {
    fn query(&mut self, line: u64, record: &QueryRecord, in_prefix: bool) -> Result<(), Error> {
        self.query_checks(line, record, in_prefix)
    }

    fn finish(&mut self, _final_line: u64) -> Result<Outcome, Error> {
        Ok(self.judge())
    }
}

/// Checks that a witness belongs to the class; returns its exact ball form.
fn check_membership(
    class: &FeasibilityClass,
    witness: &Witness,
) -> Result<Option<ExactBall>, String> {
    match witness {
        Witness::Empty => {
            if class.promise == Promise::Nonempty {
                Err("the class promises a nonempty K, so the empty set is not an instance".into())
            } else {
                Ok(None)
            }
        }
        Witness::Function(_) => Err("a function is not a feasibility instance".into()),
        Witness::LatticeHull(_) => Err("a lattice hull is not a feasibility instance".into()),
        Witness::Ball { center, radius } => {
            if center.len() != class.dim {
                return Err(format!(
                    "centre has {} coordinates, expected {}",
                    center.len(),
                    class.dim
                ));
            }
            if *radius != class.rho {
                return Err(format!(
                    "radius {radius} differs from the class's rho {}",
                    class.rho
                ));
            }
            let r = f64_to_rational(*radius);
            let big_r = f64_to_rational(class.half_width);
            let center: Vec<BigRational> = center.iter().map(Exact::to_rational).collect();
            for (i, c) in center.iter().enumerate() {
                if c - &r < -big_r.clone() || c + &r > big_r {
                    return Err(format!(
                        "the ball leaves the box [-R, R]^d in coordinate {i}"
                    ));
                }
            }
            Ok(Some(ExactBall {
                center,
                radius2: &r * &r,
            }))
        }
    }
}

/// a.x >= b, exactly (`point` and `x` are the same point, as `f64` and as rationals).
fn excludes(cut: &Cut, point: &[f64], x: &[BigRational]) -> bool {
    if let (Normal::Axis { axis, sign }, Exact::Float(b)) = (&cut.normal, &cut.offset) {
        // Negation is exact in f64, so this comparison is exact.
        return f64::from(*sign) * point[*axis] >= *b;
    }
    cut.normal.dot_exact(x) >= cut.offset.to_rational()
}

/// B(c, r) strictly inside {a.y < b}: s = b - a.c > 0 and r^2 ||a||^2 < s^2.
fn ball_strictly_inside(ball: &ExactBall, cut: &Cut) -> bool {
    let s = cut.offset.to_rational() - cut.normal.dot_exact(&ball.center);
    if !s.is_positive() {
        return false;
    }
    &ball.radius2 * cut.normal.norm_squared_exact() < &s * &s
}

/// ||x - c||^2 <= r^2, exactly.
fn in_ball(ball: &ExactBall, x: &[BigRational]) -> bool {
    let mut dist2 = BigRational::zero();
    for (xi, ci) in x.iter().zip(&ball.center) {
        let d = xi - ci;
        dist2 += &d * &d;
        if dist2 > ball.radius2 {
            return false;
        }
    }
    true
}
