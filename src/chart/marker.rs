//! Marker shapes: the eight series markers (filled, or hollow for censored games), the
//! marks of flagged games (refuted outputs, wrong "empty" claims, failures), the
//! censoring arrow, and a small stand-alone SVG swatch of a series' look (for reports).

use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{Circle, PathElement, Polygon};
use plotters::style::{Color, RGBAColor, RGBColor, ShapeStyle, WHITE};

use super::style::series_colors;
use super::text::dr;
use super::{Flag, Px};

/// A series marker shape.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Marker {
    Circle,
    Square,
    TriangleUp,
    Diamond,
    TriangleDown,
    Star,
    TriangleRight,
    TriangleLeft,
}

/// The markers, in the order series looks take them (one per palette colour, so the
/// first eight looks differ in both colour and shape).
pub(super) const MARKERS: [Marker; 8] = [
    Marker::Circle,
    Marker::Square,
    Marker::TriangleUp,
    Marker::Diamond,
    Marker::TriangleDown,
    Marker::Star,
    Marker::TriangleRight,
    Marker::TriangleLeft,
];

impl Marker {
    /// The shape's name (reports and tests).
    pub(super) fn name(self) -> &'static str {
        match self {
            Marker::Circle => "circle",
            Marker::Square => "square",
            Marker::TriangleUp => "triangle-up",
            Marker::Diamond => "diamond",
            Marker::TriangleDown => "triangle-down",
            Marker::Star => "star",
            Marker::TriangleRight => "triangle-right",
            Marker::TriangleLeft => "triangle-left",
        }
    }
}

/// The outline of a marker of radius `r` centred at `(x, y)` (empty for the circle).
fn outline(m: Marker, x: f64, y: f64, r: f64) -> Vec<(f64, f64)> {
    match m {
        Marker::Circle => Vec::new(),
        Marker::Square => {
            let h = r * 0.9;
            vec![
                (x - h, y - h),
                (x + h, y - h),
                (x + h, y + h),
                (x - h, y + h),
            ]
        }
        Marker::TriangleUp => vec![
            (x, y - r * 1.25),
            (x + r * 1.1, y + r * 0.8),
            (x - r * 1.1, y + r * 0.8),
        ],
        Marker::TriangleDown => vec![
            (x, y + r * 1.25),
            (x + r * 1.1, y - r * 0.8),
            (x - r * 1.1, y - r * 0.8),
        ],
        Marker::TriangleRight => vec![
            (x + r * 1.25, y),
            (x - r * 0.8, y + r * 1.1),
            (x - r * 0.8, y - r * 1.1),
        ],
        Marker::TriangleLeft => vec![
            (x - r * 1.25, y),
            (x + r * 0.8, y - r * 1.1),
            (x + r * 0.8, y + r * 1.1),
        ],
        Marker::Diamond => vec![
            (x, y - r * 1.3),
            (x + r * 1.05, y),
            (x, y + r * 1.3),
            (x - r * 1.05, y),
        ],
        Marker::Star => (0..10)
            .map(|k| {
                let angle = std::f64::consts::PI * (f64::from(k) / 5.0 - 0.5);
                let radius = if k % 2 == 0 { r * 1.45 } else { r * 0.62 };
                (x + radius * angle.cos(), y + radius * angle.sin())
            })
            .collect(),
    }
}

pub(super) fn marker_outline(m: Marker, c: Px, r: i32) -> Vec<Px> {
    outline(m, f64::from(c.0), f64::from(c.1), f64::from(r))
        .into_iter()
        .map(|(a, b)| (a.round() as i32, b.round() as i32))
        .collect()
}

pub(super) fn draw_marker<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    m: Marker,
    c: Px,
    r: i32,
    color: RGBColor,
    hollow: bool,
    s: f64,
) -> Result<(), String> {
    let fill: RGBAColor = if hollow {
        WHITE.to_rgba()
    } else {
        color.to_rgba()
    };
    let fill_style = ShapeStyle {
        color: fill,
        filled: true,
        stroke_width: 1,
    };
    let edge_style = ShapeStyle {
        color: if hollow {
            color.to_rgba()
        } else {
            WHITE.to_rgba()
        },
        filled: false,
        stroke_width: if hollow {
            (2.0 * s).round().max(2.0) as u32
        } else {
            1
        },
    };
    if m == Marker::Circle {
        root.draw(&Circle::new(c, r, fill_style)).map_err(dr)?;
        root.draw(&Circle::new(c, r, edge_style)).map_err(dr)?;
    } else {
        let pts = marker_outline(m, c, r);
        root.draw(&Polygon::new(pts.clone(), fill_style))
            .map_err(dr)?;
        let mut closed = pts;
        if let Some(first) = closed.first().copied() {
            closed.push(first);
        }
        root.draw(&PathElement::new(closed, edge_style))
            .map_err(dr)?;
    }
    Ok(())
}

/// How far a flag mark reaches from its centre, in marker radii.
pub(super) const FLAG_REACH: f64 = 1.9;

/// The strokes of a flagged game's mark of radius `r` at `c`: a cross for a refuted
/// output, a slashed circle (the empty-set sign) for a refuted "empty" claim, a slashed
/// square for an "empty" claim against the promise, a crossed square for a failure.
fn flag_strokes(flag: Flag, c: Px, r: f64) -> (Vec<Vec<Px>>, bool) {
    let (x, y) = (f64::from(c.0), f64::from(c.1));
    let p = |dx: f64, dy: f64| ((x + dx).round() as i32, (y + dy).round() as i32);
    let h = r * 1.45;
    let square = vec![p(-h, -h), p(h, -h), p(h, h), p(-h, h), p(-h, -h)];
    let k = r * FLAG_REACH;
    match flag {
        Flag::OutputRefuted => (
            vec![vec![p(-h, -h), p(h, h)], vec![p(-h, h), p(h, -h)]],
            false,
        ),
        Flag::EmptyRefuted => (
            vec![vec![p(-k * 0.85, k * 0.85), p(k * 0.85, -k * 0.85)]],
            true,
        ),
        Flag::EmptyBreaksPromise => (vec![square, vec![p(-k, k), p(k, -k)]], false),
        Flag::MethodFailed => (
            vec![square, vec![p(-h, -h), p(h, h)], vec![p(-h, h), p(h, -h)]],
            false,
        ),
    }
}

/// The stroke width of flag marks: heavier than the series lines (2 pixels at scale 1).
pub(super) fn flag_stroke(s: f64) -> u32 {
    (3.0 * s).round().max(3.0) as u32
}

/// Draws a flagged game's mark in `color` over a white halo, so it stays readable on
/// lines and bands.
pub(super) fn draw_flag<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    flag: Flag,
    c: Px,
    r: i32,
    color: RGBColor,
    s: f64,
) -> Result<(), String> {
    let r = f64::from(r);
    let (strokes, ring) = flag_strokes(flag, c, r);
    let width = flag_stroke(s);
    let ring_r = (r * 1.5).round() as i32;
    for (stroke_color, w) in [(WHITE, width + 2), (color, width)] {
        if ring {
            let st = ShapeStyle {
                color: stroke_color.to_rgba(),
                filled: false,
                stroke_width: w,
            };
            root.draw(&Circle::new(c, ring_r, st)).map_err(dr)?;
        }
        for line in &strokes {
            root.draw(&PathElement::new(
                line.clone(),
                stroke_color.stroke_width(w),
            ))
            .map_err(dr)?;
        }
    }
    Ok(())
}

/// A small upward arrow above a marker of radius `r` at `c`.
pub(super) fn draw_up_arrow<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: Px,
    r: i32,
    color: RGBColor,
    s: f64,
) -> Result<(), String> {
    let (base, tip, head_h, head_w) = arrow_geometry(c, r, s);
    let width = (2.0 * s).round().max(1.0) as u32;
    root.draw(&PathElement::new(
        vec![(c.0, base), (c.0, tip + head_h - 1)],
        color.stroke_width(width),
    ))
    .map_err(dr)?;
    root.draw(&Polygon::new(
        vec![
            (c.0, tip),
            (c.0 + head_w, tip + head_h),
            (c.0 - head_w, tip + head_h),
        ],
        color.filled(),
    ))
    .map_err(dr)?;
    Ok(())
}

/// The censoring arrow's base, tip, head height and head half-width, in pixels.
pub(super) fn arrow_geometry(c: Px, r: i32, s: f64) -> (i32, i32, i32, i32) {
    let base = c.1 - (f64::from(r) * 1.35).round() as i32 - (2.0 * s).round() as i32;
    let tip = base - (14.0 * s).round() as i32;
    let head_h = (6.0 * s).round().max(4.0) as i32;
    let head_w = (4.5 * s).round().max(3.0) as i32;
    (base, tip, head_h, head_w)
}

/// The colour (as `#RRGGBB`) and marker name of series look `look`
/// ([`crate::chart::series_look`]).
pub(super) fn look_parts(look: usize) -> (RGBColor, Marker) {
    let (color, marker) = series_colors(look);
    (color, MARKERS[marker])
}

/// A stand-alone SVG (42 x 16 pixels) of series look `look`: band, line and marker, as
/// the legend draws it; for tables outside the charts.
pub(super) fn swatch(look: usize) -> String {
    let (color, marker) = look_parts(look);
    let hex = format!("#{:02X}{:02X}{:02X}", color.0, color.1, color.2);
    let (cx, cy, r) = (21.0, 8.0, 4.5);
    let shape = match marker {
        Marker::Circle => format!(
            r##"<circle cx="{cx}" cy="{cy}" r="{r}" fill="{hex}" stroke="#FFFFFF" stroke-width="1"/>"##
        ),
        m => {
            let points: Vec<String> = outline(m, cx, cy, r)
                .iter()
                .map(|(x, y)| format!("{x:.2},{y:.2}"))
                .collect();
            format!(
                r##"<polygon points="{}" fill="{hex}" stroke="#FFFFFF" stroke-width="1"/>"##,
                points.join(" ")
            )
        }
    };
    format!(
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="42" height="16" viewBox="0 0 42 16" role="img" aria-label="{}"><rect x="0" y="3" width="42" height="10" fill="{hex}" fill-opacity="0.17"/><line x1="0" y1="8" x2="42" y2="8" stroke="{hex}" stroke-width="2"/>{shape}</svg>"#,
        marker.name()
    )
}
