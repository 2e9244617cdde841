//! Charts of query counts against theoretical bounds, and pictures of
//! two-dimensional games.
//!
//! # Charts
//!
//! [`draw`] renders a [`ChartSpec`] to three files that share a stem:
//! `STEM.svg`, `STEM.png` and `STEM.csv`. Each [`Series`] (one per method) is
//! drawn as a translucent min–max band over the seeds, a median line and one
//! marker per point. Its colour and marker come from [`Series::look`]
//! ([`series_look`]: Okabe–Ito colour-blind-safe colours and eight marker shapes),
//! so a caller that numbers its methods once (by their place in the scenario)
//! gets the same look for a method in every chart. Each [`Curve`] (a bound) is a
//! line: [`CurveStyle::LowerBound`] thick black, [`CurveStyle::UpperBound`] thin
//! black, [`CurveStyle::Guide`] grey, each style with several dash patterns so
//! that no two curves of a chart look alike ([`Curve::look`] fixes a curve's
//! pattern across charts).
//!
//! A point marked `censored` (the query budget ended the game, so the true
//! value is larger than the one shown) is drawn as a hollow marker with a small
//! upward arrow, never as an ordinary filled marker, and the legend then has
//! one extra entry. A [`FlaggedGame`] (a refuted output, a wrong "empty" claim,
//! a failed method; [`Flag`]) is drawn apart from the line and band as its own
//! mark in the series' colour: a cross, the empty-set sign, a slashed square or a
//! crossed square; the legend names every kind drawn.
//!
//! The legend goes where it hides no data, measured on the drawn geometry (lines,
//! the inside of bands, markers, arrows and marks): the first empty corner of the
//! plot; else an empty corner after raising the top of the y range a little; else
//! outside the plot, on its right. Legend labels wrap; they are never cut.
//!
//! Series that coincide at every point (so that one hides the other) get a note
//! under the title and a "hidden under" remark in the legend, and a series lying
//! on a bound line at every point gets a note too. [`ChartSpec::footnotes`] (what
//! each curve assumes, what the adversary proves) are printed under the plot.
//! Axes marked [`ChartSpec::x_integer`] / [`ChartSpec::y_integer`] get ticks at
//! whole numbers only.
//!
//! ## Log axes and bad values
//!
//! [`Scale::Log10`] and [`Scale::Log2`] axes cannot show values `<= 0`. Such
//! points are dropped from the picture (never an error): the chart then shows a
//! note under the title, for example "Note: 2 points with y ≤ 0 dropped from
//! the log y axis", and the same text is returned in [`ChartFiles::notes`]. A
//! band whose lower end is `<= 0` on a log y axis while its median is positive
//! is clipped at the bottom of the axis, with a note. Points with non-finite
//! values (NaN, infinities) are dropped on any axis, with a note. Degenerate
//! ranges (one point, or all values equal) are padded so that the chart still
//! has a sensible scale.
//!
//! ## Chart CSV
//!
//! The CSV has one header line and one tidy row per input point, including
//! points that were dropped from the picture:
//!
//! | column | meaning |
//! | --- | --- |
//! | `kind` | `series` (a method's point), `flagged` (a game drawn apart) or `curve` (a bound's point) |
//! | `label` | the series or curve label |
//! | `x` | the x value |
//! | `y` | the plotted y value: the median for `series` rows, the value for `flagged` and `curve` rows |
//! | `min`, `median`, `max` | the spread over seeds (`series` rows only, empty for curves) |
//! | `censored` | `true` when the budget ended the game (`series` rows only) |
//! | `curve_style` | `lower_bound`, `upper_bound` or `guide` (`curve` rows only) |
//! | `plotted` | `false` when the point was dropped (log axis, non-finite value) |
//! | `outcome` | how a `flagged` game ended (`output-refuted`, `empty-refuted`, `empty-breaks-promise`, `method-failed`); empty otherwise |
//!
//! # Game pictures
//!
//! [`draw_game_2d`] draws a [`Game2d`]: the square `[-R, R]^2`, the alive box
//! after each answer (each filled with the same faint blue, so that nested
//! boxes accumulate and later, smaller boxes look darker; the final box is
//! orange with a thick outline), the boundary line of each cut clipped to the
//! view, and the query points, numbered `1`, `2`, ... in the order they were
//! asked. Only the first 30 queries get numbers (a note says so when there are
//! more), and a number that would overlap another label or marker is left out
//! (also with a note) rather than drawn unreadably.
//!
//! Because the alive boxes shrink geometrically, the picture has a second
//! panel, a zoom, whenever the final box is smaller than 12% of the square's
//! side: the left (or, for tall images, lower) panel shows the whole square
//! with the zoomed window outlined by a dashed rectangle, and the other panel
//! shows a square window four times as wide as the final box, centred on it.
//! Both panels keep equal scales on both axes, so angles are true.
//!
//! ## Game CSV
//!
//! Header `kind,index,x,y,normal_x,normal_y,offset,x_lo,x_hi,y_lo,y_hi`, then
//! one row per alive box (`kind` = `box`, `index` 0 for the initial box, with
//! `x_lo..y_hi` filled), per query (`kind` = `query`, `index` from 1 as in the
//! picture, with `x`, `y` filled) and per cut (`kind` = `cut`, `index` from 1,
//! with `normal_x`, `normal_y`, `offset` filled; the cut is
//! `{y : normal . y < offset}`). Columns that do not apply are empty.
//!
//! # Fonts
//!
//! Every text uses DejaVu Sans, embedded in the binary (see
//! `assets/fonts/LICENSE-DejaVu.txt`) and registered with plotters once, so
//! drawing never depends on fonts installed on the machine. In PNG files the
//! text is rasterised here from the embedded font (with `ab_glyph`, honouring
//! kerning and side bearings); SVG files carry the text as `<text>` elements
//! naming the family `DejaVu Sans`, which a viewer without it replaces with a
//! similar sans-serif font. Text and line sizes are chosen for 1000 x 650
//! pixels and scale with the image size.
//!
//! # Files of this module
//!
//! `mod.rs` ([`draw`], [`draw_game_2d`], series looks), `spec.rs` (the public
//! specifications), `prepare.rs` (data to plot space, looks, coincidences), `line.rs`
//! (painting the line chart), `legend.rs`, `occupied.rs` (what the data cover, for the
//! legend), `axes.rs` (coordinates, mesh, tick labels), `ticks.rs` (tick positions and
//! labels), `style.rs` (colours, line styles, dashes), `marker.rs` (marker shapes and
//! flag marks), `text.rs` (fonts, measuring, wrapping and drawing text, headers and
//! footnotes), `game.rs` and `game_panel.rs` (the two-dimensional game picture),
//! `csv.rs` (the CSV beside each picture) and `output.rs` (file names, writing SVG and
//! PNG).

mod axes;
mod csv;
mod game;
mod game_panel;
mod legend;
mod line;
mod marker;
mod occupied;
mod output;
mod prepare;
mod spec;
mod style;
#[cfg(test)]
pub(crate) mod test_svg;
#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_looks;
mod text;
mod ticks;

use std::path::Path;

use plotters::backend::SVGBackend;
use plotters::coord::cartesian::Cartesian2d;
use plotters::drawing::IntoDrawingArea;

use crate::error::Error;
use axes::TickAxis;
use csv::{chart_csv, game_csv};
use game::{label_notes_for, prepare_game, GamePainter};
use line::ChartPainter;
use output::{check_size, output_files, write_file, write_images};
use prepare::prepare_chart;
pub use spec::{
    ChartFiles, ChartSpec, Curve, CurveStyle, Cut2d, Flag, FlaggedGame, Game2d, Scale, Series,
    SeriesPoint,
};
use text::{ensure_font, Ink};

/// Default image width in pixels.
pub const DEFAULT_WIDTH: u32 = 1000;

/// Default image height in pixels.
pub const DEFAULT_HEIGHT: u32 = 650;

/// Smallest accepted image width in pixels.
pub const MIN_WIDTH: u32 = 320;

/// Smallest accepted image height in pixels.
pub const MIN_HEIGHT: u32 = 240;

/// Largest accepted image width or height in pixels.
pub const MAX_SIDE: u32 = 6_000;

/// How many queries of a game picture get numbers.
pub const MAX_NUMBERED_QUERIES: usize = 30;

type Px = (i32, i32);

type Coord2 = Cartesian2d<TickAxis, TickAxis>;

/// Draws a chart to `STEM.svg` and `STEM.png` and writes its data to
/// `STEM.csv` (the suffixes are appended to `stem`; missing parent folders are
/// created).
///
/// Dropped points and similar problems with the data are not errors: they are
/// reported on the picture and in [`ChartFiles::notes`].
///
/// # Errors
///
/// [`Error::Chart`] when the size is outside `MIN_WIDTH..=MAX_SIDE` by
/// `MIN_HEIGHT..=MAX_SIDE`, when `stem` names no file, or when drawing fails;
/// [`Error::Io`] when a folder or file cannot be written.
pub fn draw(spec: &ChartSpec, stem: &Path) -> Result<ChartFiles, Error> {
    check_size(spec.width, spec.height, stem)?;
    let mut files = output_files(stem)?;
    ensure_font().map_err(|reason| Error::Chart {
        path: stem.to_path_buf(),
        reason,
    })?;
    let prepared = prepare_chart(spec);
    write_file(&files.csv, chart_csv(spec, &prepared))?;
    let painter = ChartPainter {
        spec,
        data: &prepared,
    };
    write_images(&painter, &files, spec.width, spec.height)?;
    files.notes = prepared.notes.iter().map(|n| n.text.clone()).collect();
    Ok(files)
}

/// Draws a two-dimensional game to `STEM.svg` and `STEM.png` and writes its
/// queries, cuts and boxes to `STEM.csv` (see the module documentation for the
/// layout and the zoom panel).
///
/// # Errors
///
/// [`Error::Chart`] when the size is out of range, `half_width` is not a
/// positive finite number, `stem` names no file, or drawing fails;
/// [`Error::Io`] when a folder or file cannot be written.
pub fn draw_game_2d(game: &Game2d, stem: &Path) -> Result<ChartFiles, Error> {
    check_size(game.width, game.height, stem)?;
    if !(game.half_width.is_finite() && game.half_width > 0.0) {
        return Err(Error::Chart {
            path: stem.to_path_buf(),
            reason: format!(
                "half_width must be a positive finite number, got {}",
                game.half_width
            ),
        });
    }
    let mut files = output_files(stem)?;
    ensure_font().map_err(|reason| Error::Chart {
        path: stem.to_path_buf(),
        reason,
    })?;
    let prepared = prepare_game(game);
    write_file(&files.csv, game_csv(game))?;
    // Query numbers are placed while painting, and a note says how many did
    // not fit; that note changes the header and so the panels. Paint into a
    // throwaway SVG until the note is stable, so that both files agree.
    let mut label_notes: Vec<String> = Vec::new();
    for _ in 0..3 {
        let mut scratch = String::new();
        let root =
            SVGBackend::with_string(&mut scratch, (game.width, game.height)).into_drawing_area();
        let painter = GamePainter {
            game,
            data: &prepared,
            extra_notes: &label_notes,
        };
        let shown = painter
            .paint_game(&root, Ink::Vector)
            .map_err(|reason| Error::Chart {
                path: files.svg.clone(),
                reason,
            })?;
        let next = label_notes_for(&prepared, &shown);
        if next == label_notes {
            break;
        }
        label_notes = next;
    }
    let painter = GamePainter {
        game,
        data: &prepared,
        extra_notes: &label_notes,
    };
    write_images(&painter, &files, game.width, game.height)?;
    files.notes = prepared.notes.clone();
    files.notes.extend(label_notes);
    Ok(files)
}

/// The look of a series: its colour and marker shape.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SeriesLook {
    /// Red, green, blue.
    pub color: [u8; 3],
    /// The marker's shape: `circle`, `square`, `triangle-up`, `diamond`, `triangle-down`,
    /// `star`, `triangle-right` or `triangle-left`.
    pub marker: &'static str,
}

/// The colour and marker of [`Series::look`] `look`: look 8a + b has palette colour b
/// (Okabe & Ito's colour-blind-safe colours without yellow and black, then two darker
/// extras) and marker (a + b) mod 8, so the first 64 looks are pairwise distinct and the
/// first eight differ in both colour and shape.
pub fn series_look(look: usize) -> SeriesLook {
    let (color, marker) = marker::look_parts(look);
    SeriesLook {
        color: [color.0, color.1, color.2],
        marker: marker.name(),
    }
}

/// A small stand-alone SVG (42 x 16 pixels) of series look `look` as the legend shows it
/// (band, line and marker), for tables beside the charts (reports).
pub fn series_swatch_svg(look: usize) -> String {
    marker::swatch(look)
}
