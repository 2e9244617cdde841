//! The analytic-centre cutting-plane method, ACCPM (Goffin & Vial, "Convex
//! nondifferentiable optimization: a survey focused on the analytic center cutting plane
//! method", Optim. Methods Softw. 17(5), 2002).
//!
//! The query is the analytic centre of the model P = {y : l <= y <= u, a_i . y <= b_i}:
//! the maximiser of sum over all rows (box rows included) of ln(b_i - a_i . y), i.e. the
//! minimiser of the self-concordant barrier f(y) = -sum ln s_i(y). It is found by damped
//! Newton steps y <- y - H^-1 g / (1 + lambda), lambda = sqrt(g^T H^-1 g) the Newton
//! decrement (Nesterov & Nemirovski, Interior-Point Polynomial Algorithms in Convex
//! Programming, SIAM 1994; Nesterov, Introductory Lectures on Convex Optimization, 2004,
//! sec. 4.1.5), where g = sum_i a_i / s_i and H = sum_i a_i a_i^T / s_i^2. The damped step
//! stays inside the Dikin ellipsoid, so every iterate is strictly feasible. The iteration
//! starts at the Chebyshev centre of P and stops when lambda < 1e-9 or after 100
//! iterations (then the last iterate, still strictly inside, is queried). The linear
//! system is solved by a Cholesky factorisation (nalgebra). Everything runs in the frame
//! z = (y - m) / s that maps the model's bounding box to [-1, 1]^d ([`Polytope::frame`];
//! Newton's method is affine invariant, so this changes only the rounding). If the start
//! is not strictly inside in floating point or the factorisation fails, the Chebyshev
//! centre itself is queried (counted by [`AnalyticCenter::fallbacks`]).
//!
//! The model stores axis cuts as box bounds and drops exact duplicates ([`Polytope`]), so
//! the barrier has one term per distinct row. "Empty" is declared only when P proves
//! that no rho-ball fits strictly inside ([`Polytope::ball_test`]).
//!
//! Numerical limits: when the model's LP can no longer place a centre strictly inside P
//! (P far thinner than its bounding box, beyond about 1e-10 of its scale), or a cut
//! leaves the model unchanged (outward rounding swallowed it), the method stops with
//! [`crate::error::Error::MethodFailed`] rather than repeat a query or claim anything.
//!
//! First-order classes ([`AnalyticCenter::first_order`]): each answer becomes its objective
//! cut `g.y < g.x`, which keeps every point better than the query, so the model P contains
//! all of them; the method keeps its best point and the lower bound f* >= min(f_best, min_P
//! M_t) of [`PolytopeObjective`](crate::method::kelley::PolytopeObjective) (an LP over P of
//! the cutting-plane model, Kelley 1960), and outputs its best point once that gap is at
//! most eps or once P holds no ball of radius
//! [`volume_radius`](crate::method::kelley::volume_radius) (the volume argument).

use nalgebra::{DMatrix, DVector};

use crate::class::{Class, FeasibilityClass, FirstOrderClass};
use crate::error::Error;
use crate::geometry::polytope::{dot, Polytope};
use crate::method::cut_model::{CutModel, Start};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Step};

const NAME: &str = "analytic-center";

/// Newton stops when the decrement falls below this.
pub const NEWTON_TOLERANCE: f64 = 1e-9;

/// Newton stops after this many iterations.
pub const NEWTON_MAX_ITERATIONS: usize = 100;

/// The result of a Newton solve for the analytic centre.
#[derive(Clone, Debug, PartialEq)]
pub struct NewtonResult {
    /// The last iterate, in original coordinates.
    pub point: Vec<f64>,
    /// Newton iterations taken.
    pub iterations: usize,
    /// The Newton decrement at the last iterate.
    pub decrement: f64,
}

/// Slacks, gradient and Hessian of f(z) = -sum ln s_i(z) in the frame.
struct Frame {
    dim: usize,
    lower: Vec<f64>,
    upper: Vec<f64>,
    rows: Vec<f64>,
    offsets: Vec<f64>,
}

impl Frame {
    fn new(polytope: &Polytope, shift: &[f64], scale: f64) -> Frame {
        let d = polytope.dim();
        let m = polytope.num_rows();
        let mut rows = Vec::with_capacity(m * d);
        let mut offsets = Vec::with_capacity(m);
        for i in 0..m {
            let row = polytope.row(i);
            rows.extend_from_slice(row);
            offsets.push((polytope.offset(i) - dot(row, shift)) / scale);
        }
        Frame {
            dim: d,
            lower: (0..d)
                .map(|j| (polytope.lower()[j] - shift[j]) / scale)
                .collect(),
            upper: (0..d)
                .map(|j| (polytope.upper()[j] - shift[j]) / scale)
                .collect(),
            rows,
            offsets,
        }
    }

    /// Fills `g` and `h`; `false` when some slack is not positive.
    fn derivatives(&self, z: &[f64], g: &mut DVector<f64>, h: &mut DMatrix<f64>) -> bool {
        let d = self.dim;
        g.fill(0.0);
        h.fill(0.0);
        for j in 0..d {
            let (su, sl) = (self.upper[j] - z[j], z[j] - self.lower[j]);
            if !(su > 0.0 && sl > 0.0) {
                return false;
            }
            g[j] += 1.0 / su - 1.0 / sl;
            h[(j, j)] += 1.0 / (su * su) + 1.0 / (sl * sl);
        }
        for (i, b) in self.offsets.iter().enumerate() {
            let row = &self.rows[i * d..(i + 1) * d];
            let s = b - dot(row, z);
            if s.is_nan() || s <= 0.0 {
                return false;
            }
            let inv = 1.0 / s;
            for j in 0..d {
                let aj = row[j] * inv;
                if aj == 0.0 {
                    continue;
                }
                g[j] += aj;
                for k in j..d {
                    h[(k, j)] += aj * row[k] * inv;
                }
            }
        }
        for j in 0..d {
            for k in (j + 1)..d {
                h[(j, k)] = h[(k, j)];
            }
        }
        true
    }
}

/// Damped Newton for the analytic centre of `polytope`, started at `start` (module doc).
/// `Err` with a reason when the start is not strictly inside or a factorisation fails.
pub fn analytic_center(polytope: &Polytope, start: &[f64]) -> Result<NewtonResult, String> {
    let d = polytope.dim();
    if start.len() != d {
        return Err(format!("start has length {} in dimension {d}", start.len()));
    }
    let (shift, scale) = polytope.frame();
    if !(scale > 0.0 && scale.is_finite()) {
        return Err(format!("degenerate box (scale {scale})"));
    }
    let frame = Frame::new(polytope, &shift, scale);
    let mut z: Vec<f64> = (0..d).map(|j| (start[j] - shift[j]) / scale).collect();
    let mut g = DVector::zeros(d);
    let mut h = DMatrix::zeros(d, d);
    let mut trial = vec![0.0; d];
    if !frame.derivatives(&z, &mut g, &mut h) {
        return Err("the start is not strictly inside the model".into());
    }
    let mut iterations = 0;
    let mut decrement = f64::INFINITY;
    while iterations < NEWTON_MAX_ITERATIONS {
        let cholesky = h
            .clone()
            .cholesky()
            .ok_or_else(|| "the barrier Hessian is not positive definite".to_string())?;
        let step = cholesky.solve(&g);
        decrement = g.dot(&step).max(0.0).sqrt();
        if !decrement.is_finite() {
            return Err("the Newton decrement is not finite".into());
        }
        if decrement < NEWTON_TOLERANCE {
            break;
        }
        let damping = 1.0 / (1.0 + decrement);
        for j in 0..d {
            trial[j] = z[j] - damping * step[j];
        }
        iterations += 1;
        if !frame.derivatives(&trial, &mut g, &mut h) {
            // Rounding pushed the iterate out (the exact step cannot): keep the last one.
            break;
        }
        z.copy_from_slice(&trial);
    }
    Ok(NewtonResult {
        point: (0..d).map(|j| shift[j] + scale * z[j]).collect(),
        iterations,
        decrement,
    })
}

/// ACCPM: queries the analytic centre of its model; "empty" once the model proves no
/// rho-ball fits.
#[derive(Clone, Debug)]
pub struct AnalyticCenter {
    model: CutModel,
    last_iterations: usize,
    fallbacks: u64,
}

impl AnalyticCenter {
    /// Starts from the class's box.
    pub fn new(class: &FeasibilityClass) -> Result<AnalyticCenter, Error> {
        Ok(AnalyticCenter {
            model: CutModel::new(class),
            last_iterations: 0,
            fallbacks: 0,
        })
    }

    /// The method on a first-order class (module doc): objective cuts `g.y < g.x`
    /// ([`Answer::to_separation`]), the best point kept, and a stop with that point once
    /// the LP bound of [`PolytopeObjective`](crate::method::kelley::PolytopeObjective)
    /// leaves a gap of at most eps or the model holds no ball of radius
    /// [`volume_radius`](crate::method::kelley::volume_radius); never "empty".
    pub fn first_order(class: &FirstOrderClass) -> Result<AnalyticCenter, Error> {
        let mut method = AnalyticCenter::new(&CutModel::relaxed(class)?)?;
        method.model = method.model.with_objective(class);
        Ok(method)
    }

    /// First-order classes: the best value seen and the best lower bound on f*; `None`
    /// on a feasibility class or before the first answer.
    pub fn bounds(&self) -> Option<(f64, f64)> {
        self.model.bounds()
    }

    /// Newton iterations spent on the last query.
    pub fn last_iterations(&self) -> usize {
        self.last_iterations
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

impl Method for AnalyticCenter {
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
        match analytic_center(&self.model.polytope, &center) {
            Ok(result) if self.model.polytope.contains_strictly(&result.point) => {
                self.last_iterations = result.iterations;
                query.copy_from_slice(&result.point);
            }
            _ => {
                self.last_iterations = 0;
                self.fallbacks += 1;
                query.copy_from_slice(&center);
            }
        }
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        self.model.observe(NAME, query, answer)
    }
}

/// Memory ([`crate::memory`]): the shared polytope model with one cut
/// a query and its LPs ([`crate::memory::cut_model`]), and the Newton solve: a copy of
/// every row in the frame (d + 1 numbers a query), the d x d Hessian and its Cholesky
/// factor (16 d^2 bytes), and a few vectors.
fn memory(class: &Class, queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    let newton = crate::memory::F64 * (queries as f64 * (d + 1.0) + 2.0 * d * d)
        + crate::memory::vectors(8.0, d);
    crate::memory::bytes(crate::memory::cut_model(class, queries) + newton)
}

/// The registry entry of `analytic-center`.
pub const INFO: MethodInfo = MethodInfo {
    name: "analytic-center",
    description: "analytic centre of its polytope model by damped Newton (ACCPM; \
                  Goffin & Vial 2002, Optim. Methods Softw. 17)",
    deterministic: true,
    span: false,
    families: &["feasibility", "first-order"],
    restriction: None,
    memory,
    memory_note: "a cut a query (d + 1 numbers), the LP over them and a d x d Newton matrix",
    build: |class, _seed| match class {
        Class::Feasibility(c) => Ok(Box::new(AnalyticCenter::new(c)?)),
        Class::FirstOrder(c) => Ok(Box::new(AnalyticCenter::first_order(c)?)),
        _ => Err(wrong_family(
            "analytic-center",
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
        let games = play_halver(3, |c| Box::new(AnalyticCenter::new(c).unwrap()));
        // On a box the analytic centre is the box centre (each coordinate's barrier
        // ln(u - y) + ln(y - l) peaks at the midpoint; derived by hand), so ACCPM
        // bisects: d k + 1 queries, plus at most d for rounding (common practice, no
        // source).
        for (d, rho, queries) in games {
            let class = FeasibilityClass::new(d, 1.0, rho, Promise::MayBeEmpty).unwrap();
            let bound = d * class.halvings() as usize + 1;
            assert!(
                queries <= bound + d,
                "d = {d}, rho = {rho}: {queries} queries"
            );
        }
    }

    #[test]
    fn finds_a_ball_with_deep_dense_cuts() {
        for d in 1..=4 {
            let queries = play_ball(d, |c| Box::new(AnalyticCenter::new(c).unwrap()));
            assert!(queries >= 1);
        }
    }

    #[test]
    fn analytic_center_of_a_triangle_in_a_box() {
        // P = [-1, 1]^2 cut by x + y <= 0 (derived by hand). The barrier is strictly
        // concave and symmetric in x and y, so the centre lies on x = y = t, where
        // phi(t) = 2 ln(1 - t) + 2 ln(1 + t) + ln(-sqrt(2) t). phi'(t) = 0 times
        // t (1 - t)(1 + t) reads -2t(1 + t) + 2t(1 - t) + (1 - t^2) = 1 - 5 t^2 = 0,
        // so t = -1/sqrt 5 (the root with t < 0).
        let mut p = Polytope::cube(2, 1.0);
        p.add_cut(&Cut {
            normal: Normal::Dense(vec![1.0, 1.0]),
            offset: Exact::Float(0.0),
        })
        .unwrap();
        let result = analytic_center(&p, &[-0.5, -0.5]).unwrap();
        let t = -1.0 / 5f64.sqrt();
        assert!(result.decrement < NEWTON_TOLERANCE);
        for x in &result.point {
            assert!((x - t).abs() < 1e-9, "{:?} vs {t}", result.point);
        }
        // Started elsewhere, Newton lands on the same point.
        let other = analytic_center(&p, &[-0.9, 0.8]).unwrap();
        for (x, y) in other.point.iter().zip(&result.point) {
            assert!((x - y).abs() < 1e-9);
        }
        // A start outside is an error.
        assert!(analytic_center(&p, &[0.5, 0.5]).is_err());
    }

    #[test]
    fn gradient_vanishes_at_the_centre_of_random_polytopes() {
        // The optimality condition sum_i a_i / s_i = 0 (box rows included), checked
        // directly from the slacks of the returned point.
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(3);
        for _ in 0..20 {
            let mut p = Polytope::cube(4, 1.0);
            for _ in 0..15 {
                let a: Vec<f64> = (0..4).map(|_| rng.random::<f64>() - 0.5).collect();
                p.add_cut(&Cut {
                    normal: Normal::Dense(a),
                    offset: Exact::Float(0.2 + rng.random::<f64>()),
                })
                .unwrap();
            }
            let (center, _) = p.chebyshev_ball().unwrap().unwrap();
            let result = analytic_center(&p, &center).unwrap();
            assert!(result.decrement < NEWTON_TOLERANCE, "{result:?}");
            let s = p.slacks(&result.point);
            let mut g: Vec<f64> = (0..4).map(|j| 1.0 / s[j] - 1.0 / s[4 + j]).collect();
            for i in 0..p.num_rows() {
                for (gj, a) in g.iter_mut().zip(p.row(i)) {
                    *gj += a / s[8 + i];
                }
            }
            let size: f64 = s.iter().map(|v| 1.0 / v).sum();
            for gj in &g {
                assert!(gj.abs() < 1e-8 * size, "gradient {g:?}");
            }
        }
    }

    #[test]
    fn stops_cleanly_on_a_sliver_far_below_the_box_scale() {
        for d in 1..=3 {
            let queries = play_corner(d, |c| Box::new(AnalyticCenter::new(c).unwrap()));
            assert!(queries >= 1);
        }
    }

    #[test]
    fn a_cut_that_leaves_the_model_unchanged_is_an_error() {
        let class = FeasibilityClass::new(2, 1.0, 1e-3, Promise::MayBeEmpty).unwrap();
        let make = |c: &FeasibilityClass| AnalyticCenter::new(c).unwrap();
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
