//! The model the polytope cutting-plane methods share (`centroid`, `sampled-centroid`,
//! `analytic-center`): the outward-rounded polytope of everything the answers allow, the
//! point answered `inside`, and on first-order classes the objective bookkeeping of
//! [`PolytopeObjective`] (objective cuts `g.y < g.x`, best point, LP gap). Each method
//! only chooses its query inside the model; starting a step and learning an answer are
//! the same for all of them, and live here.

use crate::class::{FeasibilityClass, FirstOrderClass, Promise};
use crate::error::Error;
use crate::geometry::polytope::{BallTest, Polytope};
use crate::method::kelley::{volume_radius, PolytopeObjective};
use crate::method::{blame, give_up, unchanged};
use crate::oracle::{Answer, Output, Separation, Step};

/// What a step starts with: a decision already taken, or the Chebyshev centre of a model
/// that still holds a ball of radius rho (for the method to improve on).
pub(crate) enum Start {
    /// Output this, without querying.
    Stop(Step),
    /// The model's Chebyshev centre; the method picks its query from here.
    Centre(Vec<f64>),
}

/// The shared model (module docs).
#[derive(Clone, Debug)]
pub(crate) struct CutModel {
    pub(crate) polytope: Polytope,
    pub(crate) found: Option<Vec<f64>>,
    rho: f64,
    promise: Promise,
    objective: Option<PolytopeObjective>,
}

impl CutModel {
    /// The class's box, on a feasibility class.
    pub(crate) fn new(class: &FeasibilityClass) -> CutModel {
        CutModel {
            polytope: Polytope::cube(class.dim, class.half_width),
            found: None,
            rho: class.rho,
            promise: class.promise,
            objective: None,
        }
    }

    /// The feasibility class a first-order method's model plays on: the same box, the
    /// stopping radius [`volume_radius`], and "empty" never allowed.
    pub(crate) fn relaxed(class: &FirstOrderClass) -> Result<FeasibilityClass, Error> {
        FeasibilityClass::new(
            class.dim,
            class.half_width,
            volume_radius(class),
            Promise::Nonempty,
        )
    }

    /// Adds the first-order objective bookkeeping.
    pub(crate) fn with_objective(mut self, class: &FirstOrderClass) -> CutModel {
        self.objective = Some(PolytopeObjective::new(class));
        self
    }

    /// First-order classes: the best value seen and the best lower bound on f*; `None`
    /// on a feasibility class or before the first answer.
    pub(crate) fn bounds(&self) -> Option<(f64, f64)> {
        let bundle = self.objective.as_ref()?.bundle();
        Some((bundle.best_value()?, bundle.lower_bound()))
    }

    /// Starts a step of method `name`: the point answered `inside`; on first-order
    /// classes the best point once the LP gap is at most eps or no ball of the stopping
    /// radius fits; on feasibility classes a conservative "empty" (or the box centre
    /// under the nonempty promise) once no rho-ball fits; otherwise the Chebyshev centre.
    pub(crate) fn start(&mut self, name: &str, query_len: usize) -> Result<Start, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Start::Stop(Step::Output(Output::Point { point })));
        }
        if let Some(objective) = self.objective.as_ref().filter(|o| o.done()) {
            return Ok(Start::Stop(Step::Output(Output::Point {
                point: objective.best_point(),
            })));
        }
        if query_len != self.polytope.dim() {
            return Err(Error::MethodFailed {
                method: name.into(),
                reason: format!(
                    "query buffer has length {query_len} in dimension {}",
                    self.polytope.dim()
                ),
            });
        }
        match self
            .polytope
            .ball_test(self.rho)
            .map_err(|e| blame(e, name))?
        {
            BallTest::NoBall => {
                if let Some(objective) = &self.objective {
                    return Ok(Start::Stop(Step::Output(Output::Point {
                        point: objective.best_point(),
                    })));
                }
                let (lower, upper) = self.polytope.bounding_box();
                let guess = || {
                    lower
                        .iter()
                        .zip(upper)
                        .map(|(l, u)| 0.5 * l + 0.5 * u)
                        .collect()
                };
                Ok(Start::Stop(Step::Output(give_up(self.promise, guess))))
            }
            BallTest::Center(center, _) => Ok(Start::Centre(center)),
        }
    }

    /// Learns an answer of method `name`: records it for the objective, keeps an
    /// `inside` point, adds a cut (an error when the cut changes nothing: the method
    /// queried outside its own model), and refreshes the LP bound.
    pub(crate) fn observe(
        &mut self,
        name: &str,
        query: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        if let Some(objective) = &mut self.objective {
            objective.record(name, query, answer)?;
        }
        match answer.to_separation(query) {
            Separation::Inside => self.found = Some(query.to_vec()),
            Separation::Cut(cut) => {
                if !self.polytope.add_cut(&cut).map_err(|e| blame(e, name))? {
                    return Err(unchanged(name));
                }
            }
        }
        if let Some(objective) = &mut self.objective {
            objective
                .update_bound(&self.polytope)
                .map_err(|e| blame(e, name))?;
        }
        Ok(())
    }
}
