//! A line chart's data made ready to draw: values moved to plot space (logarithms on
//! log axes), points a log axis cannot show dropped with a note, each series' and
//! curve's fixed look resolved, flagged games placed, and series that coincide (and so
//! hide each other) found and named.

use plotters::style::RGBColor;

use super::marker::{Marker, MARKERS};
use super::style::{pattern_count, series_colors};
use super::text::plural;
use super::ticks::{padded_range, to_plot};
use super::{ChartSpec, CurveStyle, Flag};

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
    /// Flagged games in plot space.
    pub(super) flags: Vec<(f64, f64, Flag)>,
    /// The series drawn over this one with the same values everywhere, if any.
    pub(super) hidden_under: Option<String>,
}

#[derive(Debug, Clone)]
pub(super) struct PCurve {
    pub(super) style: CurveStyle,
    /// Variant of the style's dash patterns.
    pub(super) variant: usize,
    pub(super) points: Vec<(f64, f64)>,
}

/// A note on the picture: a problem with the data (red) or a reading aid (dark).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Note {
    pub(super) text: String,
    pub(super) problem: bool,
}

#[derive(Debug, Clone)]
pub(super) struct PreparedChart {
    pub(super) series: Vec<PSeries>,
    pub(super) curves: Vec<PCurve>,
    /// Which input points are drawn: `series_plotted[i][j]` for point `j` of
    /// series `i`.
    pub(super) series_plotted: Vec<Vec<bool>>,
    /// Which flagged games are drawn, per series.
    pub(super) flags_plotted: Vec<Vec<bool>>,
    pub(super) curve_plotted: Vec<Vec<bool>>,
    pub(super) x_range: (f64, f64),
    pub(super) y_range: (f64, f64),
    pub(super) any_censored: bool,
    /// The kinds of flagged game drawn, in legend order.
    pub(super) flags_drawn: Vec<Flag>,
    pub(super) notes: Vec<Note>,
}

/// Counts of input points a scale could not show.
#[derive(Default)]
struct Dropped {
    x: usize,
    y: usize,
    non_finite: usize,
}

impl Dropped {
    /// The plot-space point of `(x, y)`, or `None` (counted) when it cannot be drawn.
    fn place(&mut self, spec: &ChartSpec, x: f64, y: f64) -> Option<(f64, f64)> {
        if !(x.is_finite() && y.is_finite()) {
            self.non_finite += 1;
            return None;
        }
        let Some(px) = to_plot(spec.x_scale, x) else {
            self.x += 1;
            return None;
        };
        let Some(py) = to_plot(spec.y_scale, y) else {
            self.y += 1;
            return None;
        };
        Some((px, py))
    }
}

pub(super) fn prepare_chart(spec: &ChartSpec) -> PreparedChart {
    let mut dropped = Dropped::default();
    let mut band_clipped = 0usize;
    let mut series = Vec::new();
    let mut series_plotted = Vec::new();
    let mut flags_plotted = Vec::new();
    let mut any_censored = false;
    let mut flags_drawn: Vec<Flag> = Vec::new();
    for (i, s) in spec.series.iter().enumerate() {
        let mut points = Vec::new();
        let mut plotted = Vec::new();
        for p in &s.points {
            if !(p.min.is_finite() && p.max.is_finite()) {
                dropped.non_finite += 1;
                plotted.push(false);
                continue;
            }
            let Some((x, mid)) = dropped.place(spec, p.x, p.median) else {
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
        let mut flags = Vec::new();
        let mut shown = Vec::new();
        for f in &s.flagged {
            match dropped.place(spec, f.x, f.y) {
                Some((x, y)) => {
                    flags.push((x, y, f.flag));
                    if !flags_drawn.contains(&f.flag) {
                        flags_drawn.push(f.flag);
                    }
                    shown.push(true);
                }
                None => shown.push(false),
            }
        }
        let (color, marker) = series_colors(s.look.unwrap_or(i));
        series.push(PSeries {
            label: s.label.clone(),
            color,
            marker: MARKERS[marker],
            points,
            flags,
            hidden_under: None,
        });
        series_plotted.push(plotted);
        flags_plotted.push(shown);
    }
    flags_drawn.sort();
    let mut curves = Vec::new();
    let mut curve_plotted = Vec::new();
    let mut per_style: Vec<(CurveStyle, usize)> = Vec::new();
    for c in &spec.curves {
        let mut points = Vec::new();
        let mut plotted = Vec::new();
        for &(x, y) in &c.points {
            match dropped.place(spec, x, y) {
                Some(p) => {
                    points.push(p);
                    plotted.push(true);
                }
                None => plotted.push(false),
            }
        }
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let rank = match per_style.iter_mut().find(|(st, _)| *st == c.style) {
            Some((_, n)) => {
                *n += 1;
                *n - 1
            }
            None => {
                per_style.push((c.style, 1));
                0
            }
        };
        curves.push(PCurve {
            style: c.style,
            variant: c.look.unwrap_or(rank) % pattern_count(c.style),
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
        for &(x, y, _) in &s.flags {
            xs.push(x);
            ys.push(y);
        }
    }
    for c in &curves {
        for &(x, y) in &c.points {
            xs.push(x);
            ys.push(y);
        }
    }

    let mut notes = Vec::new();
    let mut problem = |text: String| {
        notes.push(Note {
            text,
            problem: true,
        })
    };
    if dropped.x > 0 {
        problem(format!(
            "{} with x ≤ 0 dropped from the log x axis",
            plural(dropped.x, "point", "points")
        ));
    }
    if dropped.y > 0 {
        problem(format!(
            "{} with y ≤ 0 dropped from the log y axis",
            plural(dropped.y, "point", "points")
        ));
    }
    if band_clipped > 0 {
        problem(format!(
            "{} with min ≤ 0 clipped at the bottom of the log y axis",
            plural(band_clipped, "band", "bands")
        ));
    }
    if dropped.non_finite > 0 {
        problem(format!(
            "{} with non-finite values dropped",
            plural(dropped.non_finite, "point", "points")
        ));
    }
    if xs.is_empty() {
        problem("nothing to plot: the chart has no drawable data points".into());
    }
    notes.extend(coincidences(spec, &mut series));
    PreparedChart {
        series,
        curves,
        series_plotted,
        flags_plotted,
        curve_plotted,
        x_range: padded_range(&xs, spec.x_scale),
        y_range: headroom(padded_range(&ys, spec.y_scale), any_censored),
        any_censored,
        flags_drawn,
        notes,
    }
}

/// Room at the top of the y range for the arrows of censored points (about 6% of the
/// plot's height), so that they stay inside the plot.
fn headroom(range: (f64, f64), any_censored: bool) -> (f64, f64) {
    if any_censored {
        (range.0, range.1 + 0.06 * (range.1 - range.0))
    } else {
        range
    }
}

/// Notes for series that the picture cannot tell apart: series with the same plotted
/// medians at the same x values (the later one is drawn over the earlier, which is then
/// marked as hidden), and series whose every point lies on a bound curve.
fn coincidences(spec: &ChartSpec, series: &mut [PSeries]) -> Vec<Note> {
    let key = |s: &PSeries| -> Vec<(u64, u64)> {
        s.points
            .iter()
            .map(|p| (p.x.to_bits(), p.mid.to_bits()))
            .collect()
    };
    let mut notes = Vec::new();
    let mut grouped = vec![false; series.len()];
    for i in 0..series.len() {
        if grouped[i] || series[i].points.is_empty() {
            continue;
        }
        let k = key(&series[i]);
        let group: Vec<usize> = (i..series.len())
            .filter(|&j| !grouped[j] && key(&series[j]) == k)
            .collect();
        if group.len() < 2 {
            continue;
        }
        for &j in &group {
            grouped[j] = true;
        }
        let top = series[*group.last().expect("two or more")].label.clone();
        for &j in &group[..group.len() - 1] {
            series[j].hidden_under = Some(top.clone());
        }
        let names: Vec<String> = group.iter().map(|&j| series[j].label.clone()).collect();
        notes.push(Note {
            text: format!(
                "{} coincide at every point ({top} drawn on top)",
                join_names(&names)
            ),
            problem: false,
        });
    }
    for c in &spec.curves {
        let on_curve: Vec<String> = series
            .iter()
            .zip(&spec.series)
            .filter(|(s, input)| {
                !s.points.is_empty()
                    && input.points.iter().all(|p| {
                        !p.median.is_finite()
                            || c.points.iter().any(|&(x, y)| x == p.x && y == p.median)
                    })
            })
            .map(|(s, _)| s.label.clone())
            .collect();
        if !on_curve.is_empty() {
            notes.push(Note {
                text: format!(
                    "{} {} on the line \"{}\" at every point",
                    join_names(&on_curve),
                    if on_curve.len() == 1 { "lies" } else { "lie" },
                    c.label
                ),
                problem: false,
            });
        }
    }
    notes
}

/// "a", "a and b", "a, b and c".
fn join_names(names: &[String]) -> String {
    match names {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}
