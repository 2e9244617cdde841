//! The report's opening sections: the scenario, the class and its parameters, the
//! adversary and what it binds, the methods (with the look they have in every chart),
//! and the bound lines with their status and sources.

use crate::adversary::Scope;
use crate::bounds::large_scale::gap_bounds;
use crate::bounds::{self, Side, Status};
use crate::class::{Class, LargeScaleClass, LipschitzNorm, Promise};
use crate::family::boxes::{BoxGrid, BoxKind};
use crate::family::large_scale::LargeScaleGrid;
use crate::scenario::Scenario;

use super::document::{Block, Cell, Section, Table};
use super::games::number;

/// The status word of a bound line: a theorem (published, or proved in the theory
/// document), our construction certified run by run, or a guide (order only).
pub fn status_word(status: Status) -> &'static str {
    match status {
        Status::Proven => "theorem",
        Status::Construction => "ours-certified",
        Status::Guide => "guide",
    }
}

fn side_word(side: Side) -> &'static str {
    match side {
        Side::Lower => "lower",
        Side::Upper => "upper",
    }
}

fn list(values: &[String]) -> String {
    values.join(", ")
}

/// "Scenario" and "Class" sections.
pub fn scenario_sections(scenario: &Scenario, games: usize, grid_games: u64) -> Vec<Section> {
    let mut facts = vec![
        ("name".to_string(), scenario.name.clone()),
        ("description".to_string(), scenario.description.clone()),
        (
            "family".to_string(),
            scenario.grid.family().name().to_string(),
        ),
        (
            "evidence".to_string(),
            match scenario.grid.family().evidence() {
                crate::family::Evidence::Certificate => {
                    "certificates, checked exactly by the verifier".into()
                }
                crate::family::Evidence::Demonstration => {
                    "published-theorem demonstrations, judged to a relative 1e-12; never \
                     certificates (docs/theory.md §3)"
                        .into()
                }
            },
        ),
        (
            "seeds".to_string(),
            list(
                &scenario
                    .seeds
                    .iter()
                    .map(u64::to_string)
                    .collect::<Vec<_>>(),
            ),
        ),
        (
            "games".to_string(),
            format!("{games} of the grid's {grid_games} in games.csv"),
        ),
    ];
    if let Some(b) = scenario.budget {
        facts.push(("budget".into(), format!("{b} queries per game")));
    }
    facts.push((
        "transcripts".into(),
        if scenario.transcripts {
            "written (transcripts/game-N.jsonl)".into()
        } else {
            "not written".into()
        },
    ));
    vec![
        Section {
            heading: "Scenario".into(),
            id: "scenario".into(),
            blocks: vec![Block::Facts(facts)],
        },
        Section {
            heading: "Class".into(),
            id: "class".into(),
            blocks: vec![Block::Facts(class_facts(scenario))],
        },
    ]
}

fn class_facts(scenario: &Scenario) -> Vec<(String, String)> {
    let mut out = Vec::new();
    let mut put = |k: &str, v: String| out.push((k.to_string(), v));
    if let Some(g) = scenario.grid_as::<BoxGrid>() {
        let dims = g.dims.iter().map(usize::to_string).collect::<Vec<_>>();
        let accuracies = g.accuracies.iter().map(|a| number(*a)).collect::<Vec<_>>();
        match &g.kind {
            BoxKind::Feasibility { promise } => {
                put(
                    "class",
                    "separation-oracle feasibility over X = [-R, R]^d with strict cuts; K \
                     empty or containing a Euclidean ball of radius rho (docs/theory.md §1)"
                        .into(),
                );
                put("d", list(&dims));
                put("R", number(g.half_width));
                put("rho", list(&accuracies));
                put(
                    "promise",
                    match promise {
                        Promise::MayBeEmpty => "K may be empty".into(),
                        Promise::Nonempty => "K is promised nonempty".into(),
                    },
                );
            }
            BoxKind::FirstOrder { lipschitz, norm } => {
                put(
                    "class",
                    "convex L-Lipschitz minimisation over X = [-R, R]^d to additive accuracy \
                     eps, value-and-subgradient oracle in exact numbers (docs/theory.md §2)"
                        .into(),
                );
                put("d", list(&dims));
                put("R", number(g.half_width));
                put("eps", list(&accuracies));
                put("L", number(*lipschitz));
                put(
                    "norm",
                    match norm {
                        LipschitzNorm::L1 => "l1 (subgradients bounded in l_inf)",
                        LipschitzNorm::L2 => "l2",
                        LipschitzNorm::Linf => "l_inf (subgradients bounded in l1)",
                    }
                    .into(),
                );
            }
            BoxKind::Lattice {
                int_lower,
                int_upper,
                cont_dim,
            } => {
                put(
                    "class",
                    "integer (and mixed-integer) feasibility over {lo..hi}^n x [-R, R]^d with \
                     strict cuts (docs/theory.md §4)"
                        .into(),
                );
                put("n", list(&dims));
                put("integer box", format!("{{{int_lower}..{int_upper}}}"));
                put("continuous d", cont_dim.to_string());
                if *cont_dim > 0 {
                    put("R", number(g.half_width));
                    put("rho", list(&accuracies));
                }
            }
        }
        put(
            "charts",
            format!(
                "queries against the dimension at {} = {}; against the accuracy at dimension {}",
                g.accuracy_name(),
                number(g.chart_accuracy),
                g.chart_dim
            ),
        );
    } else if let Some(g) = scenario.grid_as::<LargeScaleGrid>() {
        put(
            "class",
            format!(
                "large-scale {} first-order class, x_0 = 0, ||x_0 - x*||_2 <= R, l2 norm \
                 (docs/theory.md §3)",
                g.function.kind()
            ),
        );
        put("d", g.function.dim().to_string());
        put("R", number(g.function.radius()));
        match g.function {
            LargeScaleClass::Nonsmooth { lipschitz, .. } => put("M", number(lipschitz)),
            LargeScaleClass::Smooth { smoothness, .. } => put("beta", number(smoothness)),
            LargeScaleClass::StronglyConvex {
                smoothness,
                strong_convexity,
                ..
            } => {
                put("beta", number(smoothness));
                put("mu", number(strong_convexity));
            }
        }
        put(
            "horizons T",
            list(&g.horizons.iter().map(u64::to_string).collect::<Vec<_>>()),
        );
    }
    out
}

/// "Adversary and methods" section.
pub fn players_section(scenario: &Scenario) -> Section {
    let mut blocks = Vec::new();
    if let Some(info) = crate::adversary::info(&scenario.adversary) {
        blocks.push(Block::Facts(vec![
            ("adversary".into(), info.name.into()),
            ("what it does and proves".into(), info.description.into()),
            (
                "binds".into(),
                match info.scope {
                    Scope::EveryMethod => "every method (it answers adaptively)".into(),
                    Scope::SpanMethods => {
                        "span methods only (a fixed function; docs/theory.md §3)".into()
                    }
                },
            ),
        ]));
    }
    let rows = scenario
        .methods
        .iter()
        .enumerate()
        .map(|(look, m)| {
            let (what, seeds) = match (scenario.external_method(m), crate::method::info(m)) {
                (Some(e), _) => (
                    format!("external program: {}", e.command.join(" ")),
                    e.deterministic,
                ),
                (None, Some(i)) => (i.description.to_string(), i.deterministic),
                (None, None) => ("unknown method".to_string(), true),
            };
            vec![
                Cell {
                    text: m.clone(),
                    look: Some(look),
                },
                Cell::text(what),
                Cell::text(if seeds {
                    "deterministic: first seed only"
                } else {
                    "seeded: every seed"
                }),
            ]
        })
        .collect();
    blocks.push(Block::Table(Table {
        caption: "Methods, each with the colour and marker it has in every chart".into(),
        id: "methods".into(),
        header: vec!["method".into(), "what it is".into(), "seeds".into()],
        rows,
    }));
    Section {
        heading: "Adversary and methods".into(),
        id: "players".into(),
        blocks,
    }
}

/// "Bound lines" section: every line of the class with its status and source, with its
/// number at the chart class (box families) or at the largest horizon (large-scale).
pub fn bounds_section(scenario: &Scenario) -> Section {
    let header = vec![
        "line".to_string(),
        "side".into(),
        "status".into(),
        "formula".into(),
        "value".into(),
        "source".into(),
    ];
    let mut rows = Vec::new();
    let mut caption = String::new();
    if let Some(g) = scenario.grid_as::<BoxGrid>() {
        let at = g.class_at(g.chart_dim, g.chart_accuracy);
        let lines = match &at {
            Ok(Class::Feasibility(c)) => bounds::feasibility_bounds(c),
            Ok(Class::FirstOrder(c)) => bounds::first_order_bounds(c),
            Ok(Class::Lattice(c)) => bounds::lattice_bounds(c),
            _ => Vec::new(),
        };
        caption = format!(
            "Bound lines; values at dimension {}{} (every row of the tables below carries \
             its own)",
            g.chart_dim,
            if g.chart_accuracy.is_nan() {
                String::new()
            } else {
                format!(", {} = {}", g.accuracy_name(), number(g.chart_accuracy))
            }
        );
        for b in lines {
            rows.push(vec![
                Cell::text(b.label),
                Cell::text(side_word(b.side)),
                Cell::text(status_word(b.status)),
                Cell::text(b.formula),
                Cell::text(
                    b.queries
                        .map_or("no number".into(), |q| format!("{q} queries")),
                ),
                Cell::text(b.source),
            ]);
        }
    } else if let Some(g) = scenario.grid_as::<LargeScaleGrid>() {
        let t = *g.horizons.last().unwrap_or(&1);
        caption = format!("Gap curves; values at T = {t}");
        for b in gap_bounds(&g.function, t) {
            rows.push(vec![
                Cell::text(b.label),
                Cell::text(side_word(b.side)),
                Cell::text(status_word(b.status)),
                Cell::text(b.formula),
                Cell::text(b.gap.map_or("no number".into(), number)),
                Cell::text(b.source),
            ]);
        }
    }
    Section {
        heading: "Bound lines".into(),
        id: "bounds".into(),
        blocks: vec![
            Block::Paragraph(
                "Status: theorem (a published theorem, or proved in docs/theory.md, holding \
                 for every method the line names), ours-certified (our construction: forced in \
                 every run the verifier certified, with no general proof), guide (an order of \
                 growth whose constant is not verified; drawn nowhere)."
                    .into(),
            ),
            Block::Table(Table {
                caption,
                id: "bound-lines".into(),
                header,
                rows,
            }),
        ],
    }
}
