//! Choosing the answer at a query: the candidates of docs/theory.md §2.4 grouped by the
//! pieces that share a slope and a margin, each group decided by its offsets
//! t = sign (m_i - x_i) (exact TwoSum pairs when the centre is an `f64`, else an `f64`
//! filter with exact fallback), then the group winners compared by value (filter, exact
//! fallback). Inside the current level box only the current level's two groups (fixed
//! pieces, unfixed coordinates) take part: O(d) work.

use num_rational::BigRational;
use num_traits::Signed;

use super::select::{self, argmax, maximisers, Candidate, TINY, U};
use super::{Choice, SlabFunnel};
use crate::exact::{f64_to_rational, two_diff, Exact};

/// A group of candidates sharing slope and margin.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Group {
    /// The boundary pieces L (+-y_i - R): t = +-x_i - R, slope L, no margin.
    Boundary,
    /// The fixed pieces of a level: t = s_i (m_i - x_i).
    Fixed(usize),
    /// The current level's unfixed coordinates: t = |m_i - x_i|.
    Unfixed,
}

impl SlabFunnel {
    /// Whether x lies in the closed current level box, certified by the filter (`false`
    /// when it lies outside or the filter cannot tell: then every group is scanned).
    fn inside_current_box(&self, x: &[f64]) -> bool {
        let level = self.current();
        let (h, h_err) = (level.half_width_f, level.half_width_err);
        x.iter().enumerate().all(|(i, &xi)| {
            let (a, b) = two_diff(level.center_hi[i], xi);
            if !(a.is_finite() && b.is_finite()) {
                return false;
            }
            if level.center_err[i] == 0.0 && h_err == 0.0 {
                // |a + b| <= h with a = fl(a + b) and h an f64: decided by a, then b.
                let abs_a = a.abs();
                abs_a < h || (abs_a == h && (b == 0.0 || (b < 0.0) == (a > 0.0)))
            } else {
                let reach = (a.abs() + b.abs() + level.center_err[i]) * (1.0 + 4.0 * U);
                reach + TINY <= h - h_err * (1.0 + 4.0 * U)
            }
        })
    }

    /// The candidates of `group` at x in the offset scale t, in coordinate order
    /// (boundary: upper face before lower), into `out`.
    fn offsets(&self, group: Group, x: &[f64], out: &mut Vec<Candidate>) {
        out.clear();
        let r = self.class.half_width;
        let pair_candidate = |a: f64, b: f64, extra: f64, choice: Choice| {
            if a.is_finite() && b.is_finite() {
                Candidate {
                    approx: a,
                    err: b.abs() + extra,
                    pair: (extra == 0.0).then_some((a, b)),
                    choice,
                }
            } else {
                Candidate {
                    approx: 0.0,
                    err: f64::INFINITY,
                    pair: None,
                    choice,
                }
            }
        };
        match group {
            Group::Boundary => {
                for (i, &xi) in x.iter().enumerate() {
                    for upper in [true, false] {
                        let (a, b) = two_diff(if upper { xi } else { -xi }, r);
                        let choice = Choice::Boundary {
                            coordinate: i,
                            upper,
                        };
                        out.push(pair_candidate(a, b, 0.0, choice));
                    }
                }
            }
            Group::Fixed(j) => {
                let level = &self.levels[j];
                for (i, &xi) in x.iter().enumerate() {
                    let s = level.signs[i];
                    if s == 0 {
                        continue;
                    }
                    let (a, b) = two_diff(level.center_hi[i], xi);
                    let (a, b) = if s > 0 { (a, b) } else { (-a, -b) };
                    let choice = Choice::Revealed {
                        level: j,
                        coordinate: i,
                    };
                    out.push(pair_candidate(a, b, level.center_err[i], choice));
                }
            }
            Group::Unfixed => {
                let level = self.current();
                for (i, &xi) in x.iter().enumerate() {
                    if level.signs[i] != 0 {
                        continue;
                    }
                    let (a, b) = two_diff(level.center_hi[i], xi);
                    let sign = level.sign_at(i, xi, a);
                    // |a + b| = |a| + sign(a) b (|b| <= ulp(a) / 2 cannot flip the sign).
                    let (a, b) = if a < 0.0 { (-a, -b) } else { (a, b) };
                    let choice = Choice::Fix {
                        coordinate: i,
                        sign,
                    };
                    out.push(pair_candidate(a, b, level.center_err[i], choice));
                }
            }
        }
    }

    /// The exact offset t of a candidate.
    fn offset_exact(&self, choice: &Choice, x: &[f64]) -> BigRational {
        match *choice {
            Choice::Boundary { coordinate, upper } => {
                let xi = f64_to_rational(x[coordinate]);
                let t = if upper { xi } else { -xi };
                t - f64_to_rational(self.class.half_width)
            }
            Choice::Revealed { level, coordinate } => {
                let level = &self.levels[level];
                let diff = &level.center[coordinate] - f64_to_rational(x[coordinate]);
                if level.signs[coordinate] > 0 {
                    diff
                } else {
                    -diff
                }
            }
            Choice::Fix { coordinate, .. } => {
                (&self.current().center[coordinate] - f64_to_rational(x[coordinate])).abs()
            }
        }
    }

    /// The exact value of a choice at x, as a reduced rational and as [`Exact`].
    pub(super) fn value_exact(&self, choice: &Choice, x: &[f64]) -> (BigRational, Exact) {
        match *choice {
            Choice::Boundary { coordinate, upper } => {
                // L (x_i - R) = L (-R - (0 - x_i)), L (-x_i - R) = L (-R + (0 - x_i)).
                let sign = if upper { -1 } else { 1 };
                let offset = self
                    .minus_half_width
                    .plus_offset(sign, &self.zero, x[coordinate]);
                self.boundary_scale.times(&offset)
            }
            Choice::Revealed { level, coordinate } => {
                let level = &self.levels[level];
                level.piece_value(coordinate, level.signs[coordinate], x[coordinate])
            }
            Choice::Fix { coordinate, sign } => {
                self.current().piece_value(coordinate, sign, x[coordinate])
            }
        }
    }

    /// The exact value of a choice at x.
    fn value_of(&self, choice: &Choice, x: &[f64]) -> BigRational {
        self.value_exact(choice, x).0
    }

    /// The winner of one group at x, in the offset scale; `None` for an empty group.
    fn group_winner(
        &self,
        group: Group,
        x: &[f64],
        scratch: &mut Vec<Candidate>,
    ) -> Option<Candidate> {
        self.offsets(group, x, scratch);
        if scratch.is_empty() {
            return None;
        }
        let k = argmax(scratch, |c| self.offset_exact(&c.choice, x));
        Some(scratch[k])
    }

    /// A group winner moved to the value scale (slope times margin plus offset).
    fn to_value(&self, group: Group, c: Candidate) -> Candidate {
        let (approx, err) = match group {
            Group::Boundary => {
                let l = self.class.lipschitz;
                let value = l * c.approx;
                select::finish(value, l * c.err + U * value.abs())
            }
            Group::Fixed(j) => self.levels[j].value_approx(c.approx, c.err),
            Group::Unfixed => self.current().value_approx(c.approx, c.err),
        };
        let (approx, err) = if c.err.is_finite() {
            (approx, err)
        } else {
            (0.0, f64::INFINITY)
        };
        Candidate {
            approx,
            err,
            pair: None,
            choice: c.choice,
        }
    }

    /// The default answer's choice at x (module docs of the adversary: the tie rules).
    pub fn default_choice(&mut self, x: &[f64]) -> Choice {
        let mut scratch = std::mem::take(&mut self.candidates);
        let mut winners = std::mem::take(&mut self.winners);
        winners.clear();
        let current = self.levels.len() - 1;
        let choice = if self.inside_current_box(x) {
            // Older pieces are <= 0 here and U > 0: the current level's two groups,
            // compared by offset (same slope and margin); the fixed pieces win a tie.
            winners.extend(self.group_winner(Group::Fixed(current), x, &mut scratch));
            winners.extend(self.group_winner(Group::Unfixed, x, &mut scratch));
            winners[argmax(&winners, |c| self.offset_exact(&c.choice, x))].choice
        } else {
            // Every piece of level j is at most lambda_j (beta h_j + ||x||_inf + R) (its
            // centre lies in X), which falls with j: once that bound is below a value
            // already found, no deeper level can win or tie.
            let reach = x.iter().fold(0.0f64, |m, v| m.max(v.abs())) + self.class.half_width;
            let mut found = f64::NEG_INFINITY;
            let groups = std::iter::once(Group::Boundary)
                .chain((0..=current).map(Group::Fixed))
                .chain(std::iter::once(Group::Unfixed));
            for group in groups {
                let level = match group {
                    Group::Boundary => None,
                    Group::Fixed(j) => Some(&self.levels[j]),
                    Group::Unfixed => Some(&self.levels[current]),
                };
                if let Some(level) = level {
                    let bound = (level.slope_f + level.slope_err)
                        * (level.margin_f + level.margin_err + reach)
                        * (1.0 + 8.0 * U)
                        + TINY;
                    if bound < found {
                        continue;
                    }
                }
                if let Some(c) = self.group_winner(group, x, &mut scratch) {
                    let c = self.to_value(group, c);
                    found = found.max(c.approx - c.err);
                    winners.push(c);
                }
            }
            winners[argmax(&winners, |c| self.value_of(&c.choice, x))].choice
        };
        self.candidates = scratch;
        self.winners = winners;
        choice
    }

    /// Every admissible answer at x: every piece attaining the largest value (revealed, or
    /// an unfixed coordinate attaining U), with both signs for an unfixed coordinate whose
    /// query lies exactly on the centre; the default answer first. Each keeps the
    /// construction's invariant that docs/theory.md §2.4 proves consistent: the answer is the
    /// largest of the revealed pieces and U, and its piece attains it.
    pub fn choices(&mut self, x: &[f64]) -> Vec<Choice> {
        let default = self.default_choice(x);
        let mut scratch = Vec::new();
        let mut all = Vec::new();
        let current = self.levels.len() - 1;
        let groups = std::iter::once(Group::Boundary)
            .chain((0..=current).map(Group::Fixed))
            .chain(std::iter::once(Group::Unfixed));
        for group in groups {
            self.offsets(group, x, &mut scratch);
            all.extend(scratch.iter().map(|c| self.to_value(group, *c)));
        }
        let best = maximisers(&all, |c| self.value_of(&c.choice, x));
        let level = self.current();
        let mut out = vec![default];
        for choice in best {
            let mut push = |c: Choice| {
                if !out.contains(&c) {
                    out.push(c);
                }
            };
            match choice {
                Choice::Fix { coordinate, .. }
                    if level.center[coordinate] == f64_to_rational(x[coordinate]) =>
                {
                    push(Choice::Fix {
                        coordinate,
                        sign: 1,
                    });
                    push(Choice::Fix {
                        coordinate,
                        sign: -1,
                    });
                }
                other => push(other),
            }
        }
        out
    }
}
