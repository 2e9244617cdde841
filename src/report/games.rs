//! `games.csv` read back for the report: the header checked against the family's
//! columns, every row kept as text, and the summaries the tables show (median, min and
//! max over seeds).

use std::path::{Path, PathBuf};

use crate::csv::split;
use crate::error::Error;

/// The rows of a results folder's `games.csv`.
#[derive(Debug, Clone)]
pub struct Games {
    /// The file, for messages.
    pub path: PathBuf,
    /// Column names, in order.
    pub columns: Vec<String>,
    /// The rows, each as long as `columns`.
    pub rows: Vec<Vec<String>>,
}

impl Games {
    /// Reads `path`, whose header must be exactly `columns` (the family's).
    pub fn read(path: &Path, columns: &[&str]) -> Result<Games, Error> {
        let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
            action: "cannot read",
            path: path.to_path_buf(),
            source,
        })?;
        let bad = |line: usize, reason: String| Error::Results {
            path: path.to_path_buf(),
            reason: format!("line {line}: {reason}"),
        };
        let mut lines = text.lines();
        let header = lines.next().unwrap_or_default();
        if header != columns.join(",") {
            return Err(bad(
                1,
                format!(
                    "not the games.csv header of this family and version (expected {})",
                    columns.join(",")
                ),
            ));
        }
        let mut rows = Vec::new();
        for (i, line) in lines.enumerate() {
            let fields = split(line);
            if fields.len() != columns.len() {
                return Err(bad(
                    i + 2,
                    format!("{} fields, expected {}", fields.len(), columns.len()),
                ));
            }
            rows.push(fields);
        }
        Ok(Games {
            path: path.to_path_buf(),
            columns: columns.iter().map(|c| c.to_string()).collect(),
            rows,
        })
    }

    /// The position of column `name` (a column of the family, so always present).
    pub fn col(&self, name: &str) -> usize {
        self.columns
            .iter()
            .position(|c| c == name)
            .unwrap_or_else(|| panic!("games.csv has no column {name}"))
    }

    /// The numbers of column `name` over `rows`, skipping empty cells; an unreadable
    /// number is an error naming its line.
    pub fn numbers(&self, rows: &[usize], name: &str) -> Result<Vec<f64>, Error> {
        let c = self.col(name);
        let mut out = Vec::new();
        for &r in rows {
            let cell = &self.rows[r][c];
            if cell.is_empty() {
                continue;
            }
            out.push(cell.parse::<f64>().map_err(|_| Error::Results {
                path: self.path.clone(),
                reason: format!("line {}: {name} {cell:?} is not a number", r + 2),
            })?);
        }
        Ok(out)
    }
}

/// Median, min and max of some numbers (the median of an even count is the mean of the
/// middle two, as in the charts).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spread {
    /// The median.
    pub median: f64,
    /// The smallest.
    pub min: f64,
    /// The largest.
    pub max: f64,
}

impl Spread {
    /// The spread of `values`, `None` when there are none.
    pub fn of(values: &[f64]) -> Option<Spread> {
        let mut v = values.to_vec();
        v.sort_by(f64::total_cmp);
        let n = v.len();
        if n == 0 {
            return None;
        }
        let median = if n % 2 == 1 {
            v[n / 2]
        } else {
            0.5 * (v[n / 2 - 1] + v[n / 2])
        };
        Some(Spread {
            median,
            min: v[0],
            max: v[n - 1],
        })
    }
}

/// A number as the report prints it: integers in full, other numbers rounded to four
/// significant digits (plain between 0.001 and 100000, else in scientific notation).
pub fn number(v: f64) -> String {
    if !v.is_finite() {
        return "n/a".into();
    }
    if v.fract() == 0.0 && v.abs() < 1e15 {
        return format!("{v:.0}");
    }
    let a = v.abs();
    if (1e-3..1e5).contains(&a) {
        let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
        let text = format!("{v:.decimals$}");
        if text.contains('.') {
            text.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            text
        }
    } else {
        let text = format!("{v:.3e}");
        match text.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => text,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spreads_and_numbers() {
        let s = Spread::of(&[3.0, 1.0, 2.0, 10.0]).expect("values");
        assert_eq!((s.median, s.min, s.max), (2.5, 1.0, 10.0));
        assert_eq!(Spread::of(&[]), None);
        assert_eq!(number(7.0), "7");
        assert_eq!(number(2.5), "2.5");
        assert_eq!(number(0.0001234567), "1.235e-4");
        assert_eq!(number(0.056249999944439175), "0.05625");
        assert_eq!(number(12.3449), "12.34");
        assert_eq!(number(2.0e-7), "2e-7");
    }
}
