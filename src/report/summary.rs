//! The short table `sweep` prints at the end of every scenario: one line per method at
//! the hardest class of the grid, and what went wrong anywhere in it.
//!
//! The hardest class is the last one in the grid's own order of difficulty: for the box
//! families the largest `dim`, then the largest `ratio` (R/rho or LR/eps; integer-only
//! classes have none); for the large-scale family the largest `horizon`. Medians are over
//! the seeds of that class, as in the report's tables.

use std::path::Path;

use super::games::{number, Games, Spread};
use crate::error::Error;

/// The summary of the results folder `dir`, whose `games.csv` has the family's
/// `columns`, as lines of text for the terminal.
pub fn terminal_summary(dir: &Path, columns: &[&str]) -> Result<String, Error> {
    let games = Games::read(&dir.join("games.csv"), columns)?;
    if games.rows.is_empty() {
        return Ok(String::new());
    }
    let has = |name: &str| games.columns.iter().any(|c| c == name);
    let large_scale = has("horizon");
    // The hardest class: the largest value of each key, in order.
    let keys: &[&str] = if large_scale {
        &["horizon"]
    } else {
        &["dim", "ratio"]
    };
    let mut hardest: Vec<usize> = (0..games.rows.len()).collect();
    let mut described = Vec::new();
    for key in keys {
        let c = games.col(key);
        let value = |r: usize| games.rows[r][c].parse::<f64>().ok();
        let Some(top) = hardest
            .iter()
            .filter_map(|&r| value(r))
            .max_by(f64::total_cmp)
        else {
            continue;
        };
        hardest.retain(|&r| value(r) == Some(top));
        described.push(format!("{key} = {}", number(top)));
    }
    let method = games.col("method");
    let mut methods: Vec<&str> = Vec::new();
    for row in &games.rows {
        if !methods.contains(&row[method].as_str()) {
            methods.push(&row[method]);
        }
    }
    let figure = if large_scale {
        ("gap", "gap (median)")
    } else {
        ("certified_lower_bound", "certified lower bound")
    };
    let label = format!("at {}", described.join(", "));
    let width = methods
        .iter()
        .map(|m| m.len())
        .chain([label.len()])
        .max()
        .unwrap_or(0);
    let mut out = format!("{label:<width$} {:>20} {:>22}\n", "queries used", figure.1);
    for name in &methods {
        let rows: Vec<usize> = hardest
            .iter()
            .copied()
            .filter(|&r| games.rows[r][method] == *name)
            .collect();
        if rows.is_empty() {
            continue;
        }
        let used = spread_text(&games, &rows, "queries_used")?;
        let censored = rows
            .iter()
            .any(|&r| games.rows[r][games.col("censored")] == "true");
        let second = spread_text(&games, &rows, figure.0)?;
        out.push_str(&format!(
            "{:<width$} {:>20} {:>22}\n",
            name,
            format!("{used}{}", if censored { " (censored)" } else { "" }),
            second
        ));
    }
    // Everything that went wrong anywhere in the grid, counted by outcome.
    let outcome = games.col("outcome");
    let count = |what: &[&str]| {
        games
            .rows
            .iter()
            .filter(|r| what.contains(&r[outcome].as_str()))
            .count()
    };
    let mut notes = Vec::new();
    let refuted = count(&["output-refuted", "empty-refuted"]);
    if refuted > 0 {
        notes.push(format!("{refuted} outputs refuted"));
    }
    let failed = count(&["method-failed"]);
    if failed > 0 {
        notes.push(format!("{failed} games the method failed"));
    }
    if has("verified") {
        let c = games.col("verified");
        let rejected = games.rows.iter().filter(|r| r[c] == "no").count();
        if rejected > 0 {
            notes.push(format!("{rejected} certificates REJECTED"));
        }
    }
    if has("holds") {
        let c = games.col("holds");
        let below = games.rows.iter().filter(|r| r[c] == "false").count();
        if below > 0 {
            notes.push(format!("{below} games BELOW their claimed lower curve"));
        }
    }
    out.push_str(&format!(
        "{} games in all: {}\n",
        games.rows.len(),
        if notes.is_empty() {
            "no refuted output, no failed game".to_string()
        } else {
            notes.join(", ")
        }
    ));
    Ok(out)
}

/// `median [min, max]`, or the one value when they agree, or `-` without numbers.
fn spread_text(games: &Games, rows: &[usize], column: &str) -> Result<String, Error> {
    Ok(match Spread::of(&games.numbers(rows, column)?) {
        None => "-".into(),
        Some(s) if s.min == s.max => number(s.median),
        Some(s) => format!(
            "{} [{}, {}]",
            number(s.median),
            number(s.min),
            number(s.max)
        ),
    })
}
