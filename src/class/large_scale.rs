//! The large-scale first-order classes (docs/theory.md §3): the dimension d is far
//! above the number of queries T, and the bounds depend on T, not on d.
//!
//! The start point is x_0 = 0 and R bounds ||x_0 - x*||_2 (l2 norm throughout). These
//! classes are played by published-theorem *demonstrations* ([`crate::large_scale`]):
//! their optimal values are irrational, so gaps are compared with the published values
//! to a stated relative tolerance and are never called certificates (docs/theory.md §0).

use serde::{Deserialize, Serialize};

use crate::error::Error;

/// Largest dimension accepted (a chain oracle at this size is a few tens of megabytes).
pub const MAX_LARGE_SCALE_DIM: usize = 10_000_000;

/// One of the three large-scale classes.
///
/// - [`LargeScaleClass::Nonsmooth`]: f convex, M-Lipschitz (l2) on the ball B(x*, R),
///   with ||x_0 - x*|| <= R (the class P(x_0, R, M) of Nesterov 2004, sec. 3.2.1).
///   Accuracy: the smallest gap f(x) - f* over the queried points and the output.
/// - [`LargeScaleClass::Smooth`]: f convex with a beta-Lipschitz gradient on R^d,
///   ||x_0 - x*|| <= R. Accuracy: the gap f(x_T) - f* at the output x_T.
/// - [`LargeScaleClass::StronglyConvex`]: f mu-strongly convex with a beta-Lipschitz
///   gradient, ||x_0 - x*|| <= R. Accuracy: the gap at the output, evaluated as
///   (1/2)(x - x*)^T H (x - x*) for quadratics (docs/theory.md §3).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum LargeScaleClass {
    /// Convex, M-Lipschitz on B(x*, R).
    Nonsmooth {
        /// Dimension d.
        dim: usize,
        /// Lipschitz constant M (l2).
        lipschitz: f64,
        /// R >= ||x_0 - x*||.
        radius: f64,
    },
    /// Convex, beta-smooth.
    Smooth {
        /// Dimension d.
        dim: usize,
        /// Smoothness beta (Lipschitz constant of the gradient, l2).
        smoothness: f64,
        /// R >= ||x_0 - x*||.
        radius: f64,
    },
    /// mu-strongly convex, beta-smooth.
    StronglyConvex {
        /// Dimension d.
        dim: usize,
        /// Smoothness beta.
        smoothness: f64,
        /// Strong convexity mu, 0 < mu < beta.
        strong_convexity: f64,
        /// R >= ||x_0 - x*||.
        radius: f64,
    },
}

fn positive(name: &str, value: f64) -> Result<(), Error> {
    if value.is_finite() && value > 0.0 && value.is_normal() && value <= 1e150 {
        Ok(())
    } else {
        Err(Error::InvalidClass {
            reason: format!(
                "{name} = {value} must be a finite positive normal number at most 1e150"
            ),
        })
    }
}

fn check_dim(dim: usize) -> Result<(), Error> {
    if dim == 0 || dim > MAX_LARGE_SCALE_DIM {
        return Err(Error::InvalidClass {
            reason: format!("dimension d = {dim} must be between 1 and {MAX_LARGE_SCALE_DIM}"),
        });
    }
    Ok(())
}

impl LargeScaleClass {
    /// The nonsmooth class, validated.
    pub fn nonsmooth(dim: usize, lipschitz: f64, radius: f64) -> Result<Self, Error> {
        check_dim(dim)?;
        positive("Lipschitz constant M", lipschitz)?;
        positive("radius R", radius)?;
        Ok(LargeScaleClass::Nonsmooth {
            dim,
            lipschitz,
            radius,
        })
    }

    /// The smooth class, validated.
    pub fn smooth(dim: usize, smoothness: f64, radius: f64) -> Result<Self, Error> {
        check_dim(dim)?;
        positive("smoothness beta", smoothness)?;
        positive("radius R", radius)?;
        Ok(LargeScaleClass::Smooth {
            dim,
            smoothness,
            radius,
        })
    }

    /// The strongly convex smooth class, validated (0 < mu < beta).
    pub fn strongly_convex(
        dim: usize,
        smoothness: f64,
        strong_convexity: f64,
        radius: f64,
    ) -> Result<Self, Error> {
        check_dim(dim)?;
        positive("smoothness beta", smoothness)?;
        positive("strong convexity mu", strong_convexity)?;
        positive("radius R", radius)?;
        if strong_convexity >= smoothness {
            return Err(Error::InvalidClass {
                reason: format!(
                    "strong convexity mu = {strong_convexity} must be below the smoothness \
                     beta = {smoothness}"
                ),
            });
        }
        Ok(LargeScaleClass::StronglyConvex {
            dim,
            smoothness,
            strong_convexity,
            radius,
        })
    }

    /// Dimension d.
    pub fn dim(&self) -> usize {
        match self {
            LargeScaleClass::Nonsmooth { dim, .. }
            | LargeScaleClass::Smooth { dim, .. }
            | LargeScaleClass::StronglyConvex { dim, .. } => *dim,
        }
    }

    /// R >= ||x_0 - x*||.
    pub fn radius(&self) -> f64 {
        match self {
            LargeScaleClass::Nonsmooth { radius, .. }
            | LargeScaleClass::Smooth { radius, .. }
            | LargeScaleClass::StronglyConvex { radius, .. } => *radius,
        }
    }

    /// The same class in another dimension.
    pub fn with_dim(&self, new_dim: usize) -> Result<Self, Error> {
        match *self {
            LargeScaleClass::Nonsmooth {
                lipschitz, radius, ..
            } => Self::nonsmooth(new_dim, lipschitz, radius),
            LargeScaleClass::Smooth {
                smoothness, radius, ..
            } => Self::smooth(new_dim, smoothness, radius),
            LargeScaleClass::StronglyConvex {
                smoothness,
                strong_convexity,
                radius,
                ..
            } => Self::strongly_convex(new_dim, smoothness, strong_convexity, radius),
        }
    }

    /// Short kind name: `nonsmooth`, `smooth` or `strongly-convex`.
    pub fn kind(&self) -> &'static str {
        match self {
            LargeScaleClass::Nonsmooth { .. } => "nonsmooth",
            LargeScaleClass::Smooth { .. } => "smooth",
            LargeScaleClass::StronglyConvex { .. } => "strongly-convex",
        }
    }

    /// One line describing the class and its accuracy measure.
    pub fn describe(&self) -> String {
        match self {
            LargeScaleClass::Nonsmooth {
                dim,
                lipschitz,
                radius,
            } => format!(
                "large-scale nonsmooth: convex f on R^{dim}, {lipschitz}-Lipschitz (l2) on \
                 B(x*, {radius}), ||x_0 - x*|| <= {radius}; gap = min over queried points and \
                 the output of f(x) - f*"
            ),
            LargeScaleClass::Smooth {
                dim,
                smoothness,
                radius,
            } => format!(
                "large-scale smooth: convex {smoothness}-smooth f on R^{dim}, ||x_0 - x*|| <= \
                 {radius}; gap = f(x_T) - f* at the output"
            ),
            LargeScaleClass::StronglyConvex {
                dim,
                smoothness,
                strong_convexity,
                radius,
            } => format!(
                "large-scale strongly convex: {strong_convexity}-strongly convex \
                 {smoothness}-smooth f on R^{dim}, ||x_0 - x*|| <= {radius}; gap = f(x_T) - f* \
                 at the output"
            ),
        }
    }
}

/// Largest horizon T accepted.
pub const MAX_HORIZON: u64 = 10_000_000;

/// A large-scale class played at a horizon: the function class and the number of
/// queries T the game lasts. Methods are told T (they plan their steps for it), the
/// budget is T, and the bound curves are evaluated at T (docs/theory.md §3).
///
/// On disk: `{"kind":"large-scale","function":{"kind":"nonsmooth",...},"horizon":T}`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LargeScale {
    /// The function class (and its dimension).
    pub function: LargeScaleClass,
    /// The horizon T: the number of queries of the game.
    pub horizon: u64,
}

impl LargeScale {
    /// Validates the horizon (1 <= T <= [`MAX_HORIZON`]).
    pub fn new(function: LargeScaleClass, horizon: u64) -> Result<LargeScale, Error> {
        if horizon == 0 || horizon > MAX_HORIZON {
            return Err(Error::InvalidClass {
                reason: format!("horizon T = {horizon} must be between 1 and {MAX_HORIZON}"),
            });
        }
        Ok(LargeScale { function, horizon })
    }

    /// One line describing the class and the horizon.
    pub fn describe(&self) -> String {
        format!("{}; horizon T = {}", self.function.describe(), self.horizon)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn invalid_parameters_are_named() {
        let e = LargeScaleClass::nonsmooth(0, 1.0, 1.0).unwrap_err();
        assert!(e.to_string().contains("dimension"));
        let e = LargeScaleClass::smooth(3, f64::NAN, 1.0).unwrap_err();
        assert!(e.to_string().contains("smoothness"));
        let e = LargeScaleClass::strongly_convex(3, 1.0, 2.0, 1.0).unwrap_err();
        assert!(e.to_string().contains("below the smoothness"));
    }
}
