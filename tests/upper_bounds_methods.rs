//! Each named method stays within its upper line (`naysayer bounds`) over a grid of classes
//! and against every adversary that plays them: these lines are theorems about the
//! method, so a game that needs more queries than the line, or whose output a witness
//! refutes, is a bug in the method or in the line. The lines' values are checked against
//! their formulas in `tests/upper_bounds.rs`; the large-scale curves in
//! `tests/upper_bounds_large_scale.rs`.
//!
//! Every game runs through the verifier: the method must stop within its line with an
//! output that stands (`Outcome::OutputStands`), with budget line + 1 so that one query
//! too many shows as such. Sizes are small so the whole file stays fast.

use num_rational::BigRational;
use num_traits::{ToPrimitive, Zero};
use rayon::prelude::*;

use naysayer::adversary::instance_oracle::InstanceOracle;
use naysayer::adversary::{self, Adversary};
use naysayer::bounds::{
    centerpoint_upper_bound, centre_of_gravity_upper_bound, ellipsoid_upper_bound,
    first_order_bounds, first_order_centre_of_gravity_upper_bound,
};
use naysayer::certificate::Outcome;
use naysayer::class::{
    Class, FeasibilityClass, FirstOrderClass, LatticeClass, LipschitzNorm, Promise,
};
use naysayer::error::Error;
use naysayer::exact::{f64_to_rational, Exact};
use naysayer::geometry::polygon::Polygon;
use naysayer::instance::{AffinePiece, FunctionWitness};
use naysayer::method::{self, Method};
use naysayer::oracle::{Answer, Normal, Output, Step};
use naysayer::runner::{self, GameSpec};

/// Plays one verified game with `method` (built-in when `custom` is `None`) and checks it
/// against `line`: at most `line` queries and an output no witness refutes.
fn within_line(
    class: &Class,
    adversary: &str,
    name: &str,
    seed: u64,
    line: u64,
    custom: Option<&mut dyn Method>,
) -> Result<u64, String> {
    let spec = GameSpec {
        class: class.clone(),
        adversary: adversary.into(),
        method: name.into(),
        seed,
        budget: line + 1,
        transcript: None,
    };
    let what = format!("{name} (seed {seed}) against {adversary} on {class:?}");
    let report = match custom {
        Some(m) => runner::run_with(&spec, m, &mut []),
        None => runner::run(&spec),
    }
    .map_err(|e| format!("{what}: {e}"))?;
    let verdict = report
        .verdict
        .map_err(|e| format!("{what}: the verifier rejected the certificate: {e}"))?;
    if verdict.queries_used > line || verdict.censored {
        return Err(format!(
            "{what}: {} queries, more than its line {line}",
            verdict.queries_used
        ));
    }
    if verdict.outcome != Outcome::OutputStands {
        return Err(format!(
            "{what}: {} queries, outcome {:?}",
            verdict.queries_used, verdict.outcome
        ));
    }
    Ok(verdict.queries_used)
}

/// Every adversary registered for `class`'s family that accepts it.
fn adversaries_for(class: &Class) -> Vec<&'static str> {
    adversary::ADVERSARIES
        .iter()
        .filter(|a| a.family == class.family_name())
        .filter(|a| a.restriction.is_none_or(|check| check(class).is_ok()))
        .map(|a| a.name)
        .collect()
}

/// Runs every game in parallel and fails with all the violations at once.
fn all_within<T: Sync>(games: &[T], play: impl Fn(&T) -> Result<u64, String> + Sync) {
    let failures: Vec<String> = games.par_iter().filter_map(|g| play(g).err()).collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

// ---------------------------------------------------------------------------------------
// Feasibility: centroid and ellipsoid, against every feasibility adversary.
// ---------------------------------------------------------------------------------------

/// R over six orders of magnitude, R/rho from 3 to 10^6 (a power of two included), both
/// promises.
fn feasibility_classes(dims: &[usize], ratios: &[f64]) -> Vec<Class> {
    let mut out = Vec::new();
    for &d in dims {
        for r in [1e-3, 1.0, 250.0] {
            for &ratio in ratios {
                for promise in [Promise::MayBeEmpty, Promise::Nonempty] {
                    let class = FeasibilityClass::new(d, r, r / ratio, promise).unwrap();
                    out.push(Class::Feasibility(class));
                }
            }
        }
    }
    out
}

fn feasibility_games(classes: Vec<Class>) -> Vec<(Class, &'static str)> {
    let games: Vec<_> = classes
        .into_iter()
        .flat_map(|c| adversaries_for(&c).into_iter().map(move |a| (c.clone(), a)))
        .collect();
    assert!(games.iter().any(|(_, a)| *a == "halving"));
    games
}

#[test]
fn centroid_stays_within_its_line() {
    // The exact centre of gravity (d <= 2, where the crate has it): Grunbaum 1960.
    let games = feasibility_games(feasibility_classes(&[1, 2], &[3.0, 10.0, 64.0, 1e3, 1e6]));
    all_within(&games, |(class, adversary)| {
        let Class::Feasibility(c) = class else {
            unreachable!()
        };
        within_line(
            class,
            adversary,
            "centroid",
            0,
            centre_of_gravity_upper_bound(c),
            None,
        )
    });
}

#[test]
fn ellipsoid_stays_within_its_line() {
    // The central-cut ellipsoid method: Bertsimas & Tsitsiklis 1997, ch. 8.
    let games = feasibility_games(feasibility_classes(
        &[1, 2, 3, 5, 8],
        &[3.0, 10.0, 64.0, 1e3, 1e6],
    ));
    all_within(&games, |(class, adversary)| {
        let Class::Feasibility(c) = class else {
            unreachable!()
        };
        within_line(
            class,
            adversary,
            "ellipsoid",
            0,
            ellipsoid_upper_bound(c),
            None,
        )
    });
}

// ---------------------------------------------------------------------------------------
// First-order: the subgradient method and the exact centre of gravity.
// ---------------------------------------------------------------------------------------

/// Small first-order classes: d <= 3, LR/eps from 1.5 to 8, R and L over several orders of
/// magnitude, every norm.
fn first_order_classes(dims: &[usize], ratios: &[f64]) -> Vec<FirstOrderClass> {
    let mut out = Vec::new();
    for &d in dims {
        for (r, lipschitz) in [(1.0, 1.0), (0.01, 30.0), (200.0, 0.25)] {
            for &ratio in ratios {
                for norm in [LipschitzNorm::L1, LipschitzNorm::L2, LipschitzNorm::Linf] {
                    let eps = lipschitz * r / ratio;
                    out.push(FirstOrderClass::new(d, r, eps, lipschitz, norm).unwrap());
                }
            }
        }
    }
    out
}

fn first_order_games(classes: Vec<FirstOrderClass>) -> Vec<(Class, &'static str)> {
    let games: Vec<_> = classes
        .into_iter()
        .map(Class::FirstOrder)
        .flat_map(|c| adversaries_for(&c).into_iter().map(move |a| (c.clone(), a)))
        .collect();
    for name in ["slab-funnel", "orthant"] {
        assert!(games.iter().any(|(_, a)| *a == name), "{name} is missing");
    }
    games
}

fn subgradient_line(class: &FirstOrderClass) -> u64 {
    first_order_bounds(class)
        .into_iter()
        .find(|b| b.label == "subgradient method")
        .and_then(|b| b.queries)
        .unwrap()
}

#[test]
fn subgradient_stays_within_its_line() {
    // Nesterov 2004, sec. 3.2.3 (from memory): N = ceil((L' D / eps)^2) queries with step
    // D / (L' sqrt(N)) leave the best query eps-optimal.
    let games = first_order_games(first_order_classes(&[1, 2, 3], &[1.5, 3.0, 8.0]));
    all_within(&games, |(class, adversary)| {
        let Class::FirstOrder(c) = class else {
            unreachable!()
        };
        within_line(
            class,
            adversary,
            "subgradient",
            0,
            subgradient_line(c),
            None,
        )
    });
}

/// f(y) = L ||y - c||_1 = max over sign vectors s of L s.(y - c): in the l1 class with
/// constant L (every gradient has l_inf norm L) although its gradients have l2 norm
/// L sqrt(d), the case a line written for l2 classes must not forget.
fn l1_cone(class: &FirstOrderClass, centre: &[f64]) -> InstanceOracle {
    let d = centre.len();
    let pieces = (0..1u32 << d)
        .map(|mask| {
            let slope: Vec<Exact> = (0..d)
                .map(|i| {
                    let s = if mask >> i & 1 == 1 { 1.0 } else { -1.0 };
                    Exact::Float(s * class.lipschitz)
                })
                .collect();
            AffinePiece::through(centre, &Exact::ZERO, &slope)
        })
        .collect();
    let witness = FunctionWitness {
        pieces,
        center: centre.iter().map(|v| Exact::Float(*v)).collect(),
        floor: Exact::ZERO,
        slope: Exact::Float(class.lipschitz / 1024.0),
    };
    InstanceOracle::new(class, witness).expect("the l1 cone is in the l1 class")
}

/// Plays `method` against a fixed oracle; returns the queries used and the exact gap of
/// the output.
fn gap_on(
    method: &mut dyn Method,
    oracle: &mut InstanceOracle,
    d: usize,
    budget: u64,
) -> (u64, BigRational) {
    let mut query = vec![0.0; d];
    let mut used = 0;
    loop {
        match method.next(&mut query).unwrap() {
            Step::Output(Output::Point { point }) => return (used, oracle.gap_at(&point)),
            Step::Output(Output::Empty) => panic!("a first-order method answered empty"),
            Step::Query => {
                used += 1;
                assert!(used <= budget, "more than {budget} queries");
                let answer = oracle.answer(&query);
                method.observe(&query, &answer).unwrap();
            }
        }
    }
}

#[test]
fn subgradient_stays_within_its_line_on_l1_cones() {
    // On L ||y - c||_1 the subgradient steps move every coordinate by the same amount, so
    // the iterates oscillate around c in all d coordinates at once: with a step sized for
    // subgradients of l2 norm L (not L sqrt(d)) the best gap is about d/2 eps.
    for d in [2usize, 3, 5] {
        for eps in [0.3, 0.11] {
            let class = FirstOrderClass::new(d, 1.0, eps, 1.0, LipschitzNorm::L1).unwrap();
            let line = subgradient_line(&class);
            for j in 0..24 {
                let c = 0.2 + 0.6 * j as f64 / 24.0;
                let centre = vec![c; d];
                let mut oracle = l1_cone(&class, &centre);
                let mut method =
                    method::build("subgradient", &Class::FirstOrder(class.clone()), 0).unwrap();
                let (used, gap) = gap_on(method.as_mut(), &mut oracle, d, line);
                assert!(used <= line);
                assert!(
                    gap <= f64_to_rational(eps),
                    "d = {d}, eps = {eps}, c = {c}: gap {} after {used} queries (line {line})",
                    gap.to_f64().unwrap()
                );
            }
        }
    }
}

/// The exact centre-of-gravity method on a first-order class (Levin 1965; Newman 1965),
/// written here because the crate's `centroid` plays feasibility classes only: in d = 1
/// it bisects its interval, in d = 2 it queries the centroid of its polygon; each answer
/// cuts with `g.y <= g.x`. It asks the number of queries of its line (or stops early at a
/// zero subgradient, a minimiser) and outputs the best point asked.
struct FirstOrderCentroid {
    planned: u64,
    asked: u64,
    interval: Option<(f64, f64)>,
    polygon: Option<Polygon>,
    best: Option<(f64, Vec<f64>)>,
    optimal: Option<Vec<f64>>,
}

impl FirstOrderCentroid {
    fn new(class: &FirstOrderClass) -> FirstOrderCentroid {
        let r = class.half_width;
        FirstOrderCentroid {
            planned: first_order_centre_of_gravity_upper_bound(class),
            asked: 0,
            interval: (class.dim == 1).then_some((-r, r)),
            polygon: (class.dim == 2).then(|| Polygon::from_box([-r, -r], [r, r])),
            best: None,
            optimal: None,
        }
    }

    fn output(&self) -> Step {
        let point = self
            .optimal
            .clone()
            .or_else(|| self.best.as_ref().map(|(_, p)| p.clone()))
            .expect("at least one query");
        Step::Output(Output::Point { point })
    }
}

impl Method for FirstOrderCentroid {
    fn name(&self) -> &str {
        "exact-centre-of-gravity"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.optimal.is_some() || self.asked >= self.planned {
            return Ok(self.output());
        }
        if let Some((l, u)) = self.interval {
            query[0] = 0.5 * (l + u);
        } else {
            let polygon = self.polygon.as_ref().expect("d <= 2");
            match polygon.centroid() {
                Some(c) => query.copy_from_slice(&c),
                // Nothing left to cut: every point better than the best was cut away.
                None => return Ok(self.output()),
            }
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let Answer::FirstOrder(fo) = answer else {
            panic!("first-order answers expected");
        };
        self.asked += 1;
        let value = fo.value.to_f64();
        if self.best.as_ref().is_none_or(|(v, _)| value < *v) {
            self.best = Some((value, query.to_vec()));
        }
        let g: Vec<f64> = fo.subgradient.iter().map(Exact::to_f64).collect();
        if g.iter().all(|v| *v == 0.0) {
            self.optimal = Some(query.to_vec());
            return Ok(());
        }
        if let Some((l, u)) = &mut self.interval {
            if g[0] > 0.0 {
                *u = query[0];
            } else {
                *l = query[0];
            }
        }
        if let Some(polygon) = &mut self.polygon {
            polygon.clip([g[0], g[1]], g[0] * query[0] + g[1] * query[1]);
        }
        Ok(())
    }
}

#[test]
fn exact_centre_of_gravity_stays_within_its_first_order_line() {
    // Grunbaum 1960 and Bubeck 2015, Thm 2.1 (docs/theory.md §2.5): the line's count of
    // central cuts leaves the best query eps-optimal, whatever the adversary answers.
    let games = first_order_games(first_order_classes(&[1, 2], &[1.5, 8.0, 100.0, 1e4]));
    all_within(&games, |(class, adversary)| {
        let Class::FirstOrder(c) = class else {
            unreachable!()
        };
        let mut method = FirstOrderCentroid::new(c);
        let line = first_order_centre_of_gravity_upper_bound(c);
        within_line(
            class,
            adversary,
            "exact-centre-of-gravity",
            0,
            line,
            Some(&mut method),
        )
    });
    // And on the l1 cones, whose gradients are longest in l2.
    for d in [1usize, 2] {
        let class = FirstOrderClass::new(d, 1.0, 0.05, 1.0, LipschitzNorm::L1).unwrap();
        let line = first_order_centre_of_gravity_upper_bound(&class);
        for j in 0..16 {
            let centre = vec![-0.9 + 1.7 * j as f64 / 16.0; d];
            let mut oracle = l1_cone(&class, &centre);
            let mut method = FirstOrderCentroid::new(&class);
            let (used, gap) = gap_on(&mut method, &mut oracle, d, line);
            assert!(used <= line);
            assert!(
                gap <= f64_to_rational(class.eps),
                "d = {d}, centre {centre:?}"
            );
        }
    }
}

// ---------------------------------------------------------------------------------------
// Lattice: lattice-centerpoint, enumerate, mixed-centerpoint.
// ---------------------------------------------------------------------------------------

fn integer_classes() -> Vec<Class> {
    let mut out = Vec::new();
    for (n, lower, upper) in [
        (1usize, 0i64, 1i64),
        (1, 0, 7),
        (1, -5, 9),
        (1, 0, 100),
        (2, 0, 1),
        (2, 0, 3),
        (2, -2, 3),
        (2, 0, 6),
        (3, 0, 1),
        (3, -1, 1),
        (3, 0, 2),
        (4, 0, 1),
    ] {
        out.push(Class::Lattice(
            LatticeClass::integer(n, lower, upper).unwrap(),
        ));
    }
    out
}

fn lattice_games(classes: Vec<Class>, expected: &[&str]) -> Vec<(Class, &'static str)> {
    let games: Vec<_> = classes
        .into_iter()
        .flat_map(|c| adversaries_for(&c).into_iter().map(move |a| (c.clone(), a)))
        .collect();
    for name in expected {
        assert!(games.iter().any(|(_, a)| a == name), "{name} is missing");
    }
    games
}

#[test]
fn lattice_centerpoint_stays_within_its_line() {
    // Oertel, Wagner & Weismantel 2014: a point of depth |S| / 2^n exists among the alive
    // lattice points, so floor(ln |S| / -ln(1 - 2^-n)) + 1 queries end every game.
    let games = lattice_games(integer_classes(), &["lattice-half", "corner"]);
    all_within(&games, |(class, adversary)| {
        let Class::Lattice(c) = class else {
            unreachable!()
        };
        within_line(
            class,
            adversary,
            "lattice-centerpoint",
            0,
            centerpoint_upper_bound(c),
            None,
        )
    });
}

#[test]
fn enumerate_stays_within_its_line() {
    // Querying every lattice point of the box ends any game (common practice, no source).
    let games = lattice_games(integer_classes(), &["lattice-half", "corner"]);
    all_within(&games, |(class, adversary)| {
        let Class::Lattice(c) = class else {
            unreachable!()
        };
        within_line(class, adversary, "enumerate", 0, c.lattice_count(), None)
    });
}

/// An exact mixed-integer centerpoint method for classes whose alive fibres stay boxes
/// (every cut, restricted to a fibre {z} x R^d, bounds one continuous coordinate or drops
/// the whole fibre, as the mixed-corner adversary's do), written here because the crate's
/// `mixed-centerpoint` samples its point. It keeps each fibre's box exactly (rationals),
/// drops a fibre once a side is at most 2 rho (no rho-ball fits) and queries the centre
/// of the alive box of largest volume. A hyperplane through a box's centre leaves half of
/// the box on each side, so that point has depth at least 1/(2 m) of the alive measure,
/// m <= 2^n the number of alive fibres: at least the 1/(2^n (d+1)) of Basu & Oertel for
/// d >= 1 (derived). "None" once every fibre is dropped.
struct ExactFibreCentre {
    fibres: Vec<(Vec<i64>, Vec<BigRational>, Vec<BigRational>)>,
    two_rho: BigRational,
    found: Option<Vec<f64>>,
}

impl ExactFibreCentre {
    fn new(class: &LatticeClass) -> ExactFibreCentre {
        let n = class.int_dim();
        let r = f64_to_rational(class.half_width);
        let mut points = vec![class.lower.clone()];
        for i in 0..n {
            points = points
                .into_iter()
                .flat_map(|p| {
                    (class.lower[i]..=class.upper[i]).map(move |v| {
                        let mut q = p.clone();
                        q[i] = v;
                        q
                    })
                })
                .collect();
        }
        let lower = vec![-r.clone(); class.cont_dim];
        let upper = vec![r; class.cont_dim];
        ExactFibreCentre {
            fibres: points
                .into_iter()
                .map(|z| (z, lower.clone(), upper.clone()))
                .collect(),
            two_rho: f64_to_rational(class.rho) * BigRational::from_integer(2.into()),
            found: None,
        }
    }

    fn alive(&self, lower: &[BigRational], upper: &[BigRational]) -> bool {
        lower.iter().zip(upper).all(|(l, u)| u - l > self.two_rho)
    }
}

impl Method for ExactFibreCentre {
    fn name(&self) -> &str {
        "exact-fibre-centre"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        let volume = |l: &[BigRational], u: &[BigRational]| -> BigRational {
            l.iter().zip(u).map(|(a, b)| b - a).product()
        };
        let best = self
            .fibres
            .iter()
            .filter(|(_, l, u)| self.alive(l, u))
            .fold(
                None::<&(Vec<i64>, Vec<BigRational>, Vec<BigRational>)>,
                |best, f| match best {
                    Some(b) if volume(&b.1, &b.2) >= volume(&f.1, &f.2) => Some(b),
                    _ => Some(f),
                },
            );
        let Some((z, l, u)) = best else {
            return Ok(Step::Output(Output::Empty));
        };
        let half = BigRational::new(1.into(), 2.into());
        for (q, v) in query.iter_mut().zip(z) {
            *q = *v as f64;
        }
        for (q, (a, b)) in query[z.len()..].iter_mut().zip(l.iter().zip(u)) {
            *q = Exact::from_rational((a + b) * &half).to_f64();
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let cut = match answer {
            Answer::Inside => {
                self.found = Some(query.to_vec());
                return Ok(());
            }
            Answer::Cut(cut) => cut,
            other => panic!("separation answers expected, got {other:?}"),
        };
        let n = self.fibres[0].0.len();
        let dim = query.len();
        let normal: Vec<BigRational> = match &cut.normal {
            Normal::Axis { axis, sign } => (0..dim)
                .map(|i| {
                    BigRational::from_integer(if i == *axis { (*sign).into() } else { 0.into() })
                })
                .collect(),
            Normal::Dense(a) => a.iter().map(|v| f64_to_rational(*v)).collect(),
        };
        let continuous: Vec<usize> = (n..dim).filter(|&i| !normal[i].is_zero()).collect();
        assert!(
            continuous.len() <= 1,
            "a cut the box model cannot hold: {cut:?}"
        );
        for (z, lower, upper) in &mut self.fibres {
            // On the fibre: a_y . y < b, b = offset - a_x . z.
            let b = z
                .iter()
                .zip(&normal)
                .fold(cut.offset.to_rational(), |b, (zi, a)| {
                    b - a * BigRational::from_integer((*zi).into())
                });
            match continuous.first() {
                None if b <= BigRational::zero() => {
                    // The whole fibre is cut away.
                    lower
                        .iter_mut()
                        .zip(upper.iter_mut())
                        .for_each(|(l, u)| *u = l.clone());
                }
                None => {}
                Some(&i) => {
                    let bound = &b / &normal[i];
                    let j = i - n;
                    if normal[i] > BigRational::zero() {
                        if bound < upper[j] {
                            upper[j] = bound.max(lower[j].clone());
                        }
                    } else if bound > lower[j] {
                        lower[j] = bound.min(upper[j].clone());
                    }
                }
            }
        }
        Ok(())
    }
}

/// Mixed classes over R/rho from 3 to 10^4, R over four orders of magnitude.
fn mixed_classes() -> Vec<Class> {
    let mut classes = Vec::new();
    for (n, lower, upper) in [(1usize, 0i64, 1i64), (1, -1, 2), (2, 0, 1)] {
        for d in [1usize, 2] {
            for (r, rho) in [(1.0, 0.3), (1.0, 0.05), (40.0, 0.5), (1e-2, 1e-6)] {
                classes.push(Class::Lattice(
                    LatticeClass::mixed(n, lower, upper, d, r, rho).unwrap(),
                ));
            }
        }
    }
    classes
}

#[test]
fn mixed_centerpoint_stays_within_its_line() {
    // Basu & Oertel 2017 (docs/theory.md §4, derived): the line holds for an exact
    // mixed-integer centerpoint method (above), against every mixed-integer adversary.
    let games = lattice_games(mixed_classes(), &["mixed-corner"]);
    all_within(&games, |(class, adversary)| {
        let Class::Lattice(c) = class else {
            unreachable!()
        };
        let mut method = ExactFibreCentre::new(c);
        let line = centerpoint_upper_bound(c);
        within_line(
            class,
            adversary,
            "exact-fibre-centre",
            0,
            line,
            Some(&mut method),
        )
    });
}
