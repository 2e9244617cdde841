//! End-to-end tests of `naysayer sweep` and `naysayer merge`: resume after kill -9 and
//! after a torn last line, shards and merge, refusal of a changed scenario, and
//! independence from the number of workers. Runs are compared on every column of
//! `games.csv` except the timing ones (`naysayer::sweep::TIMING_COLUMNS`).

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

use naysayer::csv::split as split_csv_line;
use naysayer::family::boxes::COLUMNS;
use naysayer::scenario::Scenario;
use naysayer::sweep::TIMING_COLUMNS;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

/// A quick scenario (about 150 games, well under a second with -j 2 in the test
/// profile) for the tests that do not need to interrupt a running sweep.
const QUICK: &str = r#"name = "quick"
description = "Every built-in method against the halving adversary, small grid."

[class]
family = "feasibility"
dims = [1, 2, 3, 4, 6, 8]
half_width = 1.0
rho = [1e-2, 1e-3, 1e-4, 1e-5, 1e-6]

[adversary]
name = "halving"

[play]
methods = ["midpoint", "ellipsoid", "random"]
seeds = [0, 1, 2]
budget = 100000
"#;

/// A slower scenario for kill -9: games run d ascending, and the ellipsoid games at
/// d = 16..24 take from a few hundred milliseconds to about two seconds each, so the
/// second half of the rows leaves a wide window to kill the sweep in. A full run takes
/// about 3-5 s with -j 2 on the project's 2-core machine (measured).
const SLOW: &str = r#"name = "slow"
description = "Ellipsoid, random and midpoint up to d = 24, for kill-and-resume."

[class]
family = "feasibility"
dims = [1, 2, 4, 8, 12, 16, 20, 24]
half_width = 1.0
rho = [1e-2, 1e-4, 1e-6]

[adversary]
name = "halving"

[play]
methods = ["ellipsoid", "random", "midpoint"]
seeds = [0, 1, 2, 3, 4]
budget = 100000
"#;

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).expect("utf-8 output")
}

/// Runs the command and asserts exit code 0.
fn run_ok(dir: &Path, args: &[&str]) -> String {
    let out = run_in(dir, args);
    let stdout = text(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(0),
        "naysayer {args:?}\n{stdout}{}",
        text(&out.stderr)
    );
    stdout
}

/// Writes `scenario` as `<dir>/<file>` and sweeps it into `<dir>/<out>` with `extra`.
fn sweep(dir: &Path, file: &str, out: &str, extra: &[&str]) -> String {
    let mut args = vec!["sweep", file, "--out", out, "--no-charts"];
    args.extend_from_slice(extra);
    run_ok(dir, &args)
}

/// A parsed games.csv.
#[derive(Clone, Debug)]
struct Csv {
    rows: Vec<Vec<String>>,
}

/// Reads a games.csv and checks its shape: the header is `COLUMNS`, the file ends with
/// a newline, every row has every field, `game` values are distinct and ascending.
fn read_csv(path: &Path) -> Csv {
    let content = std::fs::read_to_string(path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    assert!(
        content.ends_with('\n'),
        "{}: last line is not terminated",
        path.display()
    );
    let mut lines = content.lines();
    assert_eq!(
        lines.next(),
        Some(COLUMNS.join(",").as_str()),
        "{}: header",
        path.display()
    );
    let rows: Vec<Vec<String>> = lines.map(split_csv_line).collect();
    let mut previous: Option<u64> = None;
    for (i, row) in rows.iter().enumerate() {
        assert_eq!(
            row.len(),
            COLUMNS.len(),
            "{}: line {} has {} fields: {row:?}",
            path.display(),
            i + 2,
            row.len()
        );
        let game: u64 = row[0]
            .parse()
            .unwrap_or_else(|_| panic!("{}: line {}: game {:?}", path.display(), i + 2, row[0]));
        // Strictly ascending: canonical order and no duplicate game.
        assert!(
            previous.is_none_or(|p| p < game),
            "{}: line {}: game {game} after game {previous:?}",
            path.display(),
            i + 2
        );
        previous = Some(game);
    }
    Csv { rows }
}

fn column(name: &str) -> usize {
    COLUMNS
        .iter()
        .position(|c| *c == name)
        .unwrap_or_else(|| panic!("no column {name}"))
}

/// The rows without the timing columns.
fn untimed(csv: &Csv) -> Vec<Vec<String>> {
    let timing: Vec<usize> = TIMING_COLUMNS.iter().map(|c| column(c)).collect();
    assert!(!timing.is_empty());
    csv.rows
        .iter()
        .map(|row| {
            row.iter()
                .enumerate()
                .filter(|(i, _)| !timing.contains(i))
                .map(|(_, f)| f.clone())
                .collect()
        })
        .collect()
}

/// Asserts two runs agree on every non-timing column, row by row, in written order.
fn assert_same_games(got: &Csv, expected: &Csv, what: &str) {
    let (got, expected) = (untimed(got), untimed(expected));
    assert_eq!(got.len(), expected.len(), "{what}: number of rows");
    for (g, e) in got.iter().zip(&expected) {
        assert_eq!(g, e, "{what}: rows differ");
    }
}

/// Asserts that the rows are exactly the scenario's games, in canonical order.
fn assert_canonical(csv: &Csv, scenario_text: &str) {
    let scenario = Scenario::parse(scenario_text, Path::new("s.toml")).unwrap();
    let games: Vec<_> = scenario.games().collect();
    assert_eq!(csv.rows.len(), games.len(), "one row per game");
    let (dim, rho, method, seed) = (
        column("dim"),
        column("accuracy"),
        column("method"),
        column("seed"),
    );
    for (row, game) in csv.rows.iter().zip(&games) {
        assert_eq!(row[0], game.index.to_string());
        let naysayer::class::Class::Feasibility(class) = &game.class else {
            panic!("feasibility scenario")
        };
        assert_eq!(row[dim], class.dim.to_string());
        assert_eq!(row[rho].parse::<f64>().unwrap(), class.rho);
        assert_eq!(row[method], game.method);
        assert_eq!(row[seed], game.seed.to_string());
    }
}

/// The uninterrupted -j 2 run of `QUICK`, computed once and shared by the tests.
fn quick_reference() -> &'static Csv {
    static REFERENCE: OnceLock<Csv> = OnceLock::new();
    REFERENCE.get_or_init(|| {
        let dir = TempDir::new().unwrap();
        std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
        sweep(dir.path(), "quick.toml", "full", &["-j", "2"]);
        let csv = read_csv(&dir.path().join("full/quick/games.csv"));
        assert_canonical(&csv, QUICK);
        csv
    })
}

/// Number of newline-terminated lines of a file (0 when it does not exist yet).
fn complete_lines(path: &Path) -> usize {
    std::fs::read(path).map_or(0, |b| b.iter().filter(|&&c| c == b'\n').count())
}

/// A results folder holding the first `rows` rows of the finished `QUICK` run in
/// `dir/<out>`, then `tail` (no newline): what a sweep killed mid-write leaves.
fn cut_quick_run(dir: &Path, out: &str, rows: usize, tail: &str) -> PathBuf {
    sweep(dir, "quick.toml", out, &["-j", "2"]);
    let csv = dir.join(out).join("quick/games.csv");
    let content = std::fs::read_to_string(&csv).unwrap();
    let mut kept: String = content
        .split_inclusive('\n')
        .take(rows + 1)
        .collect::<Vec<_>>()
        .concat();
    kept.push_str(tail);
    std::fs::write(&csv, kept).unwrap();
    csv
}

#[test]
fn kill_9_then_resume_equals_an_uninterrupted_run() {
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("slow.toml"), SLOW).unwrap();
    sweep(dir.path(), "slow.toml", "full", &["-j", "2"]);
    let reference = read_csv(&dir.path().join("full/slow/games.csv"));
    assert_canonical(&reference, SLOW);
    let total = reference.rows.len();

    let csv = dir.path().join("killed/slow/games.csv");
    let mut child = Command::new(BIN)
        .current_dir(dir.path())
        .args([
            "sweep",
            "slow.toml",
            "--out",
            "killed",
            "--no-charts",
            "-j",
            "2",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    // Kill once half the rows are written: the heavy games are all in the second half.
    let start = Instant::now();
    loop {
        if let Some(status) = child.try_wait().unwrap() {
            panic!("the sweep ended ({status}) before it could be killed; make SLOW slower");
        }
        if complete_lines(&csv).saturating_sub(1) >= total / 2 {
            break;
        }
        assert!(
            start.elapsed() < Duration::from_secs(120),
            "no progress in games.csv"
        );
        std::thread::sleep(Duration::from_millis(2));
    }
    child.kill().unwrap(); // SIGKILL on Unix
    child.wait().unwrap();
    let done = complete_lines(&csv) - 1;
    assert!(
        done >= total / 2 && done < total,
        "{done} of {total} rows after the kill"
    );

    let stdout = sweep(dir.path(), "slow.toml", "killed", &["-j", "2"]);
    let summary = format!("{total} games ({done} resumed, {} played)", total - done);
    assert!(
        stdout.contains(&summary),
        "expected {summary:?} in {stdout}"
    );
    let resumed = read_csv(&csv);
    assert_same_games(&resumed, &reference, "killed and resumed");

    // A third run finds everything done and changes nothing.
    let before = std::fs::read(&csv).unwrap();
    let stdout = sweep(dir.path(), "slow.toml", "killed", &["-j", "2"]);
    assert!(
        stdout.contains(&format!("{total} games ({total} resumed, 0 played)")),
        "{stdout}"
    );
    assert_eq!(std::fs::read(&csv).unwrap(), before);
}

#[test]
fn a_torn_last_line_is_dropped_and_replayed() {
    let reference = quick_reference();
    let total = reference.rows.len();
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    let done = total / 3;
    // Half of the next row, as a write cut short would leave it.
    let next_row = reference.rows[done].join(",");
    let half = &next_row[..next_row.len() / 2];
    let csv = cut_quick_run(dir.path(), "torn", done, half);
    assert_eq!(complete_lines(&csv), done + 1);

    let stdout = sweep(dir.path(), "quick.toml", "torn", &["-j", "2"]);
    let summary = format!("{total} games ({done} resumed, {} played)", total - done);
    assert!(
        stdout.contains(&summary),
        "expected {summary:?} in {stdout}"
    );
    assert_same_games(&read_csv(&csv), reference, "torn line resumed");
}

#[test]
fn a_run_killed_after_the_header_resumes_without_a_second_header() {
    // A sweep killed after writing the header but before its first row (a slow first
    // game) leaves a games.csv holding only the header.
    let reference = quick_reference();
    let total = reference.rows.len();
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    let csv = cut_quick_run(dir.path(), "header", 0, "");
    assert_eq!(complete_lines(&csv), 1);

    let stdout = sweep(dir.path(), "quick.toml", "header", &["-j", "2"]);
    assert!(
        stdout.contains(&format!("{total} games (0 resumed, {total} played)")),
        "{stdout}"
    );
    assert_same_games(&read_csv(&csv), reference, "resumed from the header alone");
}

#[test]
fn shards_merge_into_the_unsharded_output() {
    let reference = quick_reference();
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    for k in 1..=3u64 {
        let shard = format!("{k}/3");
        sweep(
            dir.path(),
            "quick.toml",
            "out",
            &["-j", "2", "--shard", &shard],
        );
        // Game g belongs to shard (g mod N) + 1 (src/sweep.rs).
        let csv = read_csv(
            &dir.path()
                .join(format!("out/quick/shard-{k}-of-3/games.csv")),
        );
        let expected: Vec<&Vec<String>> = reference
            .rows
            .iter()
            .filter(|r| r[0].parse::<u64>().unwrap() % 3 == k - 1)
            .collect();
        assert_eq!(csv.rows.len(), expected.len(), "shard {k}/3");
        for (row, e) in csv.rows.iter().zip(expected) {
            assert_eq!(row[0], e[0], "shard {k}/3");
        }
    }
    assert!(
        !dir.path().join("out/quick/games.csv").exists(),
        "a shard wrote the merged file"
    );
    let stdout = run_ok(dir.path(), &["merge", "out/quick", "--no-charts"]);
    assert!(stdout.contains("merged"), "{stdout}");
    let merged = read_csv(&dir.path().join("out/quick/games.csv"));
    assert_same_games(&merged, reference, "merged shards");
}

#[test]
fn merge_with_a_missing_shard_fails_naming_it() {
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    for shard in ["1/3", "3/3"] {
        sweep(
            dir.path(),
            "quick.toml",
            "out",
            &["-j", "2", "--shard", shard],
        );
    }
    let out = run_in(dir.path(), &["merge", "out/quick", "--no-charts"]);
    let err = text(&out.stderr);
    // An Error::Results, which src/cli/mod.rs `exit_code_for` maps to 2 (bad input).
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("shard 2/3 is missing"), "{err}");
    assert!(!dir.path().join("out/quick/games.csv").exists());
}

#[test]
fn merge_refuses_a_shard_with_a_torn_last_line() {
    // Shard 1 was killed mid-write and not rerun: its last line is torn, so it holds
    // one finished game fewer than it should. Merging must refuse it rather than
    // write the torn row into the merged games.csv ("Every shard must be complete",
    // src/sweep.rs `merge`).
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    for shard in ["1/3", "2/3", "3/3"] {
        sweep(
            dir.path(),
            "quick.toml",
            "out",
            &["-j", "2", "--shard", shard],
        );
    }
    let shard1 = dir.path().join("out/quick/shard-1-of-3/games.csv");
    let content = std::fs::read_to_string(&shard1).unwrap();
    let last = content.trim_end_matches('\n').rfind('\n').unwrap() + 1;
    let torn_at = last + (content.len() - last) / 2;
    std::fs::write(&shard1, &content[..torn_at]).unwrap();

    let out = run_in(dir.path(), &["merge", "out/quick", "--no-charts"]);
    let err = text(&out.stderr);
    assert_eq!(
        out.status.code(),
        Some(2),
        "merge accepted a torn shard: {err}"
    );
    assert!(err.contains("shard 1/3"), "{err}");
    assert!(!dir.path().join("out/quick/games.csv").exists());
}

#[test]
fn resuming_with_a_different_scenario_text_is_refused() {
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    sweep(dir.path(), "quick.toml", "out", &["-j", "2"]);
    let csv = dir.path().join("out/quick/games.csv");
    let before = std::fs::read(&csv).unwrap();
    // Same name, another budget.
    let changed = QUICK.replace("budget = 100000", "budget = 99999");
    assert_ne!(changed, QUICK);
    std::fs::write(dir.path().join("quick.toml"), &changed).unwrap();
    let out = run_in(
        dir.path(),
        &[
            "sweep",
            "quick.toml",
            "--out",
            "out",
            "--no-charts",
            "-j",
            "2",
        ],
    );
    let err = text(&out.stderr);
    // An Error::Results: exit code 2 (src/cli/mod.rs `exit_code_for`).
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("different scenario text"), "{err}");
    assert!(err.contains("scenario.toml"), "{err}");
    assert_eq!(
        std::fs::read(&csv).unwrap(),
        before,
        "games.csv was touched"
    );
    assert_eq!(
        std::fs::read_to_string(dir.path().join("out/quick/scenario.toml")).unwrap(),
        QUICK
    );
}

#[test]
fn results_do_not_depend_on_the_number_of_workers() {
    let reference = quick_reference(); // -j 2
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    for jobs in ["1", "3"] {
        let out = format!("j{jobs}");
        sweep(dir.path(), "quick.toml", &out, &["-j", jobs]);
        let csv = read_csv(&dir.path().join(&out).join("quick/games.csv"));
        assert_same_games(&csv, reference, &format!("-j {jobs} against -j 2"));
    }
}

/// The table `sweep` prints at the end holds the numbers of `games.csv`: per method, at
/// the hardest class (largest d, then largest R/rho), the median and range over seeds of
/// queries used and of the certified lower bound (recomputed here from the file).
#[test]
fn the_terminal_summary_holds_the_numbers_of_games_csv() {
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("quick.toml"), QUICK).unwrap();
    let out = Command::new(BIN)
        .current_dir(dir.path())
        .args(["sweep", "quick.toml", "--jobs", "2", "--no-charts"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    assert!(stdout.contains("at dim = 8, ratio = 1000000"), "{stdout}");
    let csv = std::fs::read_to_string(dir.path().join("results/quick/games.csv")).unwrap();
    let col = |name: &str| COLUMNS.iter().position(|c| *c == name).unwrap();
    let rows: Vec<Vec<String>> = csv.lines().skip(1).map(split_csv_line).collect();
    let median_and_range = |values: &mut Vec<f64>| {
        values.sort_by(f64::total_cmp);
        let n = values.len();
        let median = if n % 2 == 1 {
            values[n / 2]
        } else {
            (values[n / 2 - 1] + values[n / 2]) / 2.0
        };
        if values[0] == values[n - 1] {
            format!("{median}")
        } else {
            format!("{median} [{}, {}]", values[0], values[n - 1])
        }
    };
    for method in ["midpoint", "ellipsoid", "random"] {
        let at: Vec<&Vec<String>> = rows
            .iter()
            .filter(|r| {
                r[col("method")] == method && r[col("dim")] == "8" && r[col("ratio")] == "1000000"
            })
            .collect();
        assert!(!at.is_empty());
        let numbers =
            |name: &str| -> Vec<f64> { at.iter().map(|r| r[col(name)].parse().unwrap()).collect() };
        let used = median_and_range(&mut numbers("queries_used"));
        let certified = median_and_range(&mut numbers("certified_lower_bound"));
        let line = stdout
            .lines()
            .find(|l| l.starts_with(&format!("{method} ")))
            .unwrap_or_else(|| panic!("no line for {method}: {stdout}"));
        let cells: Vec<&str> = line[method.len()..]
            .split("  ")
            .map(str::trim)
            .filter(|c| !c.is_empty())
            .collect();
        assert_eq!(cells, vec![used.as_str(), certified.as_str()], "{line}");
    }
    let games = rows.len();
    assert!(
        stdout.contains(&format!(
            "{games} games in all: no refuted output, no failed game"
        )),
        "{stdout}"
    );
}
