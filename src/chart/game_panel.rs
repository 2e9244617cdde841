//! One panel of a game picture (the whole square or the zoom): boxes, cuts, the zoom
//! outline and numbered queries placed where they hide nothing.

use plotters::backend::DrawingBackend;
use plotters::chart::ChartBuilder;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{Circle, PathElement, Rectangle};
use plotters::style::text_anchor::{HPos, VPos};
use plotters::style::{Color, RGBColor, WHITE};

use super::axes::{
    draw_axis_text, draw_mesh, x_label_area, y_label_area, AxisPlan, Sizes, TickAxis,
};
use super::game::{
    clip_line, intersect, visible_edges, GamePainter, BOX_BLUE, CUT_RED, FINAL_EDGE, FINAL_FILL,
};
use super::style::{draw_styled_path, AXIS, BLACK, MUTED, TEXT};
use super::text::{dr, label, put_text, text_size, Ink};
use super::ticks::fit_ticks;
use super::{Px, Scale, MAX_NUMBERED_QUERIES};

pub(super) struct Panel {
    /// `(x, y, width, height)` in pixels.
    pub(super) rect: (i32, i32, i32, i32),
    /// The view `(x_lo, x_hi, y_lo, y_hi)`.
    pub(super) window: [f64; 4],
    pub(super) title: String,
    /// The zoom window to outline (whole-square panel only).
    pub(super) mark: Option<[f64; 4]>,
}

/// Sizes of a game panel's parts, in pixels.
pub(super) struct PanelLayout {
    pub(super) title_h: i32,
    pub(super) x_area: i32,
    pub(super) y_area: i32,
    pub(super) side: i32,
    pub(super) margins: (i32, i32, i32, i32),
}

/// Sizes of a panel's title, label areas and (square) plot side.
pub(super) fn panel_layout(panel: &Panel, sz: &Sizes) -> PanelLayout {
    let (_, _, pw, ph) = panel.rect;
    let win = panel.window;
    let margins = (sz.px(6.0), sz.px(24.0), sz.px(8.0), sz.px(4.0));
    let (ml, mr, mt, mb) = margins;
    let title_h = (16.0 * sz.s * 1.4).round() as i32 + sz.px(4.0);
    let x_area = x_label_area("y₁", sz);
    let provisional = f64::from((ph - title_h - x_area - mt - mb).max(40));
    let ya = AxisPlan {
        lo: win[2],
        hi: win[3],
        ticks: fit_ticks(
            Scale::Linear,
            false,
            win[2],
            win[3],
            provisional,
            false,
            sz.tick,
        ),
    };
    let y_area = y_label_area(&ya, "y₂", sz);
    let side = (pw - y_area - ml - mr)
        .min(ph - title_h - x_area - mt - mb)
        .max(20);
    PanelLayout {
        title_h,
        x_area,
        y_area,
        side,
        margins,
    }
}

pub(super) fn overlaps(a: &[i32; 4], b: &[i32; 4]) -> bool {
    a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]
}

pub(super) fn draw_query_dot<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: Px,
    sz: &Sizes,
) -> Result<(), String> {
    let r = sz.px(4.0).max(3);
    root.draw(&Circle::new(c, r + 1, WHITE.filled()))
        .map_err(dr)?;
    root.draw(&Circle::new(c, r, BLACK.filled())).map_err(dr)?;
    Ok(())
}

impl GamePainter<'_> {
    /// Draws one panel: the square or the zoom window, with its boxes, cuts and numbered queries.
    pub(super) fn draw_panel<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
        panel: &Panel,
        layout: &PanelLayout,
        sz: &Sizes,
        shown: &mut [bool],
    ) -> Result<(), String> {
        let (px, py, pw, ph) = panel.rect;
        let win = panel.window;
        let (ml, mr, mt, mb) = layout.margins;
        let side = layout.side;
        let used_w = layout.y_area + ml + mr + side;
        let used_h = layout.title_h + layout.x_area + mt + mb + side;
        // Centre the panel's contents in its rectangle.
        let left = px + (pw - used_w).max(0) / 2;
        let top = py + (ph - used_h).max(0) / 2;
        let title_em = 16.0 * sz.s;
        put_text(
            root,
            ink,
            &panel.title,
            (left + layout.y_area + ml + side / 2, top + sz.px(2.0)),
            label(title_em, MUTED, HPos::Center, VPos::Top),
        )?;
        let xa = AxisPlan {
            lo: win[0],
            hi: win[1],
            ticks: fit_ticks(
                Scale::Linear,
                false,
                win[0],
                win[1],
                f64::from(side),
                true,
                sz.tick,
            ),
        };
        let ya = AxisPlan {
            lo: win[2],
            hi: win[3],
            ticks: fit_ticks(
                Scale::Linear,
                false,
                win[2],
                win[3],
                f64::from(side),
                false,
                sz.tick,
            ),
        };
        let area = root.clone().shrink(
            (left, top + layout.title_h),
            (
                (used_w).max(1) as u32,
                (used_h - layout.title_h).max(1) as u32,
            ),
        );
        let mut chart = ChartBuilder::on(&area)
            .margin_top(mt)
            .margin_left(ml)
            .margin_right(mr)
            .margin_bottom(mb)
            .x_label_area_size(layout.x_area)
            .y_label_area_size(layout.y_area)
            .build_cartesian_2d(TickAxis::new(&xa), TickAxis::new(&ya))
            .map_err(dr)?;
        draw_mesh(&mut chart, sz)?;
        let plot = chart.plotting_area().get_pixel_range();
        let to_px = |x: f64, y: f64| -> Px { chart.backend_coord(&(x, y)) };
        draw_axis_text(
            root,
            ink,
            &plot,
            (&xa, &ya),
            ("y₁", "y₂"),
            (layout.x_area, layout.y_area),
            &to_px,
            sz,
        )?;
        let rect_px = |b: [f64; 4]| [to_px(b[0], b[3]), to_px(b[1], b[2])];
        let thick = sz.px(2.0).max(1) as u32;

        // The square.
        let r = self.data.r;
        let square = [-r, r, -r, r];
        if let Some(v) = intersect(square, win) {
            root.draw(&Rectangle::new(
                rect_px(v),
                RGBColor(250, 250, 250).filled(),
            ))
            .map_err(dr)?;
        }

        // Alive boxes: the same faint fill for each, so that nested boxes get
        // darker (at most about 45% opaque in all); the final box on top.
        let n = self.data.boxes.len();
        let alpha = if n > 1 {
            1.0 - 0.55f64.powf(1.0 / (n - 1) as f64)
        } else {
            0.2
        };
        for (i, b) in self.data.boxes.iter().enumerate() {
            let Some(v) = intersect(*b, win) else {
                continue;
            };
            if i + 1 == n {
                root.draw(&Rectangle::new(rect_px(v), WHITE.filled()))
                    .map_err(dr)?;
                root.draw(&Rectangle::new(rect_px(v), FINAL_FILL.mix(0.55).filled()))
                    .map_err(dr)?;
                let edge = FINAL_EDGE.stroke_width(sz.px(3.0).max(2) as u32);
                for [p, q] in visible_edges(*b, win) {
                    root.draw(&PathElement::new(
                        vec![to_px(p.0, p.1), to_px(q.0, q.1)],
                        edge,
                    ))
                    .map_err(dr)?;
                }
                let [a, c] = rect_px(v);
                if (c.0 - a.0).max(c.1 - a.1) < sz.px(12.0) {
                    // Too small to see: ring it.
                    let centre = ((a.0 + c.0) / 2, (a.1 + c.1) / 2);
                    let ring = FINAL_EDGE.stroke_width(thick);
                    root.draw(&Circle::new(centre, sz.px(13.0), ring))
                        .map_err(dr)?;
                }
            } else {
                root.draw(&Rectangle::new(rect_px(v), BOX_BLUE.mix(alpha).filled()))
                    .map_err(dr)?;
                let edge = BOX_BLUE.mix(0.5).stroke_width(1);
                for [p, q] in visible_edges(*b, win) {
                    root.draw(&PathElement::new(
                        vec![to_px(p.0, p.1), to_px(q.0, q.1)],
                        edge,
                    ))
                    .map_err(dr)?;
                }
            }
        }

        // The border of the square, where visible.
        for [p, q] in visible_edges(square, win) {
            root.draw(&PathElement::new(
                vec![to_px(p.0, p.1), to_px(q.0, q.1)],
                AXIS.stroke_width(thick),
            ))
            .map_err(dr)?;
        }

        // Cuts.
        for c in &self.data.cuts {
            if let Some([p, q]) = clip_line(c.normal, c.offset, win) {
                root.draw(&PathElement::new(
                    vec![to_px(p.0, p.1), to_px(q.0, q.1)],
                    CUT_RED.mix(0.7).stroke_width(thick),
                ))
                .map_err(dr)?;
            }
        }

        // Numbers avoid each other, the query dots and the zoom window (whose
        // queries are numbered in the zoom panel).
        let mut obstacles: Vec<[i32; 4]> = Vec::new();
        let number_em = 14.0 * sz.s;
        let within = |q: &[f64; 2], b: &[f64; 4]| {
            q[0] >= b[0] && q[0] <= b[1] && q[1] >= b[2] && q[1] <= b[3]
        };
        let dot_r = sz.px(4.0).max(3);
        let visible: Vec<(usize, [f64; 2], Px)> = self
            .data
            .queries
            .iter()
            .filter(|(_, q)| within(q, &win))
            .map(|(i, q)| (*i, *q, to_px(q[0], q[1])))
            .collect();
        for (_, _, c) in &visible {
            obstacles.push([c.0 - dot_r, c.1 - dot_r, c.0 + dot_r, c.1 + dot_r]);
        }
        if let Some(m) = panel.mark {
            let [a, c] = rect_px(m);
            let a0 = (a.0.max(plot.0.start), a.1.max(plot.1.start));
            let c0 = (c.0.min(plot.0.end), c.1.min(plot.1.end));
            let outline = [a0, (c0.0, a0.1), c0, (a0.0, c0.1), a0];
            let pts: Vec<(f64, f64)> = outline
                .iter()
                .map(|p| (f64::from(p.0), f64::from(p.1)))
                .collect();
            let dash = [6.0 * sz.s, 4.0 * sz.s];
            draw_styled_path(root, &pts, TEXT, thick, &dash)?;
            obstacles.push([a0.0 - 2, a0.1 - 2, c0.0 + 2, c0.1 + 2]);
            let (tw, th) = text_size(number_em, "zoom");
            let gap = sz.px(4.0);
            let candidates = [
                (c0.0 + gap, a0.1 - th - gap),
                (a0.0 - tw - gap, a0.1 - th - gap),
                (c0.0 + gap, c0.1 + gap),
                (a0.0 - tw - gap, c0.1 + gap),
                ((a0.0 + c0.0 - tw) / 2, a0.1 - th - 2 * gap),
                ((a0.0 + c0.0 - tw) / 2, c0.1 + 2 * gap),
                (c0.0 + 2 * gap, (a0.1 + c0.1 - th) / 2),
                (a0.0 - tw - 2 * gap, (a0.1 + c0.1 - th) / 2),
            ];
            let boxed = |x: i32, y: i32| [x - 2, y - 2, x + tw + 2, y + th + 3];
            let inside_plot = |b: &[i32; 4]| {
                b[0] >= plot.0.start
                    && b[2] <= plot.0.end
                    && b[1] >= plot.1.start
                    && b[3] <= plot.1.end
            };
            // The label goes only where it hides nothing; the dashed outline
            // and the panel titles say enough without it.
            let spot = candidates.iter().copied().find(|&(x, y)| {
                let b = boxed(x, y);
                inside_plot(&b) && !obstacles.iter().any(|o| overlaps(o, &b))
            });
            if let Some(spot) = spot {
                let bg = boxed(spot.0, spot.1);
                root.draw(&Rectangle::new(
                    [(bg[0], bg[1]), (bg[2], bg[3])],
                    WHITE.mix(0.85).filled(),
                ))
                .map_err(dr)?;
                let l = label(number_em, TEXT, HPos::Left, VPos::Top);
                put_text(root, ink, "zoom", spot, l)?;
                obstacles.push(bg);
            }
        }
        for (_, _, c) in &visible {
            draw_query_dot(root, *c, sz)?;
        }
        let d = sz.px(4.0);
        for (i, q, c) in &visible {
            let in_zoom = panel.mark.is_some_and(|m| within(q, &m));
            if *i >= MAX_NUMBERED_QUERIES || in_zoom {
                continue;
            }
            let text = format!("{}", i + 1);
            let (tw, th) = text_size(number_em, &text);
            let candidates = [
                (c.0 + d, c.1 - d - th),
                (c.0 + d, c.1 + d),
                (c.0 - d - tw, c.1 - d - th),
                (c.0 - d - tw, c.1 + d),
                (c.0 - tw / 2, c.1 - d - th - dot_r),
                (c.0 - tw / 2, c.1 + d + dot_r),
                (c.0 + d + dot_r, c.1 - th / 2),
                (c.0 - d - dot_r - tw, c.1 - th / 2),
            ];
            let boxed = |x: i32, y: i32| [x - 2, y - 1, x + tw + 2, y + th + 2];
            let spot = candidates.iter().copied().find(|&(x, y)| {
                let bx = boxed(x, y);
                bx[0] >= plot.0.start
                    && bx[2] <= plot.0.end
                    && bx[1] >= plot.1.start
                    && bx[3] <= plot.1.end
                    && !obstacles.iter().any(|o| overlaps(o, &bx))
            });
            if let Some((x, y)) = spot {
                let bx = boxed(x, y);
                root.draw(&Rectangle::new(
                    [(bx[0], bx[1]), (bx[2], bx[3])],
                    WHITE.mix(0.8).filled(),
                ))
                .map_err(dr)?;
                let l = label(number_em, TEXT, HPos::Left, VPos::Top);
                put_text(root, ink, &text, (x, y), l)?;
                obstacles.push(bx);
                if let Some(flag) = shown.get_mut(*i) {
                    *flag = true;
                }
            }
        }
        Ok(())
    }
}
