//! The large-scale first-order regime (issue 9, docs/theory.md §3): published-theorem
//! demonstrations. Every comparison with a published value uses the relative tolerance
//! 1e-12 (`RELATIVE_TOLERANCE`), because the constants are irrational (docs/theory.md §0);
//! nothing here is an exact certificate.

use naysayer::class::LargeScaleClass;
use naysayer::error::Error;
use naysayer::large_scale::game::{self, class_gap, play, DemoSpec};
use naysayer::large_scale::instances::{
    DroriTeboulle, NesterovNonsmooth, SmoothChain, StronglyConvexChain,
};
use naysayer::large_scale::rotation::Rotation;
use naysayer::large_scale::rotation_chain::RotationChain;
use naysayer::large_scale::witness::{self, DemoQuery, DemoRecord};
use naysayer::large_scale::{KnownFunction, Oracle, RELATIVE_TOLERANCE};
use naysayer::method::large_scale as methods;
use proptest::prelude::*;

const TOL: f64 = RELATIVE_TOLERANCE;

fn at_least(gap: f64, bound: f64, what: &str) {
    assert!(
        gap >= bound * (1.0 - TOL),
        "{what}: gap {gap:e} below the bound {bound:e}"
    );
}

fn at_most(gap: f64, bound: f64, what: &str) {
    assert!(
        gap <= bound * (1.0 + TOL),
        "{what}: gap {gap:e} above the upper bound {bound:e}"
    );
}

#[test]
fn subgradient_meets_the_drori_teboulle_bound_exactly() {
    // Drori & Teboulle, Math. Program. 160 (2016): the subgradient method with step
    // R/(M sqrt(N+1)) has min_k f(x_k) - f* = M R / sqrt(N+1) on their function: tight.
    let (m, r) = (2.0, 3.0);
    for n in [1usize, 10, 100] {
        let class = LargeScaleClass::nonsmooth(n + 3, m, r).unwrap();
        let mut instance = DroriTeboulle::new(n + 3, m, r, n).unwrap();
        let mut method = methods::build("subgradient", &class, (n + 1) as u64, 0).unwrap();
        let played = play(method.as_mut(), &mut instance, (n + 1) as u64, false).unwrap();
        assert_eq!(played.queries_used, (n + 1) as u64);
        let gap = class_gap(&class, &played, &instance).unwrap();
        let published = m * r / ((n + 1) as f64).sqrt();
        assert!(
            (gap - published).abs() <= TOL * published,
            "N = {n}: gap {gap} vs M R / sqrt(N+1) = {published}"
        );
        assert!((instance.bound() - published).abs() <= TOL * published);
        // The minimiser and optimal value the instance states agree with its oracle.
        let star = instance.minimiser();
        assert!(instance.gap(&star).abs() <= TOL * published);
        assert!((naysayer::large_scale::norm(&star) - r).abs() <= TOL * r);
    }
}

/// Plays span method `name` for k queries on a fresh instance and returns the gap.
fn span_gap(
    name: &str,
    class: &LargeScaleClass,
    instance: &mut dyn game::Instance,
    k: usize,
) -> f64 {
    let mut method = methods::build(name, class, k as u64, 0).unwrap();
    let played = play(method.as_mut(), instance, k as u64, false).unwrap();
    assert_eq!(played.queries_used, k as u64, "{name}");
    class_gap(class, &played, instance.as_known()).unwrap()
}

#[test]
fn span_methods_stay_above_the_smooth_chain_bound() {
    // Nesterov 2004, Thm 2.1.7: 3 beta R^2 / (32 (k+1)^2) for every span method; the
    // accelerated method stays within 2 beta R^2 / (k+1)^2 (Beck & Teboulle 2009, Thm 4.4,
    // from memory) and gradient descent within beta R^2 / (2k) (their Thm 3.1).
    let (beta, r) = (4.0, 1.5);
    for k in 1..=200 {
        let d = 2 * k + 1;
        let class = LargeScaleClass::smooth(d, beta, r).unwrap();
        let mut gaps = Vec::new();
        for name in ["gradient", "accelerated", "heavy-ball"] {
            let mut instance = SmoothChain::new(d, beta, r, k).unwrap();
            let bound = instance.bound();
            let gap = span_gap(name, &class, &mut instance, k);
            at_least(gap, bound, &format!("{name}, k = {k}"));
            gaps.push(gap);
        }
        at_most(gaps[0], beta * r * r / (2.0 * k as f64), "gradient upper");
        at_most(
            gaps[1],
            2.0 * beta * r * r / ((k + 1) as f64).powi(2),
            &format!("accelerated upper, k = {k}"),
        );
    }
}

#[test]
fn span_methods_stay_above_the_strongly_convex_chain_bound() {
    // Nesterov 2004, Thm 2.1.13: (mu/2) q^(2k) ||x_0 - x*||^2 for every span method, at
    // d = 2k + 1 (docs/theory.md §3). k is kept where the bound is far above the rounding of the
    // minimiser (q^(2k) >= 1e-20): Q = 1000 up to k = 200, Q = 10 up to k = 30.
    // The accelerated method stays within (1 - sqrt(mu/beta))^k (f(x_0) - f* + (mu/2)
    // ||x_0 - x*||^2) (Nesterov 2004, Thm 2.2.3, from memory).
    let r = 2.0;
    for (beta, mu, k_max) in [(1000.0, 1.0, 200usize), (10.0, 1.0, 30)] {
        let ks: Vec<usize> = (1..=k_max).collect();
        for k in ks {
            let d = 2 * k + 1;
            let class = LargeScaleClass::strongly_convex(d, beta, mu, r).unwrap();
            for name in ["gradient", "accelerated", "heavy-ball"] {
                let mut instance = StronglyConvexChain::new(d, beta, mu, r, k).unwrap();
                let bound = instance.bound();
                assert!(bound >= 1e-20 * mu * r * r);
                let gap = span_gap(name, &class, &mut instance, k);
                at_least(gap, bound, &format!("{name}, Q = {}, k = {k}", beta / mu));
                if name == "accelerated" {
                    let start = instance.gap(&vec![0.0; d]) + 0.5 * mu * r * r;
                    let upper = (k as f64 * (-(mu / beta).sqrt()).ln_1p()).exp() * start;
                    at_most(gap, upper, &format!("accelerated upper, k = {k}"));
                }
            }
        }
    }
}

#[test]
fn the_subgradient_method_stays_above_the_nonsmooth_bounds() {
    // Nesterov 2004, Thm 3.2.1: M R / (2 (2 + sqrt(k+1))); Drori & Teboulle 2016 with
    // N = k: M R / sqrt(k+1); both for span methods, checked with d = 2k + 1.
    let (m, r) = (1.0, 1.0);
    for k in 1..=200 {
        let d = 2 * k + 1;
        let class = LargeScaleClass::nonsmooth(d, m, r).unwrap();
        let mut nesterov = NesterovNonsmooth::new(d, m, r, k).unwrap();
        let bound = nesterov.bound();
        let gap = span_gap("subgradient", &class, &mut nesterov, k);
        at_least(gap, bound, &format!("Nesterov instance, k = {k}"));
        at_most(
            gap,
            m * r * 2.0 / (k as f64).sqrt(),
            "subgradient upper (M = 1 on B(0, 2R))",
        );
        let mut tight = DroriTeboulle::new(d, m, r, k).unwrap();
        let bound = tight.bound();
        let gap = span_gap("subgradient", &class, &mut tight, k);
        at_least(gap, bound, &format!("Drori-Teboulle instance, k = {k}"));
    }
}

/// Plays a method against the nonsmooth rotation adversary, checks the forced gap and
/// the exported witness, and returns the replay's largest errors.
fn rotation_game(name: &str, seed: u64, queries: usize, dim: usize) -> (f64, f64) {
    let (m, r) = (1.5, 0.75);
    let class = LargeScaleClass::nonsmooth(dim, m, r).unwrap();
    let spec = DemoSpec {
        class,
        oracle: "rotation".into(),
        method: name.into(),
        queries: queries as u64,
        seed,
        record: true,
    };
    let report = game::run(&spec).unwrap();
    let forced = m * r / ((queries + 1) as f64).sqrt();
    let gap = report.gap.unwrap();
    at_least(
        gap,
        forced,
        &format!("{name} seed {seed}, T = {queries}, d = {dim}"),
    );
    assert!((report.bound - forced).abs() <= TOL * forced);
    // Export, read back bit for bit, replay every answer against the witness.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("rotation.jsonl");
    let records = report.records(&spec).unwrap();
    witness::write_transcript(&path, &records).unwrap();
    let back = witness::read_transcript(&path).unwrap();
    assert_eq!(back, records, "the export must round-trip exactly");
    let replayed = witness::replay(&back).unwrap();
    assert_eq!(replayed.answers, queries as u64);
    assert!(replayed.orthonormality_error <= 1e-13);
    (replayed.value_error, replayed.gradient_error)
}

#[test]
fn the_rotation_adversary_forces_the_bound_on_non_span_methods() {
    // Any deterministic method: gap >= M R / sqrt(N+1) with N = T (docs/theory.md §3; prototype
    // measured equality to 2e-16 against coordinate steps and random search).
    for queries in [1usize, 5, 20, 60] {
        for dim in [2 * queries + 2, 3 * queries + 7] {
            let (v, g) = rotation_game("coordinate-search", 0, queries, dim);
            assert!(v <= TOL && g <= TOL);
            for seed in [0, 1, 2] {
                rotation_game("random-direction", seed, queries, dim);
            }
            rotation_game("subgradient", 0, queries, dim);
        }
    }
}

#[test]
fn the_rotation_chain_adversary_forces_the_chain_bounds() {
    for queries in [1usize, 4, 15, 40] {
        let dim = 3 * queries + 2;
        for class in [
            LargeScaleClass::smooth(dim, 2.0, 1.0).unwrap(),
            LargeScaleClass::strongly_convex(dim, 50.0, 1.0, 1.0).unwrap(),
        ] {
            for (name, seed) in [
                ("coordinate-search", 0),
                ("random-direction", 3),
                ("accelerated", 0),
                ("gradient", 0),
            ] {
                let spec = DemoSpec {
                    class,
                    oracle: "rotation-chain".into(),
                    method: name.into(),
                    queries: queries as u64,
                    seed,
                    record: true,
                };
                let report = game::run(&spec).unwrap();
                let what = format!("{name} on {} T = {queries}", class.kind());
                at_least(report.gap.unwrap(), report.bound, &what);
                let replayed = witness::replay(&report.records(&spec).unwrap()).unwrap();
                assert!(replayed.value_error <= TOL, "{what}");
            }
        }
    }
}

#[test]
fn a_too_small_dimension_is_a_clear_error() {
    let e = Rotation::new(21, 1.0, 1.0, 10, 10).unwrap_err();
    assert!(
        matches!(
            e,
            Error::DimensionTooSmall {
                dim: 21,
                needed: 22,
                ..
            }
        ),
        "{e}"
    );
    let text = e.to_string();
    assert!(
        text.contains("d = 21") && text.contains("d >= 22"),
        "{text}"
    );
    let class = LargeScaleClass::smooth(10, 1.0, 1.0).unwrap();
    let e = RotationChain::new(&class, 3).unwrap_err();
    assert!(e.to_string().contains("d >= 11"), "{e}");
    // Through the game runner, with the class's dimension too small.
    let spec = DemoSpec {
        class: LargeScaleClass::nonsmooth(9, 1.0, 1.0).unwrap(),
        oracle: "rotation".into(),
        method: "coordinate-search".into(),
        queries: 4,
        seed: 0,
        record: false,
    };
    let e = game::run(&spec).unwrap_err();
    assert!(e.to_string().contains("d >= 10"), "{e}");
    // One query more than the adversary was built for.
    let mut adversary = Rotation::new(10, 1.0, 1.0, 2, 2).unwrap();
    let mut g = vec![0.0; 10];
    adversary.answer(&[0.0; 10], &mut g).unwrap();
    adversary.answer(&[0.5; 10], &mut g).unwrap();
    let e = adversary.answer(&[0.25; 10], &mut g).unwrap_err();
    assert!(e.to_string().contains("built for 2 queries"), "{e}");
    // Instances too.
    assert!(SmoothChain::new(4, 1.0, 1.0, 2).is_err());
}

/// Interpolation consistency (docs/theory.md §2.1, here with a tolerance): for all s, t,
/// v_t + <g_t, x_s - x_t> <= v_s, and ||g_t|| <= M.
fn check_interpolation(exchanges: &[DemoQuery], lipschitz: f64, radius: f64) {
    for t in exchanges {
        let gn = naysayer::large_scale::norm(&t.gradient);
        assert!(gn <= lipschitz * (1.0 + TOL), "subgradient norm {gn}");
        for s in exchanges {
            let lin: f64 = t
                .gradient
                .iter()
                .zip(s.point.iter().zip(&t.point))
                .map(|(g, (a, b))| g * (a - b))
                .sum();
            let scale = lipschitz
                * (radius
                    + naysayer::large_scale::norm(&s.point)
                    + naysayer::large_scale::norm(&t.point));
            assert!(
                t.value + lin <= s.value + TOL * scale,
                "answers {} and {} are inconsistent: {} > {}",
                t.index,
                s.index,
                t.value + lin,
                s.value
            );
        }
    }
}

fn query_strategy(dim: usize) -> impl Strategy<Value = Vec<(u8, Vec<i8>, i8)>> {
    // Each query: a kind (fresh vector, repeat, combination of earlier, zero, tiny
    // perturbation), small integer coordinates, and a scale exponent.
    prop::collection::vec(
        (0u8..5, prop::collection::vec(-3i8..=3, dim), -20i8..6),
        1..9,
    )
}

fn build_queries(spec: &[(u8, Vec<i8>, i8)]) -> Vec<Vec<f64>> {
    let mut queries: Vec<Vec<f64>> = Vec::new();
    for (kind, coords, exponent) in spec {
        let scale = 2f64.powi(i32::from(*exponent));
        let fresh: Vec<f64> = coords.iter().map(|c| f64::from(*c) * scale).collect();
        let q = match (kind, queries.last(), queries.first()) {
            (1, Some(last), _) => last.clone(),
            (2, Some(last), Some(first)) => last
                .iter()
                .zip(first)
                .map(|(a, b)| 0.5 * a - 0.25 * b)
                .collect(),
            (3, _, _) => vec![0.0; coords.len()],
            (4, Some(last), _) => last.iter().zip(&fresh).map(|(a, b)| a + 1e-9 * b).collect(),
            _ => fresh,
        };
        queries.push(q);
    }
    queries
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, .. ProptestConfig::default() })]

    #[test]
    fn random_queries_never_make_the_rotation_adversary_inconsistent(
        extra in 0usize..4,
        spec in query_strategy(24),
        output in prop::collection::vec(-3i8..=3, 24),
    ) {
        let queries = build_queries(&spec);
        let t = queries.len();
        let dim = 24;
        prop_assume!(dim >= 2 * t + 2 + extra);
        let (m, r) = (1.0, 2.0);
        let mut adversary = Rotation::new(dim, m, r, t, t + extra).unwrap();
        let mut exchanges = Vec::new();
        let mut g = vec![0.0; dim];
        for (i, q) in queries.iter().enumerate() {
            let value = adversary.answer(q, &mut g).unwrap();
            prop_assert!(value >= 0.0, "a query value fell below 0 with a direction hidden");
            exchanges.push(DemoQuery { index: i as u64 + 1, point: q.clone(), value, gradient: g.clone() });
        }
        let output: Vec<f64> = output.iter().map(|c| f64::from(*c) * 0.3).collect();
        let witness = adversary.finish(Some(&output)).unwrap();
        check_interpolation(&exchanges, m, r);
        let records: Vec<DemoRecord> = exchanges.iter().cloned().map(DemoRecord::DemoQuery)
            .chain([DemoRecord::DemoFinal(witness::DemoFinal {
                queries_used: t as u64, output: Some(output.clone()), gap: 0.0, bound: 0.0,
                witness: witness.clone(),
            })]).collect();
        let report = witness::replay(&records).unwrap();
        prop_assert!(report.value_error <= TOL && report.gradient_error <= TOL);
        // The output keeps the forced gap.
        prop_assert!(witness.gap(&output) >= m * r / ((t + extra + 1) as f64).sqrt() * (1.0 - TOL));
    }

    #[test]
    fn random_queries_never_make_the_rotation_chain_adversary_inconsistent(
        spec in query_strategy(30),
        strongly in any::<bool>(),
    ) {
        let queries = build_queries(&spec);
        let t = queries.len();
        let dim = 30;
        prop_assume!(dim >= 3 * t + 2);
        let class = if strongly {
            LargeScaleClass::strongly_convex(dim, 10.0, 0.5, 1.0).unwrap()
        } else {
            LargeScaleClass::smooth(dim, 3.0, 1.0).unwrap()
        };
        let mut adversary = RotationChain::new(&class, t).unwrap();
        let mut exchanges = Vec::new();
        let mut g = vec![0.0; dim];
        for (i, q) in queries.iter().enumerate() {
            let value = adversary.answer(q, &mut g).unwrap();
            exchanges.push(DemoQuery { index: i as u64 + 1, point: q.clone(), value, gradient: g.clone() });
        }
        let witness = adversary.finish(None).unwrap();
        let records: Vec<DemoRecord> = exchanges.iter().cloned().map(DemoRecord::DemoQuery)
            .chain([DemoRecord::DemoFinal(witness::DemoFinal {
                queries_used: t as u64, output: None, gap: 0.0, bound: 0.0,
                witness,
            })]).collect();
        let report = witness::replay(&records).unwrap();
        prop_assert!(report.value_error <= TOL && report.gradient_error <= TOL);
    }
}

const SCENARIO: &str = r#"name = "tiny"
description = "Two methods against the rotation adversary."
[class]
family = "large-scale"
kind = "nonsmooth"
dim = 20
radius = 1.0
lipschitz = 1.0
queries = [1, 2, 4, 8]
[adversary]
name = "rotation"
[play]
methods = ["subgradient", "random-direction"]
seeds = [0, 1]
"#;

#[test]
fn large_scale_scenarios_are_parsed_strictly() {
    use naysayer::scenario::LargeScaleScenario;
    let path = std::path::Path::new("tiny.toml");
    let ok = LargeScaleScenario::parse(SCENARIO, path).unwrap();
    assert_eq!(ok.queries, vec![1, 2, 4, 8]);
    assert_eq!(ok.games().len(), 4 * 3);
    assert!(naysayer::scenario::is_large_scale(SCENARIO));
    let cases = [
        (SCENARIO.replace("dim = 20", "dim = 17"), 6, "needs d >= 18"),
        (
            SCENARIO.replace("radius = 1.0", "radius = 1.0\ncolour = 1"),
            8,
            "unknown field",
        ),
        (
            SCENARIO.replace("\"subgradient\",", "\"gradient\","),
            13,
            "needs a smooth class",
        ),
        (
            SCENARIO.replace("lipschitz = 1.0", "smoothness = 1.0"),
            8,
            "does not belong",
        ),
        (
            SCENARIO.replace("name = \"rotation\"", "name = \"rotation-chain\""),
            11,
            "does not play",
        ),
    ];
    for (text, line, words) in cases {
        let e = LargeScaleScenario::parse(&text, path).unwrap_err();
        let Error::Scenario {
            line: got, reason, ..
        } = &e
        else {
            panic!("not a scenario error: {e}");
        };
        assert_eq!(*got, line, "{e}");
        assert!(reason.contains(words), "{e}");
    }
}

#[test]
fn a_large_scale_sweep_writes_its_table_and_chart() {
    use naysayer::scenario::LargeScaleScenario;
    let dir = tempfile::tempdir().unwrap();
    let scenario = LargeScaleScenario::parse(SCENARIO, std::path::Path::new("tiny.toml")).unwrap();
    let summary = naysayer::large_scale::sweep::run(&scenario, dir.path(), 2).unwrap();
    assert_eq!((summary.games, summary.broken), (12, 0));
    let text = std::fs::read_to_string(&summary.csv).unwrap();
    assert_eq!(text.lines().count(), 13);
    assert!(
        text.lines().skip(1).all(|l| l.contains(",yes,yes,")),
        "{text}"
    );
    let pngs = naysayer::large_scale::sweep::draw_all(&dir.path().join("tiny")).unwrap();
    assert!(pngs[0].exists());
    assert!(dir.path().join("tiny/gap-vs-queries.csv").exists());
}

#[test]
fn the_binary_sweeps_a_large_scale_scenario_and_exports_replayable_witnesses() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("tiny.toml");
    std::fs::write(
        &file,
        SCENARIO.replace("seeds = [0, 1]", "seeds = [0, 1]\ntranscripts = true"),
    )
    .unwrap();
    let out = dir.path().join("results");
    let bin = env!("CARGO_BIN_EXE_naysayer");
    let status = std::process::Command::new(bin)
        .arg("sweep")
        .arg(&file)
        .arg("--out")
        .arg(&out)
        .arg("--jobs")
        .arg("2")
        .output()
        .unwrap();
    assert!(
        status.status.success(),
        "{}",
        String::from_utf8_lossy(&status.stderr)
    );
    let folder = out.join("tiny");
    assert!(folder.join("games.csv").exists() && folder.join("gap-vs-queries.png").exists());
    let game = folder.join("transcripts/game-0.jsonl");
    let records = witness::read_transcript(&game).unwrap();
    let report = witness::replay(&records).unwrap();
    assert_eq!(report.answers, 1);
    // A demonstration transcript is not a certificate: the exact verifier refuses it.
    let check = std::process::Command::new(bin)
        .arg("check")
        .arg(&game)
        .output()
        .unwrap();
    assert!(!check.status.success());
    // `naysayer chart` redraws the folder; `bounds` prints the curves with the label.
    let chart = std::process::Command::new(bin)
        .arg("chart")
        .arg(&folder)
        .output()
        .unwrap();
    assert!(
        chart.status.success(),
        "{}",
        String::from_utf8_lossy(&chart.stderr)
    );
    let bounds = std::process::Command::new(bin)
        .args([
            "bounds",
            "--large-scale",
            "smooth",
            "--queries",
            "10",
            "-d",
            "40",
        ])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&bounds.stdout);
    assert!(
        bounds.status.success() && text.contains("not certificates"),
        "{text}"
    );
    // 3 beta R^2 / (32 (T+1)^2) = 3 / 3872 at beta = R = 1, T = 10 (Nesterov 2004, Thm 2.1.7).
    assert!(text.contains("7.747934e-4"), "{text}");
}

#[test]
fn an_overflowing_query_ends_the_game_as_a_method_failure() {
    use naysayer::method::Method;
    use naysayer::oracle::{Answer, Step};
    struct Huge;
    impl Method for Huge {
        fn name(&self) -> &str {
            "huge"
        }
        fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
            query.iter_mut().for_each(|x| *x = 1e300);
            Ok(Step::Query)
        }
        fn observe(&mut self, _: &[f64], _: &Answer) -> Result<(), Error> {
            Ok(())
        }
    }
    let mut oracle = DroriTeboulle::new(4, 1.0, 1.0, 2).unwrap();
    let played = play(&mut Huge, &mut oracle, 5, false).unwrap();
    assert_eq!(played.queries_used, 0);
    assert!(matches!(
        played.ending,
        naysayer::transcript::Ending::MethodFailed { .. }
    ));
}
