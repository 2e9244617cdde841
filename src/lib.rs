//! naysayer: plays optimization methods against resisting oracles and certifies
//! oracle-complexity lower bounds exactly.
//!
//! The layers, lowest first (a module uses only modules above it in this list; the
//! architecture test `tests/architecture.rs` checks it): `error`, `exact`, `csv`, `files`, `interrupt`;
//! `class`, `oracle`; `geometry`, `instance`; `transcript` (the records); `certificate`
//! (the exact verifier), `bounds`; `adversary`, `method`; `game` (the loop); `demonstration`,
//! `runner`; `hunt`, `minimax`, `chart`, `scenario`, `family`, `gallery`, `report`, `sweep`, `expect`;
//! `cli`.
pub mod adversary;
#[cfg(feature = "argmin")]
pub mod argmin_adapter;
pub mod bounds;
pub mod certificate;
pub mod chart;
pub mod class;
pub mod cli;
pub mod csv;
pub mod demonstration;
pub mod error;
pub mod exact;
pub mod expect;
pub mod family;
pub mod files;
pub mod gallery;
pub mod game;
pub mod geometry;
pub mod hunt;
pub mod instance;
pub mod interrupt;
pub mod method;
pub mod minimax;
pub mod oracle;
pub mod report;
pub mod runner;
pub mod scenario;
pub mod sweep;
pub mod transcript;

pub use error::Error;
