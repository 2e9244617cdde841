//! The central-cut ellipsoid method (Yudin & Nemirovski 1976; Khachiyan 1979; the
//! update as in Bertsimas & Tsitsiklis, Introduction to Linear Optimization, 1997,
//! ch. 8, and Bubeck, Convex Optimization: Algorithms and Complexity, 2015, sec. 2.2).
//!
//! E = {y : (y - c)^T P^-1 (y - c) <= 1}, starting from the ball of radius R sqrt(d)
//! around 0, which contains X = [-R, R]^d. For a cut `a.y < b` with `b <= a.c` the
//! central-cut update is
//!   g = P a / sqrt(a^T P a),  c <- c - g / (d + 1),
//!   P <- d^2 / (d^2 - 1) * (P - 2 / (d + 1) * g g^T),
//! and vol(E) shrinks by exactly r_d = (d/(d+1)) (d^2/(d^2-1))^((d-1)/2) per cut.
//! (A deep cut, `b < a.c`, is used as the central cut through c, which is weaker but
//! valid.) The method declares "empty" when vol(E) < vol(B(rho)), that is
//! d ln(R sqrt(d)) + N ln r_d < d ln rho: then no rho-ball fits inside K, which lies in
//! E. In d = 1 the update is undefined and the method is bisection of its interval.
//!
//! Numerical care: P is kept symmetric (only the update formula touches it, applied
//! column by column, then mirrored), the step uses `a^T P a` recomputed from the
//! current P, and a non-positive `a^T P a` (loss of definiteness) is reported as a
//! method failure rather than silently continued. No allocation per step.
//!
//! First-order classes ([`Ellipsoid::first_order`]; the ellipsoid method for convex
//! minimisation of Yudin & Nemirovski 1976, as in Bubeck 2015, sec. 2.2, from memory):
//! each answer becomes its objective cut `g.y < g.x` ([`Answer::to_separation`]), which
//! keeps every point better than the query. A centre outside X is not queried: the
//! violated box face is used as the cut instead (it keeps all of X; no query spent). The
//! method keeps its best point and the lower bound
//!   f* >= min(f_best, f(x_t) - sqrt(g_t^T P_t g_t))
//! at every query x_t = c_t (in d = 1: f(x_t) - |g_t| (u - l) / 2 on the interval
//! [l, u]): a minimiser either left E_t through an earlier objective cut, so its value is
//! at least that cut's query value, or lies in E_t, where f >= f(x_t) + g_t.(y - x_t) >=
//! f(x_t) - max_{y in E_t} g_t.(x_t - y) (derived). It stops with its best point once
//! f_best minus the largest such bound is at most eps, or once vol(E) falls below the
//! volume of a ball of radius [`crate::method::kelley::volume_radius`] (then no
//! eps-optimal point remains in E beyond the best one). It never answers "empty".

use crate::bounds::ellipsoid_log_volume_ratio;
use crate::class::{Class, FeasibilityClass, FirstOrderClass, Promise};
use crate::error::Error;
use crate::geometry::BoxModel;
use crate::method::kelley::{volume_radius, Bundle};
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Normal, Output, Separation, Step};

/// Central-cut ellipsoid method; bisection when d = 1.
#[derive(Clone, Debug)]
pub struct Ellipsoid {
    dim: usize,
    center: Vec<f64>,
    /// Column-major d x d shape matrix P.
    shape: Vec<f64>,
    /// Scratch for P a.
    pa: Vec<f64>,
    /// Scratch for a dense normal.
    dense: Vec<f64>,
    /// ln vol(E) minus ln of the unit-ball volume, i.e. (1/2) ln det P.
    log_volume: f64,
    /// d ln rho: the method stops once `log_volume` falls below it.
    log_volume_floor: f64,
    /// ln r_d.
    log_ratio: f64,
    /// d = 1: bisection interval.
    interval: Option<BoxModel>,
    rho: f64,
    promise: Promise,
    found: Option<Vec<f64>>,
    /// First-order classes: best point and lower bound (module doc).
    objective: Option<Objective>,
}

/// What the ellipsoid method tracks on a first-order class.
#[derive(Clone, Debug)]
struct Objective {
    bundle: Bundle,
    eps: f64,
    half_width: f64,
}

/// Most box cuts in a row before a centre is back in X (a guard; each cut moves the
/// centre by a fixed fraction of the ellipsoid's width, so a few suffice).
const MAX_BOX_CUTS: usize = 1000;

impl Ellipsoid {
    /// Starts from the ball of radius R sqrt(d) around the origin.
    pub fn new(class: &FeasibilityClass) -> Ellipsoid {
        Ellipsoid::start(class.dim, class.half_width, class.rho, class.promise)
    }

    /// The method on a first-order class, with objective cuts (module doc).
    pub fn first_order(class: &FirstOrderClass) -> Ellipsoid {
        let mut method = Ellipsoid::start(
            class.dim,
            class.half_width,
            volume_radius(class),
            Promise::Nonempty,
        );
        method.objective = Some(Objective {
            bundle: Bundle::new(class),
            eps: class.eps,
            half_width: class.half_width,
        });
        method
    }

    fn start(d: usize, half_width: f64, rho: f64, promise: Promise) -> Ellipsoid {
        let radius2 = half_width * half_width * d as f64;
        let mut shape = vec![0.0; d * d];
        for i in 0..d {
            shape[i * d + i] = radius2;
        }
        let log_radius = half_width.ln() + 0.5 * (d as f64).ln();
        Ellipsoid {
            dim: d,
            center: vec![0.0; d],
            shape,
            pa: vec![0.0; d],
            dense: vec![0.0; d],
            log_volume: d as f64 * log_radius,
            // A relative margin so rounding in the running sum never claims too early.
            log_volume_floor: d as f64 * rho.ln() - 1e-9 * (1.0 + d as f64 * log_radius.abs()),
            log_ratio: if d >= 2 {
                ellipsoid_log_volume_ratio(d)
            } else {
                0.0
            },
            interval: (d == 1).then(|| BoxModel::cube(1, half_width)),
            rho,
            promise,
            found: None,
            objective: None,
        }
    }

    /// First-order classes: the best value seen and the best lower bound on f* (module
    /// doc); `None` on a feasibility class or before the first answer.
    pub fn bounds(&self) -> Option<(f64, f64)> {
        let objective = self.objective.as_ref()?;
        Some((
            objective.bundle.best_value()?,
            objective.bundle.lower_bound(),
        ))
    }

    /// max over y in E of g.(c - y) = sqrt(g^T P g) (d = 1: over the interval, from the
    /// query `x`).
    fn support_width(&self, g: &[f64], x: &[f64]) -> f64 {
        let d = self.dim;
        if let Some(interval) = &self.interval {
            let g = g[0].abs();
            return (g * (x[0] - interval.lower[0])).max(g * (interval.upper[0] - x[0]));
        }
        let mut quadratic = 0.0;
        for j in 0..d {
            if g[j] == 0.0 {
                continue;
            }
            let column = &self.shape[j * d..(j + 1) * d];
            let pg: f64 = column.iter().zip(g).map(|(p, gi)| p * gi).sum();
            quadratic += g[j] * pg;
        }
        quadratic.max(0.0).sqrt()
    }

    /// First-order classes: the first coordinate where the centre leaves X, as the axis
    /// normal of the violated face.
    fn outside_box(&self) -> Option<Normal> {
        let r = self.objective.as_ref()?.half_width;
        self.center.iter().enumerate().find_map(|(i, c)| {
            if *c > r {
                Some(Normal::axis(i, true))
            } else if *c < -r {
                Some(Normal::axis(i, false))
            } else {
                None
            }
        })
    }

    /// The current centre.
    pub fn center(&self) -> &[f64] {
        &self.center
    }

    /// The current shape matrix P (column-major).
    pub fn shape(&self) -> &[f64] {
        &self.shape
    }

    /// ln vol(E) - ln vol(unit ball).
    pub fn log_volume(&self) -> f64 {
        self.log_volume
    }

    /// "Empty" when the class allows it; under the nonempty promise, `centre` (a guess).
    /// On a first-order class: the best point (module doc).
    fn give_up(&self, centre: Vec<f64>) -> Output {
        if let Some(objective) = &self.objective {
            return Output::Point {
                point: objective.bundle.best_point(),
            };
        }
        match self.promise {
            Promise::MayBeEmpty => Output::Empty,
            Promise::Nonempty => Output::Point { point: centre },
        }
    }

    fn update(&mut self, normal: &Normal) -> Result<(), Error> {
        let d = self.dim;
        // pa = P a.
        match normal {
            Normal::Axis { axis, sign } => {
                let s = f64::from(*sign);
                let column = &self.shape[axis * d..(axis + 1) * d];
                for (p, c) in self.pa.iter_mut().zip(column) {
                    *p = s * c;
                }
            }
            Normal::Dense(a) => {
                // Scale the normal so its largest entry is 1 (the cut is scale-free).
                let scale = a.iter().fold(0.0f64, |m, x| m.max(x.abs()));
                for (dst, src) in self.dense.iter_mut().zip(a) {
                    *dst = src / scale;
                }
                self.pa.iter_mut().for_each(|p| *p = 0.0);
                for (j, aj) in self.dense.iter().enumerate() {
                    if *aj == 0.0 {
                        continue;
                    }
                    let column = &self.shape[j * d..(j + 1) * d];
                    for (p, c) in self.pa.iter_mut().zip(column) {
                        *p += aj * c;
                    }
                }
            }
        }
        let apa = match normal {
            Normal::Axis { axis, sign } => f64::from(*sign) * self.pa[*axis],
            Normal::Dense(_) => self.dense.iter().zip(&self.pa).map(|(a, p)| a * p).sum(),
        };
        if !(apa > 0.0 && apa.is_finite()) {
            return Err(Error::MethodFailed {
                method: "ellipsoid".into(),
                reason: format!("shape matrix lost positive definiteness (a^T P a = {apa})"),
            });
        }
        let inv_norm = 1.0 / apa.sqrt();
        let df = d as f64;
        // g = P a / sqrt(a^T P a), kept in pa.
        self.pa.iter_mut().for_each(|p| *p *= inv_norm);
        let step = 1.0 / (df + 1.0);
        for (c, g) in self.center.iter_mut().zip(&self.pa) {
            *c -= step * g;
        }
        let expand = df * df / (df * df - 1.0);
        let alpha = 2.0 / (df + 1.0);
        // P <- expand * (P - alpha g g^T), upper triangle by columns, then mirror.
        for j in 0..d {
            let coef = alpha * self.pa[j];
            let column = &mut self.shape[j * d..j * d + j + 1];
            for (p, g) in column.iter_mut().zip(&self.pa[..=j]) {
                *p = expand * (*p - coef * g);
            }
        }
        for j in 0..d {
            for i in (j + 1)..d {
                self.shape[j * d + i] = self.shape[i * d + j];
            }
        }
        self.log_volume += self.log_ratio;
        Ok(())
    }
}

impl Method for Ellipsoid {
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        Some(Box::new(self.clone()))
    }

    fn name(&self) -> &str {
        "ellipsoid"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        if let Some(objective) = &self.objective {
            if objective.bundle.gap() <= objective.eps {
                return Ok(Step::Output(Output::Point {
                    point: objective.bundle.best_point(),
                }));
            }
            let mut cuts = 0;
            while let Some(normal) = self.outside_box() {
                if cuts == MAX_BOX_CUTS {
                    return Err(Error::MethodFailed {
                        method: "ellipsoid".into(),
                        reason: format!("the centre stayed outside X after {cuts} box cuts"),
                    });
                }
                self.update(&normal)?;
                cuts += 1;
            }
        }
        if let Some(interval) = &self.interval {
            if interval.too_thin_for(self.rho) {
                let mut centre = vec![0.0];
                interval.center_into(&mut centre);
                return Ok(Step::Output(self.give_up(centre)));
            }
            interval.center_into(query);
            return Ok(Step::Query);
        }
        if self.log_volume < self.log_volume_floor {
            return Ok(Step::Output(self.give_up(self.center.clone())));
        }
        query.copy_from_slice(&self.center);
        Ok(Step::Query)
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        if self.objective.is_some() {
            let Answer::FirstOrder(fo) = answer else {
                return Err(Error::MethodFailed {
                    method: "ellipsoid".into(),
                    reason: "a first-order class needs first-order answers".into(),
                });
            };
            let g: Vec<f64> = fo.subgradient.iter().map(|v| v.to_f64()).collect();
            let width = if g.len() == self.dim {
                self.support_width(&g, query)
            } else {
                f64::INFINITY
            };
            if let Some(objective) = &mut self.objective {
                objective.bundle.add(query, fo)?;
                objective
                    .bundle
                    .raise_lower_bound(fo.value.to_f64() - width);
            }
        }
        match answer.to_separation(query) {
            Separation::Inside => {
                self.found = Some(query.to_vec());
                Ok(())
            }
            Separation::Cut(cut) => {
                if let Some(interval) = &mut self.interval {
                    interval.apply(&cut);
                    return Ok(());
                }
                self.update(&cut.normal)
            }
        }
    }
}

/// Memory ([`crate::memory`]): the d x d shape matrix P (8 d^2 bytes)
/// and four vectors of length d; on first-order classes also the bundle of every answer
/// (point, value and subgradient, [`crate::memory::bundle`]).
fn memory(class: &Class, queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    let mut total = crate::memory::F64 * d * d + crate::memory::vectors(4.0, d);
    if let Class::FirstOrder(_) = class {
        total += crate::memory::bundle(d, queries as f64);
    }
    crate::memory::bytes(total)
}

/// The registry entry of `ellipsoid`.
pub const INFO: MethodInfo = MethodInfo {
    name: "ellipsoid",
    description: "central-cut ellipsoid method (Yudin & Nemirovski 1976; Khachiyan 1979; \
                  Bertsimas & Tsitsiklis 1997 ch. 8); bisection in d = 1",
    deterministic: true,
    span: false,
    families: &["feasibility", "first-order"],
    restriction: None,
    memory,
    memory_note: "a d x d matrix",
    build: |class, _seed| match class {
        Class::Feasibility(c) => Ok(Box::new(Ellipsoid::new(c))),
        Class::FirstOrder(c) => Ok(Box::new(Ellipsoid::first_order(c))),
        _ => Err(wrong_family("ellipsoid", &["feasibility", "first-order"])),
    },
};
