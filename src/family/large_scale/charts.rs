//! The chart of a large-scale results folder: the gap against the horizon T (log-log),
//! one series per method (median over seeds with a min-max band; each method keeps its
//! colour and marker from its place in the scenario's method list), with the lower-bound
//! curves and each method's upper-bound curve (each in its own line style), failed games
//! drawn as their own marks, and footnotes saying what each curve assumes and whom the
//! adversary binds. Demonstrations, not certificates (docs/theory.md §3).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use crate::adversary::Scope;
use crate::bounds::large_scale::gap_bounds;
use crate::bounds::Side;
use crate::chart::{
    self, ChartSpec, Curve, CurveStyle, Flag, FlaggedGame, Scale, Series, SeriesPoint,
};
use crate::csv::split as split_csv_line;
use crate::error::Error;
use crate::family::large_scale::{LargeScaleGrid, COLUMNS};
use crate::family::Lineup;

/// Draws the gap-against-T chart of a large-scale results folder; returns the PNG path.
pub fn draw_all(
    dir: &Path,
    lineup: &Lineup<'_>,
    grid: &LargeScaleGrid,
) -> Result<Vec<PathBuf>, Error> {
    let csv = dir.join("games.csv");
    let text = std::fs::read_to_string(&csv).map_err(|source| Error::Io {
        action: "cannot read",
        path: csv.clone(),
        source,
    })?;
    let mut lines = text.lines();
    let header = lines.next().unwrap_or_default();
    if header != COLUMNS.join(",") {
        return Err(Error::Results {
            path: csv,
            reason: "line 1: not the large-scale games.csv header of this version".into(),
        });
    }
    let column = |name: &str| {
        COLUMNS
            .iter()
            .position(|c| *c == name)
            .expect("known column")
    };
    let (c_method, c_queries, c_gap) = (column("method"), column("horizon"), column("gap"));
    let (c_outcome, c_claimed, c_holds) = (column("outcome"), column("claimed"), column("holds"));
    let mut cells: BTreeMap<(String, u64), Vec<f64>> = BTreeMap::new();
    let mut failed: BTreeMap<String, Vec<FlaggedGame>> = BTreeMap::new();
    let mut broken = 0usize;
    for (i, line) in lines.enumerate() {
        let f = split_csv_line(line);
        let parsed = (f.len() == COLUMNS.len())
            .then(|| {
                Some((
                    f[c_queries].parse::<u64>().ok()?,
                    // An undefined gap (no output on a smooth class) is an empty cell.
                    if f[c_gap].is_empty() {
                        f64::NAN
                    } else {
                        f[c_gap].parse::<f64>().ok()?
                    },
                ))
            })
            .flatten();
        let Some((t, gap)) = parsed else {
            return Err(Error::Results {
                path: csv.clone(),
                reason: format!("line {}: malformed row", i + 2),
            });
        };
        if f[c_claimed] == "yes" && f[c_holds] == "no" || f[c_outcome].starts_with("rejected") {
            broken += 1;
        }
        if let Some(flag) = Flag::from_outcome(&f[c_outcome]) {
            // A failed game has no gap to show: it is marked at the lower curve.
            let y = f[column("lower_bound")].parse::<f64>().unwrap_or(f64::NAN);
            failed
                .entry(f[c_method].clone())
                .or_default()
                .push(FlaggedGame {
                    x: t as f64,
                    y: if gap.is_finite() { gap } else { y },
                    flag,
                });
            continue;
        }
        cells.entry((f[c_method].clone(), t)).or_default().push(gap);
    }
    let series: Vec<Series> = lineup
        .methods
        .iter()
        .enumerate()
        .map(|(look, m)| Series {
            label: m.clone(),
            look: Some(look),
            flagged: failed.get(m).cloned().unwrap_or_default(),
            points: grid
                .horizons
                .iter()
                .filter_map(|&t| {
                    let mut v = cells.get(&(m.clone(), t))?.clone();
                    v.retain(|g| g.is_finite() && *g > 0.0);
                    if v.is_empty() {
                        return None;
                    }
                    v.sort_by(f64::total_cmp);
                    Some(SeriesPoint {
                        x: t as f64,
                        min: v[0],
                        median: v[v.len() / 2],
                        max: v[v.len() - 1],
                        censored: false,
                    })
                })
                .collect(),
        })
        .filter(|s| !s.points.is_empty() || !s.flagged.is_empty())
        .collect();
    let (t_min, t_max) = (
        *grid.horizons.first().expect("non-empty") as f64,
        *grid.horizons.last().expect("non-empty") as f64,
    );
    let samples: Vec<u64> = {
        let mut g: Vec<u64> = (0..=40)
            .map(|k| (t_min * (t_max / t_min).powf(f64::from(k) / 40.0)).round() as u64)
            .chain(grid.horizons.iter().copied())
            .collect();
        g.sort_unstable();
        g.dedup();
        g
    };
    let mut curves: Vec<Curve> = Vec::new();
    let mut footnotes = Vec::new();
    let labels = gap_bounds(&grid.function, 1);
    let (mut lowers, mut uppers) = (0usize, 0usize);
    for (i, bound) in labels.iter().enumerate() {
        // Fixed looks for the folder: lower and upper curves numbered in the order of
        // gap_bounds, whether or not drawn.
        let look = match bound.side {
            Side::Lower => &mut lowers,
            Side::Upper => &mut uppers,
        };
        *look += 1;
        let look = *look - 1;
        let relevant = match bound.method {
            None => true,
            Some(m) => lineup.methods.iter().any(|s| s == m),
        };
        if !relevant {
            continue;
        }
        footnotes.push(match (bound.side, bound.method) {
            (Side::Upper, Some(m)) => {
                format!("{m} upper curve: {}; {}.", bound.formula, bound.source)
            }
            _ => format!("{}: {}.", bound.label, bound.source),
        });
        curves.push(Curve {
            label: bound.label.to_string(),
            points: samples
                .iter()
                .filter_map(|&t| Some((t as f64, gap_bounds(&grid.function, t)[i].gap?)))
                .collect(),
            style: match bound.side {
                Side::Lower => CurveStyle::LowerBound,
                Side::Upper => CurveStyle::UpperBound,
            },
            look: Some(look),
        });
    }
    if let Some(info) = crate::adversary::info(lineup.adversary) {
        footnotes.push(format!("Adversary {}: {}.", info.name, info.description));
        if info.scope == Scope::SpanMethods {
            let others: Vec<&str> = lineup
                .methods
                .iter()
                .filter(|m| crate::method::info(m).is_none_or(|i| !i.span))
                .map(String::as_str)
                .collect();
            if !others.is_empty() {
                footnotes.push(format!(
                    "A fixed function binds span methods only: the lower curves say nothing \
                     about {} (not span methods).",
                    others.join(", ")
                ));
            }
        }
    }
    if series.iter().any(|s| !s.flagged.is_empty()) {
        footnotes.push(
            "Failed games are drawn as their own marks (at their gap, or at the lower curve \
             when they have none), left out of the median and band."
                .into(),
        );
    }
    if broken > 0 {
        footnotes.push(format!(
            "{broken} games fell below a claimed lower curve or were refused by the judge \
             (the holds and outcome columns of games.csv)."
        ));
    }
    let spec = ChartSpec {
        title: format!(
            "Gap against queries T, {} class, {}",
            grid.function.kind(),
            lineup.adversary
        ),
        subtitle: Some(format!(
            "{}: d = {}, R = {}; demonstration, not a certificate (irrational constants, \
             compared to 1e-12 relative; docs/theory.md §3)",
            lineup.name,
            grid.function.dim(),
            grid.function.radius()
        )),
        x_label: "queries T".into(),
        y_label: "gap f - f* (median, min-max over seeds)".into(),
        x_scale: Scale::Log10,
        y_scale: Scale::Log10,
        x_integer: true,
        series,
        curves,
        footnotes,
        height: HEIGHT,
        ..ChartSpec::default()
    };
    Ok(vec![chart::draw(&spec, &dir.join("gap-vs-queries"))?.png])
}

/// Height of the chart: the default plus room for the footnotes.
const HEIGHT: u32 = 780;
