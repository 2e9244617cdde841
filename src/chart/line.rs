//! The line chart: measured series (median line, min-max band, markers) and bound
//! curves, prepared for the axes' scales and painted with the legend.

use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{PathElement, Polygon};
use plotters::style::{Color, RGBColor, WHITE};

use super::axes::{
    build_chart, draw_axis_text, draw_mesh, plan_axis, x_label_area, y_label_area, Sizes,
};
use super::legend::{choose_corner, data_samples, draw_legend, legend_entries, legend_layout};
use super::output::Painter;
use super::style::{
    curve_look, draw_marker, draw_styled_path, draw_up_arrow, Marker, MARKERS, PALETTE,
};
use super::text::{dr, draw_header, header_lines, plural, scale_factor, Ink};
use super::ticks::{padded_range, to_plot};
use super::{ChartSpec, CurveStyle, Px};

#[derive(Debug, Clone, Copy)]
pub(super) struct PPoint {
    pub(super) x: f64,
    /// Lower band end; `None` when it was `<= 0` on a log axis (clipped).
    pub(super) lo: Option<f64>,
    pub(super) mid: f64,
    pub(super) hi: f64,
    pub(super) censored: bool,
}

#[derive(Debug, Clone)]
pub(super) struct PSeries {
    pub(super) label: String,
    pub(super) color: RGBColor,
    pub(super) marker: Marker,
    pub(super) points: Vec<PPoint>,
}

#[derive(Debug, Clone)]
pub(super) struct PCurve {
    pub(super) style: CurveStyle,
    pub(super) points: Vec<(f64, f64)>,
}

#[derive(Debug, Clone)]
pub(super) struct PreparedChart {
    pub(super) series: Vec<PSeries>,
    pub(super) curves: Vec<PCurve>,
    /// Which input points are drawn: `series_plotted[i][j]` for point `j` of
    /// series `i`.
    pub(super) series_plotted: Vec<Vec<bool>>,
    pub(super) curve_plotted: Vec<Vec<bool>>,
    pub(super) x_range: (f64, f64),
    pub(super) y_range: (f64, f64),
    pub(super) any_censored: bool,
    pub(super) notes: Vec<String>,
}

pub(super) fn prepare_chart(spec: &ChartSpec) -> PreparedChart {
    let mut x_dropped = 0usize;
    let mut y_dropped = 0usize;
    let mut non_finite = 0usize;
    let mut band_clipped = 0usize;
    let mut series = Vec::new();
    let mut series_plotted = Vec::new();
    let mut any_censored = false;
    for (i, s) in spec.series.iter().enumerate() {
        let mut points = Vec::new();
        let mut plotted = Vec::new();
        for p in &s.points {
            let finite =
                p.x.is_finite() && p.min.is_finite() && p.median.is_finite() && p.max.is_finite();
            if !finite {
                non_finite += 1;
                plotted.push(false);
                continue;
            }
            let Some(x) = to_plot(spec.x_scale, p.x) else {
                x_dropped += 1;
                plotted.push(false);
                continue;
            };
            let Some(mid) = to_plot(spec.y_scale, p.median) else {
                y_dropped += 1;
                plotted.push(false);
                continue;
            };
            let lo = to_plot(spec.y_scale, p.min.min(p.median));
            if lo.is_none() {
                band_clipped += 1;
            }
            let hi = to_plot(spec.y_scale, p.max.max(p.median)).unwrap_or(mid);
            any_censored |= p.censored;
            points.push(PPoint {
                x,
                lo,
                mid,
                hi,
                censored: p.censored,
            });
            plotted.push(true);
        }
        points.sort_by(|a, b| a.x.total_cmp(&b.x));
        series.push(PSeries {
            label: s.label.clone(),
            color: PALETTE[i % PALETTE.len()],
            marker: MARKERS[i % MARKERS.len()],
            points,
        });
        series_plotted.push(plotted);
    }
    let mut curves = Vec::new();
    let mut curve_plotted = Vec::new();
    for c in &spec.curves {
        let mut points = Vec::new();
        let mut plotted = Vec::new();
        for &(x, y) in &c.points {
            if !(x.is_finite() && y.is_finite()) {
                non_finite += 1;
                plotted.push(false);
                continue;
            }
            let Some(px) = to_plot(spec.x_scale, x) else {
                x_dropped += 1;
                plotted.push(false);
                continue;
            };
            let Some(py) = to_plot(spec.y_scale, y) else {
                y_dropped += 1;
                plotted.push(false);
                continue;
            };
            points.push((px, py));
            plotted.push(true);
        }
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        curves.push(PCurve {
            style: c.style,
            points,
        });
        curve_plotted.push(plotted);
    }

    let mut xs = Vec::new();
    let mut ys = Vec::new();
    for s in &series {
        for p in &s.points {
            xs.push(p.x);
            ys.push(p.mid);
            ys.push(p.hi);
            if let Some(lo) = p.lo {
                ys.push(lo);
            }
        }
    }
    for c in &curves {
        for &(x, y) in &c.points {
            xs.push(x);
            ys.push(y);
        }
    }

    let mut notes = Vec::new();
    if x_dropped > 0 {
        notes.push(format!(
            "{} with x ≤ 0 dropped from the log x axis",
            plural(x_dropped, "point", "points")
        ));
    }
    if y_dropped > 0 {
        notes.push(format!(
            "{} with y ≤ 0 dropped from the log y axis",
            plural(y_dropped, "point", "points")
        ));
    }
    if band_clipped > 0 {
        notes.push(format!(
            "{} with min ≤ 0 clipped at the bottom of the log y axis",
            plural(band_clipped, "band", "bands")
        ));
    }
    if non_finite > 0 {
        notes.push(format!(
            "{} with non-finite values dropped",
            plural(non_finite, "point", "points")
        ));
    }
    if xs.is_empty() {
        notes.push("nothing to plot: the chart has no drawable data points".into());
    }
    PreparedChart {
        series,
        curves,
        series_plotted,
        curve_plotted,
        x_range: padded_range(&xs, spec.x_scale),
        y_range: padded_range(&ys, spec.y_scale),
        any_censored,
        notes,
    }
}

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
        paint_chart(root, ink, self.spec, self.data)
    }
}

pub(super) fn paint_chart<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    spec: &ChartSpec,
    data: &PreparedChart,
) -> Result<(), String> {
    let (w, h) = root.dim_in_pixel();
    let sz = Sizes::new(scale_factor(w, h));
    let (w, h) = (w as i32, h as i32);
    root.fill(&WHITE).map_err(dr)?;
    let lines = header_lines(&spec.title, spec.subtitle.as_deref(), &data.notes, w, sz.s);
    let header_h = draw_header(root, ink, &lines, sz.px(10.0), w)? + sz.px(4.0);
    let body = root
        .clone()
        .shrink((0, header_h), (w, (h - header_h).max(10)));
    let (bw, bh) = body.dim_in_pixel();

    let x_area = x_label_area(&spec.x_label, &sz);
    let est_plot_h = f64::from(bh as i32 - x_area - sz.px(16.0)).max(40.0);
    let mut ya = plan_axis(spec.y_scale, data.y_range, est_plot_h, false, &sz);
    let mut y_area = y_label_area(&ya, &spec.y_label, &sz);
    let est_plot_w = f64::from(bw as i32 - y_area - sz.px(38.0)).max(40.0);
    let xa = plan_axis(spec.x_scale, data.x_range, est_plot_w, true, &sz);

    let mut chart = build_chart(&body, &xa, &ya, x_area, y_area, &sz)?;
    let mut entries = legend_entries(spec, data);
    let plot = chart.plotting_area().get_pixel_range();
    let plot_w = plot.0.end - plot.0.start;
    let layout = legend_layout(&mut entries, (f64::from(plot_w) * 0.45) as i32, &sz);
    let margin = sz.px(10.0);
    let mut corner = (plot.0.start + margin, plot.1.start + margin);
    if !entries.is_empty() {
        let samples = data_samples(&chart, data, ya.lo);
        let (c, hidden) = choose_corner(&plot, layout.w, layout.h, margin, &samples);
        corner = c;
        let plot_h = f64::from(plot.1.end - plot.1.start);
        let need = f64::from(layout.h + 2 * margin);
        if hidden > 0 && need < 0.45 * plot_h {
            // Make room above the data and put the legend there.
            let new_hi = ya.lo + (ya.hi - ya.lo) * plot_h / (plot_h - need);
            ya = plan_axis(spec.y_scale, (ya.lo, new_hi), est_plot_h, false, &sz);
            y_area = y_label_area(&ya, &spec.y_label, &sz);
            chart = build_chart(&body, &xa, &ya, x_area, y_area, &sz)?;
            let plot = chart.plotting_area().get_pixel_range();
            let samples = data_samples(&chart, data, ya.lo);
            corner = choose_corner(&plot, layout.w, layout.h, margin, &samples).0;
        }
    }

    draw_mesh(&mut chart, &sz)?;
    let to_px = |x: f64, y: f64| -> Px { chart.backend_coord(&(x, y)) };
    draw_axis_text(
        root,
        ink,
        &chart.plotting_area().get_pixel_range(),
        (&xa, &ya),
        (&spec.x_label, &spec.y_label),
        (x_area, y_area),
        &to_px,
        &sz,
    )?;

    let y_floor = ya.lo;
    let line_w = (2.0 * sz.s).round().max(1.0) as u32;

    // Bands.
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

    // Median lines, then the bound curves (so a method that meets a bound does not
    // hide it), then markers on top.
    for s in &data.series {
        if s.points.len() >= 2 {
            let pts: Vec<Px> = s.points.iter().map(|p| to_px(p.x, p.mid)).collect();
            root.draw(&PathElement::new(pts, s.color.stroke_width(line_w)))
                .map_err(dr)?;
        }
    }
    for c in &data.curves {
        let (color, width, dash) = curve_look(c.style, sz.s);
        let pts: Vec<(f64, f64)> = c
            .points
            .iter()
            .map(|&(x, y)| {
                let p = to_px(x, y);
                (f64::from(p.0), f64::from(p.1))
            })
            .collect();
        draw_styled_path(root, &pts, color, width, dash)?;
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

    if !entries.is_empty() {
        draw_legend(root, ink, &entries, &layout, corner, &sz)?;
    }
    Ok(())
}
