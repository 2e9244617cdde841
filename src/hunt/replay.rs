//! Answer replay: feed the answers recorded in a transcript back to a method and check
//! that it asks the same queries and ends the same way.
//!
//! A deterministic method is a function from the answers it has seen to its next move,
//! so replaying a prefix of answers restarts it at any node of its game tree. The
//! replay runs through the ordinary game loop ([`crate::game::play`]) against a
//! [`ScriptedAdversary`] that hands out the recorded answers in order, so counting and
//! transcript writing happen at the usual boundary. Where the method leaves the script
//! (a different query, or more queries than the script holds) the first such place is
//! reported as a [`Divergence`]; the adversary then answers with a valid central axis cut
//! (`{y_0 < x_0}`) so the game can finish, and it withholds the recorded witnesses when
//! the divergence lies inside their prefix (they were checked against other queries).
//!
//! Two replays of the same answers that disagree prove that the method is not
//! deterministic ([`check_determinism`]); a search over its game tree is then refused.

use crate::adversary::{Adversary, Undecided};
use crate::error::Error;
use crate::exact::Exact;
use crate::game::{self, GameSettings};
use crate::method::Method;
use crate::oracle::{Answer, Cut, Normal};
use crate::transcript::Witnesses;
use crate::transcript::{Ending, FinalRecord, Header};
use crate::transcript::{MemoryTranscript, Record, TranscriptReader};

/// A recorded game as `(query, answer)` pairs, in order.
pub type Script = Vec<(Vec<f64>, Answer)>;

/// The first place a replayed method left its script.
#[derive(Clone, Debug, PartialEq)]
pub struct Divergence {
    /// 1-based index of the query where the method left the script.
    pub index: u64,
    /// The recorded query there (`None` when the script had already ended).
    pub expected: Option<Vec<f64>>,
    /// The query the method asked.
    pub found: Vec<f64>,
}

impl Divergence {
    /// One sentence for messages.
    pub fn describe(&self) -> String {
        match &self.expected {
            Some(expected) => format!(
                "at query {} the method asked {:?} where the recording has {:?}",
                self.index, self.found, expected
            ),
            None => format!(
                "the method asked a query {} ({:?}) after the recorded game had ended",
                self.index, self.found
            ),
        }
    }
}

/// An adversary that answers from a script of recorded `(query, answer)` pairs and
/// hands over recorded witnesses (module doc).
#[derive(Clone, Debug)]
pub struct ScriptedAdversary {
    name: String,
    script: Script,
    witnesses: Option<Witnesses>,
    answered: usize,
    divergence: Option<Divergence>,
}

impl ScriptedAdversary {
    /// An adversary named `name` that replays `script` and finally hands over
    /// `witnesses`.
    pub fn new(name: &str, script: Script, witnesses: Option<Witnesses>) -> ScriptedAdversary {
        ScriptedAdversary {
            name: name.to_string(),
            script,
            witnesses,
            answered: 0,
            divergence: None,
        }
    }

    /// The first place the method left the script, if it did.
    pub fn divergence(&self) -> Option<&Divergence> {
        self.divergence.as_ref()
    }
}

/// Bit-for-bit equality of two points (so -0.0 and 0.0 differ, as they do on disk).
fn same_point(a: &[f64], b: &[f64]) -> bool {
    a.len() == b.len() && a.iter().zip(b).all(|(x, y)| x.to_bits() == y.to_bits())
}

impl Adversary for ScriptedAdversary {
    fn name(&self) -> &str {
        &self.name
    }

    fn answer(&mut self, query: &[f64]) -> Answer {
        let index = self.answered;
        self.answered += 1;
        if self.divergence.is_none() {
            match self.script.get(index) {
                Some((expected, answer)) if same_point(expected, query) => return answer.clone(),
                expected => {
                    self.divergence = Some(Divergence {
                        index: index as u64 + 1,
                        expected: expected.map(|(q, _)| q.clone()),
                        found: query.to_vec(),
                    });
                }
            }
        }
        // Off the script: the central cut {y_0 < x_0}, valid for any query.
        Answer::Cut(Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(query[0]),
        })
    }

    fn witnesses(&self) -> Option<Witnesses> {
        let witnesses = self.witnesses.clone()?;
        match &self.divergence {
            Some(d) if d.index <= witnesses.prefix => None,
            _ => Some(witnesses),
        }
    }

    fn undecided(&self) -> Undecided {
        // The script carries no geometry; progress through it is what is left to decide.
        Undecided::Log2Volume(
            ((self.script.len() - self.answered.min(self.script.len())) as f64 + 1.0).log2(),
        )
    }
}

/// What feeding recorded answers back to a method produced.
#[derive(Clone, Debug)]
pub struct ReplayReport {
    /// The transcript the replay produced, header first.
    pub records: Vec<Record>,
    /// Its final record.
    pub record: FinalRecord,
    /// The recording's final record.
    pub original: FinalRecord,
    /// The first place the method left the recorded game, if any.
    pub divergence: Option<Divergence>,
}

impl ReplayReport {
    /// True when the method asked exactly the recorded queries, the same number of them,
    /// and ended the same way.
    pub fn reproduced(&self) -> bool {
        self.divergence.is_none()
            && self.record.queries_used == self.original.queries_used
            && self.record.ending == self.original.ending
    }

    /// One line saying what happened.
    pub fn describe(&self) -> String {
        if self.reproduced() {
            return format!(
                "reproduced: the same {} queries and the same ending",
                self.record.queries_used
            );
        }
        if let Some(d) = &self.divergence {
            return format!("not reproduced: {}", d.describe());
        }
        format!(
            "not reproduced: the recording used {} queries and ended {:?}; the replay used {} \
             and ended {:?}",
            self.original.queries_used,
            self.original.ending,
            self.record.queries_used,
            self.record.ending
        )
    }
}

/// The header, the `(query, answer)` pairs and the final record of an in-memory
/// transcript; [`Error::Transcript`] when it is not header, queries, final in order.
pub fn split_records(records: &[Record]) -> Result<(Header, Script, FinalRecord), Error> {
    let bad = |line: usize, reason: &str| Error::Transcript {
        line: line as u64,
        reason: reason.into(),
    };
    let Some(Record::Header(header)) = records.first() else {
        return Err(bad(1, "the first record must be the header"));
    };
    let Some(Record::Final(last)) = records.last() else {
        return Err(bad(
            records.len().max(1),
            "the transcript ends without a final record (truncated?)",
        ));
    };
    let mut script = Vec::with_capacity(records.len().saturating_sub(2));
    for (i, record) in records[1..records.len() - 1].iter().enumerate() {
        match record {
            Record::Query(q) if q.index == i as u64 + 1 => {
                script.push((q.point.clone(), q.answer.clone()));
            }
            _ => return Err(bad(i + 2, &format!("expected query record {}", i + 1))),
        }
    }
    Ok((header.clone(), script, last.clone()))
}

/// Reads a transcript file into records (each line parsed; no verification).
pub fn read_records(path: &std::path::Path) -> Result<Vec<Record>, Error> {
    TranscriptReader::open(path)?
        .map(|item| item.map(|(_, record)| record))
        .collect()
}

/// Feeds the answers recorded in `records` back to `method` (freshly built, in the state
/// the recording started from) through the game loop with the recording's header and
/// budget, and reports whether it reproduces the recorded queries, count and ending.
///
/// This is the regression test a solver author can put in CI: keep the transcript of a
/// hard game (for example the worst one `naysayer hunt` found), replay it against every
/// new build, and require [`ReplayReport::reproduced`].
pub fn replay_answers(method: &mut dyn Method, records: &[Record]) -> Result<ReplayReport, Error> {
    let (header, script, original) = split_records(records)?;
    let mut adversary =
        ScriptedAdversary::new(&header.adversary, script, original.certificate.clone());
    let mut memory = MemoryTranscript::default();
    let record = game::play(
        &header,
        method,
        &mut adversary,
        &GameSettings {
            budget: header.budget,
        },
        &mut [&mut memory],
    )?;
    Ok(ReplayReport {
        records: memory.records,
        record,
        original,
        divergence: adversary.divergence().cloned(),
    })
}

/// Refuses a method that is not deterministic: replays `records` (a game it played,
/// built fresh by `factory`) against a second fresh instance and compares every query
/// and the ending. [`Error::Unsupported`] with the first disagreement when they differ.
pub fn check_determinism(
    factory: &(dyn Fn() -> Result<Box<dyn Method + Send>, Error> + Sync),
    records: &[Record],
) -> Result<(), Error> {
    let mut second = factory()?;
    let name = second.name().to_string();
    let report = replay_answers(second.as_mut(), records)?;
    if report.reproduced() {
        return Ok(());
    }
    Err(not_deterministic(&name, &report.describe()))
}

/// The error for a method whose replays disagree.
pub(crate) fn not_deterministic(name: &str, what: &str) -> Error {
    Error::Unsupported {
        what: format!("method {name:?}"),
        reason: format!(
            "it is not deterministic: two replays of the same answers disagree ({what}); a \
             hunt searches one deterministic method's game tree, so fix its seed and remove \
             hidden inputs such as the clock or global counters"
        ),
    }
}

/// How a recorded game ended, in a few words (for messages).
pub fn ending_words(ending: &Ending) -> String {
    match ending {
        Ending::Output { output } => match output {
            crate::oracle::Output::Empty => "declared K empty".into(),
            crate::oracle::Output::Point { .. } => "output a point".into(),
        },
        Ending::BudgetExhausted => "ran out of budget".into(),
        Ending::MethodFailed { reason } => format!("failed: {reason}"),
        Ending::Interrupted { signal } => format!("was interrupted by {signal}"),
    }
}
