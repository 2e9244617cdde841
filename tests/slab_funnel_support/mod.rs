//! Shared pieces of the slab-funnel tests: an independent reference of docs/theory.md
//! §2.4 in plain exact rationals, query recipes relative to the current level, random
//! completions, and transcripts for the verifier.

#![allow(dead_code)]

use num_rational::BigRational;
use num_traits::{Signed, Zero};

use naysayer::adversary::slab_funnel::SlabFunnel;
use naysayer::certificate::universal::Exchange;
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::error::Error;
use naysayer::exact::{f64_to_rational, nearest_f64, Exact};
use naysayer::method::Method;
use naysayer::oracle::{Answer, FirstOrderAnswer, Output, Step};
use naysayer::transcript::{Ending, FinalRecord, Header, Witnesses};
use naysayer::transcript::{QueryRecord, Record, FORMAT_VERSION};

fn q(n: i64, d: i64) -> BigRational {
    BigRational::new(n.into(), d.into())
}

/// One level of the reference.
#[derive(Clone, Debug)]
pub struct RefLevel {
    pub center: Vec<BigRational>,
    pub half_width: BigRational,
    pub slope: BigRational,
    pub signs: Vec<i8>,
}

impl RefLevel {
    /// p_{k,i}(y) = lambda (beta h - s (y_i - m_i)), beta = 1/2.
    fn piece(&self, i: usize, sign: i8, yi: &BigRational) -> BigRational {
        let t = yi - &self.center[i];
        let t = if sign > 0 { t } else { -t };
        &self.slope * (&self.half_width * q(1, 2) - t)
    }

    /// The next level beyond the faces (all signs fixed).
    fn next(&self, theta: &BigRational) -> RefLevel {
        let step = &self.half_width * q(3, 4);
        RefLevel {
            center: self
                .center
                .iter()
                .zip(&self.signs)
                .map(|(m, s)| if *s > 0 { m + &step } else { m - &step })
                .collect(),
            half_width: &self.half_width * q(1, 4),
            slope: &self.slope * theta,
            signs: vec![0; self.center.len()],
        }
    }
}

/// docs/theory.md §2.4 transcribed literally: E over every revealed piece (boundary first,
/// then levels in order, lowest coordinate first), U over the unfixed coordinates (lowest
/// index), E wins a tie, a sign on the centre is +1.
#[derive(Clone, Debug)]
pub struct Reference {
    pub d: usize,
    pub lipschitz: BigRational,
    pub half_width: BigRational,
    pub theta: BigRational,
    pub levels: Vec<RefLevel>,
}

impl Reference {
    pub fn new(class: &FirstOrderClass, theta: &BigRational) -> Reference {
        Reference {
            d: class.dim,
            lipschitz: f64_to_rational(class.lipschitz),
            half_width: f64_to_rational(class.half_width),
            theta: theta.clone(),
            levels: vec![RefLevel {
                center: vec![BigRational::zero(); class.dim],
                half_width: f64_to_rational(class.half_width),
                slope: f64_to_rational(class.lipschitz),
                signs: vec![0; class.dim],
            }],
        }
    }

    /// Copies the adversary's state (for recipes that follow a game the reference does
    /// not play).
    pub fn sync(&mut self, funnel: &SlabFunnel) {
        self.levels = funnel
            .levels()
            .iter()
            .map(|l| RefLevel {
                center: l.center.clone(),
                half_width: l.half_width.clone(),
                slope: l.slope.clone(),
                signs: l.signs.clone(),
            })
            .collect();
    }

    pub fn current(&self) -> &RefLevel {
        self.levels.last().unwrap()
    }

    pub fn answer(&mut self, y: &[f64]) -> FirstOrderAnswer {
        let yr: Vec<BigRational> = y.iter().map(|v| f64_to_rational(*v)).collect();
        let d = self.d;
        let k = self.levels.len() - 1;
        // E: (value, gradient coordinate, gradient entry), the first maximum kept.
        let mut e: Option<(BigRational, usize, BigRational)> = None;
        let mut offer = |value: BigRational, i: usize, g: BigRational| {
            if e.as_ref().is_none_or(|(v, _, _)| value > *v) {
                e = Some((value, i, g));
            }
        };
        for (i, yi) in yr.iter().enumerate() {
            offer(
                &self.lipschitz * (yi - &self.half_width),
                i,
                self.lipschitz.clone(),
            );
            offer(
                &self.lipschitz * (-yi - &self.half_width),
                i,
                -self.lipschitz.clone(),
            );
        }
        for level in &self.levels {
            for (i, yi) in yr.iter().enumerate() {
                let s = level.signs[i];
                if s != 0 {
                    let g = if s > 0 {
                        -level.slope.clone()
                    } else {
                        level.slope.clone()
                    };
                    offer(level.piece(i, s, yi), i, g);
                }
            }
        }
        let current = &self.levels[k];
        let mut u: Option<(BigRational, usize, i8)> = None;
        for (i, yi) in yr.iter().enumerate() {
            if current.signs[i] != 0 {
                continue;
            }
            let diff = &current.center[i] - yi;
            let sign: i8 = if diff.is_negative() { -1 } else { 1 };
            let value = &current.slope * (&current.half_width * q(1, 2) + diff.abs());
            if u.as_ref().is_none_or(|(v, _, _)| value > *v) {
                u = Some((value, i, sign));
            }
        }
        let (e_value, e_i, e_g) = e.unwrap();
        let (u_value, u_i, u_sign) = u.expect("the current level has an unfixed sign");
        let mut subgradient = vec![Exact::ZERO; d];
        if e_value >= u_value {
            subgradient[e_i] = Exact::from_rational(e_g);
            return FirstOrderAnswer {
                value: Exact::from_rational(e_value),
                subgradient,
            };
        }
        let slope = current.slope.clone();
        subgradient[u_i] = Exact::from_rational(if u_sign > 0 { -slope } else { slope });
        self.levels[k].signs[u_i] = u_sign;
        if self.levels[k].signs.iter().all(|s| *s != 0) {
            let next = self.levels[k].next(&self.theta);
            self.levels.push(next);
        }
        FirstOrderAnswer {
            value: Exact::from_rational(u_value),
            subgradient,
        }
    }
}

/// One query recipe, relative to the current level (m, h, signs) of the game.
#[derive(Clone, Debug)]
pub enum Move {
    /// x_i = 2 R u_i: uniform in [-2R, 2R]^d, outside X half the time.
    Uniform(Vec<f64>),
    /// x_i = m_i + 1.5 h u_i: around the current level box.
    AroundLevel(Vec<f64>),
    /// x_i = m_i + c h with c from {0, +-1/2 (faces), +-1 (box), +-3/4 (slab centres),
    /// +-5/4}.
    Special(Vec<usize>),
    /// The centre of the alive region, the lowest unfixed coordinate moved by o h with o
    /// from {0, 1/4, -1/4, 1, -1}: fixes one sign, so games reach deep levels.
    AliveCentre(usize),
    /// The alive centre with coordinate i (mod d) moved by 4 t h (one level up's
    /// half-width): outside the level box, and outside X at level 0.
    PushedOut(usize, f64),
    /// An earlier query again.
    Repeat(usize),
}

const SPECIAL: [(i64, i64); 9] = [
    (0, 1),
    (1, 2),
    (-1, 2),
    (1, 1),
    (-1, 1),
    (3, 4),
    (-3, 4),
    (5, 4),
    (-5, 4),
];
const OFFSETS: [(i64, i64); 5] = [(0, 1), (1, 4), (-1, 4), (1, 1), (-1, 1)];

fn alive_centre(level: &RefLevel) -> Vec<BigRational> {
    let step = &level.half_width * q(3, 4);
    level
        .center
        .iter()
        .zip(&level.signs)
        .map(|(m, s)| match s {
            0 => m.clone(),
            1 => m + &step,
            _ => m - &step,
        })
        .collect()
}

/// The query of a recipe (coordinates rounded to the nearest f64).
pub fn build_query(mv: &Move, reference: &Reference, history: &[Vec<f64>], r: f64) -> Vec<f64> {
    let d = reference.d;
    let level = reference.current();
    let h = &level.half_width;
    let round = |v: Vec<BigRational>| v.iter().map(nearest_f64).collect::<Vec<f64>>();
    match mv {
        Move::Repeat(k) if !history.is_empty() => history[k % history.len()].clone(),
        Move::Repeat(_) => vec![0.0; d],
        Move::Uniform(u) => u[..d].iter().map(|v| 2.0 * r * v).collect(),
        Move::AroundLevel(u) => round(
            (0..d)
                .map(|i| &level.center[i] + f64_to_rational(1.5 * u[i]) * h)
                .collect(),
        ),
        Move::Special(k) => round(
            (0..d)
                .map(|i| {
                    let (n, m) = SPECIAL[k[i] % SPECIAL.len()];
                    &level.center[i] + q(n, m) * h
                })
                .collect(),
        ),
        Move::AliveCentre(o) => {
            let mut c = alive_centre(level);
            if let Some(i) = level.signs.iter().position(|s| *s == 0) {
                let (n, m) = OFFSETS[o % OFFSETS.len()];
                c[i] = &c[i] + q(n, m) * h;
            }
            round(c)
        }
        Move::PushedOut(i, t) => {
            let mut c = alive_centre(level);
            let i = i % d;
            c[i] = &c[i] + f64_to_rational(4.0 * t) * h;
            round(c)
        }
    }
}

/// A random completion of the reference's state (splitmix64 from `seed`): signs for the
/// current level's unfixed coordinates and `extra` deeper levels. Every recorded value
/// must equal the completion's value at its query, and every answer's piece must be a
/// piece of the completion; the first disagreement is described.
pub fn completion_mismatch(
    reference: &Reference,
    exchanges: &[Exchange],
    seed: u64,
    extra: usize,
) -> Option<String> {
    let mut state = seed;
    let mut coin = move || {
        state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        if (z ^ (z >> 31)) & 1 == 0 {
            1i8
        } else {
            -1
        }
    };
    let mut levels = reference.levels.clone();
    for _ in 0..=extra {
        let last = levels.last_mut().unwrap();
        for s in last.signs.iter_mut() {
            if *s == 0 {
                *s = coin();
            }
        }
        let next = last.next(&reference.theta);
        levels.push(next);
    }
    levels.pop();
    // Pieces as (coordinate, gradient entry a, intercept b): a y_i + b.
    let mut pieces: Vec<(usize, BigRational, BigRational)> = Vec::new();
    let lr = &reference.lipschitz * &reference.half_width;
    for i in 0..reference.d {
        pieces.push((i, reference.lipschitz.clone(), -lr.clone()));
        pieces.push((i, -reference.lipschitz.clone(), -lr.clone()));
    }
    for level in &levels {
        for i in 0..reference.d {
            let s = level.signs[i];
            let a = if s > 0 {
                -level.slope.clone()
            } else {
                level.slope.clone()
            };
            let b = level.piece(i, s, &BigRational::zero());
            pieces.push((i, a, b));
        }
    }
    for (t, e) in exchanges.iter().enumerate() {
        let x: Vec<BigRational> = e.point.iter().map(|v| f64_to_rational(*v)).collect();
        let value = pieces.iter().map(|(i, a, b)| a * &x[*i] + b).max().unwrap();
        let v = e.value.to_rational();
        if value != v {
            return Some(format!(
                "answer {}: completion value {value} != recorded {v}",
                t + 1
            ));
        }
        let (i, g) = e
            .gradient
            .iter()
            .enumerate()
            .find(|(_, g)| **g != Exact::ZERO)
            .map(|(i, g)| (i, g.to_rational()))
            .expect("a nonzero subgradient");
        let intercept = &v - &g * &x[i];
        if !pieces
            .iter()
            .any(|(j, a, b)| *j == i && *a == g && *b == intercept)
        {
            return Some(format!(
                "answer {}: its piece is not a piece of the completion",
                t + 1
            ));
        }
    }
    None
}

/// A transcript (header, answers, final record with `certificate`) for the verifier.
pub fn transcript(
    class: &FirstOrderClass,
    exchanges: &[Exchange],
    certificate: Option<Witnesses>,
) -> Vec<Record> {
    let n = exchanges.len() as u64;
    let mut all = vec![Record::Header(Header {
        format: FORMAT_VERSION,
        tool: "naysayer tests/slab_funnel.rs".into(),
        class: Class::FirstOrder(class.clone()),
        adversary: "slab-funnel".into(),
        method: "proptest".into(),
        seed: 0,
        budget: n,
    })];
    for (index, e) in exchanges.iter().enumerate() {
        all.push(Record::Query(QueryRecord {
            index: index as u64 + 1,
            point: e.point.clone(),
            answer: Answer::FirstOrder(FirstOrderAnswer {
                value: e.value.clone(),
                subgradient: e.gradient.clone(),
            }),
        }));
    }
    all.push(Record::Final(FinalRecord {
        queries_used: n,
        ending: Ending::BudgetExhausted,
        certificate,
        demonstration: None,
    }));
    all
}

/// A short game that theta = 3/5 answers inconsistently: the first inconsistent game of
/// the seeded search in `theta_three_fifths_breaks_consistency`, cut down by dropping
/// queries while it stays inconsistent. d = 1, L = R = 1: every answer fixes the one sign
/// of its level and opens the next (the first, at x = 0.9967, fixes s = -1 at level 0);
/// the eighth answer's piece (level 7) exceeds the seventh answer at the seventh query:
/// `first_inconsistent_pair` = (7, 6), 0-based.
pub fn c1_counterexample() -> (FirstOrderClass, Vec<Vec<f64>>) {
    let class = FirstOrderClass::new(1, 1.0, 1e-9, 1.0, LipschitzNorm::L2).unwrap();
    let queries = [
        0.9966970230104724,
        -0.6875,
        -0.921875,
        -0.98828125,
        -0.9764623867332112,
        -0.969482421875,
        -0.970458984375,
        -0.9703369140625,
    ];
    (class, queries.iter().map(|x| vec![*x]).collect())
}

/// A method written for the construction: it always queries the centre of the alive
/// region (fixed coordinates at the centres of their slabs, m + s (3/4) h; unfixed ones
/// at the level centre m), so every answer fixes exactly one sign (the unfixed
/// coordinates tie at U = lambda h / 2, above every fixed piece, -lambda h / 4; the
/// lowest is fixed, +1 on the centre), and it reads the level structure back from the
/// answers. After `stop_after` queries it outputs the alive centre.
pub struct OneSignPerQuery {
    centre: Vec<f64>,
    half_width: f64,
    signs: Vec<i8>,
    asked: u64,
    stop_after: u64,
}

impl OneSignPerQuery {
    pub fn new(class: &FirstOrderClass, stop_after: u64) -> OneSignPerQuery {
        OneSignPerQuery {
            centre: vec![0.0; class.dim],
            half_width: class.half_width,
            signs: vec![0; class.dim],
            asked: 0,
            stop_after,
        }
    }

    fn alive_centre(&self) -> Vec<f64> {
        self.centre
            .iter()
            .zip(&self.signs)
            .map(|(m, s)| m + f64::from(*s) * 0.75 * self.half_width)
            .collect()
    }
}

impl Method for OneSignPerQuery {
    fn name(&self) -> &str {
        "one-sign-per-query"
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        let c = self.alive_centre();
        if self.asked == self.stop_after {
            return Ok(Step::Output(Output::Point { point: c }));
        }
        query.copy_from_slice(&c);
        self.asked += 1;
        Ok(Step::Query)
    }

    fn observe(&mut self, _query: &[f64], answer: &Answer) -> Result<(), Error> {
        let Answer::FirstOrder(a) = answer else {
            unreachable!("first-order answers")
        };
        let (i, g) = a
            .subgradient
            .iter()
            .enumerate()
            .find(|(_, g)| g.to_f64() != 0.0)
            .expect("one nonzero entry");
        assert_eq!(self.signs[i], 0, "every answer fixes a new sign");
        // The answered gradient is -lambda s e_i.
        self.signs[i] = if g.to_f64() < 0.0 { 1 } else { -1 };
        if self.signs.iter().all(|s| *s != 0) {
            let step = 0.75 * self.half_width;
            for (m, s) in self.centre.iter_mut().zip(&self.signs) {
                *m += f64::from(*s) * step;
            }
            self.half_width /= 4.0;
            self.signs.iter_mut().for_each(|s| *s = 0);
        }
        Ok(())
    }
}
