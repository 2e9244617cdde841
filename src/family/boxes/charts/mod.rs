//! The charts of a box family's results folder (feasibility, first-order, lattice),
//! drawn from `games.csv` and the scenario.
//!
//! For a feasibility scenario:
//! - `queries-vs-dim`: queries used against d at the scenario's chart rho, one series per
//!   method (median over seeds with a min-max band; censored games drawn distinctly),
//!   with the box-halving lower bound and the centre-of-gravity and ellipsoid upper
//!   bounds;
//! - `queries-vs-accuracy`: the same against log2(R/rho) at the chart dimension;
//! - `undecided`: log2 of the alive volume against the query index, one game per method
//!   (first seed) at the chart dimension and rho;
//! - `game-2d`: a picture of one two-dimensional game (the first method that supports
//!   d = 2, at the largest rho of the grid, so the picture stays legible).
//!
//! For a first-order scenario the same (a)-(c) against L R/eps, plus
//! `uncertainty-vs-queries` (certified uncertainty eps_cert against T, log-log). For a
//! lattice scenario (a) is against the integer dimension n with the lattice-halving
//! lower bound, the corner constructions' count and the centerpoint upper bound; (b)
//! only when there is a continuous part; (c) shows the alive lattice points (or the
//! mixed-integer measure).
//!
//! Every method keeps one colour and marker in all charts of the folder (its place in the
//! scenario's method list); every bound line keeps its own line style; refuted outputs
//! and failed games are drawn as their own marks, outside the median and band; each
//! chart says under the plot what its lines assume and what the adversary proves.
//!
//! Each chart is written as SVG and PNG with its data beside it as CSV.

mod games;
mod lines;
mod table;

use std::path::{Path, PathBuf};

use crate::chart::DEFAULT_WIDTH as WIDTH;
use crate::chart::{self, ChartSpec, Scale};
use crate::class::Class;
use crate::error::Error;
use crate::family::boxes::{BoxGrid, BoxKind as Family};
use crate::family::Lineup;

use lines::{bound_curves, folder_notes, FLAGGED_NOTE};
use table::{read_table, series_of};

/// Height of the gallery's line charts: the default plus room for the footnotes.
const HEIGHT: u32 = 780;

/// What every chart of one folder shares.
struct Context<'a> {
    lineup: &'a Lineup<'a>,
    grid: &'a BoxGrid,
    /// "name: adversary A, box ..., N seed(s), budget B".
    subtitle: String,
    /// The folder's footnotes (adversary, rejected certificates).
    notes: Vec<String>,
    budget: u64,
}

/// Draws every chart of the results folder `dir` of a box family; returns the PNG paths.
pub fn draw_all(dir: &Path, lineup: &Lineup<'_>, grid: &BoxGrid) -> Result<Vec<PathBuf>, Error> {
    let table = read_table(&dir.join("games.csv"))?;
    let budget = lineup.budget.unwrap_or(1);
    let r = grid.half_width;
    let domain = match grid.kind {
        Family::Lattice {
            int_lower: lo,
            int_upper: hi,
            cont_dim: 0,
        } => format!("{{{lo}..{hi}}}^n"),
        Family::Lattice {
            int_lower: lo,
            int_upper: hi,
            cont_dim: d,
        } => format!("{{{lo}..{hi}}}^n x [-{r}, {r}]^{d}"),
        _ => format!("[-{r}, {r}]^d"),
    };
    let cx = Context {
        lineup,
        grid,
        subtitle: format!(
            "{}: adversary {}, box {domain}, {} seed(s), budget {}",
            lineup.name,
            lineup.adversary,
            lineup.seeds.len(),
            budget,
        ),
        notes: folder_notes(lineup, table.rejected),
        budget,
    };
    let mut pngs = vec![queries_vs_dim(dir, &cx, &table)?];
    let pure_integer = matches!(grid.kind, Family::Lattice { cont_dim: 0, .. });
    if !pure_integer {
        pngs.push(queries_vs_accuracy(dir, &cx, &table)?);
    }
    pngs.extend(games::draw_replayed(dir, &cx)?);
    Ok(pngs)
}

/// R/rho or L R/eps of accuracy `accuracy`.
fn ratio_of(grid: &BoxGrid, accuracy: f64) -> f64 {
    match &grid.kind {
        Family::FirstOrder { lipschitz, .. } => lipschitz * grid.half_width / accuracy,
        Family::Feasibility { .. } | Family::Lattice { .. } => grid.half_width / accuracy,
    }
}

/// A query chart's footnotes: the lines', then the folder's, then flagged games'.
fn footnotes(cx: &Context<'_>, lines: Vec<String>, series: &[chart::Series]) -> Vec<String> {
    let mut notes = lines;
    notes.extend(cx.notes.iter().cloned());
    if series.iter().any(|s| !s.flagged.is_empty()) {
        notes.push(FLAGGED_NOTE.into());
    }
    notes
}

/// (a) Queries against d (or n) at the chart accuracy.
fn queries_vs_dim(dir: &Path, cx: &Context<'_>, table: &table::Table) -> Result<PathBuf, Error> {
    let grid = cx.grid;
    let rho = grid.chart_accuracy;
    let lattice = matches!(grid.kind, Family::Lattice { .. });
    let pure_integer = matches!(grid.kind, Family::Lattice { cont_dim: 0, .. });
    let first_order = matches!(grid.kind, Family::FirstOrder { .. });
    let cells: Vec<(f64, usize, f64)> = grid.dims.iter().map(|&d| (d as f64, d, rho)).collect();
    let series = series_of(table, cx.lineup, &cells);
    let classes: Vec<(f64, Class)> = grid
        .dims
        .iter()
        .filter_map(|&d| Some((d as f64, grid.class_at(d, rho).ok()?)))
        .collect();
    let (curves, line_notes) = bound_curves(&classes);
    let axis = if lattice {
        "integer dimension n"
    } else {
        "dimension d"
    };
    let spec = ChartSpec {
        title: if pure_integer {
            "Queries used against integer dimension n".to_string()
        } else {
            format!(
                "Queries used against {axis} ({} = {})",
                if first_order { "LR/eps" } else { "R/rho" },
                ratio_of(grid, rho)
            )
        },
        subtitle: Some(cx.subtitle.clone()),
        x_label: axis.into(),
        y_label: "queries used".into(),
        x_scale: Scale::Linear,
        y_scale: Scale::Log10,
        x_integer: true,
        y_integer: true,
        footnotes: footnotes(cx, line_notes, &series),
        series,
        curves,
        width: WIDTH,
        height: HEIGHT,
    };
    Ok(chart::draw(&spec, &dir.join("queries-vs-dim"))?.png)
}

/// (b) Queries against log2(R/rho) (or log2(LR/eps)) at the chart dimension.
fn queries_vs_accuracy(
    dir: &Path,
    cx: &Context<'_>,
    table: &table::Table,
) -> Result<PathBuf, Error> {
    let grid = cx.grid;
    let d = grid.chart_dim;
    let first_order = matches!(grid.kind, Family::FirstOrder { .. });
    let log_ratio = |rho: f64| ratio_of(grid, rho).log2();
    let cells: Vec<(f64, usize, f64)> = grid
        .accuracies
        .iter()
        .map(|&rho| (log_ratio(rho), d, rho))
        .collect();
    let series = series_of(table, cx.lineup, &cells);
    let classes: Vec<(f64, Class)> = grid
        .accuracies
        .iter()
        .filter_map(|&rho| Some((log_ratio(rho), grid.class_at(d, rho).ok()?)))
        .collect();
    let (curves, line_notes) = bound_curves(&classes);
    let spec = ChartSpec {
        title: match grid.kind {
            Family::Lattice { cont_dim, .. } => {
                format!("Queries used against accuracy, n = {d}, d = {cont_dim}")
            }
            _ => format!("Queries used against accuracy, d = {d}"),
        },
        subtitle: Some(cx.subtitle.clone()),
        x_label: if first_order {
            "log2(LR/eps)"
        } else {
            "log2(R/rho)"
        }
        .into(),
        y_label: "queries used".into(),
        x_scale: Scale::Linear,
        y_scale: Scale::Log10,
        y_integer: true,
        footnotes: footnotes(cx, line_notes, &series),
        series,
        curves,
        width: WIDTH,
        height: HEIGHT,
        ..ChartSpec::default()
    };
    Ok(chart::draw(&spec, &dir.join("queries-vs-accuracy"))?.png)
}

#[cfg(test)]
mod tests;
