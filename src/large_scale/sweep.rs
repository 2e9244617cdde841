//! Sweeps of the `large-scale` scenario family: every game of the grid played in
//! parallel, written to `<root>/<name>/games.csv` in canonical order, and the
//! gap-against-T chart (log-log) with the lower-bound curves and each method's
//! upper-bound curve. Demonstrations, not certificates: the `holds` column compares the
//! gap with the lower curve to a relative 1e-12, and only where the curve is claimed
//! (an adversary oracle, which holds for any deterministic method, or a span method on
//! an instance).
//!
//! The games are small (a minute in all for the gallery), so a rerun plays the whole
//! grid again and rewrites the CSV; there is no resume or sharding here.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use rayon::prelude::*;

use crate::bounds::Side;
use crate::chart::{self, ChartSpec, Curve, CurveStyle, Scale, Series, SeriesPoint};
use crate::error::Error;
use crate::large_scale::bounds::gap_bounds;
use crate::large_scale::game::{self, DemoSpec, ORACLES};
use crate::large_scale::scenario::{LargeScaleGame, LargeScaleScenario};
use crate::large_scale::RELATIVE_TOLERANCE;
use crate::method::large_scale::LARGE_SCALE_METHODS;
use crate::sweep::{csv_row, split_csv_line};

/// The columns of a large-scale `games.csv`.
pub const COLUMNS: &[&str] = &[
    "game",
    "scenario",
    "family",
    "kind",
    "oracle",
    "method",
    "seed",
    "dim",
    "queries",
    "gap",
    "lower_bound",
    "upper_bound",
    "gap_over_lower",
    "claimed",
    "holds",
    "wall_time_ms",
];

/// What a sweep did.
#[derive(Clone, Debug, PartialEq)]
pub struct LargeScaleSummary {
    /// Games played.
    pub games: u64,
    /// Games where a claimed lower curve did not hold (should be zero).
    pub broken: u64,
    /// The CSV written.
    pub csv: PathBuf,
}

fn io<'a>(action: &'static str, path: &'a Path) -> impl Fn(std::io::Error) -> Error + 'a {
    move |source| Error::Io {
        action,
        path: path.to_path_buf(),
        source,
    }
}

/// Plays every game of `scenario` with `jobs` workers into `<root>/<name>/`.
pub fn run(
    scenario: &LargeScaleScenario,
    root: &Path,
    jobs: usize,
) -> Result<LargeScaleSummary, Error> {
    let dir = root.join(&scenario.name);
    std::fs::create_dir_all(&dir).map_err(io("cannot create results folder", &dir))?;
    let toml_path = dir.join("scenario.toml");
    std::fs::write(&toml_path, &scenario.source_text).map_err(io("cannot write", &toml_path))?;
    let games = scenario.games();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(jobs.max(1))
        .build()
        .map_err(|e| Error::Io {
            action: "cannot start worker threads for",
            path: dir.clone(),
            source: std::io::Error::other(e),
        })?;
    let transcripts = dir.join("transcripts");
    if scenario.transcripts {
        std::fs::create_dir_all(&transcripts)
            .map_err(io("cannot create results folder", &transcripts))?;
    }
    let transcripts = scenario.transcripts.then_some(transcripts.as_path());
    let rows: Vec<Result<(String, bool), Error>> = pool.install(|| {
        games
            .par_iter()
            .map(|g| play_row(scenario, g, transcripts))
            .collect()
    });
    let mut text = format!("{}\n", COLUMNS.join(","));
    let mut broken = 0;
    for row in rows {
        let (row, ok) = row?;
        if !ok {
            broken += 1;
        }
        text.push_str(&row);
    }
    let csv = dir.join("games.csv");
    std::fs::write(&csv, text).map_err(io("cannot write", &csv))?;
    Ok(LargeScaleSummary {
        games: games.len() as u64,
        broken,
        csv,
    })
}

fn play_row(
    scenario: &LargeScaleScenario,
    g: &LargeScaleGame,
    transcripts: Option<&Path>,
) -> Result<(String, bool), Error> {
    let spec = DemoSpec {
        class: scenario.class,
        oracle: scenario.oracle.clone(),
        method: g.method.clone(),
        queries: g.queries,
        seed: g.seed,
        record: transcripts.is_some(),
    };
    let report = game::run(&spec)?;
    if let (Some(dir), Some(records)) = (transcripts, report.records(&spec)) {
        crate::large_scale::witness::write_transcript(
            &dir.join(format!("game-{}.jsonl", g.index)),
            &records,
        )?;
    }
    let bounds = gap_bounds(&scenario.class, g.queries);
    let upper = bounds
        .iter()
        .find(|b| b.side == Side::Upper && b.method == Some(g.method.as_str()))
        .and_then(|b| b.gap);
    let adversary = ORACLES
        .iter()
        .any(|o| o.name == scenario.oracle && o.adversary);
    let span = LARGE_SCALE_METHODS
        .iter()
        .any(|m| m.name == g.method && m.span);
    let claimed = adversary || span;
    let gap = report.gap.unwrap_or(f64::NAN);
    let holds = gap >= report.bound * (1.0 - RELATIVE_TOLERANCE);
    let fields = [
        g.index.to_string(),
        scenario.name.clone(),
        "large-scale".into(),
        scenario.class.kind().into(),
        scenario.oracle.clone(),
        g.method.clone(),
        g.seed.to_string(),
        scenario.class.dim().to_string(),
        g.queries.to_string(),
        format!("{gap:e}"),
        format!("{:e}", report.bound),
        upper.map_or(String::new(), |u| format!("{u:e}")),
        format!("{:.6}", gap / report.bound),
        if claimed { "yes" } else { "no" }.into(),
        if holds { "yes" } else { "no" }.into(),
        format!("{:.3}", report.wall_time.as_secs_f64() * 1e3),
    ];
    Ok((csv_row(&fields), holds || !claimed))
}

/// Draws the gap-against-T chart of a large-scale results folder; returns the PNG path.
pub fn draw_all(dir: &Path) -> Result<Vec<PathBuf>, Error> {
    let scenario = LargeScaleScenario::from_file(&dir.join("scenario.toml"))?;
    let csv = dir.join("games.csv");
    let text = std::fs::read_to_string(&csv).map_err(io("cannot read", &csv))?;
    let mut lines = text.lines();
    let header = lines.next().unwrap_or_default();
    if header != COLUMNS.join(",") {
        return Err(Error::Results {
            path: csv,
            reason: "line 1: not the large-scale games.csv header of this version".into(),
        });
    }
    let column = |name: &str| {
        COLUMNS
            .iter()
            .position(|c| *c == name)
            .expect("known column")
    };
    let (c_method, c_queries, c_gap) = (column("method"), column("queries"), column("gap"));
    let mut cells: BTreeMap<(String, u64), Vec<f64>> = BTreeMap::new();
    for (i, line) in lines.enumerate() {
        let f = split_csv_line(line);
        let parsed = (f.len() == COLUMNS.len())
            .then(|| {
                Some((
                    f[c_queries].parse::<u64>().ok()?,
                    f[c_gap].parse::<f64>().ok()?,
                ))
            })
            .flatten();
        let Some((t, gap)) = parsed else {
            return Err(Error::Results {
                path: csv.clone(),
                reason: format!("line {}: malformed row", i + 2),
            });
        };
        cells.entry((f[c_method].clone(), t)).or_default().push(gap);
    }
    let series: Vec<Series> = scenario
        .methods
        .iter()
        .map(|m| Series {
            label: m.clone(),
            points: scenario
                .queries
                .iter()
                .filter_map(|&t| {
                    let mut v = cells.get(&(m.clone(), t))?.clone();
                    v.retain(|g| g.is_finite() && *g > 0.0);
                    if v.is_empty() {
                        return None;
                    }
                    v.sort_by(f64::total_cmp);
                    Some(SeriesPoint {
                        x: t as f64,
                        min: v[0],
                        median: v[v.len() / 2],
                        max: v[v.len() - 1],
                        censored: false,
                    })
                })
                .collect(),
        })
        .filter(|s| !s.points.is_empty())
        .collect();
    let (t_min, t_max) = (
        *scenario.queries.first().expect("non-empty") as f64,
        *scenario.queries.last().expect("non-empty") as f64,
    );
    let grid: Vec<u64> = {
        let mut g: Vec<u64> = (0..=40)
            .map(|k| (t_min * (t_max / t_min).powf(f64::from(k) / 40.0)).round() as u64)
            .chain(scenario.queries.iter().copied())
            .collect();
        g.sort_unstable();
        g.dedup();
        g
    };
    let mut curves: Vec<Curve> = Vec::new();
    let labels = gap_bounds(&scenario.class, 1);
    for (i, bound) in labels.iter().enumerate() {
        let relevant = match bound.method {
            None => true,
            Some(m) => scenario.methods.iter().any(|s| s == m),
        };
        if !relevant {
            continue;
        }
        curves.push(Curve {
            label: bound.label.to_string(),
            points: grid
                .iter()
                .filter_map(|&t| Some((t as f64, gap_bounds(&scenario.class, t)[i].gap?)))
                .collect(),
            style: match bound.side {
                Side::Lower => CurveStyle::LowerBound,
                Side::Upper => CurveStyle::UpperBound,
            },
        });
    }
    let spec = ChartSpec {
        title: format!(
            "Gap against queries T, {} class, {}",
            scenario.class.kind(),
            scenario.oracle
        ),
        subtitle: Some(format!(
            "{}: d = {}, R = {}; demonstration, not a certificate (irrational constants, \
             compared to 1e-12 relative; docs/theory.md §3)",
            scenario.name,
            scenario.class.dim(),
            scenario.class.radius()
        )),
        x_label: "queries T".into(),
        y_label: "gap f - f* (median over seeds, min-max band)".into(),
        x_scale: Scale::Log10,
        y_scale: Scale::Log10,
        series,
        curves,
        ..ChartSpec::default()
    };
    Ok(vec![chart::draw(&spec, &dir.join("gap-vs-queries"))?.png])
}
