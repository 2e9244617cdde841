//! The records of a transcript: what each line holds. These types know nothing of who
//! writes them: the game loop, the verifier and the readers all depend on them, never
//! the other way round.

use serde::{Deserialize, Serialize};

use crate::class::Class;
use crate::instance::large_scale::RotatedWitness;
use crate::instance::Witness;
use crate::oracle::{Answer, Output};

/// The transcript format version this build writes and reads.
pub const FORMAT_VERSION: u32 = 1;

/// The certificate schema version this build writes: the `schema` key of the final
/// record's `certificate`, versioned separately from [`FORMAT_VERSION`] so that the
/// witness kinds can change while the record layout stays (changelog in the README).
pub const CERTIFICATE_SCHEMA: u32 = 1;

/// Every certificate schema version this build reads (old certificates stay checkable;
/// a certificate without `schema` is schema 1).
pub const CERTIFICATE_SCHEMAS_READ: &[u32] = &[1];

/// How a game ended.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Ending {
    /// The method stopped with an output.
    Output {
        /// What it claimed.
        output: Output,
    },
    /// The method wanted more queries than the budget allows.
    BudgetExhausted,
    /// The method broke the rules or failed internally.
    MethodFailed {
        /// What went wrong.
        reason: String,
    },
    /// A signal (SIGINT, SIGTERM, SIGHUP) ended the game before the method stopped; the
    /// certificate covers what was answered.
    Interrupted {
        /// The signal's name.
        signal: String,
    },
}

/// Identifies a game: written first in every transcript.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Header {
    /// Transcript format version ([`crate::transcript::FORMAT_VERSION`]).
    pub format: u32,
    /// The tool that wrote it, `naysayer <version>`.
    pub tool: String,
    /// The class and all its parameters.
    pub class: Class,
    /// Adversary name.
    pub adversary: String,
    /// Method name.
    pub method: String,
    /// The method's seed (recorded also for deterministic methods).
    pub seed: u64,
    /// The query budget.
    pub budget: u64,
}

/// Written last: how the game ended and the witnesses for the longest certified prefix.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FinalRecord {
    /// Queries the method asked (censored at the budget when the budget ended the game).
    pub queries_used: u64,
    /// How the game ended.
    pub ending: Ending,
    /// Witnesses and the prefix they certify; `None` when no prefix is certifiable (and
    /// always for a demonstration). The key is required on disk (`null` when there is no
    /// certificate).
    #[serde(deserialize_with = "required_certificate")]
    pub certificate: Option<Witnesses>,
    /// Large-scale games only: what the demonstration claims (docs/theory.md §3). Absent
    /// from certificate transcripts.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub demonstration: Option<Demonstration>,
}

/// The final record's claim of a demonstration game (docs/theory.md §3): the gap the
/// method left on the adversary's function and the published lower curve, compared to
/// the stated relative tolerance, never exactly. Not a certificate: `naysayer check`
/// refuses it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Demonstration {
    /// The relative tolerance of every comparison with a published value.
    pub tolerance: f64,
    /// The gap in the class's accuracy measure (`None` when it is undefined: a smooth
    /// class whose method gave no output).
    pub gap: Option<f64>,
    /// The published lower curve at the horizon.
    pub lower_bound: f64,
    /// The function completed by an adaptive-rotation adversary; `None` for a published
    /// instance, which the adversary's name, the class and the horizon determine.
    pub witness: Option<RotatedWitness>,
}

impl Demonstration {
    /// A demonstration at the relative tolerance [`DEMONSTRATION_TOLERANCE`].
    pub fn new(gap: Option<f64>, lower_bound: f64, witness: Option<RotatedWitness>) -> Self {
        Demonstration {
            tolerance: DEMONSTRATION_TOLERANCE,
            gap,
            lower_bound,
            witness,
        }
    }
}

/// The relative tolerance of a demonstration (1e-12: about 4500 units in the last place
/// of an `f64`, far above the rounding of the O(T d) arithmetic involved and far below
/// any effect the bounds describe).
pub const DEMONSTRATION_TOLERANCE: f64 = 1e-12;

/// Reads the `certificate` key, which must be present (`null` or a certificate): a
/// final record without it is refused, as `tools/check_certificate.py` refuses it.
fn required_certificate<'de, D: serde::Deserializer<'de>>(
    deserializer: D,
) -> Result<Option<Witnesses>, D::Error> {
    Option::<Witnesses>::deserialize(deserializer)
}

/// One query record.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QueryRecord {
    /// 1-based query number.
    pub index: u64,
    /// The query point.
    pub point: Vec<f64>,
    /// The oracle's answer.
    pub answer: Answer,
}

/// One line of a transcript.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", content = "data", rename_all = "kebab-case")]
pub enum Record {
    /// First line.
    Header(Header),
    /// One exchange.
    Query(QueryRecord),
    /// Last line.
    Final(FinalRecord),
}

#[derive(Serialize)]
pub(crate) struct QueryRecordRef<'a> {
    pub(crate) index: u64,
    pub(crate) point: &'a [f64],
    pub(crate) answer: &'a Answer,
}

#[derive(Serialize)]
#[serde(tag = "type", content = "data", rename_all = "kebab-case")]
pub(crate) enum RecordRef<'a> {
    Header(&'a Header),
    Query(QueryRecordRef<'a>),
    Final(&'a FinalRecord),
}

/// Witnesses for a prefix of the transcript.
///
/// On disk (the final record's `certificate`) this is `{"schema":S,"prefix":T*,
/// "instances":[...]}` with `S` the certificate schema version
/// ([`CERTIFICATE_SCHEMA`]); a certificate without `schema` was
/// written before the key existed and is read as schema 1. Reading a schema this build
/// does not know is an error that names the version.
#[derive(Clone, Debug, PartialEq)]
pub struct Witnesses {
    /// The number of leading answers every witness agrees with (T* in docs/theory.md §0).
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
            schema: CERTIFICATE_SCHEMA,
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
        if !CERTIFICATE_SCHEMAS_READ.contains(&raw.schema) {
            return Err(serde::de::Error::custom(format!(
                "certificate schema {} is not supported (this build reads schema {:?})",
                raw.schema, CERTIFICATE_SCHEMAS_READ
            )));
        }
        Ok(Witnesses {
            prefix: raw.prefix,
            instances: raw.instances,
        })
    }
}
