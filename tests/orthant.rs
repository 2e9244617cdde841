//! Property tests of the orthant-level adversary (docs/theory.md §2.3, issue 5).
//!
//! Arbitrary query sequences (uniform points, points outside the box, repeated points,
//! points on the dyadic grid j R 2^-k, and points exactly at the current level's centre
//! m_k and at m_k +- h_k in chosen coordinates) are answered by the adversary and by an
//! independent reference written here from the text of docs/theory.md §2.3 in plain exact
//! rationals (every candidate value computed exactly, the maximum taken, ties broken by
//! completed level < fixed < unfixed, then lowest level, then lowest coordinate). The
//! tests check that
//! - both give the same answers, exactly (the adversary's f64 filter and dyadic fast
//!   paths change nothing);
//! - the whole transcript stays pairwise consistent after every answer
//!   (v_s + <g_s, x_t - x_s> <= v_t exactly: `first_inconsistent_pair` is `None`) and
//!   every subgradient lies within L in the dual norm of l1, l2 and l_inf;
//! - the exact verifier accepts every transcript the adversary emits, with its witnesses;
//! - answers are deterministic, byte for byte.

use num_rational::BigRational;
use num_traits::{One, Signed, Zero};
use proptest::collection::vec;
use proptest::prelude::*;
use proptest::test_runner::TestCaseError;

use naysayer::adversary::orthant::{Orthant, OrthantSettings};
use naysayer::adversary::Adversary;
use naysayer::certificate::first_order::dual_norm_at_most;
use naysayer::certificate::universal::{first_inconsistent_pair, Exchange};
use naysayer::certificate::verify_records;
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::exact::{f64_to_rational, nearest_f64, Exact};
use naysayer::oracle::{Answer, FirstOrderAnswer};
use naysayer::transcript::{Ending, FinalRecord, Header};
use naysayer::transcript::{QueryRecord, Record, FORMAT_VERSION};

/// A level of the reference, all exact.
#[derive(Clone, Debug)]
struct RefLevel {
    center: Vec<BigRational>,
    half_width: BigRational,
    base: BigRational,
    slope: BigRational,
    signs: Vec<i8>,
}

/// docs/theory.md §2.3 transcribed literally, in exact rationals, with no filter; with
/// `fix_outside`, plus the adversary's correction for queries outside X (the base of a
/// new level is lowered to min over earlier outside queries of v_t - lambda' max_i
/// |m'_i - y_{t,i}|; see `src/adversary/orthant.rs`).
#[derive(Clone, Debug)]
struct Reference {
    d: usize,
    half_width: BigRational,
    fix_outside: bool,
    outside: Vec<(Vec<BigRational>, BigRational)>,
    beta: BigRational,
    gamma: BigRational,
    theta: BigRational,
    levels: Vec<RefLevel>,
}

impl Reference {
    fn new(class: &FirstOrderClass, settings: &OrthantSettings) -> Reference {
        Reference {
            d: class.dim,
            half_width: f64_to_rational(class.half_width),
            fix_outside: true,
            outside: Vec::new(),
            beta: f64_to_rational(settings.beta),
            gamma: f64_to_rational(settings.gamma),
            theta: f64_to_rational(settings.theta),
            levels: vec![RefLevel {
                center: vec![BigRational::zero(); class.dim],
                half_width: f64_to_rational(class.half_width),
                base: BigRational::zero(),
                slope: f64_to_rational(class.lipschitz),
                signs: vec![0; class.dim],
            }],
        }
    }

    fn current(&self) -> &RefLevel {
        self.levels.last().unwrap()
    }

    // Index loops mirror the construction's formulas, coordinate by coordinate.
    #[allow(clippy::needless_range_loop)]
    fn answer(&mut self, y: &[f64]) -> FirstOrderAnswer {
        let yr: Vec<BigRational> = y.iter().map(|v| f64_to_rational(*v)).collect();
        let k = self.levels.len() - 1;
        // (value, rank, level, coordinate, sign)
        let mut best: Option<(BigRational, u8, usize, usize, i8)> = None;
        for (j, level) in self.levels.iter().enumerate() {
            for i in 0..self.d {
                let diff = &level.center[i] - &yr[i];
                let (rank, sign) = match (j == k, level.signs[i]) {
                    (false, s) => (0u8, s),
                    (true, 0) => (2u8, if diff.is_negative() { -1 } else { 1 }),
                    (true, s) => (1u8, s),
                };
                let term = if sign > 0 { diff } else { -diff };
                let value = &level.base + &level.slope * term;
                let better = match &best {
                    None => true,
                    Some((bv, br, bj, bi, _)) => {
                        value > *bv || (value == *bv && (rank, j, i) < (*br, *bj, *bi))
                    }
                };
                if better {
                    best = Some((value, rank, j, i, sign));
                }
            }
        }
        let (value, rank, j, i, sign) = best.unwrap();
        let slope = self.levels[j].slope.clone();
        let mut subgradient = vec![Exact::ZERO; self.d];
        subgradient[i] = Exact::from_rational(if sign > 0 { -slope } else { slope });
        if yr.iter().any(|v| v.abs() > self.half_width) {
            self.outside.push((yr.clone(), value.clone()));
        }
        if rank == 2 {
            self.levels[k].signs[i] = sign;
            if self.levels[k].signs.iter().all(|s| *s != 0) {
                self.open();
            }
        }
        FirstOrderAnswer {
            value: Exact::from_rational(value),
            subgradient,
        }
    }

    /// Step 4 of docs/theory.md §2.3.
    fn open(&mut self) {
        let one = BigRational::one();
        let two = BigRational::from_integer(2.into());
        let cur = self.current().clone();
        let h_next = (&one - &self.beta - &self.gamma) * &cur.half_width / &two;
        let slope_next = &self.theta * &cur.slope;
        let step = (&one + &self.beta - &self.gamma) * &cur.half_width / &two;
        let center: Vec<BigRational> = cur
            .center
            .iter()
            .zip(&cur.signs)
            .map(|(m, s)| if *s > 0 { m + &step } else { m - &step })
            .collect();
        let mut base =
            &cur.base - (&cur.slope * &self.beta * &cur.half_width + &two * &slope_next * &h_next);
        if self.fix_outside {
            for (y, v) in &self.outside {
                let reach = y
                    .iter()
                    .zip(&center)
                    .map(|(yi, m): (&BigRational, &BigRational)| (m - yi).abs())
                    .max()
                    .unwrap();
                base = base.min(v - &slope_next * reach);
            }
        }
        self.levels.push(RefLevel {
            center,
            half_width: h_next,
            base,
            slope: slope_next,
            signs: vec![0; self.d],
        });
    }
}

/// How one coordinate of a query is chosen.
#[derive(Clone, Debug)]
enum Coord {
    /// A uniform number in [-2R, 2R] (so outside the box half the time).
    Uniform(f64),
    /// The dyadic grid point j R 2^-k: level centres and boundaries of early levels.
    Grid(i32, u32),
    /// The current level's centre m_i plus `offset` times its half-width h (offset in
    /// {-1, 0, 1}: the centre and both boundaries), rounded to f64 when not exact.
    Centre(i8),
    /// The current centre plus a tiny multiple of h (inside, near a tie).
    NearCentre(f64),
}

/// One query: per-coordinate recipes, or a repeat of an earlier query.
#[derive(Clone, Debug)]
enum Move {
    Point(Vec<Coord>),
    Repeat(usize),
}

fn coord_strategy() -> impl Strategy<Value = Coord> {
    prop_oneof![
        2 => (-2.0f64..2.0).prop_map(Coord::Uniform),
        // Up to 2R: the grid reaches outside the box too.
        2 => (0u32..=6)
            .prop_flat_map(|k| (-(2i32 << k)..=(2i32 << k), Just(k)))
            .prop_map(|(j, k)| Coord::Grid(j, k)),
        3 => (-1i8..=1).prop_map(Coord::Centre),
        1 => (-1e-3f64..1e-3).prop_map(Coord::NearCentre),
    ]
}

fn move_strategy(d: usize) -> impl Strategy<Value = Move> {
    prop_oneof![
        6 => vec(coord_strategy(), d).prop_map(Move::Point),
        1 => any::<usize>().prop_map(Move::Repeat),
    ]
}

fn settings_strategy() -> impl Strategy<Value = OrthantSettings> {
    prop_oneof![
        // The default: dyadic centres, exactly f64 (the adversary's fast path).
        3 => Just(OrthantSettings::default()),
        // Margins and a ratio that are not powers of two: centres, bases and slopes
        // that no f64 holds (the general path).
        1 => Just(OrthantSettings { beta: 0.1, gamma: 0.05, theta: 0.3 }),
        1 => Just(OrthantSettings { beta: 0.0, gamma: 0.2, theta: 1.0 }),
    ]
}

fn build_query(mv: &Move, reference: &Reference, history: &[Vec<f64>], r: f64) -> Vec<f64> {
    match mv {
        Move::Repeat(k) if !history.is_empty() => history[k % history.len()].clone(),
        Move::Repeat(_) => vec![0.0; reference.d],
        Move::Point(coords) => {
            let level = reference.current();
            coords
                .iter()
                .enumerate()
                .map(|(i, c)| match c {
                    Coord::Uniform(u) => u * r,
                    Coord::Grid(j, k) => f64::from(*j) * r / f64::from(1u32 << k),
                    Coord::Centre(o) => nearest_f64(
                        &(&level.center[i]
                            + BigRational::from_integer((*o).into()) * &level.half_width),
                    ),
                    Coord::NearCentre(t) => {
                        nearest_f64(&(&level.center[i] + f64_to_rational(*t) * &level.half_width))
                    }
                })
                .collect()
        }
    }
}

struct Game {
    class: FirstOrderClass,
    adversary: Orthant,
    reference: Reference,
    history: Vec<Vec<f64>>,
    records: Vec<Record>,
    exchanges: Vec<Exchange>,
}

impl Game {
    fn new(class: FirstOrderClass, settings: OrthantSettings) -> Game {
        Game {
            adversary: Orthant::new(&class, settings.clone()).unwrap(),
            reference: Reference::new(&class, &settings),
            class,
            history: Vec::new(),
            records: Vec::new(),
            exchanges: Vec::new(),
        }
    }

    /// Asks one query of both and checks the answer; returns it.
    fn ask(&mut self, mv: &Move) -> Result<(), TestCaseError> {
        let y = build_query(mv, &self.reference, &self.history, self.class.half_width);
        let expected = self.reference.answer(&y);
        let Answer::FirstOrder(got) = self.adversary.answer(&y) else {
            return Err(TestCaseError::fail("not a first-order answer"));
        };
        let n = self.exchanges.len() + 1;
        prop_assert_eq!(&got, &expected, "answer {} at {:?}", n, y);
        prop_assert_eq!(self.adversary.levels(), self.reference.levels.len());
        for norm in [LipschitzNorm::L1, LipschitzNorm::L2, LipschitzNorm::Linf] {
            prop_assert!(
                dual_norm_at_most(&got.subgradient, norm, self.class.lipschitz),
                "answer {} has a subgradient longer than L in the {:?} dual norm",
                n,
                norm
            );
        }
        self.exchanges.push(Exchange {
            point: y.clone(),
            value: got.value.clone(),
            gradient: got.subgradient.clone(),
        });
        self.records.push(Record::Query(QueryRecord {
            index: n as u64,
            point: y.clone(),
            answer: Answer::FirstOrder(got),
        }));
        self.history.push(y);
        Ok(())
    }

    /// The transcript so far with the adversary's witnesses.
    fn transcript(&self) -> Vec<Record> {
        let n = self.exchanges.len() as u64;
        let mut all = vec![Record::Header(Header {
            format: FORMAT_VERSION,
            tool: "naysayer tests/orthant.rs".into(),
            class: Class::FirstOrder(self.class.clone()),
            adversary: "orthant".into(),
            method: "proptest".into(),
            seed: 0,
            budget: n,
        })];
        all.extend(self.records.iter().cloned());
        all.push(Record::Final(FinalRecord {
            queries_used: n,
            ending: Ending::BudgetExhausted,
            certificate: self.adversary.witnesses(),
            demonstration: None,
        }));
        all
    }
}

fn class_strategy() -> impl Strategy<Value = FirstOrderClass> {
    (
        1usize..=3,
        prop_oneof![Just(1.0), Just(0.75), Just(3.0)],
        prop_oneof![Just(1.0), Just(2.5)],
        prop_oneof![Just(1e-2), Just(1e-4)],
    )
        .prop_map(|(d, r, l, eps)| FirstOrderClass::new(d, r, eps, l, LipschitzNorm::L2).unwrap())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 160, ..ProptestConfig::default() })]

    /// Every answer equals the reference's, and the transcript stays pairwise
    /// consistent after every answer.
    #[test]
    fn answers_match_the_reference_and_stay_consistent(
        class in class_strategy(),
        settings in settings_strategy(),
        moves in vec(move_strategy(3), 1..60),
    ) {
        let mut game = Game::new(class.clone(), settings);
        for mv in &moves {
            let mv = match mv {
                Move::Point(c) => Move::Point(c[..class.dim].to_vec()),
                other => other.clone(),
            };
            game.ask(&mv)?;
            prop_assert_eq!(
                first_inconsistent_pair(&game.exchanges),
                None,
                "after {} answers", game.exchanges.len()
            );
        }
    }
}

proptest! {
    // Each case runs the certificate search (LPs): keep the count modest.
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    /// The exact verifier accepts every transcript the adversary emits, with the
    /// adversary's own witnesses, and the certified prefix is a prefix.
    #[test]
    fn the_verifier_accepts_every_transcript(
        class in class_strategy(),
        settings in settings_strategy(),
        moves in vec(move_strategy(3), 1..30),
    ) {
        let mut game = Game::new(class.clone(), settings);
        for mv in &moves {
            let mv = match mv {
                Move::Point(c) => Move::Point(c[..class.dim].to_vec()),
                other => other.clone(),
            };
            game.ask(&mv)?;
        }
        let records = game.transcript();
        let verdict = verify_records(&records)
            .map_err(|e| TestCaseError::fail(format!("the verifier rejects: {e}")))?;
        let n = game.exchanges.len() as u64;
        if let Some(prefix) = verdict.certified_prefix {
            prop_assert!(prefix <= n);
            let eps_cert = verdict.certified_uncertainty.expect("a certificate has eps_cert");
            prop_assert!(eps_cert > class.eps, "eps_cert {} <= eps {}", eps_cert, class.eps);
        }
    }
}

/// Two adversaries fed the same queries write byte-identical answers.
#[test]
fn answers_are_deterministic_byte_for_byte() {
    let class = FirstOrderClass::new(3, 1.0, 1e-4, 1.0, LipschitzNorm::L2).unwrap();
    let settings = OrthantSettings {
        beta: 0.1,
        gamma: 0.05,
        theta: 0.3,
    };
    let mut a = Orthant::new(&class, settings.clone()).unwrap();
    let mut b = Orthant::new(&class, settings).unwrap();
    let mut x = 0.3f64;
    for t in 0..200 {
        // A deterministic scramble of points in and out of the box.
        x = (x * 3.7 + 0.123 * f64::from(t)).sin() * 1.5;
        let y = [x, -x * 0.5, (x * 7.0).cos()];
        let sa = serde_json::to_string(&a.answer(&y)).unwrap();
        let sb = serde_json::to_string(&b.answer(&y)).unwrap();
        assert_eq!(sa, sb, "answer {}", t + 1);
    }
}

/// Queries far outside the box (where f64 differences overflow) are answered exactly
/// like the reference: the adversary falls back to its exact path.
#[test]
fn huge_queries_are_answered_exactly() {
    let class = FirstOrderClass::new(2, 1e300, 1e-4, 1.0, LipschitzNorm::L2).unwrap();
    let mut adversary = Orthant::new(&class, OrthantSettings::default()).unwrap();
    let mut reference = Reference::new(&class, &OrthantSettings::default());
    let queries = [
        [f64::MAX, -f64::MAX],
        [-f64::MAX, 0.0],
        [1e300, 1e300],
        [-1e300, 5e-324],
        [f64::MAX, f64::MAX],
        [0.0, 0.0],
    ];
    let mut exchanges = Vec::new();
    for y in queries {
        let Answer::FirstOrder(got) = adversary.answer(&y) else {
            panic!("not first-order")
        };
        assert_eq!(got, reference.answer(&y), "at {y:?}");
        exchanges.push(Exchange {
            point: y.to_vec(),
            value: got.value,
            gradient: got.subgradient,
        });
    }
    assert_eq!(first_inconsistent_pair(&exchanges), None);
}

/// docs/theory.md §2.3 as written is inconsistent once a query lies outside X; the adversary
/// corrects it. The counterexample (defaults, d = 2, R = L = 1): y1 = (0, 2), y2 =
/// (0, -1.7) (both outside X; y2 completes level 0), y3 = (0.5, -0.6). The literal
/// construction answers y3 with a piece that exceeds the answer at y2 by about 0.05;
/// the adversary (and the corrected reference) stays consistent and the verifier
/// accepts its transcript.
#[test]
fn theory_2_3_breaks_outside_the_box_and_the_adversary_does_not() {
    let class = FirstOrderClass::new(2, 1.0, 1e-2, 1.0, LipschitzNorm::L2).unwrap();
    let queries = [[0.0, 2.0], [0.0, -1.7], [0.5, -0.6]];
    let exchanges_of = |answers: Vec<FirstOrderAnswer>| -> Vec<Exchange> {
        queries
            .iter()
            .zip(answers)
            .map(|(y, a)| Exchange {
                point: y.to_vec(),
                value: a.value,
                gradient: a.subgradient,
            })
            .collect()
    };
    let mut literal = Reference::new(&class, &OrthantSettings::default());
    literal.fix_outside = false;
    let answers: Vec<FirstOrderAnswer> = queries.iter().map(|y| literal.answer(y)).collect();
    assert_eq!(answers[2].subgradient, [Exact::ZERO, Exact::Float(-0.25)]);
    // Piece 3 at y2: -0.225 + 0.275 = 0.05 > 0 = v2 (0-based pair (2, 1)).
    assert_eq!(
        first_inconsistent_pair(&exchanges_of(answers)),
        Some((2, 1))
    );

    let mut game = Game::new(class, OrthantSettings::default());
    for y in queries {
        game.ask(&Move::Point(y.iter().map(|v| Coord::Uniform(*v)).collect()))
            .unwrap();
    }
    assert_eq!(first_inconsistent_pair(&game.exchanges), None);
    let verdict = verify_records(&game.transcript()).expect("the verifier accepts");
    assert!(verdict.certified_prefix.is_some());
}
