//! Criterion benchmarks of the exact verifier (figures measured on the project's 2-core
//! machine go in DEVELOPERS.md).
//!
//! Targets:
//! - `play_vs_game`: `play` end to end (game plus verification, no transcript file;
//!   `runner::run`) within 2x of the game alone (`game::play` with no observer), for
//!   `midpoint` against `halving` at d = 10, 100, 1000 (R = 1, rho = 1e-15, so
//!   d * 49 + 1 queries, all certified; below about 1e-16 midpoint cannot bisect the
//!   box corner in f64 and never stops);
//! - `verify_records`: the verifier alone over the same games held in memory: its cost
//!   per answer is the cut's nonzeros plus the witnesses it touches (O(1) for these axis
//!   cuts), so it should not grow with d beyond copying the records;
//! - `check_first_order`: `naysayer check` (verifier and first-order audit) on a
//!   20 000-query `subgradient-decaying` transcript against `orthant` (d = 2): < 10 s.

use std::path::PathBuf;
use std::process::Command;

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use naysayer::adversary::Halving;
use naysayer::certificate::verify_records;
use naysayer::class::{Class, FeasibilityClass, FirstOrderClass, LipschitzNorm, Promise};
use naysayer::game::{self, GameSettings};
use naysayer::method::midpoint::Midpoint;
use naysayer::runner::{self, GameSpec};
use naysayer::transcript::{Header, MemoryTranscript, FORMAT_VERSION};

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

fn class(d: usize) -> FeasibilityClass {
    FeasibilityClass::new(d, 1.0, 1e-15, Promise::MayBeEmpty).unwrap()
}

fn header(class: &FeasibilityClass) -> Header {
    Header {
        format: FORMAT_VERSION,
        tool: "bench".into(),
        class: Class::Feasibility(class.clone()),
        adversary: "halving".into(),
        method: "midpoint".into(),
        seed: 0,
        budget: u64::MAX,
    }
}

fn play_vs_game(c: &mut Criterion) {
    for d in [10usize, 100, 1000] {
        let class = class(d);
        let header = header(&class);
        let queries = d as u64 * u64::from(class.halvings()) + 1;
        let mut group = c.benchmark_group(format!("play_vs_game_d{d}"));
        group.throughput(Throughput::Elements(queries));
        if d == 1000 {
            group.sample_size(10);
        }
        group.bench_function("game alone", |b| {
            b.iter(|| {
                let record = game::play(
                    &header,
                    &mut Midpoint::new(&class),
                    &mut Halving::new(&class),
                    &GameSettings { budget: u64::MAX },
                    &mut [],
                )
                .unwrap();
                assert_eq!(record.queries_used, queries);
                black_box(record)
            })
        });
        let spec = GameSpec {
            class: Class::Feasibility(class.clone()),
            adversary: "halving".into(),
            method: "midpoint".into(),
            seed: 0,
            budget: u64::MAX,
            transcript: None,
        };
        group.bench_function("play (game + verification)", |b| {
            b.iter(|| {
                let report = runner::run(&spec).unwrap();
                let verdict = report.verdict.unwrap();
                assert_eq!(verdict.certified_lower_bound(), Some(queries));
                black_box(verdict)
            })
        });
        group.finish();
    }
}

fn verify_in_memory(c: &mut Criterion) {
    for d in [10usize, 100, 1000] {
        let class = class(d);
        let header = header(&class);
        let mut memory = MemoryTranscript::default();
        game::play(
            &header,
            &mut Midpoint::new(&class),
            &mut Halving::new(&class),
            &GameSettings { budget: u64::MAX },
            &mut [&mut memory],
        )
        .unwrap();
        let queries = memory.records.len() as u64 - 2;
        let mut group = c.benchmark_group(format!("verify_records_d{d}"));
        group.throughput(Throughput::Elements(queries));
        group.bench_function("verify", |b| {
            b.iter(|| black_box(verify_records(&memory.records).unwrap()))
        });
        group.finish();
    }
}

fn check_first_order(c: &mut Criterion) {
    let dir = tempfile::TempDir::new().unwrap();
    let path: PathBuf = dir.path().join("subgradient-decaying-20000.jsonl");
    let spec = GameSpec {
        class: Class::FirstOrder(
            FirstOrderClass::new(2, 1.0, 1e-12, 1.0, LipschitzNorm::L2).unwrap(),
        ),
        adversary: "orthant".into(),
        method: "subgradient-decaying".into(),
        seed: 0,
        budget: 20_000,
        transcript: Some(path.clone()),
    };
    let report = runner::run(&spec).unwrap();
    assert_eq!(report.verdict.unwrap().queries_used, 20_000);
    let mut group = c.benchmark_group("check_first_order");
    group.sample_size(10);
    group.bench_function("naysayer check, 20 000 queries, d = 2", |b| {
        b.iter(|| {
            let out = Command::new(BIN).arg("check").arg(&path).output().unwrap();
            assert!(out.status.success(), "{out:?}");
        })
    });
    group.finish();
}

criterion_group!(benches, play_vs_game, verify_in_memory, check_first_order);
criterion_main!(benches);
