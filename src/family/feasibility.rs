//! The feasibility family: separation-oracle feasibility over a box (docs/theory.md §1).
//!
//! Scenario keys (`[class]`): `family = "feasibility"`, `dims` (grid of d), `half_width`
//! R, `rho` (grid of accuracies), `promise` (`"may-be-empty"`, the default, or
//! `"nonempty"`); `[charts]`: `dim`, `rho`. Games end in certificates.

use crate::class::Class;
use crate::error::Error;
use crate::family::{boxes, Evidence, Family, Grid, ScenarioText};

/// The feasibility family.
pub struct Feasibility;

/// The registered instance.
pub const FEASIBILITY: Feasibility = Feasibility;

impl Family for Feasibility {
    fn name(&self) -> &'static str {
        "feasibility"
    }

    fn evidence(&self) -> Evidence {
        Evidence::Certificate
    }

    fn parse(&self, text: &ScenarioText<'_>) -> Result<Box<dyn Grid>, Error> {
        Ok(Box::new(boxes::parse(text, self.name())?))
    }

    fn default_adversary(&self, _class: &Class) -> &'static str {
        "halving"
    }
}
