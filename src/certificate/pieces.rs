//! Max-of-affine functions M(y) = max_p [a_p . y + b_p] evaluated exactly and fast: the
//! check "M(x) <= v" that the first-order verifier makes for every witness at every
//! certified answer, and that the first-order audit makes for every answer.
//!
//! Pieces are split by shape:
//! - constant pieces (a = 0): only the largest intercept matters;
//! - pieces with one nonzero slope entry, grouped by coordinate i: the upper envelope of
//!   the lines y_i -> a y_i + b (sorted by slope, redundant lines removed; Preparata &
//!   Shamos, Computational Geometry, 1985, on upper envelopes of lines), so that the
//!   largest such piece at x is found by a binary search over the envelope's
//!   breakpoints: O(log P) per coordinate instead of O(P);
//! - dense pieces (two or more nonzero slope entries): each evaluated.
//!
//! Every comparison runs first on f64 intervals ([`super::filter`]) and falls back to
//! rational arithmetic when they cannot decide, so every answer is the exact one.

use std::cell::OnceCell;
use std::cmp::Ordering;
use std::collections::HashMap;

use num_rational::BigRational;

use crate::certificate::filter::Interval;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::AffinePiece;

/// An exact number as a hash key: an `f64` by its bits (with -0 folded into +0), or the
/// reduced rational (which, by the invariant of [`Exact`], is never an `f64`).
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub enum KeyNumber {
    /// An `f64`, by its bits.
    Float(u64),
    /// A rational that is not an `f64`.
    Ratio(BigRational),
}

impl KeyNumber {
    /// The key of an exact number.
    pub fn of(x: &Exact) -> KeyNumber {
        match x {
            Exact::Float(f) => KeyNumber::Float(if *f == 0.0 { 0 } else { f.to_bits() }),
            Exact::Ratio(r) => KeyNumber::Ratio((**r).clone()),
        }
    }
}

/// The exact identity of an affine piece: its nonzero slope entries (coordinate,
/// value) and its intercept. Two pieces are the same function iff their keys are equal.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct PieceKey {
    slope: Vec<(u32, KeyNumber)>,
    intercept: KeyNumber,
}

impl PieceKey {
    /// The key of a piece.
    pub fn of(piece: &AffinePiece) -> PieceKey {
        PieceKey {
            slope: piece
                .slope
                .iter()
                .enumerate()
                .filter(|(_, a)| **a != Exact::ZERO)
                .map(|(i, a)| (i as u32, KeyNumber::of(a)))
                .collect(),
            intercept: KeyNumber::of(&piece.intercept),
        }
    }
}

/// A piece prepared for filtered evaluation.
#[derive(Clone, Debug)]
pub struct FilteredPiece {
    exact: AffinePiece,
    terms: Vec<(usize, Interval)>,
    intercept: Interval,
}

impl FilteredPiece {
    /// Prepares a piece.
    pub fn new(piece: AffinePiece) -> FilteredPiece {
        let terms = piece
            .slope
            .iter()
            .enumerate()
            .filter(|(_, a)| **a != Exact::ZERO)
            .map(|(i, a)| (i, Interval::of_exact(a)))
            .collect();
        FilteredPiece {
            intercept: Interval::of_exact(&piece.intercept),
            terms,
            exact: piece,
        }
    }

    /// The exact piece.
    pub fn exact(&self) -> &AffinePiece {
        &self.exact
    }

    /// The number of nonzero slope entries.
    pub fn nonzeros(&self) -> usize {
        self.terms.len()
    }

    /// An interval containing the piece's value at `x`.
    pub fn interval_at(&self, x: &[f64]) -> Interval {
        self.terms.iter().fold(self.intercept, |acc, (i, a)| {
            acc.plus(a.times(Interval::point(x[*i])))
        })
    }

    /// The piece's value at `x` in `f64` and a bound on its error; `None` when the
    /// evaluation overflows.
    pub fn approx_at(&self, x: &[f64]) -> Option<(f64, f64)> {
        let iv = self.interval_at(x);
        let mid = 0.5 * iv.lo + 0.5 * iv.hi;
        let err = (iv.hi - mid).max(mid - iv.lo);
        // Rounding of `mid` and `err` themselves: one more unit each way.
        let err = crate::exact::next_up(err + f64::EPSILON * mid.abs() + f64::from_bits(1));
        (mid.is_finite() && err.is_finite()).then_some((mid, err))
    }

    /// The exact value at `x`, in rational arithmetic over the nonzero entries.
    pub fn exact_at(&self, x: &[f64]) -> BigRational {
        let mut total = self.exact.intercept.to_rational();
        for (i, _) in &self.terms {
            total += self.exact.slope[*i].to_rational() * f64_to_rational(x[*i]);
        }
        total
    }

    /// Compares the piece's value at `x` with `value`, exactly.
    pub fn cmp_at(&self, x: &[f64], value: &Exact) -> Ordering {
        self.cmp_with(x, value, Interval::of_exact(value))
    }

    /// Compares the piece's value at `x` with `value`, exactly, given an interval
    /// `value_iv` that contains `value` (computed once by the caller).
    pub fn cmp_with(&self, x: &[f64], value: &Exact, value_iv: Interval) -> Ordering {
        if let Some(order) = self.interval_at(x).compare(&value_iv) {
            return order;
        }
        self.exact_at(x).cmp(&value.to_rational())
    }
}

/// A breakpoint of an envelope, between two consecutive lines.
#[derive(Debug)]
struct Breakpoint {
    approx: Interval,
    /// (b_left - b_right) / (a_right - a_left), exact, computed when needed.
    exact: OnceCell<BigRational>,
    left: usize,
    right: usize,
}

/// The upper envelope of the single-coordinate pieces of one coordinate.
#[derive(Debug)]
struct Envelope {
    coordinate: usize,
    /// Piece indices, by increasing slope; each is the maximum on some interval.
    lines: Vec<usize>,
    breakpoints: Vec<Breakpoint>,
}

/// A set of affine pieces with the exact, fast test "is max_p p(x) <= v?".
#[derive(Debug)]
pub struct PieceSet {
    pieces: Vec<FilteredPiece>,
    keys: HashMap<PieceKey, usize>,
    /// The constant piece with the largest intercept.
    constant: Option<usize>,
    envelopes: Vec<Envelope>,
    dense: Vec<usize>,
}

impl PieceSet {
    /// Prepares the pieces (setup O(P log P) comparisons).
    pub fn new(pieces: Vec<AffinePiece>) -> PieceSet {
        let pieces: Vec<FilteredPiece> = pieces.into_iter().map(FilteredPiece::new).collect();
        let mut keys = HashMap::with_capacity(pieces.len());
        let mut constant: Option<usize> = None;
        let mut by_coordinate: HashMap<usize, Vec<usize>> = HashMap::new();
        let mut dense = Vec::new();
        for (p, piece) in pieces.iter().enumerate() {
            keys.entry(PieceKey::of(&piece.exact)).or_insert(p);
            match piece.terms.len() {
                0 => {
                    let higher = constant.is_none_or(|c| {
                        piece.exact.intercept.cmp_exact(&pieces[c].exact.intercept)
                            == Ordering::Greater
                    });
                    if higher {
                        constant = Some(p);
                    }
                }
                1 => by_coordinate.entry(piece.terms[0].0).or_default().push(p),
                _ => dense.push(p),
            }
        }
        let mut coordinates: Vec<usize> = by_coordinate.keys().copied().collect();
        coordinates.sort_unstable();
        let envelopes = coordinates
            .into_iter()
            .map(|i| envelope(&pieces, i, by_coordinate.remove(&i).unwrap_or_default()))
            .collect();
        PieceSet {
            pieces,
            keys,
            constant,
            envelopes,
            dense,
        }
    }

    /// The pieces, in their original order.
    pub fn pieces(&self) -> &[FilteredPiece] {
        &self.pieces
    }

    /// True when the set holds the piece with this key.
    pub fn contains(&self, key: &PieceKey) -> bool {
        self.keys.contains_key(key)
    }

    /// The sum of the nonzero slope entries of the dense pieces (those with two or
    /// more): the per-point work that the envelopes cannot save.
    pub fn dense_work(&self) -> u64 {
        self.dense
            .iter()
            .map(|p| self.pieces[*p].terms.len() as u64)
            .sum()
    }

    /// A piece whose value at `x` exceeds `value` (`value_iv` contains `value`), or
    /// `None` when max_p p(x) <= value; decided exactly.
    pub fn exceeding(&self, x: &[f64], value: &Exact, value_iv: Interval) -> Option<usize> {
        let above = |p: usize| self.pieces[p].cmp_with(x, value, value_iv) == Ordering::Greater;
        if let Some(c) = self.constant {
            if above(c) {
                return Some(c);
            }
        }
        for envelope in &self.envelopes {
            let top = self.top_line(envelope, x[envelope.coordinate]);
            if above(top) {
                return Some(top);
            }
        }
        self.dense.iter().copied().find(|p| above(*p))
    }

    /// The line of the envelope that is largest at y (either one at a breakpoint).
    fn top_line(&self, envelope: &Envelope, y: f64) -> usize {
        // The first breakpoint at or right of y: the line left of it is the top.
        let point = Interval::point(y);
        let at = envelope.breakpoints.partition_point(|b| {
            let order = match point.compare(&b.approx) {
                Some(order) => order,
                None => f64_to_rational(y).cmp(b.exact.get_or_init(|| {
                    crossing(
                        &self.pieces[b.left],
                        &self.pieces[b.right],
                        envelope.coordinate,
                    )
                })),
            };
            // Breakpoints strictly left of y.
            order == Ordering::Greater
        });
        envelope.lines[at]
    }
}

/// (b_l - b_r) / (a_r - a_l) for two lines of coordinate i with a_l < a_r, exact.
fn crossing(left: &FilteredPiece, right: &FilteredPiece, i: usize) -> BigRational {
    let (al, bl) = (
        left.exact.slope[i].to_rational(),
        left.exact.intercept.to_rational(),
    );
    let (ar, br) = (
        right.exact.slope[i].to_rational(),
        right.exact.intercept.to_rational(),
    );
    (bl - br) / (ar - al)
}

/// Compares two exact numbers with their intervals.
fn cmp_exact(a: &Exact, a_iv: Interval, b: &Exact, b_iv: Interval) -> Ordering {
    a_iv.compare(&b_iv).unwrap_or_else(|| a.cmp_exact(b))
}

/// The upper envelope of the lines y -> a_p y + b_p (pieces `members`, all with their
/// one nonzero slope entry at coordinate i).
fn envelope(pieces: &[FilteredPiece], i: usize, mut members: Vec<usize>) -> Envelope {
    let slope = |p: usize| (&pieces[p].exact.slope[i], pieces[p].terms[0].1);
    let intercept = |p: usize| (&pieces[p].exact.intercept, pieces[p].intercept);
    // By slope, then by intercept, largest last; the first index on full ties.
    members.sort_by(|&p, &q| {
        let (ap, ap_iv) = slope(p);
        let (aq, aq_iv) = slope(q);
        let (bp, bp_iv) = intercept(p);
        let (bq, bq_iv) = intercept(q);
        cmp_exact(ap, ap_iv, aq, aq_iv)
            .then_with(|| cmp_exact(bp, bp_iv, bq, bq_iv))
            .then_with(|| q.cmp(&p))
    });
    // Of equal slopes only the last (largest intercept) can be on the envelope.
    let mut lines: Vec<usize> = Vec::with_capacity(members.len());
    for (k, &p) in members.iter().enumerate() {
        if let Some(&next) = members.get(k + 1) {
            let (ap, ap_iv) = slope(p);
            let (an, an_iv) = slope(next);
            if cmp_exact(ap, ap_iv, an, an_iv) == Ordering::Equal {
                continue;
            }
        }
        // Drop the last line while it is nowhere strictly above both neighbours: with
        // slopes a1 < a2 < a3, line 2 is redundant iff x12 >= x23, that is
        // (b1 - b2)(a3 - a2) >= (b2 - b3)(a2 - a1).
        while lines.len() >= 2 {
            let (l1, l2) = (lines[lines.len() - 2], lines[lines.len() - 1]);
            if !redundant(pieces, i, l1, l2, p) {
                break;
            }
            lines.pop();
        }
        lines.push(p);
    }
    let breakpoints = lines
        .windows(2)
        .map(|w| {
            let (l, r) = (&pieces[w[0]], &pieces[w[1]]);
            let approx = l
                .intercept
                .minus(r.intercept)
                .div_positive(r.terms[0].1.minus(l.terms[0].1));
            Breakpoint {
                approx,
                exact: OnceCell::new(),
                left: w[0],
                right: w[1],
            }
        })
        .collect();
    Envelope {
        coordinate: i,
        lines,
        breakpoints,
    }
}

/// Whether the middle line l2 of slopes a1 < a2 < a3 is never strictly the maximum.
fn redundant(pieces: &[FilteredPiece], i: usize, l1: usize, l2: usize, l3: usize) -> bool {
    let (p1, p2, p3) = (&pieces[l1], &pieces[l2], &pieces[l3]);
    let (a1, a2, a3) = (p1.terms[0].1, p2.terms[0].1, p3.terms[0].1);
    let lhs = p1.intercept.minus(p2.intercept).times(a3.minus(a2));
    let rhs = p2.intercept.minus(p3.intercept).times(a2.minus(a1));
    if let Some(order) = lhs.compare(&rhs) {
        return order != Ordering::Less;
    }
    let a = |p: &FilteredPiece| p.exact.slope[i].to_rational();
    let b = |p: &FilteredPiece| p.exact.intercept.to_rational();
    (b(p1) - b(p2)) * (a(p3) - a(p2)) >= (b(p2) - b(p3)) * (a(p2) - a(p1))
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn line(d: usize, i: usize, a: f64, b: f64) -> AffinePiece {
        let mut slope = vec![Exact::ZERO; d];
        slope[i] = Exact::Float(a);
        AffinePiece {
            slope,
            intercept: Exact::Float(b),
        }
    }

    /// max_p p(x) by brute force, exactly.
    fn brute_max(pieces: &[AffinePiece], x: &[f64]) -> Option<BigRational> {
        let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
        pieces.iter().map(|p| p.value_at(&xr)).max()
    }

    proptest! {
        // The envelope's answer equals the brute-force maximum: for the value v = max
        // nothing exceeds, and for anything just below the maximum something does.
        #[test]
        fn envelope_agrees_with_brute_force(
            lines in prop::collection::vec((0usize..3, -4i32..5, -6i32..7, 0usize..2), 1..40),
            x in prop::collection::vec(-8i32..9, 3),
        ) {
            let pieces: Vec<AffinePiece> = lines.iter().map(|&(i, a, b, dense)| {
                let mut p = line(3, i, f64::from(a) / 4.0, f64::from(b) / 2.0);
                if dense == 1 {
                    p.slope[(i + 1) % 3] = Exact::Float(0.5);
                }
                p
            }).collect();
            let x: Vec<f64> = x.iter().map(|v| f64::from(*v) / 4.0).collect();
            let set = PieceSet::new(pieces.clone());
            let max = brute_max(&pieces, &x).unwrap();
            let v = Exact::from_rational(max.clone());
            prop_assert_eq!(set.exceeding(&x, &v, Interval::of_exact(&v)), None);
            let below = Exact::from_rational(max - BigRational::new(1.into(), 1024.into()));
            let p = set.exceeding(&x, &below, Interval::of_exact(&below));
            prop_assert!(p.is_some());
            let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
            prop_assert!(pieces[p.unwrap()].value_at(&xr) > below.to_rational());
        }
    }

    #[test]
    fn keys_identify_pieces_exactly() {
        let a = line(2, 0, 1.0, 0.5);
        let mut b = a.clone();
        b.intercept = Exact::Float(-0.0 + 0.5);
        assert_eq!(PieceKey::of(&a), PieceKey::of(&b));
        b.slope[1] = Exact::Float(-0.0);
        assert_eq!(
            PieceKey::of(&a),
            PieceKey::of(&b),
            "a -0 entry is a zero entry"
        );
        b.intercept = Exact::from_rational(BigRational::new(1.into(), 3.into()));
        assert_ne!(PieceKey::of(&a), PieceKey::of(&b));
    }
}
