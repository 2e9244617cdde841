//! Sampled centre of gravity (Bertsimas & Vempala, "Solving convex programs by random
//! walks", J. ACM 51(4), 2004): query the mean of points drawn approximately uniformly
//! from the model P by hit-and-run ([`HitAndRun`]).
//!
//! Bertsimas & Vempala show that a halfspace through the mean of N independent uniform
//! points of a convex body keeps, in expectation, at least 1/e - sqrt(d/N) of its volume
//! (from memory), so N = O(d) samples give a constant fraction, O(d log(R/rho)) queries
//! in all. Parameters here (common practice, no source; chosen so a step at d = 10 costs
//! milliseconds): N = 10 d + 20 samples per query; the walk starts at the Chebyshev
//! centre of P (computed each step for the "empty" test anyway), takes 20 d burn-in steps,
//! then d steps between samples. The walk is only approximately mixed; the method is
//! sound regardless, because soundness rests only on the "empty" rule: it is declared
//! only when P proves no rho-ball fits strictly inside ([`Polytope::ball_test`]). When
//! the mean is not strictly inside P in floating point, the Chebyshev centre is queried
//! instead (counted by [`SampledCentroid::fallbacks`]).
//!
//! Numerical limits: when the model's LP can no longer place a centre strictly inside P
//! (P far thinner than its bounding box, beyond about 1e-10 of its scale), or a cut
//! leaves the model unchanged (outward rounding swallowed it), the method stops with
//! [`crate::error::Error::MethodFailed`] rather than repeat a query or claim anything.
//!
//! First-order classes ([`SampledCentroid::first_order`]): each answer becomes its
//! objective cut `g.y < g.x`, which keeps every point better than the query, so the model P
//! contains all of them; the method keeps its best point and the lower bound f* >=
//! min(f_best, min_P M_t) of
//! [`PolytopeObjective`](crate::method::kelley::PolytopeObjective) (an LP over P of the
//! cutting-plane model, Kelley 1960), and outputs its best point once that gap is at most
//! eps or once P holds no ball of radius
//! [`volume_radius`](crate::method::kelley::volume_radius) (the volume argument).

use crate::class::{Class, FeasibilityClass, FirstOrderClass};
use crate::error::Error;
use crate::geometry::hit_and_run::HitAndRun;
use crate::geometry::polytope::Polytope;
use crate::method::cut_model::{CutModel, Start};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Step};

const NAME: &str = "sampled-centroid";

/// Hit-and-run estimate of the centroid of the model; seeded, any dimension.
#[derive(Clone, Debug)]
pub struct SampledCentroid {
    model: CutModel,
    walker: HitAndRun,
    samples: usize,
    burn_in: usize,
    thin: usize,
    mean: Vec<f64>,
    fallbacks: u64,
}

impl SampledCentroid {
    /// Starts from the class's box with generator seed `seed`.
    pub fn new(class: &FeasibilityClass, seed: u64) -> Result<SampledCentroid, Error> {
        let d = class.dim;
        Ok(SampledCentroid {
            model: CutModel::new(class),
            walker: HitAndRun::new(d, seed),
            samples: 10 * d + 20,
            burn_in: 20 * d,
            thin: d,
            mean: vec![0.0; d],
            fallbacks: 0,
        })
    }

    /// The method on a first-order class (module doc): objective cuts `g.y < g.x`
    /// ([`Answer::to_separation`]), the best point kept, and a stop with that point once
    /// the LP bound of [`PolytopeObjective`](crate::method::kelley::PolytopeObjective)
    /// leaves a gap of at most eps or the model holds no ball of radius
    /// [`volume_radius`](crate::method::kelley::volume_radius); never "empty".
    pub fn first_order(class: &FirstOrderClass, seed: u64) -> Result<SampledCentroid, Error> {
        let mut method = SampledCentroid::new(&CutModel::relaxed(class)?, seed)?;
        method.model = method.model.with_objective(class);
        Ok(method)
    }

    /// First-order classes: the best value seen and the best lower bound on f*; `None`
    /// on a feasibility class or before the first answer.
    pub fn bounds(&self) -> Option<(f64, f64)> {
        self.model.bounds()
    }

    /// Samples N averaged per query (10 d + 20).
    pub fn samples_per_query(&self) -> usize {
        self.samples
    }

    /// How many queries fell back to the Chebyshev centre.
    pub fn fallbacks(&self) -> u64 {
        self.fallbacks
    }

    /// The current model.
    pub fn polytope(&self) -> &Polytope {
        &self.model.polytope
    }
}

impl Method for SampledCentroid {
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        Some(Box::new(self.clone()))
    }

    fn name(&self) -> &str {
        NAME
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        let center = match self.model.start(NAME, query.len())? {
            Start::Stop(step) => return Ok(step),
            Start::Centre(center) => center,
        };
        let sampled = self.model.polytope.contains_strictly(&center)
            && self
                .walker
                .sample_mean(
                    &self.model.polytope,
                    &center,
                    self.burn_in,
                    self.thin,
                    self.samples,
                    &mut self.mean,
                )
                .is_ok()
            && self.model.polytope.contains_strictly(&self.mean);
        if sampled {
            query.copy_from_slice(&self.mean);
        } else {
            self.fallbacks += 1;
            query.copy_from_slice(&center);
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        self.model.observe(NAME, query, answer)
    }
}

/// Memory ([`crate::memory`]): the shared polytope model with one cut
/// a query and its LPs ([`crate::memory::cut_model`]); the walk keeps a running mean, not
/// its samples (four vectors of length d).
fn memory(class: &Class, queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    crate::memory::bytes(crate::memory::cut_model(class, queries) + crate::memory::vectors(4.0, d))
}

/// The registry entry of `sampled-centroid`.
pub const INFO: MethodInfo = MethodInfo {
    name: "sampled-centroid",
    description: "mean of hit-and-run samples of its polytope model (Bertsimas & \
                  Vempala 2004, J. ACM 51(4))",
    deterministic: false,
    span: false,
    families: &["feasibility", "first-order"],
    restriction: None,
    memory,
    memory_note: "a cut a query (d + 1 numbers) and the LP over them",
    build: |class, seed| match class {
        Class::Feasibility(c) => Ok(Box::new(SampledCentroid::new(c, seed)?)),
        Class::FirstOrder(c) => Ok(Box::new(SampledCentroid::first_order(c, seed)?)),
        _ => Err(wrong_family(
            "sampled-centroid",
            &["feasibility", "first-order"],
        )),
    },
};

#[cfg(test)]
mod tests {
    use super::*;
    use crate::class::Promise;
    use crate::exact::Exact;
    use crate::method::test_support::{play_ball, play_corner, play_halver};
    use crate::oracle::{Cut, Normal};

    #[test]
    fn against_the_halving_oracle() {
        let games = play_halver(3, |c| Box::new(SampledCentroid::new(c, 5).unwrap()));
        assert_eq!(games.len(), 12);
    }

    #[test]
    fn finds_a_ball_with_deep_dense_cuts() {
        for d in 1..=4 {
            let queries = play_ball(d, |c| Box::new(SampledCentroid::new(c, 11).unwrap()));
            assert!(queries >= 1);
        }
    }

    #[test]
    fn same_seed_same_queries() {
        use crate::method::test_support::BallOracle;
        let class = FeasibilityClass::new(3, 1.0, 1e-3, Promise::MayBeEmpty).unwrap();
        let oracle = BallOracle {
            center: vec![0.5, 0.5, -0.5],
            radius: 0.01,
        };
        let run = |seed| {
            let mut m = SampledCentroid::new(&class, seed).unwrap();
            let mut q = vec![0.0; 3];
            let mut queries = Vec::new();
            for _ in 0..8 {
                if m.next(&mut q).unwrap() != Step::Query {
                    break;
                }
                queries.push(q.clone());
                m.observe(&q, &oracle.answer(&q)).unwrap();
            }
            queries
        };
        assert_eq!(run(3), run(3));
        assert_ne!(run(3), run(4));
    }

    #[test]
    fn stops_cleanly_on_a_sliver_far_below_the_box_scale() {
        for d in 1..=3 {
            let queries = play_corner(d, |c| Box::new(SampledCentroid::new(c, 2).unwrap()));
            assert!(queries >= 1);
        }
    }

    #[test]
    fn a_cut_that_leaves_the_model_unchanged_is_an_error() {
        let class = FeasibilityClass::new(2, 1.0, 1e-3, Promise::MayBeEmpty).unwrap();
        let make = |c: &FeasibilityClass| SampledCentroid::new(c, 2).unwrap();
        let mut method = make(&class);
        let mut query = [0.0; 2];
        assert_eq!(method.next(&mut query).unwrap(), Step::Query);
        // y_0 < 5 holds on the whole box: it does not exclude the query.
        let cut = Cut {
            normal: Normal::axis(0, true),
            offset: Exact::Float(5.0),
        };
        let err = method.observe(&query, &Answer::Cut(cut)).unwrap_err();
        assert!(err.to_string().contains("unchanged"), "{err}");
    }
}
