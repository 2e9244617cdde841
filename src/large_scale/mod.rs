//! The large-scale first-order regime (docs/theory.md §3): worst-case chain functions
//! and the adaptive-rotation adversary, for methods in dimension d far above the number
//! of queries T.
//!
//! **Demonstrations, not certificates.** The instances here have irrational constants
//! (sqrt(N+1) in the optimum, q = (sqrt(Q) - 1)/(sqrt(Q) + 1) in the minimiser), and the
//! rotation adversary's directions come from a floating-point Gram-Schmidt process. So
//! nothing in this module is an exact certificate: answers are `f64`, gaps are compared
//! with the published values to the relative tolerance [`RELATIVE_TOLERANCE`], and the
//! exact verifier ([`crate::certificate`]) is neither used nor weakened (docs/theory.md §0,
//! "published-theorem demonstrations"). Everything here says "demonstration".
//!
//! Pieces:
//! - [`Oracle`]: the first-order oracle trait of this regime (value into the return,
//!   gradient into a caller's buffer, so that d = 10^6 costs no allocation per query);
//! - [`instances`]: the explicit worst-case functions, each in its own file with its
//!   source, minimiser, optimal value and the bound it demonstrates;
//! - [`rotation`] and [`rotation_chain`]: the adaptive-rotation adversaries (nonsmooth
//!   and smooth), valid against any deterministic method, with their dimension check;
//! - [`witness`]: the rotated function an adversary hands over, its export and the
//!   replay check;
//! - [`game`]: the demonstration loop, which plays the ordinary [`crate::method::Method`]
//!   trait against an [`Oracle`];
//! - [`bounds`]: the lower and upper gap curves with their sources;
//! - [`scenario`] and [`sweep`]: the `large-scale` scenario family and its charts.

pub mod basis;
pub mod bounds;
pub mod game;
pub mod instances;
pub mod rotation;
pub mod rotation_chain;
pub mod scenario;
pub mod sweep;
pub mod witness;

use crate::error::Error;

/// The relative tolerance of every comparison with a published value in this regime
/// (gaps against bounds, witness replay against answers): 1e-12, about 4500 units in
/// the last place of an `f64`, far above the rounding of the O(T d) arithmetic involved
/// and far below any effect the bounds describe.
pub const RELATIVE_TOLERANCE: f64 = 1e-12;

/// A first-order oracle of the large-scale regime: f(x) and one (sub)gradient, in `f64`.
pub trait Oracle {
    /// A short name (`drori-teboulle`, `rotation`, ...).
    fn name(&self) -> &str;
    /// The dimension d.
    fn dim(&self) -> usize;
    /// Returns f(x) and writes one (sub)gradient of f at x into `gradient` (length d).
    /// `x` is finite and has length d (the game loop checks both). An error means the
    /// oracle cannot answer consistently (for the rotation adversary: the dimension is
    /// too small for one more query).
    fn answer(&mut self, x: &[f64], gradient: &mut [f64]) -> Result<f64, Error>;
}

/// A fully specified function with a known minimiser and optimal value.
pub trait KnownFunction {
    /// The optimal value f*.
    fn optimal_value(&self) -> f64;
    /// A minimiser x* (length d).
    fn minimiser(&self) -> Vec<f64>;
    /// The gap f(x) - f*, computed without cancellation where the function allows
    /// (for quadratics as (1/2)(x - x*)^T H (x - x*)).
    fn gap(&self, x: &[f64]) -> f64;
}

/// Euclidean norm.
pub fn norm(x: &[f64]) -> f64 {
    basis::dot(x, x).sqrt()
}
