//! The legend of a line chart: its entries, its size, where it hides the fewest data
//! samples, and how it is drawn.

use plotters::backend::DrawingBackend;
use plotters::chart::ChartContext;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{PathElement, Rectangle};
use plotters::style::text_anchor::{HPos, VPos};
use plotters::style::{Color, RGBColor, WHITE};

use super::axes::Sizes;
use super::line::PreparedChart;
use super::style::{curve_look, draw_marker, draw_styled_path, draw_up_arrow, Marker, MUTED, TEXT};
use super::text::{dr, ellipsize, label, put_text, text_size, Ink};
use super::{ChartSpec, Coord2, CurveStyle, Px};

#[derive(Debug, Clone, Copy)]
pub(super) enum LegendKey {
    Series { color: RGBColor, marker: Marker },
    Curve(CurveStyle),
    Censored,
}

#[derive(Debug, Clone)]
pub(super) struct LegendEntry {
    pub(super) key: LegendKey,
    pub(super) label: String,
}

pub(super) fn legend_entries(spec: &ChartSpec, data: &PreparedChart) -> Vec<LegendEntry> {
    let mut entries: Vec<LegendEntry> = data
        .series
        .iter()
        .map(|s| LegendEntry {
            key: LegendKey::Series {
                color: s.color,
                marker: s.marker,
            },
            label: s.label.clone(),
        })
        .collect();
    entries.extend(spec.curves.iter().map(|c| LegendEntry {
        key: LegendKey::Curve(c.style),
        label: c.label.clone(),
    }));
    if data.any_censored {
        entries.push(LegendEntry {
            key: LegendKey::Censored,
            label: "censored (budget)".into(),
        });
    }
    entries
}

pub(super) struct LegendLayout {
    pub(super) pad: i32,
    pub(super) row_h: i32,
    pub(super) swatch_w: i32,
    pub(super) gap: i32,
    pub(super) w: i32,
    pub(super) h: i32,
}

pub(super) fn legend_layout(
    entries: &mut [LegendEntry],
    max_text_w: i32,
    sz: &Sizes,
) -> LegendLayout {
    let pad = sz.px(9.0);
    let row_h = sz.px(26.0);
    let swatch_w = sz.px(42.0);
    let gap = sz.px(9.0);
    let mut text_w = 0;
    for e in entries.iter_mut() {
        e.label = ellipsize(&e.label, sz.legend, max_text_w.max(40));
        text_w = text_w.max(text_size(sz.legend, &e.label).0);
    }
    LegendLayout {
        pad,
        row_h,
        swatch_w,
        gap,
        w: pad + swatch_w + gap + text_w + pad,
        h: 2 * pad + row_h * entries.len() as i32,
    }
}

/// Samples in pixel space of everything the legend could hide.
pub(super) fn data_samples(
    chart: &ChartContext<'_, impl DrawingBackend, Coord2>,
    data: &PreparedChart,
    y_floor: f64,
) -> Vec<(f64, f64)> {
    let mut samples = Vec::new();
    let px = |x: f64, y: f64| {
        let (a, b) = chart.backend_coord(&(x, y));
        (f64::from(a), f64::from(b))
    };
    for s in &data.series {
        let mid: Vec<_> = s.points.iter().map(|p| px(p.x, p.mid)).collect();
        let hi: Vec<_> = s.points.iter().map(|p| px(p.x, p.hi)).collect();
        let lo: Vec<_> = s
            .points
            .iter()
            .map(|p| px(p.x, p.lo.unwrap_or(y_floor)))
            .collect();
        for line in [&mid, &hi, &lo] {
            sample_polyline(line, 4.0, &mut samples);
        }
        // The band between the ends, at each point.
        for (h, l) in hi.iter().zip(&lo) {
            sample_polyline(&[*h, *l], 4.0, &mut samples);
        }
    }
    for c in &data.curves {
        let pts: Vec<_> = c.points.iter().map(|&(x, y)| px(x, y)).collect();
        sample_polyline(&pts, 4.0, &mut samples);
    }
    samples
}

pub(super) fn sample_polyline(points: &[(f64, f64)], step: f64, out: &mut Vec<(f64, f64)>) {
    if let Some(first) = points.first() {
        out.push(*first);
    }
    for w in points.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        let n = (len / step).ceil().clamp(1.0, 5000.0) as usize;
        for k in 1..=n {
            let t = k as f64 / n as f64;
            out.push((a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t));
        }
    }
}

/// Picks the legend corner hiding the fewest samples (upper left on ties);
/// returns its top-left pixel and how many samples it hides.
pub(super) fn choose_corner(
    plot: &(std::ops::Range<i32>, std::ops::Range<i32>),
    lw: i32,
    lh: i32,
    margin: i32,
    samples: &[(f64, f64)],
) -> (Px, usize) {
    let (xr, yr) = plot;
    let corners = [
        (xr.start + margin, yr.start + margin),
        (xr.end - margin - lw, yr.start + margin),
        (xr.end - margin - lw, yr.end - margin - lh),
        (xr.start + margin, yr.end - margin - lh),
    ];
    let mut best = (corners[0], usize::MAX);
    for c in corners {
        let (x0, y0) = (f64::from(c.0 - 3), f64::from(c.1 - 3));
        let (x1, y1) = (f64::from(c.0 + lw + 3), f64::from(c.1 + lh + 3));
        let hidden = samples
            .iter()
            .filter(|p| p.0 >= x0 && p.0 <= x1 && p.1 >= y0 && p.1 <= y1)
            .count();
        if hidden < best.1 {
            best = (c, hidden);
        }
    }
    best
}

pub(super) fn draw_legend<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    entries: &[LegendEntry],
    layout: &LegendLayout,
    corner: Px,
    sz: &Sizes,
) -> Result<(), String> {
    let (x0, y0) = corner;
    let (x1, y1) = (x0 + layout.w, y0 + layout.h);
    root.draw(&Rectangle::new(
        [(x0, y0), (x1, y1)],
        WHITE.mix(0.93).filled(),
    ))
    .map_err(dr)?;
    root.draw(&Rectangle::new(
        [(x0, y0), (x1, y1)],
        RGBColor(150, 150, 150).stroke_width(1),
    ))
    .map_err(dr)?;
    let sx0 = x0 + layout.pad;
    let sx1 = sx0 + layout.swatch_w;
    let mid_x = (sx0 + sx1) / 2;
    for (i, e) in entries.iter().enumerate() {
        let yc = y0 + layout.pad + layout.row_h * i as i32 + layout.row_h / 2;
        match e.key {
            LegendKey::Series { color, marker } => {
                let half = (f64::from(layout.row_h) * 0.3) as i32;
                root.draw(&Rectangle::new(
                    [(sx0, yc - half), (sx1, yc + half)],
                    color.mix(0.17).filled(),
                ))
                .map_err(dr)?;
                root.draw(&PathElement::new(
                    vec![(sx0, yc), (sx1, yc)],
                    color.stroke_width((2.0 * sz.s).round().max(1.0) as u32),
                ))
                .map_err(dr)?;
                draw_marker(root, marker, (mid_x, yc), sz.marker, color, false, sz.s)?;
            }
            LegendKey::Curve(style) => {
                let (color, width, dash) = curve_look(style, sz.s);
                let pts = [
                    (f64::from(sx0), f64::from(yc)),
                    (f64::from(sx1), f64::from(yc)),
                ];
                draw_styled_path(root, &pts, color, width, dash)?;
            }
            LegendKey::Censored => {
                let r = sz.marker;
                let c = (mid_x, yc + sz.px(5.0));
                draw_marker(root, Marker::Circle, c, r, MUTED, true, sz.s)?;
                let small = sz.s * 0.65;
                draw_up_arrow(root, c, r, MUTED, small)?;
            }
        }
        let l = label(sz.legend, TEXT, HPos::Left, VPos::Center);
        put_text(root, ink, &e.label, (sx1 + layout.gap, yc), l)?;
    }
    Ok(())
}
