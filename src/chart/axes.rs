//! Axes: the plot-space coordinate (grid lines exactly at the planned ticks), sizes
//! that scale with the image, label areas, the mesh, tick labels and axis descriptions.

use plotters::backend::DrawingBackend;
use plotters::chart::{ChartBuilder, ChartContext};
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::style::text_anchor::{HPos, VPos};
use plotters::style::Color;

use super::style::{AXIS, GRID_BOLD, GRID_LIGHT, TEXT};
use super::text::{dr, font, label, put_text, text_size, Ink, Label, PLOTTERS_SIZE_PER_EM};
use super::ticks::{fit_ticks, Ticks};
use super::{Coord2, Px, Scale};

/// A linear plot-space axis (the logarithm of the data on log axes) whose
/// grid lines and labels sit exactly at the planned ticks.
#[derive(Debug, Clone)]
pub(super) struct TickAxis {
    pub(super) lo: f64,
    pub(super) hi: f64,
    pub(super) bold: Vec<f64>,
    pub(super) light: Vec<f64>,
}

impl TickAxis {
    pub(super) fn new(plan: &AxisPlan) -> Self {
        TickAxis {
            lo: plan.lo,
            hi: plan.hi,
            bold: plan.ticks.bold.iter().map(|t| t.0).collect(),
            light: plan.ticks.light.clone(),
        }
    }
}

impl Ranged for TickAxis {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        let span = self.hi - self.lo;
        let t = if span > 0.0 {
            (value - self.lo) / span
        } else {
            0.5
        };
        let px = f64::from(limit.0) + t * f64::from(limit.1 - limit.0);
        if px.is_finite() {
            px.round().clamp(-1e7, 1e7) as i32
        } else {
            limit.0
        }
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.light.clone()
        } else {
            self.bold.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.lo..self.hi
    }
}

pub(super) struct Sizes {
    pub(super) s: f64,
    pub(super) tick: f64,
    pub(super) desc: f64,
    pub(super) legend: f64,
    pub(super) marker: i32,
}

impl Sizes {
    pub(super) fn new(s: f64) -> Self {
        Sizes {
            s,
            tick: 15.5 * s,
            desc: 18.0 * s,
            legend: 15.5 * s,
            marker: (5.0 * s).round().max(3.0) as i32,
        }
    }
    pub(super) fn px(&self, v: f64) -> i32 {
        (v * self.s).round() as i32
    }
}

pub(super) struct AxisPlan {
    pub(super) lo: f64,
    pub(super) hi: f64,
    pub(super) ticks: Ticks,
}

pub(super) fn plan_axis(
    scale: Scale,
    integer: bool,
    range: (f64, f64),
    len_px: f64,
    horizontal: bool,
    sz: &Sizes,
) -> AxisPlan {
    AxisPlan {
        lo: range.0,
        hi: range.1,
        ticks: fit_ticks(
            scale, integer, range.0, range.1, len_px, horizontal, sz.tick,
        ),
    }
}

pub(super) fn build_chart<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, Shift>,
    xa: &AxisPlan,
    ya: &AxisPlan,
    x_area: i32,
    y_area: i32,
    extra_right: i32,
    sz: &Sizes,
) -> Result<ChartContext<'a, DB, Coord2>, String> {
    ChartBuilder::on(area)
        .margin_top(sz.px(8.0))
        .margin_left(sz.px(10.0))
        .margin_right(sz.px(28.0) + extra_right)
        .margin_bottom(sz.px(8.0))
        .x_label_area_size(x_area)
        .y_label_area_size(y_area)
        .build_cartesian_2d(TickAxis::new(xa), TickAxis::new(ya))
        .map_err(dr)
}

pub(super) fn y_label_area(ya: &AxisPlan, desc: &str, sz: &Sizes) -> i32 {
    let widest = ya
        .ticks
        .bold
        .iter()
        .map(|t| text_size(sz.tick, &t.1).0)
        .max()
        .unwrap_or(0);
    let desc_w = if desc.is_empty() {
        0
    } else {
        (sz.desc * 1.2).round() as i32 + sz.px(10.0)
    };
    sz.px(2.0) + desc_w + widest + sz.px(11.0)
}

pub(super) fn x_label_area(desc: &str, sz: &Sizes) -> i32 {
    let desc_h = if desc.is_empty() {
        0
    } else {
        (sz.desc * 1.2).round() as i32 + sz.px(8.0)
    };
    sz.px(11.0) + (sz.tick * 1.0).round() as i32 + desc_h + sz.px(4.0)
}

/// Grid lines, axis lines and tick marks; the tick labels and axis
/// descriptions are drawn by [`draw_axis_text`] with the embedded font.
pub(super) fn draw_mesh<DB: DrawingBackend>(
    chart: &mut ChartContext<'_, DB, Coord2>,
    sz: &Sizes,
) -> Result<(), String> {
    let blank = |_: &f64| String::new();
    chart
        .configure_mesh()
        .label_style(font(sz.tick * PLOTTERS_SIZE_PER_EM).color(&TEXT))
        .axis_desc_style(font(sz.desc * PLOTTERS_SIZE_PER_EM).color(&TEXT))
        .x_label_formatter(&blank)
        .y_label_formatter(&blank)
        .bold_line_style(GRID_BOLD.stroke_width(1))
        .light_line_style(GRID_LIGHT.stroke_width(1))
        .axis_style(AXIS.stroke_width(1))
        .set_all_tick_mark_size(sz.px(6.0))
        .draw()
        .map_err(dr)
}

/// Tick labels below and left of the plot area, and the axis descriptions.
#[allow(clippy::too_many_arguments)]
pub(super) fn draw_axis_text<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    plot: &(std::ops::Range<i32>, std::ops::Range<i32>),
    axes: (&AxisPlan, &AxisPlan),
    descs: (&str, &str),
    areas: (i32, i32),
    to_px: &dyn Fn(f64, f64) -> Px,
    sz: &Sizes,
) -> Result<(), String> {
    let (xa, ya) = axes;
    let (xr, yr) = plot;
    let tick_gap = sz.px(6.0) + sz.px(5.0);
    for (v, text) in &xa.ticks.bold {
        let x = to_px(*v, ya.lo).0;
        if x < xr.start - 1 || x > xr.end + 1 {
            continue;
        }
        let l = label(sz.tick, TEXT, HPos::Center, VPos::Top);
        put_text(root, ink, text, (x, yr.end + tick_gap), l)?;
    }
    for (v, text) in &ya.ticks.bold {
        let y = to_px(xa.lo, *v).1;
        if y < yr.start - 1 || y > yr.end + 1 {
            continue;
        }
        let l = label(sz.tick, TEXT, HPos::Right, VPos::Center);
        put_text(root, ink, text, (xr.start - tick_gap, y), l)?;
    }
    let (x_area, y_area) = areas;
    let (x_desc, y_desc) = descs;
    let mid_x = (xr.start + xr.end) / 2;
    let mid_y = (yr.start + yr.end) / 2;
    let l = label(sz.desc, TEXT, HPos::Center, VPos::Bottom);
    put_text(root, ink, x_desc, (mid_x, yr.end + x_area - sz.px(4.0)), l)?;
    let l = Label {
        vertical: true,
        ..label(sz.desc, TEXT, HPos::Center, VPos::Top)
    };
    put_text(
        root,
        ink,
        y_desc,
        (xr.start - y_area + sz.px(2.0), mid_y),
        l,
    )?;
    Ok(())
}
