//! First-order optimization: minimise a convex L-Lipschitz function over a box to
//! additive accuracy eps, with an oracle returning f(x) and one subgradient
//! (docs/theory.md §2).

use serde::{Deserialize, Serialize};

use crate::class::MAX_HALF_WIDTH;
use crate::error::Error;

/// The norm in which f is L-Lipschitz: every subgradient g satisfies ||g||_* <= L in the
/// dual norm.
///
/// The witnesses of the universal certificate (docs/theory.md §2.2) are L-Lipschitz in every
/// l_p norm as soon as every answered subgradient has dual norm at most L; the
/// orthant-level adversary answers multiples of unit vectors, whose norm is the same in
/// every l_p, so one transcript serves all three.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum LipschitzNorm {
    /// |f(x) - f(y)| <= L ||x - y||_1; subgradients bounded in l_inf.
    L1,
    /// |f(x) - f(y)| <= L ||x - y||_2; subgradients bounded in l_2.
    #[default]
    L2,
    /// |f(x) - f(y)| <= L ||x - y||_inf; subgradients bounded in l_1.
    Linf,
}

/// Convex L-Lipschitz minimisation over X = [-R, R]^d to additive accuracy eps.
///
/// A method outputs a point x of X and is correct when f(x) - min_X f <= eps.
/// Invariants: `dim >= 1`; `0 < half_width <= MAX_HALF_WIDTH`; `eps > 0`;
/// `lipschitz > 0`; all finite.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FirstOrderClass {
    /// Dimension d.
    pub dim: usize,
    /// Box half-width R.
    pub half_width: f64,
    /// Additive accuracy eps.
    pub eps: f64,
    /// Lipschitz constant L.
    pub lipschitz: f64,
    /// The norm L is measured in.
    pub norm: LipschitzNorm,
}

impl FirstOrderClass {
    /// Validates and builds the class.
    pub fn new(
        dim: usize,
        half_width: f64,
        eps: f64,
        lipschitz: f64,
        norm: LipschitzNorm,
    ) -> Result<FirstOrderClass, Error> {
        let bad = |reason: String| Err(Error::InvalidClass { reason });
        if dim == 0 || dim > 1_000_000 {
            return bad(format!("dimension d = {dim} must be between 1 and 1000000"));
        }
        if !half_width.is_finite() || half_width <= 0.0 || half_width > MAX_HALF_WIDTH {
            return bad(format!(
                "half-width R = {half_width} must be finite, positive and at most {MAX_HALF_WIDTH:e}"
            ));
        }
        if !eps.is_finite() || eps <= 0.0 || eps.is_subnormal() {
            return bad(format!(
                "eps = {eps} must be a finite positive normal number"
            ));
        }
        if !lipschitz.is_finite() || lipschitz <= 0.0 || lipschitz > MAX_HALF_WIDTH {
            return bad(format!(
                "Lipschitz constant L = {lipschitz} must be finite, positive and at most {MAX_HALF_WIDTH:e}"
            ));
        }
        Ok(FirstOrderClass {
            dim,
            half_width,
            eps,
            lipschitz,
            norm,
        })
    }

    /// Checks eps < L R / 2 exactly: at eps >= L R / 2 the first-order lower bound of
    /// docs/theory.md §2.4 asks for no query at all, and the slab funnel has no certificate.
    /// The class itself stays valid (files written with such an eps can still be read);
    /// the commands and scenario files refuse it.
    pub fn check_accuracy_below_half_range(&self) -> Result<(), Error> {
        let eps = crate::exact::f64_to_rational(self.eps);
        let two = num_rational::BigRational::from_integer(2.into());
        let range = crate::exact::f64_to_rational(self.lipschitz)
            * crate::exact::f64_to_rational(self.half_width);
        if two * eps >= range {
            return Err(Error::InvalidClass {
                reason: format!(
                    "eps = {} is at least L R / 2 = {} (L = {}, R = {}): at this accuracy the \
                     first-order lower bound of docs/theory.md §2.4 asks for no query at all; \
                     choose eps below L R / 2",
                    self.eps,
                    self.lipschitz * self.half_width / 2.0,
                    self.lipschitz,
                    self.half_width
                ),
            });
        }
        Ok(())
    }

    /// log2(L R / eps), the accuracy scale of the class.
    pub fn log2_scale(&self) -> f64 {
        (self.lipschitz * self.half_width / self.eps).log2()
    }
}
