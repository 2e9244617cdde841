//! Explicit worst-case instances of the large-scale classes (docs/theory.md §3), each with its
//! exact-in-form oracle (the `f64` evaluation of a closed formula), its minimiser, its
//! optimal value and the bound it demonstrates. Published-theorem demonstrations: the
//! constants are irrational, so comparisons use [`super::RELATIVE_TOLERANCE`].
//!
//! Every oracle breaks ties by the lowest index (then the max part before the norm part),
//! which is what keeps a span method's iterates inside the first coordinates.

pub mod chain;
pub mod drori_teboulle;
pub mod nesterov_nonsmooth;
pub mod smooth_chain;
pub mod strongly_convex_chain;

pub use chain::Chain;
pub use drori_teboulle::DroriTeboulle;
pub use nesterov_nonsmooth::NesterovNonsmooth;
pub use smooth_chain::SmoothChain;
pub use strongly_convex_chain::StronglyConvexChain;

/// The registered instance names (scenario files, `naysayer bounds`).
pub const INSTANCES: &[&str] = &[
    "drori-teboulle",
    "nesterov-nonsmooth",
    "smooth-chain",
    "strongly-convex-chain",
];
