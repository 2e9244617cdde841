//! End-to-end tests of the charts module: files written, texts, notes, ticks, clipping.

use std::path::Path;

use super::csv::{csv_field, csv_num};
use super::game::{clip_line, visible_edges};
use super::style::dash_polyline;
use super::text::FAMILY;
use super::ticks::{axis_ticks, padded_range};
use super::*;

/// Decodes a PNG into (width, height, RGB pixels).
fn decode_png(path: &Path) -> (u32, u32, Vec<[u8; 3]>) {
    let file = std::fs::File::open(path).expect("png exists");
    let mut reader = png::Decoder::new(file).read_info().expect("png header");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("png frame");
    let channels = info.color_type.samples();
    assert!(
        channels >= 3,
        "unexpected colour type {:?}",
        info.color_type
    );
    assert_eq!(info.bit_depth, png::BitDepth::Eight);
    let mut pixels = Vec::with_capacity((info.width * info.height) as usize);
    for row in buf[..info.buffer_size()].chunks(info.line_size) {
        for px in row.chunks(channels) {
            pixels.push([px[0], px[1], px[2]]);
        }
    }
    (info.width, info.height, pixels)
}

/// The PNG has the requested size, several colours and ink in its middle.
fn check_png(path: &Path, width: u32, height: u32) {
    let (w, h, pixels) = decode_png(path);
    assert_eq!((w, h), (width, height));
    let distinct: std::collections::HashSet<[u8; 3]> = pixels.iter().copied().collect();
    assert!(distinct.len() > 2, "only {} colours", distinct.len());
    let inked = (h / 4..3 * h / 4)
        .flat_map(|y| (w / 4..3 * w / 4).map(move |x| (x, y)))
        .filter(|&(x, y)| pixels[(y * w + x) as usize] != [255, 255, 255])
        .count();
    assert!(inked > 100, "plot area nearly blank: {inked} inked pixels");
}

/// The contents of the SVG's `<text>` elements, trimmed.
fn svg_texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|t| {
            let body = t.split_once('>')?.1;
            Some(body.split_once("</text>")?.0.trim().to_string())
        })
        .collect()
}

fn point(x: f64, median: f64) -> SeriesPoint {
    SeriesPoint {
        x,
        min: median * 0.8,
        median,
        max: median * 1.25,
        censored: false,
    }
}

fn spec(series: Vec<Series>, curves: Vec<Curve>) -> ChartSpec {
    ChartSpec {
        title: "Queries against the bound".into(),
        subtitle: Some("median over seeds".into()),
        x_label: "dimension d".into(),
        y_label: "oracle queries".into(),
        series,
        curves,
        width: 640,
        height: 420,
        ..ChartSpec::default()
    }
}

fn two_series() -> Vec<Series> {
    vec![
        Series {
            label: "bisection".into(),
            points: (1..=6)
                .map(|d| point(f64::from(d), 10.0 * f64::from(d)))
                .collect(),
            ..Series::default()
        },
        Series {
            label: "ellipsoid".into(),
            points: (1..=6)
                .map(|d| point(f64::from(d), 5.0 * f64::from(d * d)))
                .collect(),
            ..Series::default()
        },
    ]
}

fn bound() -> Curve {
    Curve {
        label: "lower bound".into(),
        points: (1..=6)
            .map(|d| (f64::from(d), 8.0 * f64::from(d)))
            .collect(),
        style: CurveStyle::LowerBound,
        look: None,
    }
}

#[test]
fn chart_writes_svg_png_csv_with_texts() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut s = spec(two_series(), vec![bound()]);
    s.curves.push(Curve {
        label: "upper bound".into(),
        points: vec![(1.0, 20.0), (6.0, 400.0)],
        style: CurveStyle::UpperBound,
        look: None,
    });
    s.curves.push(Curve {
        label: "guide".into(),
        points: vec![(1.0, 50.0), (6.0, 50.0)],
        style: CurveStyle::Guide,
        look: None,
    });
    let files = draw(&s, &dir.path().join("sub/chart")).expect("drawn");
    assert!(files.notes.is_empty(), "{:?}", files.notes);
    check_png(&files.png, 640, 420);
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    for text in [
        "Queries against the bound",
        "median over seeds",
        "dimension d",
        "oracle queries",
        "bisection",
        "ellipsoid",
        "lower bound",
        "upper bound",
    ] {
        assert!(svg.contains(text), "SVG lacks {text:?}");
    }
    assert!(svg.contains(FAMILY));
    let texts = svg_texts(&svg);
    assert!(texts.iter().any(|t| t == "dimension d"));
    assert!(texts.iter().any(|t| t == "oracle queries"));
    assert!(!svg.contains("censored (budget"));
    let csv = std::fs::read_to_string(&files.csv).expect("csv");
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("kind,label,x,y,min,median,max,censored,curve_style,plotted,outcome")
    );
    assert_eq!(
        lines.clone().filter(|l| l.starts_with("series,")).count(),
        12
    );
    assert_eq!(lines.filter(|l| l.starts_with("curve,")).count(), 10);
    assert!(csv.contains("series,bisection,1,10,8,10,12.5,false,,true"));
    assert!(csv.contains("curve,lower bound,1,8,,,,,lower_bound,true"));
}

#[test]
fn one_point_and_single_series_draw() {
    let dir = tempfile::tempdir().expect("tempdir");
    let one = Series {
        label: "only".into(),
        points: vec![point(3.0, 7.0)],
        ..Series::default()
    };
    let files = draw(&spec(vec![one], vec![]), &dir.path().join("one")).expect("drawn");
    check_png(&files.png, 640, 420);
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert!(svg.contains("only"));

    let single = spec(two_series()[..1].to_vec(), vec![]);
    let files = draw(&single, &dir.path().join("single")).expect("drawn");
    check_png(&files.png, 640, 420);
}

#[test]
fn equal_values_and_empty_charts_still_draw() {
    let dir = tempfile::tempdir().expect("tempdir");
    let flat = Series {
        label: "flat".into(),
        points: (0..4)
            .map(|i| SeriesPoint {
                x: 2.0,
                min: 5.0,
                median: 5.0,
                max: 5.0,
                censored: i == 3,
            })
            .collect(),
        ..Series::default()
    };
    for (x_scale, y_scale) in [(Scale::Linear, Scale::Linear), (Scale::Log2, Scale::Log10)] {
        let s = ChartSpec {
            x_scale,
            y_scale,
            ..spec(vec![flat.clone()], vec![])
        };
        let files = draw(&s, &dir.path().join("flat")).expect("drawn");
        check_png(&files.png, 640, 420);
    }
    let empty = spec(vec![], vec![]);
    let files = draw(&empty, &dir.path().join("empty")).expect("drawn");
    assert!(files.notes.iter().any(|n| n.contains("nothing to plot")));
    let (w, h, _) = decode_png(&files.png);
    assert_eq!((w, h), (640, 420));
}

#[test]
fn log_axes_drop_zero_and_negative_values_with_a_note() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut series = two_series();
    series[0].points.push(point(7.0, 0.0));
    series[0].points.push(point(8.0, -3.0));
    series[1].points.push(SeriesPoint {
        x: 0.0,
        min: 1.0,
        median: 2.0,
        max: 3.0,
        censored: false,
    });
    series[1].points.push(SeriesPoint {
        x: 7.0,
        min: 0.0,
        median: 2.0,
        max: 3.0,
        censored: false,
    });
    series[1].points.push(point(f64::NAN, 1.0));
    let mut curve = bound();
    curve.points.push((2.0, 0.0));
    let s = ChartSpec {
        x_scale: Scale::Log2,
        y_scale: Scale::Log10,
        ..spec(series, vec![curve])
    };
    let files = draw(&s, &dir.path().join("log")).expect("drawn");
    check_png(&files.png, 640, 420);
    let expected = [
        "1 point with x ≤ 0 dropped from the log x axis",
        "3 points with y ≤ 0 dropped from the log y axis",
        "1 band with min ≤ 0 clipped at the bottom of the log y axis",
        "1 point with non-finite values dropped",
    ];
    assert_eq!(files.notes, expected);
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert!(
        svg.contains("dropped from the log y axis"),
        "note missing in SVG"
    );
    assert!(
        svg.contains("dropped from the log x axis"),
        "note missing in SVG"
    );
    let csv = std::fs::read_to_string(&files.csv).expect("csv");
    assert!(csv.contains("series,bisection,8,-3,-2.4000000000000004,-3,-3.75,false,,false"));
    assert!(csv.contains("series,ellipsoid,NaN,1,0.8,1,1.25,false,,false"));
}

#[test]
fn censored_points_are_hollow_with_one_legend_entry() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut series = two_series();
    for s in &mut series {
        if let Some(last) = s.points.last_mut() {
            last.censored = true;
        }
    }
    let files = draw(&spec(series, vec![bound()]), &dir.path().join("c")).expect("drawn");
    check_png(&files.png, 640, 420);
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert_eq!(svg.matches("censored (budget").count(), 1);
    // Hollow markers: white fill inside the series colour's outline.
    assert!(svg.contains(r##"stroke="#0072B2" stroke-width="2""##));
    assert!(svg.contains(r##"fill="#FFFFFF""##));
    let csv = std::fs::read_to_string(&files.csv).expect("csv");
    assert_eq!(csv.matches(",true,,true,\n").count(), 2);
}

#[test]
fn bad_sizes_and_stems_are_errors() {
    let dir = tempfile::tempdir().expect("tempdir");
    let small = ChartSpec {
        width: 10,
        ..spec(two_series(), vec![])
    };
    let err = draw(&small, &dir.path().join("x")).expect_err("too small");
    assert!(matches!(err, Error::Chart { .. }), "{err}");
    assert!(err.to_string().contains("10x420"));
    let err = draw(&spec(vec![], vec![]), Path::new("")).expect_err("no stem");
    assert!(matches!(err, Error::Chart { .. }), "{err}");
    let blocker = dir.path().join("file");
    std::fs::write(&blocker, "x").expect("write");
    let err = draw(&spec(vec![], vec![]), &blocker.join("chart")).expect_err("not a dir");
    assert!(matches!(err, Error::Io { .. }), "{err}");
}

#[test]
fn extreme_values_never_panic() {
    let dir = tempfile::tempdir().expect("tempdir");
    let extremes = [
        (1e-300, 1e300),
        (-f64::MAX, f64::MAX),
        (1e12, 1e12 + 1e-3),
        (5e-324, 1e-320),
    ];
    for (k, (a, b)) in extremes.into_iter().enumerate() {
        for (x_scale, y_scale) in [(Scale::Linear, Scale::Linear), (Scale::Log10, Scale::Log2)] {
            let series = vec![Series {
                label: "a, \"quoted\" <label> & more ".repeat(4),
                points: vec![
                    SeriesPoint {
                        x: a,
                        min: a,
                        median: a,
                        max: b,
                        censored: true,
                    },
                    SeriesPoint {
                        x: b,
                        min: a,
                        median: b,
                        max: b,
                        censored: false,
                    },
                ],
                ..Series::default()
            }];
            let curves = vec![Curve {
                label: String::new(),
                points: vec![(a, b), (b, a)],
                style: CurveStyle::Guide,
                look: None,
            }];
            let s = ChartSpec {
                title: "t".repeat(300),
                x_scale,
                y_scale,
                width: MIN_WIDTH,
                height: MIN_HEIGHT,
                ..spec(series, curves)
            };
            draw(&s, &dir.path().join(format!("x{k}"))).expect("drawn");
        }
    }
    // A header taller than the image leaves no room for the plot.
    let wordy = ChartSpec {
        title: "many words ".repeat(200),
        width: MIN_WIDTH,
        height: MIN_HEIGHT,
        ..spec(two_series(), vec![bound()])
    };
    draw(&wordy, &dir.path().join("wordy")).expect("drawn");
    let wordy_game = Game2d {
        title: "many words ".repeat(200),
        width: MIN_WIDTH,
        height: MIN_HEIGHT,
        ..halving_game(12)
    };
    draw_game_2d(&wordy_game, &dir.path().join("wordy_game")).expect("drawn");
    let huge = Game2d {
        half_width: 1e300,
        queries: vec![[1e300, -1e300], [0.0, 0.0]],
        cuts: vec![Cut2d {
            normal: [1e-300, 1e300],
            offset: 1.0,
        }],
        boxes: vec![[-1e300, 1e300, -1e300, 1e300], [0.0, 0.0, 0.0, 0.0]],
        width: MIN_WIDTH,
        height: MIN_HEIGHT,
        ..Game2d::default()
    };
    draw_game_2d(&huge, &dir.path().join("huge")).expect("drawn");
}

#[test]
fn csv_fields_are_quoted_when_needed() {
    assert_eq!(csv_field("plain"), "plain");
    assert_eq!(csv_field("a,b"), "\"a,b\"");
    assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
    assert_eq!(csv_num(f64::INFINITY), "inf");
    assert_eq!(csv_num(0.5), "0.5");
}

#[test]
fn ticks_are_round_and_labelled() {
    let t = axis_ticks(Scale::Linear, -0.3, 10.4, 6);
    let labels: Vec<&str> = t.bold.iter().map(|b| b.1.as_str()).collect();
    assert_eq!(labels, ["0", "2", "4", "6", "8", "10"]);
    let t = axis_ticks(Scale::Linear, 0.0, 0.001, 5);
    assert_eq!(t.bold[1].1, "0.0002");
    let t = axis_ticks(Scale::Linear, 0.0, 3.0e7, 4);
    assert_eq!(t.bold[1].1, "1e7");
    let t = axis_ticks(Scale::Log10, 0.5, 4.2, 10);
    let labels: Vec<&str> = t.bold.iter().map(|b| b.1.as_str()).collect();
    assert_eq!(labels, ["10", "100", "1000", "10000"]);
    assert!(!t.light.is_empty());
    let t = axis_ticks(Scale::Log10, -7.5, 9.0, 10);
    assert!(t.bold.iter().all(|b| b.1.starts_with("10")));
    assert!(t.bold.iter().any(|b| b.1 == "10⁻⁶"));
    let t = axis_ticks(Scale::Log2, 0.8, 6.2, 10);
    let labels: Vec<&str> = t.bold.iter().map(|b| b.1.as_str()).collect();
    assert_eq!(labels, ["2", "4", "8", "16", "32", "64"]);
    let t = axis_ticks(Scale::Log2, -30.0, -10.0, 5);
    assert!(t.bold.iter().all(|b| b.1.starts_with("2⁻")));
    // Less than one decade: round numbers of the data.
    let t = axis_ticks(Scale::Log10, 2.0f64.log10(), 7.0f64.log10(), 6);
    assert!(t.bold.len() >= 3);
    assert!(t.bold.iter().any(|b| b.1 == "5"));
}

#[test]
fn degenerate_ranges_are_padded() {
    assert_eq!(padded_range(&[], Scale::Linear), (0.0, 1.0));
    assert_eq!(padded_range(&[0.0], Scale::Linear), (-1.0, 1.0));
    assert_eq!(padded_range(&[10.0, 10.0], Scale::Linear), (9.0, 11.0));
    assert_eq!(padded_range(&[1.0], Scale::Log10), (0.5, 1.5));
    let (lo, hi) = padded_range(&[0.0, 10.0], Scale::Linear);
    assert!((lo + 0.5).abs() < 1e-12 && (hi - 10.5).abs() < 1e-12);
}

#[test]
fn lines_are_clipped_to_the_window() {
    let win = [-1.0, 1.0, -1.0, 1.0];
    let seg = clip_line([1.0, 0.0], 0.5, win).expect("crosses");
    let xs = [seg[0].0, seg[1].0];
    assert!(xs.iter().all(|x| (x - 0.5).abs() < 1e-12));
    let ys = [seg[0].1.min(seg[1].1), seg[0].1.max(seg[1].1)];
    assert_eq!(ys, [-1.0, 1.0]);
    let diag = clip_line([1.0, 1.0], 0.0, win).expect("crosses");
    let len = ((diag[0].0 - diag[1].0).powi(2) + (diag[0].1 - diag[1].1).powi(2)).sqrt();
    assert!((len - 8f64.sqrt()).abs() < 1e-9);
    assert!(clip_line([1.0, 0.0], 2.0, win).is_none());
    assert_eq!(visible_edges([0.0, 2.0, 0.0, 0.5], win).len(), 3);
}

#[test]
fn dashes_alternate_along_the_path() {
    let dashes = dash_polyline(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0)], &[4.0, 2.0]);
    // 20 px of path: dashes at 0-4, 6-10, 12-16, 18-20.
    assert_eq!(dashes.len(), 4);
    let length = |d: &Vec<(f64, f64)>| {
        d.windows(2)
            .map(|w| ((w[1].0 - w[0].0).powi(2) + (w[1].1 - w[0].1).powi(2)).sqrt())
            .sum::<f64>()
    };
    assert!((length(&dashes[1]) - 4.0).abs() < 1e-9);
    assert!((length(&dashes[3]) - 2.0).abs() < 1e-9);
    assert!(dash_polyline(&[(0.0, 0.0)], &[4.0, 2.0]).is_empty());
}

fn halving_game(steps: usize) -> Game2d {
    let mut boxes = vec![[-1.0, 1.0, -1.0, 1.0]];
    let mut queries = Vec::new();
    let mut cuts = Vec::new();
    for k in 0..steps {
        let b = boxes[boxes.len() - 1];
        let q = [(b[0] + b[1]) / 2.0, (b[2] + b[3]) / 2.0];
        queries.push(q);
        let mut next = b;
        if k % 2 == 0 {
            next[1] = q[0];
            cuts.push(Cut2d {
                normal: [1.0, 0.0],
                offset: q[0],
            });
        } else {
            next[2] = q[1];
            cuts.push(Cut2d {
                normal: [0.0, -1.0],
                offset: -q[1],
            });
        }
        boxes.push(next);
    }
    Game2d {
        title: "Halving game".into(),
        half_width: 1.0,
        boxes,
        queries,
        cuts,
        width: 800,
        height: 520,
    }
}

#[test]
fn game_picture_has_zoom_numbers_and_csv() {
    let dir = tempfile::tempdir().expect("tempdir");
    let game = halving_game(10);
    let files = draw_game_2d(&game, &dir.path().join("game")).expect("drawn");
    check_png(&files.png, 800, 520);
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert!(svg.contains("Halving game"));
    assert!(svg.contains("zoom ×"));
    let texts = svg_texts(&svg);
    assert!(texts.iter().any(|t| t == "1") && texts.iter().any(|t| t == "10"));
    let csv = std::fs::read_to_string(&files.csv).expect("csv");
    assert!(csv.starts_with("kind,index,x,y,normal_x,normal_y,offset,x_lo,x_hi,y_lo,y_hi\n"));
    assert_eq!(csv.matches("\nbox,").count(), 11);
    assert_eq!(csv.matches("\nquery,").count(), 10);
    assert_eq!(csv.matches("\ncut,").count(), 10);
    assert!(csv.contains("\nquery,1,0,0,,,,,,,\n"));
    assert!(csv.contains("\ncut,2,,,0,-1,-0,,,,\n"));

    // A short game needs no zoom.
    let files = draw_game_2d(&halving_game(2), &dir.path().join("short")).expect("drawn");
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert!(!svg.contains("zoom ×"));
    check_png(&files.png, 800, 520);
}

#[test]
fn game_with_many_queries_numbers_the_first_thirty() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut game = halving_game(4);
    game.queries = (0..45)
        .map(|i| {
            let t = f64::from(i) / 45.0 * std::f64::consts::TAU;
            [0.8 * t.cos(), 0.8 * t.sin()]
        })
        .collect();
    let files = draw_game_2d(&game, &dir.path().join("many")).expect("drawn");
    assert!(files
        .notes
        .iter()
        .any(|n| n.contains("only the first 30 of 45 queries are numbered")));
    let svg = std::fs::read_to_string(&files.svg).expect("svg");
    assert!(svg.contains("only the first 30 of 45 queries"));
    let texts = svg_texts(&svg);
    assert!(texts.iter().any(|t| t == "30"));
    assert!(!texts.iter().any(|t| t == "31"));
    check_png(&files.png, 800, 520);
}

#[test]
fn game_input_problems_are_notes_or_errors() {
    let dir = tempfile::tempdir().expect("tempdir");
    let bad = Game2d {
        half_width: 0.0,
        ..halving_game(2)
    };
    let err = draw_game_2d(&bad, &dir.path().join("bad")).expect_err("R = 0");
    assert!(matches!(err, Error::Chart { .. }), "{err}");
    let mut odd = halving_game(3);
    odd.cuts.push(Cut2d {
        normal: [0.0, 0.0],
        offset: 1.0,
    });
    odd.queries.push([f64::NAN, 0.0]);
    odd.boxes.push([1.0, -1.0, 0.0, 0.0]);
    let files = draw_game_2d(&odd, &dir.path().join("odd")).expect("drawn");
    assert_eq!(files.notes.len(), 3, "{:?}", files.notes);
    let empty = Game2d {
        title: "nothing yet".into(),
        ..Game2d::default()
    };
    let files = draw_game_2d(&empty, &dir.path().join("empty")).expect("drawn");
    assert!(files.notes.is_empty());
    let (w, h, _) = decode_png(&files.png);
    assert_eq!((w, h), (DEFAULT_WIDTH, DEFAULT_HEIGHT));
}
