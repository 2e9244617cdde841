//! `naysayer chart`: draw the charts of a sweep's results folder.

use std::path::{Path, PathBuf};

use clap::Args;

use crate::cli::EXIT_OK;
use crate::error::Error;

/// Arguments of `naysayer chart`.
#[derive(Debug, Args)]
pub struct ChartArgs {
    /// The scenario's results folder (holding games.csv and scenario.toml).
    pub folder: PathBuf,
}

/// Runs `chart`.
pub fn run(args: &ChartArgs) -> Result<u8, Error> {
    for path in draw_all(&args.folder)? {
        crate::say!("{}", path.display());
    }
    Ok(EXIT_OK)
}

/// Draws every chart of a results folder; returns the PNG paths.
pub fn draw_all(folder: &Path) -> Result<Vec<PathBuf>, Error> {
    crate::gallery::draw_all(folder)
}
