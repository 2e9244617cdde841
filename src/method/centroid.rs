//! The centre-of-gravity method (Levin, "An algorithm for minimizing convex functions",
//! Soviet Math. Dokl. 6, 1965; Newman, "Location of the maximum on unimodal surfaces",
//! J. ACM 12(3), 1965), computed exactly (up to rounding) for d <= 2.
//!
//! The method keeps its model P (box plus cuts, [`Polytope`]) and queries the centroid
//! of P. Any cut through the centroid keeps at most 1 - (d/(d+1))^d of the volume
//! (Grunbaum, "Partitions of mass-distributions and of convex bodies by hyperplanes",
//! Pacific J. Math. 10, 1960): at most 1/2 in d = 1 (the centroid is the midpoint) and
//! at most 5/9 in d = 2 (a line through the centroid leaves at least (2/3)^2 = 4/9 on
//! each side). In d = 2 the centroid is that of the convex polygon P, kept by clipping
//! ([`Polygon`]), and the Chebyshev centre is queried instead when rounding leaves that
//! centroid not strictly inside P; in d = 1 it is the midpoint. Higher dimensions need a
//! sampled centroid ([`crate::method::sampled_centroid`]); the constructor refuses them.
//!
//! "Empty" is declared only when the model proves that no rho-ball fits strictly inside
//! ([`Polytope::ball_test`]: an exact box-side test, or a certified upper bound on the
//! Chebyshev radius of at most rho).
//!
//! Numerical limits: when the model's LP can no longer place a centre strictly inside P
//! (P far thinner than its bounding box, beyond about 1e-10 of its scale), or a cut
//! leaves the model unchanged (outward rounding swallowed it), the method stops with
//! [`crate::error::Error::MethodFailed`] rather than repeat a query or claim anything.

use crate::class::{Class, FeasibilityClass};
use crate::error::Error;
use crate::geometry::polygon::Polygon;
use crate::geometry::polytope::{Halfspace, Polytope};
use crate::method::cut_model::{CutModel, Start};
use crate::method::{blame, unchanged, wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Separation, Step};

const NAME: &str = "centroid";

/// Centre of gravity of the current model, for d = 1 (midpoint) and d = 2 (polygon
/// centroid); "empty" once the model proves no rho-ball fits.
#[derive(Clone, Debug)]
pub struct Centroid {
    model: CutModel,
    /// The model as a polygon (d = 2 only).
    polygon: Option<Polygon>,
}

impl Centroid {
    /// Starts from the class's box; [`Error::Unsupported`] when d > 2.
    pub fn new(class: &FeasibilityClass) -> Result<Centroid, Error> {
        if class.dim > 2 {
            return Err(Error::Unsupported {
                what: format!("method {NAME}"),
                reason: format!(
                    "the exact centroid is implemented for d <= 2 only (d = {}); use \
                     sampled-centroid",
                    class.dim
                ),
            });
        }
        let r = class.half_width;
        Ok(Centroid {
            model: CutModel::new(class),
            polygon: (class.dim == 2).then(|| Polygon::from_box([-r, -r], [r, r])),
        })
    }

    /// The current model.
    pub fn polytope(&self) -> &Polytope {
        &self.model.polytope
    }

    /// The current polygon (d = 2).
    pub fn polygon(&self) -> Option<&Polygon> {
        self.polygon.as_ref()
    }
}

impl Method for Centroid {
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
        let centroid = self
            .polygon
            .as_ref()
            .and_then(Polygon::centroid)
            .map(|c| c.to_vec())
            .filter(|c| self.model.polytope.contains_strictly(c));
        // Without a usable polygon centroid (d = 1, or a polygon rounded away) the
        // Chebyshev centre is the query; in d = 1 it is the midpoint, the centroid.
        query.copy_from_slice(centroid.as_deref().unwrap_or(&center));
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        match answer.to_separation(query) {
            Separation::Inside => self.model.found = Some(query.to_vec()),
            Separation::Cut(cut) => {
                let halfspace = self
                    .model
                    .polytope
                    .halfspace(&cut)
                    .map_err(|e| blame(e, NAME))?;
                if let Some(polygon) = &mut self.polygon {
                    match &halfspace {
                        Halfspace::Infeasible => *polygon = Polygon::from_vertices(Vec::new()),
                        h => {
                            if let Some((a, b)) = h.as_row(2) {
                                polygon.clip([a[0], a[1]], b);
                            }
                        }
                    }
                }
                if !self.model.polytope.add(&halfspace) {
                    return Err(unchanged(NAME));
                }
            }
        }
        Ok(())
    }
}

/// Restriction of `centroid`: its exact centre of gravity exists for d <= 2 only.
fn centroid_dimension(class: &Class) -> Result<(), String> {
    if class.query_dim() > 2 {
        return Err(format!(
            "centroid is exact only in d <= 2 (d = {}); use sampled-centroid",
            class.query_dim()
        ));
    }
    Ok(())
}

/// Memory ([`crate::memory`]): the shared polytope model with one cut
/// a query and its Chebyshev LP ([`crate::memory::cut_model`]), and the polygon (d = 2)
/// with at most one vertex more a cut, kept twice while clipping.
fn memory(class: &Class, queries: u64) -> u64 {
    let polygon = 2.0 * 16.0 * (queries as f64 + 4.0);
    crate::memory::bytes(crate::memory::cut_model(class, queries) + polygon)
}

/// The registry entry of `centroid`.
pub const INFO: MethodInfo = MethodInfo {
    name: "centroid",
    description: "exact centre of gravity of its polytope model, d <= 2 (Levin 1965; \
                  Newman 1965; Grunbaum 1960)",
    deterministic: true,
    span: false,
    families: &["feasibility"],
    restriction: Some(centroid_dimension),
    memory,
    memory_note: "a cut a query (d + 1 numbers) and the LP over them",
    build: |class, _seed| match class {
        Class::Feasibility(c) => Ok(Box::new(Centroid::new(c)?)),
        _ => Err(wrong_family("centroid", &["feasibility"])),
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
    fn refuses_three_dimensions() {
        let class = FeasibilityClass::new(3, 1.0, 0.01, Promise::MayBeEmpty).unwrap();
        assert!(matches!(
            Centroid::new(&class),
            Err(Error::Unsupported { .. })
        ));
    }

    #[test]
    fn against_the_halving_oracle() {
        let games = play_halver(2, |c| Box::new(Centroid::new(c).unwrap()));
        // On boxes the centroid is the midpoint, so the count is the bisection count:
        // the lower bound d k + 1, plus at most d when rounding makes a side a hair
        // longer than 2 rho (common practice, no source).
        for (d, rho, queries) in games {
            let class = FeasibilityClass::new(d, 1.0, rho, Promise::MayBeEmpty).unwrap();
            let bound = d * class.halvings() as usize + 1;
            assert!(
                queries <= bound + d,
                "d = {d}, rho = {rho}: {queries} queries"
            );
            if d == 1 {
                // The midpoint of an interval with dyadic ends is exact: bisection meets
                // the bound exactly (docs/theory.md §1.1).
                assert_eq!(queries, bound);
            }
        }
    }

    #[test]
    fn finds_a_ball_with_deep_dense_cuts() {
        for d in 1..=2 {
            let queries = play_ball(d, |c| Box::new(Centroid::new(c).unwrap()));
            assert!(queries >= 1);
        }
    }

    #[test]
    fn central_cuts_keep_at_most_five_ninths_of_the_area() {
        // Grunbaum 1960 in the plane: a line through the centroid leaves at least 4/9
        // of the area on each side, so each central cut removes at least 4/9.
        let class = FeasibilityClass::new(2, 1.0, 1e-6, Promise::MayBeEmpty).unwrap();
        let mut method = Centroid::new(&class).unwrap();
        let mut query = [0.0; 2];
        for t in 0..20 {
            let before = method.polygon().unwrap().area();
            assert_eq!(method.next(&mut query).unwrap(), Step::Query);
            let angle = 0.7 + 2.3 * t as f64;
            let a = vec![angle.cos(), angle.sin()];
            let b = a[0] * query[0] + a[1] * query[1];
            let cut = Cut {
                normal: Normal::Dense(a),
                offset: Exact::Float(b),
            };
            method.observe(&query, &Answer::Cut(cut)).unwrap();
            let after = method.polygon().unwrap().area();
            assert!(
                after <= before * (5.0 / 9.0) * (1.0 + 1e-9),
                "{after} of {before}"
            );
        }
    }

    #[test]
    fn stops_cleanly_on_a_sliver_far_below_the_box_scale() {
        for d in 1..=2 {
            let queries = play_corner(d, |c| Box::new(Centroid::new(c).unwrap()));
            assert!(queries >= 1);
        }
    }

    #[test]
    fn a_cut_that_leaves_the_model_unchanged_is_an_error() {
        let class = FeasibilityClass::new(2, 1.0, 1e-3, Promise::MayBeEmpty).unwrap();
        let make = |c: &FeasibilityClass| Centroid::new(c).unwrap();
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
