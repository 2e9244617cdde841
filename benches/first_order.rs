//! Criterion benchmarks for first-order games (issue 5 targets in comments; figures
//! measured on the project's 2-core machine go in DEVELOPERS.md).
//!
//! - `orthant_answer_d100`: one answer of the orthant adversary (docs/theory.md §2.3) at
//!   d = 100 with 20 levels open, exact arithmetic included. Target: <= 20 microseconds.
//! - `slab_funnel_answer_d100_20_levels`: one answer of the slab-funnel adversary
//!   (docs/theory.md §2.4) at d = 100 with 20 levels open, exact value included: points of
//!   the box (outside the current level box: every revealed piece is scanned), points
//!   near the current centre (inside it: O(d)), and the centre itself (an exact tie).
//!   Target: <= 20 microseconds.
//! - `certificate_t1000_d10`: the universal certificate search (docs/theory.md §2.2, longest
//!   certified prefix by binary search with constraint generation) plus the exact
//!   verification of the resulting transcript, T = 1000 queries of `subgradient`
//!   against `orthant` in d = 10. Target: under 10 seconds.

use std::time::Instant;

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use naysayer::adversary::orthant::{Orthant, OrthantSettings};
use naysayer::adversary::slab_funnel::{FunnelSettings, SlabFunnel};
use naysayer::adversary::Adversary;
use naysayer::certificate::universal::{self, Exchange};
use naysayer::certificate::verify_records;
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::oracle::{Answer, Step};
use naysayer::transcript::{Ending, FinalRecord, Header};
use naysayer::transcript::{QueryRecord, Record, FORMAT_VERSION};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// The query m - 2^-40 e_i next to the current level's centre m: it reveals s_i = +1
/// (the unfixed term |m_i - y_i| wins, every other coordinate sitting at the centre).
/// With every sign +1 the older levels stay below the current one near its centre
/// (docs/theory.md §2.3 with beta = gamma = 0, theta = 1/4: the level-j term there is at most
/// c_j - lambda_j h_j / 2, below c_k >= c_j - (2/7) lambda_j h_j).
fn reveal(centre: &[f64], i: usize) -> Vec<f64> {
    let mut y = centre.to_vec();
    y[i] -= 2f64.powi(-40);
    y
}

/// An orthant adversary driven until `levels` levels are open (the last one with half
/// its signs fixed), and the centre of its current level.
fn orthant_with_levels(class: &FirstOrderClass, levels: usize) -> (Orthant, Vec<f64>) {
    let d = class.dim;
    let mut adversary = Orthant::new(class, OrthantSettings::default()).unwrap();
    // The current level's centre: m' = m + s h / 2 with s = +1, h' = h / 2.
    let mut centre = vec![0.0; d];
    let mut h = class.half_width;
    while adversary.levels() < levels {
        let opened = adversary.levels();
        for i in 0..d {
            adversary.answer(&reveal(&centre, i));
        }
        assert_eq!(adversary.levels(), opened + 1, "each round opens a level");
        for m in &mut centre {
            *m += h / 2.0;
        }
        h /= 2.0;
    }
    for i in 0..d / 2 {
        adversary.answer(&reveal(&centre, i));
    }
    assert_eq!(adversary.levels(), levels);
    (adversary, centre)
}

/// Target: <= 20 microseconds per answer at d = 100 with 20 levels open.
fn orthant_answer(c: &mut Criterion) {
    let class = FirstOrderClass::new(100, 1.0, 1e-9, 1.0, LipschitzNorm::L2).unwrap();
    let (adversary, centre) = orthant_with_levels(&class, 20);
    // Three kinds of queries, each a fixed cycle, none of which reveals a new sign (so
    // the state stays at 20 levels): uniform points of the box (answered by the top
    // levels), points near the current centre moved only in the fixed coordinates
    // (answered by the current level's fixed terms, which beat the unfixed ones at 0),
    // and the current centre itself (an exact tie between all current terms, which the
    // tie rule gives to the lowest fixed coordinate).
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let uniform: Vec<Vec<f64>> = (0..64)
        .map(|_| (0..100).map(|_| rng.random_range(-1.0..1.0)).collect())
        .collect();
    let near: Vec<Vec<f64>> = (0..64)
        .map(|_| {
            let mut y = centre.clone();
            for yi in y.iter_mut().take(50) {
                *yi += rng.random_range(-1e-6..1e-6);
            }
            y
        })
        .collect();
    let exact_centre = vec![centre.clone()];
    let mut group = c.benchmark_group("orthant_answer_d100_20_levels");
    for (name, queries) in [
        ("uniform", &uniform),
        ("near centre", &near),
        ("at centre", &exact_centre),
    ] {
        group.bench_function(name, |b| {
            b.iter_custom(|iters| {
                // A fresh copy per sample (untimed); the answers it stores grow with
                // `iters`, as in a real game.
                let mut fresh = adversary.clone();
                let start = Instant::now();
                for k in 0..iters as usize {
                    black_box(fresh.answer(&queries[k % queries.len()]));
                }
                let elapsed = start.elapsed();
                assert_eq!(fresh.levels(), 20, "no query reveals a sign");
                elapsed
            })
        });
    }
    group.finish();
}

/// A slab funnel driven until `levels` levels are open (the last one with half its
/// signs fixed), and the current level's centre. Each query is the centre of the alive
/// region with the unfixed coordinates on the level centre: the unfixed coordinates tie
/// at U = lambda beta h above every fixed piece (-lambda h / 4 at the slab centres), so the
/// lowest one is fixed with sign +1 (docs/theory.md §2.4, tie rules); with every sign +1,
/// m' = m + 3h/4 and h' = h/4.
fn funnel_with_levels(class: &FirstOrderClass, levels: usize) -> (SlabFunnel, Vec<f64>) {
    let d = class.dim;
    let mut adversary = SlabFunnel::new(class, FunnelSettings::default()).unwrap();
    let mut centre = vec![0.0; d];
    let mut h = class.half_width;
    let fix = |adversary: &mut SlabFunnel, centre: &[f64], h: f64, count: usize| {
        for k in 0..count {
            let query: Vec<f64> = centre
                .iter()
                .enumerate()
                .map(|(i, m)| if i < k { m + 0.75 * h } else { *m })
                .collect();
            adversary.answer(&query);
        }
    };
    while adversary.levels().len() < levels {
        let opened = adversary.levels().len();
        fix(&mut adversary, &centre, h, d);
        assert_eq!(
            adversary.levels().len(),
            opened + 1,
            "each round opens a level"
        );
        for m in &mut centre {
            *m += 0.75 * h;
        }
        h /= 4.0;
    }
    fix(&mut adversary, &centre, h, d / 2);
    assert_eq!(adversary.levels().len(), levels);
    (adversary, centre)
}

/// Target: <= 20 microseconds per answer at d = 100 with 20 levels open.
fn funnel_answer(c: &mut Criterion) {
    let class = FirstOrderClass::new(100, 1.0, 1e-9, 1.0, LipschitzNorm::L2).unwrap();
    let (adversary, centre) = funnel_with_levels(&class, 20);
    let h = 0.25f64.powi(19);
    // None of these reveals a sign (the state stays at 20 levels): points of the box
    // (answered by the boundary or the top levels' pieces), points near the centre with
    // the fixed coordinates moved towards their faces' far side by more than the unfixed
    // ones move (a fixed piece beats U), and the centre itself (every current piece ties
    // at lambda beta h; the fixed pieces win).
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let uniform: Vec<Vec<f64>> = (0..64)
        .map(|_| (0..100).map(|_| rng.random_range(-1.0..1.0)).collect())
        .collect();
    let near: Vec<Vec<f64>> = (0..64)
        .map(|_| {
            let mut y = centre.clone();
            for (i, yi) in y.iter_mut().enumerate() {
                *yi += if i < 50 {
                    -rng.random_range(2e-3..3e-3) * h
                } else {
                    rng.random_range(-1e-3..1e-3) * h
                };
            }
            y
        })
        .collect();
    let exact_centre = vec![centre.clone()];
    let mut group = c.benchmark_group("slab_funnel_answer_d100_20_levels");
    for (name, queries) in [
        ("uniform", &uniform),
        ("near centre", &near),
        ("at centre", &exact_centre),
    ] {
        group.bench_function(name, |b| {
            b.iter_custom(|iters| {
                let mut fresh = adversary.clone();
                let start = Instant::now();
                for k in 0..iters as usize {
                    black_box(fresh.answer(&queries[k % queries.len()]));
                }
                let elapsed = start.elapsed();
                assert_eq!(fresh.levels().len(), 20, "no query reveals a sign");
                elapsed
            })
        });
    }
    group.finish();
}

/// T exchanges of built-in method `method` against `orthant`, with their records.
fn recorded_game(class: &FirstOrderClass, method: &str, t: usize) -> (Vec<Exchange>, Vec<Record>) {
    let mut method = naysayer::method::build(method, &Class::FirstOrder(class.clone()), 0).unwrap();
    let mut adversary = Orthant::new(class, OrthantSettings::default()).unwrap();
    let mut query = vec![0.0; class.dim];
    let mut exchanges = Vec::new();
    let mut records = vec![Record::Header(Header {
        format: FORMAT_VERSION,
        tool: "bench".into(),
        class: Class::FirstOrder(class.clone()),
        adversary: "orthant".into(),
        method: method.name().into(),
        seed: 0,
        budget: t as u64,
    })];
    while exchanges.len() < t {
        match method.next(&mut query).unwrap() {
            Step::Query => {}
            Step::Output(_) => panic!("the method stops before {t} queries"),
        }
        let answer = adversary.answer(&query);
        method.observe(&query, &answer).unwrap();
        let Answer::FirstOrder(fo) = &answer else {
            unreachable!("first-order answers")
        };
        exchanges.push(Exchange {
            point: query.clone(),
            value: fo.value.clone(),
            gradient: fo.subgradient.clone(),
        });
        records.push(Record::Query(QueryRecord {
            index: exchanges.len() as u64,
            point: query.clone(),
            answer,
        }));
    }
    (exchanges, records)
}

/// Target: certificate search plus exact verification, T = 1000, d = 10: under 10 s.
/// Two transcripts: `subgradient` (it barely moves in 1000 steps, so the whole
/// transcript is certified: one search at full length), and `ellipsoid` at a finer eps
/// (the certified prefix ends early, so the binary search over prefixes runs).
fn certificate_search(c: &mut Criterion) {
    let mut group = c.benchmark_group("certificate_t1000_d10");
    group.sample_size(10);
    for (method, eps) in [("subgradient", 1e-3), ("ellipsoid", 1e-6)] {
        let class = FirstOrderClass::new(10, 1.0, eps, 1.0, LipschitzNorm::L2).unwrap();
        let (exchanges, records) = recorded_game(&class, method, 1000);
        let start = Instant::now();
        let found = universal::longest_certificate(&class, &exchanges)
            .unwrap()
            .expect("a certificate exists");
        eprintln!(
            "certificate_t1000_d10/{method}: certified prefix {} of {}, eps_cert {:e}, one \
             search {:?}",
            found.witnesses.prefix,
            exchanges.len(),
            found.certified_uncertainty,
            start.elapsed()
        );
        group.bench_function(format!("{method}: search + exact verification"), |b| {
            b.iter(|| {
                let found = universal::longest_certificate(&class, &exchanges)
                    .unwrap()
                    .expect("a certificate exists");
                let mut all = records.clone();
                all.push(Record::Final(FinalRecord {
                    queries_used: exchanges.len() as u64,
                    ending: Ending::BudgetExhausted,
                    certificate: Some(found.witnesses),
                    demonstration: None,
                }));
                let verdict = verify_records(&all).expect("the verifier accepts");
                black_box(verdict)
            })
        });
    }
    group.finish();
}

criterion_group!(benches, funnel_answer, orthant_answer, certificate_search);
criterion_main!(benches);
