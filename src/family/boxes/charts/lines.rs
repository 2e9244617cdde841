//! The bound lines of a box family's query charts, each with a fixed look for the whole
//! results folder and a footnote saying what it assumes, and the footnotes every chart
//! of the folder carries (the adversary, flagged games, rejected certificates).

use crate::bounds;
use crate::chart::{Curve, CurveStyle};
use crate::class::{Class, LatticeClass, Promise};
use crate::family::boxes::ClassFacts;
use crate::family::Lineup;

/// A bound line's number at a class, when it has one there.
type Value = Box<dyn Fn(&Class) -> Option<u64>>;

/// One bound line a query chart may draw.
struct Line {
    label: String,
    style: CurveStyle,
    /// The fixed variant of the style's dash patterns (distinct per style).
    look: usize,
    /// What the line assumes, for the footnote.
    assumes: String,
    value: Value,
}

fn lattice(f: fn(&LatticeClass) -> Option<u64>) -> Value {
    Box::new(move |c: &Class| match c {
        Class::Lattice(c) => f(c),
        _ => None,
    })
}

/// Every bound line of the box families, in a fixed order (so each keeps its look).
fn lines(classes: &[(f64, Class)]) -> Vec<Line> {
    let mixed = classes
        .iter()
        .any(|(_, c)| matches!(c, Class::Lattice(l) if l.cont_dim > 0));
    let nonempty = classes
        .iter()
        .any(|(_, c)| matches!(c, Class::Feasibility(f) if f.promise == Promise::Nonempty));
    let first_order = classes
        .iter()
        .any(|(_, c)| matches!(c, Class::FirstOrder(_)));
    vec![
        Line {
            label: if nonempty {
                "lower bound d*k, K promised nonempty (box halving, theorem)".into()
            } else {
                "lower bound d*k+1 (box halving, theorem)".into()
            },
            style: CurveStyle::LowerBound,
            look: 0,
            assumes: "lower bound: no method, deterministic or randomized, stops earlier in \
                      any run; k = max{j >= 0 : R 2^-j > rho} (theorem, docs/theory.md §1.1)"
                .into(),
            value: Box::new(|c| match c {
                Class::Feasibility(_) => ClassFacts::of(c).lower_bound,
                _ => None,
            }),
        },
        Line {
            label: "lower bound d*ceil(log_7(LR/(2 eps))) (slab funnel, theorem)".into(),
            style: CurveStyle::LowerBound,
            look: 1,
            assumes: "slab-funnel lower bound: every deterministic method, subgradients of l1 \
                      norm at most L (so every l_p class), eps < L R / 2; nothing claimed for \
                      randomized methods (theorem, docs/theory.md §2.4)"
                .into(),
            value: Box::new(|c| match c {
                Class::FirstOrder(_) => ClassFacts::of(c).lower_bound,
                _ => None,
            }),
        },
        Line {
            label: "lower bound floor(log2|S|)+1 (docs/theory.md §4)".into(),
            style: CurveStyle::LowerBound,
            look: 0,
            assumes: "floor(log2|S|)+1: every method on a pure integer class whose answer may \
                      be \"none\", S the lattice points of the box (theorem, docs/theory.md §4)"
                .into(),
            value: lattice(bounds::lattice_half_lower_bound),
        },
        Line {
            label: if mixed {
                "2^n (d k + 1), mixed-corner (ours, certified per run)".into()
            } else {
                "2^n, corner construction (ours, certified per run)".into()
            },
            style: CurveStyle::Guide,
            look: 0,
            assumes: "corner count: what our construction forces in every run the verifier \
                      certified, no general proof (docs/theory.md §4)"
                .into(),
            value: lattice(bounds::corner_count),
        },
        Line {
            label: "centre of gravity, upper (Grunbaum 1960)".into(),
            style: CurveStyle::UpperBound,
            look: 0,
            assumes: if first_order {
                "centre of gravity: the exact centre-of-gravity method, best point queried, \
                 L in the l2 norm (docs/theory.md §2.5)"
                    .into()
            } else {
                "centre of gravity: the exact centre-of-gravity method, each cut through the \
                 exact centroid (docs/theory.md §1.2)"
                    .into()
            },
            value: Box::new(|c| ClassFacts::of(c).upper_centre_of_gravity),
        },
        Line {
            label: "ellipsoid, upper (Bertsimas & Tsitsiklis 1997)".into(),
            style: CurveStyle::UpperBound,
            look: 1,
            assumes: "ellipsoid: the central-cut ellipsoid method started from the ball of \
                      radius R sqrt(d) (docs/theory.md §1.2)"
                .into(),
            value: Box::new(|c| ClassFacts::of(c).upper_ellipsoid),
        },
        Line {
            label: if mixed {
                "centerpoint, upper (Basu & Oertel 2017)".into()
            } else {
                "centerpoint, upper (Oertel et al. 2014)".into()
            },
            style: CurveStyle::UpperBound,
            look: 2,
            assumes: "centerpoint: an exact centerpoint method (each cut through a point of \
                      depth at least 1/2^n, or 1/(2^n (d+1)) with a continuous part), derived \
                      in docs/theory.md §4"
                .into(),
            value: lattice(|c| Some(bounds::centerpoint_upper_bound(c))),
        },
    ]
}

/// The bound lines over `classes` (x, class) that have at least one number, and one
/// footnote per line drawn.
pub(super) fn bound_curves(classes: &[(f64, Class)]) -> (Vec<Curve>, Vec<String>) {
    let mut curves = Vec::new();
    let mut notes = Vec::new();
    for line in lines(classes) {
        let points: Vec<(f64, f64)> = classes
            .iter()
            .filter_map(|(x, c)| Some((*x, (line.value)(c)? as f64)))
            .collect();
        if points.is_empty() {
            continue;
        }
        notes.push(line.assumes);
        curves.push(Curve {
            label: line.label,
            points,
            style: line.style,
            look: Some(line.look),
        });
    }
    if classes
        .iter()
        .any(|(_, c)| matches!(c, Class::FirstOrder(_)))
    {
        notes.push(
            "The published order Theta(d log(LR/eps)) (Nemirovski & Yudin 1983) has no \
             verified constant and is not drawn; each game's count is also certified on its \
             own."
                .into(),
        );
    }
    (curves, notes)
}

/// The footnotes every chart of the folder carries: what the adversary is and proves,
/// how flagged games are drawn, and rejected certificates.
pub(super) fn folder_notes(lineup: &Lineup<'_>, rejected: usize) -> Vec<String> {
    let mut notes = Vec::new();
    if let Some(info) = crate::adversary::info(lineup.adversary) {
        notes.push(format!("Adversary {}: {}.", info.name, info.description));
    }
    if rejected > 0 {
        notes.push(format!(
            "{rejected} games' certificates were REJECTED by the verifier (an adversary bug; \
             the verified column of games.csv): their counts are drawn but certify nothing."
        ));
    }
    notes
}

/// The footnote of a chart that draws refuted or failed games.
pub(super) const FLAGGED_NOTE: &str = "Refuted outputs and failed games are drawn as their own \
     marks, left out of the median and band: a refuted output is no lower bound \
     (docs/theory.md §7.3).";
