//! Colours, series markers and line styles: the palette, the bound-line looks, marker
//! shapes (filled and hollow), the censoring arrow, and dashed paths.

use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{Circle, PathElement, Polygon};
use plotters::style::{Color, RGBAColor, RGBColor, ShapeStyle, WHITE};

use super::text::dr;
use super::{CurveStyle, Px};

pub(super) const TEXT: RGBColor = RGBColor(20, 20, 20);

pub(super) const MUTED: RGBColor = RGBColor(90, 90, 90);

pub(super) const NOTE: RGBColor = RGBColor(170, 30, 20);

pub(super) const GRID_BOLD: RGBColor = RGBColor(218, 218, 218);

pub(super) const GRID_LIGHT: RGBColor = RGBColor(240, 240, 240);

pub(super) const AXIS: RGBColor = RGBColor(60, 60, 60);

pub(super) const BLACK: RGBColor = RGBColor(0, 0, 0);

pub(super) const GUIDE_GREY: RGBColor = RGBColor(125, 125, 125);

/// Okabe–Ito colours (without yellow and black, which are hard to see on white
/// or reserved for bounds), then two darker extras.
pub(super) const PALETTE: [RGBColor; 8] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(140, 86, 75),
    RGBColor(110, 110, 20),
];

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Marker {
    Circle,
    Square,
    TriangleUp,
    Diamond,
    TriangleDown,
}

pub(super) const MARKERS: [Marker; 5] = [
    Marker::Circle,
    Marker::Square,
    Marker::TriangleUp,
    Marker::Diamond,
    Marker::TriangleDown,
];

pub(super) fn curve_look(style: CurveStyle, s: f64) -> (RGBColor, u32, Option<(f64, f64)>) {
    match style {
        CurveStyle::LowerBound => (BLACK, (3.0 * s).round().max(2.0) as u32, None),
        CurveStyle::UpperBound => (
            BLACK,
            (2.0 * s).round().max(1.0) as u32,
            Some((11.0 * s, 7.0 * s)),
        ),
        CurveStyle::Guide => (
            GUIDE_GREY,
            (2.0 * s).round().max(1.0) as u32,
            Some((2.5 * s, 5.0 * s)),
        ),
    }
}

pub(super) fn marker_outline(m: Marker, c: Px, r: i32) -> Vec<Px> {
    let (x, y) = (f64::from(c.0), f64::from(c.1));
    let r = f64::from(r);
    let pts: Vec<(f64, f64)> = match m {
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
        Marker::Diamond => vec![
            (x, y - r * 1.3),
            (x + r * 1.05, y),
            (x, y + r * 1.3),
            (x - r * 1.05, y),
        ],
    };
    pts.into_iter()
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

/// A small upward arrow above a marker of radius `r` at `c`.
pub(super) fn draw_up_arrow<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: Px,
    r: i32,
    color: RGBColor,
    s: f64,
) -> Result<(), String> {
    let base = c.1 - (f64::from(r) * 1.35).round() as i32 - (2.0 * s).round() as i32;
    let tip = base - (14.0 * s).round() as i32;
    let head_h = (6.0 * s).round().max(4.0) as i32;
    let head_w = (4.5 * s).round().max(3.0) as i32;
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

/// Splits a pixel polyline into dashes of `on` pixels separated by `off`.
pub(super) fn dash_polyline(points: &[(f64, f64)], on: f64, off: f64) -> Vec<Vec<(f64, f64)>> {
    let (on, off) = (on.max(1.0), off.max(1.0));
    let mut dashes = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    let mut drawing = true;
    let mut left = on;
    for w in points.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        if !(len.is_finite() && len > 0.0) {
            continue;
        }
        let at = |t: f64| (a.0 + (b.0 - a.0) * t / len, a.1 + (b.1 - a.1) * t / len);
        let mut t = 0.0;
        while len - t > 1e-9 {
            let step = (len - t).min(left);
            if drawing {
                if current.is_empty() {
                    current.push(at(t));
                }
                current.push(at(t + step));
            }
            t += step;
            left -= step;
            if left <= 1e-9 {
                if drawing && current.len() >= 2 {
                    dashes.push(std::mem::take(&mut current));
                }
                current.clear();
                drawing = !drawing;
                left = if drawing { on } else { off };
            }
        }
    }
    if drawing && current.len() >= 2 {
        dashes.push(current);
    }
    dashes
}

pub(super) fn draw_styled_path<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    pts: &[(f64, f64)],
    color: RGBColor,
    width: u32,
    dash: Option<(f64, f64)>,
) -> Result<(), String> {
    let to_px = |p: &(f64, f64)| (p.0.round() as i32, p.1.round() as i32);
    let pieces = match dash {
        None => vec![pts.to_vec()],
        Some((on, off)) => dash_polyline(pts, on, off),
    };
    for piece in pieces {
        if piece.len() >= 2 {
            let px: Vec<Px> = piece.iter().map(to_px).collect();
            root.draw(&PathElement::new(px, color.stroke_width(width)))
                .map_err(dr)?;
        }
    }
    Ok(())
}
