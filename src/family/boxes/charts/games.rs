//! The charts of a box family that replay one game per built-in method at the chart
//! dimension and accuracy (deterministic given the seed): the adversary's undecided
//! measure against the query index, the certified uncertainty against T (first-order),
//! and the picture of one two-dimensional game (feasibility).

use std::path::{Path, PathBuf};

use crate::certificate::universal::{self, Exchange};
use crate::chart::{self, ChartSpec, Curve, CurveStyle, Cut2d, Flag, FlaggedGame, Game2d};
use crate::chart::{Scale, Series, SeriesPoint, DEFAULT_WIDTH as WIDTH};
use crate::class::{Class, FeasibilityClass, FirstOrderClass};
use crate::error::Error;
use crate::family::boxes::{outcome_name, BoxKind as Family};
use crate::family::{build_player, Lineup};
use crate::game::UndecidedTrace;
use crate::method;
use crate::oracle::{Answer, Normal};
use crate::runner::{self, GameSpec};
use crate::transcript::{MemoryTranscript, Record};

use super::table::look_of;
use super::{Context, HEIGHT};

/// The fixed look of the subgradient upper curve (its own pattern among the folder's
/// upper lines, which take 0 to 2).
const SUBGRADIENT_CURVE_LOOK: usize = 3;

/// Draws the replayed-game charts (c), (e) and (d); returns their PNG paths.
pub(super) fn draw_replayed(dir: &Path, cx: &Context<'_>) -> Result<Vec<PathBuf>, Error> {
    let grid = cx.grid;
    let lineup = cx.lineup;
    let (d, rho) = (grid.chart_dim, grid.chart_accuracy);
    let acc = grid.accuracy_name();
    let lattice = match grid.kind {
        Family::Lattice { cont_dim, .. } => Some(cont_dim),
        _ => None,
    };
    let mut pngs = Vec::new();

    // (c) undecided measure against the query index.
    let class = grid.class_at(d, rho)?;
    let mut series = Vec::new();
    let mut gap_series = Vec::new();
    for m in lineup.methods {
        if !plays(lineup, m, &class) {
            continue;
        }
        let spec = GameSpec {
            class: class.clone(),
            adversary: lineup.adversary.to_string(),
            method: m.clone(),
            seed: lineup.seeds[0],
            budget: cx.budget,
            transcript: None,
        };
        let mut trace = UndecidedTrace::default();
        let mut memory = MemoryTranscript::default();
        let (mut player, flush) = build_player(lineup, &spec)?;
        let report = runner::run_with_flush(
            &spec,
            player.as_mut(),
            &mut [&mut trace, &mut memory],
            flush,
        )?;
        let look = look_of(lineup, m);
        if let Class::FirstOrder(c) = &class {
            gap_series.push(uncertainty_series(m, look, c, &memory.records)?);
        }
        let flag = report
            .verdict
            .as_ref()
            .ok()
            .and_then(|v| Flag::from_outcome(outcome_name(&v.outcome)));
        let points: Vec<SeriesPoint> = trace
            .points
            .iter()
            .map(|(i, v)| point(*i as f64, *v))
            .collect();
        series.push(Series {
            label: m.clone(),
            flagged: match (flag, points.last()) {
                (Some(flag), Some(last)) => vec![FlaggedGame {
                    x: last.x,
                    y: last.median,
                    flag,
                }],
                _ => Vec::new(),
            },
            points,
            look,
        });
    }
    let mut footnotes = vec![format!(
        "One game per method (seed {}), replayed; {}.",
        lineup.seeds[0],
        match lattice {
            Some(0) => "the adversary's alive lattice points |S|",
            Some(_) => "log2 of the sum over integer fibres of the alive fibre volume",
            None => "log2 of the adversary's alive box",
        }
    )];
    footnotes.extend(cx.notes.iter().cloned());
    let spec = ChartSpec {
        title: match lattice {
            Some(0) => format!("Alive lattice points against queries, n = {d}"),
            Some(_) => {
                format!("Undecided mixed-integer measure against queries, n = {d}, {acc} = {rho}")
            }
            None => format!("Undecided volume against queries, d = {d}, {acc} = {rho}"),
        },
        subtitle: Some(cx.subtitle.clone()),
        x_label: "query index".into(),
        y_label: match lattice {
            Some(0) => "alive lattice points |S|",
            Some(_) => "log2 of the mixed-integer measure",
            None => "log2 of the alive volume",
        }
        .into(),
        x_integer: true,
        y_integer: lattice == Some(0),
        series,
        footnotes,
        width: WIDTH,
        height: HEIGHT,
        ..ChartSpec::default()
    };
    pngs.push(chart::draw(&spec, &dir.join("undecided"))?.png);

    // (e) first-order: certified uncertainty against T, log-log.
    if let Class::FirstOrder(c) = &class {
        pngs.push(uncertainty_chart(dir, cx, c, gap_series)?);
    }

    // (d) a two-dimensional game (feasibility).
    let picture_rho = grid.accuracies[0];
    if let Ok(Class::Feasibility(class)) = grid.class_at(2, picture_rho) {
        let any = Class::Feasibility(class.clone());
        if let Some(m) = lineup.methods.iter().find(|m| plays(lineup, m, &any)) {
            let spec = GameSpec {
                class: any,
                adversary: lineup.adversary.to_string(),
                method: m.clone(),
                seed: lineup.seeds[0],
                budget: cx.budget.min(200),
                transcript: None,
            };
            let mut memory = MemoryTranscript::default();
            let (mut player, flush) = build_player(lineup, &spec)?;
            runner::run_with_flush(&spec, player.as_mut(), &mut [&mut memory], flush)?;
            let picture = game_picture(&memory.records, &class, m, lineup.adversary);
            pngs.push(chart::draw_game_2d(&picture, &dir.join("game-2d"))?.png);
        }
    }
    Ok(pngs)
}

/// Whether method `m` of the scenario plays `class`: an external method plays every class
/// of its scenario, a built-in one those it supports.
fn plays(lineup: &Lineup<'_>, m: &str, class: &Class) -> bool {
    lineup.external_method(m).is_some() || method::supports(m, class).is_ok()
}

fn point(x: f64, v: f64) -> SeriesPoint {
    SeriesPoint {
        x,
        min: v,
        median: v,
        max: v,
        censored: false,
    }
}

/// The certified-uncertainty chart: eps_cert against T with the subgradient method's
/// upper curve, saying what that curve assumes.
fn uncertainty_chart(
    dir: &Path,
    cx: &Context<'_>,
    c: &FirstOrderClass,
    gap_series: Vec<Series>,
) -> Result<PathBuf, Error> {
    let t_max = gap_series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.x))
        .fold(1.0, f64::max);
    let diameter = c.half_width * (c.dim as f64).sqrt();
    let curve_points: Vec<(f64, f64)> = (0..=40)
        .map(|k| t_max.powf(f64::from(k) / 40.0))
        .map(|t| (t, c.lipschitz * diameter / (t + 1.0).sqrt()))
        .collect();
    let ratio = c.lipschitz * diameter / c.eps;
    let planned = (ratio * ratio).ceil();
    let mut footnotes = vec![
        format!(
            "subgradient upper curve: the best of T+1 points of projected subgradient steps \
             with the constant step D/(L sqrt(T+1)) tuned to T, D = R sqrt(d), L in the l2 norm \
             (docs/theory.md §2.5). The built-in subgradient tunes its step to the {planned} \
             queries it plans for eps = {} (subgradient-decaying steps by D/(L sqrt(t+1))), so \
             its points may lie above the curve.",
            c.eps
        ),
        "certified uncertainty: an error no method can rule out from the first T answers, for this class \
         and norm; a certified lower estimate, not the method's own error (docs/theory.md §2.2)."
            .to_string(),
    ];
    footnotes.extend(cx.notes.iter().cloned());
    let spec = ChartSpec {
        title: format!("Certified uncertainty against queries, d = {}", c.dim),
        subtitle: Some(cx.subtitle.clone()),
        x_label: "queries T".into(),
        y_label: "certified uncertainty".into(),
        x_scale: Scale::Log10,
        y_scale: Scale::Log10,
        x_integer: true,
        series: gap_series,
        curves: vec![Curve {
            label: "subgradient, upper L R sqrt(d) / sqrt(T+1), step tuned to T (Nesterov 2004)"
                .into(),
            points: curve_points,
            style: CurveStyle::UpperBound,
            look: Some(SUBGRADIENT_CURVE_LOOK),
        }],
        footnotes,
        width: WIDTH,
        height: HEIGHT,
        ..ChartSpec::default()
    };
    Ok(chart::draw(&spec, &dir.join("uncertainty-vs-queries"))?.png)
}

/// eps_cert after T answers (T on a doubling grid) of one recorded first-order game.
fn uncertainty_series(
    method: &str,
    look: Option<usize>,
    class: &FirstOrderClass,
    records: &[Record],
) -> Result<Series, Error> {
    let exchanges: Vec<Exchange> = records
        .iter()
        .filter_map(|r| match r {
            Record::Query(q) => match &q.answer {
                Answer::FirstOrder(fo) => Some(Exchange {
                    point: q.point.clone(),
                    value: fo.value.clone(),
                    gradient: fo.subgradient.clone(),
                }),
                _ => None,
            },
            _ => None,
        })
        .collect();
    // A finer accuracy so that eps_cert is reported even below the class's eps.
    let probe = FirstOrderClass {
        eps: class.eps / 16.0,
        ..class.clone()
    };
    let mut points = Vec::new();
    let mut t = 1usize;
    while t <= exchanges.len() {
        if let Some(found) = universal::certificate_for(&probe, &exchanges[..t], true)? {
            points.push(point(t as f64, found.certified_uncertainty));
        }
        t = if t * 2 > exchanges.len() && t != exchanges.len() {
            exchanges.len()
        } else {
            t * 2
        };
    }
    Ok(Series {
        label: method.to_string(),
        points,
        look,
        ..Series::default()
    })
}

/// The picture of a two-dimensional game: the alive box after each answer is the box
/// cut by every axis cut so far (exactly the halving adversary's box).
fn game_picture(
    records: &[Record],
    class: &FeasibilityClass,
    method: &str,
    adversary: &str,
) -> Game2d {
    let r = class.half_width;
    let mut current = [-r, r, -r, r];
    let mut boxes = vec![current];
    let mut queries = Vec::new();
    let mut cuts = Vec::new();
    for record in records {
        let Record::Query(q) = record else { continue };
        queries.push([q.point[0], q.point[1]]);
        if let Answer::Cut(cut) = &q.answer {
            let b = cut.offset.to_f64();
            let normal = [cut.normal.get(0), cut.normal.get(1)];
            if let Normal::Axis { axis, sign } = &cut.normal {
                let (lo, hi) = (2 * axis, 2 * axis + 1);
                if *sign > 0 {
                    current[hi] = current[hi].min(b);
                } else {
                    current[lo] = current[lo].max(-b);
                }
            }
            cuts.push(Cut2d { normal, offset: b });
        }
        boxes.push(current);
    }
    Game2d {
        title: format!(
            "{method} against {adversary}, d = 2, R/rho = {}: {} queries",
            class.half_width / class.rho,
            queries.len()
        ),
        half_width: r,
        boxes,
        queries,
        cuts,
        width: 800,
        height: 800,
    }
}
