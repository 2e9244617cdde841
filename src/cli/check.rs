//! `naysayer check FILE`: re-verify a transcript.

use clap::Args;

use crate::certificate;
use crate::cli::play::{describe_outcome, lower_bound_text, queries_used_text};
use crate::cli::{describe_class, PathArg, EXIT_OK, EXIT_REJECTED};
use crate::error::Error;

/// Arguments of `naysayer check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The transcript file (JSON Lines).
    pub file: PathArg,
}

/// Runs `check`: prints the verdict; exit 0 when valid, 1 when rejected.
pub fn run(args: &CheckArgs) -> Result<u8, Error> {
    match certificate::verify_file(&args.file) {
        Ok(verdict) => {
            println!("valid certificate: {}", args.file.display());
            println!(
                "class                  {}",
                describe_class(&verdict.header.class)
            );
            println!(
                "method {} against adversary {}",
                verdict.header.method, verdict.header.adversary
            );
            println!(
                "queries used           {}",
                queries_used_text(verdict.queries_used, verdict.censored)
            );
            println!("certified lower bound  {}", lower_bound_text(&verdict));
            println!(
                "outcome                {}",
                describe_outcome(&verdict.outcome, &verdict.ending)
            );
            Ok(EXIT_OK)
        }
        Err(error @ Error::Transcript { .. }) => {
            println!("REJECTED: {}: {error}", args.file.display());
            Ok(EXIT_REJECTED)
        }
        Err(error) => Err(error),
    }
}
