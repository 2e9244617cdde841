//! The argmin adapter (feature `argmin`): argmin solvers play the slab-funnel adversary to
//! a verified certificate; value and gradient at one point cost one query; an argmin
//! error keeps the transcript.
#![cfg(feature = "argmin")]

use argmin::core::{Error as ArgminError, Problem, Solver, State, KV};
use argmin::solver::gradientdescent::SteepestDescent;
use argmin::solver::linesearch::MoreThuenteLineSearch;
use argmin::solver::quasinewton::LBFGS;
use naysayer::argmin_adapter::{self, OracleProblem, VecState};
use naysayer::certificate;
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::runner::GameSpec;
use naysayer::transcript::Ending;
use tempfile::TempDir;

fn spec(dir: &TempDir, name: &str, budget: u64) -> GameSpec {
    GameSpec {
        class: Class::FirstOrder(
            FirstOrderClass::new(2, 1.0, 1e-3, 1.0, LipschitzNorm::L2).unwrap(),
        ),
        adversary: "slab-funnel".into(),
        method: String::new(),
        seed: 0,
        budget,
        transcript: Some(dir.path().join(name)),
    }
}

#[test]
fn steepest_descent_plays_to_a_verified_certificate() {
    let dir = TempDir::new().unwrap();
    let spec = spec(&dir, "sd.jsonl", 150);
    let solver = SteepestDescent::new(MoreThuenteLineSearch::new());
    let (report, stats) =
        argmin_adapter::play(&spec, "steepest descent", solver, vec![0.3, 0.3], 50).unwrap();
    let verdict = report.verdict.as_ref().expect("the certificate verifies");
    assert!(verdict.certified_prefix.is_some(), "{verdict:?}");
    // The file on disk verifies too, independently of the in-memory report.
    let again = certificate::verify_file(spec.transcript.as_ref().unwrap()).unwrap();
    assert_eq!(again.certified_prefix, verdict.certified_prefix);
    // Every distinct point is one query of the game; argmin asked for both the value
    // and the gradient at most of them, so there are more calls than queries.
    assert_eq!(stats.distinct_points, report.record.queries_used);
    assert!(stats.cost_calls + stats.gradient_calls > stats.distinct_points);
    assert!(stats.gradient_calls >= 1 && stats.cost_calls >= 1);
    assert_eq!(report.header.method, "argmin: steepest descent");
}

#[test]
fn lbfgs_plays_to_a_verified_certificate() {
    let dir = TempDir::new().unwrap();
    let spec = spec(&dir, "lbfgs.jsonl", 150);
    let solver = LBFGS::new(MoreThuenteLineSearch::new(), 5);
    let (report, stats) =
        argmin_adapter::play(&spec, "L-BFGS", solver, vec![0.3, 0.3], 50).unwrap();
    let verdict = report.verdict.as_ref().expect("the certificate verifies");
    assert!(verdict.certified_prefix.is_some(), "{verdict:?}");
    assert_eq!(stats.distinct_points, report.record.queries_used);
    assert!(stats.cost_calls + stats.gradient_calls >= stats.distinct_points);
    certificate::verify_file(spec.transcript.as_ref().unwrap()).unwrap();
}

/// A solver that asks for the value and the gradient at two points, then fails.
struct FailsAfterTwoPoints;

impl Solver<OracleProblem, VecState> for FailsAfterTwoPoints {
    fn name(&self) -> &str {
        "fails after two points"
    }

    fn next_iter(
        &mut self,
        problem: &mut Problem<OracleProblem>,
        state: VecState,
    ) -> Result<(VecState, Option<KV>), ArgminError> {
        for point in [vec![0.25, 0.5], vec![-0.5, 0.125]] {
            problem.cost(&point)?;
            problem.gradient(&point)?;
            problem.cost(&point)?;
        }
        let _ = state.get_iter();
        Err(ArgminError::msg("deliberate failure after two points"))
    }
}

#[test]
fn an_argmin_error_ends_the_game_and_keeps_the_transcript() {
    let dir = TempDir::new().unwrap();
    let spec = spec(&dir, "fail.jsonl", 100);
    let (report, stats) =
        argmin_adapter::play(&spec, "failing", FailsAfterTwoPoints, vec![0.0, 0.0], 10).unwrap();
    let Ending::MethodFailed { reason } = &report.record.ending else {
        panic!("{:?}", report.record.ending);
    };
    assert!(reason.contains("deliberate failure"), "{reason}");
    // Three calls at each of two points: two queries, all counted.
    assert_eq!(report.record.queries_used, 2);
    assert_eq!(stats.distinct_points, 2);
    assert_eq!(stats.cost_calls, 4);
    assert_eq!(stats.gradient_calls, 2);
    let verdict = certificate::verify_file(spec.transcript.as_ref().unwrap()).unwrap();
    assert_eq!(verdict.queries_used, 2);
}

#[test]
fn the_budget_stops_the_solver_thread() {
    let dir = TempDir::new().unwrap();
    let spec = spec(&dir, "budget.jsonl", 5);
    let solver = SteepestDescent::new(MoreThuenteLineSearch::new());
    let (report, stats) =
        argmin_adapter::play(&spec, "steepest descent", solver, vec![0.3, 0.3], 1000).unwrap();
    assert_eq!(report.record.ending, Ending::BudgetExhausted);
    assert_eq!(stats.distinct_points, 5);
    assert!(report.verdict.is_ok());
}

#[test]
fn a_start_of_the_wrong_length_is_a_method_failure() {
    let dir = TempDir::new().unwrap();
    let spec = spec(&dir, "len.jsonl", 10);
    let solver = SteepestDescent::new(MoreThuenteLineSearch::new());
    let (report, _) =
        argmin_adapter::play(&spec, "steepest descent", solver, vec![0.3; 3], 10).unwrap();
    let Ending::MethodFailed { reason } = &report.record.ending else {
        panic!("{:?}", report.record.ending);
    };
    assert!(reason.contains("3 coordinates, expected 2"), "{reason}");
}
