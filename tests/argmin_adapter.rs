//! The argmin adapter (feature `argmin`): argmin solvers play the orthant adversary to
//! a verified certificate.
#![cfg(feature = "argmin")]
