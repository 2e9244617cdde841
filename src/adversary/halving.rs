//! The box-halving adversary (docs/theory.md §1.1) for separation-oracle feasibility.
//!
//! State: the alive box B = prod [l_i, u_i] (initially X = [-R, R]^d) and a cut counter
//! k_i per coordinate. For a query x:
//! - x outside B (the lowest index i with x_i < l_i or x_i > u_i): the strict cut
//!   through x parallel to that face, `{y_i > x_i}` or `{y_i < x_i}`. B is unchanged.
//! - x in B (faces included): the coordinate i with the fewest cuts so far (ties: the
//!   longest side, then the lowest index); the cut of `{y_i < x_i}` / `{y_i > x_i}` that
//!   keeps the longer part of [l_i, u_i] (exact tie: keep the lower part); B shrinks to
//!   it and k_i += 1. The answer is never `inside`.
//!
//! Invariants: side_i >= 2R 2^-k_i and k_i <= ceil(T/d); each in-box query keeps at
//! least half of the alive volume. Witnesses while every side exceeds 2 rho: the empty
//! set and the rho-ball at the centre of B; for the promise-feasible class, two disjoint
//! rho-balls along the longest side (needs the longest side > 4 rho). Hence every
//! method needs d*k + 1 queries, k = max{j >= 0 : R 2^-j > rho} (d*k under the
//! promise). All comparisons below are exact on `f64` inputs (see
//! [`crate::exact::cmp_diff`]).

use std::cmp::Ordering;

use crate::adversary::{wrong_family, Adversary, AdversaryInfo, Scope, Undecided};
use crate::class::{Class, FeasibilityClass, Promise};
use crate::exact::{cmp_diff, cmp_sides, Exact};
use crate::instance::Witness;
use crate::oracle::{Answer, Cut, Normal};
use crate::transcript::Witnesses;

/// The box-halving resisting oracle.
#[derive(Clone, Debug)]
pub struct Halving {
    lower: Vec<f64>,
    upper: Vec<f64>,
    cuts: Vec<u32>,
    rho: f64,
    promise: Promise,
    answered: u64,
    /// Whether the witnesses still exist for every answer given so far.
    fits: bool,
    /// The box as it was at the longest certified prefix, once `fits` turned false.
    frozen: Option<(Vec<f64>, Vec<f64>, u64)>,
}

impl Halving {
    /// Starts on X = [-R, R]^d.
    pub fn new(class: &FeasibilityClass) -> Halving {
        let d = class.dim;
        let mut adversary = Halving {
            lower: vec![-class.half_width; d],
            upper: vec![class.half_width; d],
            cuts: vec![0; d],
            rho: class.rho,
            promise: class.promise,
            answered: 0,
            fits: true,
            frozen: None,
        };
        adversary.fits = adversary.box_fits_witnesses();
        if !adversary.fits {
            adversary.frozen = None;
        }
        adversary
    }

    /// The alive box, lower corner.
    pub fn lower(&self) -> &[f64] {
        &self.lower
    }

    /// The alive box, upper corner.
    pub fn upper(&self) -> &[f64] {
        &self.upper
    }

    /// Cuts made so far on each coordinate.
    pub fn cut_counts(&self) -> &[u32] {
        &self.cuts
    }

    fn side_exceeds(&self, i: usize, threshold: f64) -> bool {
        cmp_diff(self.upper[i], self.lower[i], threshold) == Ordering::Greater
    }

    fn box_fits_witnesses(&self) -> bool {
        let two_rho = 2.0 * self.rho;
        let d = self.lower.len();
        if !(0..d).all(|i| self.side_exceeds(i, two_rho)) {
            return false;
        }
        match self.promise {
            Promise::MayBeEmpty => true,
            Promise::Nonempty => (0..d).any(|i| self.side_exceeds(i, 4.0 * self.rho)),
        }
    }

    /// The coordinate to cut for an in-box query: fewest cuts, then longest side, then
    /// lowest index.
    fn chosen_axis(&self) -> usize {
        let mut best = 0;
        for i in 1..self.lower.len() {
            let by_cuts = self.cuts[i].cmp(&self.cuts[best]);
            let better = match by_cuts {
                Ordering::Less => true,
                Ordering::Greater => false,
                Ordering::Equal => {
                    cmp_sides(
                        self.upper[i],
                        self.lower[i],
                        self.upper[best],
                        self.lower[best],
                    ) == Ordering::Greater
                }
            };
            if better {
                best = i;
            }
        }
        best
    }
}

/// Memory ([`crate::memory`]): its box (lower and upper corners, the
/// cut counts, a frozen copy) and the two ball witnesses it hands over, held also by the
/// final record and by the verifier (O(d) in all).
fn memory(class: &Class, _queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    crate::memory::bytes(crate::memory::vectors(6.0, d) + 6.0 * crate::memory::EXACT * d)
}

/// The registry entry (docs/theory.md: see the description).
pub const INFO: AdversaryInfo = AdversaryInfo {
    name: "halving",
    family: "feasibility",
    description: "separation, box: cuts the least-cut axis through the query, keeping \
                  the larger half (forces d*k + 1 queries; theorem, docs/theory.md §1.1)",
    scope: Scope::EveryMethod,
    restriction: None,
    memory,
    memory_note: "its box, O(d)",
    build: |class| match class {
        Class::Feasibility(c) => Ok(Box::new(Halving::new(c))),
        _ => Err(wrong_family("halving", "feasibility")),
    },
};

impl Adversary for Halving {
    fn name(&self) -> &str {
        "halving"
    }

    fn answer(&mut self, x: &[f64]) -> Answer {
        let d = self.lower.len();
        let outside = (0..d).find(|&i| x[i] < self.lower[i] || x[i] > self.upper[i]);
        let cut = if let Some(i) = outside {
            // Strict cut through x parallel to the violated face; B is unchanged.
            let below = x[i] < self.lower[i];
            cut_at(i, x[i], !below)
        } else {
            let i = self.chosen_axis();
            let lower_part_len_vs_upper = cmp_sides(x[i], self.lower[i], self.upper[i], x[i]);
            let keep_lower = lower_part_len_vs_upper != Ordering::Less;
            self.cuts[i] += 1;
            let was_fitting = self.fits;
            let before = was_fitting.then(|| (self.lower[i], self.upper[i]));
            if keep_lower {
                self.upper[i] = x[i];
            } else {
                self.lower[i] = x[i];
            }
            if was_fitting && !self.box_fits_after_change(i) {
                self.fits = false;
                let (l, u) = before.expect("saved while fitting");
                let mut lower = self.lower.clone();
                let mut upper = self.upper.clone();
                lower[i] = l;
                upper[i] = u;
                self.frozen = Some((lower, upper, self.answered));
            }
            cut_at(i, x[i], keep_lower)
        };
        self.answered += 1;
        Answer::Cut(cut)
    }

    fn witnesses(&self) -> Option<Witnesses> {
        let (lower, upper, prefix) = if self.fits {
            (&self.lower, &self.upper, self.answered)
        } else {
            let (l, u, p) = self.frozen.as_ref()?;
            (l, u, *p)
        };
        let center: Vec<Exact> = lower
            .iter()
            .zip(upper)
            .map(|(l, u)| Exact::midpoint(*l, *u))
            .collect();
        let instances = match self.promise {
            Promise::MayBeEmpty => vec![
                Witness::Empty,
                Witness::Ball {
                    center,
                    radius: self.rho,
                },
            ],
            Promise::Nonempty => {
                // Two balls along the longest side j, centred at its quarter points.
                let j = (1..lower.len()).fold(0, |best, i| {
                    if cmp_sides(upper[i], lower[i], upper[best], lower[best]) == Ordering::Greater
                    {
                        i
                    } else {
                        best
                    }
                });
                let quarter = |w_l: u32, w_u: u32| {
                    // (w_l * l + w_u * u) / 4, exact.
                    let l = crate::exact::f64_to_rational(lower[j]);
                    let u = crate::exact::f64_to_rational(upper[j]);
                    Exact::from_rational(
                        (l * num_rational::BigRational::from_integer(w_l.into())
                            + u * num_rational::BigRational::from_integer(w_u.into()))
                            / num_rational::BigRational::from_integer(4.into()),
                    )
                };
                let mut first = center.clone();
                let mut second = center;
                first[j] = quarter(3, 1);
                second[j] = quarter(1, 3);
                vec![
                    Witness::Ball {
                        center: first,
                        radius: self.rho,
                    },
                    Witness::Ball {
                        center: second,
                        radius: self.rho,
                    },
                ]
            }
        };
        Some(Witnesses { prefix, instances })
    }

    fn undecided(&self) -> Undecided {
        let log2_volume = self
            .lower
            .iter()
            .zip(&self.upper)
            .map(|(l, u)| (u - l).log2())
            .sum();
        Undecided::Log2Volume(log2_volume)
    }
}

impl Halving {
    fn box_fits_after_change(&self, i: usize) -> bool {
        if !self.side_exceeds(i, 2.0 * self.rho) {
            return false;
        }
        match self.promise {
            Promise::MayBeEmpty => true,
            Promise::Nonempty => self.box_fits_witnesses(),
        }
    }
}

/// The strict cut `{y_i < t}` (keep_lower) or `{y_i > t}`.
fn cut_at(i: usize, t: f64, keep_lower: bool) -> Cut {
    if keep_lower {
        Cut {
            normal: Normal::axis(i, true),
            offset: Exact::Float(t),
        }
    } else {
        Cut {
            normal: Normal::axis(i, false),
            offset: Exact::Float(-t),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_side_comparison_sees_below_rounding() {
        // 1 - 2^-60 rounds to 1 in f64, but the exact comparison sees it.
        let tiny = 2f64.powi(-60);
        assert_eq!(cmp_diff(1.0, tiny, 1.0), Ordering::Less);
        assert_eq!(cmp_diff(1.0, -tiny, 1.0), Ordering::Greater);
        assert_eq!(cmp_sides(1.0, tiny, 1.0, 0.0), Ordering::Less);
    }

    #[test]
    fn midpoint_queries_cut_round_robin() {
        let class = FeasibilityClass::new(2, 1.0, 0.1, Promise::MayBeEmpty).unwrap();
        let mut adversary = Halving::new(&class);
        // Query the centre: axis 0 (lowest index on ties), keep lower (exact tie).
        let a = adversary.answer(&[0.0, 0.0]);
        assert_eq!(
            a,
            Answer::Cut(Cut {
                normal: Normal::axis(0, true),
                offset: Exact::Float(0.0)
            })
        );
        let a = adversary.answer(&[-0.5, 0.0]);
        assert!(matches!(
            a,
            Answer::Cut(Cut {
                normal: Normal::Axis { axis: 1, .. },
                ..
            })
        ));
        assert_eq!(adversary.cut_counts(), &[1, 1]);
    }
}
