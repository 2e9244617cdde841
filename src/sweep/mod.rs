//! Sweeps: every game of a scenario's grid, played in parallel, streamed to a tidy CSV.
//! One engine for every family: the family's grid ([`crate::family::Grid`]) names the
//! columns, plays a game and writes its row; resume, shards and merge are shared.
//!
//! Output: `<root>/<scenario>/games.csv` (or `<root>/<scenario>/shard-K-of-N/games.csv`
//! for a shard), one row per game in canonical order (the `game` column, see
//! [`Scenario::games`]), with the family's columns. Beside it, `scenario.toml` is a copy
//! of the scenario text, used to refuse resuming with a different scenario.
//!
//! Durability and resume: rows are written in game order and flushed one by one; a
//! worker's result waits in a small reorder buffer until every earlier game is written.
//! After an interruption (Ctrl-C or kill -9) the rerun reads the CSV, drops a torn last
//! line, checks that every row is exactly the game of the shard it claims to be (its
//! identity columns against the grid), and plays only the rest. No row is ever
//! duplicated or torn.
//!
//! One writer per folder: the sweep holds the folder's lock ([`lock::FolderLock`]) while it
//! writes; a second sweep into the same folder refuses, naming the owner. Small files
//! (`scenario.toml`, a merged `games.csv`) are written to a temporary file and renamed,
//! so a crash leaves either the old file or the new one, never a torn one.
//!
//! Parallelism: one game is single-threaded and deterministic given its seed; `jobs`
//! workers in a rayon pool take games in order from a shared, lazily enumerated queue,
//! so completed games arrive nearly in order and the reorder buffer stays small; memory
//! does not grow with the number of games (rows are streamed, games enumerated lazily).

use std::collections::BTreeMap;
use std::fs::{File, OpenOptions};
use std::io::{BufRead, BufReader, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;

pub mod lock;

use crate::csv;
use crate::error::Error;
use crate::family::{self, GameReport};
use crate::runner::GameSpec;
use crate::scenario::{GameQueue, GridGame, Scenario};
use crate::transcript::Ending;

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
    /// Keep [`crate::progress::GAMES`] up to date (games finished of the shard's total) for
    /// a progress report to read.
    pub progress: bool,
    /// Start over: remove what an earlier run wrote (its table, scenario copy, external
    /// methods' fingerprints and transcripts) before playing.
    pub restart: bool,
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
    /// Games the verifier rejected (certificates: adversary bugs), or whose claimed lower
    /// curve did not hold or whose demonstration the judge refused.
    pub rejected: u64,
    /// Games (found finished or played now) that ended with the method failing (a broken
    /// external program, or a built-in method's internal failure), each with its row and
    /// outcome.
    pub failed: u64,
    /// True when a signal stopped the sweep: the rows written are kept, the rerun resumes.
    pub interrupted: bool,
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

/// The games of `scenario` that `shard` owns (all of them without a shard), lazily;
/// the games of other shards are skipped without being built.
fn shard_games<'a>(
    scenario: &'a Scenario,
    shard: Option<Shard>,
) -> impl Iterator<Item = GridGame> + Send + 'a {
    let (first, step) = shard.map_or((0, 1), |s| (s.index - 1, s.count));
    let step = usize::try_from(step).unwrap_or(usize::MAX);
    scenario
        .games()
        .skip(usize::try_from(first).unwrap_or(usize::MAX))
        .step_by(step)
}

/// Runs (or resumes) a sweep.
pub fn run(scenario: &Scenario, settings: &SweepSettings) -> Result<SweepSummary, Error> {
    let dir = output_dir(scenario, settings);
    std::fs::create_dir_all(&dir).map_err(|source| Error::Io {
        action: "cannot create results folder",
        path: dir.clone(),
        source,
    })?;
    let _lock = lock::FolderLock::acquire(&dir)?;
    if settings.restart {
        start_over(&dir)?;
    }
    claim_folder(&dir, scenario)?;
    claim_external_methods(&dir, scenario)?;
    check_programs(scenario)?;
    let total = shard_games(scenario, settings.shard).count() as u64;
    let csv_path = dir.join("games.csv");
    let Scanned {
        rows: done,
        bytes: kept_bytes,
        failed: failed_before,
    } = resume_point(&csv_path, scenario, settings.shard)?;
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
        csv.write_all(format!("{}\n", scenario.grid.columns().join(",")).as_bytes())
            .map_err(write_error)?;
    }
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
    let progress = settings.progress.then_some(&crate::progress::GAMES);
    let resumed = done;
    if let Some(counter) = progress {
        counter.set_total(total);
        counter.set(resumed);
    }
    let jobs = settings.jobs.max(1);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(jobs)
        .build()
        .map_err(|e| Error::Io {
            action: "cannot start worker threads for",
            path: dir.clone(),
            source: std::io::Error::other(e),
        })?;
    let queue = GameQueue::new(shard_games(scenario, settings.shard).skip(done as usize));
    let stop = AtomicBool::new(false);
    let (sender, receiver) = mpsc::channel::<(u64, Result<Played, Error>)>();
    let mut rejected = 0u64;
    let mut failed = failed_before;
    let mut interrupted = false;
    let mut played = 0u64;
    let mut failure: Option<Error> = None;
    pool.in_place_scope(|scope| {
        for _ in 0..jobs {
            let sender = sender.clone();
            let queue = &queue;
            let stop = &stop;
            let transcripts = transcripts.as_deref();
            scope.spawn(move |_| loop {
                if stop.load(Ordering::SeqCst) || crate::interrupt::requested() {
                    break;
                }
                let Some(game) = queue.next() else { break };
                let row = play_row(scenario, &game, transcripts);
                if sender.send((game.index, row)).is_err() {
                    break;
                }
            });
        }
        drop(sender);
        // Rows are written in game order: the next game index this shard expects.
        let mut expected = shard_games(scenario, settings.shard)
            .skip(done as usize)
            .map(|g| g.index);
        let mut next = expected.next();
        let mut pending: BTreeMap<u64, Played> = BTreeMap::new();
        for (index, row) in receiver {
            match row {
                Ok(row) => {
                    pending.insert(index, row);
                }
                Err(e) => {
                    // Stop handing out games; keep what is already written.
                    stop.store(true, Ordering::SeqCst);
                    failure.get_or_insert(e);
                }
            }
            while let Some(want) = next {
                let Some(done) = pending.remove(&want) else {
                    break;
                };
                let Played::Row {
                    text: row,
                    accepted,
                    method_failed,
                } = done
                else {
                    // A game a signal cut short is not finished: nothing from it on is
                    // written, and the rerun plays it again.
                    interrupted = true;
                    stop.store(true, Ordering::SeqCst);
                    next = None;
                    break;
                };
                if !accepted {
                    rejected += 1;
                }
                if method_failed {
                    failed += 1;
                }
                if let Err(e) = csv.write_all(row.as_bytes()).and_then(|_| csv.flush()) {
                    stop.store(true, Ordering::SeqCst);
                    failure.get_or_insert(write_error(e));
                    break;
                }
                played += 1;
                next = expected.next();
                if let Some(counter) = progress {
                    counter.set(resumed + played);
                }
            }
        }
    });
    if let Some(e) = failure {
        return Err(e);
    }
    Ok(SweepSummary {
        games: total,
        resumed: done,
        played,
        rejected,
        failed,
        interrupted: interrupted || crate::interrupt::requested(),
        csv: csv_path,
    })
}

/// Writes `scenario.toml` into a fresh folder, or checks that an existing one matches.
/// An empty `scenario.toml` (left by an older version killed while writing it) counts as
/// missing; a `games.csv` without a `scenario.toml` is refused (nothing says which
/// scenario wrote it).
fn claim_folder(dir: &Path, scenario: &Scenario) -> Result<(), Error> {
    let path = dir.join("scenario.toml");
    let existing = if path.exists() {
        match crate::files::read_capped(&path, crate::files::MAX_SMALL_FILE, "scenario copy")? {
            text if text.is_empty() => None,
            text => Some(text),
        }
    } else {
        None
    };
    match existing {
        Some(text) if text == scenario.source_text => Ok(()),
        Some(_) => Err(Error::Results {
            path,
            reason: "these results were written by a different scenario text; remove the \
                     folder (or rename the scenario) to start afresh"
                .into(),
        }),
        None if dir.join("games.csv").exists() => Err(Error::Results {
            path: dir.join("games.csv"),
            reason: "there is a games.csv but no scenario.toml beside it, so nothing says \
                     which scenario wrote its rows; remove the folder (or put the scenario \
                     back as scenario.toml) to go on"
                .into(),
        }),
        None => write_atomically(&path, scenario.source_text.as_bytes()),
    }
}

/// Writes `contents` to `path` through a temporary file in the same folder and a rename,
/// so that `path` holds either its old contents or all of the new ones.
pub fn write_atomically(path: &Path, contents: &[u8]) -> Result<(), Error> {
    let name = path
        .file_name()
        .map_or("file".into(), |n| n.to_string_lossy().into_owned());
    let tmp = path.with_file_name(format!(".{name}.{}.tmp", std::process::id()));
    let write = || -> std::io::Result<()> {
        let mut file = File::create(&tmp)?;
        file.write_all(contents)?;
        file.sync_all()?;
        std::fs::rename(&tmp, path)
    };
    write().map_err(|source| {
        let _ = std::fs::remove_file(&tmp);
        Error::Io {
            action: "cannot write",
            path: path.to_path_buf(),
            source,
        }
    })
}

/// How many leading games of the shard the CSV already holds, and how many bytes of it
/// are whole lines; truncates a torn last line.
fn resume_point(path: &Path, scenario: &Scenario, shard: Option<Shard>) -> Result<Scanned, Error> {
    let scanned = match scan_csv(path, scenario, shard)? {
        None => {
            return Ok(Scanned {
                rows: 0,
                bytes: 0,
                failed: 0,
            })
        }
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
    file.set_len(scanned.bytes).map_err(|source| Error::Io {
        action: "cannot write",
        path: path.to_path_buf(),
        source,
    })?;
    Ok(scanned)
}

/// Checks a games.csv against the games of the shard it should hold, in order: the
/// header, the number of fields, and every identity cell of every row. Returns the
/// number of whole rows and the length in bytes of the whole lines (a torn last line is
/// not counted); `None` when the file does not exist.
fn scan_csv(
    path: &Path,
    scenario: &Scenario,
    shard: Option<Shard>,
) -> Result<Option<Scanned>, Error> {
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
    let columns = scenario.grid.columns();
    let mut games = shard_games(scenario, shard);
    let mut reader = BufReader::new(file);
    let mut line = Vec::new();
    let mut good_bytes: u64 = 0;
    let mut rows = 0u64;
    let mut failed = 0u64;
    let outcome = columns.iter().position(|c| *c == "outcome");
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
            if text != columns.join(",") {
                return Err(bad(format!(
                    "line 1: not the games.csv header of the {} family in this version",
                    scenario.grid.family().name()
                )));
            }
        } else {
            let fields = csv::split(text);
            if fields.len() != columns.len() {
                return Err(bad(format!(
                    "line {line_no}: {} fields, expected {}",
                    fields.len(),
                    columns.len()
                )));
            }
            let Some(game) = games.next() else {
                return Err(bad(format!(
                    "line {line_no}: game {} is not a game of this sweep (it has {rows} games)",
                    fields[0]
                )));
            };
            let identity = scenario.grid.identity(&scenario.lineup(), &game);
            for ((column, want), found) in columns.iter().zip(&identity).zip(&fields) {
                if let Some(want) = want {
                    if want != found {
                        return Err(bad(format!(
                            "line {line_no}: {column} is {found:?}, but game {} of this sweep \
                             has {want:?}; these rows belong to another scenario or grid",
                            game.index
                        )));
                    }
                }
            }
            if outcome.is_some_and(|i| fields[i] == "method-failed") {
                failed += 1;
            }
            rows += 1;
        }
        good_bytes += n as u64;
    }
    Ok(Some(Scanned {
        rows,
        bytes: good_bytes,
        failed,
    }))
}

/// What [`scan_csv`] found in a games.csv.
struct Scanned {
    /// Whole rows that belong to the sweep.
    rows: u64,
    /// Length in bytes of the header and those rows.
    bytes: u64,
    /// Rows whose outcome is `method-failed`.
    failed: u64,
}

/// What playing one game of a sweep gave.
enum Played {
    /// A finished game: its CSV row (with the trailing newline), whether the verifier
    /// (or the demonstration judge) accepted it, and whether the method failed.
    Row {
        text: String,
        accepted: bool,
        method_failed: bool,
    },
    /// A signal cut the game short: not finished.
    Interrupted,
}

/// Plays one game and formats its CSV row. A program that cannot be started is an
/// error (outside the method's control: the game is not finished, the sweep stops and
/// the rerun plays it), not a failed game.
fn play_row(
    scenario: &Scenario,
    game: &GridGame,
    transcripts: Option<&Path>,
) -> Result<Played, Error> {
    let spec = GameSpec {
        class: game.class.clone(),
        adversary: scenario.adversary.clone(),
        method: game.method.clone(),
        seed: game.seed,
        budget: scenario.budget_for(&game.class),
        transcript: transcripts.map(|t| t.join(format!("game-{}.jsonl", game.index))),
    };
    let (mut player, flush) = family::build_player(&scenario.lineup(), &spec)?;
    let report: GameReport = family::play(&spec, player.as_mut(), flush)?;
    match report.ending() {
        Ending::Interrupted { .. } => return Ok(Played::Interrupted),
        Ending::MethodFailed { reason } if reason.contains(CANNOT_START) => {
            return Err(Error::MethodFailed {
                method: game.method.clone(),
                reason: format!(
                    "{reason} (game {} was not finished; fix the command and rerun the sweep \
                     to resume)",
                    game.index
                ),
            })
        }
        _ => {}
    }
    let cells = scenario.grid.row(&scenario.lineup(), game, &report);
    Ok(Played::Row {
        text: csv::row(&cells),
        accepted: report.accepted(),
        method_failed: matches!(report.ending(), Ending::MethodFailed { .. }),
    })
}

/// The words an external method's failure to start begins with
/// ([`crate::method::external`]).
const CANNOT_START: &str = "cannot start the program";

/// Removes what an earlier run wrote into `dir` (`sweep --restart`).
fn start_over(dir: &Path) -> Result<(), Error> {
    for name in ["games.csv", "scenario.toml", EXTERNAL_METHODS_FILE] {
        let path = dir.join(name);
        match std::fs::remove_file(&path) {
            Ok(()) => {}
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
            Err(source) => {
                return Err(Error::Io {
                    action: "cannot remove",
                    path,
                    source,
                })
            }
        }
    }
    let transcripts = dir.join("transcripts");
    if transcripts.is_dir() {
        std::fs::remove_dir_all(&transcripts).map_err(|source| Error::Io {
            action: "cannot remove",
            path: transcripts,
            source,
        })?;
    }
    Ok(())
}

/// The file beside `games.csv` that records what each external method was: one line
/// each, the name, its fingerprint ([`crate::family::ExternalEntry::fingerprint`]) and
/// the folder its relative command resolves against, separated by tabs.
pub const EXTERNAL_METHODS_FILE: &str = "external-methods.txt";

/// One line of [`EXTERNAL_METHODS_FILE`] (a missing field reads as empty).
pub struct ExternalRecord<'a> {
    /// The method's name in the scenario.
    pub name: &'a str,
    /// What the program was ([`crate::family::ExternalEntry::fingerprint`]).
    pub fingerprint: &'a str,
    /// The folder its relative command resolved against (empty when none).
    pub folder: &'a str,
}

impl<'a> ExternalRecord<'a> {
    /// Reads one line.
    pub fn parse(line: &'a str) -> ExternalRecord<'a> {
        let mut fields = line.split('\t');
        let mut next = || fields.next().unwrap_or_default();
        ExternalRecord {
            name: next(),
            fingerprint: next(),
            folder: next(),
        }
    }
}

/// Records what each external method of the scenario is (one [`ExternalRecord`] line
/// each), or, when resuming, checks that none has changed since the rows were written:
/// name and fingerprint decide; the folder may move with the scenario.
fn claim_external_methods(dir: &Path, scenario: &Scenario) -> Result<(), Error> {
    if scenario.external.is_empty() {
        return Ok(());
    }
    let text: String = scenario
        .external
        .iter()
        .map(|e| {
            let folder = e
                .working_dir
                .as_ref()
                .map_or(String::new(), |d| d.display().to_string());
            format!("{}\t{}\t{folder}\n", e.name, e.fingerprint())
        })
        .collect();
    let path = dir.join(EXTERNAL_METHODS_FILE);
    let has_rows = std::fs::metadata(dir.join("games.csv")).is_ok_and(|m| m.len() > 0);
    if path.exists() && has_rows {
        let old = crate::files::read_capped(&path, crate::files::MAX_SMALL_FILE, "record")?;
        for (line_old, line_new) in old.lines().zip(text.lines()) {
            let (was, now) = (
                ExternalRecord::parse(line_old),
                ExternalRecord::parse(line_new),
            );
            if (was.name, was.fingerprint) != (now.name, now.fingerprint) {
                let name = now.name;
                return Err(Error::Results {
                    path: dir.to_path_buf(),
                    reason: format!(
                        "the external method {name:?} changed since these results were \
                         written (was: {}; now: {}); its finished games would mix two \
                         programs: rerun with --restart to start over (or write elsewhere \
                         with --out)",
                        was.fingerprint, now.fingerprint,
                    ),
                });
            }
        }
        if old == text {
            return Ok(());
        }
    }
    write_atomically(&path, text.as_bytes())
}

/// File extensions of scripts that an interpreter named as the program runs.
const SCRIPT_EXTENSIONS: &[&str] = &["py", "jl", "R", "r", "rb", "js", "pl", "sh", "m", "lua"];

/// Refuses, before any game, an external program that cannot be found: a program named
/// by a path must exist, a bare name must be on `PATH`, and a script argument (a file
/// name ending in one of [`SCRIPT_EXTENSIONS`]) must exist.
fn check_programs(scenario: &Scenario) -> Result<(), Error> {
    for entry in &scenario.external {
        let command = entry.resolved_command();
        let program = Path::new(&command[0]);
        let found = if command[0].contains('/') {
            program.is_file()
        } else {
            std::env::var_os("PATH").is_some_and(|paths| {
                std::env::split_paths(&paths).any(|p| p.join(program).is_file())
            })
        };
        // A script an interpreter is to run (`python3 solver.py`) must exist too: else
        // every game would fail for a reason outside the method's control.
        let script = command[1..].iter().find(|arg| {
            !arg.starts_with('-')
                && Path::new(arg.as_str())
                    .extension()
                    .is_some_and(|e| SCRIPT_EXTENSIONS.contains(&e.to_string_lossy().as_ref()))
                && !match &entry.working_dir {
                    Some(dir) => dir.join(arg.as_str()),
                    None => Path::new(arg.as_str()).to_path_buf(),
                }
                .is_file()
        });
        let missing = if !found {
            Some(&entry.command[0])
        } else {
            script
        };
        if let Some(missing) = missing {
            return Err(Error::InvalidSetting {
                name: "external method",
                reason: format!(
                    "{:?}: cannot find the {} {:?}{}",
                    entry.name,
                    if found { "script" } else { "program" },
                    missing,
                    match &entry.working_dir {
                        Some(dir) => format!(
                            " (a relative path resolves against the scenario's folder {})",
                            dir.display()
                        ),
                        None => String::new(),
                    }
                ),
            });
        }
    }
    Ok(())
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
    let _lock = lock::FolderLock::acquire(scenario_dir)?;
    claim_folder(scenario_dir, &scenario)?;
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
        let mine = shard_games(&scenario, Some(*shard)).count() as u64;
        let content = std::fs::read_to_string(&path).map_err(|source| Error::Io {
            action: "cannot read",
            path: path.clone(),
            source,
        })?;
        let (whole_rows, whole_bytes) =
            scan_csv(&path, &scenario, Some(*shard))?.map_or((0, 0), |s| (s.rows, s.bytes));
        let torn = whole_bytes != content.len() as u64;
        if torn || whole_rows != mine {
            return Err(bad(format!(
                "shard {}/{} is incomplete ({} of {} games{}); rerun it first",
                shard.index,
                shard.count,
                whole_rows,
                mine,
                if torn { ", last line torn" } else { "" }
            )));
        }
        rows.extend(
            content
                .lines()
                .skip(1)
                .take(whole_rows as usize)
                .map(csv::split),
        );
    }
    rows.sort_by_key(|r| r[0].parse::<u64>().unwrap_or(u64::MAX));
    let out_path = scenario_dir.join("games.csv");
    let mut text = format!("{}\n", scenario.grid.columns().join(","));
    for row in &rows {
        text.push_str(&csv::row(row));
    }
    write_atomically(&out_path, text.as_bytes())?;
    Ok(out_path)
}
