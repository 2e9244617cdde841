//! The legend of a line chart: its entries (series, bound lines, censored and flagged
//! games), labels wrapped to a width (never cut), its size, where it goes (an empty
//! corner of the plot, measured against what the data cover, or else outside the plot on
//! the right), and how it is drawn.

use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{PathElement, Rectangle};
use plotters::style::text_anchor::{HPos, VPos};
use plotters::style::{Color, RGBColor, WHITE};

use super::axes::Sizes;
use super::marker::{draw_flag, draw_marker, draw_up_arrow, Marker};
use super::occupied::Occupied;
use super::prepare::PreparedChart;
use super::style::{curve_look, draw_styled_path, MUTED, TEXT};
use super::text::{dr, label, put_text, text_size, wrap, Ink};
use super::{ChartSpec, CurveStyle, Flag, Px};

/// What an entry's swatch shows.
#[derive(Debug, Clone, Copy)]
pub(super) enum LegendKey {
    Series { color: RGBColor, marker: Marker },
    Curve { style: CurveStyle, variant: usize },
    Censored,
    Flag(Flag),
}

#[derive(Debug, Clone)]
pub(super) struct LegendEntry {
    pub(super) key: LegendKey,
    pub(super) label: String,
    /// The label wrapped to the legend's width.
    pub(super) lines: Vec<String>,
}

/// The legend's frame colour (tests find the legend by it).
pub(super) const FRAME: RGBColor = RGBColor(150, 150, 150);

pub(super) fn legend_entries(spec: &ChartSpec, data: &PreparedChart) -> Vec<LegendEntry> {
    let entry = |key, label: String| LegendEntry {
        key,
        lines: vec![label.clone()],
        label,
    };
    let mut entries: Vec<LegendEntry> = data
        .series
        .iter()
        .map(|s| {
            let label = match &s.hidden_under {
                Some(top) => format!("{} (hidden under {top}: same values)", s.label),
                None => s.label.clone(),
            };
            entry(
                LegendKey::Series {
                    color: s.color,
                    marker: s.marker,
                },
                label,
            )
        })
        .collect();
    entries.extend(spec.curves.iter().zip(&data.curves).map(|(c, p)| {
        entry(
            LegendKey::Curve {
                style: p.style,
                variant: p.variant,
            },
            c.label.clone(),
        )
    }));
    if data.any_censored {
        entries.push(entry(
            LegendKey::Censored,
            "censored (budget ended the game)".into(),
        ));
    }
    for &flag in &data.flags_drawn {
        entries.push(entry(LegendKey::Flag(flag), flag.legend().into()));
    }
    entries
}

pub(super) struct LegendLayout {
    pub(super) pad: i32,
    pub(super) row_h: i32,
    pub(super) line_h: i32,
    pub(super) swatch_w: i32,
    pub(super) gap: i32,
    pub(super) w: i32,
    pub(super) h: i32,
}

/// Wraps every label to at most `max_text_w` pixels (a single word wider than that
/// keeps its own line) and sizes the legend.
pub(super) fn legend_layout(
    entries: &mut [LegendEntry],
    max_text_w: i32,
    sz: &Sizes,
) -> LegendLayout {
    let pad = sz.px(9.0);
    let row_h = sz.px(26.0);
    let line_h = (sz.legend * 1.25).round() as i32;
    let swatch_w = sz.px(42.0);
    let gap = sz.px(9.0);
    let mut text_w = 0;
    let mut h = 2 * pad;
    for e in entries.iter_mut() {
        e.lines = wrap(&e.label, sz.legend, max_text_w.max(40));
        if e.lines.is_empty() {
            e.lines.push(String::new());
        }
        for line in &e.lines {
            text_w = text_w.max(text_size(sz.legend, line).0);
        }
        h += row_h + line_h * (e.lines.len() as i32 - 1);
    }
    LegendLayout {
        pad,
        row_h,
        line_h,
        swatch_w,
        gap,
        w: pad + swatch_w + gap + text_w + pad,
        h,
    }
}

/// The first corner of the plot (upper left, upper right, lower right, lower left) where
/// a `lw` x `lh` legend, `margin` pixels in from the plot's edges, covers nothing of
/// `occupied` (with a few pixels to spare); `None` when every corner would hide data.
pub(super) fn empty_corner(
    plot: &(std::ops::Range<i32>, std::ops::Range<i32>),
    lw: i32,
    lh: i32,
    margin: i32,
    occupied: &Occupied,
) -> Option<Px> {
    let (xr, yr) = plot;
    if lw + 2 * margin > xr.end - xr.start || lh + 2 * margin > yr.end - yr.start {
        return None;
    }
    let corners = [
        (xr.start + margin, yr.start + margin),
        (xr.end - margin - lw, yr.start + margin),
        (xr.end - margin - lw, yr.end - margin - lh),
        (xr.start + margin, yr.end - margin - lh),
    ];
    corners.into_iter().find(|c| {
        let rect = [
            f64::from(c.0),
            f64::from(c.1),
            f64::from(c.0 + lw),
            f64::from(c.1 + lh),
        ];
        !occupied.hits(rect, 4.0)
    })
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
    root.draw(&Rectangle::new([(x0, y0), (x1, y1)], FRAME.stroke_width(1)))
        .map_err(dr)?;
    let sx0 = x0 + layout.pad;
    let sx1 = sx0 + layout.swatch_w;
    let mid_x = (sx0 + sx1) / 2;
    let mut top = y0 + layout.pad;
    for e in entries {
        let yc = top + layout.row_h / 2;
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
            LegendKey::Curve { style, variant } => {
                let (color, width, dash) = curve_look(style, variant, sz.s);
                let pts = [
                    (f64::from(sx0), f64::from(yc)),
                    (f64::from(sx1), f64::from(yc)),
                ];
                draw_styled_path(root, &pts, color, width, &dash)?;
            }
            LegendKey::Censored => {
                let r = sz.marker;
                let c = (mid_x, yc + sz.px(5.0));
                draw_marker(root, Marker::Circle, c, r, MUTED, true, sz.s)?;
                let small = sz.s * 0.65;
                draw_up_arrow(root, c, r, MUTED, small)?;
            }
            LegendKey::Flag(flag) => {
                draw_flag(root, flag, (mid_x, yc), sz.marker, MUTED, sz.s)?;
            }
        }
        for (k, line) in e.lines.iter().enumerate() {
            let l = label(sz.legend, TEXT, HPos::Left, VPos::Center);
            let y = yc + layout.line_h * k as i32;
            put_text(root, ink, line, (sx1 + layout.gap, y), l)?;
        }
        top += layout.row_h + layout.line_h * (e.lines.len() as i32 - 1);
    }
    Ok(())
}
