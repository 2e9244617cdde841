//! Criterion benchmarks for the lattice classes (issue 6 targets in comments).

use std::time::{Duration, Instant};

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use naysayer::adversary::lattice_half::LatticeHalf;
use naysayer::adversary::mixed_corner::MixedCorner;
use naysayer::adversary::Adversary;
use naysayer::class::LatticeClass;
use naysayer::method::fibre_bisection::FibreBisection;
use naysayer::method::Method;
use naysayer::minimax::{Minimax, QuerySet};
use naysayer::oracle::Step;

/// One full game of fibre-bisection against mixed-corner; returns per-answer times.
fn mixed_game(class: &LatticeClass) -> Vec<Duration> {
    let mut method = FibreBisection::new(class).unwrap();
    let mut adversary = MixedCorner::new(class).unwrap();
    let mut query = vec![0.0; class.query_dim()];
    let mut times = Vec::new();
    while let Ok(Step::Query) = method.next(&mut query) {
        let start = Instant::now();
        let answer = adversary.answer(&query);
        times.push(start.elapsed());
        method.observe(&query, &answer).unwrap();
    }
    times
}

/// Target: mixed-corner, n = 6, d = 10, full game: mean answer under 20 microseconds;
/// the largest single answer is printed too.
fn mixed_corner_answers(c: &mut Criterion) {
    let class = LatticeClass::mixed(6, 0, 1, 10, 1.0, 1e-3).unwrap();
    let times = mixed_game(&class);
    let total: Duration = times.iter().sum();
    let largest = times.iter().max().copied().unwrap_or_default();
    eprintln!(
        "mixed-corner n = 6, d = 10: {} answers, mean {:?}, largest {:?}",
        times.len(),
        total / times.len() as u32,
        largest
    );
    let mut group = c.benchmark_group("mixed_corner_n6_d10");
    group.bench_function("answer (mean over a full game)", |b| {
        b.iter_custom(|iters| {
            let mut sum = Duration::ZERO;
            let mut count = 0u64;
            while count < iters {
                for t in mixed_game(&class) {
                    if count < iters {
                        sum += t;
                        count += 1;
                    }
                }
            }
            sum
        })
    });
    group.finish();
}

/// Target: lattice-half exact split search, |S| = 200 in n = 2: at most 1 ms per answer.
fn lattice_half_answer(c: &mut Criterion) {
    // 200 lattice points: {0..19} x {0..9}.
    let points: Vec<Vec<i64>> = (0..20)
        .flat_map(|a| (0..10).map(move |b| vec![a, b]))
        .collect();
    assert_eq!(points.len(), 200);
    let mut group = c.benchmark_group("lattice_half_n2_s200");
    group.bench_function("answer", |b| {
        b.iter(|| {
            let mut adversary = LatticeHalf::from_points(points.clone(), 0.5);
            black_box(adversary.answer(&[7.25, 4.5]))
        })
    });
    group.finish();
}

/// minimax on {0,1}^2 and {0..3}^2 with half-integer queries (target: {0..3}^2 under 60 s
/// on one core; run with `cargo bench --bench lattice -- minimax`).
fn minimax_small(c: &mut Criterion) {
    let class = LatticeClass::integer(2, 0, 1).unwrap();
    let mut group = c.benchmark_group("minimax");
    group.sample_size(10);
    group.bench_function("{0,1}^2 half-integer Q", |b| {
        b.iter(|| {
            let mut search = Minimax::new(&class, QuerySet::HalfInteger).unwrap();
            black_box(search.solve().value)
        })
    });
    let square = LatticeClass::integer(2, 0, 3).unwrap();
    group.bench_function("{0..3}^2 half-integer Q", |b| {
        b.iter(|| {
            let mut search = Minimax::new(&square, QuerySet::HalfInteger).unwrap();
            black_box(search.solve().value)
        })
    });
    group.finish();
}

criterion_group!(
    benches,
    mixed_corner_answers,
    lattice_half_answer,
    minimax_small
);
criterion_main!(benches);
