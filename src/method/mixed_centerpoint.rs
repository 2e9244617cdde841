//! Mixed-integer centerpoint by sampling: sample the method's own alive mixed-integer
//! set fibre by fibre, and query the sample of largest (approximate) depth among the
//! samples. Seeded.
//!
//! Source: Basu & Oertel, "Centerpoints: a link between optimization and convex
//! geometry", SIAM J. Optim. 27 (2017): a mixed-integer centerpoint of depth
//! 1/(2^n (d + 1)) exists, so querying one removes that fraction of the mixed-integer
//! measure; Oertel, Wagner & Weismantel, Oper. Res. Lett. 42 (2014) for the integer
//! case. Here the set is sampled instead: each fibre that is not ruled out (its box model
//! still fits a rho-ball, see [`crate::method::fibre_bisection`]) gets samples in
//! proportion to its box volume, at least one, uniform in its box model and kept only
//! when they satisfy every cut restricted to that fibre; the depth of a sample is the
//! fewest samples on one closed side of a hyperplane through it, minimised over a fixed
//! set of random directions (Tukey depth, estimated). The deepest sample is queried
//! (ties: the first). When no sample survives, the centre of the first open fibre's box
//! is queried. "None" once every fibre is ruled out.

use std::cmp::Ordering;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::class::{Class, LatticeClass};
use crate::error::Error;
use crate::geometry::BoxModel;
use crate::method::enumerate::{cut_excludes, cut_excludes_view, lattice_of};
use crate::method::fibre_bisection::restrict;
use crate::method::{wrong_family, Method, MethodInfo};
use crate::oracle::{Answer, Cut, Output, Separation, Step};

/// Samples per query.
pub const SAMPLES: usize = 64;
/// Directions used to estimate depth.
pub const DIRECTIONS: usize = 32;

/// Sampled mixed-integer centerpoint.
#[derive(Clone, Debug)]
pub struct MixedCenterpoint {
    lattice: Vec<Vec<f64>>,
    d: usize,
    half_width: f64,
    rho: f64,
    /// Per lattice point: its box model, `None` once ruled out.
    models: Vec<Option<BoxModel>>,
    /// Cuts with their offsets' nearest `f64`.
    cuts: Vec<(Cut, f64)>,
    rng: ChaCha8Rng,
    found: Option<Vec<f64>>,
}

impl MixedCenterpoint {
    /// Starts with every fibre open (at most 2^20 lattice points).
    pub fn new(class: &LatticeClass, seed: u64) -> Result<MixedCenterpoint, Error> {
        let lattice: Vec<Vec<f64>> = lattice_of(class, "mixed-centerpoint")?
            .into_iter()
            .map(|p| p.into_iter().map(|v| v as f64).collect())
            .collect();
        let models = vec![Some(BoxModel::cube(class.cont_dim, class.half_width)); lattice.len()];
        Ok(MixedCenterpoint {
            lattice,
            d: class.cont_dim,
            half_width: class.half_width,
            rho: class.rho,
            models,
            cuts: Vec::new(),
            rng: ChaCha8Rng::seed_from_u64(seed),
            found: None,
        })
    }

    fn open(&self, model: &BoxModel) -> bool {
        self.d == 0
            || model
                .lower
                .iter()
                .zip(&model.upper)
                .all(|(l, u)| crate::exact::cmp_diff(*u, *l, 2.0 * self.rho) == Ordering::Greater)
    }

    fn samples(&mut self) -> Vec<Vec<f64>> {
        let open: Vec<usize> = (0..self.lattice.len())
            .filter(|&k| self.models[k].as_ref().is_some_and(|m| self.open(m)))
            .collect();
        let volumes: Vec<f64> = open
            .iter()
            .map(|&k| {
                let m = self.models[k].as_ref().expect("open");
                m.lower
                    .iter()
                    .zip(&m.upper)
                    .map(|(l, u)| ((u - l) / (2.0 * self.half_width)).max(0.0))
                    .product::<f64>()
            })
            .collect();
        let total: f64 = volumes.iter().sum();
        let mut out = Vec::new();
        for (slot, &k) in open.iter().enumerate() {
            let share = if total > 0.0 {
                (SAMPLES as f64 * volumes[slot] / total).round() as usize
            } else {
                1
            };
            let model = self.models[k].clone().expect("open");
            for _ in 0..share.max(1) {
                let mut point = self.lattice[k].clone();
                for (l, u) in model.lower.iter().zip(&model.upper) {
                    let t: f64 = self.rng.random();
                    point.push((l + t * (u - l)).clamp(*l, *u));
                }
                if !self
                    .cuts
                    .iter()
                    .any(|(c, b)| cut_excludes_view(c, *b, &point))
                {
                    out.push(point);
                }
            }
        }
        out
    }

    fn deepest(&mut self, samples: &[Vec<f64>]) -> usize {
        let dim = samples[0].len();
        let mut depth = vec![usize::MAX; samples.len()];
        for _ in 0..DIRECTIONS {
            let u: Vec<f64> = (0..dim)
                .map(|_| self.rng.random::<f64>() * 2.0 - 1.0)
                .collect();
            let proj: Vec<f64> = samples
                .iter()
                .map(|p| p.iter().zip(&u).map(|(a, b)| a * b).sum())
                .collect();
            for (k, pk) in proj.iter().enumerate() {
                let above = proj.iter().filter(|v| *v >= pk).count();
                let below = proj.iter().filter(|v| *v <= pk).count();
                depth[k] = depth[k].min(above.min(below));
            }
        }
        let mut best = 0;
        for k in 1..samples.len() {
            if depth[k] > depth[best] {
                best = k;
            }
        }
        best
    }
}

impl Method for MixedCenterpoint {
    fn name(&self) -> &str {
        "mixed-centerpoint"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if let Some(point) = self.found.take() {
            return Ok(Step::Output(Output::Point { point }));
        }
        let samples = self.samples();
        if !samples.is_empty() {
            let k = self.deepest(&samples);
            query.copy_from_slice(&samples[k]);
            return Ok(Step::Query);
        }
        let first_open = (0..self.lattice.len())
            .find(|&k| self.models[k].as_ref().is_some_and(|m| self.open(m)));
        match first_open {
            None => Ok(Step::Output(Output::Empty)),
            Some(k) => {
                let n = self.lattice[k].len();
                query[..n].copy_from_slice(&self.lattice[k]);
                self.models[k]
                    .as_ref()
                    .expect("open")
                    .center_into(&mut query[n..]);
                Ok(Step::Query)
            }
        }
    }

    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        match answer.to_separation(query) {
            Separation::Inside => self.found = Some(query.to_vec()),
            Separation::Cut(cut) => {
                let cut = cut.into_owned();
                for k in 0..self.lattice.len() {
                    let keep = match self.models[k].as_mut() {
                        None => continue,
                        Some(_) if self.d == 0 => !cut_excludes(&cut, &self.lattice[k]),
                        Some(model) => restrict(&cut, &self.lattice[k], model),
                    };
                    if !keep {
                        self.models[k] = None;
                    }
                }
                let view = cut.offset.to_f64();
                self.cuts.push((cut, view));
            }
        }
        Ok(())
    }
}

/// Memory ([`crate::memory`]): per lattice point of the integer box its
/// coordinates, its fibre's box model (2 d numbers) and at least one sample point (n + d
/// numbers, twice with its projections); every cut answered (a dense
/// normal of n + d numbers, its offset and its `f64` view).
fn memory(class: &Class, queries: u64) -> u64 {
    let Class::Lattice(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let (f, v) = (crate::memory::F64, crate::memory::VEC);
    let n = c.int_dim() as f64;
    let d = c.cont_dim as f64;
    let q = c.query_dim() as f64;
    let points = crate::memory::lattice_points(&c.lower, &c.upper).max(SAMPLES as f64);
    crate::memory::bytes(
        points * (f * n + v + 2.0 * f * d + 3.0 * v + 2.0 * (f * q + v))
            + queries as f64 * (f * q + 72.0)
            + crate::memory::vectors(4.0, q),
    )
}

/// The registry entry of `mixed-centerpoint`.
pub const INFO: MethodInfo = MethodInfo {
    name: "mixed-centerpoint",
    description: "mixed-integer: deepest of samples drawn fibre by fibre (sampled \
                  centerpoint; Basu & Oertel, SIAM J. Optim. 2017)",
    deterministic: false,
    span: false,
    families: &["lattice"],
    restriction: None,
    memory,
    memory_note: "a box per lattice point, lattice points x 2 d numbers, and every cut",
    build: |class, seed| match class {
        Class::Lattice(c) => Ok(Box::new(MixedCenterpoint::new(c, seed)?)),
        _ => Err(wrong_family("mixed-centerpoint", &["lattice"])),
    },
};
