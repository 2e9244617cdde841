//! The large-scale upper curves `naysayer bounds` prints (docs/theory.md §5) hold the
//! method they name: over a grid of classes and horizons, against every large-scale
//! adversary and published instance that plays the class, the method's gap after T
//! queries is at most its curve at T. These are published theorems about the methods,
//! so a gap above the curve is a bug in the method or in the curve. Gaps are compared to
//! the relative tolerance of the demonstrations (`DEMONSTRATION_TOLERANCE`, 1e-12): the
//! constants are irrational (docs/theory.md §0). The curves' values are checked against
//! their formulas in `tests/upper_bounds.rs`.

use rayon::prelude::*;

use naysayer::adversary;
use naysayer::bounds::large_scale::gap_bounds;
use naysayer::bounds::Side;
use naysayer::class::{Class, LargeScale, LargeScaleClass};
use naysayer::runner::{self, GameSpec};
use naysayer::transcript::DEMONSTRATION_TOLERANCE;

const TOL: f64 = DEMONSTRATION_TOLERANCE;

/// The upper curve `bounds` prints for `method` on `class` at T queries.
fn upper_curve(class: &LargeScaleClass, t: u64, method: &str) -> f64 {
    gap_bounds(class, t)
        .into_iter()
        .find(|b| b.side == Side::Upper && b.method == Some(method))
        .and_then(|b| b.gap)
        .unwrap_or_else(|| panic!("no upper curve for {method} on {class:?}"))
}

/// Every large-scale adversary (adaptive or a published instance) that accepts `class`.
fn adversaries_for(class: &Class) -> Vec<&'static str> {
    adversary::ADVERSARIES
        .iter()
        .filter(|a| a.family == "large-scale")
        .filter(|a| a.restriction.is_none_or(|check| check(class).is_ok()))
        .filter(|a| adversary::build(a.name, class).is_ok())
        .map(|a| a.name)
        .collect()
}

/// Plays `method` for T queries against `adversary`; the judged gap must be at most the
/// method's curve at T (and the judge's own record of that curve must be the same).
fn within_curve(
    function: LargeScaleClass,
    t: u64,
    adversary: &str,
    method: &str,
) -> Result<(), String> {
    let class = Class::LargeScale(LargeScale::new(function, t).unwrap());
    let spec = GameSpec {
        class,
        adversary: adversary.into(),
        method: method.into(),
        seed: 0,
        budget: t,
        transcript: None,
    };
    let what = format!("{method} against {adversary}, T = {t}, {function:?}");
    let report = runner::demonstrate(&spec).map_err(|e| format!("{what}: {e}"))?;
    let verdict = report
        .judgement
        .map_err(|e| format!("{what}: the judge refused: {e}"))?;
    let curve = upper_curve(&function, t, method);
    let gap = verdict.gap.ok_or_else(|| format!("{what}: no gap"))?;
    if verdict.queries_used != t {
        return Err(format!("{what}: {} queries", verdict.queries_used));
    }
    if gap > curve * (1.0 + TOL) {
        return Err(format!(
            "{what}: gap {gap:e} above the upper curve {curve:e}"
        ));
    }
    match verdict.upper_bound {
        Some(u) if (u - curve).abs() <= TOL * curve => Ok(()),
        other => Err(format!(
            "{what}: the judge's upper curve {other:?}, printed {curve:e}"
        )),
    }
}

/// (class, horizon, adversary) for every adversary that plays the class, at the smallest
/// dimension the adaptive adversaries accept and a larger one.
fn games(
    classes: &[(f64, f64)],
    horizons: &[u64],
    make: impl Fn(usize, f64, f64) -> LargeScaleClass,
) -> Vec<(LargeScaleClass, u64, &'static str)> {
    let mut out = Vec::new();
    for &t in horizons {
        for d in [3 * t as usize + 2, 4 * t as usize + 9] {
            for &(a, r) in classes {
                let function = make(d, a, r);
                let class = Class::LargeScale(LargeScale::new(function, t).unwrap());
                for name in adversaries_for(&class) {
                    out.push((function, t, name));
                }
            }
        }
    }
    out
}

fn check_all(games: &[(LargeScaleClass, u64, &'static str)], methods: &[&str], expected: &[&str]) {
    for name in expected {
        assert!(games.iter().any(|(_, _, a)| a == name), "{name} is missing");
    }
    let failures: Vec<String> = games
        .par_iter()
        .flat_map(|(f, t, a)| {
            methods
                .par_iter()
                .filter_map(move |m| within_curve(*f, *t, a, m).err())
        })
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn unconstrained_subgradient_stays_within_its_curve() {
    // Nesterov 2004, sec. 3.2.3 (from memory): step R / (M sqrt(T)), T points, best gap
    // at most M R / sqrt(T) on every convex f that is M-Lipschitz on B(x*, R) with
    // ||x_0 - x*|| <= R; Drori & Teboulle 2016 show it tight.
    let games = games(
        &[(1.0, 1.0), (2.5, 0.01), (1e-3, 300.0)],
        &[1, 2, 5, 13, 40],
        |d, m, r| LargeScaleClass::nonsmooth(d, m, r).unwrap(),
    );
    check_all(
        &games,
        &["unconstrained-subgradient"],
        &["rotation", "drori-teboulle", "nesterov-nonsmooth"],
    );
}

#[test]
fn smooth_methods_stay_within_their_curves() {
    // Beck & Teboulle 2009, Thm 4.4 (accelerated, FISTA form: 2 beta R^2 / (T+1)^2) and
    // Thm 3.1 (gradient with step 1/beta: beta R^2 / (2T)); from memory.
    let games = games(
        &[(1.0, 1.0), (40.0, 0.05), (1e-3, 70.0)],
        &[1, 2, 5, 13, 30],
        |d, beta, r| LargeScaleClass::smooth(d, beta, r).unwrap(),
    );
    check_all(
        &games,
        &["gradient", "accelerated"],
        &["rotation-chain", "smooth-chain"],
    );
}

#[test]
fn strongly_convex_methods_stay_within_their_curves() {
    // Nesterov 2004, Thm 2.2.3, scheme (2.2.11) (accelerated; from memory) and the descent
    // lemma with strong convexity (gradient; common practice, no source pinned), with
    // f(x_0) - f* <= beta R^2 / 2. Q = beta/mu = 4 and 100; T kept where the curves stay
    // far above the rounding of the gap (about 1e-16 beta R^2).
    let mut games = Vec::new();
    for q in [4.0, 100.0] {
        games.extend(self::games(
            &[(1.0, 1.0), (40.0, 0.05), (1e-3, 70.0)],
            &[1, 2, 5, 13, 30],
            |d, beta, r| LargeScaleClass::strongly_convex(d, beta, beta / q, r).unwrap(),
        ));
    }
    check_all(
        &games,
        &["gradient", "accelerated"],
        &["rotation-chain", "strongly-convex-chain"],
    );
}
