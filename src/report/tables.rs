//! The report's result tables, computed from `games.csv`: for the certificate families
//! one table per accuracy of queries used and certified lower bounds per method and
//! dimension; for the large-scale family one table per horizon of gaps against the
//! lower curve; and the list of every refuted output, failed game and rejected
//! certificate.

use std::path::Path;

use crate::chart::Flag;
use crate::error::Error;
use crate::family::boxes::{BoxGrid, BoxKind};
use crate::family::large_scale::LargeScaleGrid;
use crate::scenario::Scenario;

use super::document::{Block, Cell, Section, Table};
use super::games::{number, Games, Spread};

/// How the tables summarise games (printed above them, and what the tests recompute).
pub const RULES: &str = "Per method and dimension, over the seeds: queries used as median, \
     min and max over the games that ended with a standing output or by the budget (refuted \
     and failed games are counted apart and listed below; a censored game counts its budget, \
     and the censored column says how many were); certified lower bound as median, min and \
     max over the games with a verified certificate. Non-integer numbers are rounded to four \
     significant digits; games.csv has them in full.";

/// The large-scale counterpart of [`RULES`].
pub const GAP_RULES: &str = "Per method and horizon T, over the seeds: the gap f - f* as \
     median, min and max over the games that ended with an output (failed games are counted \
     apart and listed below); the lower curve at T; the median gap divided by the lower curve \
     (at least 1 where the curve holds); the method's own upper curve; and in how many games \
     whose lower curve is claimed it held. Non-integer numbers are rounded to four significant \
     digits; games.csv has them in full.";

fn spread_cells(values: &[f64]) -> [Cell; 3] {
    match Spread::of(values) {
        Some(s) => [
            Cell::text(number(s.median)),
            Cell::text(number(s.min)),
            Cell::text(number(s.max)),
        ],
        None => [Cell::text("-"), Cell::text("-"), Cell::text("-")],
    }
}

fn first_nonempty(games: &Games, rows: &[usize], column: &str) -> String {
    let c = games.col(column);
    rows.iter()
        .map(|&r| games.rows[r][c].as_str())
        .find(|v| !v.is_empty())
        .map_or("-".into(), |v| {
            v.parse::<f64>().map_or(v.to_string(), number)
        })
}

/// Whether a box-family row ended in a refuted output or a failure.
fn flagged(games: &Games, r: usize) -> bool {
    Flag::from_outcome(&games.rows[r][games.col("outcome")]).is_some()
}

/// The result tables of a certificate family (one per accuracy).
pub fn box_tables(scenario: &Scenario, grid: &BoxGrid, games: &Games) -> Result<Section, Error> {
    let (c_method, c_dim, c_acc) = (games.col("method"), games.col("dim"), games.col("accuracy"));
    let first_order = matches!(grid.kind, BoxKind::FirstOrder { .. });
    let dim_name = if matches!(grid.kind, BoxKind::Lattice { .. }) {
        "n"
    } else {
        "d"
    };
    let bound_columns: Vec<(&str, &str)> = [
        ("lower_bound", "lower bound line"),
        ("upper_centre_of_gravity", "centre of gravity line"),
        ("upper_ellipsoid", "ellipsoid line"),
    ]
    .into_iter()
    .filter(|(c, _)| {
        let i = games.col(c);
        games.rows.iter().any(|r| !r[i].is_empty())
    })
    .collect();
    let mut header: Vec<String> = [
        dim_name,
        "method",
        "games",
        "queries used: median",
        "min",
        "max",
        "censored (budget)",
        "refuted or failed",
        "certified lower bound: median",
        "min",
        "max",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    if first_order {
        header.extend([
            "certified uncertainty: median".into(),
            "min".into(),
            "max".into(),
        ]);
    }
    header.extend(bound_columns.iter().map(|(_, h)| h.to_string()));
    let mut blocks = vec![Block::Paragraph(RULES.into())];
    for (k, &accuracy) in grid.accuracies.iter().enumerate() {
        let mut rows = Vec::new();
        for &d in &grid.dims {
            for (look, m) in scenario.methods.iter().enumerate() {
                let picked: Vec<usize> = (0..games.rows.len())
                    .filter(|&r| {
                        let row = &games.rows[r];
                        let acc: f64 = row[c_acc].parse().unwrap_or(f64::NAN);
                        row[c_method] == *m
                            && row[c_dim] == d.to_string()
                            && acc.to_bits() == accuracy.to_bits()
                    })
                    .collect();
                if picked.is_empty() {
                    continue;
                }
                let kept: Vec<usize> = picked
                    .iter()
                    .copied()
                    .filter(|&r| !flagged(games, r))
                    .collect();
                let censored = kept
                    .iter()
                    .filter(|&&r| games.rows[r][games.col("censored")] == "true")
                    .count();
                let mut row = vec![
                    Cell::text(d.to_string()),
                    Cell {
                        text: m.clone(),
                        look: Some(look),
                    },
                    Cell::text(picked.len().to_string()),
                ];
                row.extend(spread_cells(&games.numbers(&kept, "queries_used")?));
                row.push(Cell::text(format!("{censored} of {}", kept.len())));
                row.push(Cell::text((picked.len() - kept.len()).to_string()));
                row.extend(spread_cells(
                    &games.numbers(&picked, "certified_lower_bound")?,
                ));
                if first_order {
                    row.extend(spread_cells(
                        &games.numbers(&picked, "certified_uncertainty")?,
                    ));
                }
                for (c, _) in &bound_columns {
                    row.push(Cell::text(first_nonempty(games, &picked, c)));
                }
                rows.push(row);
            }
        }
        if rows.is_empty() {
            continue;
        }
        let caption = if accuracy.is_nan() {
            "Pure integer class (no accuracy)".to_string()
        } else {
            let ratio = match grid.kind {
                BoxKind::FirstOrder { lipschitz, .. } => {
                    format!(
                        "LR/eps = {}",
                        number(lipschitz * grid.half_width / accuracy)
                    )
                }
                _ => format!("R/rho = {}", number(grid.half_width / accuracy)),
            };
            format!("{} = {} ({ratio})", grid.accuracy_name(), number(accuracy))
        };
        blocks.push(Block::Table(Table {
            caption,
            id: format!("results-{}", k + 1),
            header: header.clone(),
            rows,
        }));
    }
    Ok(Section {
        heading: "Queries used and certified lower bounds".into(),
        id: "results".into(),
        blocks,
    })
}

/// The result tables of the large-scale family (one per horizon).
pub fn gap_tables(
    scenario: &Scenario,
    grid: &LargeScaleGrid,
    games: &Games,
) -> Result<Section, Error> {
    let (c_method, c_t) = (games.col("method"), games.col("horizon"));
    let (c_outcome, c_claimed, c_holds) = (
        games.col("outcome"),
        games.col("claimed"),
        games.col("holds"),
    );
    let header: Vec<String> = [
        "T",
        "method",
        "games",
        "gap: median",
        "min",
        "max",
        "lower curve",
        "median gap / lower curve",
        "method's upper curve",
        "lower curve held",
        "failed",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let mut blocks = vec![Block::Paragraph(GAP_RULES.into())];
    for (k, &t) in grid.horizons.iter().enumerate() {
        let mut rows = Vec::new();
        for (look, m) in scenario.methods.iter().enumerate() {
            let picked: Vec<usize> = (0..games.rows.len())
                .filter(|&r| games.rows[r][c_method] == *m && games.rows[r][c_t] == t.to_string())
                .collect();
            if picked.is_empty() {
                continue;
            }
            let kept: Vec<usize> = picked
                .iter()
                .copied()
                .filter(|&r| games.rows[r][c_outcome] == "output")
                .collect();
            let gaps = games.numbers(&kept, "gap")?;
            let lower = games.numbers(&picked, "lower_bound")?.first().copied();
            let claimed: Vec<usize> = picked
                .iter()
                .copied()
                .filter(|&r| games.rows[r][c_claimed] == "yes")
                .collect();
            let held = claimed
                .iter()
                .filter(|&&r| games.rows[r][c_holds] == "yes")
                .count();
            let mut row = vec![
                Cell::text(t.to_string()),
                Cell {
                    text: m.clone(),
                    look: Some(look),
                },
                Cell::text(picked.len().to_string()),
            ];
            row.extend(spread_cells(&gaps));
            row.push(Cell::text(lower.map_or("-".into(), number)));
            row.push(Cell::text(match (Spread::of(&gaps), lower) {
                (Some(s), Some(l)) if l > 0.0 => number(s.median / l),
                _ => "-".into(),
            }));
            row.push(Cell::text(first_nonempty(games, &picked, "upper_bound")));
            row.push(Cell::text(if claimed.is_empty() {
                "not claimed".into()
            } else {
                format!("{held} of {}", claimed.len())
            }));
            row.push(Cell::text((picked.len() - kept.len()).to_string()));
            rows.push(row);
        }
        if !rows.is_empty() {
            blocks.push(Block::Table(Table {
                caption: format!("T = {t}"),
                id: format!("results-{}", k + 1),
                header: header.clone(),
                rows,
            }));
        }
    }
    Ok(Section {
        heading: "Gaps against the lower curve".into(),
        id: "results".into(),
        blocks,
    })
}

/// Every refuted output, failed game, rejected certificate and (large-scale) lower
/// curve that did not hold, with its game number and transcript.
pub fn exceptions_section(dir: &Path, games: &Games, large_scale: bool) -> Section {
    let c = |n: &str| games.col(n);
    let place = if large_scale { "horizon" } else { "dim" };
    let mut rows = Vec::new();
    for row in &games.rows {
        let outcome = &row[c("outcome")];
        let odd = if large_scale {
            outcome != "output" && outcome != "budget-exhausted" || row[c("holds")] == "no"
        } else {
            Flag::from_outcome(outcome).is_some() || row[c("verified")] == "no"
        };
        if !odd {
            continue;
        }
        let game = &row[c("game")];
        let transcript = format!("transcripts/game-{game}.jsonl");
        let mut cells = vec![
            Cell::text(game.clone()),
            Cell::text(row[c("method")].clone()),
            Cell::text(row[c("seed")].clone()),
            Cell::text(row[c(place)].clone()),
        ];
        if !large_scale {
            cells.push(Cell::text(row[c("accuracy")].clone()));
        }
        cells.extend([
            Cell::text(if large_scale && row[c("holds")] == "no" {
                format!("{outcome}; lower curve did not hold")
            } else {
                outcome.clone()
            }),
            Cell::text(row[c("queries_used")].clone()),
            Cell::text(if dir.join(&transcript).is_file() {
                transcript
            } else {
                "not written".into()
            }),
        ]);
        rows.push(cells);
    }
    let mut header = vec![
        "game".to_string(),
        "method".into(),
        "seed".into(),
        if large_scale { "T" } else { "dim" }.into(),
    ];
    if !large_scale {
        header.push("accuracy".into());
    }
    header.extend(["outcome".into(), "queries used".into(), "transcript".into()]);
    let blocks = if rows.is_empty() {
        vec![Block::Paragraph(
            "No refuted output, no failed game and no rejected certificate.".into(),
        )]
    } else {
        vec![
            Block::Paragraph(
                "A refuted output is never a lower bound (docs/theory.md §7.3); a rejected \
                 certificate is an adversary bug. Replay a game from its transcript with \
                 naysayer check."
                    .into(),
            ),
            Block::Table(Table {
                caption: format!("{} games", rows.len()),
                id: "exceptions".into(),
                header,
                rows,
            }),
        ]
    };
    Section {
        heading: "Refuted outputs and failed games".into(),
        id: "exceptions".into(),
        blocks,
    }
}
