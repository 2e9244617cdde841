//! The line chart: measured series (median line, min-max band, markers, flagged games)
//! and bound curves, with the header, the legend (in an empty corner of the plot or
//! outside it on the right) and the footnotes under the plot.

use plotters::backend::DrawingBackend;
use plotters::chart::ChartContext;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{PathElement, Polygon};
use plotters::style::{Color, WHITE};

use super::axes::{
    build_chart, draw_axis_text, draw_mesh, plan_axis, x_label_area, y_label_area, AxisPlan, Sizes,
};
use super::legend::{draw_legend, empty_corner, legend_entries, legend_layout};
use super::marker::{draw_flag, draw_marker, draw_up_arrow};
use super::occupied::occupied;
use super::output::Painter;
use super::prepare::PreparedChart;
use super::style::{curve_look, draw_styled_path, NOTE, TEXT};
use super::text::{
    dr, draw_footer, draw_header, footer_lines, header_lines_with, scale_factor, Ink,
};
use super::{ChartSpec, Coord2, Px};

pub(super) struct ChartPainter<'a> {
    pub(super) spec: &'a ChartSpec,
    pub(super) data: &'a PreparedChart,
}

impl Painter for ChartPainter<'_> {
    fn paint<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
    ) -> Result<(), String> {
        paint_chart(root, ink, self.spec, self.data).map(|_| ())
    }
}

/// Where things ended up on a painted chart, in pixels (`[x0, y0, x1, y1]`).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Drawn {
    /// The plot area.
    pub(super) plot: [i32; 4],
    /// The legend's frame, when there is a legend.
    pub(super) legend: Option<[i32; 4]>,
    /// Whether the legend is outside the plot area.
    pub(super) outside: bool,
}

/// The axes and plot of a chart, before anything is drawn on them.
struct Frame<'a, DB: DrawingBackend> {
    chart: ChartContext<'a, DB, Coord2>,
    xa: AxisPlan,
    ya: AxisPlan,
    x_area: i32,
    y_area: i32,
}

pub(super) fn paint_chart<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    spec: &ChartSpec,
    data: &PreparedChart,
) -> Result<Drawn, String> {
    let (w, h) = root.dim_in_pixel();
    let sz = Sizes::new(scale_factor(w, h));
    let (w, h) = (w as i32, h as i32);
    root.fill(&WHITE).map_err(dr)?;
    let notes: Vec<(String, _)> = data
        .notes
        .iter()
        .map(|n| (n.text.clone(), if n.problem { NOTE } else { TEXT }))
        .collect();
    let lines = header_lines_with(&spec.title, spec.subtitle.as_deref(), &notes, w, sz.s);
    let header_h = draw_header(root, ink, &lines, sz.px(10.0), w)? + sz.px(4.0);
    let footer = footer_lines(&spec.footnotes, w, sz.s);
    let footer_h = footer
        .iter()
        .map(|l| (l.size * 1.35).round() as i32)
        .sum::<i32>()
        + if footer.is_empty() { 0 } else { sz.px(8.0) };
    let body_h = (h - header_h - footer_h).max(10);
    let body = root.clone().shrink((0, header_h), (w, body_h));
    let x_area = x_label_area(&spec.x_label, &sz);

    let frame = |extra_right: i32, y_hi: Option<f64>| {
        make_frame(&body, spec, data, &sz, x_area, extra_right, y_hi)
    };

    let mut entries = legend_entries(spec, data);
    let margin = sz.px(10.0);
    let mut f = frame(0, None)?;
    let mut corner = None;
    let mut layout = None;
    let mut outside = false;
    if !entries.is_empty() {
        // 1. An empty corner of the plot.
        let plot = f.chart.plotting_area().get_pixel_range();
        let plot_w = plot.0.end - plot.0.start;
        let inside = legend_layout(&mut entries, (f64::from(plot_w) * 0.45) as i32, &sz);
        let taken = occupied(&f.chart, data, f.ya.lo, &sz);
        corner = empty_corner(&plot, inside.w, inside.h, margin, &taken);
        // 2. Room made above the data (a taller y range), if that costs little.
        let plot_h = f64::from(plot.1.end - plot.1.start);
        let need = f64::from(inside.h + 2 * margin);
        if corner.is_none() && need < 0.4 * plot_h {
            let (lo, hi) = (f.ya.lo, f.ya.hi);
            let taller = frame(0, Some(lo + (hi - lo) * plot_h / (plot_h - need)))?;
            let plot = taller.chart.plotting_area().get_pixel_range();
            let taken = occupied(&taller.chart, data, taller.ya.lo, &sz);
            if let Some(c) = empty_corner(&plot, inside.w, inside.h, margin, &taken) {
                corner = Some(c);
                f = taller;
            }
        }
        if corner.is_some() {
            layout = Some(inside);
        } else {
            // 3. Outside the plot, on the right.
            let outer = legend_layout(&mut entries, (f64::from(w) * 0.26) as i32, &sz);
            f = frame(outer.w + sz.px(4.0), None)?;
            let plot = f.chart.plotting_area().get_pixel_range();
            corner = Some((plot.0.end + sz.px(16.0), plot.1.start));
            layout = Some(outer);
            outside = true;
        }
    }

    draw_mesh(&mut f.chart, &sz)?;
    let plot = f.chart.plotting_area().get_pixel_range();
    let to_px = |x: f64, y: f64| -> Px { f.chart.backend_coord(&(x, y)) };
    draw_axis_text(
        root,
        ink,
        &plot,
        (&f.xa, &f.ya),
        (&spec.x_label, &spec.y_label),
        (f.x_area, f.y_area),
        &to_px,
        &sz,
    )?;
    draw_data(root, data, f.ya.lo, &to_px, &sz)?;

    let mut drawn = Drawn {
        plot: [plot.0.start, plot.1.start, plot.0.end, plot.1.end],
        legend: None,
        outside,
    };
    if let (Some(corner), Some(layout)) = (corner, layout) {
        draw_legend(root, ink, &entries, &layout, corner, &sz)?;
        drawn.legend = Some([corner.0, corner.1, corner.0 + layout.w, corner.1 + layout.h]);
    }
    draw_footer(root, ink, &footer, h - footer_h + sz.px(4.0), sz.px(20.0))?;
    Ok(drawn)
}

/// Plans the axes and builds the plot on `body`, `extra_right` pixels narrower on the
/// right (room for the legend) and with the top of the y range at `y_hi` (default: the
/// data's).
fn make_frame<'a, DB: DrawingBackend>(
    body: &'a DrawingArea<DB, Shift>,
    spec: &ChartSpec,
    data: &PreparedChart,
    sz: &Sizes,
    x_area: i32,
    extra_right: i32,
    y_hi: Option<f64>,
) -> Result<Frame<'a, DB>, String> {
    let (bw, bh) = body.dim_in_pixel();
    let est_plot_h = f64::from(bh as i32 - x_area - sz.px(16.0)).max(40.0);
    let y_range = (data.y_range.0, y_hi.unwrap_or(data.y_range.1));
    let ya = plan_axis(spec.y_scale, spec.y_integer, y_range, est_plot_h, false, sz);
    let y_area = y_label_area(&ya, &spec.y_label, sz);
    let est_plot_w = f64::from(bw as i32 - y_area - sz.px(38.0) - extra_right).max(40.0);
    let xa = plan_axis(
        spec.x_scale,
        spec.x_integer,
        data.x_range,
        est_plot_w,
        true,
        sz,
    );
    let chart = build_chart(body, &xa, &ya, x_area, y_area, extra_right, sz)?;
    Ok(Frame {
        chart,
        xa,
        ya,
        x_area,
        y_area,
    })
}

/// Bands and whiskers, median lines, bound curves, markers and flagged games, in that
/// order (a method that meets a bound does not hide it; markers stay on top).
fn draw_data<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    data: &PreparedChart,
    y_floor: f64,
    to_px: &dyn Fn(f64, f64) -> Px,
    sz: &Sizes,
) -> Result<(), String> {
    let line_w = (2.0 * sz.s).round().max(1.0) as u32;
    for s in &data.series {
        let band = s.color.mix(0.17).filled();
        if s.points.len() >= 2 {
            let mut poly: Vec<Px> = s.points.iter().map(|p| to_px(p.x, p.hi)).collect();
            poly.extend(
                s.points
                    .iter()
                    .rev()
                    .map(|p| to_px(p.x, p.lo.unwrap_or(y_floor))),
            );
            root.draw(&Polygon::new(poly, band)).map_err(dr)?;
        }
        // Whiskers show the spread at each point (the only sign of it when a
        // series has a single point).
        let cap = sz.px(5.0);
        for p in &s.points {
            let top = to_px(p.x, p.hi);
            let bottom = to_px(p.x, p.lo.unwrap_or(y_floor));
            if bottom.1 - top.1 >= 2 {
                let st = s.color.mix(0.55).stroke_width(1);
                root.draw(&PathElement::new(vec![top, bottom], st))
                    .map_err(dr)?;
                for y in [top.1, bottom.1] {
                    root.draw(&PathElement::new(
                        vec![(top.0 - cap, y), (top.0 + cap, y)],
                        st,
                    ))
                    .map_err(dr)?;
                }
            }
        }
    }
    for s in &data.series {
        if s.points.len() >= 2 {
            let pts: Vec<Px> = s.points.iter().map(|p| to_px(p.x, p.mid)).collect();
            root.draw(&PathElement::new(pts, s.color.stroke_width(line_w)))
                .map_err(dr)?;
        }
    }
    for c in &data.curves {
        let (color, width, dash) = curve_look(c.style, c.variant, sz.s);
        let pts: Vec<(f64, f64)> = c
            .points
            .iter()
            .map(|&(x, y)| {
                let p = to_px(x, y);
                (f64::from(p.0), f64::from(p.1))
            })
            .collect();
        draw_styled_path(root, &pts, color, width, &dash)?;
    }
    for s in &data.series {
        for p in &s.points {
            let c = to_px(p.x, p.mid);
            draw_marker(root, s.marker, c, sz.marker, s.color, p.censored, sz.s)?;
            if p.censored {
                draw_up_arrow(root, c, sz.marker, s.color, sz.s)?;
            }
        }
    }
    for s in &data.series {
        for &(x, y, flag) in &s.flags {
            draw_flag(root, flag, to_px(x, y), sz.marker, s.color, sz.s)?;
        }
    }
    Ok(())
}
