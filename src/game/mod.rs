//! The game loop: a method asks, an adversary answers, observers watch.
//!
//! This is the only place that counts queries. A game is single-threaded and
//! deterministic given the method's seed. How it ended is data ([`Ending`]); an
//! [`Error`] means the game could not be played or recorded (an observer failed).

mod observers;

pub use observers::UndecidedTrace;

use crate::adversary::{Adversary, Conclusion};
use crate::error::Error;
use crate::interrupt;
use crate::method::Method;
use crate::oracle::{Answer, Output, Step};
use crate::transcript::{Ending, FinalRecord, Header};

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
    if let Some(capacity) = adversary.capacity() {
        if settings.budget > capacity {
            return Err(Error::InvalidSetting {
                name: "budget",
                reason: format!(
                    "the adversary {} is built for at most {capacity} queries (its horizon), \
                     but the budget is {}",
                    adversary.name(),
                    settings.budget
                ),
            });
        }
    }
    for observer in observers.iter_mut() {
        observer.on_start(header)?;
    }
    let dim = header.class.query_dim();
    let mut query = vec![0.0; dim];
    let mut used: u64 = 0;
    let interrupted = || Ending::Interrupted {
        signal: interrupt::signal_name().unwrap_or("a signal").to_string(),
    };
    let ending = loop {
        if interrupt::requested() {
            break interrupted();
        }
        match method.next(&mut query) {
            Err(_) if interrupt::requested() => break interrupted(),
            Err(error) => {
                break Ending::MethodFailed {
                    reason: error.chain(),
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
                if !answer.is_finite() {
                    // Only a query of enormous norm overflows an `f64` evaluation.
                    break Ending::MethodFailed {
                        reason: format!(
                            "query {} is so large that the answer overflows f64",
                            used + 1
                        ),
                    };
                }
                used += 1;
                for observer in observers.iter_mut() {
                    observer.on_query(used, &query, &answer, &*adversary)?;
                }
                if let Err(error) = method.observe(&query, &answer) {
                    if interrupt::requested() {
                        break interrupted();
                    }
                    break Ending::MethodFailed {
                        reason: error.chain(),
                    };
                }
            }
        }
    };
    method.end(&ending);
    let output = match &ending {
        Ending::Output {
            output: Output::Point { point },
        } => Some(point.as_slice()),
        _ => None,
    };
    let (certificate, demonstration) = match adversary.conclude(output)? {
        Conclusion::Certificate(witnesses) => (witnesses, None),
        Conclusion::Demonstration(demonstration) => (None, Some(demonstration)),
    };
    let record = FinalRecord {
        queries_used: used,
        ending,
        certificate,
        demonstration,
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
