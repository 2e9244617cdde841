//! The argmin adapter (cargo feature `argmin`): any argmin solver plays a first-order
//! class through argmin's [`CostFunction`] and [`Gradient`] traits.
//!
//! argmin drives its own loop and asks for the value and the gradient at a point
//! separately, possibly several times (a line search asks again at points it has
//! visited). The adapter runs the solver on a helper thread and turns its calls into the
//! game's ask/tell steps: the first call at a point becomes one query of the game
//! (counted there, as for every method); the answer is cached by point (the exact bit
//! pattern of every coordinate, with -0 taken as +0), so the value and the gradient at
//! the same point cost one query, and a revisited point costs none. [`ArgminStats`]
//! counts both kinds of calls and the distinct points. Calls are serialized (the
//! problem says `parallelize() == false` and holds a lock), so the game stays
//! sequential and deterministic. Values and gradients are the nearest `f64` of the
//! adversary's exact answers (argmin computes in `f64`; the transcript keeps the exact
//! numbers).
//!
//! When the solver stops, its best parameter is the method's output. When argmin
//! returns an error (a line search that fails on a nonsmooth function, for example)
//! the game ends as "method failed" with argmin's message, and the transcript written
//! so far is kept and verified like any other.

use std::collections::HashMap;
use std::sync::mpsc::{self, Receiver, Sender};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;

use argmin::core::{CostFunction, Executor, Gradient, IterState, Solver, State};

use crate::error::Error;
use crate::method::Method;
use crate::oracle::{Answer, Output, Step};
use crate::runner::{self, GameSpec, Report};

/// How often argmin called the oracle.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct ArgminStats {
    /// Calls of [`CostFunction::cost`].
    pub cost_calls: u64,
    /// Calls of [`Gradient::gradient`].
    pub gradient_calls: u64,
    /// Distinct points asked about (each one query of the game).
    pub distinct_points: u64,
}

/// What the solver thread tells the game.
enum FromSolver {
    /// Ask about this point.
    Query(Vec<f64>),
    /// The solver stopped: its best point, or argmin's error.
    Done(Result<Vec<f64>, String>),
}

/// The first-order oracle as argmin sees it (lives on the solver thread).
pub struct OracleProblem {
    inner: Mutex<Inner>,
    stats: Arc<Mutex<ArgminStats>>,
}

struct Inner {
    to_game: Sender<FromSolver>,
    answers: Receiver<(f64, Vec<f64>)>,
    cache: HashMap<Vec<u64>, (f64, Vec<f64>)>,
}

fn key(point: &[f64]) -> Vec<u64> {
    // x + 0.0 turns -0.0 into +0.0 and leaves every other value alone.
    point.iter().map(|x| (x + 0.0).to_bits()).collect()
}

impl OracleProblem {
    /// Value and gradient at `point`: from the cache, or one query of the game.
    fn evaluate(&self, point: &[f64]) -> Result<(f64, Vec<f64>), argmin::core::Error> {
        let mut inner = self.inner.lock().unwrap_or_else(|e| e.into_inner());
        let key = key(point);
        if let Some(hit) = inner.cache.get(&key) {
            return Ok(hit.clone());
        }
        inner
            .to_game
            .send(FromSolver::Query(point.to_vec()))
            .map_err(|_| argmin::core::Error::msg("the game has ended"))?;
        let answer = inner
            .answers
            .recv()
            .map_err(|_| argmin::core::Error::msg("the game has ended"))?;
        self.stats
            .lock()
            .unwrap_or_else(|e| e.into_inner())
            .distinct_points += 1;
        inner.cache.insert(key, answer.clone());
        Ok(answer)
    }
}

impl CostFunction for OracleProblem {
    type Param = Vec<f64>;
    type Output = f64;

    fn cost(&self, param: &Vec<f64>) -> Result<f64, argmin::core::Error> {
        self.stats
            .lock()
            .unwrap_or_else(|e| e.into_inner())
            .cost_calls += 1;
        Ok(self.evaluate(param)?.0)
    }

    fn parallelize(&self) -> bool {
        false
    }
}

impl Gradient for OracleProblem {
    type Param = Vec<f64>;
    type Gradient = Vec<f64>;

    fn gradient(&self, param: &Vec<f64>) -> Result<Vec<f64>, argmin::core::Error> {
        self.stats
            .lock()
            .unwrap_or_else(|e| e.into_inner())
            .gradient_calls += 1;
        Ok(self.evaluate(param)?.1)
    }

    fn parallelize(&self) -> bool {
        false
    }
}

/// The argmin iteration state for `Vec<f64>` parameters and gradients.
pub type VecState = IterState<Vec<f64>, Vec<f64>, (), (), (), f64>;

/// The solver's whole run on its thread: its best point, or argmin's error message.
type SolverRun = Box<dyn FnOnce(OracleProblem) -> Result<Vec<f64>, String> + Send>;

/// An argmin solver played as a [`Method`] (see the module docs).
pub struct ArgminMethod {
    name: String,
    dim: usize,
    start: Option<SolverRun>,
    from_solver: Option<Receiver<FromSolver>>,
    to_solver: Option<Sender<(f64, Vec<f64>)>>,
    thread: Option<JoinHandle<()>>,
    stats: Arc<Mutex<ArgminStats>>,
}

impl ArgminMethod {
    /// Plays `solver` from `init` for at most `max_iters` iterations on a class of
    /// dimension `dim`; `label` names it (the method is called `argmin: <label>`).
    pub fn new<S>(label: &str, dim: usize, solver: S, init: Vec<f64>, max_iters: u64) -> Self
    where
        S: Solver<OracleProblem, VecState> + Send + 'static,
    {
        let run = move |problem: OracleProblem| -> Result<Vec<f64>, String> {
            let result = Executor::new(problem, solver)
                .configure(|state| state.param(init).max_iters(max_iters))
                .run()
                .map_err(|e| e.to_string())?;
            let state = result.state();
            state
                .get_best_param()
                .or(state.get_param())
                .cloned()
                .ok_or_else(|| "argmin returned no point".to_string())
        };
        ArgminMethod {
            name: format!("argmin: {label}"),
            dim,
            start: Some(Box::new(run)),
            from_solver: None,
            to_solver: None,
            thread: None,
            stats: Arc::new(Mutex::new(ArgminStats::default())),
        }
    }

    /// The calls counted so far.
    pub fn stats(&self) -> ArgminStats {
        *self.stats.lock().unwrap_or_else(|e| e.into_inner())
    }

    fn fail(&self, reason: String) -> Error {
        Error::MethodFailed {
            method: self.name.clone(),
            reason,
        }
    }

    fn launch(&mut self) -> Result<(), Error> {
        let Some(run) = self.start.take() else {
            return Ok(());
        };
        let (to_game, from_solver) = mpsc::channel();
        let (to_solver, answers) = mpsc::channel();
        let problem = OracleProblem {
            inner: Mutex::new(Inner {
                to_game: to_game.clone(),
                answers,
                cache: HashMap::new(),
            }),
            stats: Arc::clone(&self.stats),
        };
        let thread = std::thread::Builder::new()
            .name("naysayer-argmin".into())
            .spawn(move || {
                let outcome =
                    std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| run(problem)))
                        .unwrap_or_else(|_| Err("the solver panicked".into()));
                let _ = to_game.send(FromSolver::Done(outcome));
            })
            .map_err(|e| self.fail(format!("cannot start the solver thread: {e}")))?;
        self.from_solver = Some(from_solver);
        self.to_solver = Some(to_solver);
        self.thread = Some(thread);
        Ok(())
    }
}

impl Method for ArgminMethod {
    fn name(&self) -> &str {
        &self.name
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        self.launch()?;
        let message = self
            .from_solver
            .as_ref()
            .and_then(|r| r.recv().ok())
            .ok_or_else(|| self.fail("the solver thread has stopped".into()))?;
        match message {
            FromSolver::Query(point) | FromSolver::Done(Ok(point)) if point.len() != self.dim => {
                Err(self.fail(format!(
                    "argmin asked about a point with {} coordinates, expected {}",
                    point.len(),
                    self.dim
                )))
            }
            FromSolver::Query(point) => {
                query.copy_from_slice(&point);
                Ok(Step::Query)
            }
            FromSolver::Done(Ok(point)) => Ok(Step::Output(Output::Point { point })),
            FromSolver::Done(Err(message)) => Err(self.fail(format!("argmin: {message}"))),
        }
    }

    fn observe(&mut self, _query: &[f64], answer: &Answer) -> Result<(), Error> {
        let Answer::FirstOrder(fo) = answer else {
            return Err(self.fail("argmin solvers need first-order answers".into()));
        };
        let value = fo.value.to_f64();
        let gradient = fo.subgradient.iter().map(|g| g.to_f64()).collect();
        self.to_solver
            .as_ref()
            .ok_or_else(|| self.fail("the solver thread has stopped".into()))?
            .send((value, gradient))
            .map_err(|_| self.fail("the solver thread has stopped".into()))
    }
}

impl Drop for ArgminMethod {
    fn drop(&mut self) {
        // Closing both channels makes a waiting solver's next call fail, so it stops.
        self.to_solver.take();
        self.from_solver.take();
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

/// Plays `solver` (from `init`, at most `max_iters` iterations) against the adversary
/// of `spec` and verifies the transcript; returns the report and argmin's call counts.
pub fn play<S>(
    spec: &GameSpec,
    label: &str,
    solver: S,
    init: Vec<f64>,
    max_iters: u64,
) -> Result<(Report, ArgminStats), Error>
where
    S: Solver<OracleProblem, VecState> + Send + 'static,
{
    let mut method = ArgminMethod::new(label, spec.class.query_dim(), solver, init, max_iters);
    let report = runner::run_with(spec, &mut method, &mut [])?;
    let stats = method.stats();
    Ok((report, stats))
}
