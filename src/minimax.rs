//! Exact minimax on small pure integer classes (docs/theory.md §6) \[derived\].
//!
//! The information complexity of a class is min over methods of max over adversaries of
//! the queries needed. With the method's queries restricted to a finite set Q (the
//! lattice points of the box, or its lattice and half-integer points), it is computed
//! here by game-tree search with memoisation:
//! - the state holds everything the method has learned: which points of Q the answered
//!   cuts exclude (the alive lattice set is the lattice points of Q not excluded) and
//!   which points of Q were answered `inside` (the set D);
//! - the method may stop when its output is correct for every consistent instance:
//!   "none" when no lattice point is alive, a lattice point when it lies in conv(D)
//!   (or was answered `inside`); otherwise it queries a point of Q that is neither
//!   excluded nor in D;
//! - the adversary answers `inside` (always consistent for such a query: conv(D cup {q})
//!   is an instance) or any strict cut excluding the query and keeping D, one move per
//!   distinct resulting state (the new excluded set), not per distinct lattice split.
//!
//! The cuts are enumerated exactly: every open halfspace's trace on Q is an extreme ray
//! of a pointed cone (Q spans R^n), that is a hyperplane through n affinely independent
//! points of Q, tilted to take in a separable subset of the points on it (found by the
//! same enumeration one dimension down); each trace is realised by an explicit integer
//! functional. Restricting methods to Q can only raise the value, so
//! (count a proven adversary forces on every method) <= (true complexity) <= V_Q. For a
//! fixed deterministic method whose queries lie in Q the same search with the method's
//! moves replayed gives its exact worst case against every adversary whose cuts are these
//! representatives (one explicit cut per trace on Q), which is >= V_Q.
//! States are reduced by the box's symmetries (coordinate reflections, and permutations
//! when all sides are equal).

use std::collections::HashMap;

use crate::class::LatticeClass;
use crate::error::Error;
use crate::exact::Exact;
use crate::method::{self, Method};
use crate::oracle::{Answer, Cut, Normal, Output, Step};

/// Which points a method may query.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum QuerySet {
    /// The lattice points of the box.
    Lattice,
    /// The points of the box whose coordinates are multiples of 1/2.
    HalfInteger,
}

/// One enumerated trace of an open halfspace on Q: the mask of points strictly inside
/// `{a.P < b}` over doubled coordinates P = 2p.
#[derive(Clone, Debug)]
struct Trace {
    mask: u128,
    normal: Vec<i64>,
    offset: i64,
}

/// The result of a minimax search.
#[derive(Clone, Debug, PartialEq)]
pub struct MinimaxReport {
    /// The query set's name.
    pub queries: QuerySet,
    /// |Q|.
    pub query_points: usize,
    /// Lattice points of the box.
    pub lattice_points: usize,
    /// Distinct halfspace traces on Q.
    pub traces: usize,
    /// The value: V_Q, or the method's worst case with `--method`.
    pub value: u32,
    /// An optimal first query (V_Q mode) or the method's first query.
    pub first_query: Option<Vec<f64>>,
    /// Distinct states whose value was computed.
    pub states: usize,
}

/// The search engine for one class and query set.
pub struct Minimax {
    n: usize,
    /// Q in doubled integer coordinates.
    points: Vec<Vec<i64>>,
    lattice: u128,
    all: u128,
    traces: Vec<Trace>,
    /// For each point of Q, the traces that do not contain it.
    avoiding: Vec<Vec<u32>>,
    symmetries: Vec<Vec<usize>>,
    memo: HashMap<(u128, u128), (u32, bool)>,
    /// conv(D) cap Q by D.
    hulls: HashMap<u128, u128>,
    /// For (D, query k): the traces avoiding k and containing D that are maximal, among
    /// those with the same lattice trace, in the set of points of Q they exclude.
    dominant: HashMap<(u128, usize), Vec<u32>>,
    /// Whether V_Q searches drop dominated adversary moves (on by default; off only to
    /// cross-check the pruning).
    prune: bool,
}

/// Most points of Q.
pub const MAX_QUERY_POINTS: usize = 128;

impl Minimax {
    /// Prepares the search on a pure integer class with n <= 3.
    pub fn new(class: &LatticeClass, queries: QuerySet) -> Result<Minimax, Error> {
        let n = class.int_dim();
        if class.cont_dim != 0 || n > 3 {
            return Err(Error::Unsupported {
                what: "minimax".into(),
                reason: "it solves pure integer classes (d = 0) with n <= 3".into(),
            });
        }
        let step = match queries {
            QuerySet::Lattice => 2,
            QuerySet::HalfInteger => 1,
        };
        let mut points: Vec<Vec<i64>> = vec![Vec::new()];
        for i in 0..n {
            let mut next = Vec::new();
            for p in &points {
                let mut v = 2 * class.lower[i];
                while v <= 2 * class.upper[i] {
                    let mut q = p.clone();
                    q.push(v);
                    next.push(q);
                    v += step;
                }
            }
            points = next;
            if points.len() > MAX_QUERY_POINTS {
                return Err(Error::Unsupported {
                    what: "minimax".into(),
                    reason: format!("Q would have more than {MAX_QUERY_POINTS} points"),
                });
            }
        }
        let mut lattice = 0u128;
        for (k, p) in points.iter().enumerate() {
            if p.iter().all(|v| v % 2 == 0) {
                lattice |= 1 << k;
            }
        }
        let all = if points.len() == 128 {
            u128::MAX
        } else {
            (1u128 << points.len()) - 1
        };
        let traces = enumerate_traces(&points);
        let symmetries = symmetries(class, &points);
        let avoiding = (0..points.len())
            .map(|k| {
                (0..traces.len() as u32)
                    .filter(|&t| traces[t as usize].mask >> k & 1 == 0)
                    .collect()
            })
            .collect();
        Ok(Minimax {
            n,
            points,
            lattice,
            all,
            traces,
            avoiding,
            symmetries,
            memo: HashMap::new(),
            hulls: HashMap::new(),
            dominant: HashMap::new(),
            prune: true,
        })
    }

    fn canonical(&self, excluded: u128, inside: u128) -> (u128, u128) {
        let mut best = (excluded, inside);
        for perm in &self.symmetries {
            let map = |mask: u128| -> u128 {
                let mut out = 0u128;
                let mut m = mask;
                while m != 0 {
                    let k = m.trailing_zeros() as usize;
                    out |= 1 << perm[k];
                    m &= m - 1;
                }
                out
            };
            let candidate = (map(excluded), map(inside));
            if candidate < best {
                best = candidate;
            }
        }
        best
    }

    /// The points of Q in conv(D): the intersection of every trace containing D.
    fn hull(&self, inside: u128) -> u128 {
        if inside == 0 {
            return 0;
        }
        let mut hull = self.all;
        for t in &self.traces {
            if t.mask & inside == inside {
                hull &= t.mask;
            }
        }
        hull
    }

    fn terminal(&mut self, excluded: u128, inside: u128) -> bool {
        if self.lattice & !excluded == 0 {
            return true;
        }
        if inside == 0 {
            return false;
        }
        let hull = match self.hulls.get(&inside) {
            Some(h) => *h,
            None => {
                let h = self.hull(inside);
                self.hulls.insert(inside, h);
                h
            }
        };
        hull & self.lattice != 0
    }

    /// Adversary moves after query k: `None` for `inside` ending the game (a lattice
    /// query), the new (excluded, inside) states otherwise, with a representative trace.
    fn moves(&self, excluded: u128, inside: u128, k: usize) -> Vec<((u128, u128), Option<usize>)> {
        let bit = 1u128 << k;
        let mut out: Vec<((u128, u128), Option<usize>)> = Vec::new();
        if self.lattice & bit == 0 {
            out.push(((excluded, inside | bit), None));
        }
        let mut cuts: Vec<(u128, usize)> = self.avoiding[k]
            .iter()
            .map(|&t| t as usize)
            .filter(|&t| self.traces[t].mask & inside == inside)
            .map(|t| (excluded | (self.all & !self.traces[t].mask), t))
            .collect();
        cuts.sort_unstable_by_key(|(next, _)| *next);
        cuts.dedup_by_key(|(next, _)| *next);
        out.extend(cuts.into_iter().map(|(next, t)| ((next, inside), Some(t))));
        out
    }

    /// The adversary moves that matter for V_Q: among cuts with the same lattice split,
    /// only those whose set of excluded points of Q is maximal under inclusion. The value
    /// is nondecreasing in the excluded set for a fixed lattice split and D (the
    /// method's useful queries only shrink; the terminal test and the adversary's
    /// options depend on the lattice split and D alone; by induction on the depth), so a
    /// move excluding a subset of another's points is never better for the adversary.
    /// (Not for `--method`: a fixed method reacts to the cut itself.)
    fn dominant_moves(
        &mut self,
        excluded: u128,
        inside: u128,
        k: usize,
    ) -> Vec<((u128, u128), Option<usize>)> {
        if !self.prune {
            return self.moves(excluded, inside, k);
        }
        let traces = match self.dominant.get(&(inside, k)) {
            Some(list) => list,
            None => {
                // Trace-level dominance holds whatever is excluded already: equal lattice
                // traces stay equal and subsets stay subsets after the union.
                let candidates: Vec<(u128, u32)> = self.avoiding[k]
                    .iter()
                    .filter(|&&t| self.traces[t as usize].mask & inside == inside)
                    .map(|&t| (self.all & !self.traces[t as usize].mask, t))
                    .collect();
                let list = maximal(candidates, self.lattice)
                    .into_iter()
                    .map(|(_, t)| t)
                    .collect();
                self.dominant.entry((inside, k)).or_insert(list)
            }
        };
        let bit = 1u128 << k;
        let cuts: Vec<(u128, u32)> = traces
            .iter()
            .map(|&t| (excluded | (self.all & !self.traces[t as usize].mask), t))
            .collect();
        let mut out: Vec<((u128, u128), Option<usize>)> = Vec::new();
        if self.lattice & bit == 0 {
            out.push(((excluded, inside | bit), None));
        }
        out.extend(
            maximal(cuts, self.lattice)
                .into_iter()
                .map(|(next, t)| ((next, inside), Some(t as usize))),
        );
        out
    }

    /// V_Q of a state when it is below `cap`; otherwise some lower bound >= `cap`
    /// (fail-hard alpha-beta; memoised with the best known lower bound or the value).
    fn value(&mut self, excluded: u128, inside: u128, cap: u32) -> u32 {
        if self.terminal(excluded, inside) {
            return 0;
        }
        let key = self.canonical(excluded, inside);
        let known = self.memo.get(&key).copied();
        if let Some((lo, exact)) = known {
            if exact || lo >= cap {
                return lo;
            }
        }
        let alive = (self.lattice & !excluded).count_ones();
        // Lower bound: with nothing declared inside, the lattice-half adversary's cuts
        // are among the moves, and it forces floor(log2 |S|) + 1 (docs/theory.md §4).
        let mut lower = if inside == 0 {
            32 - alive.leading_zeros()
        } else {
            1
        };
        lower = lower.max(known.map_or(0, |(lo, _)| lo));
        if lower >= cap {
            return lower;
        }
        // V <= |S| (query the alive lattice points one by one).
        let mut best = cap.min(alive + 1);
        for k in self.query_order(excluded, inside) {
            let mut moves = self.dominant_moves(excluded, inside, k);
            // Strongest-looking moves first (most alive lattice points kept).
            moves.sort_by_key(|((e, _), _)| std::cmp::Reverse((self.lattice & !e).count_ones()));
            let mut worst = 0;
            for ((e, i), _) in moves {
                let v = self.value(e, i, best - 1);
                worst = worst.max(v);
                if worst + 1 >= best {
                    break;
                }
            }
            if worst + 1 < best {
                best = worst + 1;
            }
            if best <= lower {
                break;
            }
        }
        let value = if best < cap {
            self.memo.insert(key, (best, true));
            best
        } else {
            self.memo.insert(key, (cap, false));
            cap
        };
        crate::progress::SEARCH.set(self.memo.len() as u64);
        value
    }

    /// The open queries, lattice points of the alive set's bounding box's centre first
    /// (a heuristic order; the value does not depend on it).
    fn query_order(&self, excluded: u128, inside: u128) -> Vec<usize> {
        let alive = self.lattice & !excluded;
        let mut centre = vec![0i64; self.n];
        let count = i64::from(alive.count_ones().max(1));
        for k in 0..self.points.len() {
            if alive >> k & 1 == 1 {
                for (c, v) in centre.iter_mut().zip(&self.points[k]) {
                    *c += v;
                }
            }
        }
        let mut order: Vec<(i64, usize)> = (0..self.points.len())
            .filter(|&k| (excluded | inside) >> k & 1 == 0)
            .map(|k| {
                let dist: i64 = self.points[k]
                    .iter()
                    .zip(&centre)
                    .map(|(p, c)| (p * count - c).abs())
                    .sum();
                (dist, k)
            })
            .collect();
        order.sort_unstable();
        order.into_iter().map(|(_, k)| k).collect()
    }

    /// Turns the dominance pruning of adversary moves off (for cross-checks: the value
    /// must not change, only the search size).
    pub fn without_pruning(mut self) -> Minimax {
        self.prune = false;
        self
    }

    /// V_Q and an optimal first query.
    pub fn solve(&mut self) -> MinimaxReport {
        // Iterative deepening on the cap: a search under a tight cap prunes far more, and
        // every failed pass leaves lower bounds in the memo for the next.
        let mut cap = 1;
        let value = loop {
            let v = self.value(0, 0, cap);
            if v < cap {
                break v;
            }
            cap = v + 1;
        };
        let mut first = None;
        if value > 0 {
            for k in self.query_order(0, 0) {
                let moves = self.dominant_moves(0, 0, k);
                if moves
                    .into_iter()
                    .all(|((e, i), _)| self.value(e, i, value) < value)
                {
                    first = Some(self.real_point(k));
                    break;
                }
            }
        }
        self.report(value, first)
    }

    fn report(&self, value: u32, first_query: Option<Vec<f64>>) -> MinimaxReport {
        MinimaxReport {
            queries: if self.points.iter().all(|p| p.iter().all(|v| v % 2 == 0)) {
                QuerySet::Lattice
            } else {
                QuerySet::HalfInteger
            },
            query_points: self.points.len(),
            lattice_points: self.lattice.count_ones() as usize,
            traces: self.traces.len(),
            value,
            first_query,
            states: self.memo.len(),
        }
    }

    fn real_point(&self, k: usize) -> Vec<f64> {
        self.points[k].iter().map(|v| *v as f64 / 2.0).collect()
    }

    fn cut_of(&self, t: usize) -> Cut {
        // {a.P < b} with P = 2p is {a.p < b/2}.
        let trace = &self.traces[t];
        Cut {
            normal: Normal::Dense(trace.normal.iter().map(|v| *v as f64).collect()),
            offset: Exact::from_f64(trace.offset as f64 / 2.0).unwrap_or(Exact::ZERO),
        }
    }

    /// The exact worst case of the deterministic built-in method `name` over the
    /// adversary moves above (its queries must lie in Q).
    pub fn method_worst_case(
        &mut self,
        class: &LatticeClass,
        name: &str,
    ) -> Result<MinimaxReport, Error> {
        let info = method::METHODS
            .iter()
            .find(|m| m.name == name)
            .ok_or_else(|| Error::UnknownMethod { name: name.into() })?;
        if !info.deterministic {
            return Err(Error::Unsupported {
                what: format!("method {name:?}"),
                reason: "minimax needs a deterministic method".into(),
            });
        }
        let class = crate::class::Class::Lattice(class.clone());
        let mut history: Vec<(usize, Option<usize>)> = Vec::new();
        let mut first = None;
        let mut nodes = 0usize;
        let value = self.method_value(&class, name, &mut history, 0, 0, &mut first, &mut nodes)?;
        let mut report = self.report(value, first);
        report.states = nodes;
        Ok(report)
    }

    #[allow(clippy::too_many_arguments)]
    fn method_value(
        &self,
        class: &crate::class::Class,
        name: &str,
        history: &mut Vec<(usize, Option<usize>)>,
        excluded: u128,
        inside: u128,
        first: &mut Option<Vec<f64>>,
        nodes: &mut usize,
    ) -> Result<u32, Error> {
        *nodes += 1;
        crate::progress::SEARCH.set(*nodes as u64);
        // Replay the method along the history.
        let mut m: Box<dyn Method + Send> = method::build(name, class, 0)?;
        let mut query = vec![0.0; self.n];
        let mut step = m.next(&mut query)?;
        for (k, t) in history.iter() {
            let answer = match t {
                None => Answer::Inside,
                Some(t) => Answer::Cut(self.cut_of(*t)),
            };
            m.observe(&self.real_point(*k), &answer)?;
            step = m.next(&mut query)?;
        }
        let fail = |reason: String| Error::MethodFailed {
            method: name.into(),
            reason,
        };
        let k = match step {
            Step::Output(output) => {
                let correct = match &output {
                    Output::Empty => self.lattice & !excluded == 0,
                    Output::Point { point } => {
                        let hull = self.hull(inside) | inside;
                        self.index_of(point)
                            .is_some_and(|k| self.lattice & hull & (1 << k) != 0)
                    }
                };
                if !correct {
                    return Err(fail(format!(
                        "its output {output:?} is not correct for every consistent instance"
                    )));
                }
                return Ok(0);
            }
            Step::Query => self
                .index_of(&query)
                .ok_or_else(|| fail(format!("it queried {query:?}, outside Q")))?,
        };
        if history.is_empty() {
            *first = Some(query.clone());
        }
        let bit = 1u128 << k;
        let mut worst = 0;
        if self.lattice & bit == 0 && (excluded | inside) & bit == 0 {
            history.push((k, None));
            let v =
                self.method_value(class, name, history, excluded, inside | bit, first, nodes)?;
            history.pop();
            worst = worst.max(v);
        }
        if inside & bit == 0 {
            for ((e, i), t) in self.moves(excluded, inside, k) {
                let Some(t) = t else { continue };
                history.push((k, Some(t)));
                let v = self.method_value(class, name, history, e, i, first, nodes)?;
                history.pop();
                worst = worst.max(v);
            }
        }
        Ok(worst + 1)
    }

    fn index_of(&self, point: &[f64]) -> Option<usize> {
        self.points.iter().position(|p| {
            p.len() == point.len() && p.iter().zip(point).all(|(a, b)| *a as f64 == 2.0 * b)
        })
    }
}

/// The coordinate reflections (and permutations when every side is equal) of the box,
/// as permutations of Q's indices.
/// Of (excluded set, trace) pairs, those whose excluded set is maximal under inclusion
/// among the pairs with the same excluded lattice points; one pair per distinct set.
fn maximal(mut cuts: Vec<(u128, u32)>, lattice: u128) -> Vec<(u128, u32)> {
    cuts.sort_unstable_by_key(|(e, _)| (e & lattice, std::cmp::Reverse(e.count_ones()), *e));
    cuts.dedup_by_key(|(e, _)| *e);
    let mut kept: Vec<(u128, u32)> = Vec::with_capacity(cuts.len());
    let mut group_start = 0;
    for (e, t) in cuts {
        if kept
            .get(group_start)
            .is_none_or(|(f, _)| f & lattice != e & lattice)
        {
            group_start = kept.len();
        }
        if kept[group_start..].iter().all(|(f, _)| e & !f != 0) {
            kept.push((e, t));
        }
    }
    kept
}

fn symmetries(class: &LatticeClass, points: &[Vec<i64>]) -> Vec<Vec<usize>> {
    let n = class.int_dim();
    let uniform = class.lower.iter().all(|l| *l == class.lower[0])
        && class.upper.iter().all(|u| *u == class.upper[0]);
    let mut perms: Vec<Vec<usize>> = vec![(0..n).collect()];
    if uniform {
        perms = permutations(n);
    }
    let index: HashMap<&Vec<i64>, usize> = points.iter().enumerate().map(|(k, p)| (p, k)).collect();
    let mut out = Vec::new();
    for perm in &perms {
        for flips in 0..(1u32 << n) {
            let mapping: Option<Vec<usize>> = points
                .iter()
                .map(|p| {
                    let image: Vec<i64> = (0..n)
                        .map(|i| {
                            let v = p[perm[i]];
                            if flips >> i & 1 == 1 {
                                2 * class.lower[i] + 2 * class.upper[i] - v
                            } else {
                                v
                            }
                        })
                        .collect();
                    index.get(&image).copied()
                })
                .collect();
            if let Some(m) = mapping {
                out.push(m);
            }
        }
    }
    out
}

fn permutations(n: usize) -> Vec<Vec<usize>> {
    if n == 0 {
        return vec![Vec::new()];
    }
    let mut out = Vec::new();
    for p in permutations(n - 1) {
        for pos in 0..=p.len() {
            let mut q = p.clone();
            q.insert(pos, n - 1);
            out.push(q);
        }
    }
    out
}

/// Every trace of an open halfspace on `points` (integer coordinates), each with an
/// explicit integer functional `{a.P < b}` realising it.
fn enumerate_traces(points: &[Vec<i64>]) -> Vec<Trace> {
    let mut by_mask: HashMap<u128, Trace> = HashMap::new();
    for (normal, offset) in functionals(points) {
        let mut mask = 0u128;
        for (k, p) in points.iter().enumerate() {
            if dot(&normal, p) < offset {
                mask |= 1 << k;
            }
        }
        by_mask.entry(mask).or_insert(Trace {
            mask,
            normal,
            offset,
        });
    }
    let mut traces: Vec<Trace> = by_mask.into_values().collect();
    traces.sort_by_key(|t| t.mask);
    traces
}

/// The traces on `points` (integer coordinates, at most 128 points spanning R^n,
/// n <= 3) of every open halfspace, as bit masks of the points strictly inside; exact
/// (module docs). Used for exact halfspace depth: the depth of a point z of a set S is
/// |S| minus the largest trace not containing z.
pub fn halfspace_traces(points: &[Vec<i64>]) -> Vec<u128> {
    enumerate_traces(points)
        .into_iter()
        .map(|t| t.mask)
        .collect()
}

fn gcd(mut a: i64, mut b: i64) -> i64 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

fn dot(a: &[i64], p: &[i64]) -> i64 {
    a.iter().zip(p).map(|(x, y)| x * y).sum()
}

/// Integer functionals (a, b) whose sets {a.P < b} realise every separable subset of
/// `points` (including none and all), by the extreme-ray argument (module docs).
fn functionals(points: &[Vec<i64>]) -> Vec<(Vec<i64>, i64)> {
    let dim = points.first().map_or(0, Vec::len);
    let mut out = Vec::new();
    if points.is_empty() || dim == 0 {
        return out;
    }
    let min0 = points.iter().map(|p| p[0]).min().unwrap_or(0);
    let max0 = points.iter().map(|p| p[0]).max().unwrap_or(0);
    let mut e0 = vec![0; dim];
    e0[0] = 1;
    out.push((e0.clone(), min0)); // none
    out.push((e0, max0 + 1)); // all
    if dim == 1 {
        let mut values: Vec<i64> = points.iter().map(|p| p[0]).collect();
        values.sort_unstable();
        values.dedup();
        for w in values.windows(2) {
            // Thresholds between consecutive values, both sides (doubled to stay integral).
            let t2 = w[0] + w[1];
            out.push((vec![2], t2));
            out.push((vec![-2], -t2));
        }
        return out;
    }
    let frames: Vec<Vec<usize>> = if dim == 2 {
        (0..points.len())
            .flat_map(|i| ((i + 1)..points.len()).map(move |j| vec![i, j]))
            .collect()
    } else {
        let m = points.len();
        let mut f = Vec::new();
        for i in 0..m {
            for j in (i + 1)..m {
                for k in (j + 1)..m {
                    f.push(vec![i, j, k]);
                }
            }
        }
        f
    };
    let mut planes: std::collections::HashSet<(Vec<i64>, i64)> = std::collections::HashSet::new();
    for frame in frames {
        let base = &points[frame[0]];
        let diffs: Vec<Vec<i64>> = frame[1..]
            .iter()
            .map(|&j| (0..dim).map(|c| points[j][c] - base[c]).collect())
            .collect();
        let normal: Vec<i64> = if dim == 2 {
            vec![-diffs[0][1], diffs[0][0]]
        } else {
            let (u, v) = (&diffs[0], &diffs[1]);
            vec![
                u[1] * v[2] - u[2] * v[1],
                u[2] * v[0] - u[0] * v[2],
                u[0] * v[1] - u[1] * v[0],
            ]
        };
        if normal.iter().all(|v| *v == 0) {
            continue;
        }
        // Each hyperplane once: primitive normal with a positive leading entry.
        let g = normal.iter().fold(0i64, |g, v| gcd(g, v.abs())).max(1);
        let sign = if normal.iter().find(|v| **v != 0).is_some_and(|v| *v < 0) {
            -1
        } else {
            1
        };
        let key: Vec<i64> = normal.iter().map(|v| sign * v / g).collect();
        let level = dot(&key, base);
        if !planes.insert((key, level)) {
            continue;
        }
        let on: Vec<usize> = (0..points.len())
            .filter(|&k| dot(&normal, &points[k]) == dot(&normal, base))
            .collect();
        // Project the points on the hyperplane by dropping a coordinate where the
        // normal is nonzero (an affine bijection of the hyperplane onto R^(dim-1)).
        let drop = (0..dim).max_by_key(|&c| normal[c].abs()).expect("dim >= 2");
        let project =
            |p: &Vec<i64>| -> Vec<i64> { (0..dim).filter(|&c| c != drop).map(|c| p[c]).collect() };
        let sub: Vec<Vec<i64>> = on.iter().map(|&k| project(&points[k])).collect();
        let inner = functionals(&sub);
        // Largest |g| over all points, to scale the hyperplane term above it.
        for (g, h) in inner {
            let g_full: Vec<i64> = {
                let mut full = Vec::with_capacity(dim);
                let mut it = g.iter();
                for c in 0..dim {
                    full.push(if c == drop {
                        0
                    } else {
                        *it.next().expect("dim - 1")
                    });
                }
                full
            };
            let g_max = points
                .iter()
                .map(|p| (dot(&g_full, p) - h).abs())
                .max()
                .unwrap_or(0);
            let scale = g_max + 1;
            for orientation in [1i64, -1] {
                let a: Vec<i64> = (0..dim)
                    .map(|c| orientation * scale * normal[c] + g_full[c])
                    .collect();
                let b = orientation * scale * dot(&normal, base) + h;
                if a.iter().any(|v| *v != 0) {
                    out.push((a, b));
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn traces_of_a_square() {
        // The four corners of a square: by hand, the open half-planes cut out the empty
        // set, all four, each single corner (4), each side pair (4) and each set of
        // three (4): 14 traces (the diagonal pairs are not separable).
        let square = vec![vec![0, 0], vec![0, 2], vec![2, 0], vec![2, 2]];
        let traces = enumerate_traces(&square);
        assert_eq!(traces.len(), 14);
    }
}
