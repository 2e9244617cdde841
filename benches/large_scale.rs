//! Criterion benchmarks of the large-scale regime (issue 9, docs/theory.md §3).
//!
//! - `rotation_answer_d100000_t1000`: one answer of the nonsmooth adaptive-rotation
//!   adversary at d = 100 000 after 1000 queries of the subgradient stream (every answer
//!   reveals a direction, the most expensive path: the basis then holds 1000 revealed
//!   directions). Measured beside it, on the same state, `rotation_floor_...`: the
//!   unavoidable work of an answer, the inner products of the query with every revealed
//!   direction plus one Gram-Schmidt orthogonalisation of a vector against the basis.
//!   Target: answer within 3 times the floor; memory O(T d) (the basis, printed).
//! - `chain_answer_d1000000`: one answer of the smooth chain oracle (Nesterov 2004,
//!   Thm 2.1.7) at d = 10^6, a tridiagonal product. Target: at most 2 ms.
//!
//! Setting up the rotation state plays 1000 answers at d = 10^5 once (about a minute);
//! each measured iteration answers on a fresh copy of that state (800 MB).

use std::cell::OnceCell;

use criterion::{black_box, criterion_group, criterion_main, BatchSize, Criterion};
use naysayer::adversary::rotation::Rotation;
use naysayer::geometry::basis::{axpy, dot};
use naysayer::instance::large_scale::{Function, SmoothChain};

const DIM: usize = 100_000;
const QUERIES: usize = 1000;

/// The rotation adversary after `QUERIES` answers to the subgradient method with step
/// R/(M sqrt(T)), and the next query that method would ask.
fn rotation_state() -> (Rotation, Vec<f64>) {
    let (m, r) = (1.0, 1.0);
    let mut adversary = Rotation::new(DIM, m, r, QUERIES + 1, QUERIES + 1).unwrap();
    adversary.reserve();
    let step = r / (m * ((QUERIES + 1) as f64).sqrt());
    let mut x = vec![0.0; DIM];
    let mut g = vec![0.0; DIM];
    for _ in 0..QUERIES {
        adversary.respond(&x, &mut g).unwrap();
        axpy(-step, &g, &mut x);
    }
    (adversary, x)
}

fn rotation(c: &mut Criterion) {
    // Built on first use, so that a filtered run (`-- chain`) skips the one-minute setup.
    let state: OnceCell<(Rotation, Vec<f64>)> = OnceCell::new();
    let setup = || {
        let (adversary, query) = rotation_state();
        let basis = adversary.basis();
        eprintln!(
            "rotation state: {} revealed directions, basis of {} vectors = {:.0} MB (O(T d))",
            adversary.revealed(),
            basis.len(),
            (basis.len() * DIM * 8) as f64 / 1e6
        );
        (adversary, query)
    };
    let mut group = c.benchmark_group("large_scale");
    group.sample_size(10);
    group.bench_function("rotation_floor_d100000_t1000", |b| {
        let (adversary, query) = state.get_or_init(setup);
        let basis = adversary.basis();
        let probe: Vec<f64> = (0..DIM)
            .map(|i| ((i * 7919) % 1000) as f64 - 499.5)
            .collect();
        b.iter(|| {
            // Inner products with every revealed direction.
            let mut s = 0.0;
            for i in 0..adversary.revealed() {
                s += dot(adversary.direction(i), query);
            }
            // One classical Gram-Schmidt orthogonalisation against the whole basis.
            let mut v = probe.clone();
            let coefficients: Vec<f64> =
                (0..basis.len()).map(|i| dot(basis.vector(i), &v)).collect();
            for (i, c) in coefficients.iter().enumerate() {
                axpy(-c, basis.vector(i), &mut v);
            }
            black_box((s, v))
        })
    });
    group.bench_function("rotation_answer_d100000_t1000", |b| {
        let (adversary, query) = state.get_or_init(setup);
        let mut g = vec![0.0; DIM];
        b.iter_batched_ref(
            || adversary.clone(),
            |fresh| black_box(fresh.respond(query, &mut g).unwrap()),
            BatchSize::PerIteration,
        )
    });
    group.finish();
}

fn chain(c: &mut Criterion) {
    let d = 1_000_000;
    let chain = SmoothChain::new(d, 1.0, 1.0, (d - 1) / 2).unwrap();
    let x: Vec<f64> = (0..d).map(|i| ((i * 31) % 97) as f64 / 97.0).collect();
    let mut g = vec![0.0; d];
    let mut group = c.benchmark_group("large_scale");
    group.bench_function("chain_answer_d1000000", |b| {
        b.iter(|| black_box(chain.evaluate(&x, &mut g)))
    });
    group.finish();
}

criterion_group!(benches, chain, rotation);
criterion_main!(benches);
