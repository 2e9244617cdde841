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
//!   20 000-query `subgradient-decaying` transcript against `orthant` (d = 2): < 10 s;
//! - `piece_set`: the first-order witness check "max_p p(x) <= v" for the shape of the
//!   slab-funnel witnesses (a few hundred pieces with one nonzero slope entry each,
//!   d = 10), over 5000 points: the per-coordinate envelopes against evaluating every
//!   piece (both exact).

use std::path::PathBuf;
use std::process::Command;

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use naysayer::adversary::Halving;
use naysayer::certificate::filter::Interval;
use naysayer::certificate::pieces::{FilteredPiece, PieceSet};
use naysayer::certificate::verify_records;
use naysayer::class::{Class, FeasibilityClass, FirstOrderClass, LipschitzNorm, Promise};
use naysayer::exact::Exact;
use naysayer::game::{self, GameSettings};
use naysayer::instance::AffinePiece;
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

/// 300 pieces a (y_i - m) + b, i = k mod 10, with dyadic slopes and exact intercepts
/// (as the funnel levels have), and 5000 points.
fn piece_set(c: &mut Criterion) {
    let d = 10;
    let pieces: Vec<AffinePiece> = (0..300)
        .map(|k| {
            let mut slope = vec![Exact::ZERO; d];
            let level = (k / 20) as i32;
            let a = 0.5f64.powi(level) * if k % 2 == 0 { 1.0 } else { -1.0 };
            slope[k % d] = Exact::Float(a);
            let intercept = Exact::from_rational(num_rational::BigRational::new(
                (k as i64 - 150).into(),
                7.into(),
            ));
            AffinePiece { slope, intercept }
        })
        .collect();
    let points: Vec<Vec<f64>> = (0..5000)
        .map(|t| {
            (0..d)
                .map(|i| ((t * 7919 + i * 104_729) % 2001) as f64 / 1000.0 - 1.0)
                .collect()
        })
        .collect();
    let value = Exact::Float(1e6);
    let value_iv = Interval::of_exact(&value);
    let set = PieceSet::new(pieces.clone());
    let filtered: Vec<FilteredPiece> = pieces.into_iter().map(FilteredPiece::new).collect();
    let mut group = c.benchmark_group("piece_set_300_pieces_d10");
    group.throughput(Throughput::Elements(points.len() as u64));
    group.bench_function("envelopes", |b| {
        b.iter(|| {
            points
                .iter()
                .filter(|x| set.exceeding(x, &value, value_iv).is_some())
                .count()
        })
    });
    group.bench_function("every piece", |b| {
        b.iter(|| {
            points
                .iter()
                .filter(|x| {
                    filtered
                        .iter()
                        .any(|p| p.cmp_with(x, &value, value_iv) == std::cmp::Ordering::Greater)
                })
                .count()
        })
    });
    group.finish();
}

criterion_group!(
    benches,
    play_vs_game,
    verify_in_memory,
    check_first_order,
    piece_set
);
criterion_main!(benches);
