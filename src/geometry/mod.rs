//! Geometry the methods use: box models, polytopes, polygons, samplers.
//!
//! Everything here is floating point and belongs to methods (the players). Exact
//! arithmetic lives in the adversaries' answers and in [`crate::certificate`].

pub mod boxes;

pub use boxes::BoxModel;
