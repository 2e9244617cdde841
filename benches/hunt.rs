//! Criterion benchmarks for the targeted adversary search (issue 7). Targets:
//! - replay overhead: driving an in-process method through a 1000-answer prefix costs at
//!   most 2 times playing those 1000 queries live (both with an in-memory transcript, as
//!   `play` keeps one);
//! - a hunt on analytic-center, d = 3, R/rho = 1000, 10 000 replays, within 5 minutes on
//!   2 cores (benched here at 500 replays to track the cost per replay; the full run is
//!   measured with the CLI and reported in DEVELOPERS.md / the issue note).

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use naysayer::adversary::Halving;
use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::game::{self, GameSettings};
use naysayer::hunt::replay::replay_answers;
use naysayer::hunt::{hunt_builtin, HuntSettings};
use naysayer::method::ellipsoid::Ellipsoid;
use naysayer::method::midpoint::Midpoint;
use naysayer::method::Method;
use naysayer::transcript::Header;
use naysayer::transcript::{MemoryTranscript, Record, FORMAT_VERSION};

fn header(class: &FeasibilityClass, method: &str) -> Header {
    Header {
        format: FORMAT_VERSION,
        tool: "bench".into(),
        class: Class::Feasibility(class.clone()),
        adversary: "halving".into(),
        method: method.into(),
        seed: 0,
        budget: 1000,
    }
}

fn live(header: &Header, class: &FeasibilityClass, method: &mut dyn Method) -> Vec<Record> {
    let mut memory = MemoryTranscript::default();
    let record = game::play(
        header,
        method,
        &mut Halving::new(class),
        &GameSettings { budget: 1000 },
        &mut [&mut memory],
    )
    .unwrap();
    assert_eq!(record.queries_used, 1000);
    memory.records
}

/// Builds a method for a class.
type MakeMethod = fn(&FeasibilityClass) -> Box<dyn Method>;

/// Live play of 1000 queries against halving versus replaying the 1000 recorded answers.
fn replay_overhead(c: &mut Criterion) {
    // Midpoint: d = 60, R/rho = 1e6 needs 60 * 19 + 1 > 1000 queries; the budget stops
    // it at 1000. Ellipsoid: d = 20, far more than 1000 queries needed.
    let cases: [(&str, usize, MakeMethod); 2] = [
        ("midpoint", 60, |c| Box::new(Midpoint::new(c))),
        ("ellipsoid", 20, |c| Box::new(Ellipsoid::new(c))),
    ];
    for (name, d, make) in cases {
        let class = FeasibilityClass::new(d, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
        let header = header(&class, name);
        let records = live(&header, &class, make(&class).as_mut());
        let mut group = c.benchmark_group(format!("replay_overhead_{name}_d{d}_1000"));
        group.bench_function("live", |b| {
            b.iter(|| black_box(live(&header, &class, make(&class).as_mut())))
        });
        group.bench_function("replay", |b| {
            b.iter(|| {
                let report = replay_answers(make(&class).as_mut(), &records).unwrap();
                assert!(report.reproduced());
                black_box(report)
            })
        });
        group.finish();
    }
}

/// A short hunt on analytic-center, d = 3, R/rho = 1000 (cost per replay).
fn hunt_analytic_center(c: &mut Criterion) {
    let class = FeasibilityClass::new(3, 1.0, 1e-3, Promise::MayBeEmpty).unwrap();
    let settings = HuntSettings {
        replays: 500,
        ..HuntSettings::default()
    };
    let mut group = c.benchmark_group("hunt_analytic_center_d3_1000");
    group.sample_size(10);
    group.bench_function("500 replays", |b| {
        b.iter(|| {
            let report =
                hunt_builtin("analytic-center", &class, 0, &settings, &mut |_| {}, None).unwrap();
            assert!(report.verdict.is_ok());
            black_box(report.worst.queries_used)
        })
    });
    group.finish();
}

criterion_group!(benches, replay_overhead, hunt_analytic_center);
criterion_main!(benches);
