//! Targeted adversary search ("hunt"): the answers that make one given deterministic
//! method slowest on the separation feasibility class (docs/theory.md §1); first-order
//! classes are searched over the slab funnel's free choices ([`first_order`]).
//!
//! The built-in adversaries are method-agnostic. A hunt instead searches the game tree
//! of one method: at each of its queries the hunt may give any admissible answer
//! ([`answers`]: strict cuts that still leave a rho-ball strictly inside the alive set,
//! checked exactly), and it looks for the line of answers after which the method has
//! asked the most queries while the certificate still held: the *certified count*
//! min(queries used, T* + 1), T* the certified prefix (docs/theory.md §0). Ties go to more
//! queries used in all (queries after the certificate ends are valid answers for K =
//! empty, but certify nothing). Ranking by queries used alone would let uncertified
//! queries outweigh certified ones: on midpoint it chose games with more queries but a
//! certified lower bound below the halving game's.
//!
//! # Search: beam search, in passes
//! A node is a line of admissible answers with the method in the state it reached (its
//! next move pending). At each depth every open node of the beam gets its candidate
//! answers ([`answers::candidate_cuts`]); each admissible one gives a child, whose method
//! is the parent's copy ([`Method::fork`], or a replay from scratch through the line when
//! the method cannot be copied) told that answer and asked for its next move. Children
//! are ranked by a potential of their alive set ([`answers::Alive::potential`]: the
//! Dikin ellipsoid's axes at the analytic centre, sum of ln(axis / rho); larger first),
//! then by the radius of the largest inscribed ball (LP), then by the order they were
//! made; children whose two ranking numbers coincide bit for bit with a better one are
//! dropped (mirror images of one another, in practice), and the best `width` form the
//! next beam. (Ranking by the inscribed radius first found shorter games: on d = 2,
//! R/rho = 100 with 2000 replays, 15 instead of 17 queries for analytic-center and 16
//! instead of 19 for sampled-centroid.)
//! A node is finished when the method stops, when the game budget is reached, or when no
//! candidate is admissible; in the last case the game is played to its end with closing
//! answers (the central axis cut through the query on the longest side of the alive
//! bounding box, keeping the longer part; an outside query gets the cut through it that
//! keeps the whole box), which are valid for the empty set but certify nothing more. A
//! pass ends when its beam is empty; passes repeat with fresh random directions (the seed
//! mixed with the pass number) until the replay budget is spent. When the budget runs
//! out inside a pass, the best-ranked open node is finished with closing answers.
//!
//! # Budget
//! One *replay* is one method step the search drives: restoring the method at a node (a
//! copy, or a replay from scratch) and playing one answer into it, including the steps
//! of closing answers. A hunt stops starting new steps once the budget is spent; finishing
//! the best open line may use a few more (reported).
//!
//! # What is guaranteed
//! Before the search, the method plays the halving adversary (the generic adversary,
//! docs/theory.md §1.1) and a second fresh instance replays those answers: if the two
//! disagree, the method is not deterministic and the hunt is refused. The halving game is
//! also the first candidate for the worst game, so the worst certified count found is never
//! below the halving game's (finished lines replace it only when strictly better). The
//! worst game is finally replayed from scratch through the game loop
//! ([`replay::ScriptedAdversary`]), which writes its transcript; the transcript is checked
//! by the independent verifier ([`crate::certificate`]). Its certificate (the empty set and
//! one rho-ball) covers the admissible prefix of the line. Counts are measured for this one
//! method (and seed), not theorems: a longer line may exist that the search did not find.
//! Lines on which the method failed (an error) are counted apart and never chosen as the
//! worst game.
//!
//! The hunt supports the class that allows K to be empty; the nonempty promise would
//! need two disjoint rho-balls as witnesses and is refused.

pub mod answers;
pub mod first_order;
pub mod replay;

use rayon::prelude::*;

use crate::adversary::Halving;
use crate::bounds::halving_lower_bound;
use crate::certificate::{self, Verdict};
use crate::class::{Class, FeasibilityClass, Promise};
use crate::error::Error;
use crate::exact::Exact;
use crate::game::{self, GameSettings, Observer};
use crate::instance::Witness;
use crate::method::{self, Method};
use crate::oracle::{Answer, Cut, Normal, Step};
use crate::transcript::Witnesses;
use crate::transcript::{Ending, Header};
use crate::transcript::{Flush, MemoryTranscript, Record, TranscriptWriter, FORMAT_VERSION};

use answers::{candidate_cuts, node_rng, Admission, Alive, CandidateSettings};
use replay::{check_determinism, not_deterministic, ScriptedAdversary};

/// The adversary name written in hunted transcripts' headers.
pub const HUNT_ADVERSARY: &str = "hunt:beam";

/// A function that builds a fresh instance of the method under test.
pub type MethodFactory<'a> = dyn Fn() -> Result<Box<dyn Method + Send>, Error> + Sync + 'a;

/// Settings of a hunt, validated by [`HuntSettings::validate`].
#[derive(Clone, Debug, PartialEq)]
pub struct HuntSettings {
    /// Beam width: lines kept at each depth. Default 8.
    pub width: usize,
    /// Search budget in method replays (module doc). Default 10 000.
    pub replays: u64,
    /// Seed of the random candidate directions. Default 0.
    pub seed: u64,
    /// Seeded random directions per query. Default 4.
    pub random_directions: usize,
    /// Directions from this many of the method's most recent queries. Default 2.
    pub recent_queries: usize,
    /// Query budget of one game (as in `play`). Default 10 000.
    pub game_budget: u64,
}

impl Default for HuntSettings {
    fn default() -> Self {
        HuntSettings {
            width: 8,
            replays: 10_000,
            seed: 0,
            random_directions: 4,
            recent_queries: 2,
            game_budget: 10_000,
        }
    }
}

impl HuntSettings {
    /// Checks the settings: width, replays and game budget at least 1, width and
    /// direction counts at most 1000.
    pub fn validate(&self) -> Result<(), Error> {
        let bad = |reason: &str| {
            Err(Error::Unsupported {
                what: "hunt settings".into(),
                reason: reason.into(),
            })
        };
        if self.width == 0 || self.width > 1000 {
            return bad("the beam width must be between 1 and 1000");
        }
        if self.replays == 0 {
            return bad("the replay budget must be at least 1");
        }
        if self.game_budget == 0 {
            return bad("the game budget must be at least 1 query");
        }
        if self.random_directions > 1000 || self.recent_queries > 1000 {
            return bad("at most 1000 random or recent-query directions");
        }
        Ok(())
    }
}

/// Progress of a running hunt, passed to the progress callback after every depth.
#[derive(Clone, Debug, PartialEq)]
pub struct HuntProgress {
    /// Replays used so far.
    pub replays_used: u64,
    /// The replay budget.
    pub replay_budget: u64,
    /// Passes started.
    pub pass: u64,
    /// Depth (queries answered) of the current beam.
    pub depth: u64,
    /// The largest certified count (min(queries used, T* + 1)) of any finished game so
    /// far.
    pub best_certified: u64,
}

/// A summary of one verified game (counts as the verifier reports them).
#[derive(Clone, Debug, PartialEq)]
pub struct GameFigures {
    /// Queries the method asked (censored when the budget ended the game).
    pub queries_used: u64,
    /// True when the game budget ended the game.
    pub censored: bool,
    /// Certified lower bound T* + 1 of the transcript.
    pub certified_lower_bound: Option<u64>,
    /// How the game ended.
    pub ending: Ending,
}

impl GameFigures {
    pub(crate) fn from_verdict(verdict: &Verdict) -> GameFigures {
        GameFigures {
            queries_used: verdict.queries_used,
            censored: verdict.censored,
            certified_lower_bound: verdict.certified_lower_bound(),
            ending: verdict.ending.clone(),
        }
    }
}

/// What a hunt found.
#[derive(Debug)]
pub struct HuntReport {
    /// The header of the worst game's transcript.
    pub header: Header,
    /// The worst game's transcript (header first), as the game loop wrote it.
    pub records: Vec<Record>,
    /// The verifier's verdict on it (an `Err` would be a bug in the hunt).
    pub verdict: Result<Verdict, Error>,
    /// The worst game found.
    pub worst: GameFigures,
    /// The same method against the generic adversary of the class: halving (separation)
    /// or slab-funnel (first-order, [`first_order`]).
    pub generic: GameFigures,
    /// The theorem's lower bound for the class (docs/theory.md §1.1: d k + 1; first-order
    /// docs/theory.md §2.4: d ceil(log_7(L R / (2 eps)))).
    pub lower_bound: u64,
    /// True when the worst game came from the search, false when no line beat the
    /// generic adversary's game (the seed line).
    pub found_by_search: bool,
    /// Replays used (may exceed the budget by the closing of the last open line).
    pub replays_used: u64,
    /// The replay budget.
    pub replay_budget: u64,
    /// Passes of the beam search started.
    pub passes: u64,
    /// Candidate answers tested for admissibility.
    pub candidates_tested: u64,
    /// Candidates the LP accepted but whose ball no centre passed the exact check with.
    pub rejected_by_exact_check: u64,
    /// Finished lines on which the method failed, and the first failure's reason.
    pub method_failures: (u64, Option<String>),
}

/// A finished line: its answers, count, ending and certificate.
#[derive(Clone, Debug)]
struct Finished {
    line: Vec<(Vec<f64>, Answer)>,
    queries_used: u64,
    ending: Ending,
    certificate: Option<Witnesses>,
}

impl Finished {
    /// Queries the method asked while its certificate still held: min(queries used,
    /// T* + 1), the figure the verifier certifies for this game.
    fn certified_count(&self) -> u64 {
        let prefix = self.certificate.as_ref().map_or(0, |w| w.prefix);
        self.queries_used.min(prefix + 1)
    }

    /// Ranking of finished lines: no failure first, then the larger certified count,
    /// then more queries used.
    fn key(&self) -> (bool, u64, u64) {
        (
            !matches!(self.ending, Ending::MethodFailed { .. }),
            self.certified_count(),
            self.queries_used,
        )
    }
}

/// A node of the search: a line of admissible answers and the method after it.
struct Node {
    method: Box<dyn Method + Send>,
    /// The method's pending move (`Ok(Step::Query)` with `query` filled, an output, or an
    /// error).
    step: Result<Step, String>,
    query: Vec<f64>,
    line: Vec<(Vec<f64>, Answer)>,
    alive: Alive,
}

/// The shared state of one hunt.
struct Search<'a> {
    class: FeasibilityClass,
    factory: &'a MethodFactory<'a>,
    settings: HuntSettings,
    candidates: CandidateSettings,
    replays_used: u64,
    candidates_tested: u64,
    rejected_by_exact_check: u64,
    best: Finished,
    failures: (u64, Option<String>),
}

/// Hunts the built-in method `name` (seeded with `method_seed`) on `class`.
pub fn hunt_builtin(
    name: &str,
    class: &FeasibilityClass,
    method_seed: u64,
    settings: &HuntSettings,
    progress: &mut dyn FnMut(&HuntProgress),
    transcript: Option<&std::path::Path>,
) -> Result<HuntReport, Error> {
    let wrapped = Class::Feasibility(class.clone());
    method::supports(name, &wrapped).map_err(|reason| Error::Unsupported {
        what: format!("method {name:?}"),
        reason,
    })?;
    let factory = || method::build(name, &wrapped, method_seed);
    hunt(class, method_seed, &factory, settings, progress, transcript)
}

/// Hunts the method that `factory` builds (module doc). `method_seed` is recorded in the
/// headers; `transcript`, when given, receives the worst game's transcript (JSON Lines),
/// which is then verified from the file.
pub fn hunt(
    class: &FeasibilityClass,
    method_seed: u64,
    factory: &MethodFactory<'_>,
    settings: &HuntSettings,
    progress: &mut dyn FnMut(&HuntProgress),
    transcript: Option<&std::path::Path>,
) -> Result<HuntReport, Error> {
    settings.validate()?;
    if class.promise == Promise::Nonempty {
        return Err(Error::Unsupported {
            what: "hunt".into(),
            reason: "the hunt supports the class that allows K to be empty (witnesses: the \
                     empty set and one rho-ball); the nonempty promise would need two \
                     disjoint rho-balls"
                .into(),
        });
    }
    let mut probe = factory()?;
    let name = probe.name().to_string();
    let header = |adversary: &str| Header {
        format: FORMAT_VERSION,
        tool: format!("naysayer {}", env!("CARGO_PKG_VERSION")),
        class: Class::Feasibility(class.clone()),
        adversary: adversary.into(),
        method: name.clone(),
        seed: method_seed,
        budget: settings.game_budget,
    };

    // The generic game: the generic count, the seed line, and the determinism probe.
    let generic_header = header("halving");
    let mut memory = MemoryTranscript::default();
    let generic_record = game::play(
        &generic_header,
        probe.as_mut(),
        &mut Halving::new(class),
        &GameSettings {
            budget: settings.game_budget,
        },
        &mut [&mut memory],
    )?;
    check_determinism(factory, &memory.records)?;
    let generic_verdict = certificate::verify_records(&memory.records)?;
    let generic = GameFigures::from_verdict(&generic_verdict);
    let (_, generic_line, _) = replay::split_records(&memory.records)?;

    let mut search = Search {
        class: class.clone(),
        factory,
        settings: settings.clone(),
        candidates: CandidateSettings {
            recent_queries: settings.recent_queries,
            random_directions: settings.random_directions,
        },
        replays_used: 0,
        candidates_tested: 0,
        rejected_by_exact_check: 0,
        best: Finished {
            line: generic_line,
            queries_used: generic_record.queries_used,
            ending: generic_record.ending.clone(),
            certificate: generic_record.certificate.clone(),
        },
        failures: (0, None),
    };
    let seed_key = search.best.key();
    let mut passes = 0;
    while search.replays_used < settings.replays && !crate::interrupt::requested() {
        search.pass(passes, progress)?;
        passes += 1;
    }
    let found_by_search = search.best.key() > seed_key;

    // The worst game, replayed from scratch through the game loop and verified.
    let hunt_header = header(HUNT_ADVERSARY);
    let best = search.best.clone();
    let mut adversary =
        ScriptedAdversary::new(HUNT_ADVERSARY, best.line.clone(), best.certificate.clone());
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
            &GameSettings {
                budget: settings.game_budget,
            },
            &mut observers,
        )?
    };
    drop(writer);
    if let Some(d) = adversary.divergence() {
        return Err(not_deterministic(&name, &d.describe()));
    }
    if record.queries_used != best.queries_used || record.ending != best.ending {
        return Err(not_deterministic(
            &name,
            "replaying the worst line from scratch ended differently from the search",
        ));
    }
    let verdict = match transcript {
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
        lower_bound: halving_lower_bound(class),
        found_by_search,
        replays_used: search.replays_used,
        replay_budget: settings.replays,
        passes,
        candidates_tested: search.candidates_tested,
        rejected_by_exact_check: search.rejected_by_exact_check,
        method_failures: search.failures,
    })
}

/// The method's next move, with its error turned into a reason.
fn next_move(method: &mut dyn Method, query: &mut [f64]) -> Result<Step, String> {
    method.next(query).map_err(|e| e.to_string())
}

/// The closing answer (module doc) to query `x` given the alive model.
fn closing_cut(model: &crate::geometry::Polytope, x: &[f64]) -> Cut {
    let (lower, upper) = model.bounding_box();
    let d = x.len();
    if let Some(i) = (0..d).find(|&i| x[i] < lower[i] || x[i] > upper[i]) {
        // Outside the bounding box: the cut through x keeps all of it.
        let below = x[i] < lower[i];
        return Cut {
            normal: Normal::axis(i, !below),
            offset: Exact::Float(if below { -x[i] } else { x[i] }),
        };
    }
    let j = (1..d).fold(0, |best, i| {
        if upper[i] - lower[i] > upper[best] - lower[best] {
            i
        } else {
            best
        }
    });
    let keep_lower = x[j] - lower[j] >= upper[j] - x[j];
    Cut {
        normal: Normal::axis(j, keep_lower),
        offset: Exact::Float(if keep_lower { x[j] } else { -x[j] }),
    }
}

impl Search<'_> {
    /// A copy of `node`'s method: its fork, or a fresh instance replayed through the
    /// node's line (each replayed query compared with the recorded one).
    fn restore(&self, node: &Node) -> Result<Box<dyn Method + Send>, Error> {
        if let Some(copy) = node.method.fork() {
            return Ok(copy);
        }
        let mut fresh = (self.factory)()?;
        let mut query = vec![0.0; self.class.dim];
        for (index, (expected, answer)) in node.line.iter().enumerate() {
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
        if pending
            .iter()
            .zip(&node.query)
            .any(|(a, b)| a.to_bits() != b.to_bits())
        {
            return Err(not_deterministic(
                fresh.name(),
                "a replay from scratch asked a different next query",
            ));
        }
        Ok(fresh)
    }

    /// The root: a fresh method asked for its first move.
    fn root(&mut self) -> Result<Node, Error> {
        let mut method = (self.factory)()?;
        let mut query = vec![0.0; self.class.dim];
        let step = next_move(method.as_mut(), &mut query);
        self.replays_used += 1;
        Ok(Node {
            method,
            step,
            query,
            line: Vec::new(),
            alive: Alive::new(&self.class),
        })
    }

    /// Records a finished line and keeps it if it beats the best one.
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

    fn certificate_of(&self, node: &Node) -> Witnesses {
        Witnesses {
            prefix: node.line.len() as u64,
            instances: vec![
                Witness::Empty,
                Witness::Ball {
                    center: node
                        .alive
                        .center()
                        .iter()
                        .map(|c| Exact::Float(*c))
                        .collect(),
                    radius: self.class.rho,
                },
            ],
        }
    }

    /// Finishes a node whose pending move is not a query, or whose game budget is spent;
    /// `None` when the node is still open.
    fn terminal(&self, node: &Node) -> Option<Finished> {
        let ending = match &node.step {
            Err(reason) => Ending::MethodFailed {
                reason: reason.clone(),
            },
            Ok(Step::Output(output)) => Ending::Output {
                output: output.clone(),
            },
            Ok(Step::Query) if node.line.len() as u64 == self.settings.game_budget => {
                Ending::BudgetExhausted
            }
            Ok(Step::Query) => {
                if let Some(i) = node.query.iter().position(|v| !v.is_finite()) {
                    Ending::MethodFailed {
                        reason: format!(
                            "query {} has a non-finite coordinate at index {i}",
                            node.line.len() + 1
                        ),
                    }
                } else {
                    return None;
                }
            }
        };
        Some(Finished {
            line: node.line.clone(),
            queries_used: node.line.len() as u64,
            ending,
            certificate: Some(self.certificate_of(node)),
        })
    }

    /// Plays `node` to its end with closing answers (module doc).
    fn close(&mut self, node: Node) -> Result<Finished, Error> {
        let certificate = Some(self.certificate_of(&node));
        let mut method = self.restore(&node)?;
        let Node {
            mut step,
            mut query,
            mut line,
            alive,
            ..
        } = node;
        let mut model = alive.model().clone();
        loop {
            let ending = match &step {
                Err(reason) => Some(Ending::MethodFailed {
                    reason: reason.clone(),
                }),
                Ok(Step::Output(output)) => Some(Ending::Output {
                    output: output.clone(),
                }),
                Ok(Step::Query) if line.len() as u64 == self.settings.game_budget => {
                    Some(Ending::BudgetExhausted)
                }
                Ok(Step::Query) if query.iter().any(|v| !v.is_finite()) => {
                    Some(Ending::MethodFailed {
                        reason: format!("query {} has a non-finite coordinate", line.len() + 1),
                    })
                }
                Ok(Step::Query) => None,
            };
            if let Some(ending) = ending {
                return Ok(Finished {
                    queries_used: line.len() as u64,
                    line,
                    ending,
                    certificate,
                });
            }
            let cut = closing_cut(&model, &query);
            // Knowing less is safe: a model that rejects the cut just stops shrinking.
            let _ = model.add_cut(&cut);
            let answer = Answer::Cut(cut);
            self.replays_used += 1;
            let observed = method.observe(&query, &answer);
            line.push((query.clone(), answer));
            step = match observed {
                Err(e) => Err(e.to_string()),
                Ok(()) => next_move(method.as_mut(), &mut query),
            };
        }
    }

    /// One pass of the beam search (module doc).
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
            // Candidates of every open node, tested in parallel.
            let mut tasks: Vec<(usize, Cut)> = Vec::new();
            for (slot, node) in open.iter().enumerate() {
                let history: Vec<Vec<f64>> = node.line.iter().map(|(q, _)| q.clone()).collect();
                let mut rng = node_rng(self.settings.seed, pass, depth, slot as u64);
                for cut in candidate_cuts(
                    &node.query,
                    &node.alive,
                    &history,
                    &self.candidates,
                    &mut rng,
                ) {
                    tasks.push((slot, cut));
                }
            }
            self.candidates_tested += tasks.len() as u64;
            let alives: Vec<&Alive> = open.iter().map(|n| &n.alive).collect();
            let admissions: Vec<Admission> = tasks
                .par_iter()
                .map(|(slot, cut)| alives[*slot].admit(cut))
                .collect();
            let mut admitted: Vec<(usize, Cut, Alive)> = Vec::new();
            let mut has_child = vec![false; open.len()];
            for ((slot, cut), admission) in tasks.into_iter().zip(admissions) {
                match admission {
                    Admission::Admitted(alive) => {
                        has_child[slot] = true;
                        admitted.push((slot, cut, *alive));
                    }
                    Admission::NotExact => self.rejected_by_exact_check += 1,
                    Admission::NoBall => {}
                }
            }
            let remaining = self.settings.replays.saturating_sub(self.replays_used);
            admitted.truncate(usize::try_from(remaining).unwrap_or(usize::MAX));
            // Children: copies made in order, then told their answer in parallel.
            let mut children: Vec<Node> = Vec::with_capacity(admitted.len());
            for (slot, cut, alive) in admitted {
                let parent = &open[slot];
                let method = self.restore(parent)?;
                let mut line = parent.line.clone();
                line.push((parent.query.clone(), Answer::Cut(cut)));
                children.push(Node {
                    method,
                    step: Ok(Step::Query),
                    query: parent.query.clone(),
                    line,
                    alive,
                });
            }
            self.replays_used += children.len() as u64;
            children.par_iter_mut().for_each(|child| {
                let (asked, answer) = child.line.last().expect("a child has an answer").clone();
                child.step = match child.method.observe(&asked, &answer) {
                    Err(e) => Err(e.to_string()),
                    Ok(()) => next_move(child.method.as_mut(), &mut child.query),
                };
            });
            // Nodes without an admissible answer are played out with closing answers.
            let mut closing = Vec::new();
            for (slot, node) in open.into_iter().enumerate() {
                if !has_child[slot] {
                    closing.push(node);
                }
            }
            for node in closing {
                let finished = self.close(node)?;
                self.finish(finished);
            }
            beam = self.select(children);
            depth += 1;
            progress(&HuntProgress {
                replays_used: self.replays_used,
                replay_budget: self.settings.replays,
                pass,
                depth,
                best_certified: self.best.certified_count(),
            });
        }
        Ok(())
    }

    /// The next beam: ranked children, duplicates of the ranking pair dropped.
    fn select(&self, children: Vec<Node>) -> Vec<Node> {
        let mut keyed: Vec<(f64, f64, usize, Node)> = children
            .into_iter()
            .enumerate()
            .map(|(i, n)| (n.alive.potential(), n.alive.radius(), i, n))
            .collect();
        keyed.sort_by(|a, b| {
            b.0.total_cmp(&a.0)
                .then(b.1.total_cmp(&a.1))
                .then(a.2.cmp(&b.2))
        });
        let mut beam: Vec<Node> = Vec::with_capacity(self.settings.width);
        let mut seen: Vec<(u64, u64)> = Vec::new();
        for (radius, volume, _, node) in keyed {
            if beam.len() == self.settings.width {
                break;
            }
            let key = (radius.to_bits(), volume.to_bits());
            if seen.contains(&key) {
                continue;
            }
            seen.push(key);
            beam.push(node);
        }
        beam
    }
}
