//! Colours and line styles: the palette and series looks, the bound lines' colours,
//! widths and dash patterns, and dashed paths.

use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::PathElement;
use plotters::style::{Color, RGBColor};

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

/// The palette colour and marker number (into [`MARKERS`](super::marker::MARKERS)) of
/// series look `look`: look 8a + b has colour b and marker (a + b) mod 8, so the first 64
/// looks are pairwise distinct and the first eight differ in both colour and shape.
pub(super) fn series_colors(look: usize) -> (RGBColor, usize) {
    let n = PALETTE.len();
    (PALETTE[look % n], (look % n + look / n) % n)
}

/// Dash patterns (on, off, on, off, ... in pixels at scale 1; empty: solid) of each curve
/// style, in the order curve looks take them.
const LOWER_PATTERNS: [&[f64]; 3] = [&[], &[16.0, 5.0], &[14.0, 5.0, 3.0, 5.0]];
const UPPER_PATTERNS: [&[f64]; 5] = [
    &[11.0, 7.0],
    &[12.0, 5.0, 2.5, 5.0],
    &[22.0, 7.0],
    &[12.0, 4.0, 2.5, 4.0, 2.5, 4.0],
    &[5.0, 5.0],
];
const GUIDE_PATTERNS: [&[f64]; 2] = [&[2.5, 5.0], &[2.5, 5.0, 10.0, 5.0]];

/// How many distinct patterns a curve style has.
pub(super) fn pattern_count(style: CurveStyle) -> usize {
    match style {
        CurveStyle::LowerBound => LOWER_PATTERNS.len(),
        CurveStyle::UpperBound => UPPER_PATTERNS.len(),
        CurveStyle::Guide => GUIDE_PATTERNS.len(),
    }
}

/// Colour, width and dash pattern (scaled by `s`; empty: solid) of variant `variant` of
/// a curve style.
pub(super) fn curve_look(style: CurveStyle, variant: usize, s: f64) -> (RGBColor, u32, Vec<f64>) {
    let (color, width, patterns): (RGBColor, f64, &[&[f64]]) = match style {
        CurveStyle::LowerBound => (BLACK, (3.0 * s).round().max(2.0), &LOWER_PATTERNS),
        CurveStyle::UpperBound => (BLACK, (2.0 * s).round().max(1.0), &UPPER_PATTERNS),
        CurveStyle::Guide => (GUIDE_GREY, (2.0 * s).round().max(1.0), &GUIDE_PATTERNS),
    };
    let pattern = patterns[variant % patterns.len()];
    (color, width as u32, pattern.iter().map(|v| v * s).collect())
}

/// Splits a pixel polyline into dashes following `pattern` (lengths in pixels: on, off,
/// on, off, ...; an odd-length pattern repeats as if doubled); an empty pattern draws
/// the whole line.
pub(super) fn dash_polyline(points: &[(f64, f64)], pattern: &[f64]) -> Vec<Vec<(f64, f64)>> {
    if pattern.is_empty() {
        return if points.len() >= 2 {
            vec![points.to_vec()]
        } else {
            Vec::new()
        };
    }
    let lengths: Vec<f64> = pattern.iter().map(|v| v.max(1.0)).collect();
    let mut phase = 0usize;
    let mut dashes = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    let mut drawing = true;
    let mut left = lengths[0];
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
                phase += 1;
                left = lengths[phase % lengths.len()];
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
    pattern: &[f64],
) -> Result<(), String> {
    let to_px = |p: &(f64, f64)| (p.0.round() as i32, p.1.round() as i32);
    let pieces = dash_polyline(pts, pattern);
    for piece in pieces {
        if piece.len() >= 2 {
            let px: Vec<Px> = piece.iter().map(to_px).collect();
            root.draw(&PathElement::new(px, color.stroke_width(width)))
                .map_err(dr)?;
        }
    }
    Ok(())
}
