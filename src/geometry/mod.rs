//! Geometry the methods use: box models, polytopes, polygons, samplers.
//!
//! Everything here is floating point and belongs to methods (the players). Exact
//! arithmetic lives in the adversaries' answers and in [`crate::certificate`].

pub mod boxes;
pub mod hit_and_run;
pub mod lp;
pub mod polygon;
pub mod polytope;

pub use boxes::BoxModel;
pub use polytope::Polytope;
