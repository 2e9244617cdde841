//! Tests of how charts read: the legend never covers data (measured on the SVG drawn),
//! each series keeps its look across charts, integer axes get whole ticks, refuted and
//! failed games get their own marks and legend entries, coincident series are named,
//! bound lines of one style differ, and labels wrap instead of being cut.

use plotters::backend::SVGBackend;
use plotters::drawing::IntoDrawingArea;

use super::prepare::prepare_chart;
use super::test_svg::{data_shapes, elements, legend_colors, legend_frame, overlaps};
use super::text::{scale_factor, wrap};
use super::ticks::axis_ticks_for;
use super::*;

fn point(x: f64, median: f64) -> SeriesPoint {
    SeriesPoint {
        x,
        min: median * 0.9,
        median,
        max: median * 1.1,
        censored: false,
    }
}

fn series(label: &str, look: Option<usize>, points: Vec<SeriesPoint>) -> Series {
    Series {
        label: label.into(),
        points,
        look,
        ..Series::default()
    }
}

fn curve(label: &str, style: CurveStyle, points: Vec<(f64, f64)>) -> Curve {
    Curve {
        label: label.into(),
        points,
        style,
        look: None,
    }
}

fn chart(series: Vec<Series>, curves: Vec<Curve>) -> ChartSpec {
    ChartSpec {
        title: "Legend placement".into(),
        x_label: "x".into(),
        y_label: "y".into(),
        series,
        curves,
        width: 640,
        height: 420,
        ..ChartSpec::default()
    }
}

/// Draws `spec` and returns its SVG text.
fn svg_of(spec: &ChartSpec, dir: &std::path::Path, name: &str) -> String {
    let files = draw(spec, &dir.join(name)).expect("drawn");
    std::fs::read_to_string(files.svg).expect("svg")
}

/// Asserts that the legend of `svg` overlaps no data element drawn before it.
fn assert_legend_clear(svg: &str, what: &str) {
    let els = elements(svg);
    let (index, frame) = legend_frame(&els).unwrap_or_else(|| panic!("{what}: no legend"));
    let shapes = data_shapes(&els, index);
    assert!(!shapes.is_empty(), "{what}: no data drawn");
    for shape in &shapes {
        assert!(
            !overlaps(shape, frame),
            "{what}: legend {frame:?} covers {shape:?}"
        );
    }
}

/// A small deterministic generator (an LCG; common practice, no source).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

#[test]
fn legend_never_covers_data_measured_on_the_drawn_svg() {
    let dir = tempfile::tempdir().expect("tempdir");
    // Data everywhere: the legend must go outside the plot.
    let crossing: Vec<Series> = (0..6)
        .map(|k| {
            let pts = (0..=20)
                .map(|i| {
                    let x = f64::from(i);
                    let y = 50.0 + 45.0 * ((x + f64::from(k)) * 0.7).sin();
                    point(x, y)
                })
                .collect();
            series(&format!("method number {k}"), Some(k as usize), pts)
        })
        .collect();
    let full = chart(crossing, vec![]);
    let svg = svg_of(&full, dir.path(), "full");
    assert_legend_clear(&svg, "full");
    let data = prepare_chart(&full);
    let mut buffer = String::new();
    let root = SVGBackend::with_string(&mut buffer, (640, 420)).into_drawing_area();
    let drawn = line::paint_chart(&root, text::Ink::Vector, &full, &data).expect("painted");
    assert!(drawn.outside, "a full plot puts the legend outside");
    let legend = drawn.legend.expect("legend");
    assert!(
        legend[0] >= drawn.plot[2],
        "{legend:?} right of {:?}",
        drawn.plot
    );

    // Data in the lower left only: the legend stays inside, in an empty corner.
    let corner = chart(
        vec![series(
            "low",
            None,
            (1..=5).map(|i| point(f64::from(i), f64::from(i))).collect(),
        )],
        vec![curve(
            "flat guide",
            CurveStyle::Guide,
            vec![(1.0, 1.0), (5.0, 2.0)],
        )],
    );
    let mut corner = corner;
    corner.series[0].points.push(point(20.0, 100.0));
    let svg = svg_of(&corner, dir.path(), "corner");
    assert_legend_clear(&svg, "corner");

    // Random charts: linear and log axes, censored points, flagged games, bands.
    let mut rng = Lcg(7);
    for case in 0..24 {
        let n_series = 1 + (rng.next() * 6.0) as usize;
        let log = case % 2 == 1;
        let all: Vec<Series> = (0..n_series)
            .map(|k| {
                let n = 1 + (rng.next() * 9.0) as usize;
                let pts = (0..n)
                    .map(|i| {
                        let y = 1.0 + rng.next() * 1000.0;
                        SeriesPoint {
                            x: 1.0 + i as f64,
                            min: y * (0.5 + 0.5 * rng.next()),
                            median: y,
                            max: y * (1.0 + rng.next()),
                            censored: rng.next() < 0.15,
                        }
                    })
                    .collect();
                let mut s = series(&format!("s{k} {}", "word ".repeat(k)), Some(k), pts);
                if rng.next() < 0.4 {
                    s.flagged.push(FlaggedGame {
                        x: 1.0 + (rng.next() * 5.0).floor(),
                        y: 1.0 + rng.next() * 900.0,
                        flag: Flag::ALL[(rng.next() * 4.0) as usize % 4],
                    });
                }
                s
            })
            .collect();
        let curves = (0..(rng.next() * 3.0) as usize)
            .map(|k| {
                let style = [CurveStyle::LowerBound, CurveStyle::UpperBound][k % 2];
                let a = 1.0 + rng.next() * 500.0;
                curve(&format!("bound {k}"), style, vec![(1.0, a), (9.0, a * 2.0)])
            })
            .collect();
        let spec = ChartSpec {
            y_scale: if log { Scale::Log10 } else { Scale::Linear },
            ..chart(all, curves)
        };
        let svg = svg_of(&spec, dir.path(), &format!("random{case}"));
        assert_legend_clear(&svg, &format!("random case {case}"));
    }
}

#[test]
fn a_series_keeps_its_look_in_every_chart_of_a_folder() {
    let dir = tempfile::tempdir().expect("tempdir");
    let pts = |k: f64| {
        (1..=4)
            .map(|i| point(f64::from(i), k * f64::from(i)))
            .collect()
    };
    // The scenario lists a, b, c; the second chart lacks b and lists c first.
    let first = chart(
        vec![
            series("a", Some(0), pts(1.0)),
            series("b", Some(1), pts(2.0)),
            series("c", Some(2), pts(3.0)),
        ],
        vec![],
    );
    let second = chart(
        vec![
            series("c", Some(2), pts(5.0)),
            series("a", Some(0), pts(7.0)),
        ],
        vec![],
    );
    let one = legend_colors(&elements(&svg_of(&first, dir.path(), "one")));
    let two = legend_colors(&elements(&svg_of(&second, dir.path(), "two")));
    let color = |list: &[(String, String)], name: &str| {
        list.iter()
            .find(|(l, _)| l == name)
            .map(|(_, c)| c.clone())
            .unwrap_or_else(|| panic!("{name} not in legend {list:?}"))
    };
    let hex = |look: usize| {
        let c = series_look(look).color;
        format!("#{:02X}{:02X}{:02X}", c[0], c[1], c[2])
    };
    for (name, look) in [("a", 0), ("c", 2)] {
        assert_eq!(
            color(&one, name),
            color(&two, name),
            "{name} changed colour"
        );
        assert_eq!(color(&one, name), hex(look));
    }
    assert_eq!(color(&one, "b"), hex(1));
    // The first 64 looks are pairwise distinct (colour and marker together), and the
    // first eight differ in both.
    let looks: Vec<SeriesLook> = (0..64).map(series_look).collect();
    for i in 0..64 {
        for j in 0..i {
            assert_ne!(looks[i], looks[j], "looks {i} and {j}");
            if i < 8 {
                assert_ne!(looks[i].color, looks[j].color);
                assert_ne!(looks[i].marker, looks[j].marker);
            }
        }
    }
    assert!(series_swatch_svg(3).contains("diamond"));
}

#[test]
fn integer_axes_get_whole_ticks_only() {
    for (lo, hi) in [
        (0.8, 5.2),
        (0.5, 1.5),
        (-0.3, 2.4),
        (0.9, 8.1),
        (0.0, 130.0),
    ] {
        let ticks = axis_ticks_for(Scale::Linear, true, lo, hi, 10);
        assert!(!ticks.bold.is_empty(), "{lo}..{hi}");
        for (v, text) in &ticks.bold {
            assert_eq!(v.fract(), 0.0, "{lo}..{hi}: tick {v}");
            assert!(text.parse::<i64>().is_ok(), "{lo}..{hi}: label {text:?}");
        }
        assert!(ticks.light.iter().all(|v| v.fract() == 0.0));
    }
    // Without the flag the same axis gets half steps (what the flag prevents).
    let plain = axis_ticks_for(Scale::Linear, false, 0.8, 5.2, 10);
    assert!(plain.bold.iter().any(|(_, t)| t == "1.5"));
    // Log axes: no tick below 1 on an integer axis.
    let log = axis_ticks_for(Scale::Log10, true, -1.5, 2.2, 10);
    assert!(log.bold.iter().all(|(v, _)| *v >= 0.0));
    assert!(log.bold.iter().any(|(_, t)| t == "100"));

    // A drawn chart over d = 1, 2, 3, 5 shows no fractional tick.
    let dir = tempfile::tempdir().expect("tempdir");
    let dims = [1.0, 2.0, 3.0, 5.0];
    let spec = |integer: bool| ChartSpec {
        x_integer: integer,
        y_scale: Scale::Log10,
        ..chart(
            vec![series(
                "m",
                None,
                dims.iter().map(|&d| point(d, 10.0 * d)).collect(),
            )],
            vec![],
        )
    };
    let texts = |svg: &str| -> Vec<String> {
        elements(svg)
            .into_iter()
            .filter(|e| e.tag == "text")
            .map(|e| e.text)
            .collect()
    };
    let whole = texts(&svg_of(&spec(true), dir.path(), "whole"));
    assert!(!whole.iter().any(|t| t.ends_with(".5") || t.ends_with(".0")));
    assert!(whole.iter().any(|t| t == "4"));
    let fractional = texts(&svg_of(&spec(false), dir.path(), "fractional"));
    assert!(fractional.iter().any(|t| t.contains('.')));
}

#[test]
fn refuted_and_failed_games_get_their_own_marks_and_legend_entries() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut s = series(
        "solver",
        Some(0),
        (1..=4)
            .map(|i| point(f64::from(i), 20.0 * f64::from(i)))
            .collect(),
    );
    s.flagged = Flag::ALL
        .iter()
        .enumerate()
        .map(|(k, &flag)| FlaggedGame {
            x: 1.0 + k as f64,
            y: 3.0,
            flag,
        })
        .collect();
    let spec = ChartSpec {
        y_scale: Scale::Log10,
        ..chart(vec![s.clone()], vec![])
    };
    let files = draw(&spec, &dir.path().join("flags")).expect("drawn");
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    let els = elements(&svg);
    let text: String = els
        .iter()
        .filter(|e| e.tag == "text")
        .map(|e| e.text.clone())
        .collect::<Vec<_>>()
        .join(" ");
    for flag in Flag::ALL {
        assert!(
            text.contains(flag.legend()),
            "legend lacks {:?}",
            flag.legend()
        );
    }
    // The marks: strokes in the series colour at the flag width, one circle (the
    // empty-set sign); and exactly one filled marker per completed point.
    let hex = "#0072B2";
    let width = marker::flag_stroke(scale_factor(640, 420)).to_string();
    let (legend_at, _) = legend_frame(&els).expect("legend");
    let plot = &els[..legend_at];
    let strokes = plot
        .iter()
        .filter(|e| {
            e.tag == "polyline"
                && e.attr("stroke") == Some(hex)
                && e.attr("stroke-width") == Some(width.as_str())
        })
        .count();
    assert_eq!(
        strokes,
        2 + 1 + 2 + 3,
        "cross, slash, slashed square, crossed square"
    );
    let rings = plot
        .iter()
        .filter(|e| {
            e.tag == "circle" && e.attr("stroke") == Some(hex) && e.attr("fill") == Some("none")
        })
        .count();
    assert_eq!(rings, 1, "the empty-set sign");
    let filled = plot
        .iter()
        .filter(|e| e.tag == "circle" && e.attr("fill") == Some(hex))
        .count();
    assert_eq!(
        filled, 4,
        "one filled marker per completed point, none for flags"
    );
    let csv = std::fs::read_to_string(&files.csv).expect("csv");
    for flag in Flag::ALL {
        assert!(
            csv.contains("flagged,solver,") && csv.contains(&format!(",true,{}\n", flag.outcome())),
            "CSV lacks {flag:?}: {csv}"
        );
    }
    assert_eq!(
        Flag::from_outcome("output-refuted"),
        Some(Flag::OutputRefuted)
    );
    assert_eq!(Flag::from_outcome("output-stands"), None);

    // Without flags: no flag legend entry.
    s.flagged.clear();
    let svg = svg_of(&chart(vec![s], vec![]), dir.path(), "plain");
    assert!(!svg.contains("refuted"));
}

#[test]
fn coincident_series_and_series_on_a_line_are_named() {
    let dir = tempfile::tempdir().expect("tempdir");
    let pts: Vec<SeriesPoint> = (1..=4)
        .map(|i| point(f64::from(i), 7.0 * f64::from(i)))
        .collect();
    let spec = chart(
        vec![
            series("first", None, pts.clone()),
            series("second", None, pts.clone()),
            series(
                "other",
                None,
                (1..=4).map(|i| point(f64::from(i), 3.0)).collect(),
            ),
        ],
        vec![curve(
            "the bound",
            CurveStyle::LowerBound,
            (1..=4)
                .map(|i| (f64::from(i), 7.0 * f64::from(i)))
                .collect(),
        )],
    );
    let files = draw(&spec, &dir.path().join("same")).expect("drawn");
    assert!(
        files
            .notes
            .iter()
            .any(|n| n == "first and second coincide at every point (second drawn on top)"),
        "{:?}",
        files.notes
    );
    assert!(files
        .notes
        .iter()
        .any(|n| n == "first and second lie on the line \"the bound\" at every point"));
    assert!(!files.notes.iter().any(|n| n.contains("other")));
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert!(
        svg.contains("hidden under"),
        "the hidden series says so in the legend"
    );
}

#[test]
fn bound_lines_of_one_style_get_distinct_patterns() {
    let line = |label: &str, look| Curve {
        look,
        ..curve(label, CurveStyle::UpperBound, vec![(1.0, 1.0), (2.0, 2.0)])
    };
    let spec = chart(
        vec![],
        vec![line("u0", None), line("u1", None), line("u2", None)],
    );
    let data = prepare_chart(&spec);
    let variants: Vec<usize> = data.curves.iter().map(|c| c.variant).collect();
    assert_eq!(variants, [0, 1, 2]);
    let looks: Vec<Vec<f64>> = data
        .curves
        .iter()
        .map(|c| style::curve_look(c.style, c.variant, 1.0).2)
        .collect();
    assert!(looks[0] != looks[1] && looks[1] != looks[2] && looks[0] != looks[2]);
    // A fixed look wins over the position.
    let fixed = chart(vec![], vec![line("only", Some(3))]);
    assert_eq!(prepare_chart(&fixed).curves[0].variant, 3);
    // The lower and the upper styles never share a look: solid thick versus dashes.
    assert!(style::curve_look(CurveStyle::LowerBound, 0, 1.0)
        .2
        .is_empty());
}

#[test]
fn long_labels_wrap_and_are_never_cut() {
    let dir = tempfile::tempdir().expect("tempdir");
    let label = "a very long bound label that says exactly what the line assumes and who \
                 published it, with every word kept (Somebody & Somebody Else 2024)";
    let spec = chart(
        vec![series("m", None, vec![point(1.0, 1.0), point(2.0, 4.0)])],
        vec![curve(
            label,
            CurveStyle::UpperBound,
            vec![(1.0, 2.0), (2.0, 3.0)],
        )],
    );
    let svg = svg_of(&spec, dir.path(), "long");
    assert!(!svg.contains('…'));
    let text: String = elements(&svg)
        .into_iter()
        .filter(|e| e.tag == "text")
        .map(|e| e.text)
        .collect::<Vec<_>>()
        .join(" ");
    assert!(text.contains(label), "label cut or changed: {text}");
    // A word wider than the width is broken, never dropped.
    let lines = wrap("unbreakable_word_longer_than_the_width", 15.0, 60);
    assert!(lines.len() > 1);
    assert_eq!(lines.concat(), "unbreakable_word_longer_than_the_width");
}
