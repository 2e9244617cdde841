//! The slab-funnel adversary for first-order classes (docs/theory.md §2.4) [derived, with
//! proof]: against it every deterministic method needs at least
//!   d * ceil(log_7(L R / (2 eps)))  queries, for eps < L R / 2,
//! on convex functions over X = [-R, R]^d whose subgradients have l1 norm at most L (so
//! L-Lipschitz in every l_p norm); each run is also certified by its own witness pair
//! ([`SlabFunnel::witnesses`]) and checked by the exact verifier.
//!
//! # Construction (docs/theory.md §2.4)
//! Margin beta = 1/2 and slope ratio theta = 4/7 (a setting, [`FunnelSettings`], so that
//! the test suite can show that condition C1 of docs/theory.md §2.4 is needed). Level k has
//! half-width h_k = R ((1 - beta)/2)^k = R 4^-k, slope lambda_k = L theta^k, centre m_k
//! (m_0 = 0) and one sign s_{k,i} per coordinate, fixed lazily. Once fixed, its piece is
//!   p_{k,i}(y) = lambda_k (beta h_k - s_{k,i} (y_i - m_{k,i})),  gradient -lambda_k s_{k,i} e_i,
//! zero on the face y_i = m_{k,i} + s_{k,i} beta h_k and negative beyond it. When the last
//! sign of level k is fixed, level k + 1 opens on the slab beyond the faces:
//!   m_{k+1} = m_k + s_k (1 + beta) h_k / 2,  h_{k+1} = (1 - beta) h_k / 2,
//!   lambda_{k+1} = theta lambda_k.
//! The boundary pieces L (y_i - R) and L (-y_i - R) belong to every completion from the
//! start. At a query x (current level k, never all of its signs fixed):
//!   E = the largest revealed piece at x (boundary pieces, every piece of levels < k, the
//!       fixed pieces of level k);
//!   U = max over unfixed i of lambda_k (beta h_k + |m_{k,i} - x_i|), at i_U.
//! If E >= U the answer is (E, gradient of the largest piece); otherwise s_{k,i_U} =
//! sign(m_{k,i_U} - x_{i_U}) is fixed and the answer is (U, -lambda_k s e_{i_U}). Queries
//! anywhere in R^d are answered this way, inside or outside X and the level box.
//!
//! # Tie rules
//! E wins a tie with U (no sign is revealed). Among revealed pieces the first in this
//! order wins: boundary pieces (coordinate by coordinate, L (y_i - R) before
//! L (-y_i - R)), then levels 0, 1, ..., within a level the lowest coordinate. Among
//! unfixed coordinates the lowest index wins; the sign of a coordinate whose query lies
//! exactly on the centre (x_i = m_{k,i}) is +1. At most one sign is fixed per query.
//!
//! # What is proven (docs/theory.md §2.4)
//! (1) Pieces of levels < k are <= 0 on the level-k box Q_k = m_k + h_k [-1, 1]^d.
//! (2) Every answer equals f(x), with a valid subgradient, for every completion of the
//! signs (this uses the conditions C1 to C4 on beta and theta).
//! (3) beta lambda_k ||x - z||_inf <= the answer for every z in the alive region.
//! Certificate: while beta lambda_K h_K > eps at the current level K, the two functions
//! max{M, sigma ||y - w||_inf}, w = c -+ h_K e_{i0} (c the centre of the alive region,
//! i0 an unfixed coordinate, sigma = beta lambda_K, M the revealed pieces) reproduce every
//! answer and have disjoint eps-solution sets. Count: with r = theta (1 - beta)/2 = 1/7,
//! levels K = 0 .. K* qualify, K* = max{K : beta L R r^K > eps}, and each needs d sign
//! fixings, at most one per query: d (K* + 1) queries. Randomized methods: nothing is
//! claimed beyond the run-by-run certificate.
//!
//! # Exactness and cost
//! Centres and half-widths are dyadic, slopes are L (4/7)^k; every answer is an exact
//! rational ([`Exact`]). The winner is chosen in `f64` with rigorous error bounds and
//! decided exactly whenever the bounds cannot separate two candidates (never a
//! tolerance). Inside the current level box only level k's pieces can win (the older
//! ones are <= 0 there, U > 0), so an answer costs O(d) operations there, exact value
//! included; elsewhere every revealed piece is scanned, O(d k).

mod certificate;
mod scan;
mod select;
mod value;

use num_rational::BigRational;
use num_traits::{One, Signed, Zero};

use crate::adversary::{wrong_family, Adversary, AdversaryInfo, Scope, Undecided};
use crate::certificate::universal::Exchange;
use crate::class::{Class, FirstOrderClass};
use crate::error::Error;
use crate::exact::{f64_to_rational, nearest_f64, Exact};
use crate::oracle::{Answer, FirstOrderAnswer};
use crate::transcript::Witnesses;

use select::{Candidate, U};
use value::{Dyadic, Scale};

pub use certificate::FunnelCertificate;

/// When the universal LP search (docs/theory.md §2.2) tries to certify answers beyond the
/// funnel's own prefix. It can only extend the prefix, never shorten it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LpExtension {
    /// Never: the funnel's witness pair alone (docs/theory.md §2.4).
    Never,
    /// When the answers past the funnel's prefix exist and the transcript holds at most
    /// this many query coordinates (answers times d).
    UpTo {
        /// The largest answers-times-d for which the search runs.
        entries: u64,
    },
    /// Whenever answers past the funnel's prefix exist.
    Always,
}

/// Parameters of the slab funnel (docs/theory.md §2.4); beta is fixed at 1/2.
#[derive(Clone, Debug, PartialEq)]
pub struct FunnelSettings {
    /// Numerator of the slope ratio theta (default 4). The theorem needs conditions C1 to
    /// C4 of docs/theory.md §2.4 (theta = 4/7 and 9/16 meet them; 3/5 breaks C1, and the
    /// tests show the answers then become inconsistent); the count d ceil(log_7(...))
    /// is the one for 4/7.
    pub theta_numerator: u32,
    /// Denominator of the slope ratio theta (default 7); 0 < theta < 1.
    pub theta_denominator: u32,
    /// When the LP search may extend the certificate (default: up to
    /// [`DEFAULT_LP_ENTRIES`] answers times d).
    pub lp_extension: LpExtension,
}

/// The default size limit of the LP extension: answers times d. Measured (release build,
/// the project's 2-core machine): on the test grid (d <= 5, at most 81 answers) the search
/// adds 0 to 35 certified answers (level, analytic-center, sampled-centroid: typically 2
/// to 12) for 0.01 to 0.6 s a game; at answers times d = 2480 (level, d = 20) it takes
/// 0.6 s for 2 more answers, at 4020 (analytic-center, d = 20) 1.4 s for 21 more, at 9760
/// (level, d = 40) 2.0 s for 2 more, and at 60 400 (level, d = 100) far longer than the
/// game itself. Past 5000 the funnel's own witness pair stands alone.
pub const DEFAULT_LP_ENTRIES: u64 = 5000;

impl Default for FunnelSettings {
    fn default() -> Self {
        FunnelSettings {
            theta_numerator: 4,
            theta_denominator: 7,
            lp_extension: LpExtension::UpTo {
                entries: DEFAULT_LP_ENTRIES,
            },
        }
    }
}

impl FunnelSettings {
    /// Checks 0 < theta < 1.
    pub fn validate(&self) -> Result<(), Error> {
        if self.theta_numerator == 0 || self.theta_numerator >= self.theta_denominator {
            return Err(Error::InvalidSetting {
                name: "slab-funnel theta",
                reason: format!(
                    "theta = {}/{} must lie strictly between 0 and 1",
                    self.theta_numerator, self.theta_denominator
                ),
            });
        }
        Ok(())
    }

    /// theta as an exact rational.
    pub fn theta(&self) -> BigRational {
        BigRational::new(self.theta_numerator.into(), self.theta_denominator.into())
    }
}

/// What one answer does: which piece it answers with, and whether it fixes a sign.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Choice {
    /// The boundary piece L (y_i - R) (`upper`) or L (-y_i - R).
    Boundary {
        /// The coordinate i.
        coordinate: usize,
        /// Which face.
        upper: bool,
    },
    /// The revealed piece of `level` in `coordinate`.
    Revealed {
        /// The level.
        level: usize,
        /// The coordinate.
        coordinate: usize,
    },
    /// Fix the current level's sign in `coordinate` to `sign` and answer with its piece.
    Fix {
        /// The coordinate.
        coordinate: usize,
        /// +1 or -1.
        sign: i8,
    },
}

/// One level of the construction, exact, with `f64` views for the filters.
#[derive(Clone, Debug)]
pub struct Level {
    /// Centre m_k.
    pub center: Vec<BigRational>,
    /// Half-width h_k.
    pub half_width: BigRational,
    /// Slope lambda_k.
    pub slope: BigRational,
    /// Signs s_{k,i}: 0 while unfixed, else +1 or -1.
    pub signs: Vec<i8>,
    /// Coordinates in the order their signs were fixed.
    pub fix_order: Vec<usize>,
    /// 0-based index of the answer that opened this level (0 for level 0).
    pub opened_by: usize,
    /// beta lambda_k h_k > eps: the certificate theorem applies at this level.
    pub qualifies: bool,
    /// beta h_k.
    margin: BigRational,
    center_hi: Vec<f64>,
    /// A bound on |m_i - center_hi[i]| (0 when exact) and the sign of m_i - center_hi[i].
    center_err: Vec<f64>,
    center_rest_sign: Vec<i8>,
    half_width_f: f64,
    half_width_err: f64,
    margin_f: f64,
    margin_err: f64,
    slope_f: f64,
    slope_err: f64,
    /// The gradient entries -lambda_k and +lambda_k.
    minus_slope: Exact,
    plus_slope: Exact,
    /// beta h_k and m_k as dyadic numbers, lambda_k factored: exact values without gcds.
    margin_dyadic: Dyadic,
    center_dyadic: Vec<Dyadic>,
    scale: Scale,
}

/// The nearest `f64` of `x` and a bound on the distance (0 when exact).
fn view(x: &BigRational) -> (f64, f64, i8) {
    let hi = nearest_f64(x);
    let rest = x - f64_to_rational(hi);
    if rest.is_zero() {
        return (hi, 0.0, 0);
    }
    let sign = if rest.is_positive() { 1 } else { -1 };
    let bound = nearest_f64(&rest).abs() * (1.0 + 4.0 * U) + select::TINY;
    (hi, bound, sign)
}

/// An exact rational as [`Exact`], without the `f64` test when the denominator is not a
/// power of two (then no `f64` holds it).
pub(crate) fn exact_of(value: BigRational) -> Exact {
    let denom = value.denom();
    let twos = denom.trailing_zeros().unwrap_or(0);
    if (denom >> twos).is_one() {
        Exact::from_rational(value)
    } else {
        Exact::Ratio(Box::new(value))
    }
}

impl Level {
    fn new(
        center: Vec<BigRational>,
        half_width: BigRational,
        slope: BigRational,
        opened_by: usize,
        eps: &BigRational,
        primes: &[u32],
    ) -> Level {
        let d = center.len();
        let mut center_hi = Vec::with_capacity(d);
        let mut center_err = Vec::with_capacity(d);
        let mut center_rest_sign = Vec::with_capacity(d);
        for m in &center {
            let (hi, err, sign) = view(m);
            center_hi.push(hi);
            center_err.push(err);
            center_rest_sign.push(sign);
        }
        let margin = &half_width / BigRational::from_integer(2.into());
        let (half_width_f, half_width_err, _) = view(&half_width);
        let (margin_f, margin_err, _) = view(&margin);
        let (slope_f, slope_err, _) = view(&slope);
        let qualifies = &margin * &slope > *eps;
        Level {
            margin_dyadic: Dyadic::from_rational(&margin),
            center_dyadic: center.iter().map(Dyadic::from_rational).collect(),
            scale: Scale::new(&slope, primes),
            minus_slope: exact_of(-slope.clone()),
            plus_slope: exact_of(slope.clone()),
            center,
            half_width,
            slope,
            signs: vec![0; d],
            fix_order: Vec::new(),
            opened_by,
            qualifies,
            margin,
            center_hi,
            center_err,
            center_rest_sign,
            half_width_f,
            half_width_err,
            margin_f,
            margin_err,
            slope_f,
            slope_err,
        }
    }

    /// The exact sign of m_i - x_i, +1 on a tie; `a` = fl(center_hi[i] - x_i).
    fn sign_at(&self, i: usize, xi: f64, a: f64) -> i8 {
        if !a.is_finite() {
            return if self.center[i] < f64_to_rational(xi) {
                -1
            } else {
                1
            };
        }
        // a = 0: x_i = center_hi[i], so the rest of the centre decides.
        let negative = a < 0.0 || (a == 0.0 && self.center_rest_sign[i] < 0);
        if negative {
            -1
        } else {
            1
        }
    }

    /// lambda (beta h + t) for t known within `t_err`.
    fn value_approx(&self, t: f64, t_err: f64) -> (f64, f64) {
        let inner = self.margin_f + t;
        let inner_err = self.margin_err + t_err + U * inner.abs();
        let value = self.slope_f * inner;
        let err =
            self.slope_f * inner_err + self.slope_err * (inner.abs() + inner_err) + U * value.abs();
        select::finish(value, err)
    }

    /// The exact piece value lambda (beta h + sign (m_i - x_i)), as a reduced rational and
    /// as [`Exact`].
    fn piece_value(&self, i: usize, sign: i8, xi: f64) -> (BigRational, Exact) {
        let offset = self
            .margin_dyadic
            .plus_offset(sign, &self.center_dyadic[i], xi);
        self.scale.times(&offset)
    }

    /// The piece as (slope vector entry, intercept): lambda (beta h + s m_i) - lambda s y_i.
    fn piece_intercept(&self, i: usize) -> BigRational {
        let m = &self.center[i];
        let t = if self.signs[i] > 0 { m.clone() } else { -m };
        &self.slope * (&self.margin + t)
    }

    fn gradient_entry(&self, sign: i8) -> Exact {
        if sign > 0 {
            self.minus_slope.clone()
        } else {
            self.plus_slope.clone()
        }
    }
}

/// The slab-funnel resisting oracle (module docs).
#[derive(Clone, Debug)]
pub struct SlabFunnel {
    class: FirstOrderClass,
    settings: FunnelSettings,
    theta: BigRational,
    eps: BigRational,
    lipschitz: Exact,
    minus_lipschitz: Exact,
    levels: Vec<Level>,
    /// Answers given so far.
    count: usize,
    /// The answers, kept when the LP extension may run.
    exchanges: Vec<Exchange>,
    keep_exchanges: bool,
    /// The odd primes of theta's denominator, L as a scale, and -R, 0 as dyadic numbers
    /// (exact values of the boundary pieces L (+-x_i - R)).
    primes: Vec<u32>,
    boundary_scale: Scale,
    minus_half_width: Dyadic,
    zero: Dyadic,
    /// Scratch buffers of the selection.
    candidates: Vec<Candidate>,
    winners: Vec<Candidate>,
}

impl SlabFunnel {
    /// Starts at level 0 on X = [-R, R]^d.
    pub fn new(class: &FirstOrderClass, settings: FunnelSettings) -> Result<SlabFunnel, Error> {
        settings.validate()?;
        let eps = f64_to_rational(class.eps);
        let primes = value::odd_primes(settings.theta_denominator);
        let level = Level::new(
            vec![BigRational::zero(); class.dim],
            f64_to_rational(class.half_width),
            f64_to_rational(class.lipschitz),
            0,
            &eps,
            &primes,
        );
        Ok(SlabFunnel {
            class: class.clone(),
            keep_exchanges: settings.lp_extension != LpExtension::Never,
            theta: settings.theta(),
            settings,
            eps,
            lipschitz: Exact::Float(class.lipschitz),
            minus_lipschitz: Exact::Float(-class.lipschitz),
            levels: vec![level],
            count: 0,
            exchanges: Vec::new(),
            boundary_scale: Scale::new(&f64_to_rational(class.lipschitz), &[]),
            minus_half_width: Dyadic::from_f64(-class.half_width),
            zero: Dyadic::from_f64(0.0),
            primes,
            candidates: Vec::new(),
            winners: Vec::new(),
        })
    }

    /// The class played.
    pub fn class(&self) -> &FirstOrderClass {
        &self.class
    }

    /// The settings.
    pub fn settings(&self) -> &FunnelSettings {
        &self.settings
    }

    /// The levels opened so far (the last is the current one).
    pub fn levels(&self) -> &[Level] {
        &self.levels
    }

    /// Answers given so far.
    pub fn answers_given(&self) -> usize {
        self.count
    }

    /// Signs fixed so far over all levels.
    pub fn signs_fixed(&self) -> usize {
        let d = self.class.dim;
        (self.levels.len() - 1) * d + self.current().fix_order.len()
    }

    fn current(&self) -> &Level {
        self.levels.last().expect("at least one level")
    }

    /// Answers x with `choice` (one of [`SlabFunnel::choices`]; the game uses
    /// [`SlabFunnel::default_choice`]) and updates the construction.
    pub fn answer_with(&mut self, x: &[f64], choice: Choice) -> Answer {
        let d = self.class.dim;
        let (_, value) = self.value_exact(&choice, x);
        let mut subgradient = vec![Exact::ZERO; d];
        match choice {
            Choice::Boundary { coordinate, upper } => {
                subgradient[coordinate] = if upper {
                    self.lipschitz.clone()
                } else {
                    self.minus_lipschitz.clone()
                };
            }
            Choice::Revealed { level, coordinate } => {
                let level = &self.levels[level];
                subgradient[coordinate] = level.gradient_entry(level.signs[coordinate]);
            }
            Choice::Fix { coordinate, sign } => {
                let answer_index = self.count;
                let level = self.levels.last_mut().expect("at least one level");
                debug_assert_eq!(level.signs[coordinate], 0, "fixing a fixed sign");
                level.signs[coordinate] = sign;
                level.fix_order.push(coordinate);
                subgradient[coordinate] = level.gradient_entry(sign);
                if level.fix_order.len() == d {
                    self.open_next_level(answer_index);
                }
            }
        }
        let answer = FirstOrderAnswer { value, subgradient };
        if let LpExtension::UpTo { entries } = self.settings.lp_extension {
            // Past the size limit the LP extension never runs: stop keeping answers.
            if (self.count as u64 + 1).saturating_mul(d as u64) > entries {
                self.keep_exchanges = false;
                self.exchanges = Vec::new();
            }
        }
        if self.keep_exchanges {
            self.exchanges.push(Exchange {
                point: x.to_vec(),
                value: answer.value.clone(),
                gradient: answer.subgradient.clone(),
            });
        }
        self.count += 1;
        Answer::FirstOrder(answer)
    }

    /// Opens level k + 1 beyond the faces of level k (module docs).
    fn open_next_level(&mut self, opened_by: usize) {
        let current = self.current();
        let step = &current.half_width * BigRational::new(3.into(), 4.into());
        let center = current
            .center
            .iter()
            .zip(&current.signs)
            .map(|(m, &s)| if s > 0 { m + &step } else { m - &step })
            .collect();
        let half_width = &current.half_width / BigRational::from_integer(4.into());
        let slope = &current.slope * &self.theta;
        let level = Level::new(
            center,
            half_width,
            slope,
            opened_by,
            &self.eps,
            &self.primes,
        );
        self.levels.push(level);
    }

    /// The funnel's own certificate (docs/theory.md §2.4), without the LP extension.
    pub fn funnel_certificate(&self) -> Option<FunnelCertificate> {
        certificate::funnel_certificate(self)
    }
}

/// Memory ([`crate::memory`]): the levels a game of `queries` queries surely opens (one
/// after every d fixed signs, at most one sign a query; a correct deterministic method
/// must open the qualifying ones, at most ceil(log_7(L R / (2 eps))), docs/theory.md §2.4;
/// deeper levels are the method's doing and are not counted: a game that keeps fixing
/// signs grows past this), each priced by [`crate::memory::levels`]; and the witness
/// pair: 2 d boundary pieces and d pieces a qualifying level, each with a dense slope of
/// d exact numbers, held by the two witnesses, the final record and the verifier (64 d^2
/// bytes a level); the answers kept for the LP extension and its LP (while answers x d
/// is at most 5000) add a little.
fn memory(class: &Class, queries: u64) -> u64 {
    let Class::FirstOrder(c) = class else {
        return crate::memory::bytes(crate::memory::vectors(4.0, class.query_dim() as f64));
    };
    let d = c.dim as f64;
    let qualifying = (crate::bounds::slab_funnel_lower_bound(c) as f64 / d).max(1.0);
    let opened = (queries as f64 / d + 1.0).min(qualifying + 1.0);
    let witnesses = 4.0 * crate::memory::EXACT * d * d * (opened + 2.0);
    // It runs while answers x d <= 5000 (DEFAULT_LP_ENTRIES): at most 5000 variables.
    let extension = crate::memory::lp_work(5000.0, d.min(5000.0) + 2.0, 10_000.0);
    let levels = crate::memory::levels(d, opened, qualifying + 1.0);
    crate::memory::bytes(levels + witnesses + extension + crate::memory::vectors(4.0, d))
}

/// The registry entry.
pub const INFO: AdversaryInfo = AdversaryInfo {
    name: "slab-funnel",
    family: "first-order",
    description: "first-order, box: nested slab levels revealing one sign per query (forces \
                  d*ceil(log_7(L R/(2 eps))) on every deterministic method; theorem, \
                  docs/theory.md §2.4; every run also certified)",
    scope: Scope::EveryMethod,
    restriction: None,
    memory,
    memory_note: "its levels and a witness pair with d x d exact slopes a level",
    build: |class| match class {
        Class::FirstOrder(c) => Ok(Box::new(SlabFunnel::new(c, FunnelSettings::default())?)),
        _ => Err(wrong_family("slab-funnel", "first-order")),
    },
};

impl Adversary for SlabFunnel {
    fn name(&self) -> &str {
        "slab-funnel"
    }

    fn answer(&mut self, query: &[f64]) -> Answer {
        let choice = self.default_choice(query);
        self.answer_with(query, choice)
    }

    fn witnesses(&self) -> Option<Witnesses> {
        certificate::witnesses(self)
    }

    fn undecided(&self) -> Undecided {
        // log2 of the alive volume: (2 h_k)^(d - F) (h_k / 2)^F, h_k = R 4^-k.
        let d = self.class.dim as f64;
        let k = (self.levels.len() - 1) as f64;
        let fixed = self.current().fix_order.len() as f64;
        let side = (2.0 * self.class.half_width).log2() - 2.0 * k;
        Undecided::Log2Volume(d * side - 2.0 * fixed)
    }
}
