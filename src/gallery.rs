//! The charts of a sweep's results folder, drawn from `games.csv` and `scenario.toml`:
//! the folder's family names and draws them ([`crate::family::Grid::draw_charts`]; the
//! box families' charts are in `family/boxes/charts.rs`, the large-scale family's in
//! `family/large_scale/charts.rs`). Each chart is written as SVG and PNG with its data
//! beside it as CSV.

use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::scenario::Scenario;

/// Draws every chart of the results folder `dir`; returns the PNG paths.
///
/// External methods run in the folder the sweep recorded for them
/// ([`crate::sweep::EXTERNAL_METHODS_FILE`]), so that a relative command resolves as it
/// did in the sweep, not against the results folder that holds the scenario's copy.
pub fn draw_all(dir: &Path) -> Result<Vec<PathBuf>, Error> {
    let mut scenario = Scenario::from_file(&dir.join("scenario.toml"))?;
    let record = dir.join(crate::sweep::EXTERNAL_METHODS_FILE);
    if !scenario.external.is_empty() && record.is_file() {
        let text = crate::files::read_capped(&record, crate::files::MAX_SMALL_FILE, "record")?;
        for record in text.lines().map(crate::sweep::ExternalRecord::parse) {
            let folder = PathBuf::from(record.folder);
            if let Some(entry) = scenario.external.iter_mut().find(|e| e.name == record.name) {
                if !record.folder.is_empty() && folder.is_dir() {
                    entry.working_dir = Some(folder);
                }
            }
        }
    }
    scenario.grid.draw_charts(dir, &scenario.lineup())
}
