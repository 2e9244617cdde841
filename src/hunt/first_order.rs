//! Targeted search for first-order methods (docs/theory.md §2.4): the answers of the slab
//! funnel that make one deterministic method slowest.
//!
//! The funnel's answer at a query is forced up to its tie rules: when several pieces
//! attain the largest value (revealed pieces, or unfixed coordinates attaining U), any of
//! them may answer, and an unfixed coordinate whose query lies exactly on the level
//! centre may take either sign. Each such choice keeps the invariant the proof of
//! docs/theory.md §2.4 rests on (the answer is the largest of the revealed pieces and U, and
//! its piece attains it), so every line of choices is consistent, keeps the theorem's
//! count, and carries the funnel's own certificate ([`SlabFunnel::choices`]; the property
//! test `every_admissible_choice_keeps_the_construction_consistent` checks it). Among the
//! lines, the hunt looks for the one after which the method has asked the most queries
//! while the certificate still held: the certified count min(queries used, T* + 1).
//!
//! # Search: beam search, in passes
//! A node is a line of choices with the method and the funnel in the state it reached.
//! At each depth every open node gets one child per admissible answer to its pending
//! query (most nodes have one: ties are rare except at level centres); children are
//! ranked by the signs the funnel has fixed (fewer first: more of the problem is still
//! undecided), ties broken by a seeded random key, and the best `width` form the next
//! beam. A node is finished when the method stops, fails, or reaches the game budget.
//! Passes repeat with fresh random keys until the replay budget is spent; a pass cut
//! short by the budget finishes its best open node with the funnel's default answers.
//!
//! # What is guaranteed
//! The method first plays the funnel itself (the default choices); a second fresh
//! instance replays those answers, and a method whose replay differs is refused. That
//! game is the first candidate, so the result is never below the funnel's own game. The
//! best line found is then certified with the funnel's default settings (its witness pair,
//! extended by the LP search of docs/theory.md §2.2 where the size allows) and compared with
//! the funnel's game on that count; the larger is replayed from scratch through the game
//! loop and checked by the exact verifier. Counts are measured for this one method and
//! seed: a longer line may exist that the search did not find.

use rand::Rng;
use rayon::prelude::*;

use crate::adversary::slab_funnel::{Choice, FunnelSettings, LpExtension, SlabFunnel};
use crate::adversary::Adversary;
use crate::bounds::slab_funnel_lower_bound;
use crate::certificate::{self, Verdict};
use crate::class::{Class, FirstOrderClass};
use crate::error::Error;
use crate::game::{self, GameSettings, Observer};
use crate::hunt::answers::node_rng;
use crate::hunt::replay::{check_determinism, not_deterministic, split_records, ScriptedAdversary};
use crate::hunt::{GameFigures, HuntProgress, HuntReport, HuntSettings, MethodFactory};
use crate::method::{self, Method};
use crate::oracle::{Answer, Step};
use crate::transcript::{Ending, Header, Witnesses};
use crate::transcript::{Flush, MemoryTranscript, TranscriptWriter, FORMAT_VERSION};

/// The adversary name written in hunted first-order transcripts' headers.
pub const HUNT_FUNNEL_ADVERSARY: &str = "hunt:slab-funnel";

/// A line of answers: the queries with their answers and the funnel's choices.
#[derive(Clone, Debug)]
struct Line {
    line: Vec<(Vec<f64>, Answer)>,
    choices: Vec<Choice>,
}

/// A finished line and its figures under the funnel's own certificate.
#[derive(Clone, Debug)]
struct Finished {
    line: Line,
    queries_used: u64,
    ending: Ending,
    /// min(queries used, T* + 1) with the funnel's own witness pair.
    certified: u64,
}

impl Finished {
    /// No failure first, then the larger certified count, then more queries used.
    fn key(&self) -> (bool, u64, u64) {
        (
            !matches!(self.ending, Ending::MethodFailed { .. }),
            self.certified,
            self.queries_used,
        )
    }
}

struct Node {
    method: Box<dyn Method + Send>,
    step: Result<Step, String>,
    query: Vec<f64>,
    line: Line,
    funnel: SlabFunnel,
}

struct Search<'a> {
    class: FirstOrderClass,
    factory: &'a MethodFactory<'a>,
    settings: HuntSettings,
    replays_used: u64,
    candidates_tested: u64,
    best: Finished,
    failures: (u64, Option<String>),
}

/// The funnel as the search plays it: its own certificate only (no LP while searching).
fn search_funnel(class: &FirstOrderClass) -> Result<SlabFunnel, Error> {
    SlabFunnel::new(
        class,
        FunnelSettings {
            lp_extension: LpExtension::Never,
            ..FunnelSettings::default()
        },
    )
}

/// Hunts the built-in method `name` (seeded with `method_seed`) on `class`.
pub fn hunt_first_order_builtin(
    name: &str,
    class: &FirstOrderClass,
    method_seed: u64,
    settings: &HuntSettings,
    progress: &mut dyn FnMut(&HuntProgress),
    transcript: Option<&std::path::Path>,
) -> Result<HuntReport, Error> {
    let wrapped = Class::FirstOrder(class.clone());
    method::supports(name, &wrapped).map_err(|reason| Error::Unsupported {
        what: format!("method {name:?}"),
        reason,
    })?;
    let factory = || method::build(name, &wrapped, method_seed);
    hunt_first_order(class, method_seed, &factory, settings, progress, transcript)
}

/// Hunts the method that `factory` builds over the funnel's free choices (module doc).
pub fn hunt_first_order(
    class: &FirstOrderClass,
    method_seed: u64,
    factory: &MethodFactory<'_>,
    settings: &HuntSettings,
    progress: &mut dyn FnMut(&HuntProgress),
    transcript: Option<&std::path::Path>,
) -> Result<HuntReport, Error> {
    settings.validate()?;
    class.check_accuracy_below_half_range()?;
    let mut probe = factory()?;
    let name = probe.name().to_string();
    let header = |adversary: &str| Header {
        format: FORMAT_VERSION,
        tool: format!("naysayer {}", env!("CARGO_PKG_VERSION")),
        class: Class::FirstOrder(class.clone()),
        adversary: adversary.into(),
        method: name.clone(),
        seed: method_seed,
        budget: settings.game_budget,
    };
    let game_settings = GameSettings {
        budget: settings.game_budget,
    };

    // The funnel's own game: the seed line, the determinism probe and the comparison.
    let mut memory = MemoryTranscript::default();
    let mut funnel = SlabFunnel::new(class, FunnelSettings::default())?;
    let generic_record = game::play(
        &header("slab-funnel"),
        probe.as_mut(),
        &mut funnel,
        &game_settings,
        &mut [&mut memory],
    )?;
    check_determinism(factory, &memory.records)?;
    let generic = GameFigures::from_verdict(&certificate::verify_records(&memory.records)?);
    let (_, generic_answers, _) = split_records(&memory.records)?;
    let mut replayed = search_funnel(class)?;
    let generic_choices: Vec<Choice> = generic_answers
        .iter()
        .map(|(query, _)| {
            let choice = replayed.default_choice(query);
            replayed.answer_with(query, choice);
            choice
        })
        .collect();
    let seed_line = Line {
        line: generic_answers,
        choices: generic_choices,
    };
    let mut search = Search {
        class: class.clone(),
        factory,
        settings: settings.clone(),
        replays_used: 0,
        candidates_tested: 0,
        best: Finished {
            certified: own_count(&replayed, generic_record.queries_used),
            line: seed_line.clone(),
            queries_used: generic_record.queries_used,
            ending: generic_record.ending.clone(),
        },
        failures: (0, None),
    };
    let mut passes = 0;
    while search.replays_used < settings.replays && !crate::interrupt::requested() {
        search.pass(passes, progress)?;
        passes += 1;
    }

    // The best line against the funnel's own game, both with the default certificate.
    let (seed_certificate, _) = certify(class, &seed_line)?;
    let seed_count = generic_record
        .queries_used
        .min(seed_certificate.as_ref().map_or(0, |w| w.prefix + 1));
    let best = search.best.clone();
    let (best_certificate, _) = certify(class, &best.line)?;
    let best_count = best
        .queries_used
        .min(best_certificate.as_ref().map_or(0, |w| w.prefix + 1));
    let found_by_search = (best.key().0, best_count, best.queries_used)
        > (true, seed_count, generic_record.queries_used);
    let (line, certificate, queries_used, ending) = if found_by_search {
        (best.line, best_certificate, best.queries_used, best.ending)
    } else {
        (
            seed_line,
            seed_certificate,
            generic_record.queries_used,
            generic_record.ending.clone(),
        )
    };

    // The chosen line, replayed from scratch through the game loop and verified.
    let hunt_header = header(HUNT_FUNNEL_ADVERSARY);
    let mut adversary = ScriptedAdversary::new(HUNT_FUNNEL_ADVERSARY, line.line, certificate);
    let mut fresh = factory()?;
    let mut memory = MemoryTranscript::default();
    let mut writer = match transcript {
        Some(path) => Some(TranscriptWriter::create(path, Flush::Periodic)?),
        None => None,
    };
    let record = {
        let mut observers: Vec<&mut dyn Observer> = vec![&mut memory];
        if let Some(w) = writer.as_mut() {
            observers.push(w);
        }
        game::play(
            &hunt_header,
            fresh.as_mut(),
            &mut adversary,
            &game_settings,
            &mut observers,
        )?
    };
    drop(writer);
    if let Some(d) = adversary.divergence() {
        return Err(not_deterministic(&name, &d.describe()));
    }
    if record.queries_used != queries_used || record.ending != ending {
        return Err(not_deterministic(
            &name,
            "replaying the worst line from scratch ended differently from the search",
        ));
    }
    let verdict: Result<Verdict, Error> = match transcript {
        Some(path) => certificate::verify_file(path),
        None => certificate::verify_records(&memory.records),
    };
    let worst = match &verdict {
        Ok(v) => GameFigures::from_verdict(v),
        Err(_) => GameFigures {
            queries_used: record.queries_used,
            censored: matches!(record.ending, Ending::BudgetExhausted),
            certified_lower_bound: None,
            ending: record.ending.clone(),
        },
    };
    Ok(HuntReport {
        header: hunt_header,
        records: memory.records,
        verdict,
        worst,
        generic,
        lower_bound: slab_funnel_lower_bound(class),
        found_by_search,
        replays_used: search.replays_used,
        replay_budget: settings.replays,
        passes,
        candidates_tested: search.candidates_tested,
        rejected_by_exact_check: 0,
        method_failures: search.failures,
    })
}

/// min(queries used, T* + 1) with the funnel's own certificate.
fn own_count(funnel: &SlabFunnel, queries_used: u64) -> u64 {
    let prefix = funnel
        .funnel_certificate()
        .map_or(0, |c| c.witnesses.prefix + 1);
    queries_used.min(prefix)
}

/// The certificate of a line with the funnel's default settings: its choices replayed
/// through a fresh funnel, whose witnesses (LP extension included) are returned.
fn certify(class: &FirstOrderClass, line: &Line) -> Result<(Option<Witnesses>, SlabFunnel), Error> {
    let mut funnel = SlabFunnel::new(class, FunnelSettings::default())?;
    for ((query, _), choice) in line.line.iter().zip(&line.choices) {
        funnel.answer_with(query, *choice);
    }
    Ok((funnel.witnesses(), funnel))
}

/// A placeholder left in a node whose method moved to its last child.
struct Spent;

impl Method for Spent {
    fn name(&self) -> &str {
        "spent"
    }

    fn next(&mut self, _query: &mut [f64]) -> Result<Step, Error> {
        Err(Error::Unsupported {
            what: "a spent search node".into(),
            reason: "its method moved to a child".into(),
        })
    }

    fn observe(&mut self, _query: &[f64], _answer: &Answer) -> Result<(), Error> {
        Ok(())
    }
}

fn next_move(method: &mut dyn Method, query: &mut [f64]) -> Result<Step, String> {
    method.next(query).map_err(|e| e.to_string())
}

impl Search<'_> {
    /// A copy of `node`'s method: its fork, or a fresh instance replayed through the line.
    fn restore(&self, node: &Node) -> Result<Box<dyn Method + Send>, Error> {
        if let Some(copy) = node.method.fork() {
            return Ok(copy);
        }
        let mut fresh = (self.factory)()?;
        let mut query = vec![0.0; self.class.dim];
        for (index, (expected, answer)) in node.line.line.iter().enumerate() {
            let step = fresh.next(&mut query);
            let same = matches!(step, Ok(Step::Query))
                && query
                    .iter()
                    .zip(expected)
                    .all(|(a, b)| a.to_bits() == b.to_bits());
            if !same {
                return Err(not_deterministic(
                    fresh.name(),
                    &format!("a replay from scratch left the line at query {}", index + 1),
                ));
            }
            fresh.observe(&query, answer)?;
        }
        let mut pending = vec![0.0; self.class.dim];
        let _ = fresh.next(&mut pending);
        Ok(fresh)
    }

    fn root(&mut self) -> Result<Node, Error> {
        let mut method = (self.factory)()?;
        let mut query = vec![0.0; self.class.dim];
        let step = next_move(method.as_mut(), &mut query);
        self.replays_used += 1;
        Ok(Node {
            method,
            step,
            query,
            line: Line {
                line: Vec::new(),
                choices: Vec::new(),
            },
            funnel: search_funnel(&self.class)?,
        })
    }

    /// The finished line of a node whose pending move is not a query or whose budget is
    /// spent; `None` while it is open.
    fn terminal(&self, node: &Node) -> Option<Finished> {
        let used = node.line.line.len() as u64;
        let ending = match &node.step {
            Err(reason) => Ending::MethodFailed {
                reason: reason.clone(),
            },
            Ok(Step::Output(output)) => Ending::Output {
                output: output.clone(),
            },
            Ok(Step::Query) if used == self.settings.game_budget => Ending::BudgetExhausted,
            Ok(Step::Query) => match node.query.iter().position(|v| !v.is_finite()) {
                Some(i) => Ending::MethodFailed {
                    reason: format!(
                        "query {} has a non-finite coordinate at index {i}",
                        used + 1
                    ),
                },
                None => return None,
            },
        };
        Some(Finished {
            line: node.line.clone(),
            queries_used: used,
            certified: own_count(&node.funnel, used),
            ending,
        })
    }

    fn finish(&mut self, finished: Finished) {
        if let Ending::MethodFailed { reason } = &finished.ending {
            self.failures.0 += 1;
            if self.failures.1.is_none() {
                self.failures.1 = Some(reason.clone());
            }
        }
        if finished.key() > self.best.key() {
            self.best = finished;
        }
    }

    /// Plays a node to its end with the funnel's default answers.
    fn close(&mut self, mut node: Node) -> Result<Finished, Error> {
        node.method = self.restore(&node)?;
        loop {
            if let Some(finished) = self.terminal(&node) {
                return Ok(finished);
            }
            let choice = node.funnel.default_choice(&node.query);
            let answer = node.funnel.answer_with(&node.query, choice);
            self.replays_used += 1;
            let observed = node.method.observe(&node.query, &answer);
            node.line.line.push((node.query.clone(), answer));
            node.line.choices.push(choice);
            node.step = match observed {
                Err(e) => Err(e.to_string()),
                Ok(()) => next_move(node.method.as_mut(), &mut node.query),
            };
        }
    }

    fn pass(&mut self, pass: u64, progress: &mut dyn FnMut(&HuntProgress)) -> Result<(), Error> {
        let mut beam = vec![self.root()?];
        let mut depth: u64 = 0;
        while !beam.is_empty() {
            let mut open = Vec::with_capacity(beam.len());
            for node in beam {
                match self.terminal(&node) {
                    Some(finished) => self.finish(finished),
                    None => open.push(node),
                }
            }
            if open.is_empty() {
                break;
            }
            if self.replays_used >= self.settings.replays || crate::interrupt::requested() {
                let first = open.swap_remove(0);
                let finished = self.close(first)?;
                self.finish(finished);
                break;
            }
            let mut children: Vec<Node> = Vec::new();
            for mut node in open {
                let choices = node.funnel.choices(&node.query);
                self.candidates_tested += choices.len() as u64;
                let last = choices.len() - 1;
                for (k, choice) in choices.into_iter().enumerate() {
                    let mut funnel = node.funnel.clone();
                    let answer = funnel.answer_with(&node.query, choice);
                    let mut line = node.line.clone();
                    line.line.push((node.query.clone(), answer));
                    line.choices.push(choice);
                    // The last child takes the node's method; the others get copies.
                    let method = if k == last {
                        std::mem::replace(&mut node.method, Box::new(Spent))
                    } else {
                        self.restore(&node)?
                    };
                    children.push(Node {
                        method,
                        step: Ok(Step::Query),
                        query: node.query.clone(),
                        line,
                        funnel,
                    });
                }
            }
            self.replays_used += children.len() as u64;
            children.par_iter_mut().for_each(|child| {
                let (asked, answer) = child.line.line.last().expect("a child has an answer");
                child.step = match child.method.observe(asked, answer) {
                    Err(e) => Err(e.to_string()),
                    Ok(()) => next_move(child.method.as_mut(), &mut child.query),
                };
            });
            let mut rng = node_rng(self.settings.seed, pass, depth, 0);
            let mut keyed: Vec<(usize, u64, Node)> = children
                .into_iter()
                .map(|n| (n.funnel.signs_fixed(), rng.random::<u64>(), n))
                .collect();
            keyed.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.cmp(&b.1)));
            beam = keyed
                .into_iter()
                .take(self.settings.width)
                .map(|(_, _, n)| n)
                .collect();
            depth += 1;
            progress(&HuntProgress {
                replays_used: self.replays_used,
                replay_budget: self.settings.replays,
                pass,
                depth,
                best_certified: self.best.certified,
            });
        }
        Ok(())
    }
}
