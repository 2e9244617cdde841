//! The picture of a two-dimensional game: preparation (valid boxes, queries and cuts,
//! the zoom window), clipping helpers, the layout of one or two panels and the legend
//! row (the panels themselves are drawn in `game_panel.rs`).

use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::{PathElement, Rectangle};
use plotters::style::text_anchor::{HPos, VPos};
use plotters::style::{Color, RGBColor, WHITE};

use super::axes::Sizes;
use super::game_panel::{draw_query_dot, panel_layout, Panel, PanelLayout};
use super::output::Painter;
use super::style::TEXT;
use super::text::{
    dr, draw_header, header_lines, label, plural, put_text, scale_factor, text_size, Ink,
};
use super::{Cut2d, Game2d, MAX_NUMBERED_QUERIES};

pub(super) const BOX_BLUE: RGBColor = RGBColor(0, 114, 178);

pub(super) const FINAL_FILL: RGBColor = RGBColor(230, 159, 0);

pub(super) const FINAL_EDGE: RGBColor = RGBColor(213, 94, 0);

pub(super) const CUT_RED: RGBColor = RGBColor(200, 40, 30);

#[derive(Debug, Clone)]
pub(super) struct PreparedGame {
    pub(super) r: f64,
    /// Valid boxes, in order.
    pub(super) boxes: Vec<[f64; 4]>,
    /// Valid queries with their 0-based index in the input.
    pub(super) queries: Vec<(usize, [f64; 2])>,
    /// Valid cuts.
    pub(super) cuts: Vec<Cut2d>,
    /// Zoom window `(x_lo, x_hi, y_lo, y_hi)`, when the final box is small.
    pub(super) zoom: Option<[f64; 4]>,
    pub(super) notes: Vec<String>,
}

pub(super) fn prepare_game(game: &Game2d) -> PreparedGame {
    let r = game.half_width;
    let mut notes = Vec::new();
    let boxes: Vec<[f64; 4]> = game
        .boxes
        .iter()
        .copied()
        .filter(|b| b.iter().all(|v| v.is_finite()) && b[0] <= b[1] && b[2] <= b[3])
        .collect();
    if boxes.len() < game.boxes.len() {
        notes.push(format!(
            "{} with non-finite or reversed bounds not drawn",
            plural(game.boxes.len() - boxes.len(), "box", "boxes")
        ));
    }
    let queries: Vec<(usize, [f64; 2])> = game
        .queries
        .iter()
        .copied()
        .enumerate()
        .filter(|(_, q)| q[0].is_finite() && q[1].is_finite())
        .collect();
    if queries.len() < game.queries.len() {
        notes.push(format!(
            "{} with non-finite coordinates not drawn",
            plural(game.queries.len() - queries.len(), "query", "queries")
        ));
    }
    let cuts: Vec<Cut2d> = game
        .cuts
        .iter()
        .copied()
        .filter(|c| {
            c.offset.is_finite()
                && c.normal.iter().all(|v| v.is_finite())
                && (c.normal[0] != 0.0 || c.normal[1] != 0.0)
        })
        .collect();
    if cuts.len() < game.cuts.len() {
        notes.push(format!(
            "{} with a zero or non-finite normal not drawn",
            plural(game.cuts.len() - cuts.len(), "cut", "cuts")
        ));
    }
    if game.queries.len() > MAX_NUMBERED_QUERIES {
        notes.push(format!(
            "only the first {MAX_NUMBERED_QUERIES} of {} queries are numbered; the CSV lists all",
            game.queries.len()
        ));
    }
    let zoom = boxes.last().and_then(|b| {
        let side = (b[1] - b[0]).max(b[3] - b[2]);
        if side >= 0.12 * 2.0 * r {
            return None;
        }
        let mut half = 2.0 * side;
        if half <= r * 1e-12 {
            half = r * 0.01;
        }
        // Centre on the final box, but keep the window inside the square
        // (give or take a sliver, so that a border stays visible).
        let limit = r + 0.04 * half;
        let centre = |c: f64| {
            if half >= limit {
                c
            } else {
                c.clamp(-limit + half, limit - half)
            }
        };
        let (cx, cy) = (centre((b[0] + b[1]) / 2.0), centre((b[2] + b[3]) / 2.0));
        Some([cx - half, cx + half, cy - half, cy + half])
    });
    PreparedGame {
        r,
        boxes,
        queries,
        cuts,
        zoom,
        notes,
    }
}

pub(super) fn label_notes_for(data: &PreparedGame, shown: &[bool]) -> Vec<String> {
    let numbered = data
        .queries
        .iter()
        .filter(|(i, _)| *i < MAX_NUMBERED_QUERIES)
        .count();
    let hidden = data
        .queries
        .iter()
        .filter(|(i, _)| *i < MAX_NUMBERED_QUERIES && !shown.get(*i).copied().unwrap_or(false))
        .count();
    if hidden > 0 && numbered > 0 {
        vec![format!(
            "{} of {numbered} query numbers left out where they would overlap; the CSV lists all",
            hidden
        )]
    } else {
        Vec::new()
    }
}

/// The segment of the line `{y : n . y = c}` inside the rectangle
/// `(x_lo, x_hi, y_lo, y_hi)`, if the line crosses it.
pub(super) fn clip_line(normal: [f64; 2], offset: f64, rect: [f64; 4]) -> Option<[(f64, f64); 2]> {
    let [x0, x1, y0, y1] = rect;
    let [a, b] = normal;
    let tol = 1e-12 * (x1 - x0).abs().max(y1 - y0).max(f64::MIN_POSITIVE);
    let mut pts: Vec<(f64, f64)> = Vec::new();
    if a.abs() > 0.0 {
        for y in [y0, y1] {
            let x = (offset - b * y) / a;
            if x.is_finite() && x >= x0 - tol && x <= x1 + tol {
                pts.push((x.clamp(x0, x1), y));
            }
        }
    }
    if b.abs() > 0.0 {
        for x in [x0, x1] {
            let y = (offset - a * x) / b;
            if y.is_finite() && y >= y0 - tol && y <= y1 + tol {
                pts.push((x, y.clamp(y0, y1)));
            }
        }
    }
    let mut best: Option<[(f64, f64); 2]> = None;
    let mut best_d = 0.0;
    for i in 0..pts.len() {
        for j in (i + 1)..pts.len() {
            let d = (pts[i].0 - pts[j].0).powi(2) + (pts[i].1 - pts[j].1).powi(2);
            if d > best_d {
                best_d = d;
                best = Some([pts[i], pts[j]]);
            }
        }
    }
    best
}

/// The parts of the edges of box `b` that lie inside the window `win` (both
/// `(x_lo, x_hi, y_lo, y_hi)`), so that clipping adds no false edges.
pub(super) fn visible_edges(b: [f64; 4], win: [f64; 4]) -> Vec<[(f64, f64); 2]> {
    let [x0, x1, y0, y1] = b;
    let sides = [
        [x0, x1, y0, y0],
        [x0, x1, y1, y1],
        [x0, x0, y0, y1],
        [x1, x1, y0, y1],
    ];
    sides
        .into_iter()
        .filter_map(|seg| intersect(seg, win))
        .map(|v| [(v[0], v[2]), (v[1], v[3])])
        .collect()
}

pub(super) fn intersect(a: [f64; 4], b: [f64; 4]) -> Option<[f64; 4]> {
    let r = [
        a[0].max(b[0]),
        a[1].min(b[1]),
        a[2].max(b[2]),
        a[3].min(b[3]),
    ];
    (r[0] <= r[1] && r[2] <= r[3]).then_some(r)
}

pub(super) struct GamePainter<'a> {
    pub(super) game: &'a Game2d,
    pub(super) data: &'a PreparedGame,
    pub(super) extra_notes: &'a [String],
}

impl Painter for GamePainter<'_> {
    fn paint<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
    ) -> Result<(), String> {
        self.paint_game(root, ink).map(|_| ())
    }
}

/// A game-picture legend item.
pub(super) enum GameKey {
    Box,
    Final,
    Cut,
    Query,
}

impl GamePainter<'_> {
    /// Paints the picture; returns, per input query, whether its number is
    /// shown in some panel.
    pub(super) fn paint_game<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
    ) -> Result<Vec<bool>, String> {
        let (w, h) = root.dim_in_pixel();
        let s = scale_factor(w, h);
        let sz = Sizes::new(s);
        let (w, h) = (w as i32, h as i32);
        root.fill(&WHITE).map_err(dr)?;

        let mut notes = self.data.notes.clone();
        notes.extend(self.extra_notes.iter().cloned());
        let title_lines = header_lines(&self.game.title, None, &[], w, s);
        let mut y = draw_header(root, ink, &title_lines, sz.px(10.0), w)?;
        y = self.draw_game_legend(root, ink, y, w, &sz)?;
        let note_lines = header_lines("", None, &notes, w, s);
        y = draw_header(root, ink, &note_lines, y, w)?;
        let top = y + sz.px(4.0);
        let body_h = (h - top).max(10);

        let r = self.data.r;
        let full = [-r * 1.04, r * 1.04, -r * 1.04, r * 1.04];
        let mut panels = Vec::new();
        let side_by_side = w >= body_h;
        let two = self.data.zoom.is_some() && {
            let (pw, ph) = if side_by_side {
                (w / 2, body_h)
            } else {
                (w, body_h / 2)
            };
            pw.min(ph) >= 200
        };
        match (self.data.zoom, two) {
            (Some(zoom), true) => {
                let factor = (2.0 * r) / (zoom[1] - zoom[0]);
                let (a, b) = if side_by_side {
                    ((0, top, w / 2, body_h), (w / 2, top, w - w / 2, body_h))
                } else {
                    (
                        (0, top, w, body_h / 2),
                        (0, top + body_h / 2, w, body_h - body_h / 2),
                    )
                };
                panels.push(Panel {
                    rect: a,
                    window: full,
                    title: format!("whole square [-{}, {}]²", fmt_short(r), fmt_short(r)),
                    mark: Some(zoom),
                });
                panels.push(Panel {
                    rect: b,
                    window: zoom,
                    title: format!("zoom ×{} around the final box", fmt_factor(factor)),
                    mark: None,
                });
            }
            _ => panels.push(Panel {
                rect: (0, top, w, body_h),
                window: full,
                title: format!("the square [-{}, {}]²", fmt_short(r), fmt_short(r)),
                mark: None,
            }),
        }
        // One layout for all panels, so that they line up.
        let layouts: Vec<PanelLayout> = panels.iter().map(|p| panel_layout(p, &sz)).collect();
        let side = layouts.iter().map(|l| l.side).min().unwrap_or(20);
        let mut shown = vec![false; self.game.queries.len()];
        for (panel, layout) in panels.iter().zip(layouts) {
            let layout = PanelLayout { side, ..layout };
            self.draw_panel(root, ink, panel, &layout, &sz, &mut shown)?;
        }
        Ok(shown)
    }

    fn draw_game_legend<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
        y: i32,
        w: i32,
        sz: &Sizes,
    ) -> Result<i32, String> {
        let items = [
            (GameKey::Box, "alive box after each answer (darker = later)"),
            (GameKey::Final, "final alive box"),
            (GameKey::Cut, "cut boundary"),
            (GameKey::Query, "query, numbered in order"),
        ];
        let em = 14.5 * sz.s;
        let swatch = sz.px(26.0);
        let gap = sz.px(7.0);
        let spacing = sz.px(24.0);
        let row_h = sz.px(24.0);
        let widths: Vec<i32> = items
            .iter()
            .map(|(_, t)| swatch + gap + text_size(em, t).0)
            .collect();
        // Flow the items into centred rows.
        let max_w = w - sz.px(30.0);
        let mut rows: Vec<Vec<usize>> = vec![Vec::new()];
        let mut row_w = 0;
        for (i, iw) in widths.iter().enumerate() {
            let add = if row_w == 0 { *iw } else { spacing + iw };
            if row_w > 0 && row_w + add > max_w {
                rows.push(Vec::new());
                row_w = *iw;
            } else {
                row_w += add;
            }
            if let Some(row) = rows.last_mut() {
                row.push(i);
            }
        }
        let half = sz.px(8.0);
        let thick = sz.px(2.0).max(1) as u32;
        let mut yc = y + row_h / 2;
        for row in &rows {
            let total: i32 = row.iter().map(|i| widths[*i]).sum::<i32>()
                + spacing * (row.len() as i32 - 1).max(0);
            let mut x = (w - total) / 2;
            for &i in row {
                let (key, text) = &items[i];
                let swatch_rect = [(x, yc - half), (x + swatch, yc + half)];
                match key {
                    GameKey::Box => {
                        let fill = BOX_BLUE.mix(0.25).filled();
                        root.draw(&Rectangle::new(swatch_rect, fill)).map_err(dr)?;
                        let edge = BOX_BLUE.mix(0.6).stroke_width(1);
                        root.draw(&Rectangle::new(swatch_rect, edge)).map_err(dr)?;
                    }
                    GameKey::Final => {
                        let fill = FINAL_FILL.mix(0.55).filled();
                        root.draw(&Rectangle::new(swatch_rect, fill)).map_err(dr)?;
                        let edge = FINAL_EDGE.stroke_width(thick);
                        root.draw(&Rectangle::new(swatch_rect, edge)).map_err(dr)?;
                    }
                    GameKey::Cut => {
                        let line = CUT_RED.mix(0.8).stroke_width(thick);
                        let pts = vec![(x, yc + half), (x + swatch, yc - half)];
                        root.draw(&PathElement::new(pts, line)).map_err(dr)?;
                    }
                    GameKey::Query => draw_query_dot(root, (x + swatch / 2, yc), sz)?,
                }
                let l = label(em, TEXT, HPos::Left, VPos::Center);
                put_text(root, ink, text, (x + swatch + gap, yc), l)?;
                x += widths[i] + spacing;
            }
            yc += row_h;
        }
        Ok(y + row_h * rows.len() as i32 + sz.px(4.0))
    }
}

pub(super) fn fmt_short(v: f64) -> String {
    let text = format!("{v:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text.is_empty() {
        "0".into()
    } else {
        text.to_string()
    }
}

pub(super) fn fmt_factor(f: f64) -> String {
    if f >= 100.0 {
        format!("{f:.0}")
    } else {
        format!("{f:.1}")
    }
}
