//! The game loop: a method asks, an adversary answers, observers watch.
//!
//! This is the only place that counts queries. A game is single-threaded and
//! deterministic given the method's seed. How it ended is data ([`Ending`]); an
//! [`Error`] means the game could not be played or recorded (an observer failed).

use serde::{Deserialize, Serialize};

use crate::adversary::Adversary;
use crate::class::Class;
use crate::error::Error;
use crate::instance::Witnesses;
use crate::method::Method;
use crate::oracle::{Answer, Output, Step};

/// Settings of one game.
#[derive(Clone, Debug, PartialEq)]
pub struct GameSettings {
    /// Most queries the method may ask; asking for one more ends the game as
    /// [`Ending::BudgetExhausted`] (queries used is then censored: more than the
    /// budget). Default: 1 000 000.
    pub budget: u64,
}

impl Default for GameSettings {
    fn default() -> Self {
        GameSettings { budget: 1_000_000 }
    }
}

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
    /// Witnesses and the prefix they certify; `None` when no prefix is certifiable.
    pub certificate: Option<Witnesses>,
}

/// Watches a game. Every hook may fail (for example a transcript write), which aborts
/// the game with that error.
pub trait Observer {
    /// Called once before the first query.
    fn on_start(&mut self, header: &Header) -> Result<(), Error> {
        let _ = header;
        Ok(())
    }
    /// Called after each answer; `index` counts queries from 1.
    fn on_query(
        &mut self,
        index: u64,
        query: &[f64],
        answer: &Answer,
        adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        let _ = (index, query, answer, adversary);
        Ok(())
    }
    /// Called once at the end.
    fn on_finish(&mut self, record: &FinalRecord) -> Result<(), Error> {
        let _ = record;
        Ok(())
    }
}

/// Plays `method` against `adversary` on `class`.
///
/// Queries are checked before the adversary sees them (right length, finite); a bad
/// query ends the game as [`Ending::MethodFailed`] without being answered.
pub fn play(
    header: &Header,
    method: &mut dyn Method,
    adversary: &mut dyn Adversary,
    settings: &GameSettings,
    observers: &mut [&mut dyn Observer],
) -> Result<FinalRecord, Error> {
    for observer in observers.iter_mut() {
        observer.on_start(header)?;
    }
    let dim = header.class.query_dim();
    let mut query = vec![0.0; dim];
    let mut used: u64 = 0;
    let ending = loop {
        match method.next(&mut query) {
            Err(error) => {
                break Ending::MethodFailed {
                    reason: error.to_string(),
                }
            }
            Ok(Step::Output(output)) => {
                if let Err(reason) = check_output(&output, dim) {
                    break Ending::MethodFailed { reason };
                }
                break Ending::Output { output };
            }
            Ok(Step::Query) => {
                if used == settings.budget {
                    break Ending::BudgetExhausted;
                }
                if let Some(i) = query.iter().position(|x| !x.is_finite()) {
                    break Ending::MethodFailed {
                        reason: format!(
                            "query {} has a non-finite coordinate {} at index {i}",
                            used + 1,
                            query[i]
                        ),
                    };
                }
                let answer = adversary.answer(&query);
                used += 1;
                for observer in observers.iter_mut() {
                    observer.on_query(used, &query, &answer, &*adversary)?;
                }
                if let Err(error) = method.observe(&query, &answer) {
                    break Ending::MethodFailed {
                        reason: error.to_string(),
                    };
                }
            }
        }
    };
    let record = FinalRecord {
        queries_used: used,
        ending,
        certificate: adversary.witnesses(),
    };
    for observer in observers.iter_mut() {
        observer.on_finish(&record)?;
    }
    Ok(record)
}

fn check_output(output: &Output, dim: usize) -> Result<(), String> {
    match output {
        Output::Empty => Ok(()),
        Output::Point { point } => {
            if point.len() != dim {
                Err(format!(
                    "output point has {} coordinates, expected {dim}",
                    point.len()
                ))
            } else if point.iter().any(|x| !x.is_finite()) {
                Err("output point has a non-finite coordinate".into())
            } else {
                Ok(())
            }
        }
    }
}

/// Records the undecided measure after every answer (for charts of progress).
#[derive(Clone, Debug, Default)]
pub struct UndecidedTrace {
    /// `(query index, undecided measure after that answer)`, from index 1.
    pub points: Vec<(u64, f64)>,
}

impl Observer for UndecidedTrace {
    fn on_query(
        &mut self,
        index: u64,
        _query: &[f64],
        _answer: &Answer,
        adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        self.points.push((index, adversary.undecided().value()));
        Ok(())
    }
}
