//! The `naysayer` binary: parse, run, map errors to documented exit codes.
//!
//! A closed standard output (a reader such as `head` exited) ends the command quietly
//! with exit code 4, as Unix tools end quietly on a broken pipe; any other failure to
//! write standard output or standard error is exit code 4 with a message where one can
//! still be written. Nothing panics on a closed or full output.

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;
use naysayer::cli::{self, output, Cli, EXIT_IO};
use naysayer::Error;

fn main() -> ExitCode {
    let cli = Cli::parse();
    let code = match cli::run(cli) {
        Ok(code) => code,
        Err(Error::Io { source, .. }) if source.kind() == std::io::ErrorKind::BrokenPipe => EXIT_IO,
        Err(error) => {
            let code = cli::exit_code_for(&error);
            let error = anyhow::Error::new(error);
            let mut err = std::io::stderr().lock();
            if writeln!(err, "naysayer: error: {error:#}").is_err() {
                return ExitCode::from(EXIT_IO);
            }
            code
        }
    };
    if output::stderr_failed() && code == cli::EXIT_OK {
        return ExitCode::from(EXIT_IO);
    }
    ExitCode::from(code)
}
