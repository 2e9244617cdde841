//! Explicit functions of the large-scale classes (docs/theory.md §3): the published
//! worst-case instances, each with its closed-form `f64` oracle, minimiser, optimal value
//! and the bound it demonstrates, and the rotated functions the adaptive-rotation
//! adversaries complete at the end of a game ([`rotated`]). Published-theorem
//! demonstrations: the constants are irrational, so every comparison with a published
//! value uses the stated relative tolerance of [`crate::demonstration`], never exact
//! arithmetic.
//!
//! Every oracle breaks ties by the lowest index (then the max part before the norm part),
//! which is what keeps a span method's iterates inside the first coordinates.

pub mod chain;
pub mod drori_teboulle;
pub mod nesterov_nonsmooth;
pub mod rotated;
pub mod smooth_chain;
pub mod strongly_convex_chain;

pub use chain::Chain;
pub use drori_teboulle::DroriTeboulle;
pub use nesterov_nonsmooth::NesterovNonsmooth;
pub use rotated::RotatedWitness;
pub use smooth_chain::SmoothChain;
pub use strongly_convex_chain::StronglyConvexChain;

/// The registered instance names (scenario files, `naysayer bounds`).
pub const INSTANCES: &[&str] = &[
    "drori-teboulle",
    "nesterov-nonsmooth",
    "smooth-chain",
    "strongly-convex-chain",
];

/// A function of the large-scale regime evaluated in `f64`: value and one (sub)gradient.
pub trait Function {
    /// A short name (`drori-teboulle`, `rotated-max`, ...).
    fn name(&self) -> &str;
    /// The dimension d.
    fn dim(&self) -> usize;
    /// Returns f(x) and writes one (sub)gradient of f at x into `gradient` (length d);
    /// `x` has length d.
    fn evaluate(&self, x: &[f64], gradient: &mut [f64]) -> f64;
}

/// A fully specified function with a known minimiser and optimal value.
pub trait KnownFunction: Function {
    /// The optimal value f*.
    fn optimal_value(&self) -> f64;
    /// A minimiser x* (length d).
    fn minimiser(&self) -> Vec<f64>;
    /// The gap f(x) - f*, computed without cancellation where the function allows
    /// (for quadratics as (1/2)(x - x*)^T H (x - x*)).
    fn gap(&self, x: &[f64]) -> f64;
}
