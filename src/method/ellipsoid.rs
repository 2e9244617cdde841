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

use crate::class::{FeasibilityClass, Promise};
use crate::error::Error;
use crate::geometry::BoxModel;
use crate::method::Method;
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
}

impl Ellipsoid {
    /// Starts from the ball of radius R sqrt(d) around the origin.
    pub fn new(class: &FeasibilityClass) -> Ellipsoid {
        let d = class.dim;
        let radius2 = class.half_width * class.half_width * d as f64;
        let mut shape = vec![0.0; d * d];
        for i in 0..d {
            shape[i * d + i] = radius2;
        }
        let log_radius = class.half_width.ln() + 0.5 * (d as f64).ln();
        Ellipsoid {
            dim: d,
            center: vec![0.0; d],
            shape,
            pa: vec![0.0; d],
            dense: vec![0.0; d],
            log_volume: d as f64 * log_radius,
            // A relative margin so rounding in the running sum never claims too early.
            log_volume_floor: d as f64 * class.rho.ln()
                - 1e-9 * (1.0 + d as f64 * log_radius.abs()),
            log_ratio: if d >= 2 { log_volume_ratio(d) } else { 0.0 },
            interval: (d == 1).then(|| BoxModel::cube(1, class.half_width)),
            rho: class.rho,
            promise: class.promise,
            found: None,
        }
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
    fn give_up(&self, centre: Vec<f64>) -> Output {
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

/// ln r_d = ln(d/(d+1)) + ((d-1)/2) ln(d^2/(d^2-1)), computed with `ln_1p` so the
/// tiny second term keeps its digits (THEORY.md 1.2).
pub fn log_volume_ratio(d: usize) -> f64 {
    let df = d as f64;
    let first = -(1.0 / df).ln_1p();
    let second = 0.5 * (df - 1.0) * (1.0 / (df * df - 1.0)).ln_1p();
    first + second
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
