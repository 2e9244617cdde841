//! Hand-made oracles and game loops for the methods' unit tests.

use crate::class::{FeasibilityClass, Promise};
use crate::exact::Exact;
use crate::method::Method;
use crate::oracle::{Answer, Cut, Normal, Output, Step};

/// Box-halving test oracle: keeps a box [l, u], cycles through the coordinates round
/// robin, and answers each query with the axis cut through it that keeps the larger part
/// of the current coordinate's interval (the whole interval when the query lies outside
/// it). With `dense`, the same cut is sent as a dense normal 2 e_i (offset doubled).
pub(crate) struct AxisHalver {
    lower: Vec<f64>,
    upper: Vec<f64>,
    next_axis: usize,
    dense: bool,
}

impl AxisHalver {
    pub(crate) fn new(dim: usize, half_width: f64, dense: bool) -> AxisHalver {
        AxisHalver {
            lower: vec![-half_width; dim],
            upper: vec![half_width; dim],
            next_axis: 0,
            dense,
        }
    }

    pub(crate) fn answer(&mut self, x: &[f64]) -> Answer {
        let d = self.lower.len();
        let i = self.next_axis;
        self.next_axis = (i + 1) % d;
        let (l, u, xi) = (self.lower[i], self.upper[i], x[i]);
        let keep_upper = if xi <= l {
            true
        } else if xi >= u {
            false
        } else {
            u - xi >= xi - l
        };
        // Keep upper: every point of the kept box has y_i > x_i, i.e. -y_i < -x_i.
        let (sign, offset) = if keep_upper {
            self.lower[i] = l.max(xi);
            (-1.0, -xi)
        } else {
            self.upper[i] = u.min(xi);
            (1.0, xi)
        };
        let normal = if self.dense {
            let mut a = vec![0.0; d];
            a[i] = 2.0 * sign;
            Normal::Dense(a)
        } else {
            Normal::axis(i, sign > 0.0)
        };
        let offset = if self.dense { 2.0 * offset } else { offset };
        Answer::Cut(Cut {
            normal,
            offset: Exact::Float(offset),
        })
    }

    /// Whether a closed rho-ball still fits strictly inside the oracle's box.
    pub(crate) fn ball_fits(&self, rho: f64) -> bool {
        self.lower
            .iter()
            .zip(&self.upper)
            .all(|(l, u)| u - l > 2.0 * rho)
    }
}

/// Plays `make`'s method against [`AxisHalver`] for d = 1..=`max_dim`, R = 1, rho in
/// {1/64, 1e-3}, axis and dense normals. Checks that "empty" comes only once no rho-ball
/// fits the oracle's box, and after at least d k + 1 queries (docs/theory.md §1.1, the
/// box-halving lower bound). Returns (d, rho, queries) for every game.
pub(crate) fn play_halver(
    max_dim: usize,
    make: impl Fn(&FeasibilityClass) -> Box<dyn Method>,
) -> Vec<(usize, f64, usize)> {
    let mut out = Vec::new();
    for d in 1..=max_dim {
        for rho in [1.0 / 64.0, 1e-3] {
            for dense in [false, true] {
                let class = FeasibilityClass::new(d, 1.0, rho, Promise::MayBeEmpty).unwrap();
                let bound = d * class.halvings() as usize + 1;
                let mut method = make(&class);
                let mut oracle = AxisHalver::new(d, 1.0, dense);
                let mut query = vec![0.0; d];
                let mut queries = 0;
                loop {
                    match method.next(&mut query).unwrap() {
                        Step::Query => {
                            queries += 1;
                            assert!(
                                queries <= 3 * bound + 10,
                                "{}: no output after {queries} queries (d = {d}, rho = {rho})",
                                method.name()
                            );
                            let answer = oracle.answer(&query);
                            method.observe(&query, &answer).unwrap();
                        }
                        Step::Output(Output::Empty) => {
                            assert!(
                                !oracle.ball_fits(rho),
                                "{} declared empty while a rho-ball fits (d = {d}, rho = {rho})",
                                method.name()
                            );
                            assert!(queries >= bound, "{queries} < lower bound {bound}");
                            break;
                        }
                        Step::Output(Output::Point { point }) => {
                            panic!(
                                "{} output {point:?}; the oracle never answers inside",
                                method.name()
                            )
                        }
                    }
                }
                out.push((d, rho, queries));
            }
        }
    }
    out
}

/// Ball test oracle: K is the closed ball B(c, r). Inside queries are answered `inside`;
/// others get the deep cut a = 3 (x - c) with offset halfway between the query and the
/// supporting plane of K, a.y < a.c + (||x - c||^2 + r ||x - c||) * 3 / 2, stored as an
/// exact rational slightly above that (valid for K, excludes x).
pub(crate) struct BallOracle {
    pub(crate) center: Vec<f64>,
    pub(crate) radius: f64,
}

impl BallOracle {
    pub(crate) fn answer(&self, x: &[f64]) -> Answer {
        let a: Vec<f64> = x.iter().zip(&self.center).map(|(x, c)| x - c).collect();
        let n2: f64 = a.iter().map(|v| v * v).sum();
        if n2 <= self.radius * self.radius {
            return Answer::Inside;
        }
        let n = n2.sqrt();
        let ac: f64 = a.iter().zip(&self.center).map(|(a, c)| a * c).sum();
        let b = 3.0 * (ac + 0.5 * (n2 + self.radius * n));
        let bumped = b + b.abs() * 4.0 * f64::EPSILON + 1e-300;
        Answer::Cut(Cut {
            normal: Normal::Dense(a.iter().map(|v| 3.0 * v).collect()),
            offset: Exact::midpoint(b, bumped),
        })
    }
}

/// Plays `make`'s method against a [`BallOracle`] with K = B(c, 0.05) in dimension `d`
/// (R = 1, rho = 1e-3) and returns how many queries it took to output a point of K.
pub(crate) fn play_ball(d: usize, make: impl Fn(&FeasibilityClass) -> Box<dyn Method>) -> usize {
    let class = FeasibilityClass::new(d, 1.0, 1e-3, Promise::MayBeEmpty).unwrap();
    let oracle = BallOracle {
        center: [0.61, -0.42, 0.13, -0.77, 0.05][..d].to_vec(),
        radius: 0.05,
    };
    let mut method = make(&class);
    let mut query = vec![0.0; d];
    for queries in 0..400 {
        match method.next(&mut query).unwrap() {
            Step::Query => {
                let answer = oracle.answer(&query);
                method.observe(&query, &answer).unwrap();
            }
            Step::Output(Output::Point { point }) => {
                let dist2: f64 = point
                    .iter()
                    .zip(&oracle.center)
                    .map(|(p, c)| (p - c) * (p - c))
                    .sum();
                assert!(
                    dist2 <= oracle.radius * oracle.radius,
                    "{point:?} is not in K"
                );
                return queries;
            }
            Step::Output(Output::Empty) => panic!("{} declared a ball empty", method.name()),
        }
    }
    panic!(
        "{} found no point of the ball in 400 queries",
        method.name()
    );
}

/// Plays `make`'s method against a [`BallOracle`] whose ball lies outside the box and
/// touches it only at the corner (1, ..., 1), with rho = 1e-12: the answers shrink the
/// method's model to a sliver near the corner, far below the box's scale. The method
/// must stop within the budget with "empty" (no rho-ball lies in the box and the ball)
/// and without an error; a regression test for the scaling of the model's LP.
pub(crate) fn play_corner(d: usize, make: impl Fn(&FeasibilityClass) -> Box<dyn Method>) -> usize {
    let class = FeasibilityClass::new(d, 1.0, 1e-12, Promise::MayBeEmpty).unwrap();
    let oracle = BallOracle {
        center: vec![1.3; d],
        radius: 0.3 * (d as f64).sqrt(),
    };
    let mut method = make(&class);
    let mut query = vec![0.0; d];
    for queries in 0..400 {
        match method.next(&mut query).unwrap() {
            Step::Query => {
                let answer = oracle.answer(&query);
                method.observe(&query, &answer).unwrap();
            }
            Step::Output(Output::Empty) => return queries,
            Step::Output(Output::Point { point }) => {
                panic!(
                    "{} output {point:?}; only the corner is in K",
                    method.name()
                )
            }
        }
    }
    panic!("{} did not stop in 400 queries", method.name());
}
