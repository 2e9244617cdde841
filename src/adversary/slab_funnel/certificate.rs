//! The slab funnel's own certificate (docs/theory.md §2.4, certificate theorem) and the
//! LP extension of docs/theory.md §2.2.
//!
//! While the current level K has beta lambda_K h_K > eps, take an unfixed coordinate i0
//! (the lowest), the centre c of the alive region (c_i = m_{K,i} when unfixed, m_{K,i} +
//! s_{K,i} (1 + beta) h_K / 2 when fixed), z = c - h_K e_{i0}, z' = c + h_K e_{i0} and
//! sigma = beta lambda_K. The witnesses are
//!   f_w(y) = max{ M(y), 0 + sigma ||y - w||_inf },  w in {z, z'},
//! with M the revealed pieces: the boundary pieces and one piece per sign fixed inside
//! the certified prefix (the distinct pieces, not one per answer). Lemma (3) of
//! docs/theory.md §2.4 gives sigma ||x_t - w||_inf <= v_t, so the cone never exceeds an
//! answer; every revealed piece is <= 0 on the alive region, so f_w has its minimum 0 at
//! w (the floor Lambda(w) of docs/theory.md §2.2 is >= 0; 0 serves as well), and the two
//! eps-solution sets lie in w + (eps / sigma) B_inf, disjoint since ||z - z'||_inf =
//! 2 h_K exceeds 2 eps / sigma. Once the method opens a level where beta lambda h <= eps,
//! the prefix ends just before the answer that opened it (level K* is then the last
//! qualifying one, and i0 is the sign that answer fixed). Cost: O(pieces * d) exact
//! numbers, no LP.

use num_bigint::BigInt;
use num_rational::BigRational;

use super::{exact_of, LpExtension, SlabFunnel};
use crate::certificate::universal;
use crate::class::FirstOrderClass;
use crate::exact::{f64_to_rational, Exact};
use crate::instance::{AffinePiece, FunctionWitness, Witness};
use crate::transcript::Witnesses;

/// The funnel's certificate for its longest qualifying prefix.
#[derive(Clone, Debug, PartialEq)]
pub struct FunnelCertificate {
    /// The two witnesses and the prefix they certify.
    pub witnesses: Witnesses,
    /// The level K whose alive region holds the two cone apexes.
    pub level: usize,
    /// The coordinate i0 along which the apexes are 2 h_K apart.
    pub coordinate: usize,
}

/// The funnel's own certificate (module docs); `None` when level 0 does not qualify
/// (eps >= L R / 2).
pub fn funnel_certificate(funnel: &SlabFunnel) -> Option<FunnelCertificate> {
    let levels = funnel.levels();
    let first_bad = levels.iter().position(|l| !l.qualifies);
    let (level_index, prefix, coordinate, opened) = match first_bad {
        Some(0) => return None,
        Some(bad) => {
            let level = &levels[bad - 1];
            let last = *level.fix_order.last().expect("a full level");
            (bad - 1, levels[bad].opened_by, last, true)
        }
        None => {
            let level = levels.last().expect("at least one level");
            let unfixed = level
                .signs
                .iter()
                .position(|&s| s == 0)
                .expect("the current level always has an unfixed sign");
            (levels.len() - 1, funnel.answers_given(), unfixed, false)
        }
    };
    let class = funnel.class();
    let d = class.dim;
    let mut pieces = Vec::with_capacity(2 * d + d * (level_index + 1));
    let lipschitz = Exact::Float(class.lipschitz);
    let minus_lipschitz = Exact::Float(-class.lipschitz);
    let boundary_intercept =
        exact_of(-(f64_to_rational(class.lipschitz) * f64_to_rational(class.half_width)));
    for i in 0..d {
        for upper in [true, false] {
            let mut slope = vec![Exact::ZERO; d];
            slope[i] = if upper {
                lipschitz.clone()
            } else {
                minus_lipschitz.clone()
            };
            pieces.push(AffinePiece {
                slope,
                intercept: boundary_intercept.clone(),
            });
        }
    }
    for (j, level) in levels[..=level_index].iter().enumerate() {
        let fixed = if opened && j == level_index {
            &level.fix_order[..level.fix_order.len() - 1]
        } else {
            &level.fix_order[..]
        };
        for &i in fixed {
            let mut slope = vec![Exact::ZERO; d];
            slope[i] = level.gradient_entry(level.signs[i]);
            pieces.push(AffinePiece {
                slope,
                intercept: exact_of(level.piece_intercept(i)),
            });
        }
    }
    let level = &levels[level_index];
    let step = &level.half_width * BigRational::new(3.into(), 4.into());
    let centre: Vec<BigRational> = (0..d)
        .map(|i| {
            let fixed_in_prefix = level.signs[i] != 0 && !(opened && i == coordinate);
            if !fixed_in_prefix {
                level.center[i].clone()
            } else if level.signs[i] > 0 {
                &level.center[i] + &step
            } else {
                &level.center[i] - &step
            }
        })
        .collect();
    let sigma = exact_of(&level.slope / BigRational::from_integer(BigInt::from(2)));
    let apex = |shift: &BigRational| -> Vec<Exact> {
        centre
            .iter()
            .enumerate()
            .map(|(i, c)| {
                if i == coordinate {
                    Exact::from_rational(c + shift)
                } else {
                    Exact::from_rational(c.clone())
                }
            })
            .collect()
    };
    let witness = |center: Vec<Exact>| {
        Witness::Function(FunctionWitness {
            pieces: pieces.clone(),
            center,
            floor: Exact::ZERO,
            slope: sigma.clone(),
        })
    };
    let low = witness(apex(&-level.half_width.clone()));
    let high = witness(apex(&level.half_width));
    Some(FunnelCertificate {
        witnesses: Witnesses {
            prefix: prefix as u64,
            instances: vec![low, high],
        },
        level: level_index,
        coordinate,
    })
}

/// The witnesses the game hands over: the funnel's certificate, extended by the LP search
/// of docs/theory.md §2.2 when the settings allow it and it certifies a longer prefix.
pub fn witnesses(funnel: &SlabFunnel) -> Option<Witnesses> {
    let own = funnel_certificate(funnel).map(|c| c.witnesses);
    let total = funnel.answers_given();
    let from = own.as_ref().map_or(0, |w| w.prefix as usize);
    let allowed = match funnel.settings().lp_extension {
        LpExtension::Never => false,
        LpExtension::Always => true,
        LpExtension::UpTo { entries } => {
            (total as u64).saturating_mul(funnel.class().dim as u64) <= entries
        }
    };
    if !allowed || from >= total {
        return own;
    }
    match extend(
        funnel.class(),
        &funnel.exchanges,
        own.is_some().then_some(from),
    ) {
        Some(longer) => Some(longer),
        None => own,
    }
}

/// The longest prefix beyond `from` (already certified; `None`: nothing is) that the LP
/// search certifies, by galloping then bisection (existence is monotone in the prefix);
/// `None` when it certifies nothing more.
fn extend(
    class: &FirstOrderClass,
    exchanges: &[universal::Exchange],
    from: Option<usize>,
) -> Option<Witnesses> {
    let certify = |t: usize| -> Option<Witnesses> {
        universal::certificate_for(class, &exchanges[..t], false)
            .ok()
            .flatten()
            .map(|found| found.witnesses)
    };
    let total = exchanges.len();
    let (mut good, mut best) = match from {
        Some(t) => (t, None),
        None => (0, Some(certify(0)?)),
    };
    let mut step = 1usize;
    let mut bad = total + 1;
    while good < total {
        let t = (good + step).min(total);
        match certify(t) {
            Some(w) => {
                good = t;
                best = Some(w);
                step *= 2;
            }
            None => {
                bad = t;
                break;
            }
        }
    }
    while bad - good > 1 {
        let mid = good + (bad - good) / 2;
        match certify(mid) {
            Some(w) => {
                good = mid;
                best = Some(w);
            }
            None => bad = mid,
        }
    }
    best
}
