//! `naysayer report`: write `report.html` and `report.md` of a sweep's results folder
//! ([`crate::report`]).

use std::path::PathBuf;

use clap::Args;

use crate::cli::EXIT_OK;
use crate::error::Error;
use crate::report::{self, ReportOptions};

/// Arguments of `naysayer report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// The scenario's results folder (holding games.csv and scenario.toml).
    pub folder: PathBuf,
    /// The scenario file the sweep played, named in the report's "how to reproduce"
    /// (default: the folder's scenario.toml copy).
    #[arg(long)]
    pub scenario: Option<PathBuf>,
}

/// Runs `report`: prints the two files written.
pub fn run(args: &ReportArgs) -> Result<u8, Error> {
    let options = ReportOptions {
        scenario_path: args.scenario.clone(),
        results_root: None,
    };
    let files = report::write(&args.folder, &options)?;
    println!("{}", files.html.display());
    println!("{}", files.markdown.display());
    Ok(EXIT_OK)
}
