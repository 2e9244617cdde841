//! A compiled external method: serves a built-in naysayer method over the line
//! protocol on stdin/stdout (`naysayer::method::external::serve`), so that it can be
//! played with `--exec` like any program.
//!
//! ```sh
//! cargo build --release --example protocol_method
//! naysayer play -d 10 --exec -- target/release/examples/protocol_method midpoint
//! ```
//!
//! The first argument names the built-in method (default `midpoint`). Played through
//! the protocol it gives the same transcript as the built-in played in-process, apart
//! from the header's method name.

use std::io::{BufReader, BufWriter};
use std::process::ExitCode;

use naysayer::method::{self, external};

fn main() -> ExitCode {
    let name = std::env::args().nth(1).unwrap_or_else(|| "midpoint".into());
    let stdin = BufReader::new(std::io::stdin().lock());
    let stdout = BufWriter::new(std::io::stdout().lock());
    match external::serve(
        |class, seed| method::build(&name, class, seed),
        stdin,
        stdout,
    ) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("protocol_method: {error}");
            ExitCode::FAILURE
        }
    }
}
