//! An exact first-order oracle for one explicit function: it answers every query from a
//! [`FunctionWitness`] f(y) = max( max_p [a_p . y + b_p], floor + sigma ||y - c||_inf )
//! (docs/theory.md §2.2), with f(y) and one subgradient, both exact.
//!
//! This is not a resisting oracle: it does not adapt to the method and it claims no
//! lower bound ([`Adversary::witnesses`] is `None`). It turns a saved witness (for
//! example one of a certificate's two functions, or one written by the first-order
//! audit) into a fixed instance that any method can be replayed against
//! (`naysayer replay`), so that a hard instance becomes a regression test; and it gives
//! audits a transcript of a method run on a known function.
//!
//! Answers. The value is the maximum of the terms at y, computed exactly. The
//! subgradient is the gradient of one term that attains the maximum: the first piece
//! (in the witness's order) attaining it, else the cone, whose subgradient at y is
//! sigma sign(y_i - c_i) e_i for the lowest coordinate i with |y_i - c_i| =
//! ||y - c||_inf, and 0 at y = c (0 lies in the cone's subdifferential at its apex, and
//! the subdifferential of a maximum contains that of every term attaining it). Terms are
//! compared in `f64` with a rigorous error bound and decided exactly whenever the bound
//! cannot separate them, so the choice is the exact one and portable.

use num_rational::BigRational;
use num_traits::{Signed, Zero};

use crate::adversary::{Adversary, Undecided};
use crate::certificate::first_order::{check_function, FilteredPiece};
use crate::class::FirstOrderClass;
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::FunctionWitness;
use crate::oracle::{Answer, FirstOrderAnswer};
use crate::transcript::Witnesses;

/// The registered name written into transcripts played against an explicit function.
pub const INSTANCE_NAME: &str = "instance";

/// The exact oracle of one explicit function witness.
#[derive(Clone, Debug)]
pub struct InstanceOracle {
    class: FirstOrderClass,
    witness: FunctionWitness,
    pieces: Vec<FilteredPiece>,
    center_f: Vec<f64>,
    floor_f: f64,
    slope_f: f64,
}

impl InstanceOracle {
    /// An oracle for `witness`, which must belong to `class`: centre in the box,
    /// 0 < sigma <= L, every piece's gradient within L in the class's dual norm, and no
    /// piece above the floor at the centre (so the minimum is `floor`, at the centre).
    pub fn new(class: &FirstOrderClass, witness: FunctionWitness) -> Result<InstanceOracle, Error> {
        check_function(class, &witness).map_err(|reason| Error::InvalidClass {
            reason: format!("the function is not in the class: {reason}"),
        })?;
        Ok(InstanceOracle {
            class: class.clone(),
            pieces: witness
                .pieces
                .iter()
                .cloned()
                .map(FilteredPiece::new)
                .collect(),
            center_f: witness.center.iter().map(Exact::to_f64).collect(),
            floor_f: witness.floor.to_f64(),
            slope_f: witness.slope.to_f64(),
            witness,
        })
    }

    /// The function answered from.
    pub fn witness(&self) -> &FunctionWitness {
        &self.witness
    }

    /// The exact value f(y).
    pub fn value_at(&self, y: &[f64]) -> BigRational {
        let yr: Vec<BigRational> = y.iter().map(|v| f64_to_rational(*v)).collect();
        self.witness.value_at(&yr)
    }

    /// The exact optimality gap f(y) - min f = f(y) - floor (the minimum over R^d, which
    /// the centre attains inside the box).
    pub fn gap_at(&self, y: &[f64]) -> BigRational {
        self.value_at(y) - self.witness.floor.to_rational()
    }

    /// The exact cone term floor + sigma ||y - c||_inf and its lowest maximising
    /// coordinate (`None` at y = c).
    fn cone_at(&self, y: &[f64]) -> (BigRational, Option<(usize, bool)>) {
        let mut best = BigRational::zero();
        let mut arg = None;
        for (i, (c, yi)) in self.witness.center.iter().zip(y).enumerate() {
            let diff = f64_to_rational(*yi) - c.to_rational();
            let abs = diff.abs();
            if abs > best {
                best = abs;
                arg = Some((i, diff.is_positive()));
            }
        }
        (
            self.witness.floor.to_rational() + self.witness.slope.to_rational() * best,
            arg,
        )
    }

    /// The cone term in `f64` with a rigorous error bound.
    fn cone_approx(&self, y: &[f64]) -> (f64, f64) {
        let mut dist = 0.0f64;
        let mut magnitude = 0.0f64;
        for (c, yi) in self.center_f.iter().zip(y) {
            dist = dist.max((yi - c).abs());
            magnitude = magnitude.max(yi.abs() + c.abs());
        }
        let approx = self.floor_f + self.slope_f * dist;
        // The centre and floor may be rounded (one ulp each), the difference, product
        // and sum each add one rounding.
        let error =
            8.0 * f64::EPSILON * (self.floor_f.abs() + self.slope_f.abs() * magnitude) + 1e-300;
        (approx, error)
    }

    /// The exact answer at y: (f(y), the subgradient of the first maximising term).
    pub fn answer_at(&self, y: &[f64]) -> FirstOrderAnswer {
        // The largest value: bracket it in f64, then decide the contenders exactly.
        let (cone_approx, cone_error) = self.cone_approx(y);
        let approx: Vec<f64> = self
            .pieces
            .iter()
            .map(|p| p.approx_at(y).unwrap_or((f64::NAN, f64::INFINITY)))
            .map(|(v, e)| {
                if v.is_finite() {
                    v - e
                } else {
                    f64::NEG_INFINITY
                }
            })
            .collect();
        let lower = approx
            .iter()
            .copied()
            .fold(cone_approx - cone_error, f64::max);
        let (cone_value, cone_arg) = self.cone_at(y);
        let mut best_value = cone_value;
        let mut best_piece: Option<usize> = None;
        let yr: Vec<BigRational> = y.iter().map(|v| f64_to_rational(*v)).collect();
        for (p, piece) in self.pieces.iter().enumerate() {
            let reaches = match piece.approx_at(y) {
                Some((v, e)) => v + e >= lower,
                None => true,
            };
            if !reaches {
                continue;
            }
            let value = piece.exact().value_at(&yr);
            // Pieces before the cone on ties; among pieces the first one wins.
            let better = match best_piece {
                None => value >= best_value,
                Some(_) => value > best_value,
            };
            if better {
                best_value = value;
                best_piece = Some(p);
            }
        }
        let d = y.len();
        let subgradient = match best_piece {
            Some(p) => self.pieces[p].exact().slope.clone(),
            None => {
                let mut g = vec![Exact::ZERO; d];
                if let Some((i, positive)) = cone_arg {
                    let sigma = self.witness.slope.to_rational();
                    g[i] = Exact::from_rational(if positive { sigma } else { -sigma });
                }
                g
            }
        };
        FirstOrderAnswer {
            value: Exact::from_rational(best_value),
            subgradient,
        }
    }
}

impl Adversary for InstanceOracle {
    fn name(&self) -> &str {
        INSTANCE_NAME
    }

    fn answer(&mut self, query: &[f64]) -> Answer {
        Answer::FirstOrder(self.answer_at(query))
    }

    /// `None`: a fixed function claims no lower bound (one function alone cannot show
    /// that an output is uncertain). Audit the transcript instead (`naysayer check`).
    fn witnesses(&self) -> Option<Witnesses> {
        None
    }

    /// log2 of the volume of the box (nothing is hidden from the method).
    fn undecided(&self) -> Undecided {
        let side = 2.0 * self.class.half_width;
        Undecided::Log2Volume(self.class.dim as f64 * side.log2())
    }
}
