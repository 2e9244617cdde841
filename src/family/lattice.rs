//! The lattice family: integer and mixed-integer feasibility over {l..u}^n x [-R, R]^d
//! with a separation oracle (docs/theory.md §4).
//!
//! Scenario keys (`[class]`): `family = "lattice"`, `dims` (grid of n), `int_lower`,
//! `int_upper` (the integer box, default 0 and 1), `cont_dim` d (default 0: pure
//! integer), `half_width` R, and `rho` (grid of accuracies) only when d > 0;
//! `[charts]`: `dim`, `rho`. Games end in certificates.

use crate::class::Class;
use crate::error::Error;
use crate::family::{boxes, Evidence, Family, Grid, ScenarioText};

/// The lattice family.
pub struct Lattice;

/// The registered instance.
pub const LATTICE: Lattice = Lattice;

impl Family for Lattice {
    fn name(&self) -> &'static str {
        "lattice"
    }

    fn evidence(&self) -> Evidence {
        Evidence::Certificate
    }

    fn parse(&self, text: &ScenarioText<'_>) -> Result<Box<dyn Grid>, Error> {
        Ok(Box::new(boxes::parse(text, self.name())?))
    }

    fn default_adversary(&self, class: &Class) -> &'static str {
        match class {
            Class::Lattice(c) if c.cont_dim > 0 => "mixed-corner",
            _ => "corner",
        }
    }
}
