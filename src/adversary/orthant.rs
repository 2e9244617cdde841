//! The orthant-level adversary for first-order classes (THEORY.md 2.3) [ours: no
//! closed-form guarantee is proven; every run is certified by the universal certificate
//! of THEORY.md 2.2, and only what the verifier confirms is claimed].
//!
//! Levels k = 0, 1, ... each carry a centre m_k, half-width h_k, base value c_k, slope
//! lambda_k and signs s_k in {+1, -1}^d fixed lazily; level k's piece is
//!   g_k(y) = c_k + lambda_k max_i s_{k,i} (m_{k,i} - y_i).
//! Start: m_0 = 0, h_0 = R, c_0 = 0, lambda_0 = L, no sign fixed. A query y is answered
//! with the largest of these candidate values, exactly:
//! - every completed level j and coordinate i: c_j + lambda_j s_{j,i} (m_{j,i} - y_i);
//! - the current level's fixed coordinates: c + lambda s_i (m_i - y_i);
//! - its unfixed coordinates: c + lambda |m_i - y_i| (answering one fixes
//!   s_i = sign(m_i - y_i), +1 on a tie; at most one sign is revealed per query).
//!
//! Ties go to completed levels, then fixed coordinates, then unfixed ones; within each,
//! the lowest level, then the lowest coordinate (THEORY.md 2.3, step 3). The answer is
//! (value, -lambda s e_i) of the winning term. When all d signs of the current level are
//! fixed, level k+1 opens with margins beta, gamma and ratio theta:
//!   h' = (1 - beta - gamma) h / 2, lambda' = theta lambda, m' = m + s (1 + beta - gamma) h / 2,
//!   c' = c - (lambda beta h + 2 lambda' h').
//!
//! Exactness: every level parameter is an exact rational; the winner is chosen in `f64`
//! with a rigorous error bound and decided exactly whenever two candidates are within
//! it, and the answered value is computed exactly (THEORY.md section 0). Cost per answer
//! is O(levels * d), independent of the number of earlier queries; the answers are also
//! kept so that [`Adversary::witnesses`] can run the universal certificate search.

use num_rational::BigRational;
use num_traits::{One, Signed, Zero};

use crate::adversary::{Adversary, Undecided};
use crate::certificate::universal;
use crate::class::FirstOrderClass;
use crate::error::Error;
use crate::exact::{f64_to_rational, nearest_f64, Exact};
use crate::instance::Witnesses;
use crate::oracle::{Answer, FirstOrderAnswer};

/// Parameters of the orthant-level construction (THEORY.md 2.3).
#[derive(Clone, Debug, PartialEq)]
pub struct OrthantSettings {
    /// Margin beta >= 0 (default 0).
    pub beta: f64,
    /// Margin gamma >= 0 (default 0), with beta + gamma < 1.
    pub gamma: f64,
    /// Slope ratio theta in (0, 1] between consecutive levels (default 1/4).
    pub theta: f64,
}

impl Default for OrthantSettings {
    fn default() -> Self {
        OrthantSettings {
            beta: 0.0,
            gamma: 0.0,
            theta: 0.25,
        }
    }
}

impl OrthantSettings {
    /// Checks 0 <= beta, 0 <= gamma, beta + gamma < 1, 0 < theta <= 1, all finite.
    pub fn validate(&self) -> Result<(), Error> {
        let ok = self.beta.is_finite()
            && self.gamma.is_finite()
            && self.theta.is_finite()
            && self.beta >= 0.0
            && self.gamma >= 0.0
            && self.beta + self.gamma < 1.0
            && self.theta > 0.0
            && self.theta <= 1.0;
        if ok {
            Ok(())
        } else {
            Err(Error::InvalidClass {
                reason: format!(
                    "orthant parameters need beta, gamma >= 0, beta + gamma < 1 and \
                     0 < theta <= 1 (got beta = {}, gamma = {}, theta = {})",
                    self.beta, self.gamma, self.theta
                ),
            })
        }
    }
}

#[derive(Clone, Debug)]
struct Level {
    center: Vec<BigRational>,
    center_f: Vec<f64>,
    half_width: BigRational,
    base: BigRational,
    base_f: f64,
    slope: BigRational,
    slope_f: f64,
    /// 0 while unfixed, else +1 or -1.
    signs: Vec<i8>,
    fixed: usize,
}

/// One candidate term: `(rank, level, coordinate)` orders ties.
#[derive(Clone, Copy, Debug)]
struct Candidate {
    rank: u8,
    level: usize,
    coordinate: usize,
    sign: i8,
    approx: f64,
    error: f64,
}

/// The orthant-level resisting oracle.
#[derive(Clone, Debug)]
pub struct Orthant {
    class: FirstOrderClass,
    settings: OrthantSettings,
    levels: Vec<Level>,
    answers: Vec<universal::Exchange>,
    candidates: Vec<Candidate>,
}

impl Orthant {
    /// Starts at level 0 on X = [-R, R]^d.
    pub fn new(class: &FirstOrderClass, settings: OrthantSettings) -> Result<Orthant, Error> {
        settings.validate()?;
        let d = class.dim;
        let level = Level {
            center: vec![BigRational::zero(); d],
            center_f: vec![0.0; d],
            half_width: f64_to_rational(class.half_width),
            base: BigRational::zero(),
            base_f: 0.0,
            slope: f64_to_rational(class.lipschitz),
            slope_f: class.lipschitz,
            signs: vec![0; d],
            fixed: 0,
        };
        Ok(Orthant {
            class: class.clone(),
            settings,
            levels: vec![level],
            answers: Vec::new(),
            candidates: Vec::new(),
        })
    }

    /// Number of levels opened so far (the current one included).
    pub fn levels(&self) -> usize {
        self.levels.len()
    }

    /// The answers given so far.
    pub fn exchanges(&self) -> &[universal::Exchange] {
        &self.answers
    }

    fn open_next_level(&mut self) {
        let current = self.levels.last().expect("at least one level");
        let one = BigRational::one();
        let two = BigRational::from_integer(2.into());
        let beta = f64_to_rational(self.settings.beta);
        let gamma = f64_to_rational(self.settings.gamma);
        let theta = f64_to_rational(self.settings.theta);
        let h = &current.half_width;
        let h_next = (&one - &beta - &gamma) * h / &two;
        let slope_next = &theta * &current.slope;
        let step = (&one + &beta - &gamma) * h / &two;
        let center: Vec<BigRational> = current
            .center
            .iter()
            .zip(&current.signs)
            .map(|(m, s)| if *s > 0 { m + &step } else { m - &step })
            .collect();
        let base = &current.base - (&current.slope * &beta * h + &two * &slope_next * &h_next);
        let level = Level {
            center_f: center.iter().map(nearest_f64).collect(),
            center,
            half_width: h_next,
            base_f: nearest_f64(&base),
            base,
            slope_f: nearest_f64(&slope_next),
            slope: slope_next,
            signs: vec![0; self.class.dim],
            fixed: 0,
        };
        self.levels.push(level);
    }

    /// Collects every candidate with its f64 value and a rigorous error bound.
    fn collect_candidates(&mut self, y: &[f64]) {
        self.candidates.clear();
        let current = self.levels.len() - 1;
        const U: f64 = f64::EPSILON;
        for (j, level) in self.levels.iter().enumerate() {
            // Completed levels: only the best coordinate in f64 plus its near-ties matter,
            // but the f64 filter below handles ties; keep the best few per level.
            for (i, &yi) in y.iter().enumerate() {
                let diff = level.center_f[i] - yi;
                let (rank, sign, term) = match (j == current, level.signs[i]) {
                    (false, s) => (0u8, s, f64::from(s) * diff),
                    (true, 0) => {
                        let s = if diff >= 0.0 { 1 } else { -1 };
                        (2u8, s, diff.abs())
                    }
                    (true, s) => (1u8, s, f64::from(s) * diff),
                };
                let approx = level.base_f + level.slope_f * term;
                let magnitude =
                    level.base_f.abs() + level.slope_f.abs() * (level.center_f[i].abs() + yi.abs());
                let error = 8.0 * U * magnitude + 1e-300;
                self.candidates.push(Candidate {
                    rank,
                    level: j,
                    coordinate: i,
                    sign,
                    approx,
                    error,
                });
            }
        }
    }

    fn exact_value(&self, c: &Candidate, y: &[f64]) -> BigRational {
        let level = &self.levels[c.level];
        let diff = &level.center[c.coordinate] - f64_to_rational(y[c.coordinate]);
        let term = if c.sign > 0 { diff } else { -diff };
        &level.base + &level.slope * term
    }
}

impl Adversary for Orthant {
    fn name(&self) -> &str {
        "orthant"
    }

    fn answer(&mut self, y: &[f64]) -> Answer {
        self.collect_candidates(y);
        // The largest lower end of the intervals; every candidate whose upper end reaches
        // it may be the maximum.
        let floor = self
            .candidates
            .iter()
            .map(|c| c.approx - c.error)
            .fold(f64::NEG_INFINITY, f64::max);
        let mut contenders: Vec<Candidate> = self
            .candidates
            .iter()
            .filter(|c| c.approx + c.error >= floor)
            .copied()
            .collect();
        // Sign ties (m_i = y_i exactly) must follow the documented rule: +1.
        for c in &mut contenders {
            if c.rank == 2 {
                let level = &self.levels[c.level];
                let diff = &level.center[c.coordinate] - f64_to_rational(y[c.coordinate]);
                c.sign = if diff.is_negative() { -1 } else { 1 };
            }
        }
        let key = |c: &Candidate| (c.rank, c.level, c.coordinate);
        let winner = if contenders.len() == 1 {
            contenders[0]
        } else {
            let mut best: Option<(BigRational, Candidate)> = None;
            for c in contenders {
                let value = self.exact_value(&c, y);
                best = match best {
                    None => Some((value, c)),
                    Some((bv, bc)) => {
                        if value > bv || (value == bv && key(&c) < key(&bc)) {
                            Some((value, c))
                        } else {
                            Some((bv, bc))
                        }
                    }
                };
            }
            best.expect("at least one candidate").1
        };
        let value = self.exact_value(&winner, y);
        let current = self.levels.len() - 1;
        if winner.rank == 2 {
            let level = &mut self.levels[current];
            level.signs[winner.coordinate] = winner.sign;
            level.fixed += 1;
        }
        let slope = &self.levels[winner.level].slope;
        let mut subgradient = vec![Exact::ZERO; y.len()];
        subgradient[winner.coordinate] = Exact::from_rational(if winner.sign > 0 {
            -slope.clone()
        } else {
            slope.clone()
        });
        let answer = FirstOrderAnswer {
            value: Exact::from_rational(value),
            subgradient,
        };
        if self.levels[current].fixed == self.class.dim {
            self.open_next_level();
        }
        self.answers.push(universal::Exchange {
            point: y.to_vec(),
            value: answer.value.clone(),
            gradient: answer.subgradient.clone(),
        });
        Answer::FirstOrder(answer)
    }

    fn witnesses(&self) -> Option<Witnesses> {
        universal::longest_certificate(&self.class, &self.answers)
            .ok()
            .flatten()
            .map(|found| found.witnesses)
    }

    fn undecided(&self) -> Undecided {
        let level = self.levels.last().expect("at least one level");
        let side = 2.0 * nearest_f64(&level.half_width);
        Undecided::Log2Volume(self.class.dim as f64 * side.log2())
    }
}
