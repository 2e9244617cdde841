//! `naysayer list`: the built-in methods and adversaries.

use crate::adversary::ADVERSARIES;
use crate::cli::EXIT_OK;
use crate::error::Error;
use crate::method::METHODS;

/// Runs `list`.
pub fn run() -> Result<u8, Error> {
    println!("methods:");
    for m in METHODS {
        let kind = if m.deterministic { "" } else { " (seeded)" };
        println!("  {:<18} {}{kind}", m.name, m.description);
    }
    println!("adversaries:");
    for a in ADVERSARIES {
        println!("  {:<18} {}", a.name, a.description);
    }
    Ok(EXIT_OK)
}
