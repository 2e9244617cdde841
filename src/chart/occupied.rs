//! What the data of a line chart cover on the picture, in pixels: sampled lines (median
//! lines, band edges, bound curves), the inside of every band, and the boxes of markers,
//! censoring arrows and flag marks. The legend goes only where none of this is.

use plotters::backend::DrawingBackend;
use plotters::chart::ChartContext;

use super::axes::Sizes;
use super::marker::{arrow_geometry, FLAG_REACH};
use super::prepare::PreparedChart;
use super::Coord2;

/// Pixels the data cover.
#[derive(Debug, Default)]
pub(super) struct Occupied {
    /// Sampled points of lines and band interiors, at most 3 pixels apart.
    pub(super) points: Vec<(f64, f64)>,
    /// Boxes `[x0, y0, x1, y1]` of markers, arrows and flag marks.
    pub(super) boxes: Vec<[f64; 4]>,
}

impl Occupied {
    /// Whether the rectangle `[x0, y0, x1, y1]`, grown by `margin` pixels, touches any
    /// covered pixel.
    pub(super) fn hits(&self, rect: [f64; 4], margin: f64) -> bool {
        let [x0, y0, x1, y1] = [
            rect[0] - margin,
            rect[1] - margin,
            rect[2] + margin,
            rect[3] + margin,
        ];
        self.points
            .iter()
            .any(|p| p.0 >= x0 && p.0 <= x1 && p.1 >= y0 && p.1 <= y1)
            || self
                .boxes
                .iter()
                .any(|b| b[0] <= x1 && x0 <= b[2] && b[1] <= y1 && y0 <= b[3])
    }
}

/// The pixels the data of `data` cover on `chart` (`y_floor`: where clipped band ends
/// are drawn).
pub(super) fn occupied(
    chart: &ChartContext<'_, impl DrawingBackend, Coord2>,
    data: &PreparedChart,
    y_floor: f64,
    sz: &Sizes,
) -> Occupied {
    let mut out = Occupied::default();
    let px = |x: f64, y: f64| {
        let (a, b) = chart.backend_coord(&(x, y));
        (f64::from(a), f64::from(b))
    };
    let step = 3.0;
    let r = f64::from(sz.marker) * 1.5 + 2.0;
    for s in &data.series {
        let mid: Vec<_> = s.points.iter().map(|p| px(p.x, p.mid)).collect();
        let hi: Vec<_> = s.points.iter().map(|p| px(p.x, p.hi)).collect();
        let lo: Vec<_> = s
            .points
            .iter()
            .map(|p| px(p.x, p.lo.unwrap_or(y_floor)))
            .collect();
        for line in [&mid, &hi, &lo] {
            sample_polyline(line, step, &mut out.points);
        }
        // The inside of the band: vertical strokes every few pixels between its edges.
        for i in 0..hi.len() {
            sample_polyline(&[hi[i], lo[i]], step, &mut out.points);
            if i + 1 < hi.len() {
                let columns = ((hi[i + 1].0 - hi[i].0).abs() / step)
                    .ceil()
                    .clamp(1.0, 4000.0);
                for k in 1..columns as usize {
                    let t = k as f64 / columns;
                    let at = |a: (f64, f64), b: (f64, f64)| {
                        (a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t)
                    };
                    sample_polyline(
                        &[at(hi[i], hi[i + 1]), at(lo[i], lo[i + 1])],
                        step,
                        &mut out.points,
                    );
                }
            }
        }
        // Whisker caps.
        let cap = f64::from(sz.px(5.0));
        for (h, l) in hi.iter().zip(&lo) {
            for y in [h.1, l.1] {
                out.boxes.push([h.0 - cap, y - 1.0, h.0 + cap, y + 1.0]);
            }
        }
        for (p, c) in s.points.iter().zip(&mid) {
            out.boxes.push([c.0 - r, c.1 - r, c.0 + r, c.1 + r]);
            if p.censored {
                let centre = (c.0.round() as i32, c.1.round() as i32);
                let (_, tip, _, head_w) = arrow_geometry(centre, sz.marker, sz.s);
                let w = f64::from(head_w) + 1.0;
                out.boxes
                    .push([c.0 - w, f64::from(tip) - 1.0, c.0 + w, c.1]);
            }
        }
        let reach = f64::from(sz.marker) * FLAG_REACH + 4.0;
        for &(x, y, _) in &s.flags {
            let c = px(x, y);
            out.boxes
                .push([c.0 - reach, c.1 - reach, c.0 + reach, c.1 + reach]);
        }
    }
    for c in &data.curves {
        let pts: Vec<_> = c.points.iter().map(|&(x, y)| px(x, y)).collect();
        sample_polyline(&pts, step, &mut out.points);
    }
    out
}

/// Points along a polyline at most `step` pixels apart (segment ends included).
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
