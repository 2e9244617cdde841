//! Exact verification of separation-oracle feasibility certificates (docs/theory.md §1):
//! witnesses are the empty set and closed Euclidean balls of radius rho.
//!
//! Cost per answer: the cut's nonzeros for the cut's own check, plus per witness O(1)
//! for an axis cut and O(d) for a dense cut or an `inside` answer. Every comparison is
//! first tried on f64 intervals that contain the exact values ([`super::filter`]); only
//! an undecided one is redone in rational arithmetic, and then only over the
//! coordinates it needs (one for an axis cut), so the outcome is always the exact one.

use std::cell::OnceCell;
use std::cmp::Ordering;

use num_rational::BigRational;
use num_traits::{Signed, Zero};

use crate::certificate::filter::{dot, Interval};
use crate::certificate::{ClassVerifier, Outcome};
use crate::class::{FeasibilityClass, Promise};
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::Witness;
use crate::oracle::{Answer, Cut, Normal, Output};
use crate::transcript::QueryRecord;
use crate::transcript::{Ending, FinalRecord};

/// A ball witness prepared for filtered and exact checks.
struct Ball {
    center: Vec<Exact>,
    approx: Vec<Interval>,
    exact: OnceCell<Vec<BigRational>>,
    radius: f64,
}

impl Ball {
    fn exact_center(&self) -> &[BigRational] {
        self.exact
            .get_or_init(|| self.center.iter().map(Exact::to_rational).collect())
    }

    fn radius2(&self) -> BigRational {
        let r = f64_to_rational(self.radius);
        &r * &r
    }

    /// ||x - c||^2 <= r^2, exactly.
    fn contains(&self, x: &[f64]) -> bool {
        let r2 = Interval::point(self.radius).square();
        let mut dist2 = Interval::point(0.0);
        for (xi, ci) in x.iter().zip(&self.approx) {
            dist2 = dist2.plus(Interval::point(*xi).minus(*ci).square());
            if dist2.lo > r2.hi {
                return false;
            }
        }
        if let Some(order) = dist2.compare(&r2) {
            return order != Ordering::Greater;
        }
        let r2 = self.radius2();
        let mut exact = BigRational::zero();
        for (xi, ci) in x.iter().zip(self.exact_center()) {
            let d = f64_to_rational(*xi) - ci;
            exact += &d * &d;
            if exact > r2 {
                return false;
            }
        }
        true
    }

    /// The ball lies strictly inside the cut `{a.y < b}`: s = b - a.c > 0 and
    /// r^2 ||a||^2 < s^2 (for an axis normal: s > r).
    fn strictly_inside(&self, cut: &PreparedCut<'_>) -> bool {
        let r = self.radius;
        match &cut.cut.normal {
            Normal::Axis { axis, sign } => {
                let c = if *sign > 0 {
                    self.approx[*axis]
                } else {
                    self.approx[*axis].negated()
                };
                match cut.offset.minus(c).compare(&Interval::point(r)) {
                    Some(order) => order == Ordering::Greater,
                    None => {
                        let c = self.center[*axis].to_rational();
                        let c = if *sign > 0 { c } else { -c };
                        cut.cut.offset.to_rational() - c > f64_to_rational(r)
                    }
                }
            }
            Normal::Dense(a) => {
                let ac = dot(a
                    .iter()
                    .zip(&self.approx)
                    .filter(|(ai, _)| **ai != 0.0)
                    .map(|(ai, ci)| (Interval::point(*ai), *ci)));
                let s = cut.offset.minus(ac);
                match s.sign() {
                    Some(Ordering::Less | Ordering::Equal) => return false,
                    Some(Ordering::Greater) => {
                        let lhs = Interval::point(r).square().times(cut.norm2);
                        if let Some(order) = lhs.compare(&s.square()) {
                            return order == Ordering::Less;
                        }
                    }
                    None => {}
                }
                let s =
                    cut.cut.offset.to_rational() - cut.cut.normal.dot_exact(self.exact_center());
                if !s.is_positive() {
                    return false;
                }
                self.radius2() * cut.cut.normal.norm_squared_exact() < &s * &s
            }
        }
    }
}

/// A cut with its filter data, built once per answer.
struct PreparedCut<'a> {
    cut: &'a Cut,
    offset: Interval,
    /// ||a||^2 as an interval (1 for an axis normal).
    norm2: Interval,
}

impl<'a> PreparedCut<'a> {
    fn new(cut: &'a Cut) -> PreparedCut<'a> {
        let norm2 = match &cut.normal {
            Normal::Axis { .. } => Interval::point(1.0),
            Normal::Dense(a) => a
                .iter()
                .filter(|v| **v != 0.0)
                .fold(Interval::point(0.0), |acc, v| {
                    acc.plus(Interval::point(*v).square())
                }),
        };
        PreparedCut {
            cut,
            offset: Interval::of_exact(&cut.offset),
            norm2,
        }
    }

    /// a.x >= b, exactly: the cut excludes its query.
    fn excludes(&self, x: &[f64]) -> bool {
        let ax = match &self.cut.normal {
            Normal::Axis { axis, sign } => Interval::point(f64::from(*sign) * x[*axis]),
            Normal::Dense(a) => dot(a
                .iter()
                .zip(x)
                .filter(|(ai, _)| **ai != 0.0)
                .map(|(ai, xi)| (Interval::point(*ai), Interval::point(*xi)))),
        };
        match ax.compare(&self.offset) {
            Some(order) => order != Ordering::Less,
            None => exact_dot(&self.cut.normal, x) >= self.cut.offset.to_rational(),
        }
    }
}

/// a.x exactly, converting only the coordinates the normal uses.
fn exact_dot(normal: &Normal, x: &[f64]) -> BigRational {
    match normal {
        Normal::Axis { axis, sign } => f64_to_rational(f64::from(*sign) * x[*axis]),
        Normal::Dense(a) => a
            .iter()
            .zip(x)
            .filter(|(ai, _)| **ai != 0.0)
            .map(|(ai, xi)| f64_to_rational(*ai) * f64_to_rational(*xi))
            .sum(),
    }
}

/// Verifies separation-oracle feasibility transcripts (balls and the empty set as
/// witnesses).
pub struct FeasibilityVerifier {
    class: FeasibilityClass,
    ending: Ending,
    queries_used: u64,
    certified: bool,
    prefix: u64,
    labels: Vec<&'static str>,
    /// `None` is the empty set.
    balls: Vec<Option<Ball>>,
    disjoint: bool,
}

impl FeasibilityVerifier {
    /// A verifier for `class`, before the final record is known.
    pub fn for_class(class: FeasibilityClass) -> FeasibilityVerifier {
        FeasibilityVerifier {
            class,
            ending: Ending::BudgetExhausted,
            queries_used: 0,
            certified: false,
            prefix: 0,
            labels: Vec::new(),
            balls: Vec::new(),
            disjoint: false,
        }
    }

    /// Checks the witnesses' membership in the class and the certificate's claim.
    pub fn new(
        class: FeasibilityClass,
        final_record: &FinalRecord,
        final_line: u64,
    ) -> Result<FeasibilityVerifier, Error> {
        let mut verifier = FeasibilityVerifier::for_class(class);
        verifier.attach(final_record, final_line)?;
        Ok(verifier)
    }

    /// True when the certificate covers the whole game and a witness refutes the output.
    fn refutes_at_full_length(&self) -> bool {
        match &self.ending {
            Ending::Output { output } => {
                self.certified
                    && self.prefix == self.queries_used
                    && self.refuting_witness(output).is_some()
            }
            _ => false,
        }
    }

    /// At least two witnesses, pairwise disjoint: closed balls of radius r are disjoint
    /// iff |c_a - c_b|^2 > (2r)^2; the empty set's only correct output is "empty", a
    /// ball's are its points.
    fn disjoint_solution_sets(&self) -> bool {
        let n = self.balls.len();
        if n < 2 {
            return false;
        }
        for i in 0..n {
            for j in (i + 1)..n {
                let disjoint = match (&self.balls[i], &self.balls[j]) {
                    (Some(a), Some(b)) => balls_apart(a, b),
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
            Output::Empty => self.balls.iter().position(Option::is_some),
            Output::Point { point } => self.balls.iter().position(|ball| match ball {
                None => true,
                Some(ball) => !ball.contains(point),
            }),
        }
    }

    /// The checks of one answer that need no witness; returns its prepared cut.
    fn answer_checks<'a>(
        &self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &'a Answer,
    ) -> Result<Option<PreparedCut<'a>>, Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        match answer {
            Answer::FirstOrder(_) => Err(error(format!(
                "answer {index}: a first-order answer in a separation-oracle transcript"
            ))),
            Answer::Inside => Ok(None),
            Answer::Cut(cut) => {
                if !cut.normal.is_well_formed(self.class.dim) {
                    return Err(error(format!(
                        "answer {index}: the cut normal is malformed (wrong length, zero, or bad \
                         axis)"
                    )));
                }
                let prepared = PreparedCut::new(cut);
                if !prepared.excludes(point) {
                    return Err(error(format!(
                        "answer {index}: the query lies on the kept side of its own cut \
                         (a.x < b), so the cut does not separate it"
                    )));
                }
                Ok(Some(prepared))
            }
        }
    }

    /// Every witness agrees with the answer (`cut` is `None` for `inside`).
    fn agree_with(
        &self,
        line: u64,
        index: u64,
        point: &[f64],
        cut: Option<&PreparedCut<'_>>,
    ) -> Result<(), Error> {
        for (k, ball) in self.balls.iter().enumerate() {
            let consistent = match (cut, ball) {
                (None, None) => false,
                (None, Some(ball)) => ball.contains(point),
                (Some(_), None) => true,
                (Some(cut), Some(ball)) => ball.strictly_inside(cut),
            };
            if !consistent {
                let what = match cut {
                    None => "the answer `inside` but the query is not in it",
                    Some(_) => "the cut but does not lie strictly inside it",
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

/// |c_a - c_b|^2 > 4 r^2, exactly.
fn balls_apart(a: &Ball, b: &Ball) -> bool {
    let four_r2 = Interval::point(2.0 * a.radius).square();
    let dist2 = a
        .approx
        .iter()
        .zip(&b.approx)
        .fold(Interval::point(0.0), |acc, (x, y)| {
            acc.plus(x.minus(*y).square())
        });
    if let Some(order) = dist2.compare(&four_r2) {
        return order == Ordering::Greater;
    }
    let exact: BigRational = a
        .exact_center()
        .iter()
        .zip(b.exact_center())
        .map(|(x, y)| {
            let d = x - y;
            &d * &d
        })
        .sum();
    exact > a.radius2() * BigRational::from_integer(4.into())
}

impl ClassVerifier for FeasibilityVerifier {
    fn attach(&mut self, final_record: &FinalRecord, final_line: u64) -> Result<(), Error> {
        let final_error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        let (prefix, witnesses) = match &final_record.certificate {
            None => (0, &[][..]),
            Some(w) => (w.prefix, &w.instances[..]),
        };
        let mut balls = Vec::with_capacity(witnesses.len());
        for (k, witness) in witnesses.iter().enumerate() {
            let label = format!("witness #{} ({})", k + 1, witness.label());
            balls.push(
                check_membership(&self.class, witness)
                    .map_err(|r| final_error(format!("{label}: {r}")))?,
            );
        }
        self.ending = final_record.ending.clone();
        self.queries_used = final_record.queries_used;
        self.certified = final_record.certificate.is_some();
        self.prefix = prefix;
        self.labels = witnesses.iter().map(Witness::label).collect();
        self.balls = balls;
        self.disjoint = self.disjoint_solution_sets();
        if self.certified && !self.disjoint && !self.refutes_at_full_length() {
            return Err(final_error(
                "the witnesses' solution sets are not pairwise disjoint, so they do not show \
                 that the method could not have stopped, and they do not refute the method's \
                 output on the whole game either"
                    .into(),
            ));
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
        self.answer_checks(line, index, point, answer).map(|_| ())
    }

    fn agree(
        &mut self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        let cut = match answer {
            Answer::Cut(cut) => Some(PreparedCut::new(cut)),
            _ => None,
        };
        self.agree_with(line, index, point, cut.as_ref())
    }

    fn agree_reads_point(&self, answer: &Answer) -> bool {
        matches!(answer, Answer::Inside)
    }

    fn query(&mut self, line: u64, record: &QueryRecord, in_prefix: bool) -> Result<(), Error> {
        let cut = self.answer_checks(line, record.index, &record.point, &record.answer)?;
        if in_prefix {
            self.agree_with(line, record.index, &record.point, cut.as_ref())?;
        }
        Ok(())
    }

    fn finish(&mut self, _final_line: u64) -> Result<Outcome, Error> {
        Ok(self.judge())
    }

    fn bound_certified(&self) -> bool {
        self.certified && self.disjoint
    }
}

/// Checks that a witness belongs to the class; returns its prepared ball form (`None`
/// for the empty set).
fn check_membership(class: &FeasibilityClass, witness: &Witness) -> Result<Option<Ball>, String> {
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
            let approx: Vec<Interval> = center.iter().map(Interval::of_exact).collect();
            let r = Interval::point(*radius);
            let big_r = Interval::point(class.half_width);
            for (i, (c, iv)) in center.iter().zip(&approx).enumerate() {
                // -R <= c - r and c + r <= R.
                let low = iv.minus(r).compare(&big_r.negated());
                let high = iv.plus(r).compare(&big_r);
                let inside = match (low, high) {
                    (Some(l), Some(h)) => l != Ordering::Less && h != Ordering::Greater,
                    _ => {
                        let c = c.to_rational();
                        let (r, big_r) =
                            (f64_to_rational(*radius), f64_to_rational(class.half_width));
                        &c - &r >= -big_r.clone() && &c + &r <= big_r
                    }
                };
                if !inside {
                    return Err(format!(
                        "the ball leaves the box [-R, R]^d in coordinate {i}"
                    ));
                }
            }
            Ok(Some(Ball {
                center: center.clone(),
                approx,
                exact: OnceCell::new(),
                radius: *radius,
            }))
        }
    }
}
