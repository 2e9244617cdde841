//! The first-order family: convex L-Lipschitz minimisation over a box with a value and
//! subgradient oracle (docs/theory.md §2).
//!
//! Scenario keys (`[class]`): `family = "first-order"`, `dims` (grid of d), `half_width`
//! R, `eps` (grid of accuracies), `lipschitz` L (default 1), `norm` (`"l1"`, `"l2"`, the
//! default, or `"linf"`); `[charts]`: `dim`, `eps`. Games end in certificates.

use crate::class::Class;
use crate::error::Error;
use crate::family::{boxes, Evidence, Family, Grid, ScenarioText};

/// The first-order family.
pub struct FirstOrder;

/// The registered instance.
pub const FIRST_ORDER: FirstOrder = FirstOrder;

impl Family for FirstOrder {
    fn name(&self) -> &'static str {
        "first-order"
    }

    fn evidence(&self) -> Evidence {
        Evidence::Certificate
    }

    fn parse(&self, text: &ScenarioText<'_>) -> Result<Box<dyn Grid>, Error> {
        Ok(Box::new(boxes::parse(text, self.name())?))
    }

    fn default_adversary(&self, _class: &Class) -> &'static str {
        "slab-funnel"
    }
}
