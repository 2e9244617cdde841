//! The charts of a box family's results folder (feasibility, first-order, lattice),
//! drawn from `games.csv` and the scenario.
//!
//! For a feasibility scenario:
//! - `queries-vs-dim`: queries used against d at the scenario's chart rho, one series per
//!   method (median over seeds with a min-max band; censored games drawn distinctly),
//!   with the box-halving lower bound and the centre-of-gravity and ellipsoid upper
//!   bounds;
//! - `queries-vs-accuracy`: the same against log2(R/rho) at the chart dimension;
//! - `undecided`: log2 of the alive volume against the query index, one game per method
//!   (first seed) at the chart dimension and rho;
//! - `game-2d`: a picture of one two-dimensional game (the first method that supports
//!   d = 2, at the largest rho of the grid, so the picture stays legible).
//!
//! For a first-order scenario the same (a)-(c) against L R/eps, plus
//! `uncertainty-vs-queries` (certified uncertainty eps_cert against T, log-log). For a
//! lattice scenario (a) is against the integer dimension n with the lattice-halving
//! lower bound, the corner constructions' count and the centerpoint upper bound; (b)
//! only when there is a continuous part; (c) shows the alive lattice points (or the
//! mixed-integer measure).
//!
//! Each chart is written as SVG and PNG with its data beside it as CSV.

use std::collections::BTreeMap;
use std::io::BufRead;
use std::path::{Path, PathBuf};

use crate::bounds;
use crate::certificate::universal::{self, Exchange};
use crate::chart::{self, ChartSpec, Curve, CurveStyle, Cut2d, Game2d, Scale, Series, SeriesPoint};
use crate::chart::{DEFAULT_HEIGHT as HEIGHT, DEFAULT_WIDTH as WIDTH};
use crate::class::{Class, FeasibilityClass, FirstOrderClass, LatticeClass};
use crate::csv::split as split_csv_line;
use crate::error::Error;
use crate::family::boxes::{BoxGrid, BoxKind as Family, ClassFacts, COLUMNS, NO_ACCURACY};
use crate::family::Lineup;
use crate::game::UndecidedTrace;
use crate::method;
use crate::oracle::{Answer, Normal};
use crate::runner::{self, GameSpec};
use crate::transcript::{MemoryTranscript, Record};

/// One game's numbers, as read back from `games.csv`.
#[derive(Clone, Debug, PartialEq)]
struct Row {
    method: String,
    dim: usize,
    rho: f64,
    queries_used: u64,
    censored: bool,
}

/// Queries used per (method, d, rho), in file order of methods.
struct Table {
    methods: Vec<String>,
    cells: BTreeMap<(String, usize, u64), Vec<(u64, bool)>>,
}

fn read_table(csv: &Path) -> Result<Table, Error> {
    let file = std::fs::File::open(csv).map_err(|source| Error::Io {
        action: "cannot read",
        path: csv.to_path_buf(),
        source,
    })?;
    let column = |name: &str| {
        COLUMNS
            .iter()
            .position(|c| *c == name)
            .expect("known column")
    };
    let (m, d, r, q, c) = (
        column("method"),
        column("dim"),
        column("accuracy"),
        column("queries_used"),
        column("censored"),
    );
    let mut table = Table {
        methods: Vec::new(),
        cells: BTreeMap::new(),
    };
    for (n, line) in std::io::BufReader::new(file).lines().enumerate() {
        let line = line.map_err(|source| Error::Io {
            action: "cannot read",
            path: csv.to_path_buf(),
            source,
        })?;
        if n == 0 {
            continue;
        }
        let fields = split_csv_line(&line);
        let bad = |what: &str| Error::Results {
            path: csv.to_path_buf(),
            reason: format!("line {}: {what}", n + 1),
        };
        if fields.len() != COLUMNS.len() {
            return Err(bad("wrong number of fields"));
        }
        let row = Row {
            method: fields[m].clone(),
            dim: fields[d].parse().map_err(|_| bad("dim is not a number"))?,
            rho: if fields[r].is_empty() {
                NO_ACCURACY
            } else {
                fields[r]
                    .parse()
                    .map_err(|_| bad("accuracy is not a number"))?
            },
            queries_used: fields[q]
                .parse()
                .map_err(|_| bad("queries_used is not a number"))?,
            censored: fields[c] == "true",
        };
        if !table.methods.contains(&row.method) {
            table.methods.push(row.method.clone());
        }
        table
            .cells
            .entry((row.method, row.dim, row.rho.to_bits()))
            .or_default()
            .push((row.queries_used, row.censored));
    }
    Ok(table)
}

fn summarize(x: f64, values: &[(u64, bool)]) -> SeriesPoint {
    let mut q: Vec<f64> = values.iter().map(|(v, _)| *v as f64).collect();
    q.sort_by(f64::total_cmp);
    let n = q.len();
    let median = if n % 2 == 1 {
        q[n / 2]
    } else {
        0.5 * (q[n / 2 - 1] + q[n / 2])
    };
    SeriesPoint {
        x,
        min: q[0],
        median,
        max: q[n - 1],
        censored: values.iter().any(|(_, c)| *c),
    }
}

fn bound_curves(classes: &[(f64, Class)]) -> Vec<Curve> {
    let line = |label: &str, style: CurveStyle, f: &dyn Fn(&Class) -> Option<u64>| Curve {
        label: label.to_string(),
        points: classes
            .iter()
            .filter_map(|(x, c)| Some((*x, f(c)? as f64)))
            .collect(),
        style,
    };
    let lattice = |f: fn(&LatticeClass) -> Option<u64>| {
        move |c: &Class| match c {
            Class::Lattice(c) => f(c),
            _ => None,
        }
    };
    let mixed = classes
        .iter()
        .any(|(_, c)| matches!(c, Class::Lattice(l) if l.cont_dim > 0));
    let curves = vec![
        line(
            "lower bound d*k+1 (box halving, theorem)",
            CurveStyle::LowerBound,
            &|c| match c {
                Class::Feasibility(_) => ClassFacts::of(c).lower_bound,
                _ => None,
            },
        ),
        line(
            "lower bound (slab funnel, theorem)",
            CurveStyle::LowerBound,
            &|c| match c {
                Class::FirstOrder(_) => ClassFacts::of(c).lower_bound,
                _ => None,
            },
        ),
        line(
            "lower bound floor(log2|S|)+1 (docs/theory.md §4)",
            CurveStyle::LowerBound,
            &lattice(bounds::lattice_half_lower_bound),
        ),
        line(
            if mixed {
                "2^n (d k + 1), mixed-corner (ours)"
            } else {
                "2^n, corner construction (ours)"
            },
            CurveStyle::Guide,
            &lattice(bounds::corner_count),
        ),
        line(
            "centre of gravity, upper (Grunbaum 1960)",
            CurveStyle::UpperBound,
            &|c| ClassFacts::of(c).upper_centre_of_gravity,
        ),
        line(
            "ellipsoid, upper (Bertsimas & Tsitsiklis 1997)",
            CurveStyle::UpperBound,
            &|c| ClassFacts::of(c).upper_ellipsoid,
        ),
        line(
            if mixed {
                "centerpoint, upper (Basu & Oertel 2017)"
            } else {
                "centerpoint, upper (Oertel et al. 2014)"
            },
            CurveStyle::UpperBound,
            &lattice(|c| Some(bounds::centerpoint_upper_bound(c))),
        ),
    ];
    curves
        .into_iter()
        .filter(|c| !c.points.is_empty())
        .collect()
}

/// eps_cert after T answers (T on a doubling grid) of one recorded first-order game.
fn uncertainty_series(
    method: &str,
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
            let v = found.certified_uncertainty;
            points.push(SeriesPoint {
                x: t as f64,
                min: v,
                median: v,
                max: v,
                censored: false,
            });
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
    })
}

/// Draws every chart of the results folder `dir` of a box family; returns the PNG paths.
pub fn draw_all(dir: &Path, lineup: &Lineup<'_>, grid: &BoxGrid) -> Result<Vec<PathBuf>, Error> {
    let table = read_table(&dir.join("games.csv"))?;
    let budget = lineup.budget.unwrap_or(1);
    let mut pngs = Vec::new();
    let first_order = matches!(grid.kind, Family::FirstOrder { .. });
    let acc = grid.accuracy_name();
    let ratio_of = |accuracy: f64| match &grid.kind {
        Family::FirstOrder { lipschitz, .. } => lipschitz * grid.half_width / accuracy,
        Family::Feasibility { .. } | Family::Lattice { .. } => grid.half_width / accuracy,
    };
    let lattice = match grid.kind {
        Family::Lattice {
            int_lower,
            int_upper,
            cont_dim,
        } => Some((int_lower, int_upper, cont_dim)),
        _ => None,
    };
    let pure_integer = matches!(lattice, Some((_, _, 0)));
    let r = grid.half_width;
    let domain = match lattice {
        Some((lo, hi, 0)) => format!("{{{lo}..{hi}}}^n"),
        Some((lo, hi, d)) => format!("{{{lo}..{hi}}}^n x [-{r}, {r}]^{d}"),
        None => format!("[-{r}, {r}]^d"),
    };
    let subtitle = format!(
        "{}: adversary {}, box {domain}, {} seed(s), budget {}",
        lineup.name,
        lineup.adversary,
        lineup.seeds.len(),
        budget,
    );
    let subtitle = if first_order {
        format!(
            "{subtitle}; theorem d*ceil(log_7(LR/(2 eps))) (docs/theory.md §2.4); order Theta(d log(LR/eps)) (Nemirovski & Yudin 1983)"
        )
    } else {
        subtitle
    };

    // (a) queries against d at fixed accuracy.
    let rho = grid.chart_accuracy;
    let series = table
        .methods
        .iter()
        .map(|m| Series {
            label: m.clone(),
            points: grid
                .dims
                .iter()
                .filter_map(|&d| {
                    let cell = table.cells.get(&(m.clone(), d, rho.to_bits()))?;
                    Some(summarize(d as f64, cell))
                })
                .collect(),
        })
        .filter(|s| !s.points.is_empty())
        .collect();
    let classes: Vec<(f64, Class)> = grid
        .dims
        .iter()
        .filter_map(|&d| Some((d as f64, grid.class_at(d, rho).ok()?)))
        .collect();
    let spec = ChartSpec {
        title: if pure_integer {
            "Queries used against integer dimension n".to_string()
        } else {
            format!(
                "Queries used against {} ({} = {})",
                if lattice.is_some() {
                    "integer dimension n"
                } else {
                    "dimension d"
                },
                if first_order { "LR/eps" } else { "R/rho" },
                ratio_of(rho)
            )
        },
        subtitle: Some(subtitle.clone()),
        x_label: if lattice.is_some() {
            "integer dimension n"
        } else {
            "dimension d"
        }
        .into(),
        y_label: "queries used".into(),
        x_scale: Scale::Linear,
        y_scale: Scale::Log10,
        series,
        curves: bound_curves(&classes),
        width: WIDTH,
        height: HEIGHT,
    };
    pngs.push(chart::draw(&spec, &dir.join("queries-vs-dim"))?.png);

    // (b) queries against log2(R/rho) (or log2(LR/eps)) at fixed d; a pure integer
    // class has no accuracy, so no such chart.
    let d = grid.chart_dim;
    let log_ratio = |rho: f64| ratio_of(rho).log2();
    let series = table
        .methods
        .iter()
        .map(|m| Series {
            label: m.clone(),
            points: grid
                .accuracies
                .iter()
                .filter_map(|&rho| {
                    let cell = table.cells.get(&(m.clone(), d, rho.to_bits()))?;
                    Some(summarize(log_ratio(rho), cell))
                })
                .collect(),
        })
        .filter(|s| !s.points.is_empty())
        .collect();
    let classes: Vec<(f64, Class)> = grid
        .accuracies
        .iter()
        .filter_map(|&rho| Some((log_ratio(rho), grid.class_at(d, rho).ok()?)))
        .collect();
    let spec = ChartSpec {
        title: match lattice {
            Some((_, _, cont)) => format!("Queries used against accuracy, n = {d}, d = {cont}"),
            None => format!("Queries used against accuracy, d = {d}"),
        },
        subtitle: Some(subtitle.clone()),
        x_label: if first_order {
            "log2(LR/eps)"
        } else {
            "log2(R/rho)"
        }
        .into(),
        y_label: "queries used".into(),
        x_scale: Scale::Linear,
        y_scale: Scale::Log10,
        series,
        curves: bound_curves(&classes),
        width: WIDTH,
        height: HEIGHT,
    };
    if !pure_integer {
        pngs.push(chart::draw(&spec, &dir.join("queries-vs-accuracy"))?.png);
    }

    // (c) undecided measure against the query index.
    let class = grid.class_at(d, rho)?;
    let mut series = Vec::new();
    let mut gap_series = Vec::new();
    for m in lineup.methods {
        let any = class.clone();
        if method::supports(m, &any).is_err() {
            continue;
        }
        let spec = GameSpec {
            class: any,
            adversary: lineup.adversary.to_string(),
            method: m.clone(),
            seed: lineup.seeds[0],
            budget,
            transcript: None,
        };
        let mut trace = UndecidedTrace::default();
        let mut memory = MemoryTranscript::default();
        let mut player = method::build(m, &spec.class, spec.seed)?;
        runner::run_with(&spec, player.as_mut(), &mut [&mut trace, &mut memory])?;
        if let Class::FirstOrder(c) = &class {
            gap_series.push(uncertainty_series(m, c, &memory.records)?);
        }
        series.push(Series {
            label: m.clone(),
            points: trace
                .points
                .iter()
                .map(|(i, v)| SeriesPoint {
                    x: *i as f64,
                    min: *v,
                    median: *v,
                    max: *v,
                    censored: false,
                })
                .collect(),
        });
    }
    let spec = ChartSpec {
        title: match lattice {
            Some((_, _, 0)) => format!("Alive lattice points against queries, n = {d}"),
            Some(_) => {
                format!("Undecided mixed-integer measure against queries, n = {d}, {acc} = {rho}")
            }
            None => format!("Undecided volume against queries, d = {d}, {acc} = {rho}"),
        },
        subtitle: Some(format!(
            "{subtitle}; one game per method (seed {}); {}",
            lineup.seeds[0],
            match lattice {
                Some((_, _, 0)) => "the adversary's alive lattice points |S|",
                Some(_) => "log2 of the sum over integer fibres of the alive fibre volume",
                None => "log2 of the adversary's alive box",
            }
        )),
        x_label: "query index".into(),
        y_label: match lattice {
            Some((_, _, 0)) => "alive lattice points |S|",
            Some(_) => "log2 of the mixed-integer measure",
            None => "log2 of the alive volume",
        }
        .into(),
        x_scale: Scale::Linear,
        y_scale: Scale::Linear,
        series,
        curves: Vec::new(),
        width: WIDTH,
        height: HEIGHT,
    };
    pngs.push(chart::draw(&spec, &dir.join("undecided"))?.png);

    // (e) first-order: certified uncertainty against T, log-log.
    if let Class::FirstOrder(c) = &class {
        let t_max = gap_series
            .iter()
            .flat_map(|s| s.points.iter().map(|p| p.x))
            .fold(1.0, f64::max);
        let diameter = c.half_width * (c.dim as f64).sqrt();
        let curve_points: Vec<(f64, f64)> = (0..=40)
            .map(|k| t_max.powf(f64::from(k) / 40.0))
            .map(|t| (t, c.lipschitz * diameter / (t + 1.0).sqrt()))
            .collect();
        let spec = ChartSpec {
            title: format!("Certified uncertainty against queries, d = {d}"),
            subtitle: Some(format!(
                "{subtitle}; eps_cert: an error no method can rule out from the first T answers (docs/theory.md §2.2)"
            )),
            x_label: "queries T".into(),
            y_label: "certified uncertainty eps_cert".into(),
            x_scale: Scale::Log10,
            y_scale: Scale::Log10,
            series: gap_series,
            curves: vec![Curve {
                label: "subgradient, upper L R sqrt(d) / sqrt(T+1) (Nesterov 2004)".into(),
                points: curve_points,
                style: CurveStyle::UpperBound,
            }],
            width: WIDTH,
            height: HEIGHT,
        };
        pngs.push(chart::draw(&spec, &dir.join("uncertainty-vs-queries"))?.png);
    }

    // (d) a two-dimensional game (feasibility).
    let picture_rho = grid.accuracies[0];
    if let (false, Ok(Class::Feasibility(class))) = (first_order, grid.class_at(2, picture_rho)) {
        let any = Class::Feasibility(class.clone());
        if let Some(m) = lineup
            .methods
            .iter()
            .find(|m| method::supports(m, &any).is_ok())
        {
            let spec = GameSpec {
                class: any,
                adversary: lineup.adversary.to_string(),
                method: m.clone(),
                seed: lineup.seeds[0],
                budget: budget.min(200),
                transcript: None,
            };
            let mut memory = MemoryTranscript::default();
            let mut player = method::build(m, &spec.class, spec.seed)?;
            runner::run_with(&spec, player.as_mut(), &mut [&mut memory])?;
            let picture = game_picture(&memory.records, &class, m, lineup.adversary);
            pngs.push(chart::draw_game_2d(&picture, &dir.join("game-2d"))?.png);
        }
    }
    Ok(pngs)
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
