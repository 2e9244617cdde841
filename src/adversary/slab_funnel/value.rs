//! Exact answer values without gcds: every offset of the construction is dyadic (queries
//! are `f64`, centres and half-widths dyadic), so a value lambda_k (beta h_k + t) is a
//! dyadic number times lambda_k = L theta^k. With lambda_k kept as odd numerator over
//! odd denominator times a power of two, and the primes of theta's denominator known,
//! the reduced fraction is built by dividing out those primes only.

use num_bigint::BigInt;
use num_integer::Integer;
use num_rational::BigRational;
use num_traits::{One, ToPrimitive, Zero};

use crate::exact::Exact;

/// An exact dyadic number `mant * 2^exp`.
#[derive(Clone, Debug, PartialEq)]
pub struct Dyadic {
    mant: BigInt,
    exp: i64,
}

impl Dyadic {
    /// The exact value of a finite `f64`.
    pub fn from_f64(x: f64) -> Dyadic {
        let bits = x.to_bits();
        let negative = bits >> 63 == 1;
        let biased = ((bits >> 52) & 0x7ff) as i64;
        let fraction = bits & ((1u64 << 52) - 1);
        let (m, e) = if biased == 0 {
            (fraction, -1074)
        } else {
            (fraction | (1u64 << 52), biased - 1075)
        };
        let mant = BigInt::from(m);
        Dyadic {
            mant: if negative { -mant } else { mant },
            exp: e,
        }
    }

    /// The value of a rational whose denominator is a power of two.
    ///
    /// # Panics
    /// When the denominator is not a power of two (the construction never makes one).
    pub fn from_rational(r: &BigRational) -> Dyadic {
        let denom = r.denom();
        let k = denom.trailing_zeros().unwrap_or(0);
        assert!((denom >> k).is_one(), "a dyadic rational");
        Dyadic {
            mant: r.numer().clone(),
            exp: -(k as i64),
        }
    }

    fn aligned(&self, other: &Dyadic) -> (BigInt, BigInt, i64) {
        let exp = self.exp.min(other.exp);
        let a = &self.mant << ((self.exp - exp) as u64);
        let b = &other.mant << ((other.exp - exp) as u64);
        (a, b, exp)
    }

    /// self + sign * (other - x), exactly.
    pub fn plus_offset(&self, sign: i8, other: &Dyadic, x: f64) -> Dyadic {
        let x = Dyadic::from_f64(x);
        let (m, xm, exp) = other.aligned(&x);
        let diff = Dyadic { mant: m - xm, exp };
        let (a, b, exp) = self.aligned(&diff);
        Dyadic {
            mant: if sign > 0 { a + b } else { a - b },
            exp,
        }
    }
}

/// A positive rational `odd_num / odd_den * 2^two_exp` (both odd, coprime), with the
/// primes that may divide `odd_den`.
#[derive(Clone, Debug)]
pub struct Scale {
    odd_num: BigInt,
    odd_den: BigInt,
    two_exp: i64,
    primes: Vec<u32>,
}

/// The odd prime factors of `n`.
pub fn odd_primes(mut n: u32) -> Vec<u32> {
    let mut out = Vec::new();
    while n % 2 == 0 && n > 0 {
        n /= 2;
    }
    let mut p = 3;
    while p * p <= n {
        if n % p == 0 {
            out.push(p);
            while n % p == 0 {
                n /= p;
            }
        }
        p += 2;
    }
    if n > 1 {
        out.push(n);
    }
    out
}

impl Scale {
    /// The scale of a positive rational whose denominator's odd primes are among `primes`.
    pub fn new(value: &BigRational, primes: &[u32]) -> Scale {
        let split = |n: &BigInt| -> (BigInt, i64) {
            let k = n.trailing_zeros().unwrap_or(0);
            (n >> k, k as i64)
        };
        let (odd_num, num_twos) = split(value.numer());
        let (odd_den, den_twos) = split(value.denom());
        Scale {
            odd_num,
            odd_den,
            two_exp: num_twos - den_twos,
            primes: primes.to_vec(),
        }
    }

    /// The exact product with a dyadic number, as a reduced rational and as [`Exact`].
    pub fn times(&self, d: &Dyadic) -> (BigRational, Exact) {
        if d.mant.is_zero() {
            return (BigRational::zero(), Exact::ZERO);
        }
        let k = d.mant.trailing_zeros().unwrap_or(0);
        let mut mant = &d.mant >> k;
        let mut den = self.odd_den.clone();
        for &p in &self.primes {
            let p = BigInt::from(p);
            while !den.is_one() && den.is_multiple_of(&p) && mant.is_multiple_of(&p) {
                mant /= &p;
                den /= &p;
            }
        }
        let numer = &self.odd_num * mant;
        let exp = self.two_exp + d.exp + k as i64;
        if den.is_one() {
            let exact = dyadic_exact(&numer, exp);
            let value = if exp >= 0 {
                BigRational::from_integer(numer << (exp as u64))
            } else {
                BigRational::new_raw(numer, BigInt::one() << ((-exp) as u64))
            };
            let exact = exact.unwrap_or_else(|| Exact::from_rational(value.clone()));
            return (value, exact);
        }
        let value = if exp >= 0 {
            BigRational::new_raw(numer << (exp as u64), den)
        } else {
            BigRational::new_raw(numer, den << ((-exp) as u64))
        };
        // Not dyadic: no f64 holds it.
        (value.clone(), Exact::Ratio(Box::new(value)))
    }
}

/// `odd * 2^exp` as an `f64` when it is one and lies in the normal range.
fn dyadic_exact(odd: &BigInt, exp: i64) -> Option<Exact> {
    let bits = odd.bits() as i64;
    if bits > 53 || exp < -1022 || exp + bits > 1023 {
        return None;
    }
    let m = odd.to_i64()? as f64; // exact: |odd| < 2^53
    let scale = f64::from_bits(((exp + 1023) as u64) << 52);
    let value = m * scale;
    (value.is_finite() && value.abs() >= f64::MIN_POSITIVE).then_some(Exact::Float(value))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::f64_to_rational;

    #[test]
    fn products_match_big_rational_arithmetic() {
        let primes = odd_primes(7);
        assert_eq!(primes, vec![7]);
        assert_eq!(odd_primes(45), vec![3, 5]);
        let lambdas = [
            BigRational::new(4.into(), 7.into()),
            BigRational::new(16.into(), 49.into()),
            BigRational::new(3.into(), 1.into()),
            BigRational::new(5.into(), 14.into()),
        ];
        let margins = [0.125, 0.5, 3.0, 1e-30];
        let centres = [0.75, -0.3, 0.0, 7.0 / 8.0];
        let queries = [0.8, -0.3, 1e-300, 1.75, 0.0, -2.5e10];
        for lambda in &lambdas {
            let scale = Scale::new(lambda, &primes);
            for &h in &margins {
                for &m in &centres {
                    for &x in &queries {
                        for sign in [1i8, -1] {
                            let d = Dyadic::from_f64(h).plus_offset(sign, &Dyadic::from_f64(m), x);
                            let t = f64_to_rational(m) - f64_to_rational(x);
                            let t = if sign > 0 { t } else { -t };
                            let expected = lambda * (f64_to_rational(h) + t);
                            let (value, exact) = scale.times(&d);
                            assert_eq!(value, expected);
                            assert_eq!(exact, Exact::from_rational(expected.clone()));
                            assert_eq!(
                                format!("{}", value),
                                format!("{}", expected),
                                "canonical form"
                            );
                        }
                    }
                }
            }
        }
        // A product where the dyadic part cancels the 7: (4/7) * (7/8) = 1/2.
        let scale = Scale::new(&lambdas[0], &primes);
        let (value, exact) = scale.times(&Dyadic::from_f64(0.875));
        assert_eq!(value, BigRational::new(1.into(), 2.into()));
        assert_eq!(exact, Exact::Float(0.5));
    }
}
