//! Geometry shared below methods and adversaries: box models, polytopes, polygons,
//! samplers and a small LP front end (floating point, for the methods), and the exact
//! lattice split search ([`lattice_split`]) that both the lattice-halving adversary and
//! the lattice centerpoint method use. Exact arithmetic of the adversaries' answers
//! lives with them; the verifier ([`crate::certificate`]) depends on nothing here but
//! the LP front end.

pub mod basis;
pub mod boxes;
pub mod hit_and_run;
pub mod lattice_split;
pub mod lp;
pub mod polygon;
pub mod polytope;

pub use boxes::BoxModel;
pub use polytope::Polytope;
