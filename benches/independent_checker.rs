//! Criterion benchmark of the independent Python checker (issue 8).
//!
//! Target: `tools/check_certificate.py` verifies a 10 000-query separation transcript in
//! d = 10 in under 30 seconds. The transcript: midpoint against the halving adversary
//! with rho = 1e-301, so that the method never stops and all 10 000 answers lie in the
//! certified prefix (every answer checked against both witnesses). Skipped with a notice
//! when python3 is absent.

use std::path::Path;
use std::process::Command;

use criterion::{criterion_group, criterion_main, Criterion};
use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::runner::{self, GameSpec};

const CHECKER: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tools/check_certificate.py");

fn check(path: &Path) {
    let out = Command::new("python3")
        .arg(CHECKER)
        .arg(path)
        .output()
        .expect("python3 runs");
    assert!(out.status.success(), "{out:?}");
}

fn python_checker(c: &mut Criterion) {
    if Command::new("python3").arg("--version").output().is_err() {
        eprintln!("SKIPPED: python3 is not installed");
        return;
    }
    let dir = tempfile::TempDir::new().unwrap();
    let path = dir.path().join("ten-thousand.jsonl");
    let spec = GameSpec {
        class: Class::Feasibility(
            FeasibilityClass::new(10, 1.0, 1e-301, Promise::MayBeEmpty).unwrap(),
        ),
        adversary: "halving".into(),
        method: "midpoint".into(),
        seed: 0,
        budget: 10_000,
        transcript: Some(path.clone()),
    };
    let report = runner::run(&spec).unwrap();
    assert_eq!(
        report.verdict.unwrap().certified_prefix,
        Some(10_000),
        "every answer certified"
    );
    let mut group = c.benchmark_group("independent_checker");
    group.sample_size(10);
    group.bench_function("python, 10 000 queries, d = 10", |b| {
        b.iter(|| check(&path))
    });
    group.finish();
}

criterion_group!(benches, python_checker);
criterion_main!(benches);
