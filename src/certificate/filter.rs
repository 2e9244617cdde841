//! Floating-point filters for the exact verifier: f64 intervals that are guaranteed to
//! contain the exact value, so that a comparison they decide is decided exactly, and
//! only the undecided ones fall back to rational arithmetic. Never a tolerance: an
//! interval either proves the answer or says "undecided".
//!
//! Every operation rounds to nearest and then widens the result by one unit in the last
//! place each way; since round to nearest is within half a unit of the exact result
//! (also on underflow), the widened interval contains it. Overflow gives infinite ends
//! and NaN undecided comparisons, so such cases fall back to exact arithmetic too.

use std::cmp::Ordering;

use crate::exact::{nearest_f64, next_down, next_up, Exact};

/// A closed interval `[lo, hi]` containing an exact real value.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Interval {
    /// Lower end.
    pub lo: f64,
    /// Upper end.
    pub hi: f64,
}

/// The interval around a rounded result `x`.
fn widen(x: f64) -> Interval {
    Interval {
        lo: next_down(x),
        hi: next_up(x),
    }
}

impl Interval {
    /// The exact value of a finite `f64`.
    pub fn point(x: f64) -> Interval {
        Interval { lo: x, hi: x }
    }

    /// An interval around an exact number: the point itself for an `f64`, else its
    /// nearest `f64` widened by one unit each way (computed once; callers keep it).
    pub fn of_exact(x: &Exact) -> Interval {
        match x {
            Exact::Float(f) => Interval::point(*f),
            Exact::Ratio(r) => widen(nearest_f64(r)),
        }
    }

    /// True when an end is NaN (nothing is known).
    pub fn is_nan(&self) -> bool {
        self.lo.is_nan() || self.hi.is_nan()
    }

    /// True when the interval is one exact `f64`.
    pub fn is_point(&self) -> bool {
        self.lo == self.hi
    }

    /// The sum.
    pub fn plus(self, other: Interval) -> Interval {
        if self.is_point() && other.is_point() {
            // TwoSum: s + e = a + b exactly.
            let (a, b) = (self.lo, other.lo);
            let s = a + b;
            let bb = s - a;
            let e = (a - (s - bb)) + (b - bb);
            if e == 0.0 && s.is_finite() {
                return Interval::point(s);
            }
            return widen(s);
        }
        Interval {
            lo: next_down(self.lo + other.lo),
            hi: next_up(self.hi + other.hi),
        }
    }

    /// The negation (exact).
    pub fn negated(self) -> Interval {
        Interval {
            lo: -self.hi,
            hi: -self.lo,
        }
    }

    /// The difference.
    pub fn minus(self, other: Interval) -> Interval {
        self.plus(other.negated())
    }

    /// The product.
    pub fn times(self, other: Interval) -> Interval {
        if self.is_point() && other.is_point() {
            if self.lo == 0.0 || other.lo == 0.0 {
                return Interval::point(0.0);
            }
            return widen(self.lo * other.lo);
        }
        let c = [
            self.lo * other.lo,
            self.lo * other.hi,
            self.hi * other.lo,
            self.hi * other.hi,
        ];
        let lo = c.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = c.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        if c.iter().any(|v| v.is_nan()) {
            return Interval {
                lo: f64::NAN,
                hi: f64::NAN,
            };
        }
        Interval {
            lo: next_down(lo),
            hi: next_up(hi),
        }
    }

    /// The square (non-negative).
    pub fn square(self) -> Interval {
        let m = self.times(self);
        if self.lo <= 0.0 && self.hi >= 0.0 {
            Interval { lo: 0.0, hi: m.hi }
        } else {
            Interval {
                lo: m.lo.max(0.0),
                hi: m.hi,
            }
        }
    }

    /// The absolute value.
    pub fn abs(self) -> Interval {
        if self.is_nan() {
            return self;
        }
        if self.lo >= 0.0 {
            self
        } else if self.hi <= 0.0 {
            self.negated()
        } else {
            Interval {
                lo: 0.0,
                hi: self.hi.max(-self.lo),
            }
        }
    }

    /// The larger of two values.
    pub fn max(self, other: Interval) -> Interval {
        if self.is_nan() {
            return self;
        }
        if other.is_nan() {
            return other;
        }
        Interval {
            lo: self.lo.max(other.lo),
            hi: self.hi.max(other.hi),
        }
    }

    /// The quotient by a value known to be positive (`other.lo > 0`); undecided (NaN
    /// ends) otherwise.
    pub fn div_positive(self, other: Interval) -> Interval {
        if other.lo.is_nan() || other.lo <= 0.0 {
            return Interval {
                lo: f64::NAN,
                hi: f64::NAN,
            };
        }
        let lo = if self.lo >= 0.0 {
            self.lo / other.hi
        } else {
            self.lo / other.lo
        };
        let hi = if self.hi >= 0.0 {
            self.hi / other.lo
        } else {
            self.hi / other.hi
        };
        Interval {
            lo: next_down(lo),
            hi: next_up(hi),
        }
    }

    /// The comparison of the exact values when the intervals decide it; `None` when they
    /// overlap (or an end is NaN).
    pub fn compare(&self, other: &Interval) -> Option<Ordering> {
        if self.hi < other.lo {
            Some(Ordering::Less)
        } else if self.lo > other.hi {
            Some(Ordering::Greater)
        } else if self.is_point() && other.is_point() && self.lo == other.lo {
            Some(Ordering::Equal)
        } else {
            None
        }
    }

    /// The sign of the exact value when the interval decides it.
    pub fn sign(&self) -> Option<Ordering> {
        self.compare(&Interval::point(0.0))
    }
}

/// `sum_i a_i x_i` over the listed coordinates, as an interval.
pub fn dot(terms: impl Iterator<Item = (Interval, Interval)>) -> Interval {
    terms.fold(Interval::point(0.0), |acc, (a, x)| acc.plus(a.times(x)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::f64_to_rational;
    use num_rational::BigRational;
    use proptest::prelude::*;

    fn contains(iv: &Interval, exact: &BigRational) -> bool {
        let above_lo = iv.lo == f64::NEG_INFINITY || f64_to_rational(iv.lo) <= *exact;
        let below_hi = iv.hi == f64::INFINITY || *exact <= f64_to_rational(iv.hi);
        !iv.is_nan() && above_lo && below_hi
    }

    proptest! {
        // The widened result contains the exact sum, product and square, for any finite
        // inputs (a property of round to nearest; common practice, no source).
        #[test]
        fn results_contain_the_exact_value(a in -1e200f64..1e200, b in -1e200f64..1e200,
                                           s in -60i32..60) {
            let b = b * 2f64.powi(s);
            let (ra, rb) = (f64_to_rational(a), f64_to_rational(b));
            let (ia, ib) = (Interval::point(a), Interval::point(b));
            prop_assert!(contains(&ia.plus(ib), &(&ra + &rb)));
            prop_assert!(contains(&ia.minus(ib), &(&ra - &rb)));
            prop_assert!(contains(&ia.times(ib), &(&ra * &rb)));
            prop_assert!(contains(&ia.plus(ib).times(ia.minus(ib)), &((&ra + &rb) * (&ra - &rb))));
            prop_assert!(contains(&ia.minus(ib).square(), &((&ra - &rb) * (&ra - &rb))));
        }
    }

    #[test]
    fn tiny_products_and_exact_sums() {
        let tiny = f64::from_bits(1);
        let p = Interval::point(tiny).times(Interval::point(0.5));
        assert!(
            p.lo < 0.0 && p.hi > 0.0,
            "an underflowed product is not zero"
        );
        let s = Interval::point(0.5).plus(Interval::point(0.25));
        assert_eq!(s, Interval::point(0.75));
        assert_eq!(
            Interval::point(1.0).compare(&Interval::point(1.0)),
            Some(Ordering::Equal)
        );
        let big = Interval::point(f64::MAX).plus(Interval::point(f64::MAX));
        assert_eq!(big.compare(&Interval::point(0.0)), Some(Ordering::Greater));
        let nan = Interval::point(f64::MAX)
            .plus(Interval::point(f64::MAX))
            .minus(Interval::point(f64::MAX).plus(Interval::point(f64::MAX)));
        assert_eq!(nan.compare(&Interval::point(0.0)), None);
    }
}
