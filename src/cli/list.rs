//! `naysayer list`: the families, the built-in methods and the adversaries.

use crate::adversary::{Scope, ADVERSARIES};
use crate::cli::EXIT_OK;
use crate::error::Error;
use crate::family::{Evidence, FAMILIES};
use crate::method::METHODS;

/// Runs `list`.
pub fn run() -> Result<u8, Error> {
    crate::say!("families (--class, or class.family in a scenario):");
    for f in FAMILIES {
        let evidence = match f.evidence() {
            Evidence::Certificate => "games end in certificates, checked exactly",
            Evidence::Demonstration => {
                "games end in demonstrations, checked to a stated tolerance (not certificates)"
            }
        };
        crate::say!("  {:<26} {evidence}", f.name());
    }
    for f in FAMILIES {
        crate::say!("{} methods:", f.name());
        for m in METHODS.iter().filter(|m| m.families.contains(&f.name())) {
            let kind = if m.deterministic { "" } else { " (seeded)" };
            crate::say!("  {:<26} {}{kind}", m.name, m.description);
        }
        crate::say!("{} adversaries:", f.name());
        for a in ADVERSARIES.iter().filter(|a| a.family == f.name()) {
            let scope = match a.scope {
                Scope::EveryMethod => "",
                Scope::SpanMethods => " (binds span methods only)",
            };
            crate::say!("  {:<26} {}{scope}", a.name, a.description);
        }
    }
    Ok(EXIT_OK)
}
