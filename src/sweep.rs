//! Sweeps: every game of a scenario's grid, played in parallel, streamed to a tidy CSV.
//!
//! Output: `<root>/<scenario>/games.csv` (or `<root>/<scenario>/shard-K-of-N/games.csv`
//! for a shard), one row per game in canonical order (the `game` column, see
//! [`Scenario::games`]), with the columns of [`COLUMNS`]. Beside it, `scenario.toml` is
//! a copy of the scenario text, used to refuse resuming with a different scenario.
//!
//! Durability and resume: rows are written in game order and flushed one by one; a
//! worker's result waits in a small reorder buffer until every earlier game is written.
//! After an interruption (Ctrl-C or kill -9) the rerun reads the CSV, drops a torn last
//! line, checks that the rows are exactly the first games of the shard in order, and
//! plays only the rest. No row is ever duplicated or torn.
//!
//! Parallelism: one game is single-threaded and deterministic given its seed; `jobs`
//! workers in a rayon pool take games in order from a shared counter, so completed
//! games arrive nearly in order and the reorder buffer stays small; memory does not grow
//! with the number of games (rows are streamed, not held).

use std::collections::BTreeMap;
use std::fs::{File, OpenOptions};
use std::io::{BufRead, BufReader, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc;

use crate::bounds::{centre_of_gravity_upper_bound, ellipsoid_upper_bound, halving_lower_bound};
use crate::certificate::Outcome;
use crate::class::{Class, Promise};
use crate::error::Error;
use crate::runner::{self, GameSpec};
use crate::scenario::{GridGame, Scenario};
use crate::transcript::Ending;

/// The columns of `games.csv`, in order. Timing columns (`wall_time_ms`) are the only
/// ones that differ between two runs of the same sweep.
///
/// `accuracy` is rho (feasibility, mixed-integer) or eps (first-order); `ratio` is R/rho
/// or L R/eps; both are empty for pure integer classes, which have no accuracy. `dim` is
/// the grid dimension: d, or the integer dimension n for lattice classes, whose
/// continuous dimension and integer box are in `cont_dim`, `int_lower`, `int_upper`
/// (empty for the other families). `lipschitz` and `certified_uncertainty` are empty
/// for feasibility classes, `promise` for first-order ones; bound columns are empty
/// where the class has no proven number (for lattice classes `lower_bound` is the
/// lattice-halving bound of docs/theory.md §4, pure integer only; for first-order classes
/// the slab-funnel bound of docs/theory.md §2.4, deterministic methods).
pub const COLUMNS: &[&str] = &[
    "game",
    "scenario",
    "family",
    "adversary",
    "method",
    "seed",
    "dim",
    "half_width",
    "accuracy",
    "ratio",
    "lipschitz",
    "promise",
    "cont_dim",
    "int_lower",
    "int_upper",
    "budget",
    "queries_used",
    "censored",
    "certified_lower_bound",
    "certified_uncertainty",
    "outcome",
    "verified",
    "lower_bound",
    "upper_centre_of_gravity",
    "upper_ellipsoid",
    "wall_time_ms",
];

/// Columns that hold timings (excluded when comparing two runs).
pub const TIMING_COLUMNS: &[&str] = &["wall_time_ms"];

/// A slice of a sweep: shard `index` (1-based) of `count`; game g belongs to shard
/// (g mod count) + 1.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Shard {
    /// 1-based shard number.
    pub index: u64,
    /// Number of shards.
    pub count: u64,
}

impl Shard {
    /// Parses `K/N` with 1 <= K <= N.
    pub fn parse(text: &str) -> Result<Shard, String> {
        let (k, n) = text
            .split_once('/')
            .ok_or_else(|| format!("shard {text:?} must look like K/N, for example 2/8"))?;
        let index: u64 = k
            .trim()
            .parse()
            .map_err(|_| format!("shard number {k:?} is not a whole number"))?;
        let count: u64 = n
            .trim()
            .parse()
            .map_err(|_| format!("shard count {n:?} is not a whole number"))?;
        if count == 0 || index == 0 || index > count {
            return Err(format!("shard {text:?} needs 1 <= K <= N"));
        }
        Ok(Shard { index, count })
    }

    fn owns(&self, game: u64) -> bool {
        game % self.count == self.index - 1
    }
}

/// Settings of a sweep.
#[derive(Clone, Debug)]
pub struct SweepSettings {
    /// Worker threads (at least 1). Default: the number of cores.
    pub jobs: usize,
    /// Play only this shard.
    pub shard: Option<Shard>,
    /// Root folder of the results (default `results`).
    pub root: PathBuf,
    /// Show a progress bar on stderr when it is a terminal.
    pub progress: bool,
}

/// What a sweep did.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepSummary {
    /// Games in this shard (or the whole grid).
    pub games: u64,
    /// Games found finished from an earlier run.
    pub resumed: u64,
    /// Games played now.
    pub played: u64,
    /// Games whose certificate the verifier rejected (adversary bugs).
    pub rejected: u64,
    /// The CSV written.
    pub csv: PathBuf,
}

/// The folder a sweep (or shard) writes to.
pub fn output_dir(scenario: &Scenario, settings: &SweepSettings) -> PathBuf {
    let base = scenario.results_dir(&settings.root);
    match settings.shard {
        None => base,
        Some(s) => base.join(format!("shard-{}-of-{}", s.index, s.count)),
    }
}

/// Runs (or resumes) a sweep.
pub fn run(scenario: &Scenario, settings: &SweepSettings) -> Result<SweepSummary, Error> {
    let dir = output_dir(scenario, settings);
    std::fs::create_dir_all(&dir).map_err(|source| Error::Io {
        action: "cannot create results folder",
        path: dir.clone(),
        source,
    })?;
    claim_folder(&dir, scenario)?;
    let games: Vec<GridGame> = scenario
        .games()
        .into_iter()
        .filter(|g| settings.shard.is_none_or(|s| s.owns(g.index)))
        .collect();
    let csv_path = dir.join("games.csv");
    let (done, kept_bytes) = resume_point(&csv_path, &games)?;
    let mut csv = OpenOptions::new()
        .append(true)
        .create(true)
        .open(&csv_path)
        .map_err(|source| Error::Io {
            action: "cannot write",
            path: csv_path.clone(),
            source,
        })?;
    let write_error = |source: std::io::Error| Error::Io {
        action: "cannot write",
        path: csv_path.clone(),
        source,
    };
    if kept_bytes == 0 {
        csv.write_all(format!("{}\n", COLUMNS.join(",")).as_bytes())
            .map_err(write_error)?;
    }
    let remaining = &games[done..];
    let transcripts = scenario
        .transcripts
        .then(|| scenario.results_dir(&settings.root).join("transcripts"));
    if let Some(t) = &transcripts {
        std::fs::create_dir_all(t).map_err(|source| Error::Io {
            action: "cannot create results folder",
            path: t.clone(),
            source,
        })?;
    }
    let bar = progress_bar(settings.progress, games.len() as u64, done as u64);
    let jobs = settings.jobs.max(1);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(jobs)
        .build()
        .map_err(|e| Error::Io {
            action: "cannot start worker threads for",
            path: dir.clone(),
            source: std::io::Error::other(e),
        })?;
    let next = AtomicUsize::new(0);
    let (sender, receiver) = mpsc::channel::<(usize, Result<(String, bool), Error>)>();
    let mut rejected = 0u64;
    let mut failure: Option<Error> = None;
    pool.in_place_scope(|scope| {
        for _ in 0..jobs {
            let sender = sender.clone();
            let next = &next;
            let transcripts = transcripts.as_deref();
            scope.spawn(move |_| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                let Some(game) = remaining.get(i) else { break };
                let row = play_row(scenario, game, transcripts);
                if sender.send((i, row)).is_err() {
                    break;
                }
            });
        }
        drop(sender);
        let mut pending: BTreeMap<usize, (String, bool)> = BTreeMap::new();
        let mut written = 0usize;
        for (i, row) in receiver {
            match row {
                Ok(row) => {
                    pending.insert(i, row);
                }
                Err(e) => {
                    // Stop handing out games; keep what is already written.
                    next.store(usize::MAX / 2, Ordering::SeqCst);
                    failure.get_or_insert(e);
                }
            }
            while let Some((row, verified)) = pending.remove(&written) {
                if !verified {
                    rejected += 1;
                }
                if let Err(e) = csv.write_all(row.as_bytes()).and_then(|_| csv.flush()) {
                    next.store(usize::MAX / 2, Ordering::SeqCst);
                    failure.get_or_insert(write_error(e));
                    break;
                }
                written += 1;
                if let Some(bar) = &bar {
                    bar.inc(1);
                }
            }
        }
    });
    if let Some(bar) = &bar {
        bar.finish_and_clear();
    }
    if let Some(e) = failure {
        return Err(e);
    }
    Ok(SweepSummary {
        games: games.len() as u64,
        resumed: done as u64,
        played: remaining.len() as u64,
        rejected,
        csv: csv_path,
    })
}

fn progress_bar(enabled: bool, total: u64, done: u64) -> Option<indicatif::ProgressBar> {
    if !enabled || !std::io::stderr().is_terminal() {
        return None;
    }
    let bar = indicatif::ProgressBar::with_draw_target(
        Some(total),
        indicatif::ProgressDrawTarget::stderr(),
    );
    if let Ok(style) = indicatif::ProgressStyle::with_template(
        "{bar:40} {pos}/{len} games, {elapsed} elapsed, about {eta} left",
    ) {
        bar.set_style(style);
    }
    bar.set_position(done);
    Some(bar)
}

/// Writes `scenario.toml` into a fresh folder, or checks that an existing one matches.
fn claim_folder(dir: &Path, scenario: &Scenario) -> Result<(), Error> {
    let path = dir.join("scenario.toml");
    match std::fs::read_to_string(&path) {
        Ok(existing) if existing == scenario.source_text => Ok(()),
        Ok(_) => Err(Error::Results {
            path,
            reason: "these results were written by a different scenario text; remove the \
                     folder (or rename the scenario) to start afresh"
                .into(),
        }),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            std::fs::write(&path, &scenario.source_text).map_err(|source| Error::Io {
                action: "cannot write",
                path,
                source,
            })
        }
        Err(source) => Err(Error::Io {
            action: "cannot read",
            path,
            source,
        }),
    }
}

/// How many leading games of `games` the CSV already holds, and how many bytes of it are
/// whole lines; truncates a torn last line.
fn resume_point(path: &Path, games: &[GridGame]) -> Result<(usize, u64), Error> {
    let (rows, good_bytes) = match scan_csv(path, games)? {
        None => return Ok((0, 0)),
        Some(found) => found,
    };
    let file = OpenOptions::new()
        .write(true)
        .open(path)
        .map_err(|source| Error::Io {
            action: "cannot write",
            path: path.to_path_buf(),
            source,
        })?;
    file.set_len(good_bytes).map_err(|source| Error::Io {
        action: "cannot write",
        path: path.to_path_buf(),
        source,
    })?;
    Ok((rows, good_bytes))
}

/// Checks a games.csv against the games it should hold, in order: the header, the
/// number of fields, and the `game` column. Returns the number of whole rows and the
/// length in bytes of the whole lines (a torn last line is not counted); `None` when
/// the file does not exist.
fn scan_csv(path: &Path, games: &[GridGame]) -> Result<Option<(usize, u64)>, Error> {
    let bad = |reason: String| Error::Results {
        path: path.to_path_buf(),
        reason,
    };
    let file = match File::open(path) {
        Ok(f) => f,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(source) => {
            return Err(Error::Io {
                action: "cannot read",
                path: path.to_path_buf(),
                source,
            })
        }
    };
    let mut reader = BufReader::new(file);
    let mut line = Vec::new();
    let mut good_bytes: u64 = 0;
    let mut rows = 0usize;
    let mut line_no = 0usize;
    loop {
        line.clear();
        let n = reader
            .read_until(b'\n', &mut line)
            .map_err(|source| Error::Io {
                action: "cannot read",
                path: path.to_path_buf(),
                source,
            })?;
        if n == 0 || line.last() != Some(&b'\n') {
            break; // end, or a torn last line
        }
        line_no += 1;
        let text = String::from_utf8_lossy(&line);
        let text = text.trim_end();
        if line_no == 1 {
            if text != COLUMNS.join(",") {
                return Err(bad(
                    "line 1: not the games.csv header of this version".into()
                ));
            }
        } else {
            let fields = split_csv_line(text);
            if fields.len() != COLUMNS.len() {
                return Err(bad(format!(
                    "line {line_no}: {} fields, expected {}",
                    fields.len(),
                    COLUMNS.len()
                )));
            }
            let expected = games.get(rows).map(|g| g.index);
            if fields[0].parse::<u64>().ok() != expected || expected.is_none() {
                return Err(bad(format!(
                    "line {line_no}: game {} is not the next game of this sweep",
                    fields[0]
                )));
            }
            rows += 1;
        }
        good_bytes += n as u64;
    }
    Ok(Some((rows, good_bytes)))
}

/// Plays one game and formats its CSV row (with the trailing newline); the flag says
/// whether the verifier accepted the certificate.
fn play_row(
    scenario: &Scenario,
    game: &GridGame,
    transcripts: Option<&Path>,
) -> Result<(String, bool), Error> {
    let spec = GameSpec {
        class: game.class.clone(),
        adversary: scenario.adversary.clone(),
        method: game.method.clone(),
        seed: game.seed,
        budget: scenario.budget,
        transcript: transcripts.map(|t| t.join(format!("game-{}.jsonl", game.index))),
    };
    let report = match scenario.external_method(&game.method) {
        Some(entry) => {
            let settings = crate::method::external::ExternalSettings {
                answer_timeout: std::time::Duration::from_secs_f64(entry.answer_timeout),
                ..Default::default()
            };
            runner::run_external(&spec, &entry.command, &settings)?
        }
        None => runner::run(&spec)?,
    };
    let censored = matches!(report.record.ending, Ending::BudgetExhausted);
    let (lower, uncertainty, outcome, verified) = match &report.verdict {
        Ok(v) => (
            v.certified_lower_bound()
                .map_or(String::new(), |b| b.to_string()),
            v.certified_uncertainty
                .map_or(String::new(), |u| u.to_string()),
            outcome_name(&v.outcome).to_string(),
            "yes",
        ),
        Err(e) => (String::new(), String::new(), format!("rejected: {e}"), "no"),
    };
    let facts = ClassFacts::of(&game.class);
    let fields: Vec<String> = vec![
        game.index.to_string(),
        scenario.name.clone(),
        facts.family.into(),
        scenario.adversary.clone(),
        game.method.clone(),
        game.seed.to_string(),
        facts.dim.to_string(),
        facts.half_width.to_string(),
        number(facts.accuracy),
        number(facts.ratio),
        facts.lipschitz.map_or(String::new(), |l| l.to_string()),
        facts.promise.unwrap_or_default().into(),
        facts
            .lattice
            .map_or(String::new(), |(d, _, _)| d.to_string()),
        facts
            .lattice
            .map_or(String::new(), |(_, l, _)| l.to_string()),
        facts
            .lattice
            .map_or(String::new(), |(_, _, u)| u.to_string()),
        scenario.budget.to_string(),
        report.record.queries_used.to_string(),
        censored.to_string(),
        lower,
        uncertainty,
        outcome,
        verified.into(),
        opt(facts.lower_bound),
        opt(facts.upper_centre_of_gravity),
        opt(facts.upper_ellipsoid),
        format!("{:.3}", report.wall_time.as_secs_f64() * 1e3),
    ];
    Ok((csv_row(&fields), report.verdict.is_ok()))
}

/// A number cell; NaN (no such number) is written as an empty cell.
fn number(value: f64) -> String {
    if value.is_nan() {
        String::new()
    } else {
        value.to_string()
    }
}

fn opt(value: Option<u64>) -> String {
    value.map_or(String::new(), |v| v.to_string())
}

/// The per-class numbers a games.csv row records.
#[derive(Clone, Debug, PartialEq)]
pub struct ClassFacts {
    /// "feasibility" or "first-order".
    pub family: &'static str,
    /// Dimension d.
    pub dim: usize,
    /// Half-width R.
    pub half_width: f64,
    /// rho or eps.
    pub accuracy: f64,
    /// R/rho or L R/eps.
    pub ratio: f64,
    /// L (first-order).
    pub lipschitz: Option<f64>,
    /// The promise (feasibility).
    pub promise: Option<&'static str>,
    /// Continuous dimension, integer lower and upper bound (lattice classes).
    pub lattice: Option<(usize, i64, i64)>,
    /// The proven lower bound, where the class has one with a constant.
    pub lower_bound: Option<u64>,
    /// The centre-of-gravity upper bound.
    pub upper_centre_of_gravity: Option<u64>,
    /// The ellipsoid upper bound.
    pub upper_ellipsoid: Option<u64>,
}

impl ClassFacts {
    /// The facts of a class.
    pub fn of(class: &Class) -> ClassFacts {
        match class {
            Class::Feasibility(c) => ClassFacts {
                family: "feasibility",
                dim: c.dim,
                half_width: c.half_width,
                accuracy: c.rho,
                ratio: c.half_width / c.rho,
                lipschitz: None,
                promise: Some(match c.promise {
                    Promise::MayBeEmpty => "may-be-empty",
                    Promise::Nonempty => "nonempty",
                }),
                lattice: None,
                lower_bound: Some(halving_lower_bound(c)),
                upper_centre_of_gravity: Some(centre_of_gravity_upper_bound(c)),
                upper_ellipsoid: Some(ellipsoid_upper_bound(c)),
            },
            Class::FirstOrder(c) => ClassFacts {
                family: "first-order",
                dim: c.dim,
                half_width: c.half_width,
                accuracy: c.eps,
                ratio: c.lipschitz * c.half_width / c.eps,
                lipschitz: Some(c.lipschitz),
                promise: None,
                lattice: None,
                lower_bound: Some(crate::bounds::slab_funnel_lower_bound(c)),
                upper_centre_of_gravity: Some(
                    crate::bounds::first_order_centre_of_gravity_upper_bound(c),
                ),
                upper_ellipsoid: None,
            },
            Class::Lattice(c) => ClassFacts {
                family: if c.cont_dim == 0 {
                    "lattice"
                } else {
                    "mixed-integer"
                },
                dim: c.int_dim(),
                half_width: c.half_width,
                accuracy: if c.cont_dim == 0 {
                    crate::scenario::NO_ACCURACY
                } else {
                    c.rho
                },
                ratio: if c.cont_dim == 0 {
                    f64::NAN
                } else {
                    c.half_width / c.rho
                },
                lipschitz: None,
                promise: None,
                lattice: Some((c.cont_dim, c.lower[0], c.upper[0])),
                lower_bound: crate::bounds::lattice_half_lower_bound(c),
                upper_centre_of_gravity: None,
                upper_ellipsoid: None,
            },
        }
    }
}

/// A short stable name for an outcome (CSV and charts).
pub fn outcome_name(outcome: &Outcome) -> &'static str {
    match outcome {
        Outcome::OutputRefuted { .. } => "output-refuted",
        Outcome::EmptyRefuted { .. } => "empty-refuted",
        Outcome::EmptyBreaksPromise => "empty-breaks-promise",
        Outcome::OutputStands => "output-stands",
        Outcome::BudgetExhausted => "budget-exhausted",
        Outcome::MethodFailed { .. } => "method-failed",
    }
}

/// Quotes a CSV field when it holds a comma, a quote or a line break (RFC 4180).
pub fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!(
            "\"{}\"",
            text.replace('"', "\"\"").replace(['\n', '\r'], " ")
        )
    } else {
        text.to_string()
    }
}

/// One CSV line (with its line break) from unquoted fields.
pub fn csv_row(fields: &[String]) -> String {
    let mut row = fields
        .iter()
        .map(|f| csv_field(f))
        .collect::<Vec<_>>()
        .join(",");
    row.push('\n');
    row
}

/// Splits one CSV line into fields (RFC 4180 quoting, no embedded line breaks).
pub fn split_csv_line(line: &str) -> Vec<String> {
    let mut fields = Vec::new();
    let mut field = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (quoted, c) {
            (true, '"') if chars.peek() == Some(&'"') => {
                field.push('"');
                chars.next();
            }
            (true, '"') => quoted = false,
            (false, '"') if field.is_empty() => quoted = true,
            (false, ',') => fields.push(std::mem::take(&mut field)),
            (_, c) => field.push(c),
        }
    }
    fields.push(field);
    fields
}

/// Merges shard folders `<root>/<scenario>/shard-K-of-N/games.csv` into
/// `<root>/<scenario>/games.csv`, in game order, exactly as an unsharded run writes it.
/// Every shard must be complete.
pub fn merge(scenario_dir: &Path) -> Result<PathBuf, Error> {
    let mut shard_dirs: Vec<(Shard, PathBuf)> = Vec::new();
    let entries = std::fs::read_dir(scenario_dir).map_err(|source| Error::Io {
        action: "cannot read",
        path: scenario_dir.to_path_buf(),
        source,
    })?;
    for entry in entries.flatten() {
        let name = entry.file_name().to_string_lossy().to_string();
        if let Some(rest) = name.strip_prefix("shard-") {
            if let Some((k, n)) = rest.split_once("-of-") {
                if let Ok(shard) = Shard::parse(&format!("{k}/{n}")) {
                    shard_dirs.push((shard, entry.path()));
                }
            }
        }
    }
    let bad = |reason: String| Error::Results {
        path: scenario_dir.to_path_buf(),
        reason,
    };
    let Some(count) = shard_dirs.first().map(|(s, _)| s.count) else {
        return Err(bad("no shard-K-of-N folders to merge".into()));
    };
    if shard_dirs.iter().any(|(s, _)| s.count != count) {
        return Err(bad("shard folders with different shard counts".into()));
    }
    shard_dirs.sort_by_key(|(s, _)| s.index);
    for k in 1..=count {
        if !shard_dirs.iter().any(|(s, _)| s.index == k) {
            return Err(bad(format!("shard {k}/{count} is missing")));
        }
    }
    let scenario = Scenario::from_file(&shard_dirs[0].1.join("scenario.toml"))?;
    claim_folder(scenario_dir, &scenario)?;
    let games = scenario.games();
    let mut rows: Vec<Vec<String>> = Vec::new();
    for (shard, dir) in &shard_dirs {
        let text = std::fs::read_to_string(dir.join("scenario.toml")).unwrap_or_default();
        if text != scenario.source_text {
            return Err(bad(format!(
                "shard {}/{} was written by a different scenario text",
                shard.index, shard.count
            )));
        }
        let path = dir.join("games.csv");
        let mine: Vec<&GridGame> = games.iter().filter(|g| shard.owns(g.index)).collect();
        let content = std::fs::read_to_string(&path).map_err(|source| Error::Io {
            action: "cannot read",
            path: path.clone(),
            source,
        })?;
        let mine: Vec<GridGame> = mine.into_iter().cloned().collect();
        let (whole_rows, whole_bytes) = scan_csv(&path, &mine)?.unwrap_or((0, 0));
        let torn = whole_bytes != content.len() as u64;
        let lines: Vec<&str> = content.lines().skip(1).take(whole_rows).collect();
        if torn || whole_rows != mine.len() {
            return Err(bad(format!(
                "shard {}/{} is incomplete ({} of {} games{}); rerun it first",
                shard.index,
                shard.count,
                whole_rows,
                mine.len(),
                if torn { ", last line torn" } else { "" }
            )));
        }
        rows.extend(lines.iter().map(|l| split_csv_line(l)));
    }
    rows.sort_by_key(|r| r[0].parse::<u64>().unwrap_or(u64::MAX));
    let out_path = scenario_dir.join("games.csv");
    let tmp = scenario_dir.join("games.csv.tmp");
    let mut text = format!("{}\n", COLUMNS.join(","));
    for row in &rows {
        text.push_str(&csv_row(row));
    }
    std::fs::write(&tmp, text).map_err(|source| Error::Io {
        action: "cannot write",
        path: tmp.clone(),
        source,
    })?;
    std::fs::rename(&tmp, &out_path).map_err(|source| Error::Io {
        action: "cannot write",
        path: out_path.clone(),
        source,
    })?;
    Ok(out_path)
}
