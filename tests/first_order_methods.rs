//! First-order methods (issue 5): every built-in method that plays the first-order class,
//! against the `orthant` adversary, with the verifier's verdict and regression values;
//! and outside checks of the methods on explicit functions, with their sources named.

use std::fmt::Write as _;

use num_rational::BigRational;
use rayon::prelude::*;

use naysayer::adversary::{Adversary, Undecided};
use naysayer::certificate::Outcome;
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::exact::{f64_to_rational, Exact};
use naysayer::instance::{AffinePiece, FunctionWitness};
use naysayer::method::{self, kelley::Kelley, subgradient, Method, METHODS};
use naysayer::oracle::{Answer, FirstOrderAnswer, Output, Step};
use naysayer::runner::{run, GameSpec};
use naysayer::transcript::Ending;
use naysayer::transcript::Witnesses;

// ---------------------------------------------------------------------------------------
// (a) Every first-order method against `orthant`: verdicts and regression values.
// ---------------------------------------------------------------------------------------

const DIMS: [usize; 4] = [1, 2, 3, 5];
const EPSILONS: [f64; 3] = [1e-2, 1e-4, 1e-6];

/// Per-game budget, chosen so the whole test stays fast: the certificate search behind
/// every verdict grows with the transcript. The subgradient methods plan ceil((L R sqrt(d)
/// / eps)^2) queries, far past any useful budget, so they are always censored; the
/// ellipsoid method needs about 150 queries at d = 3, 5 and eps = 1e-6 (measured with a
/// budget of 600) and is censored there; the other cutting-plane methods stop well inside
/// their budget.
fn budget(method: &str) -> u64 {
    match method {
        "subgradient" | "subgradient-decaying" => 60,
        "ellipsoid" => 40,
        _ => 300,
    }
}

/// One regression row: method, d, eps, queries used (censored: the game hit the budget,
/// "more than" that many), certified lower bound T* + 1 (docs/theory.md §0; `None`
/// when the verifier confirms no prefix at all).
struct Expected {
    method: &'static str,
    dim: usize,
    eps: f64,
    queries: u64,
    censored: bool,
    lower_bound: Option<u64>,
}

const fn row(
    method: &'static str,
    dim: usize,
    eps: f64,
    queries: u64,
    censored: bool,
    lower_bound: Option<u64>,
) -> Expected {
    Expected {
        method,
        dim,
        eps,
        queries,
        censored,
        lower_bound,
    }
}

/// Recorded with L = R = 1, l2 norm, seed 1; `true` in the fifth column marks a censored
/// game (queries used > budget).
const TABLE: &[Expected] = &[
    row("ellipsoid", 1, 1e-2, 4, false, Some(3)),
    row("ellipsoid", 1, 1e-4, 6, false, Some(6)),
    row("ellipsoid", 1, 1e-6, 8, false, Some(8)),
    row("ellipsoid", 2, 1e-2, 11, false, Some(6)),
    row("ellipsoid", 2, 1e-4, 22, false, Some(18)),
    row("ellipsoid", 2, 1e-6, 34, false, Some(30)),
    row("ellipsoid", 3, 1e-2, 18, false, Some(9)),
    row("ellipsoid", 3, 1e-4, 40, true, Some(32)),
    row("ellipsoid", 3, 1e-6, 40, true, Some(41)),
    row("ellipsoid", 5, 1e-2, 31, false, Some(12)),
    row("ellipsoid", 5, 1e-4, 40, true, Some(34)),
    row("ellipsoid", 5, 1e-6, 40, true, Some(41)),
    row("sampled-centroid", 1, 1e-2, 4, false, Some(4)),
    row("sampled-centroid", 1, 1e-4, 9, false, Some(9)),
    row("sampled-centroid", 1, 1e-6, 17, false, Some(12)),
    row("sampled-centroid", 2, 1e-2, 6, false, Some(6)),
    row("sampled-centroid", 2, 1e-4, 9, false, Some(9)),
    row("sampled-centroid", 2, 1e-6, 18, false, Some(18)),
    row("sampled-centroid", 3, 1e-2, 8, false, Some(8)),
    row("sampled-centroid", 3, 1e-4, 15, false, Some(15)),
    // The exhaustive certificate pass fails numerically here; `longest_certificate` keeps
    // the first-fit certificate for the first 24 answers (it once reported none).
    row("sampled-centroid", 3, 1e-6, 25, false, Some(25)),
    row("sampled-centroid", 5, 1e-2, 16, false, Some(12)),
    row("sampled-centroid", 5, 1e-4, 24, false, Some(23)),
    row("sampled-centroid", 5, 1e-6, 28, false, Some(28)),
    row("analytic-center", 1, 1e-2, 4, false, Some(3)),
    row("analytic-center", 1, 1e-4, 6, false, Some(6)),
    row("analytic-center", 1, 1e-6, 8, false, Some(8)),
    row("analytic-center", 2, 1e-2, 7, false, Some(6)),
    row("analytic-center", 2, 1e-4, 11, false, Some(10)),
    row("analytic-center", 2, 1e-6, 15, false, Some(14)),
    row("analytic-center", 3, 1e-2, 10, false, Some(8)),
    row("analytic-center", 3, 1e-4, 16, false, Some(14)),
    row("analytic-center", 3, 1e-6, 22, false, Some(21)),
    row("analytic-center", 5, 1e-2, 16, false, Some(12)),
    row("analytic-center", 5, 1e-4, 26, false, Some(22)),
    row("analytic-center", 5, 1e-6, 36, false, Some(35)),
    row("subgradient", 1, 1e-2, 60, true, Some(61)),
    row("subgradient", 1, 1e-4, 60, true, Some(61)),
    row("subgradient", 1, 1e-6, 60, true, Some(61)),
    row("subgradient", 2, 1e-2, 60, true, Some(61)),
    row("subgradient", 2, 1e-4, 60, true, Some(61)),
    row("subgradient", 2, 1e-6, 60, true, Some(61)),
    row("subgradient", 3, 1e-2, 60, true, Some(61)),
    row("subgradient", 3, 1e-4, 60, true, Some(61)),
    row("subgradient", 3, 1e-6, 60, true, Some(61)),
    row("subgradient", 5, 1e-2, 60, true, Some(61)),
    row("subgradient", 5, 1e-4, 60, true, Some(61)),
    row("subgradient", 5, 1e-6, 60, true, Some(61)),
    row("subgradient-decaying", 1, 1e-2, 60, true, Some(5)),
    row("subgradient-decaying", 1, 1e-4, 60, true, Some(46)),
    row("subgradient-decaying", 1, 1e-6, 60, true, Some(61)),
    row("subgradient-decaying", 2, 1e-2, 60, true, Some(10)),
    row("subgradient-decaying", 2, 1e-4, 60, true, Some(57)),
    row("subgradient-decaying", 2, 1e-6, 60, true, Some(61)),
    row("subgradient-decaying", 3, 1e-2, 60, true, Some(16)),
    row("subgradient-decaying", 3, 1e-4, 60, true, Some(61)),
    row("subgradient-decaying", 3, 1e-6, 60, true, Some(61)),
    row("subgradient-decaying", 5, 1e-2, 60, true, Some(26)),
    row("subgradient-decaying", 5, 1e-4, 60, true, Some(61)),
    row("subgradient-decaying", 5, 1e-6, 60, true, Some(61)),
    // Kelley's counts at d >= 2 sit far below the level method's because the orthant
    // construction leaks on turn-backs (module docs of src/adversary/orthant.rs), not
    // because Kelley is that strong: at d = 2, eps = 1e-6 its 7th query is an exact
    // minimiser of every completion of the answers.
    row("kelley", 1, 1e-2, 3, false, Some(3)),
    row("kelley", 1, 1e-4, 4, false, Some(4)),
    row("kelley", 1, 1e-6, 4, false, Some(4)),
    row("kelley", 2, 1e-2, 5, false, Some(5)),
    row("kelley", 2, 1e-4, 7, false, Some(7)),
    row("kelley", 2, 1e-6, 7, false, Some(7)),
    row("kelley", 3, 1e-2, 7, false, Some(7)),
    row("kelley", 3, 1e-4, 10, false, Some(10)),
    row("kelley", 3, 1e-6, 10, false, Some(10)),
    row("kelley", 5, 1e-2, 11, false, Some(11)),
    row("kelley", 5, 1e-4, 16, false, Some(16)),
    row("kelley", 5, 1e-6, 16, false, Some(16)),
    row("level", 1, 1e-2, 3, false, Some(3)),
    row("level", 1, 1e-4, 10, false, Some(9)),
    row("level", 1, 1e-6, 16, false, Some(15)),
    row("level", 2, 1e-2, 5, false, Some(5)),
    row("level", 2, 1e-4, 13, false, Some(11)),
    row("level", 2, 1e-6, 19, false, Some(17)),
    row("level", 3, 1e-2, 7, false, Some(7)),
    row("level", 3, 1e-4, 16, false, Some(14)),
    row("level", 3, 1e-6, 22, false, Some(20)),
    row("level", 5, 1e-2, 11, false, Some(11)),
    row("level", 5, 1e-4, 22, false, Some(20)),
    row("level", 5, 1e-6, 28, false, Some(26)),
];

#[derive(Debug, PartialEq)]
struct Measured {
    queries: u64,
    censored: bool,
    lower_bound: Option<u64>,
}

fn play_orthant(method: &str, dim: usize, eps: f64) -> Result<Measured, String> {
    let class = FirstOrderClass::new(dim, 1.0, eps, 1.0, LipschitzNorm::L2).unwrap();
    let spec = GameSpec {
        class: Class::FirstOrder(class),
        adversary: "orthant".into(),
        method: method.into(),
        seed: 1,
        budget: budget(method),
        transcript: None,
    };
    let report = run(&spec).map_err(|e| format!("run failed: {e}"))?;
    let verdict = report
        .verdict
        .map_err(|e| format!("the verifier rejected the certificate: {e}"))?;
    if let Ending::MethodFailed { reason } = &report.record.ending {
        return Err(format!("the method failed: {reason}"));
    }
    // A method that stops claims eps-accuracy; its stopping rule is sound exactly when
    // the verifier's witnesses never refute that claim.
    match &verdict.outcome {
        Outcome::OutputStands | Outcome::BudgetExhausted => {}
        other => return Err(format!("outcome {other:?}")),
    }
    Ok(Measured {
        queries: verdict.queries_used,
        censored: verdict.censored,
        lower_bound: verdict.certified_lower_bound(),
    })
}

#[test]
fn every_first_order_method_against_orthant_is_certified_and_matches_the_table() {
    let probe =
        |d| Class::FirstOrder(FirstOrderClass::new(d, 1.0, 1e-2, 1.0, LipschitzNorm::L2).unwrap());
    let games: Vec<(&str, usize, f64)> = METHODS
        .iter()
        .filter(|m| {
            DIMS.iter()
                .all(|&d| method::supports(m.name, &probe(d)).is_ok())
        })
        .flat_map(|m| {
            DIMS.iter()
                .flat_map(move |&d| EPSILONS.iter().map(move |&e| (m.name, d, e)))
        })
        .collect();
    // The methods must all be there.
    for name in [
        "subgradient",
        "kelley",
        "level",
        "ellipsoid",
        "sampled-centroid",
        "analytic-center",
    ] {
        assert!(
            games.iter().any(|(m, _, _)| *m == name),
            "{name} does not play the first-order class"
        );
    }
    let results: Vec<_> = games
        .par_iter()
        .map(|&(m, d, e)| ((m, d, e), play_orthant(m, d, e)))
        .collect();
    let mut failures = String::new();
    let mut paste = String::new();
    for ((m, d, e), result) in &results {
        let measured = match result {
            Ok(measured) => measured,
            Err(reason) => {
                writeln!(failures, "{m} d = {d} eps = {e:e}: {reason}").unwrap();
                continue;
            }
        };
        let line = format!(
            "    row({m:?}, {d}, {e:e}, {}, {}, {:?}),",
            measured.queries, measured.censored, measured.lower_bound
        );
        writeln!(paste, "{line}").unwrap();
        match TABLE
            .iter()
            .find(|r| r.method == *m && r.dim == *d && r.eps == *e)
        {
            None => writeln!(failures, "missing row: {line}").unwrap(),
            Some(r) => {
                let expected = Measured {
                    queries: r.queries,
                    censored: r.censored,
                    lower_bound: r.lower_bound,
                };
                if expected != *measured {
                    writeln!(failures, "changed: expected {expected:?}, got {line}").unwrap();
                }
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{failures}\nready-to-paste table:\n{paste}"
    );
}

// ---------------------------------------------------------------------------------------
// An exact oracle for an explicit function.
// ---------------------------------------------------------------------------------------

/// Answers from an explicit max-of-affine-plus-cone function: the exact value, and the
/// gradient of the first piece attaining it (the cone's subgradient sigma sign(y_i - c_i)
/// e_i at its first largest coordinate when the cone wins alone).
struct Explicit {
    f: FunctionWitness,
}

impl Explicit {
    fn value(&self, y: &[f64]) -> f64 {
        let y: Vec<BigRational> = y.iter().map(|v| f64_to_rational(*v)).collect();
        Exact::from_rational(self.f.value_at(&y)).to_f64()
    }
}

impl Adversary for Explicit {
    fn name(&self) -> &str {
        "explicit"
    }

    fn answer(&mut self, query: &[f64]) -> Answer {
        let y: Vec<BigRational> = query.iter().map(|v| f64_to_rational(*v)).collect();
        let mut best: Option<(BigRational, Vec<Exact>)> = None;
        for piece in &self.f.pieces {
            let v = piece.value_at(&y);
            if best.as_ref().is_none_or(|(b, _)| v > *b) {
                best = Some((v, piece.slope.clone()));
            }
        }
        let distance = self.f.center_distance(&y);
        let cone = self.f.floor.to_rational() + self.f.slope.to_rational() * &distance;
        if best.as_ref().is_none_or(|(b, _)| cone > *b) {
            let i = (0..y.len())
                .find(|&i| {
                    let diff = &y[i] - self.f.center[i].to_rational();
                    diff == distance || -diff == distance
                })
                .unwrap_or(0);
            let mut g = vec![Exact::ZERO; y.len()];
            let sigma = self.f.slope.to_rational();
            g[i] = Exact::from_rational(if y[i] >= self.f.center[i].to_rational() {
                sigma
            } else {
                -sigma
            });
            best = Some((cone, g));
        }
        let (value, subgradient) = best.expect("the cone is always a candidate");
        Answer::FirstOrder(FirstOrderAnswer {
            value: Exact::from_rational(value),
            subgradient,
        })
    }

    fn witnesses(&self) -> Option<Witnesses> {
        None
    }

    fn undecided(&self) -> Undecided {
        Undecided::Log2Volume(0.0)
    }
}

/// f(y) = max_p a_p . (y - c): minimum 0 at c when the a_p span positively. The cone is
/// kept far below (floor -100, slope 1/1024), so it never attains the maximum on X.
fn cone_of_pieces(center: &[f64], normals: &[Vec<f64>]) -> Explicit {
    let zero = Exact::ZERO;
    let pieces = normals
        .iter()
        .map(|a| {
            let slope: Vec<Exact> = a.iter().map(|v| Exact::Float(*v)).collect();
            AffinePiece::through(center, &zero, &slope)
        })
        .collect();
    Explicit {
        f: FunctionWitness {
            pieces,
            center: center.iter().map(|v| Exact::Float(*v)).collect(),
            floor: Exact::Float(-100.0),
            slope: Exact::Float(1.0 / 1024.0),
        },
    }
}

/// Test instances with f* = 0 at the given centre (inside X = [-1, 1]^d) and every
/// gradient of l2 norm at most 1 (3-4-5 directions and unit axes; 0.6 and 0.8 are the
/// nearest doubles, which moves the norm by about 1e-16).
fn instances() -> Vec<(Vec<f64>, Explicit)> {
    let mut out = Vec::new();
    let c1 = vec![0.3];
    out.push((c1.clone(), cone_of_pieces(&c1, &[vec![1.0], vec![-0.5]])));
    let c2 = vec![0.3, -0.45];
    out.push((
        c2.clone(),
        cone_of_pieces(
            &c2,
            &[
                vec![0.6, 0.8],
                vec![-0.8, 0.6],
                vec![-0.6, -0.8],
                vec![0.8, -0.6],
            ],
        ),
    ));
    let c3 = vec![0.2, -0.7, 0.55];
    out.push((
        c3.clone(),
        cone_of_pieces(
            &c3,
            &[
                vec![1.0, 0.0, 0.0],
                vec![0.0, 1.0, 0.0],
                vec![0.0, 0.0, 1.0],
                vec![-0.5, -0.5, -0.5],
                vec![0.6, 0.0, -0.8],
            ],
        ),
    ));
    out
}

/// Plays `method` against `oracle` for at most `budget` queries; returns the queries and
/// the output point (`None` when the budget ended the game).
fn drive(
    method: &mut dyn Method,
    oracle: &mut dyn Adversary,
    dim: usize,
    budget: usize,
) -> (Vec<Vec<f64>>, Option<Vec<f64>>) {
    let mut query = vec![0.0; dim];
    let mut queries = Vec::new();
    while queries.len() < budget {
        match method.next(&mut query).expect("the method runs") {
            Step::Output(Output::Point { point }) => return (queries, Some(point)),
            Step::Output(Output::Empty) => panic!("a first-order method answered empty"),
            Step::Query => {
                let answer = oracle.answer(&query);
                method
                    .observe(&query, &answer)
                    .expect("the method observes");
                queries.push(query.clone());
            }
        }
    }
    (queries, None)
}

// ---------------------------------------------------------------------------------------
// (b) Outside checks.
// ---------------------------------------------------------------------------------------

#[test]
fn subgradient_method_stays_within_the_published_bound() {
    // Projected subgradient with step h = D / (L sqrt(N + 1)), D >= ||x_0 - x*||_2, L the
    // l2 Lipschitz constant: min_{k <= N} f(x_k) - f* <= L D / sqrt(N + 1) (Nesterov,
    // Introductory Lectures on Convex Optimization, 2004, sec. 3.2.3; from memory). The
    // proof gives the sharper (D0^2 + D^2) L / (2 D sqrt(N + 1)) with D0 = ||x_0 - x*||_2,
    // which is checked too (derived from the same inequality: sum_k h (f(x_k) - f*) <=
    // (D0^2 + (N + 1) h^2 L^2) / 2).
    for (center, mut oracle) in instances() {
        let d = center.len();
        let class = FirstOrderClass::new(d, 1.0, 0.05, 1.0, LipschitzNorm::L2).unwrap();
        let mut method = subgradient::Subgradient::new(&class, subgradient::StepRule::Fixed);
        let planned = method.planned();
        let (queries, output) = drive(&mut method, &mut oracle, d, 100_000);
        let output = output.expect("the method stops after its plan");
        assert_eq!(queries.len() as u64, planned);
        let gap = oracle.value(&output); // f* = 0
        let big_d = (d as f64).sqrt();
        let d0 = center.iter().map(|c| c * c).sum::<f64>().sqrt();
        let n1 = (planned as f64).sqrt();
        let published = big_d / n1;
        let sharper = (d0 * d0 + big_d * big_d) / (2.0 * big_d * n1);
        assert!(gap >= 0.0);
        assert!(
            gap <= sharper * (1.0 + 1e-12),
            "d = {d}: gap {gap} > {sharper} (published bound {published})"
        );
        assert!(sharper <= published);
        // The output is a queried point with the smallest value.
        let best = queries
            .iter()
            .map(|q| oracle.value(q))
            .fold(f64::INFINITY, f64::min);
        assert_eq!(gap, best);
    }
}

#[test]
fn kelley_reproduces_a_hand_computed_sequence() {
    // f(y) = max(A, B, C, D) on [-1, 1], the tangents of (y - 0.1)^2 at y = -0.7, -0.1,
    // 0.5, 1.0 (from memory of the construction; the numbers below are computed by hand):
    //   A(y) = -1.6 y - 0.48,  B(y) = -0.4 y,  C(y) = 0.8 y - 0.24,  D(y) = 1.8 y - 0.99.
    // Kelley (1960) queries the minimiser of the model over [-1, 1], from x_0 = 0:
    //   x_0 = 0:    A = -0.48, B = 0, C = -0.24, D = -0.99; f = 0 by B, g = -0.4.
    //               Model -0.4 y: unique minimiser y = 1, value -0.4.
    //   x_1 = 1:    A = -2.08, B = -0.4, C = 0.56, D = 0.81; f = 0.81 by D, g = 1.8.
    //               Model max(-0.4 y, 1.8 y - 0.99): -0.4 y = 1.8 y - 0.99 at y = 0.45
    //               (unique, slopes of opposite signs), value -0.18.
    //   x_2 = 0.45: A = -1.2, B = -0.18, C = 0.12, D = -0.18; f = 0.12 by C, g = 0.8.
    //               Model adds 0.8 y - 0.24; -0.4 y = 0.8 y - 0.24 at y = 0.2, value
    //               -0.08 (D there: -0.63, below); unique.
    //   x_3 = 0.2:  B = C = -0.08 = f*, so f_best = -0.08 = the LP bound: the gap closes,
    //               and the method outputs 0.2 after 4 queries.
    let mut oracle = Explicit {
        f: FunctionWitness {
            pieces: [(-1.6, -0.48), (-0.4, 0.0), (0.8, -0.24), (1.8, -0.99)]
                .iter()
                .map(|&(a, b)| AffinePiece {
                    slope: vec![Exact::Float(a)],
                    intercept: Exact::Float(b),
                })
                .collect(),
            center: vec![Exact::Float(0.2)],
            floor: Exact::Float(-100.0),
            slope: Exact::Float(1.0 / 1024.0),
        },
    };
    let class = FirstOrderClass::new(1, 1.0, 1e-6, 1.0, LipschitzNorm::L2).unwrap();
    let mut method = Kelley::new(&class);
    let (queries, output) = drive(&mut method, &mut oracle, 1, 100);
    let expected = [0.0, 1.0, 0.45, 0.2];
    assert_eq!(queries.len(), expected.len(), "queries {queries:?}");
    for (q, e) in queries.iter().zip(expected) {
        assert!((q[0] - e).abs() < 1e-7, "queries {queries:?}");
    }
    let output = output.expect("Kelley stops");
    assert!((output[0] - 0.2).abs() < 1e-7);
    let bundle = method.bundle();
    assert!((bundle.lower_bound() + 0.08).abs() < 1e-7);
    assert!((bundle.best_value().unwrap() + 0.08).abs() < 1e-7);
}

#[test]
fn every_stopping_method_is_eps_accurate_on_explicit_functions() {
    // A method that stops claims f(x) - f* <= eps; on explicit functions the claim is
    // checked directly (f* = 0 by construction, derived).
    let eps = 1e-3;
    for (center, oracle) in instances() {
        let d = center.len();
        let class = FirstOrderClass::new(d, 1.0, eps, 1.0, LipschitzNorm::L2).unwrap();
        for name in [
            "kelley",
            "level",
            "ellipsoid",
            "sampled-centroid",
            "analytic-center",
        ] {
            let mut oracle = Explicit {
                f: oracle.f.clone(),
            };
            let mut method = method::build(name, &Class::FirstOrder(class.clone()), 3).unwrap();
            let (queries, output) = drive(method.as_mut(), &mut oracle, d, 2000);
            let output = output.unwrap_or_else(|| panic!("{name} d = {d}: no output"));
            let gap = oracle.value(&output);
            assert!(
                (0.0..=eps).contains(&gap),
                "{name} d = {d}: gap {gap} after {} queries",
                queries.len()
            );
            assert!(
                output.iter().all(|x| x.abs() <= 1.0),
                "{name}: output outside X"
            );
        }
    }
}
