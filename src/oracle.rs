//! Queries and answers: what a method asks and what an oracle replies.
//!
//! A query is a point of R^d (`&[f64]`, finite). A separation answer is [`Answer::Inside`]
//! or a strict cut [`Cut`] `{normal a, offset b}` meaning: every point y of K satisfies
//! `a.y < b`, and the query x satisfies `a.x >= b` (docs/theory.md §0; the strong
//! separation problem of Grotschel, Lovasz & Schrijver 1988). A central cut has
//! `b = a.x`.

use num_rational::BigRational;
use serde::{Deserialize, Serialize};

use crate::exact::{f64_to_rational, Exact};

/// The normal vector of a cut: a signed coordinate axis (the common, cheap case) or a
/// dense vector of finite `f64` values (exact dyadic rationals).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Normal {
    /// `sign * e_index`, with `sign` either +1 or -1.
    Axis {
        /// Coordinate index, from 0.
        axis: usize,
        /// +1 or -1.
        sign: i8,
    },
    /// A dense vector.
    Dense(Vec<f64>),
}

impl Normal {
    /// The normal `sign * e_axis`.
    pub fn axis(axis: usize, positive: bool) -> Normal {
        Normal::Axis {
            axis,
            sign: if positive { 1 } else { -1 },
        }
    }

    /// Coordinate `i` of the normal.
    pub fn get(&self, i: usize) -> f64 {
        match self {
            Normal::Axis { axis, sign } => {
                if *axis == i {
                    f64::from(*sign)
                } else {
                    0.0
                }
            }
            Normal::Dense(v) => v[i],
        }
    }

    /// The normal as a dense vector of length `d`.
    pub fn to_dense(&self, d: usize) -> Vec<f64> {
        (0..d).map(|i| self.get(i)).collect()
    }

    /// `a . x` in floating point (for methods; the verifier uses [`Normal::dot_exact`]).
    pub fn dot(&self, x: &[f64]) -> f64 {
        match self {
            Normal::Axis { axis, sign } => f64::from(*sign) * x[*axis],
            Normal::Dense(v) => v.iter().zip(x).map(|(a, b)| a * b).sum(),
        }
    }

    /// `a . x` exactly, for `x` given as exact rationals.
    pub fn dot_exact(&self, x: &[BigRational]) -> BigRational {
        match self {
            Normal::Axis { axis, sign } => {
                if *sign > 0 {
                    x[*axis].clone()
                } else {
                    -x[*axis].clone()
                }
            }
            Normal::Dense(v) => v
                .iter()
                .zip(x)
                .filter(|(a, _)| **a != 0.0)
                .map(|(a, b)| f64_to_rational(*a) * b)
                .sum(),
        }
    }

    /// `||a||_2^2` exactly.
    pub fn norm_squared_exact(&self) -> BigRational {
        match self {
            Normal::Axis { .. } => BigRational::from_integer(1.into()),
            Normal::Dense(v) => v
                .iter()
                .filter(|a| **a != 0.0)
                .map(|a| {
                    let r = f64_to_rational(*a);
                    &r * &r
                })
                .sum(),
        }
    }

    /// Length of a dense normal; `None` for an axis normal (which fits any length > axis).
    pub fn dense_len(&self) -> Option<usize> {
        match self {
            Normal::Axis { .. } => None,
            Normal::Dense(v) => Some(v.len()),
        }
    }

    /// True when every coordinate is finite, the sign is +-1, and the normal is not zero.
    pub fn is_well_formed(&self, d: usize) -> bool {
        match self {
            Normal::Axis { axis, sign } => *axis < d && (*sign == 1 || *sign == -1),
            Normal::Dense(v) => {
                v.len() == d && v.iter().all(|a| a.is_finite()) && v.iter().any(|a| *a != 0.0)
            }
        }
    }
}

/// A strict cut `{y : a.y < b}` that contains K and excludes the query (`a.x >= b`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Cut {
    /// The normal `a`.
    pub normal: Normal,
    /// The offset `b`, exact.
    pub offset: Exact,
}

/// An oracle's answer to one query.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
#[non_exhaustive]
pub enum Answer {
    /// The query lies in K.
    Inside,
    /// The query lies outside K; the cut separates it strictly.
    Cut(Cut),
    /// A first-order answer: f(x) and one subgradient of f at x, both exact.
    FirstOrder(FirstOrderAnswer),
}

/// f(x) and one subgradient g of f at x (docs/theory.md §2), exact.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FirstOrderAnswer {
    /// f(x).
    pub value: Exact,
    /// A subgradient of f at x (length d).
    pub subgradient: Vec<Exact>,
}

impl FirstOrderAnswer {
    /// The objective cut `{y : g.y < g.x}` at query `x`, which keeps every point with
    /// f(y) < f(x) (a deep enough cut for cutting-plane methods); `None` when g = 0, so
    /// that x minimises f.
    pub fn objective_cut(&self, query: &[f64]) -> Option<Cut> {
        let normal: Vec<f64> = self.subgradient.iter().map(Exact::to_f64).collect();
        if normal.iter().all(|g| *g == 0.0) || normal.iter().any(|g| !g.is_finite()) {
            return None;
        }
        let offset: BigRational = normal
            .iter()
            .zip(query)
            .filter(|(g, _)| **g != 0.0)
            .map(|(g, x)| f64_to_rational(*g) * f64_to_rational(*x))
            .sum();
        Some(Cut {
            normal: Normal::Dense(normal),
            offset: Exact::from_rational(offset),
        })
    }
}

/// A separation view of any answer, for cutting-plane methods that also play
/// first-order classes.
#[derive(Clone, Debug, PartialEq)]
pub enum Separation<'a> {
    /// The query lies in K (for a first-order answer: the subgradient is zero, so the
    /// query minimises f).
    Inside,
    /// A cut: the answer's own, or a first-order answer's objective cut.
    Cut(std::borrow::Cow<'a, Cut>),
}

impl Answer {
    /// True when every number of the answer is finite (an `f64` evaluation can overflow
    /// for a query of enormous norm; such an answer is never written).
    pub fn is_finite(&self) -> bool {
        match self {
            Answer::Inside => true,
            Answer::Cut(cut) => match &cut.normal {
                Normal::Axis { .. } => cut.offset.is_finite(),
                Normal::Dense(a) => a.iter().all(|x| x.is_finite()) && cut.offset.is_finite(),
            },
            Answer::FirstOrder(fo) => {
                fo.value.is_finite() && fo.subgradient.iter().all(Exact::is_finite)
            }
        }
    }

    /// The answer as a separation answer: a first-order answer becomes its objective
    /// cut, or `Inside` when the subgradient is zero.
    pub fn to_separation(&self, query: &[f64]) -> Separation<'_> {
        match self {
            Answer::Inside => Separation::Inside,
            Answer::Cut(cut) => Separation::Cut(std::borrow::Cow::Borrowed(cut)),
            Answer::FirstOrder(fo) => match fo.objective_cut(query) {
                Some(cut) => Separation::Cut(std::borrow::Cow::Owned(cut)),
                None => Separation::Inside,
            },
        }
    }
}

/// What a method finally claims.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Output {
    /// "This point lies in K."
    Point {
        /// The point.
        point: Vec<f64>,
    },
    /// "K contains no ball of radius rho, so (by the class promise) K is empty."
    Empty,
}

/// A method's next move.
#[derive(Clone, Debug, PartialEq)]
pub enum Step {
    /// The method has written its next query into the buffer it was given.
    Query,
    /// The method stops with this output.
    Output(Output),
}
