//! The games of a box family's `games.csv`, read back for the charts: per method, grid
//! dimension and accuracy, each game's count, whether the budget ended it, and whether
//! it ended in a refuted output or a failure (drawn apart from the median and band).

use std::collections::BTreeMap;
use std::io::BufRead;
use std::path::Path;

use crate::chart::{Flag, FlaggedGame, Series, SeriesPoint};
use crate::csv::split as split_csv_line;
use crate::error::Error;
use crate::family::boxes::{COLUMNS, NO_ACCURACY};
use crate::family::Lineup;

/// One game of `games.csv`, as the charts need it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Game {
    /// Queries used (the budget when censored).
    pub(super) queries: u64,
    /// The budget ended the game.
    pub(super) censored: bool,
    /// A refuted output or a failure: not a completed game.
    pub(super) flag: Option<Flag>,
}

/// The games per (method, d, accuracy bits), and how many certificates the verifier
/// rejected.
pub(super) struct Table {
    pub(super) cells: BTreeMap<(String, usize, u64), Vec<Game>>,
    pub(super) rejected: usize,
}

/// Reads a box family's `games.csv`.
pub(super) fn read_table(csv: &Path) -> Result<Table, Error> {
    let file = std::fs::File::open(csv).map_err(|source| Error::Io {
        action: "cannot read",
        path: csv.to_path_buf(),
        source,
    })?;
    let column = |name: &str| {
        COLUMNS
            .iter()
            .position(|c| *c == name)
            .expect("known column")
    };
    let (m, d, r, q, c, o, v) = (
        column("method"),
        column("dim"),
        column("accuracy"),
        column("queries_used"),
        column("censored"),
        column("outcome"),
        column("verified"),
    );
    let mut table = Table {
        cells: BTreeMap::new(),
        rejected: 0,
    };
    for (n, line) in std::io::BufReader::new(file).lines().enumerate() {
        let line = line.map_err(|source| Error::Io {
            action: "cannot read",
            path: csv.to_path_buf(),
            source,
        })?;
        if n == 0 {
            continue;
        }
        let fields = split_csv_line(&line);
        let bad = |what: &str| Error::Results {
            path: csv.to_path_buf(),
            reason: format!("line {}: {what}", n + 1),
        };
        if fields.len() != COLUMNS.len() {
            return Err(bad("wrong number of fields"));
        }
        let dim: usize = fields[d].parse().map_err(|_| bad("dim is not a number"))?;
        let rho: f64 = if fields[r].is_empty() {
            NO_ACCURACY
        } else {
            fields[r]
                .parse()
                .map_err(|_| bad("accuracy is not a number"))?
        };
        let game = Game {
            queries: fields[q]
                .parse()
                .map_err(|_| bad("queries_used is not a number"))?,
            censored: fields[c] == "true",
            flag: Flag::from_outcome(&fields[o]),
        };
        if fields[v] == "no" {
            table.rejected += 1;
        }
        table
            .cells
            .entry((fields[m].clone(), dim, rho.to_bits()))
            .or_default()
            .push(game);
    }
    Ok(table)
}

/// Median, min and max over the completed (or censored) games of one cell; `None` when
/// every game of the cell is flagged.
pub(super) fn summarize(x: f64, games: &[Game]) -> Option<SeriesPoint> {
    let kept: Vec<&Game> = games.iter().filter(|g| g.flag.is_none()).collect();
    let mut q: Vec<f64> = kept.iter().map(|g| g.queries as f64).collect();
    if q.is_empty() {
        return None;
    }
    q.sort_by(f64::total_cmp);
    let n = q.len();
    let median = if n % 2 == 1 {
        q[n / 2]
    } else {
        0.5 * (q[n / 2 - 1] + q[n / 2])
    };
    Some(SeriesPoint {
        x,
        min: q[0],
        median,
        max: q[n - 1],
        censored: kept.iter().any(|g| g.censored),
    })
}

/// The look of method `method`: its place in the scenario's method list, so that it has
/// the same colour and marker in every chart of the folder (and in the report).
pub(super) fn look_of(lineup: &Lineup<'_>, method: &str) -> Option<usize> {
    lineup.methods.iter().position(|m| m == method)
}

/// One series per method of the lineup: for each `(x, d, accuracy)` of `cells_at`, the
/// summary of the completed games and every flagged game on its own.
pub(super) fn series_of(
    table: &Table,
    lineup: &Lineup<'_>,
    cells_at: &[(f64, usize, f64)],
) -> Vec<Series> {
    lineup
        .methods
        .iter()
        .map(|m| {
            let mut series = Series {
                label: m.clone(),
                look: look_of(lineup, m),
                ..Series::default()
            };
            for &(x, d, accuracy) in cells_at {
                let Some(games) = table.cells.get(&(m.clone(), d, accuracy.to_bits())) else {
                    continue;
                };
                series.points.extend(summarize(x, games));
                series.flagged.extend(games.iter().filter_map(|g| {
                    Some(FlaggedGame {
                        x,
                        y: g.queries as f64,
                        flag: g.flag?,
                    })
                }));
            }
            series
        })
        .filter(|s| !s.points.is_empty() || !s.flagged.is_empty())
        .collect()
}
