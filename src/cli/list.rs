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
    println!("large-scale methods (docs/theory.md §3; scenario family \"large-scale\"):");
    for m in crate::method::large_scale::LARGE_SCALE_METHODS {
        let kind = if m.deterministic { "" } else { " (seeded)" };
        println!("  {:<18} {}{kind}", m.name, m.description);
    }
    println!("large-scale oracles (demonstrations, not certificates):");
    for o in crate::large_scale::game::ORACLES {
        println!("  {:<22} {}", o.name, o.description);
    }
    Ok(EXIT_OK)
}
