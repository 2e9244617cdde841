//! Criterion benchmarks for the core game (issue targets in comments; figures measured
//! on the project's 2-core machine go in DEVELOPERS.md).

use std::path::Path;

use criterion::{black_box, criterion_group, criterion_main, BatchSize, Criterion, Throughput};
use naysayer::adversary::{Adversary, Halving};
use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::game::{self, GameSettings, Observer};
use naysayer::method::ellipsoid::Ellipsoid;
use naysayer::method::midpoint::Midpoint;
use naysayer::method::Method;
use naysayer::oracle::Step;
use naysayer::transcript::Header;
use naysayer::transcript::{Flush, TranscriptWriter, FORMAT_VERSION};

fn header(class: &FeasibilityClass, method: &str) -> Header {
    Header {
        format: FORMAT_VERSION,
        tool: "bench".into(),
        class: Class::Feasibility(class.clone()),
        adversary: "halving".into(),
        method: method.into(),
        seed: 0,
        budget: u64::MAX,
    }
}

/// Target: midpoint against halving, d = 10, R/rho = 1e6, no transcript: >= 5e6 queries/s.
fn midpoint_game(c: &mut Criterion) {
    let class = FeasibilityClass::new(10, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
    let header = header(&class, "midpoint");
    let queries = 10 * u64::from(class.halvings()) + 1;
    let mut group = c.benchmark_group("midpoint_vs_halving_d10");
    group.throughput(Throughput::Elements(queries));
    group.bench_function("full game", |b| {
        b.iter(|| {
            let mut method = Midpoint::new(&class);
            let mut adversary = Halving::new(&class);
            let record = game::play(
                &header,
                &mut method,
                &mut adversary,
                &GameSettings { budget: u64::MAX },
                &mut [],
            )
            .unwrap();
            assert_eq!(record.queries_used, queries);
            black_box(record)
        })
    });
    group.finish();
}

/// The same game with a progress report watching its queries (`naysayer play` does;
/// sweeps do not): the game loop then stores its query count once a query
/// (`naysayer::progress`). Target: within noise of the unwatched game.
fn midpoint_game_watched(c: &mut Criterion) {
    let class = FeasibilityClass::new(10, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
    let header = header(&class, "midpoint");
    let queries = 10 * u64::from(class.halvings()) + 1;
    let mut group = c.benchmark_group("midpoint_vs_halving_d10_watched");
    group.throughput(Throughput::Elements(queries));
    naysayer::progress::QUERIES.watch(true);
    group.bench_function("full game", |b| {
        b.iter(|| {
            let mut method = Midpoint::new(&class);
            let mut adversary = Halving::new(&class);
            let record = game::play(
                &header,
                &mut method,
                &mut adversary,
                &GameSettings { budget: u64::MAX },
                &mut [],
            )
            .unwrap();
            assert_eq!(naysayer::progress::QUERIES.done(), queries);
            black_box(record)
        })
    });
    naysayer::progress::QUERIES.watch(false);
    group.finish();
}

/// Target: ellipsoid against halving, d = 100: <= 5 microseconds per query.
fn ellipsoid_step(c: &mut Criterion) {
    let class = FeasibilityClass::new(100, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
    let steps = 1000;
    let mut group = c.benchmark_group("ellipsoid_vs_halving_d100");
    group.throughput(Throughput::Elements(steps));
    group.bench_function("1000 queries", |b| {
        b.iter_batched(
            || (Ellipsoid::new(&class), Halving::new(&class), vec![0.0; 100]),
            |(mut method, mut adversary, mut query)| {
                for _ in 0..steps {
                    let step = method.next(&mut query).unwrap();
                    debug_assert_eq!(step, Step::Query);
                    let answer = adversary.answer(&query);
                    method.observe(&query, &answer).unwrap();
                }
                black_box(method.log_volume())
            },
            BatchSize::LargeInput,
        )
    });
    group.finish();
}

/// Target: transcript writing of an in-process game, d = 10: >= 500 000 records/s.
fn transcript_writing(c: &mut Criterion) {
    let class = FeasibilityClass::new(10, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
    let header = header(&class, "ellipsoid");
    // Record a realistic stream of queries and answers first.
    let mut method = Ellipsoid::new(&class);
    let mut adversary = Halving::new(&class);
    let mut query = vec![0.0; 10];
    let mut exchanges = Vec::new();
    while exchanges.len() < 10_000 {
        match method.next(&mut query).unwrap() {
            Step::Query => {
                let answer = adversary.answer(&query);
                method.observe(&query, &answer).unwrap();
                exchanges.push((query.clone(), answer));
            }
            Step::Output(_) => break,
        }
    }
    let dir = std::env::temp_dir().join(format!("naysayer-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("transcript.jsonl");
    let mut group = c.benchmark_group("transcript_write_d10");
    group.throughput(Throughput::Elements(exchanges.len() as u64));
    group.bench_function("records to file", |b| {
        b.iter(|| {
            let mut writer = TranscriptWriter::create(Path::new(&path), Flush::Periodic).unwrap();
            writer.on_start(&header).unwrap();
            for (i, (q, a)) in exchanges.iter().enumerate() {
                writer.on_query(i as u64 + 1, q, a, &adversary).unwrap();
            }
            writer.flush().unwrap();
        })
    });
    group.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(
    benches,
    midpoint_game,
    midpoint_game_watched,
    ellipsoid_step,
    transcript_writing
);
criterion_main!(benches);
