//! Memory is checked before a game starts (issue 17 item 4): games whose method and
//! adversary cannot fit in the cap (the available memory, or `--max-memory`) are refused
//! with exit code 2 and a message naming the part, the parameter that drives it, the
//! estimate and the cap, instead of aborting on a failed allocation; sweeps check their
//! whole grid before playing or creating anything; the estimates grow with the dimension
//! and the queries; the gallery fits; a huge grid's shard plays with flat memory.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use naysayer::class::{
    Class, FeasibilityClass, FirstOrderClass, LargeScale, LargeScaleClass, LatticeClass,
    LipschitzNorm, Promise,
};
use naysayer::memory::{Cap, CapSource};
use naysayer::resources::{check_game, check_scenario, game_need};
use naysayer::scenario::Scenario;
use proptest::prelude::*;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// Exit code 2 and a message holding every one of `words`, and the cap.
fn assert_refused(out: &Output, words: &[&str]) {
    let err = stderr(out);
    assert_eq!(out.status.code(), Some(2), "stderr: {err}");
    for w in words {
        assert!(err.contains(w), "missing {w:?} in: {err}");
    }
    assert!(
        err.contains("needs about") || err.contains("need about"),
        "{err}"
    );
    assert!(
        err.contains("available") || err.contains("default cap") || err.contains("--max-memory"),
        "the cap is not named: {err}"
    );
    assert!(!err.contains("panicked"), "{err}");
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn play_ellipsoid_at_a_million_dimensions_is_refused() {
    let dir = TempDir::new().unwrap();
    let out = run_in(dir.path(), &["play", "-m", "ellipsoid", "-d", "1000000"]);
    // 8 d^2 bytes of the shape matrix: 8e12 (the module doc of src/method/ellipsoid.rs).
    assert_refused(
        &out,
        &[
            "play: method \"ellipsoid\"",
            "d = 1000000",
            "8.0 TB",
            "a d x d matrix",
            "--dim",
        ],
    );
}

#[test]
fn first_order_kelley_and_level_at_huge_dimensions_are_refused() {
    let dir = TempDir::new().unwrap();
    let out = run_in(
        dir.path(),
        &[
            "play",
            "--class",
            "first-order",
            "-m",
            "kelley",
            "-d",
            "1000000",
        ],
    );
    assert_refused(&out, &["method \"kelley\"", "d = 1000000", "TB"]);
    let out = run_in(
        dir.path(),
        &[
            "play",
            "--class",
            "first-order",
            "-m",
            "level",
            "-d",
            "100000",
        ],
    );
    assert_refused(&out, &["method \"level\"", "d = 100000", "queries"]);
}

#[test]
fn a_mixed_corner_game_at_a_million_continuous_dimensions_is_refused() {
    let dir = TempDir::new().unwrap();
    let args = [
        "play",
        "--class",
        "lattice",
        "--int-dim",
        "2",
        "--cont-dim",
        "1000000",
        "-a",
        "mixed-corner",
        "-m",
        "fibre-bisection",
    ];
    let out = run_in(dir.path(), &args);
    assert_refused(
        &out,
        &[
            "adversary \"mixed-corner\"",
            "n = 2, d = 1000000",
            "--cont-dim",
        ],
    );
}

#[test]
fn sweeps_beyond_memory_are_refused_before_anything_is_created() {
    let dir = TempDir::new().unwrap();
    let cases = [
        (
            "ellipsoid.toml",
            r#"name = "huge-ellipsoid"
description = "too big"
[class]
family = "feasibility"
dims = [2, 100000]
half_width = 1.0
rho = [1e-3]
[adversary]
name = "halving"
[play]
methods = ["midpoint", "ellipsoid"]
seeds = [0]
budget = 1000
"#,
            vec![
                "method \"ellipsoid\" at d = 100000, rho = 0.001",
                "needs about 80.",
            ],
        ),
        (
            "analytic.toml",
            r#"name = "huge-analytic"
description = "too big"
[class]
family = "feasibility"
dims = [100000]
half_width = 1.0
rho = [1e-3]
[adversary]
name = "halving"
[play]
methods = ["analytic-center"]
seeds = [0]
budget = 1000
"#,
            vec![
                "method \"analytic-center\" at d = 100000",
                "d x d Newton matrix",
            ],
        ),
        (
            "mixed.toml",
            r#"name = "huge-mixed"
description = "too big"
[class]
family = "lattice"
dims = [2]
int_lower = 0
int_upper = 1
cont_dim = 1000000
half_width = 1.0
rho = [1e-3]
[adversary]
name = "mixed-corner"
[play]
methods = ["fibre-bisection"]
seeds = [0]
budget = 100000
"#,
            vec!["n = 2, d = 1000000", "cont_dim"],
        ),
        (
            "rotation.toml",
            r#"name = "huge-rotation"
description = "too big"
[class]
family = "large-scale"
kind = "nonsmooth"
dim = 1000000
radius = 1.0
lipschitz = 1.0
horizon = [100000]
[adversary]
name = "rotation"
[play]
methods = ["unconstrained-subgradient"]
seeds = [0]
"#,
            vec![
                "adversary \"rotation\"",
                "d = 1000000, horizon T = 100000",
                "orthonormal basis",
            ],
        ),
    ];
    for (file, text, words) in cases {
        let path = write(dir.path(), file, text);
        // A fixed cap, so that the outcome does not depend on the machine.
        let out = run_in(
            dir.path(),
            &[
                "sweep",
                path.to_str().unwrap(),
                "--out",
                "results",
                "--max-memory",
                "16G",
            ],
        );
        let mut all = words.clone();
        all.extend([file, "sweep:", "16.0 GB of --max-memory"]);
        assert_refused(&out, &all);
        assert!(
            !dir.path().join("results").exists(),
            "{file}: the sweep created its results folder before refusing"
        );
    }
}

#[test]
fn max_memory_lowers_and_raises_the_cap() {
    let dir = TempDir::new().unwrap();
    let game = ["play", "-m", "ellipsoid", "-d", "3"];
    // Fits by default.
    let out = run_in(dir.path(), &game);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    // Refused under a tiny cap: every game needs the program's own buffers.
    let mut tiny = game.to_vec();
    tiny.extend(["--max-memory", "1M"]);
    let out = run_in(dir.path(), &tiny);
    assert_refused(&out, &["1.0 MB of --max-memory", "raise --max-memory"]);
    // Played again under a cap it fits.
    let mut ample = game.to_vec();
    ample.extend(["--max-memory", "2GiB"]);
    let out = run_in(dir.path(), &ample);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    // The other commands take the flag too.
    let scenario = write(
        dir.path(),
        "small.toml",
        r#"name = "small"
description = "small"
[class]
family = "feasibility"
dims = [2]
half_width = 1.0
rho = [1e-2]
[adversary]
name = "halving"
[play]
methods = ["midpoint"]
seeds = [0]
budget = 100
"#,
    );
    let out = run_in(
        dir.path(),
        &[
            "sweep",
            scenario.to_str().unwrap(),
            "--max-memory",
            "1M",
            "--out",
            "out",
        ],
    );
    assert_refused(&out, &["small.toml", "1.0 MB of --max-memory"]);
    assert!(!dir.path().join("out").exists());
    let out = run_in(
        dir.path(),
        &[
            "hunt",
            "-m",
            "midpoint",
            "-d",
            "2",
            "--rho",
            "0.1",
            "--max-memory",
            "1M",
        ],
    );
    assert_refused(&out, &["hunt:", "1.0 MB of --max-memory", "--width"]);
}

#[test]
fn a_bad_size_is_refused_with_a_sentence() {
    let dir = TempDir::new().unwrap();
    for (size, words) in [
        ("12X", "is not a size"),
        ("0", "less than one byte"),
        ("-5G", "is not a size"),
    ] {
        let out = run_in(
            dir.path(),
            &["play", "-d", "2", &format!("--max-memory={size}")],
        );
        assert_eq!(out.status.code(), Some(2), "{size}");
        let err = stderr(&out);
        assert!(err.contains(words), "{size}: {err}");
        assert!(err.contains("--max-memory"), "{size}: {err}");
    }
}

/// A cap that does not depend on the machine.
fn cap(bytes: u64) -> Cap {
    Cap {
        bytes,
        source: CapSource::Flag,
    }
}

#[test]
fn the_issue_cases_are_refused_at_a_fixed_cap() {
    let cap = cap(64_000_000_000);
    let feasibility =
        |d| Class::Feasibility(FeasibilityClass::new(d, 1.0, 1e-3, Promise::MayBeEmpty).unwrap());
    let first_order =
        |d| Class::FirstOrder(FirstOrderClass::new(d, 1.0, 1e-4, 1.0, LipschitzNorm::L2).unwrap());
    let refused = [
        (feasibility(1_000_000), "ellipsoid", "halving", 1_000_000),
        (feasibility(100_000), "ellipsoid", "halving", 1_000_000),
        (
            feasibility(100_000),
            "analytic-center",
            "halving",
            1_000_000,
        ),
        (first_order(1_000_000), "kelley", "slab-funnel", 1_000_000),
        (first_order(100_000), "level", "slab-funnel", 1_000_000),
        (
            Class::Lattice(LatticeClass::mixed(2, 0, 1, 1_000_000, 1.0, 1e-3).unwrap()),
            "fibre-bisection",
            "mixed-corner",
            100_000,
        ),
        (
            Class::LargeScale(
                LargeScale::new(
                    LargeScaleClass::nonsmooth(1_000_000, 1.0, 1.0).unwrap(),
                    100_000,
                )
                .unwrap(),
            ),
            "unconstrained-subgradient",
            "rotation",
            100_000,
        ),
    ];
    for (class, method, adversary, budget) in refused {
        let err = check_game("play", &class, Some(method), adversary, budget, &cap)
            .expect_err(&format!("{method} against {adversary} was not refused"));
        let text = err.to_string();
        assert!(text.starts_with("play: "), "{text}");
        assert!(text.contains("64.0 GB of --max-memory"), "{text}");
    }
    // Games of ordinary size are not: the README's examples.
    let fits = [
        (feasibility(4), "ellipsoid", "halving", 1_000_000),
        (feasibility(100), "analytic-center", "halving", 1_000_000),
        (first_order(2), "kelley", "slab-funnel", 1_000_000),
        (first_order(2), "subgradient", "slab-funnel", 1_000_000),
        (first_order(2), "kelley", "orthant", 1_000_000),
        (first_order(100), "level", "slab-funnel", 1_000_000),
    ];
    for (class, method, adversary, budget) in fits {
        check_game("play", &class, Some(method), adversary, budget, &cap).unwrap();
        let need = game_need(&class, Some(method), adversary, budget).total();
        assert!(need < 1_000_000_000, "{method}: {need} bytes");
    }
}

#[test]
fn every_gallery_scenario_fits_in_a_gigabyte() {
    let gallery = Path::new(env!("CARGO_MANIFEST_DIR")).join("adversaries");
    let mut seen = 0;
    for entry in std::fs::read_dir(&gallery).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|e| e != "toml") {
            continue;
        }
        let scenario = Scenario::from_file(&path).unwrap();
        check_scenario("sweep", &scenario, &path, &cap(1_000_000_000), 2)
            .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        seen += 1;
    }
    assert!(seen >= 8, "only {seen} gallery scenarios found");
}

/// Classes of `family` at size `d` (the dimension, or for lattice classes the
/// continuous dimension, with n = 2 integer coordinates; large-scale at horizon 8).
fn class_of(family: &str, d: usize) -> Class {
    match family {
        "feasibility" => {
            Class::Feasibility(FeasibilityClass::new(d, 1.0, 1e-3, Promise::MayBeEmpty).unwrap())
        }
        "first-order" => {
            Class::FirstOrder(FirstOrderClass::new(d, 1.0, 1e-4, 1.0, LipschitzNorm::L2).unwrap())
        }
        "lattice" => Class::Lattice(LatticeClass::mixed(2, 0, 3, d, 1.0, 1e-3).unwrap()),
        _ => Class::LargeScale(
            LargeScale::new(LargeScaleClass::smooth(d, 1.0, 1.0).unwrap(), 8).unwrap(),
        ),
    }
}

/// Every registered estimate with the families it is stated for.
fn estimates() -> Vec<(String, &'static str, naysayer::method::Memory)> {
    let mut all = Vec::new();
    for m in naysayer::method::METHODS {
        for family in m.families {
            all.push((format!("method {}", m.name), *family, m.memory));
        }
    }
    for a in naysayer::adversary::ADVERSARIES {
        all.push((format!("adversary {}", a.name), a.family, a.memory));
    }
    all
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    /// Each estimate is nondecreasing in the dimension and in the queries counted.
    #[test]
    fn estimates_grow_with_the_dimension_and_the_queries(
        d in 1usize..5000,
        more_d in 0usize..5000,
        q in 1u64..2_000_000,
        more_q in 0u64..2_000_000,
    ) {
        for (name, family, memory) in estimates() {
            let small = class_of(family, d);
            let large = class_of(family, d + more_d);
            prop_assert!(
                memory(&small, q) <= memory(&large, q),
                "{name} on {family}: d {d} -> {}", d + more_d
            );
            prop_assert!(
                memory(&small, q) <= memory(&small, q + more_q),
                "{name} on {family}: queries {q} -> {}", q + more_q
            );
            prop_assert!(memory(&small, q) > 0, "{name}");
        }
    }

    /// The large-scale estimates grow with the horizon too.
    #[test]
    fn large_scale_estimates_grow_with_the_horizon(d in 400usize..5000, t in 1u64..100, more in 0u64..100) {
        for (name, family, memory) in estimates() {
            if family != "large-scale" {
                continue;
            }
            let at = |t| Class::LargeScale(
                LargeScale::new(LargeScaleClass::nonsmooth(d, 1.0, 1.0).unwrap(), t).unwrap(),
            );
            prop_assert!(memory(&at(t), t) <= memory(&at(t + more), t + more), "{name}");
        }
    }
}

/// A 10^9-game grid (100 dimensions x 100 accuracies x 10^5 seeds of a randomized
/// method): one shard plays its few games without enumerating, let alone holding, the
/// others (games are enumerated lazily and skipped by blocks).
#[cfg(unix)]
#[test]
fn a_shard_of_a_billion_game_grid_plays_with_flat_memory() {
    let dir = TempDir::new().unwrap();
    let dims: Vec<String> = (1..=100).map(|d| d.to_string()).collect();
    let rhos: Vec<String> = (0..100)
        .map(|i| format!("{:e}", 10f64.powf(-2.0 - f64::from(i) / 50.0)))
        .collect();
    let seeds: Vec<String> = (0..100_000).map(|s| s.to_string()).collect();
    let text = format!(
        "name = \"billion\"\ndescription = \"10^9 games\"\n[class]\nfamily = \"feasibility\"\n\
         dims = [{}]\nhalf_width = 1.0\nrho = [{}]\n[adversary]\nname = \"halving\"\n\
         [play]\nmethods = [\"random\"]\nseeds = [{}]\nbudget = 100\n",
        dims.join(", "),
        rhos.join(", "),
        seeds.join(", ")
    );
    let path = write(dir.path(), "billion.toml", &text);
    let scenario = Scenario::from_file(&path).unwrap();
    assert_eq!(
        scenario.grid.len() * scenario.seeds.len() as u64,
        1_000_000_000
    );
    // The shard owns games 4, 250000004, 500000004, 750000004: the first and the last are
    // the games of the first and the last grid points.
    let out = run_in(
        dir.path(),
        &[
            "sweep",
            path.to_str().unwrap(),
            "--shard",
            "5/250000000",
            "--no-charts",
            "--quiet",
            "--out",
            "out",
        ],
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let csv = std::fs::read_to_string(
        dir.path()
            .join("out/billion/shard-5-of-250000000/games.csv"),
    )
    .unwrap();
    let games: Vec<&str> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    assert_eq!(games, ["4", "250000004", "500000004", "750000004"]);
    // The largest resident set of the children run so far (getrusage, in KiB on Linux):
    // far below what a list of 10^9 games would take (tens of gigabytes).
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: getrusage writes into the zeroed struct we own.
    assert_eq!(
        unsafe { libc::getrusage(libc::RUSAGE_CHILDREN, &mut usage) },
        0
    );
    assert!(usage.ru_maxrss < 500_000, "max RSS {} KiB", usage.ru_maxrss);
}
