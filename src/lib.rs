//! naysayer: plays optimization methods against resisting oracles and certifies
//! oracle-complexity lower bounds exactly.
pub mod adversary;
#[cfg(feature = "argmin")]
pub mod argmin_adapter;
pub mod class;
pub mod error;
pub mod exact;
pub mod geometry;
pub mod instance;
pub mod large_scale;
pub mod method;
pub mod minimax;
pub mod oracle;

pub use error::Error;
pub mod bounds;
pub mod certificate;
pub mod chart;
pub mod cli;
pub mod expect;
pub mod gallery;
pub mod game;
pub mod hunt;
pub mod runner;
pub mod scenario;
pub mod sweep;
pub mod transcript;
