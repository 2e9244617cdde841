//! Lower and upper gap curves of the large-scale classes against the number of queries
//! T, each with what it assumes and its source (docs/theory.md §3 and §5).
//!
//! Lower curves hold for span methods by the explicit instances, and for every
//! deterministic method by the adaptive-rotation adversaries when d is large enough
//! (stated per curve). Upper curves are what one named method guarantees on the whole
//! class. All are published-theorem demonstrations: the tests compare measured gaps with
//! them to a relative 1e-12, never exactly.

use serde::Serialize;

use crate::bounds::{Side, Status};
use crate::class::LargeScaleClass;

/// One gap curve evaluated at T queries.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct GapBound {
    /// Short label for tables and charts.
    pub label: &'static str,
    /// Lower (no method does better) or upper (the named method never does worse).
    pub side: Side,
    /// The gap at T, when the curve has a number.
    pub gap: Option<f64>,
    /// The formula, in words a reader can check.
    pub formula: &'static str,
    /// Proven (published, from memory where marked) or guide.
    pub status: Status,
    /// Published source and assumptions.
    pub source: &'static str,
    /// The method an upper curve belongs to.
    pub method: Option<&'static str>,
}

/// The lower curve the adversaries and instances of `class` demonstrate at T queries
/// (the first curve of [`gap_bounds`]).
pub fn lower_curve(class: &LargeScaleClass, queries: u64) -> f64 {
    gap_bounds(class, queries)[0].gap.unwrap_or(f64::NAN)
}

/// Every gap curve of `class` at T = `queries`, lower curves first.
pub fn gap_bounds(class: &LargeScaleClass, queries: u64) -> Vec<GapBound> {
    let t = queries.max(1) as f64;
    let r = class.radius();
    match *class {
        LargeScaleClass::Nonsmooth { lipschitz: m, .. } => vec![
            GapBound {
                label: "lower: M R / sqrt(T+1) (rotation; Drori-Teboulle)",
                side: Side::Lower,
                gap: Some(m * r / (t + 1.0).sqrt()),
                formula: "M R / sqrt(T+1) after T queries and an output (N = T)",
                status: Status::Proven,
                source: "Drori & Teboulle, Math. Program. 160, 2016 (span methods, d >= T+1); \
                         any deterministic method by the rotation adversary when d >= 2T + 2 \
                         (docs/theory.md §3)",
                method: None,
            },
            GapBound {
                label: "lower: M R / (2 (2 + sqrt(T+1))) (Nesterov 2004)",
                side: Side::Lower,
                gap: Some(m * r / (2.0 * (2.0 + (t + 1.0).sqrt()))),
                formula: "M R / (2 (2 + sqrt(T+1)))",
                status: Status::Proven,
                source: "Nesterov 2004, Thm 3.2.1 (span methods, d >= T + 1)",
                method: None,
            },
            GapBound {
                label: "unconstrained-subgradient, upper: M R / sqrt(T)",
                side: Side::Upper,
                gap: Some(m * r / t.sqrt()),
                formula: "M R / sqrt(T): step R/(M sqrt(T)), best of T points",
                status: Status::Proven,
                source: "Nesterov 2004, sec. 3.2.3 (from memory); tight by Drori & Teboulle 2016",
                method: Some("unconstrained-subgradient"),
            },
        ],
        LargeScaleClass::Smooth { smoothness: b, .. } => vec![
            GapBound {
                label: "lower: 3 beta R^2 / (32 (T+1)^2) (Nesterov 2004)",
                side: Side::Lower,
                gap: Some(3.0 * b * r * r / (32.0 * (t + 1.0) * (t + 1.0))),
                formula: "3 beta R^2 / (32 (T+1)^2)",
                status: Status::Proven,
                source: "Nesterov 2004, Thm 2.1.7 (span methods, d >= 2T + 1); any \
                         deterministic method by the rotation-chain adversary when d >= 3T + 2 \
                         (docs/theory.md §3)",
                method: None,
            },
            GapBound {
                label: "accelerated, upper: 2 beta R^2 / (T+1)^2",
                side: Side::Upper,
                gap: Some(2.0 * b * r * r / ((t + 1.0) * (t + 1.0))),
                formula: "2 beta R^2 / (T+1)^2",
                status: Status::Proven,
                source: "Beck & Teboulle 2009, Thm 4.4 (from memory); docs/theory.md §5",
                method: Some("accelerated"),
            },
            GapBound {
                label: "gradient, upper: beta R^2 / (2T)",
                side: Side::Upper,
                gap: Some(b * r * r / (2.0 * t)),
                formula: "beta R^2 / (2T), step 1/beta",
                status: Status::Proven,
                source: "Beck & Teboulle 2009, Thm 3.1 (from memory)",
                method: Some("gradient"),
            },
        ],
        LargeScaleClass::StronglyConvex {
            smoothness: b,
            strong_convexity: mu,
            ..
        } => {
            let root = (b / mu).sqrt();
            let q = (root - 1.0) / (root + 1.0);
            vec![
                GapBound {
                    label: "lower: (mu/2) q^(2T) R^2 (Nesterov 2004)",
                    side: Side::Lower,
                    gap: Some(0.5 * mu * (2.0 * t * q.ln()).exp() * r * r),
                    formula: "(mu/2) q^(2T) R^2, q = (sqrt(Q) - 1)/(sqrt(Q) + 1), Q = beta/mu",
                    status: Status::Proven,
                    source: "Nesterov 2004, Thm 2.1.13 (span methods; stated in infinite \
                             dimension, checked at d = 2T + 1); rotation-chain adversary for any \
                             deterministic method when d >= 3T + 2 (docs/theory.md §3)",
                    method: None,
                },
                GapBound {
                    label: "accelerated, upper: (1 - sqrt(mu/beta))^T (beta + mu) R^2 / 2",
                    side: Side::Upper,
                    gap: Some((t * (-(mu / b).sqrt()).ln_1p()).exp() * 0.5 * (b + mu) * r * r),
                    formula: "(1 - sqrt(mu/beta))^T (beta + mu) R^2 / 2 (bounding f(x_0) - f* \
                              by beta R^2 / 2)",
                    status: Status::Proven,
                    source:
                        "Nesterov 2004, Thm 2.2.3, scheme (2.2.11) (from memory); docs/theory.md §5",
                    method: Some("accelerated"),
                },
                GapBound {
                    label: "gradient, upper: (1 - mu/beta)^T beta R^2 / 2",
                    side: Side::Upper,
                    gap: Some((t * (-mu / b).ln_1p()).exp() * 0.5 * b * r * r),
                    formula: "(1 - mu/beta)^T beta R^2 / 2, step 1/beta",
                    status: Status::Proven,
                    source: "common practice (descent lemma plus strong convexity), no source \
                             pinned",
                    method: Some("gradient"),
                },
            ]
        }
    }
}
