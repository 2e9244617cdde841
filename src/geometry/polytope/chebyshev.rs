//! The Chebyshev centre of a [`Polytope`] (its largest inscribed ball) by LP, with a
//! radius bound from the LP dual that holds whatever the solver's accuracy, and the ball
//! test a method uses to decide "empty" (the module docs of [`super`]).

use clarabel::algebra::CscMatrix;
use clarabel::solver::{
    DefaultSettingsBuilder, DefaultSolver, IPSolver, NonnegativeConeT, SolverStatus,
};

use crate::error::Error;

use super::*;

impl Polytope {
    /// A frame `(m, s)` that maps the bounding box to [-1, 1]-ish coordinates:
    /// `z = (y - m) / s` with m its centre and s its largest half side.
    pub fn frame(&self) -> (Vec<f64>, f64) {
        let (lower, upper) = (&self.tight_lower, &self.tight_upper);
        let shift: Vec<f64> = (0..self.dim)
            .map(|j| 0.5 * lower[j] + 0.5 * upper[j])
            .collect();
        let scale = (0..self.dim).fold(0.0f64, |m, j| m.max(0.5 * upper[j] - 0.5 * lower[j]));
        (shift, scale)
    }

    /// Upper bound on the inscribed radius from the box alone: half the shortest side,
    /// rounded up.
    fn box_radius_bound(&self) -> f64 {
        let half = (0..self.dim).fold(f64::INFINITY, |m, j| {
            m.min(0.5 * self.tight_upper[j] - 0.5 * self.tight_lower[j])
        });
        loosen_up(half.max(0.0), 4.0 * EPS)
    }

    /// The largest inscribed ball (centre, radius), or `None` when the model has no
    /// interior. See [`Polytope::chebyshev`].
    pub fn chebyshev_ball(&self) -> Result<Option<(Vec<f64>, f64)>, Error> {
        Ok(self.chebyshev()?.ball)
    }

    /// Solves the Chebyshev-centre LP (module doc) and returns the ball with a certified
    /// upper bound on its radius. Without dense rows the answer is the box centre and
    /// half the shortest side, no LP needed. Solver failures (status other than solved
    /// or infeasible) are [`Error::MethodFailed`].
    pub fn chebyshev(&self) -> Result<Chebyshev, Error> {
        let d = self.dim;
        if self.is_known_empty() || (0..d).any(|j| self.tight_upper[j] <= self.tight_lower[j]) {
            return Ok(Chebyshev {
                ball: None,
                radius_bound: 0.0,
            });
        }
        let box_bound = self.box_radius_bound();
        let active: Vec<usize> = (0..self.num_rows())
            .filter(|&i| !self.redundant_on_bounding_box(i))
            .collect();
        if active.is_empty() {
            let (center, _) = self.frame();
            let radius = (0..d).fold(f64::INFINITY, |m, j| {
                m.min((self.tight_upper[j] - center[j]).min(center[j] - self.tight_lower[j]))
            });
            return Ok(Chebyshev {
                ball: (radius > 0.0).then_some((center, radius)),
                radius_bound: box_bound,
            });
        }
        let mut result = self.chebyshev_lp(&active)?;
        result.radius_bound = result.radius_bound.min(box_bound);
        Ok(result)
    }

    /// True when dense row `i` holds on the whole bounding box T (with a rounding
    /// margin), so the LP may leave it out: far rows only spoil the LP's scaling.
    fn redundant_on_bounding_box(&self, i: usize) -> bool {
        let (mut high, mut reach) = (0.0, 0.0);
        for ((a, l), u) in self
            .row(i)
            .iter()
            .zip(&self.tight_lower)
            .zip(&self.tight_upper)
        {
            high += (a * l).max(a * u);
            reach += a.abs() * l.abs().max(u.abs());
        }
        self.offsets[i] >= high + (self.dim as f64 + 2.0) * EPS * reach
    }

    /// The Chebyshev LP over T and the dense rows listed in `active`.
    fn chebyshev_lp(&self, active: &[usize]) -> Result<Chebyshev, Error> {
        let d = self.dim;
        let m = active.len();
        let geometric = 2 * d + m;
        let (shift, scale) = self.frame();
        if !(scale > 0.0 && scale.is_finite()) {
            return Err(fail(format!(
                "box scale {scale} is not positive and finite"
            )));
        }
        // Right-hand sides in the frame z = (y - shift) / scale, with bounds on their
        // rounding errors (each a subtraction, a dot product and a division).
        let mut rhs = Vec::with_capacity(geometric + 1);
        let mut err = Vec::with_capacity(geometric);
        for (u, m) in self.tight_upper.iter().zip(&shift) {
            let v = (u - m) / scale;
            rhs.push(v);
            err.push(2.0 * EPS * v.abs());
        }
        for (l, m) in self.tight_lower.iter().zip(&shift) {
            let v = (m - l) / scale;
            rhs.push(v);
            err.push(2.0 * EPS * v.abs());
        }
        for &i in active {
            let row = self.row(i);
            let b = self.offsets[i];
            let v = (b - dot(row, &shift)) / scale;
            let size: f64 = b.abs()
                + row
                    .iter()
                    .zip(&shift)
                    .map(|(a, s)| (a * s).abs())
                    .sum::<f64>();
            rhs.push(v);
            err.push((d as f64 + 2.0) * EPS * size / scale + 2.0 * EPS * v.abs());
        }
        rhs.push(0.0);
        if rhs.iter().any(|v| !v.is_finite()) {
            return Err(fail("Chebyshev LP data is not finite".into()));
        }
        // Constraint matrix, column by column (rows in increasing order), with the
        // bounding box T as the box rows (same feasible set, module doc):
        // rows 0..d: c_j + r <= U_j; rows d..2d: -c_j + r <= -L_j;
        // rows 2d..2d+m: a_i . c + r <= b'_i; last row: -r <= 0.
        let mut colptr = Vec::with_capacity(d + 2);
        let mut rowval = Vec::new();
        let mut nzval = Vec::new();
        colptr.push(0);
        for j in 0..d {
            rowval.push(j);
            nzval.push(1.0);
            rowval.push(d + j);
            nzval.push(-1.0);
            for (k, &i) in active.iter().enumerate() {
                let a = self.rows[i * d + j];
                if a != 0.0 {
                    rowval.push(2 * d + k);
                    nzval.push(a);
                }
            }
            colptr.push(rowval.len());
        }
        for i in 0..geometric {
            rowval.push(i);
            nzval.push(1.0);
        }
        rowval.push(geometric);
        nzval.push(-1.0);
        colptr.push(rowval.len());
        let a_matrix = CscMatrix::new(geometric + 1, d + 1, colptr, rowval, nzval);
        let p_matrix = CscMatrix::zeros((d + 1, d + 1));
        let mut q = vec![0.0; d + 1];
        q[d] = -1.0;
        let cones = [NonnegativeConeT(geometric + 1)];
        let settings = DefaultSettingsBuilder::default()
            .verbose(false)
            .tol_gap_abs(1e-10)
            .tol_gap_rel(1e-10)
            .tol_feas(1e-10)
            .build()
            .map_err(|e| fail(format!("Clarabel settings rejected: {e}")))?;
        let mut solver = DefaultSolver::new(&p_matrix, &q, &a_matrix, &rhs, &cones, settings)
            .map_err(|e| fail(format!("Clarabel rejected the Chebyshev LP: {e}")))?;
        solver.solve();
        let solution = &solver.solution;
        let ball = match solution.status {
            SolverStatus::Solved | SolverStatus::AlmostSolved => {
                let x = &solution.x;
                let center: Vec<f64> = (0..d).map(|j| shift[j] + scale * x[j]).collect();
                let radius = scale * x[d];
                (radius > 0.0 && radius.is_finite() && center.iter().all(|c| c.is_finite()))
                    .then_some((center, radius))
            }
            SolverStatus::PrimalInfeasible | SolverStatus::AlmostPrimalInfeasible => None,
            status => {
                return Err(fail(format!(
                    "Clarabel ended the Chebyshev LP with status {status:?}"
                )))
            }
        };
        let radius_bound =
            self.dual_radius_bound(&solution.z[..geometric], &rhs, &err, scale, active);
        Ok(Chebyshev { ball, radius_bound })
    }

    /// The weak-duality bound of [`Chebyshev::radius_bound`] for dual weights `z` on the
    /// geometric rows (box rows of T, then the `active` dense rows), in original units,
    /// with every rounding taken outward.
    fn dual_radius_bound(
        &self,
        z: &[f64],
        rhs: &[f64],
        err: &[f64],
        scale: f64,
        active: &[usize],
    ) -> f64 {
        let d = self.dim;
        let m = active.len();
        let z: Vec<f64> = z
            .iter()
            .map(|v| if v.is_finite() && *v > 0.0 { *v } else { 0.0 })
            .collect();
        let total: f64 = z.iter().sum();
        if total <= 0.0 || !total.is_finite() {
            return f64::INFINITY;
        }
        // w = A_c^T z, and the magnitude of its terms.
        let mut w = vec![0.0; d];
        let mut w_size = vec![0.0; d];
        for j in 0..d {
            w[j] = z[j] - z[d + j];
            w_size[j] = z[j] + z[d + j];
        }
        for (k, &i) in active.iter().enumerate() {
            let zi = z[2 * d + k];
            if zi == 0.0 {
                continue;
            }
            for (j, a) in self.row(i).iter().enumerate() {
                w[j] += zi * a;
                w_size[j] += zi * a.abs();
            }
        }
        // |z_j| <= reach on the box part of the frame.
        let reach = (0..d).fold(0.0f64, |r, j| r.max(rhs[j].abs()).max(rhs[d + j].abs()));
        let reach = loosen_up(reach, 4.0 * EPS);
        let n = (3 * d + m + 8) as f64;
        let mut numerator = 0.0;
        let mut size = 0.0;
        for i in 0..z.len() {
            numerator += z[i] * (rhs[i] + err[i]);
            size += z[i] * (rhs[i].abs() + err[i]);
        }
        for j in 0..d {
            numerator += reach * (w[j].abs() + n * EPS * w_size[j]);
            size += reach * (w[j].abs() + w_size[j]);
        }
        let numerator = numerator + n * EPS * size;
        if numerator <= 0.0 {
            return 0.0;
        }
        let total_low = total * (1.0 - n * EPS);
        loosen_up(numerator / total_low * scale, 4.0 * EPS)
    }

    /// Second Chebyshev LP, in a trust box around a first centre `c0` (radius `r0`) that
    /// the first LP could not place strictly inside: the model intersected with
    /// c0 + [-w, w]^d, w = max(1e3 r0, 1e-8 s) (s the frame scale, so w exceeds the first
    /// LP's error of about 1e-10 s), rows that hold on the whole trust box dropped. Its
    /// frame has scale about w, so its centre is accurate to about 1e-10 w. Any ball it
    /// finds lies in the model; it is returned when its centre is strictly inside.
    pub(super) fn refine_center(
        &self,
        c0: &[f64],
        r0: f64,
    ) -> Result<Option<(Vec<f64>, f64)>, Error> {
        let d = self.dim;
        let w = (1e3 * r0).max(1e-8 * self.frame().1);
        let mut sub = Polytope::cube(d, 0.0);
        for (j, c) in c0.iter().enumerate() {
            sub.lower[j] = self.tight_lower[j].max(c - w);
            sub.upper[j] = self.tight_upper[j].min(c + w);
        }
        sub.tight_lower.clone_from(&sub.lower);
        sub.tight_upper.clone_from(&sub.upper);
        for i in 0..self.num_rows() {
            let row = self.row(i);
            let (mut high, mut reach) = (0.0, 0.0);
            for ((a, l), u) in row.iter().zip(&sub.lower).zip(&sub.upper) {
                high += (a * l).max(a * u);
                reach += a.abs() * l.abs().max(u.abs());
            }
            if self.offsets[i] >= high + (d as f64 + 2.0) * EPS * reach {
                continue;
            }
            sub.rows.extend_from_slice(row);
            sub.offsets.push(self.offsets[i]);
        }
        sub.tighten();
        let chebyshev = sub.chebyshev()?;
        Ok(chebyshev.ball.filter(|(c, _)| self.contains_strictly(c)))
    }

    /// Decides what the model says about rho-balls: [`BallTest::NoBall`] when the box
    /// is too thin ([`Polytope::box_too_thin_for`]), the model is known empty, or the
    /// certified radius bound is at most rho (then r* <= rho, and a rho-ball strictly
    /// inside would need r* > rho: at r* = rho some strict cut would touch every
    /// optimal ball, because box rows alone have the opposite normals of a side of
    /// length 2 r* < 2R); otherwise the Chebyshev ball. An LP that finds no interior
    /// while its bound still exceeds rho, or whose centre is not strictly inside P in
    /// `f64` even after a second LP in a small trust box around it (the LP's accuracy,
    /// about 1e-10 of the frame scale, no longer resolves P), is a
    /// [`Error::MethodFailed`]: the method stops instead of repeating a useless query.
    pub fn ball_test(&self, rho: f64) -> Result<BallTest, Error> {
        if self.is_known_empty() || self.box_too_thin_for(rho) {
            return Ok(BallTest::NoBall);
        }
        let chebyshev = self.chebyshev()?;
        if chebyshev.radius_bound <= rho {
            return Ok(BallTest::NoBall);
        }
        match chebyshev.ball {
            Some((center, radius)) if self.contains_strictly(&center) => {
                Ok(BallTest::Center(center, radius))
            }
            Some((center, radius)) if self.num_rows() > 0 => {
                match self.refine_center(&center, radius)? {
                    Some((c, r)) => Ok(BallTest::Center(c, r)),
                    None => Err(fail(format!(
                        "the model is too thin for the Chebyshev LP to place a centre \
                         strictly inside (LP radius {radius:e}, frame scale {:e}, rho {rho:e})",
                        self.frame().1
                    ))),
                }
            }
            Some((_, radius)) => Err(fail(format!(
                "the model is too thin for the Chebyshev LP to place a centre strictly \
                 inside (LP radius {radius:e}, frame scale {:e}, rho {rho:e})",
                self.frame().1
            ))),
            None => Err(fail(format!(
                "the Chebyshev LP found no interior point, yet its radius bound {} exceeds \
                 rho = {rho}",
                chebyshev.radius_bound
            ))),
        }
    }
}
