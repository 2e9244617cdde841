//! The charts of a sweep's results folder, drawn from `games.csv` and `scenario.toml`:
//! the folder's family names and draws them ([`crate::family::Grid::draw_charts`]; the
//! box families' charts are in `family/boxes/charts.rs`, the large-scale family's in
//! `family/large_scale/charts.rs`). Each chart is written as SVG and PNG with its data
//! beside it as CSV.

use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::scenario::Scenario;

/// Draws every chart of the results folder `dir`; returns the PNG paths.
pub fn draw_all(dir: &Path) -> Result<Vec<PathBuf>, Error> {
    let scenario = Scenario::from_file(&dir.join("scenario.toml"))?;
    scenario.grid.draw_charts(dir, &scenario.lineup())
}
