//! Scenario files: strict parsing with errors that name file:line:column, through the
//! library (`Scenario::parse`) and through the binary (`naysayer sweep bad.toml`).
//!
//! Every bad scenario below is the valid `BASE` text with exactly one line replaced, so
//! the expected line and column are counted by hand from the replacement line (columns
//! are 1-based and count characters, as in src/scenario.rs).

use std::path::Path;
use std::process::Command;

use naysayer::class::{Class, Promise};
use naysayer::family::boxes::{BoxGrid, BoxKind};
use naysayer::scenario::Scenario;
use naysayer::Error;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

/// The grid of a box-family scenario.
fn box_grid(scenario: &Scenario) -> &BoxGrid {
    scenario.grid_as::<BoxGrid>().expect("a box family")
}

/// A valid scenario; line numbers are in the comments of `CASES`.
const BASE: &str = r#"name = "bad"
description = "A scenario with one mistake."

[class]
family = "feasibility"
dims = [1, 2, 4]
half_width = 1.0
rho = [1e-2, 1e-3]
promise = "may-be-empty"

[adversary]
name = "halving"

[play]
methods = ["midpoint", "random"]
seeds = [0, 1]
budget = 1000

[charts]
dim = 4
rho = 1e-3
"#;

/// `BASE` with line `line` (1-based) replaced by `text`.
fn with_line(line: usize, text: &str) -> String {
    let mut lines: Vec<&str> = BASE.lines().collect();
    assert!(line >= 1 && line <= lines.len(), "no line {line} in BASE");
    lines[line - 1] = text;
    let mut out = lines.join("\n");
    out.push('\n');
    out
}

/// One bad scenario: what it shows, the replaced line, its text, the expected column
/// and a word the reason must contain.
struct Case {
    what: &'static str,
    line: usize,
    text: &'static str,
    column: usize,
    word: &'static str,
}

const CASES: &[Case] = &[
    Case {
        what: "a lattice key in the feasibility family",
        line: 9,
        text: "cont_dim = 2",
        column: 12,
        word: "cont_dim belongs to the lattice family",
    },
    // Line 3 is the blank line after `description`, still at the top level.
    Case {
        what: "unknown top-level key",
        line: 3,
        text: "colour = \"red\"",
        column: 1,
        word: "colour",
    },
    // Line 10 is the blank line that ends the [class] table.
    Case {
        what: "unknown key inside [class]",
        line: 10,
        text: "colour = 3",
        column: 1,
        word: "colour",
    },
    // `dims = ` is 7 characters: the value starts at column 8.
    Case {
        what: "wrong type",
        line: 6,
        text: "dims = \"a\"",
        column: 8,
        word: "invalid type",
    },
    // `rho = [` is 7 characters, `1e-2, ` 6 more: the second element is at column 14.
    Case {
        what: "negative rho",
        line: 8,
        text: "rho = [1e-2, -1e-3]",
        column: 14,
        word: "positive",
    },
    // rho equal to R = 1.0 is the boundary of rho < R (docs/theory.md §1; src/class.rs).
    Case {
        what: "rho >= half_width",
        line: 8,
        text: "rho = [1e-3, 1.0]",
        column: 14,
        word: "smaller than the half-width",
    },
    Case {
        what: "empty dims grid",
        line: 6,
        text: "dims = []",
        column: 8,
        word: "empty",
    },
    // `methods = ` is 10 characters.
    Case {
        what: "empty methods",
        line: 15,
        text: "methods = []",
        column: 11,
        word: "empty",
    },
    // `methods = [` is 11 characters, `"midpoint", ` 12 more: the string starts at 24.
    Case {
        what: "unknown method",
        line: 15,
        text: "methods = [\"midpoint\", \"newton\"]",
        column: 24,
        word: "unknown method",
    },
    // `name = ` is 7 characters (line 12 is inside [adversary]).
    Case {
        what: "unknown adversary",
        line: 12,
        text: "name = \"nope\"",
        column: 8,
        word: "unknown adversary",
    },
    // `budget = ` is 9 characters.
    Case {
        what: "budget 0",
        line: 17,
        text: "budget = 0",
        column: 10,
        word: "at least 1",
    },
    // `seeds = [` is 9 characters, `0, 1, ` 6 more: the repeated 0 is at column 16.
    Case {
        what: "duplicate seed",
        line: 16,
        text: "seeds = [0, 1, 0]",
        column: 16,
        word: "twice",
    },
    // `dim = ` is 6 characters (line 20 is inside [charts]); 3 is not in [1, 2, 4].
    Case {
        what: "charts.dim not in the grid",
        line: 20,
        text: "dim = 3",
        column: 7,
        word: "not in the grid",
    },
];

#[test]
fn base_scenario_is_valid() {
    // Guards the cases below: each differs from a scenario that parses.
    let scenario = Scenario::parse(BASE, Path::new("bad.toml")).unwrap();
    assert_eq!(scenario.name, "bad");
    let grid = box_grid(&scenario);
    assert_eq!(grid.dims, vec![1, 2, 4]);
    assert_eq!(grid.chart_dim, 4);
    assert_eq!(grid.chart_accuracy, 1e-3);
}

#[test]
fn scenario_errors_name_path_line_and_column_through_the_library() {
    let path = Path::new("some/dir/bad.toml");
    for case in CASES {
        let text = with_line(case.line, case.text);
        let error = match Scenario::parse(&text, path) {
            Ok(_) => panic!("{}: parsed without error:\n{text}", case.what),
            Err(e) => e,
        };
        let message = error.to_string();
        match &error {
            Error::Scenario {
                path: p,
                line,
                column,
                reason,
            } => {
                assert_eq!(p, path, "{}: {message}", case.what);
                assert_eq!(
                    (*line, *column),
                    (case.line, case.column),
                    "{}: {message}",
                    case.what
                );
                assert!(
                    reason.contains(case.word),
                    "{}: reason lacks {:?}: {message}",
                    case.what,
                    case.word
                );
            }
            other => panic!("{}: not a scenario error: {other:?}", case.what),
        }
        let prefix = format!("some/dir/bad.toml:{}:{}: ", case.line, case.column);
        assert!(message.starts_with(&prefix), "{}: {message}", case.what);
    }
}

#[test]
fn scenario_errors_through_the_binary_exit_2_with_file_line_column() {
    let dir = TempDir::new().unwrap();
    for case in CASES {
        std::fs::write(dir.path().join("bad.toml"), with_line(case.line, case.text)).unwrap();
        let out = Command::new(BIN)
            .current_dir(dir.path())
            .args(["sweep", "bad.toml", "--out", "results", "--no-charts"])
            .output()
            .unwrap();
        let err = String::from_utf8(out.stderr).unwrap();
        // Exit code 2 = bad input (src/cli/mod.rs, README).
        assert_eq!(out.status.code(), Some(2), "{}: {err}", case.what);
        let location = format!("bad.toml:{}:{}: ", case.line, case.column);
        assert!(err.contains(&location), "{}: {err}", case.what);
        assert!(err.contains(case.word), "{}: {err}", case.what);
        assert!(
            !dir.path().join("results").exists(),
            "{}: a results folder was created for an invalid scenario",
            case.what
        );
    }
}

#[test]
fn a_missing_scenario_file_exits_2_naming_it() {
    let dir = TempDir::new().unwrap();
    let out = Command::new(BIN)
        .current_dir(dir.path())
        .args(["sweep", "nowhere.toml", "--no-charts"])
        .output()
        .unwrap();
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("nowhere.toml"), "{err}");
}

const UNSORTED: &str = r#"name = "order"
description = "Grids given out of order."

[class]
family = "feasibility"
dims = [2, 1, 2]
half_width = 2.0
rho = [1e-3, 1e-1, 1e-2, 1e-1]
promise = "nonempty"

[adversary]
name = "halving"

[play]
methods = ["random", "midpoint", "ellipsoid"]
seeds = [7, 3]
budget = 50
"#;

#[test]
fn valid_scenario_sorts_grids_and_fills_defaults() {
    let s = Scenario::parse(UNSORTED, Path::new("order.toml")).unwrap();
    assert_eq!(s.name, "order");
    assert_eq!(s.description, "Grids given out of order.");
    // Dimensions ascending and distinct, rho descending and distinct (src/scenario.rs).
    let grid = box_grid(&s);
    assert_eq!(grid.dims, vec![1, 2]);
    assert_eq!(grid.accuracies, vec![1e-1, 1e-2, 1e-3]);
    assert_eq!(grid.half_width, 2.0);
    assert_eq!(
        grid.kind,
        BoxKind::Feasibility {
            promise: Promise::Nonempty
        }
    );
    assert_eq!(s.adversary, "halving");
    assert_eq!(s.methods, vec!["random", "midpoint", "ellipsoid"]);
    assert_eq!(s.seeds, vec![7, 3]);
    assert_eq!(s.budget, Some(50));
    assert!(!s.transcripts);
    // Without [charts]: the largest d and the smallest rho.
    assert_eq!(grid.chart_dim, 2);
    assert_eq!(grid.chart_accuracy, 1e-3);
    assert_eq!(s.source_text, UNSORTED);
}

#[test]
fn promise_defaults_to_may_be_empty() {
    let text = UNSORTED.replace("promise = \"nonempty\"\n", "");
    let s = Scenario::parse(&text, Path::new("order.toml")).unwrap();
    assert_eq!(
        box_grid(&s).kind,
        BoxKind::Feasibility {
            promise: Promise::MayBeEmpty
        }
    );
}

#[test]
fn games_are_in_canonical_order_and_deterministic_methods_play_the_first_seed() {
    let s = Scenario::parse(UNSORTED, Path::new("order.toml")).unwrap();
    // d ascending, then rho descending, then methods in file order, then seeds in file
    // order; midpoint and ellipsoid are deterministic (src/method/mod.rs METHODS), so
    // they play only the first seed, 7. Written out by hand.
    let mut expected: Vec<(usize, f64, &str, u64)> = Vec::new();
    for (d, rho) in [
        (1, 1e-1),
        (1, 1e-2),
        (1, 1e-3),
        (2, 1e-1),
        (2, 1e-2),
        (2, 1e-3),
    ] {
        expected.extend([
            (d, rho, "random", 7),
            (d, rho, "random", 3),
            (d, rho, "midpoint", 7),
            (d, rho, "ellipsoid", 7),
        ]);
    }
    let games: Vec<_> = s.games().collect();
    let got: Vec<(usize, f64, &str, u64)> = games
        .iter()
        .map(|g| {
            let Class::Feasibility(c) = &g.class else {
                panic!("feasibility")
            };
            (c.dim, c.rho, g.method.as_str(), g.seed)
        })
        .collect();
    assert_eq!(got, expected);
    for (i, g) in games.iter().enumerate() {
        assert_eq!(g.index, i as u64);
        let Class::Feasibility(c) = &g.class else {
            panic!("feasibility")
        };
        assert_eq!(c.half_width, 2.0);
        assert_eq!(c.promise, Promise::Nonempty);
    }
}

const LATTICE: &str = r#"name = "cube"
description = "Corner on the unit cubes."

[class]
family = "lattice"
dims = [1, 2, 3]
int_lower = 0
int_upper = 1
half_width = 1.0

[adversary]
name = "corner"

[play]
methods = ["enumerate", "lattice-centerpoint"]
seeds = [0]
budget = 100
"#;

/// The lattice family: a valid pure integer scenario, and its own mistakes with line
/// and column.
#[test]
fn lattice_scenarios_parse_strictly() {
    let path = Path::new("cube.toml");
    let scenario = Scenario::parse(LATTICE, path).unwrap();
    let games: Vec<_> = scenario.games().collect();
    assert_eq!(games.len(), 6, "3 dimensions x 2 deterministic methods");
    assert!(
        box_grid(&scenario).accuracies.iter().all(|a| a.is_nan()),
        "no accuracy"
    );
    let mistakes = [
        // (replaced line, new text, line, column, word)
        (
            9,
            "half_width = 1.0\nrho = [1e-2]",
            10,
            7,
            "has no accuracy",
        ),
        (8, "int_upper = -1", 8, 13, "exceeds upper bound"),
        (6, "dims = [1, 2, 3]\neps = [1e-2]", 7, 7, "takes rho"),
        (8, "int_upper = 1\ncont_dim = 2", 5, 10, "needs a grid rho"),
    ];
    for (line, text, at_line, at_column, word) in mistakes {
        let mut lines: Vec<&str> = LATTICE.lines().collect();
        lines[line - 1] = text;
        let bad = lines.join("\n");
        let error = Scenario::parse(&bad, path).expect_err(&bad);
        match &error {
            Error::Scenario {
                line,
                column,
                reason,
                ..
            } => {
                assert_eq!((*line, *column), (at_line, at_column), "{error}");
                assert!(reason.contains(word), "{error}");
            }
            other => panic!("not a scenario error: {other:?}"),
        }
    }
}

/// A first-order scenario (the slab funnel), valid; its mistakes name line and column.
const FIRST_ORDER: &str = r#"name = "funnel"
description = "First-order methods against the slab funnel."

[class]
family = "first-order"
dims = [1, 2]
half_width = 1.0
eps = [1e-2, 1e-4]
lipschitz = 1.0

[adversary]
name = "slab-funnel"

[play]
methods = ["kelley", "level"]
seeds = [0]
budget = 100
"#;

/// Bad first-order input (issue 14): L <= 0 or not finite, eps <= 0 or not finite, and
/// eps >= L R / 2 (where the first-order lower bound of docs/theory.md §2.4 asks for no query)
/// are refused with the line and column of the offending value.
#[test]
fn first_order_scenarios_refuse_bad_accuracy_and_lipschitz() {
    let path = Path::new("funnel.toml");
    let scenario = Scenario::parse(FIRST_ORDER, path).unwrap();
    assert_eq!(scenario.games().count(), 8, "2 dims x 2 eps x 2 methods");
    let mistakes = [
        // (replaced line, new text, line, column, word)
        (8, "eps = [1e-2, 0.5]", 8, 14, "L R / 2"),
        // L = 0.01 makes eps = 1e-2 larger than L R / 2 = 0.005: the first eps entry.
        (9, "lipschitz = 0.01", 8, 8, "L R / 2"),
        (8, "eps = [1e-2, -1e-3]", 8, 14, "eps"),
        (8, "eps = [nan]", 8, 8, "eps"),
        (9, "lipschitz = 0.0", 9, 13, "lipschitz"),
        (9, "lipschitz = inf", 9, 13, "lipschitz"),
    ];
    for (line, text, at_line, at_column, word) in mistakes {
        let mut lines: Vec<&str> = FIRST_ORDER.lines().collect();
        lines[line - 1] = text;
        let bad = lines.join("\n");
        let error = Scenario::parse(&bad, path).expect_err(&bad);
        match &error {
            Error::Scenario {
                line,
                column,
                reason,
                ..
            } => {
                assert_eq!((*line, *column), (at_line, at_column), "{error}");
                assert!(reason.contains(word), "{error}");
            }
            other => panic!("not a scenario error: {other:?}"),
        }
    }
}

/// Every family block of the scenario reference (docs/scenarios.md) parses as written,
/// completed with the common keys, so the reference cannot drift from the parser.
#[test]
fn the_scenario_reference_parses() {
    let doc =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/docs/scenarios.md")).unwrap();
    let blocks: Vec<&str> = doc
        .split("```toml\n")
        .skip(1)
        .map(|rest| rest.split("```").next().unwrap())
        .collect();
    let families = [
        ("feasibility", "halving", "midpoint", true),
        ("first-order", "slab-funnel", "level", true),
        ("lattice", "lattice-half", "enumerate", true),
        (
            "large-scale",
            "rotation",
            "unconstrained-subgradient",
            false,
        ),
    ];
    let mut parsed = 0;
    for block in &blocks {
        let Some((family, adversary, method, budget)) = families
            .iter()
            .find(|f| block.contains(&format!("family = \"{}\"", f.0)))
        else {
            continue;
        };
        let text = format!(
            "name = \"doc\"\ndescription = \"From the reference.\"\n{block}\n[adversary]\nname = \
             \"{adversary}\"\n[play]\nmethods = [\"{method}\"]\nseeds = [0]\n{}",
            if *budget { "budget = 100\n" } else { "" }
        );
        // `[charts]` comes after `[class]` in the reference; TOML tables may come in any
        // order, so appending `[adversary]` and `[play]` keeps the block as written.
        Scenario::parse(&text, std::path::Path::new("docs/scenarios.md"))
            .unwrap_or_else(|e| panic!("{family}: {e}\n{text}"));
        parsed += 1;
    }
    assert_eq!(parsed, 4, "one block per family");
    // The external-methods block parses too, with a program that exists.
    let external = blocks
        .iter()
        .find(|b| b.contains("[external.my-solver]"))
        .unwrap();
    let text = format!(
        "name = \"doc\"\ndescription = \"x\"\n[class]\nfamily = \"feasibility\"\ndims = [1]\n\
         half_width = 1.0\nrho = [0.1]\n[adversary]\nname = \"halving\"\n{}",
        external.replace("[play]\n", "[play]\nseeds = [0]\nbudget = 10\n")
    );
    Scenario::parse(&text, std::path::Path::new("docs/scenarios.md")).unwrap();
}
