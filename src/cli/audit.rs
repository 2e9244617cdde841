//! The first-order audit run by `naysayer check` on any first-order transcript (docs/theory.md
//! §2.1, §2.2): from the answers alone, whatever produced them (an adversary, an explicit
//! function through [`crate::adversary::instance_oracle`], another program's log in
//! this format), it reports
//! 1. whether the answers are consistent with some convex L-Lipschitz function at all
//!    (every subgradient within L in the class's dual norm, and v_s + <g_s, x_t - x_s>
//!    <= v_t for every pair, decided exactly); if not, the first violation, with 1-based
//!    query numbers;
//! 2. eps_cert, the largest accuracy for which [`universal::best_certificate`] finds two
//!    verified witness functions that reproduce every answer exactly and whose
//!    eps-solution sets are disjoint (docs/theory.md §2.2), with the two witnesses (written
//!    with `--witnesses FILE`);
//! 3. whether the method's output claims more than the answers allow: a method that
//!    stops after T queries with a point claims accuracy eps (the class's eps, or
//!    `--eps`); when eps_cert > eps the claim is flagged.
//!
//! What a flag proves: for this class (box, L, norm), no method whatsoever could
//! guarantee accuracy eps from these answers alone. Both witnesses are in the class and
//! give exactly these answers to these queries, and no point is eps-accurate for both,
//! so whatever point any method outputs after seeing these answers is more than eps from
//! optimal on one of them. What it does not prove: that the output is wrong on the
//! function actually queried (it may be right by luck), nor anything about eps above
//! eps_cert: eps_cert is a certified lower estimate of the unavoidable error, and the
//! true threshold may be larger (the witness family is restricted to max-of-affine plus
//! an l_inf cone, and the cone slopes range over a finite grid). The answers are
//! trusted as given: the audit checks that they could come from some function in the
//! class, not that they came from the function the user had in mind.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::certificate::first_order::dual_norm_at_most;
use crate::certificate::universal::{self, Exchange, Found};
use crate::class::{Class, FirstOrderClass};
use crate::error::Error;
use crate::oracle::{Answer, Output};
use crate::transcript::Witnesses;
use crate::transcript::{Ending, Header};
use crate::transcript::{Record, TranscriptReader};

/// A reason the answers fit no convex L-Lipschitz function (query numbers are 1-based).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Violation {
    /// The answer to this query has a subgradient longer than L in the dual norm.
    LongSubgradient {
        /// The query.
        query: usize,
    },
    /// The piece of answer `piece` exceeds the value answered at query `at`:
    /// v_s + <g_s, x_t - x_s> > v_t.
    Pair {
        /// s: the answer whose affine piece is too high.
        piece: usize,
        /// t: the query where it exceeds the answered value.
        at: usize,
    },
}

/// What the audit concluded about the method's claim.
#[derive(Clone, Debug, PartialEq)]
pub enum Claim {
    /// The method output a point after T queries, claiming accuracy `eps`, and eps_cert
    /// > eps: no method can guarantee that from these answers.
    Flagged,
    /// The method output a point and eps_cert <= eps (or none was found): the audit
    /// does not contradict the claim (it does not confirm it either).
    NotContradicted,
    /// The game ended without an output point (budget, failure, "empty", or no final
    /// record): no accuracy is claimed.
    NoClaim,
}

/// The audit of one first-order transcript.
#[derive(Clone, Debug)]
pub struct Audit {
    /// The class from the header.
    pub class: FirstOrderClass,
    /// The header.
    pub header: Header,
    /// Number of answers read.
    pub queries: usize,
    /// The accuracy the output is judged against (the class's eps unless overridden).
    pub claimed_eps: f64,
    /// The first violation of consistency, if any.
    pub violation: Option<Violation>,
    /// The best certificate for all the answers (consistent transcripts only).
    pub certificate: Option<Found>,
    /// The verdict on the claim.
    pub claim: Claim,
}

impl Audit {
    /// eps_cert for all the answers, when a certificate was found.
    pub fn certified_uncertainty(&self) -> Option<f64> {
        self.certificate.as_ref().map(|f| f.certified_uncertainty)
    }
}

/// The file written by `--witnesses`: the two witness functions and what they certify.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WitnessFile {
    /// The class (its eps is the claimed accuracy audited).
    pub class: Class,
    /// Number of answers the witnesses reproduce (all of them).
    pub queries: u64,
    /// The audit uncertainty: for every eps below it the two witnesses' eps-solution
    /// sets are disjoint (rounded down, so the figure itself is safe to quote as "more
    /// than"). On disk `audit_uncertainty` (files written before the rename say
    /// `certified_uncertainty`, which is read too), so it is not confused with the
    /// transcript's own certified uncertainty, which comes from another witness pair.
    #[serde(rename = "audit_uncertainty", alias = "certified_uncertainty")]
    pub certified_uncertainty: f64,
    /// The witnesses, with `prefix` = `queries`.
    pub certificate: Witnesses,
}

/// What [`read_first_order`] reads: the header, the answers in order, and how the game
/// ended (`None` without a final record).
pub type FirstOrderRead = (Header, Vec<Exchange>, Option<Ending>);

/// Reads the header, the first-order answers and the ending (when the final record is
/// there) of a transcript. `Ok(None)` when the class is not first-order.
pub fn read_first_order(path: &Path) -> Result<Option<FirstOrderRead>, Error> {
    let mut header: Option<Header> = None;
    let mut exchanges = Vec::new();
    let mut ending = None;
    for item in TranscriptReader::open(path)? {
        let (line, record) = item?;
        let bad = |reason: String| Error::Transcript { line, reason };
        match record {
            Record::Header(h) if header.is_none() => {
                if !matches!(h.class, Class::FirstOrder(_)) {
                    return Ok(None);
                }
                header = Some(h);
            }
            Record::Header(_) => return Err(bad("a second header".into())),
            _ if header.is_none() => return Err(bad("the first record must be the header".into())),
            Record::Query(q) => {
                let Answer::FirstOrder(a) = q.answer else {
                    return Err(bad(format!(
                        "answer {}: a separation answer in a first-order transcript",
                        q.index
                    )));
                };
                if q.index != exchanges.len() as u64 + 1 {
                    return Err(bad(format!(
                        "expected query {}, found query {}",
                        exchanges.len() + 1,
                        q.index
                    )));
                }
                let d = header.as_ref().map_or(0, |h| h.class.query_dim());
                if q.point.len() != d || a.subgradient.len() != d {
                    return Err(bad(format!(
                        "query {} has the wrong number of coordinates (expected {d})",
                        q.index
                    )));
                }
                exchanges.push(Exchange {
                    point: q.point,
                    value: a.value,
                    gradient: a.subgradient,
                });
            }
            Record::Final(f) => ending = Some(f.ending),
        }
    }
    let header = header.ok_or(Error::Transcript {
        line: 1,
        reason: "the file is empty".into(),
    })?;
    Ok(Some((header, exchanges, ending)))
}

/// Audits the first-order transcript at `path` (see the module docs); `claimed_eps`
/// overrides the class's eps as the accuracy the output is judged against. `Ok(None)`
/// when the transcript is not first-order.
pub fn audit_file(path: &Path, claimed_eps: Option<f64>) -> Result<Option<Audit>, Error> {
    let Some((header, exchanges, ending)) = read_first_order(path)? else {
        return Ok(None);
    };
    let Class::FirstOrder(c) = &header.class else {
        return Ok(None);
    };
    let class = FirstOrderClass::new(c.dim, c.half_width, c.eps, c.lipschitz, c.norm)?;
    let claimed_eps = claimed_eps.unwrap_or(class.eps);
    if !(claimed_eps.is_finite() && claimed_eps > 0.0) {
        return Err(Error::InvalidClass {
            reason: format!("the audited accuracy eps = {claimed_eps} must be finite and positive"),
        });
    }
    Ok(Some(audit(
        header,
        class,
        &exchanges,
        ending.as_ref(),
        claimed_eps,
    )?))
}

/// Audits answers already read (see [`audit_file`]).
pub fn audit(
    header: Header,
    class: FirstOrderClass,
    exchanges: &[Exchange],
    ending: Option<&Ending>,
    claimed_eps: f64,
) -> Result<Audit, Error> {
    let violation = exchanges
        .iter()
        .position(|e| !dual_norm_at_most(&e.gradient, class.norm, class.lipschitz))
        .map(|t| Violation::LongSubgradient { query: t + 1 })
        .or_else(|| {
            universal::first_inconsistent_pair(exchanges).map(|(s, t)| Violation::Pair {
                piece: s + 1,
                at: t + 1,
            })
        });
    let certificate = if violation.is_none() {
        universal::best_certificate(&class, exchanges)?
    } else {
        None
    };
    let claim = match ending {
        Some(Ending::Output {
            output: Output::Point { .. },
        }) => match &certificate {
            Some(found) if found.certified_uncertainty > claimed_eps => Claim::Flagged,
            _ => Claim::NotContradicted,
        },
        _ => Claim::NoClaim,
    };
    Ok(Audit {
        queries: exchanges.len(),
        header,
        class,
        claimed_eps,
        violation,
        certificate,
        claim,
    })
}

/// Writes the audit's two witnesses to `path` as a [`WitnessFile`]; `Ok(false)` when
/// there are none to write.
pub fn write_witnesses(path: &Path, audit: &Audit) -> Result<bool, Error> {
    let Some(found) = &audit.certificate else {
        return Ok(false);
    };
    let file = WitnessFile {
        class: Class::FirstOrder(FirstOrderClass {
            eps: audit.claimed_eps,
            ..audit.class.clone()
        }),
        queries: audit.queries as u64,
        certified_uncertainty: found.certified_uncertainty,
        certificate: found.witnesses.clone(),
    };
    let text = serde_json::to_string_pretty(&file).map_err(|e| Error::Io {
        action: "cannot write witnesses",
        path: path.to_path_buf(),
        source: std::io::Error::other(e),
    })?;
    std::fs::write(path, text + "\n").map_err(|source| Error::Io {
        action: "cannot write witnesses",
        path: path.to_path_buf(),
        source,
    })?;
    Ok(true)
}

/// Reads a [`WitnessFile`].
pub fn read_witnesses(path: &Path) -> Result<WitnessFile, Error> {
    let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
        action: "cannot read witnesses",
        path: path.to_path_buf(),
        source,
    })?;
    serde_json::from_str(&text).map_err(|e| Error::Transcript {
        line: e.line() as u64,
        reason: format!("not a witness file: {e}"),
    })
}

/// The audit in words (the `naysayer check` section).
pub fn describe(audit: &Audit, witnesses: Option<&PathBuf>) -> String {
    let mut out = String::new();
    out.push_str(&format!(
        "audit                  {} answers (first-order, {:?} norm, L = {})\n",
        audit.queries, audit.class.norm, audit.class.lipschitz
    ));
    match &audit.violation {
        Some(Violation::LongSubgradient { query }) => out.push_str(&format!(
            "consistency            INCONSISTENT: the subgradient of answer {query} is longer \
             than L in the dual norm; no L-Lipschitz function gives these answers\n"
        )),
        Some(Violation::Pair { piece, at }) => out.push_str(&format!(
            "consistency            INCONSISTENT: answers {piece} and {at}: the affine piece \
             of answer {piece} exceeds the value answered at query {at}; no convex function \
             gives these answers\n"
        )),
        None => out.push_str(
            "consistency            consistent with a convex L-Lipschitz function (checked \
             exactly)\n",
        ),
    }
    if audit.violation.is_none() {
        match audit.certified_uncertainty() {
            Some(value) => out.push_str(&format!(
                "audit uncertainty      {value:e} (from the audit's own witness pair, searched \
                 by linear programs over all {} answers and verified exactly: for every eps \
                 below it, no method can guarantee eps-accuracy from these answers; a second \
                 lower estimate beside the certified uncertainty, from a different pair, so \
                 the two differ and the larger holds; docs/theory.md §2.2)\n",
                audit.queries
            )),
            None => out.push_str(
                "audit uncertainty      none (the audit's search found no pair of witness \
                 functions that agree with every answer)\n",
            ),
        }
    }
    match audit.claim {
        Claim::Flagged => out.push_str(&format!(
            "claim                  FLAGGED: the method claims accuracy {} after {} queries, \
             but the audit uncertainty {:e} is larger: no method could guarantee that from \
             these answers\n",
            audit.claimed_eps,
            audit.queries,
            audit.certified_uncertainty().unwrap_or(f64::NAN)
        )),
        Claim::NotContradicted => out.push_str(&format!(
            "claim                  accuracy {} after {} queries: not contradicted by the \
             answers (not confirmed either)\n",
            audit.claimed_eps, audit.queries
        )),
        Claim::NoClaim => out.push_str("claim                  none (no output point)\n"),
    }
    if let Some(path) = witnesses {
        out.push_str(&format!(
            "witnesses              {}\n",
            if audit.certificate.is_some() {
                path.display().to_string()
            } else {
                "none to write".into()
            }
        ));
    }
    out
}
