//! The report of a sweep's results folder: `report.html` (one self-contained page:
//! styles inside, charts inlined as SVG, no script, nothing fetched) and its Markdown
//! twin `report.md`, both written into the folder.
//!
//! Sections, in order: the scenario (name, description, family, evidence, seeds, budget,
//! how many games of the grid `games.csv` holds); the class and its parameters; the
//! charts; the adversary (what it does and proves, which methods it binds) and the
//! methods, each with the colour and marker it has in every chart; the bound lines with
//! their status (theorem, ours-certified, guide) and sources; the result tables, one per
//! accuracy for the certificate families (queries used and certified lower bound per
//! method and dimension: median, min and max over seeds, censored games counted; rules in
//! [`tables::RULES`]) and one per horizon for the large-scale family (gaps against the
//! lower curve; [`tables::GAP_RULES`]); every refuted output, failed game and rejected
//! certificate with its game number and transcript path (when transcripts were written);
//! and how to reproduce the folder (the commands and the tool version).
//!
//! Every number in the tables is computed from `games.csv` (the tests recompute them);
//! the charts are the SVG files of the folder, drawn first when none exists.

pub mod document;
pub mod facts;
pub mod games;
pub mod html;
pub mod markdown;
pub mod summary;
pub mod tables;

use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::family::boxes::BoxGrid;
use crate::family::large_scale::LargeScaleGrid;
use crate::scenario::Scenario;

use document::{Block, Chart, Document, Section};
use games::Games;

/// The chart files a report shows first, in this order; any other SVG of the folder
/// follows in name order.
pub const CHART_ORDER: &[&str] = &[
    "queries-vs-dim",
    "queries-vs-accuracy",
    "gap-vs-queries",
    "uncertainty-vs-queries",
    "undecided",
    "game-2d",
];

/// What the report says about how the folder was made.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ReportOptions {
    /// The scenario file the sweep played (default: the folder's `scenario.toml` copy).
    pub scenario_path: Option<PathBuf>,
    /// The `--out` root the sweep wrote to (default: the folder's parent).
    pub results_root: Option<PathBuf>,
}

/// The files a report wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct ReportFiles {
    /// `report.html`.
    pub html: PathBuf,
    /// `report.md`.
    pub markdown: PathBuf,
}

/// Writes `report.html` and `report.md` into the results folder `dir` (drawing its
/// charts first when the folder has none). `sweep` calls this after its charts.
///
/// # Errors
///
/// [`Error::Io`] when a file cannot be read or written, [`Error::Scenario`] when the
/// folder's `scenario.toml` is not a valid scenario, [`Error::Results`] when `games.csv`
/// is not this family's (wrong header, malformed row).
pub fn write(dir: &Path, options: &ReportOptions) -> Result<ReportFiles, Error> {
    let doc = build(dir, options)?;
    let files = ReportFiles {
        html: dir.join("report.html"),
        markdown: dir.join("report.md"),
    };
    for (path, text) in [
        (&files.html, html::render(&doc)),
        (&files.markdown, markdown::render(&doc)),
    ] {
        std::fs::write(path, text).map_err(|source| Error::Io {
            action: "cannot write",
            path: path.clone(),
            source,
        })?;
    }
    Ok(files)
}

/// The report of the results folder `dir`, as a document.
pub fn build(dir: &Path, options: &ReportOptions) -> Result<Document, Error> {
    let scenario = Scenario::from_file(&dir.join("scenario.toml"))?;
    let games = Games::read(&dir.join("games.csv"), scenario.grid.columns())?;
    let mut charts = read_charts(dir)?;
    if charts.is_empty() {
        crate::gallery::draw_all(dir)?;
        charts = read_charts(dir)?;
    }
    let mut sections = facts::scenario_sections(&scenario, games.rows.len(), scenario.game_count());
    let mut chart_blocks = vec![Block::Paragraph(
        "Each method has the same colour and marker in every chart (its place in the \
         scenario's method list); each bound line has its own line style; under each plot, \
         what its lines assume."
            .into(),
    )];
    chart_blocks.push(Block::Charts(charts));
    sections.insert(
        2,
        Section {
            heading: "Charts".into(),
            id: "charts".into(),
            blocks: chart_blocks,
        },
    );
    sections.push(facts::players_section(&scenario));
    sections.push(facts::bounds_section(&scenario));
    let large_scale = if let Some(grid) = scenario.grid_as::<BoxGrid>() {
        sections.push(tables::box_tables(&scenario, grid, &games)?);
        false
    } else if let Some(grid) = scenario.grid_as::<LargeScaleGrid>() {
        sections.push(tables::gap_tables(&scenario, grid, &games)?);
        true
    } else {
        false
    };
    sections.push(tables::exceptions_section(dir, &games, large_scale));
    sections.push(reproduce_section(dir, &scenario, options));
    Ok(Document {
        title: format!("naysayer report: {}", scenario.name),
        sections,
    })
}

/// The SVG charts of `dir`: first those of [`CHART_ORDER`], then the rest by name.
fn read_charts(dir: &Path) -> Result<Vec<Chart>, Error> {
    let listing = std::fs::read_dir(dir).map_err(|source| Error::Io {
        action: "cannot read folder",
        path: dir.to_path_buf(),
        source,
    })?;
    let mut names: Vec<String> = listing
        .filter_map(|e| e.ok())
        .filter_map(|e| {
            let name = e.file_name().to_string_lossy().into_owned();
            name.strip_suffix(".svg").map(str::to_string)
        })
        .collect();
    names.sort_by_key(|n| {
        (
            CHART_ORDER
                .iter()
                .position(|o| o == n)
                .unwrap_or(usize::MAX),
            n.clone(),
        )
    });
    names
        .into_iter()
        .map(|name| {
            let path = dir.join(format!("{name}.svg"));
            let svg = std::fs::read_to_string(&path).map_err(|source| Error::Io {
                action: "cannot read",
                path,
                source,
            })?;
            Ok(Chart { name, svg })
        })
        .collect()
}

fn reproduce_section(dir: &Path, scenario: &Scenario, options: &ReportOptions) -> Section {
    let scenario_file = options
        .scenario_path
        .clone()
        .unwrap_or_else(|| dir.join("scenario.toml"));
    let root = options
        .results_root
        .clone()
        .or_else(|| dir.parent().map(Path::to_path_buf))
        .unwrap_or_else(|| PathBuf::from("results"));
    let quote = |p: &Path| {
        let text = p.display().to_string();
        if text.contains([' ', '\'', '"']) {
            format!("'{}'", text.replace('\'', "'\\''"))
        } else {
            text
        }
    };
    let mut commands = Vec::new();
    if options.scenario_path.is_some() {
        commands.push("# the command that wrote this folder".to_string());
        commands.push(format!(
            "naysayer sweep {} --out {}",
            quote(&scenario_file),
            quote(&root)
        ));
    }
    commands.push(format!(
        "# play every game again into a fresh root, then compare reproduced/{}/games.csv \
         with this folder's (wall_time_ms aside)",
        scenario.name
    ));
    commands.push(format!(
        "naysayer sweep {} --out reproduced",
        quote(&scenario_file)
    ));
    commands.push("# write this report again".into());
    commands.push(format!("naysayer report {}", quote(dir)));
    Section {
        heading: "How to reproduce".into(),
        id: "reproduce".into(),
        blocks: vec![
            Block::Facts(vec![
                (
                    "tool".into(),
                    format!("naysayer {}", env!("CARGO_PKG_VERSION")),
                ),
                (
                    "scenario file".into(),
                    format!(
                        "{} (the folder holds a copy as scenario.toml)",
                        scenario_file.display()
                    ),
                ),
            ]),
            Block::Commands(commands),
            Block::Paragraph(
                "Every game is deterministic given its seed: games.csv comes out the same for \
                 any --jobs and any --shard split (only wall_time_ms differs). Rerun into the \
                 same folder, the sweep resumes and plays only missing games; into an empty \
                 --out root it plays everything again."
                    .into(),
            ),
        ],
    }
}
