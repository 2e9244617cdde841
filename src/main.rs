//! The `naysayer` binary: parse, run, map errors to documented exit codes.

use std::process::ExitCode;

use clap::Parser;
use naysayer::cli::{self, Cli};

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli::run(cli) {
        Ok(code) => ExitCode::from(code),
        Err(error) => {
            let code = cli::exit_code_for(&error);
            let error = anyhow::Error::new(error);
            eprintln!("naysayer: error: {error:#}");
            ExitCode::from(code)
        }
    }
}
