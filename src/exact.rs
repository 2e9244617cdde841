//! Exact rational numbers as adversaries compute them and transcripts store them.
//!
//! Queries are `f64`, hence exact dyadic rationals. Numbers an adversary computes
//! (a witness centre, a cut offset, a function value) are exact rationals that `f64`
//! may not hold (docs/theory.md §0). [`Exact`] keeps such a number exactly: as an
//! `f64` when the value is exactly representable (the common, fast case), otherwise
//! as a big rational. On disk an exactly representable value is a plain JSON number;
//! any other value is an object `{"exact": "p/q", "approx": f}` whose `approx` is the
//! nearest `f64` (ties to even), checked on reading.
//!
//! Reading numbers (one reading, the same in `tools/check_certificate.py`):
//! - a plain JSON number is exactly the `f64` it parses to (round to nearest, ties to
//!   even), whatever its spelling: the integer token `9007199254740993` is the `f64`
//!   9007199254740992, here as everywhere else;
//! - `exact` follows one grammar, [`parse_exact_text`]: ASCII, an optional `-`, 1 to
//!   [`MAX_EXACT_DIGITS`] decimal digits, optionally `/` and 1 to [`MAX_EXACT_DIGITS`]
//!   digits of a nonzero denominator; nothing else (no `+`, spaces, `_`, exponents,
//!   decimal points or other scripts' digits). The fraction need not be in lowest terms;
//! - `approx` must be the `f64` nearest to `exact` (ties to even), and the value must
//!   have a finite nearest `f64`: |value| < 2^1024 - 2^970;
//! - the object has exactly the keys `exact` and `approx`, each once.

use std::cmp::Ordering;
use std::fmt;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, Signed, ToPrimitive, Zero};
use serde::de::{self, Deserializer, MapAccess, Visitor};
use serde::ser::{SerializeMap, Serializer};
use serde::{Deserialize, Serialize};

/// An exact rational number: a finite `f64` when representable, else a big rational.
///
/// Invariant: the `Ratio` variant never holds a value that is exactly an `f64`, so
/// equality of representations is equality of values.
#[derive(Clone, Debug, PartialEq)]
pub enum Exact {
    /// A finite `f64`, taken as the exact dyadic rational it denotes.
    Float(f64),
    /// A rational that no finite `f64` equals.
    Ratio(Box<BigRational>),
}

impl Exact {
    /// Zero.
    pub const ZERO: Exact = Exact::Float(0.0);

    /// The exact value of a finite `f64`; `None` for NaN or an infinity.
    pub fn from_f64(value: f64) -> Option<Exact> {
        value.is_finite().then_some(Exact::Float(value))
    }

    /// The exact value of a rational, stored as an `f64` when that is exact.
    pub fn from_rational(value: BigRational) -> Exact {
        if let Some(f) = rational_as_exact_f64(&value) {
            Exact::Float(f)
        } else {
            Exact::Ratio(Box::new(value))
        }
    }

    /// The nearest `f64` (round to nearest, ties to even; saturates to +-MAX).
    pub fn to_f64(&self) -> f64 {
        match self {
            Exact::Float(f) => *f,
            Exact::Ratio(r) => nearest_f64(r),
        }
    }

    /// The value as a big rational.
    pub fn to_rational(&self) -> BigRational {
        match self {
            Exact::Float(f) => f64_to_rational(*f),
            Exact::Ratio(r) => (**r).clone(),
        }
    }

    /// False only for a `Float` holding NaN or an infinity, which breaks the type's
    /// invariant (a rational is always finite).
    pub fn is_finite(&self) -> bool {
        match self {
            Exact::Float(f) => f.is_finite(),
            Exact::Ratio(_) => true,
        }
    }

    /// True when the value is exactly the `f64` returned by [`Exact::to_f64`].
    pub fn is_f64(&self) -> bool {
        matches!(self, Exact::Float(_))
    }

    /// The exact midpoint (a + b) / 2 of two `f64` values.
    pub fn midpoint(a: f64, b: f64) -> Exact {
        // Fast path: a + b exact (TwoSum error zero) and the halving exact (normal).
        let sum = a + b;
        let bb = sum - a;
        let err = (a - (sum - bb)) + (b - bb);
        let half_sum = 0.5 * sum;
        if err == 0.0 && sum.is_finite() && (half_sum == 0.0 || half_sum.is_normal()) {
            return Exact::Float(half_sum);
        }
        let half = f64_to_rational(a) + f64_to_rational(b);
        Exact::from_rational(half / BigRational::from_integer(BigInt::from(2)))
    }

    /// Exact comparison of two values.
    pub fn cmp_exact(&self, other: &Exact) -> Ordering {
        match (self, other) {
            (Exact::Float(a), Exact::Float(b)) => a.partial_cmp(b).expect("finite by invariant"),
            _ => self.to_rational().cmp(&other.to_rational()),
        }
    }

    /// The exact value written as `p/q` (or `p` when it is an integer).
    pub fn to_exact_string(&self) -> String {
        rational_to_string(&self.to_rational())
    }
}

impl fmt::Display for Exact {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Exact::Float(x) => write!(f, "{x}"),
            Exact::Ratio(r) => write!(f, "{} (~{})", rational_to_string(r), nearest_f64(r)),
        }
    }
}

/// The exact rational value of a finite `f64`.
///
/// # Panics
/// Panics on NaN or an infinity; callers validate finiteness first.
pub fn f64_to_rational(value: f64) -> BigRational {
    BigRational::from_float(value).expect("finite f64 has an exact rational value")
}

/// `Some(f)` when the rational equals the finite `f64` `f` exactly.
pub fn rational_as_exact_f64(value: &BigRational) -> Option<f64> {
    let f = nearest_f64(value);
    (f.is_finite() && f64_to_rational(f) == *value).then_some(f)
}

/// The `f64` nearest to a rational, ties to even, saturating at +-`f64::MAX`.
///
/// Computed from the exact quotient with enough bits, then corrected by comparing
/// neighbours exactly, so the result does not depend on a library's rounding.
pub fn nearest_f64(value: &BigRational) -> f64 {
    if value.is_zero() {
        return 0.0;
    }
    let guess = value.to_f64().unwrap_or(if value.is_negative() {
        f64::MIN
    } else {
        f64::MAX
    });
    let guess = if guess.is_finite() {
        guess
    } else if guess > 0.0 {
        f64::MAX
    } else {
        f64::MIN
    };
    if is_nearest(value, guess) {
        return guess;
    }
    // Walk to the best neighbour: the library guess is within one ulp in practice.
    let mut best = guess;
    let mut best_err = (f64_to_rational(best) - value).abs();
    for candidate in [next_down(guess), next_up(guess)] {
        if !candidate.is_finite() {
            continue;
        }
        let err = (f64_to_rational(candidate) - value).abs();
        match err.cmp(&best_err) {
            Ordering::Less => {
                best = candidate;
                best_err = err;
            }
            Ordering::Equal if candidate.to_bits() & 1 == 0 && best.to_bits() & 1 == 1 => {
                best = candidate;
                best_err = err;
            }
            _ => {}
        }
    }
    best
}

/// A finite `f64` as m 2^e with an integer m (its sign included).
fn decode(x: f64) -> (i64, i64) {
    let bits = x.to_bits();
    let exponent = ((bits >> 52) & 0x7ff) as i64;
    let fraction = (bits & ((1u64 << 52) - 1)) as i64;
    let (m, e) = if exponent == 0 {
        (fraction, -1074)
    } else {
        (fraction | (1i64 << 52), exponent - 1075)
    };
    (if x < 0.0 { -m } else { m }, e)
}

/// The midpoint of two finite `f64` values as M 2^E.
fn midpoint_dyadic(a: f64, b: f64) -> (BigInt, i64) {
    let ((ma, ea), (mb, eb)) = (decode(a), decode(b));
    let e = ea.min(eb);
    let m = (BigInt::from(ma) << (ea - e) as u32) + (BigInt::from(mb) << (eb - e) as u32);
    (m, e - 1)
}

/// The comparison of `value` with M 2^E, exactly, without reducing fractions.
fn cmp_dyadic(value: &BigRational, (m, e): &(BigInt, i64)) -> Ordering {
    // value = p / q with q > 0: compare p with M q 2^E.
    let (p, q) = (value.numer(), value.denom());
    let mq = m * q;
    if *e >= 0 {
        p.cmp(&(mq << *e as u32))
    } else {
        (p << (-*e) as u32).cmp(&mq)
    }
}

/// True when the finite `f64` `g` is the nearest to `value` (ties to even; the largest
/// finite `f64` also for every larger value), decided by comparing `value` with the two
/// midpoints around `g` in integer arithmetic.
fn is_nearest(value: &BigRational, g: f64) -> bool {
    let even = g.to_bits() & 1 == 0;
    let ok =
        |order: Ordering, strict: Ordering| order == strict || (order == Ordering::Equal && even);
    let (down, up) = (next_down(g), next_up(g));
    let above_low = !down.is_finite()
        || ok(
            cmp_dyadic(value, &midpoint_dyadic(down, g)),
            Ordering::Greater,
        );
    let below_high =
        !up.is_finite() || ok(cmp_dyadic(value, &midpoint_dyadic(g, up)), Ordering::Less);
    above_low && below_high
}

/// The smallest `f64` above `x` (`x` itself for NaN and +infinity).
pub fn next_up(x: f64) -> f64 {
    if x.is_nan() || x == f64::INFINITY {
        return x;
    }
    if x == 0.0 {
        return f64::from_bits(1);
    }
    let bits = x.to_bits();
    if x > 0.0 {
        f64::from_bits(bits + 1)
    } else {
        f64::from_bits(bits - 1)
    }
}

/// The largest `f64` below `x`.
pub fn next_down(x: f64) -> f64 {
    -next_up(-x)
}

/// Writes a rational as `p/q`, or `p` when the denominator is one.
pub fn rational_to_string(value: &BigRational) -> String {
    if value.denom().is_one() {
        value.numer().to_string()
    } else {
        format!("{}/{}", value.numer(), value.denom())
    }
}

/// Most decimal digits in the numerator, and in the denominator, of an exact number's
/// `exact` text (the limit keeps reading linear in the input; the largest values the
/// adversaries write have well under a thousand digits).
pub const MAX_EXACT_DIGITS: usize = 4096;

/// Parses the `exact` text of an exact number: `-?D(/D)?`, where each `D` is 1 to
/// [`MAX_EXACT_DIGITS`] ASCII decimal digits and the denominator is not zero. `Err`
/// says what is wrong. This is the only grammar the transcript reader accepts.
pub fn parse_exact_text(text: &str) -> Result<BigRational, String> {
    let unsigned = text.strip_prefix('-').unwrap_or(text);
    let (numer, denom) = match unsigned.split_once('/') {
        Some((p, q)) => (p, Some(q)),
        None => (unsigned, None),
    };
    let digits = |part: &str, what: &str| -> Result<BigInt, String> {
        if part.is_empty() || !part.bytes().all(|b| b.is_ascii_digit()) {
            return Err(format!(
                "the {what} of {:?} is not 1 or more ASCII decimal digits (the exact form \
                 is -?digits or -?digits/digits)",
                shorten(text)
            ));
        }
        if part.len() > MAX_EXACT_DIGITS {
            return Err(format!(
                "the {what} of an exact number has {} digits, more than the limit of \
                 {MAX_EXACT_DIGITS}",
                part.len()
            ));
        }
        Ok(part.parse().expect("ASCII digits parse"))
    };
    let mut p = digits(numer, "numerator")?;
    if text.starts_with('-') {
        p = -p;
    }
    let q = match denom {
        Some(q) => digits(q, "denominator")?,
        None => BigInt::one(),
    };
    if q.is_zero() {
        return Err(format!("the denominator of {:?} is zero", shorten(text)));
    }
    Ok(BigRational::new(p, q))
}

/// The first characters of a long text, for messages.
fn shorten(text: &str) -> String {
    match text.char_indices().nth(40) {
        Some((end, _)) => format!("{}...", &text[..end]),
        None => text.to_string(),
    }
}

/// True when `value` has a finite nearest `f64`: |value| < 2^1024 - 2^970 (at and
/// beyond that bound, round to nearest gives infinity).
pub fn has_finite_nearest_f64(value: &BigRational) -> bool {
    // |p/q| < 2^(bits(p) - bits(q) + 1): below 2^1023 needs no big comparison.
    if value.numer().bits() <= value.denom().bits() + 1022 {
        return true;
    }
    let bound = (BigInt::one() << 1024u32) - (BigInt::one() << 970u32);
    value.abs() < BigRational::from_integer(bound)
}

/// Parses `p/q`, `p`, or a decimal such as `-1.25e-3` into an exact rational (a helper
/// for tests and tools; the transcript reader accepts [`parse_exact_text`] only).
pub fn parse_rational(text: &str) -> Option<BigRational> {
    let text = text.trim();
    if let Some((p, q)) = text.split_once('/') {
        let p: BigInt = p.trim().parse().ok()?;
        let q: BigInt = q.trim().parse().ok()?;
        if q.is_zero() {
            return None;
        }
        return Some(BigRational::new(p, q));
    }
    parse_decimal(text)
}

fn parse_decimal(text: &str) -> Option<BigRational> {
    let (mantissa, exponent) = match text.find(['e', 'E']) {
        Some(pos) => (&text[..pos], text[pos + 1..].parse::<i64>().ok()?),
        None => (text, 0),
    };
    let (negative, digits) = match mantissa.strip_prefix('-') {
        Some(rest) => (true, rest),
        None => (false, mantissa.strip_prefix('+').unwrap_or(mantissa)),
    };
    let (int_part, frac_part) = digits.split_once('.').unwrap_or((digits, ""));
    if int_part.is_empty() && frac_part.is_empty() {
        return None;
    }
    if !int_part
        .chars()
        .chain(frac_part.chars())
        .all(|c| c.is_ascii_digit())
    {
        return None;
    }
    if exponent.unsigned_abs() > 100_000 {
        return None;
    }
    let all_digits = format!("{int_part}{frac_part}");
    let mut numer: BigInt = if all_digits.is_empty() {
        BigInt::zero()
    } else {
        all_digits.parse().ok()?
    };
    if negative {
        numer = -numer;
    }
    let scale = exponent - frac_part.len() as i64;
    let ten = BigInt::from(10);
    let value = if scale >= 0 {
        BigRational::from_integer(numer * num_traits::pow(ten, scale as usize))
    } else {
        BigRational::new(numer, num_traits::pow(ten, (-scale) as usize))
    };
    Some(value)
}

impl Serialize for Exact {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        match self {
            Exact::Float(f) => serializer.serialize_f64(*f),
            Exact::Ratio(r) => {
                let mut map = serializer.serialize_map(Some(2))?;
                map.serialize_entry("exact", &rational_to_string(r))?;
                map.serialize_entry("approx", &nearest_f64(r))?;
                map.end()
            }
        }
    }
}

impl<'de> Deserialize<'de> for Exact {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Exact, D::Error> {
        deserializer.deserialize_any(ExactVisitor)
    }
}

struct ExactVisitor;

impl<'de> Visitor<'de> for ExactVisitor {
    type Value = Exact;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("a finite number or {\"exact\": \"p/q\", \"approx\": f}")
    }

    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Exact, E> {
        Exact::from_f64(v).ok_or_else(|| E::custom("non-finite number"))
    }

    // A plain integer token is the f64 it parses to, like any other plain number
    // (`as` rounds to nearest, ties to even).
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Exact, E> {
        Ok(Exact::Float(v as f64))
    }

    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Exact, E> {
        Ok(Exact::Float(v as f64))
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Exact, A::Error> {
        let mut exact: Option<String> = None;
        let mut approx: Option<f64> = None;
        while let Some(key) = map.next_key::<String>()? {
            match key.as_str() {
                "exact" if exact.is_some() => return Err(de::Error::duplicate_field("exact")),
                "approx" if approx.is_some() => return Err(de::Error::duplicate_field("approx")),
                "exact" => exact = Some(map.next_value()?),
                "approx" => approx = Some(map.next_value()?),
                other => return Err(de::Error::unknown_field(other, &["exact", "approx"])),
            }
        }
        let exact = exact.ok_or_else(|| de::Error::missing_field("exact"))?;
        let approx = approx.ok_or_else(|| de::Error::missing_field("approx"))?;
        let value = parse_exact_text(&exact).map_err(de::Error::custom)?;
        if !has_finite_nearest_f64(&value) {
            return Err(de::Error::custom(
                "an exact number must be smaller than 2^1024 - 2^970 in magnitude (its \
                 nearest f64 must be finite)",
            ));
        }
        let near = nearest_f64(&value);
        if near != approx {
            return Err(de::Error::custom(format!(
                "approx {approx} is not the nearest f64 to {exact}"
            )));
        }
        Ok(if f64_to_rational(near) == value {
            Exact::Float(near)
        } else {
            Exact::Ratio(Box::new(value))
        })
    }
}

/// Exact comparison of a - b with t, for finite `f64` a, b, t with |a|, |b| <= 1e300.
///
/// fl(a - b) is monotone in the exact difference, so a strict inequality between the
/// rounded difference and t is an exact one; on equality the rounding error (exact by
/// TwoSum) decides.
pub fn cmp_diff(a: f64, b: f64, t: f64) -> Ordering {
    let (hi, lo) = two_diff(a, b);
    match hi.partial_cmp(&t).expect("finite") {
        Ordering::Equal => lo.partial_cmp(&0.0).expect("finite"),
        other => other,
    }
}

/// Exact comparison of a - b with c - e.
pub fn cmp_sides(a: f64, b: f64, c: f64, e: f64) -> Ordering {
    let (hi1, lo1) = two_diff(a, b);
    let (hi2, lo2) = two_diff(c, e);
    match hi1.partial_cmp(&hi2).expect("finite") {
        Ordering::Equal => lo1.partial_cmp(&lo2).expect("finite"),
        other => other,
    }
}

/// Knuth's TwoSum on a - b: hi = fl(a - b) and hi + lo = a - b exactly.
pub fn two_diff(a: f64, b: f64) -> (f64, f64) {
    let hi = a - b;
    let bb = hi - a;
    let lo = (a - (hi - bb)) + (-b - bb);
    (hi, lo)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn midpoint_that_f64_cannot_hold_is_kept_exactly() {
        let a = 1.0;
        let b = 1.0 + f64::EPSILON;
        let mid = Exact::midpoint(a, b);
        assert!(!mid.is_f64());
        let back: Exact = serde_json::from_str(&serde_json::to_string(&mid).unwrap()).unwrap();
        assert_eq!(back, mid);
        // Ties to even: the midpoint of two neighbours rounds to the even one, 1.0.
        assert_eq!(mid.to_f64(), 1.0);
    }

    #[test]
    fn decimal_and_fraction_parse_exactly() {
        let r = parse_rational("-1.25e-1").unwrap();
        assert_eq!(r, BigRational::new((-1).into(), 8.into()));
        assert_eq!(
            parse_rational("3/6").unwrap(),
            BigRational::new(1.into(), 2.into())
        );
        assert!(parse_rational("1/0").is_none());
        assert!(parse_rational("abc").is_none());
    }

    proptest::proptest! {
        // The fast check agrees with the exhaustive neighbour walk on random rationals
        // near and far from f64 values, midpoints (ties) included.
        #[test]
        fn nearest_f64_is_the_nearest(p in -(1i128 << 70)..(1i128 << 70), q in 1i128..(1i128 << 70),
                                      shift in -1100i32..1100) {
            let two = BigInt::from(2);
            let scale = num_traits::pow(two.clone(), shift.unsigned_abs() as usize);
            let value = if shift >= 0 {
                BigRational::new(BigInt::from(p) * scale, BigInt::from(q))
            } else {
                BigRational::new(BigInt::from(p), BigInt::from(q) * scale)
            };
            let fast = nearest_f64(&value);
            let mut best = fast;
            let err = |f: f64| (f64_to_rational(f) - &value).abs();
            for c in [next_down(fast), next_up(fast)] {
                if c.is_finite() {
                    let (ec, eb) = (err(c), err(best));
                    proptest::prop_assert!(ec > eb || (ec == eb && best.to_bits() & 1 == 0),
                        "{} is nearer to {} than {}", c, value, fast);
                }
            }
            best = fast;
            // A midpoint between two neighbours goes to the even one.
            let up = next_up(best);
            if up.is_finite() && best.is_finite() {
                let mid = (f64_to_rational(best) + f64_to_rational(up)) / BigRational::from_integer(two.clone());
                let m = nearest_f64(&mid);
                proptest::prop_assert!(m.to_bits() & 1 == 0 && (m == best || m == up));
            }
        }
    }

    #[test]
    fn wrong_approx_is_rejected() {
        let text = r#"{"exact":"1/3","approx":0.5}"#;
        assert!(serde_json::from_str::<Exact>(text).is_err());
    }
}
