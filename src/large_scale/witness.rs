//! The witness of a rotation adversary: the fully specified rotated function, its export
//! as a demonstration transcript, and the replay check.
//!
//! A witness stores its directions u_1..u_p as the exact `f64` numbers the adversary
//! used (JSON numbers written with shortest round-trip formatting, so they read back
//! bit for bit). It is a demonstration, not a certificate: the directions are
//! orthonormal only to rounding, so the replay check compares with a relative tolerance
//! ([`RELATIVE_TOLERANCE`]), never exactly, and `naysayer check` does not accept these
//! files.
//!
//! ## Demonstration transcript (JSON Lines)
//! One record a line, `{"type": T, "data": D}`:
//! 1. `demo-header`: `{"format":1,"tool":"naysayer 0.1.0","class":C,"oracle":"rotation",
//!    "method":"coordinate-search","seed":0,"queries":T}` with `C` a
//!    [`LargeScaleClass`] (`{"kind":"nonsmooth","dim":d,"lipschitz":M,"radius":R}`, ...).
//! 2. `demo-query`, one per query: `{"index":i,"point":[...],"value":v,"gradient":[...]}`
//!    (i from 1; every number the `f64` the oracle answered).
//! 3. `demo-final`: `{"queries_used":T,"output":[...] or null,"gap":g,"bound":b,
//!    "witness":W}` with `W` either `{"kind":"rotated-max","dim":d,"lipschitz":M,
//!    "radius":R,"directions":[[...],...]}` (f = M max{max_i <u_i,x>, ||x|| -
//!    R (1 + 1/sqrt(p))}) or `{"kind":"rotated-chain","dim":d,"coupling":c,
//!    "strong_convexity":mu,"shift":s,"directions":[[...],...]}` (f = (c/2) z^T A z -
//!    c s z_1 + (mu/2)||x||^2, z = U^T x).
//!
//! ## Replay tolerance
//! Values are compared relative to the function's natural scale at x: M (R + ||x||) for
//! the rotated max, (4c + mu)(R + ||x||)^2 for the chain. A nonsmooth answer's
//! subgradient must equal, to 1e-12 M, the gradient of a piece whose value at x is within
//! the value tolerance of the max (a hidden direction is orthogonal to the query only to
//! rounding, so a tie may be broken the other way on replay); a chain answer's gradient
//! must equal the witness's gradient to 1e-12 (4c + mu)(R + ||x||).

use std::io::{BufRead, Write};
use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::class::LargeScaleClass;
use crate::error::Error;
use crate::large_scale::basis::{axpy, dot};
use crate::large_scale::rotation_chain::chain_part;
use crate::large_scale::{norm, KnownFunction, Oracle, RELATIVE_TOLERANCE};

/// A fully specified rotated function.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum RotatedWitness {
    /// f(x) = M max{ max_i <u_i, x>, ||x|| - R (1 + 1/sqrt(p)) }, p directions.
    RotatedMax {
        /// Dimension d.
        dim: usize,
        /// M.
        lipschitz: f64,
        /// R.
        radius: f64,
        /// u_1..u_p.
        directions: Vec<Vec<f64>>,
    },
    /// f(x) = (c/2) z^T A z - c s z_1 + (mu/2) ||x||^2 with z = U^T x.
    RotatedChain {
        /// Dimension d.
        dim: usize,
        /// c.
        coupling: f64,
        /// mu.
        strong_convexity: f64,
        /// s.
        shift: f64,
        /// u_1..u_p.
        directions: Vec<Vec<f64>>,
    },
}

impl RotatedWitness {
    fn directions(&self) -> &[Vec<f64>] {
        match self {
            RotatedWitness::RotatedMax { directions, .. }
            | RotatedWitness::RotatedChain { directions, .. } => directions,
        }
    }

    fn projections(&self, x: &[f64]) -> Vec<f64> {
        self.directions().iter().map(|u| dot(u, x)).collect()
    }

    /// The largest deviation from orthonormality, max |<u_i, u_j> - delta_ij|.
    pub fn orthonormality_error(&self) -> f64 {
        let u = self.directions();
        let mut worst: f64 = 0.0;
        for i in 0..u.len() {
            for j in 0..=i {
                let target = if i == j { 1.0 } else { 0.0 };
                worst = worst.max((dot(&u[i], &u[j]) - target).abs());
            }
        }
        worst
    }

    /// Value scale and gradient scale at x (see the module docs).
    fn scales(&self, x: &[f64]) -> (f64, f64) {
        let r = norm(&self.minimiser());
        let nx = norm(x);
        match self {
            RotatedWitness::RotatedMax { lipschitz, .. } => (lipschitz * (r + nx), *lipschitz),
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                ..
            } => {
                let beta = 4.0 * coupling + strong_convexity;
                (beta * (r + nx) * (r + nx), beta * (r + nx))
            }
        }
    }

    /// Checks one recorded answer; returns (relative value error, relative gradient
    /// error), the latter the smallest over the pieces active within tolerance.
    pub fn check_answer(&self, x: &[f64], value: f64, gradient: &[f64]) -> (f64, f64) {
        let (value_scale, gradient_scale) = self.scales(x);
        match self {
            RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            } => {
                let m = *lipschitz;
                let p = directions.len() as f64;
                let z = self.projections(x);
                let nx = norm(x);
                let norm_part = m * (nx - radius * (1.0 + 1.0 / p.sqrt()));
                let top = z.iter().map(|a| m * a).fold(norm_part, f64::max);
                let value_error = (top - value).abs() / value_scale;
                let active =
                    |piece_value: f64| top - piece_value <= RELATIVE_TOLERANCE * value_scale;
                let mut gradient_error = f64::INFINITY;
                for (u, a) in directions.iter().zip(&z) {
                    if active(m * a) {
                        let e: f64 = gradient
                            .iter()
                            .zip(u)
                            .map(|(g, ui)| (g - m * ui) * (g - m * ui))
                            .sum();
                        gradient_error = gradient_error.min(e.sqrt() / gradient_scale);
                    }
                }
                if active(norm_part) && nx > 0.0 {
                    let e: f64 = gradient
                        .iter()
                        .zip(x)
                        .map(|(g, xi)| (g - m * xi / nx) * (g - m * xi / nx))
                        .sum();
                    gradient_error = gradient_error.min(e.sqrt() / gradient_scale);
                }
                (value_error, gradient_error)
            }
            RotatedWitness::RotatedChain { .. } => {
                let mut g = vec![0.0; x.len()];
                let v = self.clone().answer(x, &mut g).unwrap_or(f64::NAN);
                let e: f64 = gradient
                    .iter()
                    .zip(&g)
                    .map(|(a, b)| (a - b) * (a - b))
                    .sum();
                ((v - value).abs() / value_scale, e.sqrt() / gradient_scale)
            }
        }
    }
}

impl Oracle for RotatedWitness {
    fn name(&self) -> &str {
        match self {
            RotatedWitness::RotatedMax { .. } => "rotated-max",
            RotatedWitness::RotatedChain { .. } => "rotated-chain",
        }
    }

    fn dim(&self) -> usize {
        match self {
            RotatedWitness::RotatedMax { dim, .. } | RotatedWitness::RotatedChain { dim, .. } => {
                *dim
            }
        }
    }

    fn answer(&mut self, x: &[f64], gradient: &mut [f64]) -> Result<f64, Error> {
        let z = self.projections(x);
        match self {
            RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            } => {
                let m = *lipschitz;
                let p = directions.len() as f64;
                let nx = norm(x);
                let norm_part = nx - *radius * (1.0 + 1.0 / p.sqrt());
                let mut best = 0;
                for i in 1..z.len() {
                    if z[i] > z[best] {
                        best = i;
                    }
                }
                if z[best] >= norm_part {
                    for (g, ui) in gradient.iter_mut().zip(&directions[best]) {
                        *g = m * ui;
                    }
                    Ok(m * z[best])
                } else {
                    for (g, xi) in gradient.iter_mut().zip(x) {
                        *g = m * xi / nx;
                    }
                    Ok(m * norm_part)
                }
            }
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                ..
            } => {
                let mut w = Vec::new();
                let value = chain_part(&z, directions.len(), *coupling, *shift, &mut w)
                    + 0.5 * *strong_convexity * dot(x, x);
                for (g, xi) in gradient.iter_mut().zip(x) {
                    *g = *strong_convexity * xi;
                }
                for (wi, u) in w.iter().zip(directions.iter()) {
                    axpy(*wi, u, gradient);
                }
                Ok(value)
            }
        }
    }
}

impl KnownFunction for RotatedWitness {
    fn optimal_value(&self) -> f64 {
        match self {
            RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            } => -lipschitz * radius / (directions.len() as f64).sqrt(),
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                ..
            } => {
                let z1 = crate::large_scale::instances::Chain::unit_minimiser(
                    directions.len(),
                    *coupling,
                    *strong_convexity,
                )[0];
                -0.5 * coupling * shift * shift * z1
            }
        }
    }

    fn minimiser(&self) -> Vec<f64> {
        let (weights, dim): (Vec<f64>, usize) = match self {
            RotatedWitness::RotatedMax {
                radius,
                directions,
                dim,
                ..
            } => {
                let p = directions.len();
                (vec![-radius / (p as f64).sqrt(); p], *dim)
            }
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                dim,
            } => (
                crate::large_scale::instances::Chain::unit_minimiser(
                    directions.len(),
                    *coupling,
                    *strong_convexity,
                )
                .into_iter()
                .map(|z| z * shift)
                .collect(),
                *dim,
            ),
        };
        let mut x = vec![0.0; dim];
        for (w, u) in weights.iter().zip(self.directions()) {
            axpy(*w, u, &mut x);
        }
        x
    }

    fn gap(&self, x: &[f64]) -> f64 {
        match self {
            RotatedWitness::RotatedMax { .. } => {
                let mut g = vec![0.0; x.len()];
                self.clone().answer(x, &mut g).unwrap_or(f64::NAN) - self.optimal_value()
            }
            RotatedWitness::RotatedChain {
                coupling,
                strong_convexity,
                shift,
                directions,
                ..
            } => {
                // (1/2)(c Q(z - z*) + mu ||x - x*||^2), z = U^T x.
                let star: Vec<f64> = crate::large_scale::instances::Chain::unit_minimiser(
                    directions.len(),
                    *coupling,
                    *strong_convexity,
                )
                .into_iter()
                .map(|z| z * shift)
                .collect();
                let e: Vec<f64> = self
                    .projections(x)
                    .iter()
                    .zip(&star)
                    .map(|(a, b)| a - b)
                    .collect();
                let mut quad = e[0] * e[0] + e[e.len() - 1] * e[e.len() - 1];
                for w in e.windows(2) {
                    quad += (w[0] - w[1]) * (w[0] - w[1]);
                }
                let far = if *strong_convexity > 0.0 {
                    let xs = self.minimiser();
                    x.iter()
                        .zip(&xs)
                        .map(|(a, b)| (a - b) * (a - b))
                        .sum::<f64>()
                } else {
                    0.0
                };
                0.5 * (coupling * quad + strong_convexity * far)
            }
        }
    }
}

/// The header of a demonstration transcript.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DemoHeader {
    /// Format version (1).
    pub format: u32,
    /// `naysayer <version>`.
    pub tool: String,
    /// The class.
    pub class: LargeScaleClass,
    /// The oracle (adversary or instance) name.
    pub oracle: String,
    /// The method name.
    pub method: String,
    /// The method's seed.
    pub seed: u64,
    /// The planned number of queries T.
    pub queries: u64,
}

/// One answered query.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DemoQuery {
    /// 1-based index.
    pub index: u64,
    /// The query.
    pub point: Vec<f64>,
    /// f(x) as answered.
    pub value: f64,
    /// The (sub)gradient as answered.
    pub gradient: Vec<f64>,
}

/// The last record: the output, the gap and the witness.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DemoFinal {
    /// Queries answered.
    pub queries_used: u64,
    /// The method's output, when it gave one.
    pub output: Option<Vec<f64>>,
    /// The gap in the class's accuracy measure, evaluated on the witness.
    pub gap: f64,
    /// The published bound the adversary forces.
    pub bound: f64,
    /// The rotated function.
    pub witness: RotatedWitness,
}

/// One line of a demonstration transcript.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", content = "data", rename_all = "kebab-case")]
pub enum DemoRecord {
    /// First line.
    DemoHeader(DemoHeader),
    /// One exchange.
    DemoQuery(DemoQuery),
    /// Last line.
    DemoFinal(DemoFinal),
}

/// Writes a demonstration transcript to `path`.
pub fn write_transcript(path: &Path, records: &[DemoRecord]) -> Result<(), Error> {
    let io = |source: std::io::Error| Error::Io {
        action: "cannot write demonstration transcript",
        path: path.to_path_buf(),
        source,
    };
    let file = std::fs::File::create(path).map_err(io)?;
    let mut out = std::io::BufWriter::new(file);
    for r in records {
        serde_json::to_writer(&mut out, r).map_err(|e| io(std::io::Error::other(e)))?;
        out.write_all(b"\n").map_err(io)?;
    }
    out.flush().map_err(io)
}

/// Reads a demonstration transcript; a malformed line is an error naming it.
pub fn read_transcript(path: &Path) -> Result<Vec<DemoRecord>, Error> {
    let file = std::fs::File::open(path).map_err(|source| Error::Io {
        action: "cannot read demonstration transcript",
        path: path.to_path_buf(),
        source,
    })?;
    let mut records = Vec::new();
    for (i, line) in std::io::BufReader::new(file).lines().enumerate() {
        let line = line.map_err(|source| Error::Io {
            action: "cannot read demonstration transcript",
            path: path.to_path_buf(),
            source,
        })?;
        records.push(serde_json::from_str(&line).map_err(|e| Error::Transcript {
            line: i as u64 + 1,
            reason: format!("not a demonstration record: {e}"),
        })?);
    }
    Ok(records)
}

/// What a replay found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ReplayReport {
    /// Answers checked.
    pub answers: u64,
    /// Largest relative value error.
    pub value_error: f64,
    /// Largest relative subgradient error.
    pub gradient_error: f64,
    /// Largest deviation of the directions from orthonormality.
    pub orthonormality_error: f64,
}

/// Replays every answer of a demonstration transcript against its witness; an error
/// names the first line (1-based) whose value or subgradient the witness does not
/// reproduce to [`RELATIVE_TOLERANCE`].
pub fn replay(records: &[DemoRecord]) -> Result<ReplayReport, Error> {
    let Some(DemoRecord::DemoFinal(last)) = records.last() else {
        return Err(Error::Transcript {
            line: records.len() as u64,
            reason: "the last record is not a demo-final record with the witness".into(),
        });
    };
    let witness = &last.witness;
    let mut report = ReplayReport {
        answers: 0,
        value_error: 0.0,
        gradient_error: 0.0,
        orthonormality_error: witness.orthonormality_error(),
    };
    for (i, record) in records.iter().enumerate() {
        let DemoRecord::DemoQuery(q) = record else {
            continue;
        };
        if q.point.len() != witness.dim() || q.gradient.len() != witness.dim() {
            return Err(Error::Transcript {
                line: i as u64 + 1,
                reason: format!("point or gradient length is not d = {}", witness.dim()),
            });
        }
        let (v, g) = witness.check_answer(&q.point, q.value, &q.gradient);
        if !(v <= RELATIVE_TOLERANCE && g <= RELATIVE_TOLERANCE) {
            return Err(Error::Transcript {
                line: i as u64 + 1,
                reason: format!(
                    "the witness does not reproduce answer {}: relative value error {v:e}, \
                     subgradient error {g:e} (tolerance {RELATIVE_TOLERANCE:e})",
                    q.index
                ),
            });
        }
        report.answers += 1;
        report.value_error = report.value_error.max(v);
        report.gradient_error = report.gradient_error.max(g);
    }
    Ok(report)
}
