//! Integer and mixed-integer classes (docs/theory.md §4): the corner, mixed-corner and
//! lattice-half adversaries against the built-in lattice methods, every game checked by
//! the independent exact verifier; the depth of lattice centerpoints; tampered
//! mixed-integer transcripts.

use naysayer::adversary::lattice_half::LatticeHalf;
use naysayer::adversary::mixed_corner::MixedCorner;
use naysayer::adversary::Adversary;
use naysayer::certificate::verify_records;
use naysayer::class::{Class, LatticeClass};
use naysayer::exact::f64_to_rational;
use naysayer::geometry::lattice_split::{best_split, side};
use naysayer::minimax::halfspace_traces;
use naysayer::oracle::{Answer, Cut, Normal, Output};
use naysayer::runner::{self, GameSpec};
use naysayer::transcript::{Ending, FinalRecord, Header};
use naysayer::transcript::{QueryRecord, Record, FORMAT_VERSION};
use naysayer::Error;
use proptest::prelude::*;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

const LATTICE_METHODS: [&str; 4] = [
    "enumerate",
    "lattice-centerpoint",
    "fibre-bisection",
    "mixed-centerpoint",
];

/// Plays one verified game; returns (queries used, certified lower bound, ending).
fn play(class: &LatticeClass, adversary: &str, method: &str, budget: u64) -> (u64, u64, Ending) {
    let spec = GameSpec {
        class: Class::Lattice(class.clone()),
        adversary: adversary.into(),
        method: method.into(),
        seed: 7,
        budget,
        transcript: None,
    };
    let report = runner::run(&spec).unwrap();
    let verdict = report
        .verdict
        .unwrap_or_else(|e| panic!("{adversary} vs {method}: certificate rejected: {e}"));
    (
        report.record.queries_used,
        verdict.certified_lower_bound().expect("a certificate"),
        report.record.ending,
    )
}

#[test]
fn corner_forces_two_to_the_n_on_every_method() {
    for n in 1..=6usize {
        let class = LatticeClass::integer(n, 0, 1).unwrap();
        let bound = 1u64 << n;
        for method in LATTICE_METHODS {
            let (used, certified, ending) = play(&class, "corner", method, 10_000);
            assert_eq!(certified, bound, "n = {n}, {method}");
            assert!(used >= bound, "n = {n}, {method}: {used}");
            assert!(
                matches!(
                    ending,
                    Ending::Output {
                        output: Output::Empty
                    }
                ),
                "n = {n}, {method}: {ending:?}"
            );
            if method == "enumerate" {
                assert_eq!(used, bound, "enumerate meets the corner bound, n = {n}");
            }
        }
    }
}

#[test]
fn mixed_corner_forces_its_count() {
    for (n, d) in [(1usize, 1usize), (2, 1), (2, 2), (3, 2)] {
        for ratio in [16.0, 1000.0] {
            let class = LatticeClass::mixed(n, 0, 1, d, 1.0, 1.0 / ratio).unwrap();
            // k = ceil(log2(R/rho)) - 1: 3 for 16 and 9 for 1000 (by hand).
            let k = if ratio == 16.0 { 3 } else { 9 };
            assert_eq!(class.halvings(), k);
            let bound = (1u64 << n) * (d as u64 * u64::from(k) + 1);
            let (used, certified, _) = play(&class, "mixed-corner", "fibre-bisection", 100_000);
            assert_eq!(
                (used, certified),
                (bound, bound),
                "n = {n}, d = {d}, R/rho = {ratio}"
            );
            let (used, certified, ending) =
                play(&class, "mixed-corner", "mixed-centerpoint", 100_000);
            assert!(
                certified >= bound,
                "mixed-centerpoint n = {n}, d = {d}: {certified}"
            );
            assert!(used >= bound);
            assert!(matches!(
                ending,
                Ending::Output {
                    output: Output::Empty
                }
            ));
        }
    }
}

#[test]
fn lattice_half_forces_log_count() {
    for (n, upper) in [(1usize, 20i64), (2, 5), (2, 9), (3, 3)] {
        let class = LatticeClass::integer(n, 0, upper).unwrap();
        let size = class.lattice_count();
        let bound = u64::from(63 - size.leading_zeros()) + 1;
        for method in ["enumerate", "lattice-centerpoint", "fibre-bisection"] {
            let (used, certified, _) = play(&class, "lattice-half", method, 100_000);
            assert!(
                certified >= bound,
                "n = {n}, |S| = {size}, {method}: {certified}"
            );
            assert!(used >= certified - 1);
        }
    }
}

/// 2 |kept| >= |S| - 1, every kept point strictly inside, the query excluded; all exact.
fn check_answer(alive: &[Vec<i64>], x: &[f64], answer: &Answer, kept: &[Vec<i64>]) {
    let Answer::Cut(Cut {
        normal: Normal::Dense(a),
        offset,
    }) = answer
    else {
        panic!("lattice-half answers dense cuts: {answer:?}")
    };
    let b = offset.to_rational();
    let ax: num_rational::BigRational = a
        .iter()
        .zip(x)
        .map(|(ai, xi)| f64_to_rational(*ai) * f64_to_rational(*xi))
        .sum();
    assert!(ax >= b, "the query is not excluded");
    for s in alive {
        let as_: num_rational::BigRational = a
            .iter()
            .zip(s)
            .map(|(ai, si)| f64_to_rational(*ai) * f64_to_rational(*si as f64))
            .sum();
        assert_eq!(
            as_ < b,
            kept.contains(s),
            "kept set differs from the cut at {s:?}"
        );
    }
    assert!(
        2 * kept.len() + 1 >= alive.len(),
        "kept {} of {}",
        kept.len(),
        alive.len()
    );
}

fn coordinate() -> impl Strategy<Value = f64> {
    prop_oneof![
        3 => (-8i32..=48).prop_map(|k| f64::from(k) / 8.0),
        1 => -1.0..6.0f64,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn lattice_half_keeps_half(
        n in 1usize..=3,
        raw in proptest::collection::vec((0i64..6, 0i64..6, 0i64..6), 1..40),
        queries in proptest::collection::vec((coordinate(), coordinate(), coordinate()), 1..8),
    ) {
        let mut points: Vec<Vec<i64>> = raw.iter().map(|(a, b, c)| vec![*a, *b, *c][..n].to_vec()).collect();
        points.sort();
        points.dedup();
        let mut adversary = LatticeHalf::from_points(points, 0.5);
        for (q0, q1, q2) in &queries {
            let x = [*q0, *q1, *q2][..n].to_vec();
            let before = adversary.alive().to_vec();
            let answer = adversary.answer(&x);
            check_answer(&before, &x, &answer, adversary.alive());
        }
    }
}

/// A random polytope's lattice points in {0..size}^n: the box cut by a few random
/// halfspaces through random points of it (nonempty: the first point is kept).
fn polytope_points(rng: &mut ChaCha8Rng, n: usize, size: i64) -> Vec<Vec<i64>> {
    let all = LatticeClass::integer(n, 0, size)
        .unwrap()
        .lattice_points(10_000)
        .unwrap();
    let centre: Vec<i64> = (0..n).map(|_| rng.random_range(1..size)).collect();
    let mut points = all;
    for _ in 0..rng.random_range(1..5) {
        let a: Vec<i64> = (0..n).map(|_| rng.random_range(-3..=3)).collect();
        let reach: i64 = rng.random_range(0..=2 * size);
        let limit = a.iter().zip(&centre).map(|(x, y)| x * y).sum::<i64>() + reach;
        points.retain(|p| a.iter().zip(p).map(|(x, y)| x * y).sum::<i64>() <= limit);
    }
    points
}

/// Exact depth of z in S (z one of S's points): |S| minus the largest trace of an open
/// halfspace on S that does not contain z.
fn exact_depth(traces: &[u128], size: usize, z: usize) -> usize {
    let best = traces
        .iter()
        .filter(|t| *t >> z & 1 == 0)
        .map(|t| t.count_ones() as usize)
        .max()
        .unwrap_or(0);
    size - best
}

fn spans(points: &[Vec<i64>]) -> bool {
    // Affine rank = n, checked through the traces' own requirement: some n + 1 points
    // with a nonzero determinant.
    let n = points[0].len();
    let m = points.len();
    let diff =
        |i: usize, j: usize| -> Vec<i64> { (0..n).map(|c| points[j][c] - points[i][c]).collect() };
    match n {
        1 => m >= 2,
        2 => (1..m).any(|j| {
            (j + 1..m).any(|k| {
                let (u, v) = (diff(0, j), diff(0, k));
                u[0] * v[1] - u[1] * v[0] != 0
            })
        }),
        _ => (1..m).any(|j| {
            (j + 1..m).any(|k| {
                (k + 1..m).any(|l| {
                    let (u, v, w) = (diff(0, j), diff(0, k), diff(0, l));
                    let c = [
                        u[1] * v[2] - u[2] * v[1],
                        u[2] * v[0] - u[0] * v[2],
                        u[0] * v[1] - u[1] * v[0],
                    ];
                    c[0] * w[0] + c[1] * w[1] + c[2] * w[2] != 0
                })
            })
        }),
    }
}

#[test]
fn integer_centerpoint_depth_matches_oertel_wagner_weismantel() {
    // Oertel, Wagner & Weismantel, "Integer convex minimization by mixed integer linear
    // optimization", Oper. Res. Lett. 42 (2014): for S = K cap Z^n with K convex, some
    // point of S has depth at least |S| / 2^n. Depth here is exact (halfspace traces).
    let mut rng = ChaCha8Rng::seed_from_u64(2014);
    for (n, size, games, most) in [(2usize, 6i64, 40, 80), (3, 3, 12, 40)] {
        let mut tried = 0;
        while tried < games {
            let points = polytope_points(&mut rng, n, size);
            if points.len() < n + 1 || points.len() > most || !spans(&points) {
                continue;
            }
            tried += 1;
            let traces = halfspace_traces(&points);
            let need = points.len().div_ceil(1 << n);
            let deepest = (0..points.len())
                .map(|z| exact_depth(&traces, points.len(), z))
                .max()
                .unwrap();
            assert!(
                deepest >= need,
                "n = {n}, |S| = {}: depth {deepest} < {need}",
                points.len()
            );
            if n == 2 {
                // The adversary's angular sweep is exact: it matches the traces.
                for (z, p) in points.iter().enumerate() {
                    let x: Vec<f64> = p.iter().map(|v| *v as f64).collect();
                    let kept = best_split(&points, &x).kept;
                    assert_eq!(points.len() - kept, exact_depth(&traces, points.len(), z));
                }
            }
        }
    }
    // n = 1: the exact depth of the best point of an interval of m integers is
    // ceil(m / 2) (common practice: a median).
    for m in 1..=12i64 {
        let points: Vec<Vec<i64>> = (0..m).map(|v| vec![v]).collect();
        let deepest = (0..m)
            .map(|z| m as usize - best_split(&points, &[z as f64]).kept)
            .max()
            .unwrap();
        assert_eq!(deepest, (m as usize).div_ceil(2), "m = {m}");
    }
}

#[test]
fn exact_sign_sees_below_rounding() {
    // 1e16 + 1 - 1e16 would be 0 in floating point; the exact side is +1.
    assert_eq!(
        side(&[1.0, 1.0], &[1, 0], &[-1e16, 1e16]),
        std::cmp::Ordering::Greater
    );
}

// ---------------------------------------------------------------------------------
// Tampered mixed-integer transcripts.

fn scripted(class: &LatticeClass, queries: &[Vec<f64>]) -> Vec<Record> {
    let mut adversary = MixedCorner::new(class).unwrap();
    let mut records = vec![Record::Header(Header {
        format: FORMAT_VERSION,
        tool: "tests/lattice.rs".into(),
        class: Class::Lattice(class.clone()),
        adversary: "mixed-corner".into(),
        method: "script".into(),
        seed: 0,
        budget: queries.len() as u64,
    })];
    for (i, q) in queries.iter().enumerate() {
        let answer = adversary.answer(q);
        records.push(Record::Query(QueryRecord {
            index: i as u64 + 1,
            point: q.clone(),
            answer,
        }));
    }
    records.push(Record::Final(FinalRecord {
        queries_used: queries.len() as u64,
        ending: Ending::BudgetExhausted,
        certificate: adversary.witnesses(),
        demonstration: None,
    }));
    records
}

fn rejected_at(records: &[Record], line: u64) -> String {
    match verify_records(records) {
        Err(Error::Transcript { line: got, reason }) => {
            assert_eq!(got, line, "wrong line: {reason}");
            reason
        }
        other => panic!("expected a rejection at line {line}: {other:?}"),
    }
}

#[test]
fn verifier_rejects_tampered_mixed_transcripts() {
    // n = 1, d = 1, R = 1, rho = 1/16. Lines: 1 header, 2.. queries, last the final record.
    let class = LatticeClass::mixed(1, 0, 1, 1, 1.0, 1.0 / 16.0).unwrap();

    // (a) A cut that slices the witness's fibre ball: query (0, 0) halves fibre 0 to
    // [-1, 0], whose ball has centre -1/2; replace the answer by {y < -1/2 + 1/32}, which
    // still excludes the query but cuts into B(-1/2, 1/16).
    let records = scripted(&class, &[vec![0.0, 0.0], vec![1.0, 0.0]]);
    verify_records(&records).expect("the original is valid");
    let mut tampered = records.clone();
    let Record::Query(q) = &mut tampered[1] else {
        unreachable!()
    };
    q.answer = Answer::Cut(Cut {
        normal: Normal::axis(1, true),
        offset: naysayer::exact::Exact::Float(-0.5 + 1.0 / 32.0),
    });
    let reason = rejected_at(&tampered, 2);
    assert!(reason.contains("fibre ball"), "{reason}");

    // (b) A declared-inside point outside a cut: the cut at (0, 0) keeps
    // y < 8 ||x - 0||_1 near vertex 0 (M = 8 > 4R); move the declared point (and its copy
    // in the witnesses) to (0.01, 0.9), which that cut excludes.
    let records = scripted(&class, &[vec![0.0, 0.0], vec![0.5, 0.3]]);
    verify_records(&records).expect("the original is valid");
    let moved = vec![0.01, 0.9];
    let mut tampered = records.clone();
    let Record::Query(q) = &mut tampered[2] else {
        unreachable!()
    };
    assert_eq!(q.answer, Answer::Inside);
    q.point = moved.clone();
    let Record::Final(f) = &mut tampered[3] else {
        unreachable!()
    };
    for w in &mut f.certificate.as_mut().unwrap().instances {
        if let naysayer::instance::Witness::LatticeHull(h) = w {
            h.points = vec![moved.clone()];
        }
    }
    let reason = rejected_at(&tampered, 2);
    assert!(reason.contains("generating point"), "{reason}");

    // (c) A witness holding an extra mixed-integer point: add (1, 0) as a generating
    // point of the hull with the fibre ball.
    let mut tampered = records.clone();
    let Record::Final(f) = &mut tampered[3] else {
        unreachable!()
    };
    if let naysayer::instance::Witness::LatticeHull(h) =
        &mut f.certificate.as_mut().unwrap().instances[1]
    {
        h.points.push(vec![1.0, 0.0]);
    }
    let reason = rejected_at(&tampered, 4);
    assert!(reason.contains("mixed-integer point"), "{reason}");

    // (c') A generating point whose integer part leaves the unit cube lets the hull reach
    // other lattice points; the extreme-point argument no longer applies. (Integer box
    // {0..2} so that the point (1.5, 0) lies in the box.)
    let wide = LatticeClass::mixed(1, 0, 2, 1, 1.0, 1.0 / 16.0).unwrap();
    let records = scripted(&wide, &[vec![0.0, 0.0], vec![0.5, 0.3]]);
    verify_records(&records).expect("the original is valid");
    let mut tampered = records.clone();
    let Record::Final(f) = &mut tampered[3] else {
        unreachable!()
    };
    if let naysayer::instance::Witness::LatticeHull(h) =
        &mut f.certificate.as_mut().unwrap().instances[1]
    {
        h.points.push(vec![1.5, 0.0]);
    }
    let reason = rejected_at(&tampered, 4);
    assert!(reason.contains("unit cube"), "{reason}");
}

#[test]
fn mixed_corner_keeps_declared_points_near_a_vertex() {
    // Declared points very close to vertex 0 force a huge M; the cuts stay exact and the
    // verifier accepts them.
    let class = LatticeClass::mixed(2, 0, 1, 2, 1.0, 1e-3).unwrap();
    let tiny = f64::from_bits(1);
    let queries = vec![
        vec![tiny, 0.0, 0.9, 0.9],
        vec![1e-300, 1e-300, -0.9, 0.9],
        vec![0.0, 0.0, 0.0, 0.0],
        vec![0.0, 0.0, -0.5, 0.0],
        vec![tiny, 0.0, 0.95, 0.95],
        vec![0.0, 0.0, 0.5, 0.5],
    ];
    let records = scripted(&class, &queries);
    verify_records(&records).expect("exact lifted cuts are valid");
}
