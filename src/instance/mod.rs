//! Witnesses: explicit instances of a class, each with its own exact oracle.
//!
//! An adversary hands these over at the end of a game; the verifier
//! ([`crate::certificate`]) checks them against the transcript without trusting the
//! adversary.

pub mod function;
pub mod lattice;

use num_rational::BigRational;
use serde::{Deserialize, Serialize};

use crate::exact::{f64_to_rational, Exact};

pub use function::{AffinePiece, FunctionWitness};
pub use lattice::{FibreBall, LatticeHull};

/// An explicit instance: a feasibility set or a function.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
#[non_exhaustive]
pub enum Witness {
    /// K = the empty set. Its only correct output is "empty".
    Empty,
    /// K = the closed Euclidean ball of radius `radius` around `center`.
    Ball {
        /// The centre, exact.
        center: Vec<Exact>,
        /// The radius (the class's rho).
        radius: f64,
    },
    /// A convex function: max of affine pieces and an l_inf cone (first-order classes).
    Function(FunctionWitness),
    /// A mixed-integer hull conv(F cup {v} x B(c, rho)) (lattice classes, THEORY.md 4).
    LatticeHull(LatticeHull),
}

impl Witness {
    /// Exact membership: is x in K? (For a ball: ||x - c||_2^2 <= r^2, decided exactly.)
    pub fn contains(&self, x: &[f64]) -> bool {
        match self {
            Witness::Empty | Witness::Function(_) => false,
            Witness::LatticeHull(hull) => hull.contains(x),
            Witness::Ball { center, radius } => {
                let r = f64_to_rational(*radius);
                let dist2: BigRational = center
                    .iter()
                    .zip(x)
                    .map(|(c, xi)| {
                        let diff = f64_to_rational(*xi) - c.to_rational();
                        &diff * &diff
                    })
                    .sum();
                dist2 <= &r * &r
            }
        }
    }

    /// A short name for messages.
    pub fn label(&self) -> &'static str {
        match self {
            Witness::Empty => "empty set",
            Witness::Ball { .. } => "ball",
            Witness::Function(_) => "function",
            Witness::LatticeHull(_) => "lattice hull",
        }
    }
}

/// Witnesses for a prefix of the transcript.
///
/// On disk (the final record's `certificate`) this is `{"schema":S,"prefix":T*,
/// "instances":[...]}` with `S` the certificate schema version
/// ([`crate::transcript::CERTIFICATE_SCHEMA`]); a certificate without `schema` was
/// written before the key existed and is read as schema 1. Reading a schema this build
/// does not know is an error that names the version.
#[derive(Clone, Debug, PartialEq)]
pub struct Witnesses {
    /// The number of leading answers every witness agrees with (T* in THEORY.md 0).
    pub prefix: u64,
    /// The instances.
    pub instances: Vec<Witness>,
}

impl Serialize for Witnesses {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        #[derive(Serialize)]
        struct OnDisk<'a> {
            schema: u32,
            prefix: u64,
            instances: &'a [Witness],
        }
        OnDisk {
            schema: crate::transcript::CERTIFICATE_SCHEMA,
            prefix: self.prefix,
            instances: &self.instances,
        }
        .serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for Witnesses {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        fn first_schema() -> u32 {
            1
        }
        #[derive(Deserialize)]
        struct OnDisk {
            #[serde(default = "first_schema")]
            schema: u32,
            prefix: u64,
            instances: Vec<Witness>,
        }
        let raw = OnDisk::deserialize(deserializer)?;
        if !crate::transcript::CERTIFICATE_SCHEMAS_READ.contains(&raw.schema) {
            return Err(serde::de::Error::custom(format!(
                "certificate schema {} is not supported (this build reads schema {:?})",
                raw.schema,
                crate::transcript::CERTIFICATE_SCHEMAS_READ
            )));
        }
        Ok(Witnesses {
            prefix: raw.prefix,
            instances: raw.instances,
        })
    }
}
