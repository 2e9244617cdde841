//! The transcript file: JSON Lines, one record a line, each `{"type": T, "data": D}`.
//!
//! Format version 1:
//! 1. `{"type":"header","data":{"format":1,"tool":"naysayer 0.1.0","class":{...},
//!    "adversary":"halving","method":"midpoint","seed":0,"budget":1000000}}`; the class
//!    is `{"kind":"feasibility","dim":d,"half_width":R,"rho":rho,"promise":"may-be-empty"}`
//!    (or `"nonempty"`).
//! 2. One `query` record per query, in order:
//!    `{"type":"query","data":{"index":i,"point":[x_1,...],"answer":A}}` with `i` counting
//!    from 1 and `A` either `{"kind":"inside"}` or
//!    `{"kind":"cut","normal":N,"offset":B}`: the strict cut `{y : N.y < B}`. `N` is a
//!    dense array of numbers or `{"axis":i,"sign":s}` (s = +1 or -1; axis from 0).
//! 3. One `final` record: `{"type":"final","data":{"queries_used":T,"ending":E,
//!    "certificate":C}}` with `E` one of `{"kind":"output","output":{"kind":"empty"}}`,
//!    `{"kind":"output","output":{"kind":"point","point":[...]}}`,
//!    `{"kind":"budget-exhausted"}`, `{"kind":"method-failed","reason":"..."}`,
//!    `{"kind":"interrupted","signal":"SIGINT"}` (a signal ended the game; the
//!    certificate covers what was answered), and `C`
//!    either `null` or `{"schema":S,"prefix":T*,"instances":[W,...]}`: witnesses that
//!    agree with the first `T*` answers, in certificate schema `S`
//!    ([`CERTIFICATE_SCHEMA`]; absent in files written before the key existed, read as
//!    schema 1; an unknown schema is refused). A witness is `{"kind":"empty"}` or
//!    `{"kind":"ball","center":[c_1,...],"radius":rho}`.
//!
//! Lattice classes (docs/theory.md §4): the class is `{"kind":"lattice","lower":[l_1,...],
//! "upper":[u_1,...],"cont_dim":d,"half_width":R,"rho":rho}` (integer box
//! prod {l_i..u_i}, continuous box [-R, R]^d; d = 0 is pure integer feasibility). Query
//! points have n + d coordinates, integer part first; answers are `inside` or cuts as
//! above (lifted cuts are dense normals of exact `f64` powers of two with an exact
//! offset). A lattice witness is `{"kind":"empty"}` or `{"kind":"lattice-hull",
//! "points":[[...],...],"fibre":F}`: K = conv(points cup fibre), with `F` either `null`
//! or `{"integer":[v_1,...],"center":[c_1,...],"radius":rho}` (the fibre ball
//! {v} x B(c, rho); `center` is empty when d = 0). Its claim: its mixed-integer points
//! are exactly the fibre ball (none when `F` is `null`).
//!
//! Numbers, one reading: a plain JSON number is exactly the `f64` it parses to, however
//! it is spelled (the integer token `9007199254740993` is the `f64` 9007199254740992;
//! writers use shortest round-trip formatting). Adversary-computed numbers that no `f64`
//! holds (offsets, centres) are `{"exact":"p/q","approx":f}`, with one grammar and size
//! limits and `approx` the nearest `f64` ([`crate::exact`]). Integer fields (`format`,
//! `schema`, `seed`, `budget`, `dim`, `cont_dim`, `index`, `queries_used`, `prefix`,
//! `axis`, `sign`, `lower`, `upper`, a fibre's `integer`) take integer tokens only (no
//! fraction, no exponent; `-0` is a float), read exactly within their types' ranges and
//! the class's limits. Non-finite numbers are never written: a non-finite coordinate is
//! rejected before it reaches the file.
//!
//! Keys: no object repeats a key; unknown keys are ignored; the final record's
//! `certificate` and a lattice hull's `fibre` must be present (`null` when there is
//! none). Every line is read within the limits of [`limits`] (length, nesting, number
//! length), the same as `tools/check_certificate.py`.
//!
//! Durability: in-process games buffer and flush at least once a second
//! and at the end; [`Flush::EveryRecord`] flushes after every record (for external
//! methods, which may not be replayable).

pub mod limits;
pub mod reader;
pub mod records;
pub mod writer;

pub use reader::{parse_line, TranscriptReader};
pub use records::{
    Demonstration, Ending, FinalRecord, Header, QueryRecord, Record, Witnesses, CERTIFICATE_SCHEMA,
    CERTIFICATE_SCHEMAS_READ, DEMONSTRATION_TOLERANCE, FORMAT_VERSION,
};
pub use writer::{Flush, MemoryTranscript, TranscriptWriter};
