//! Charts of query counts against theoretical bounds, and pictures of
//! two-dimensional games.
//!
//! # Charts
//!
//! [`draw`] renders a [`ChartSpec`] to three files that share a stem:
//! `STEM.svg`, `STEM.png` and `STEM.csv`. Each [`Series`] (one per method) is
//! drawn as a translucent min–max band over the seeds, a median line and one
//! marker per point; each series has its own colour from a fixed palette of
//! colour-blind-distinguishable colours and its own marker shape. Each
//! [`Curve`] (a bound) is a line: [`CurveStyle::LowerBound`] solid thick black,
//! [`CurveStyle::UpperBound`] dashed black, [`CurveStyle::Guide`] dotted grey.
//!
//! A point marked `censored` (the query budget ended the game, so the true
//! value is larger than the one shown) is drawn as a hollow marker with a small
//! upward arrow, never as an ordinary filled marker, and the legend then has
//! one extra entry, "censored (budget)".
//!
//! The legend has a white background and sits inside the plot area, in the
//! first corner (upper left, upper right, lower right, lower left) that hides
//! no data; when every corner would hide data, the y range is extended upwards
//! to make room for it in the upper left.
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
//! | `kind` | `series` (a method's point) or `curve` (a bound's point) |
//! | `label` | the series or curve label |
//! | `x` | the x value |
//! | `y` | the plotted y value: the median for `series` rows, the value for `curve` rows |
//! | `min`, `median`, `max` | the spread over seeds (`series` rows only, empty for curves) |
//! | `censored` | `true` when the budget ended the game (`series` rows only) |
//! | `curve_style` | `lower_bound`, `upper_bound` or `guide` (`curve` rows only) |
//! | `plotted` | `false` when the point was dropped (log axis, non-finite value) |
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

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use ab_glyph::{point, Font, FontRef, PxScale, ScaleFont};
use plotters::backend::{BitMapBackend, DrawingBackend, SVGBackend};
use plotters::chart::{ChartBuilder, ChartContext};
use plotters::coord::cartesian::Cartesian2d;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::Shift;
use plotters::drawing::{DrawingArea, IntoDrawingArea};
use plotters::element::{Circle, PathElement, Polygon, Rectangle, Text};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{
    register_font, Color, FontDesc, FontFamily, FontStyle, FontTransform, RGBAColor, RGBColor,
    ShapeStyle, WHITE,
};

use crate::error::Error;

/// One x position of a [`Series`]: the spread of a measured value over seeds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeriesPoint {
    /// The x value (for example the dimension or `1/epsilon`).
    pub x: f64,
    /// Smallest value over the seeds (lower end of the band).
    pub min: f64,
    /// Median value over the seeds (the line and the marker).
    pub median: f64,
    /// Largest value over the seeds (upper end of the band).
    pub max: f64,
    /// True when the budget ended the game, so that the true value is larger
    /// than the one shown; drawn as a hollow marker with an upward arrow.
    pub censored: bool,
}

/// One method's measurements: a min–max band, a median line and markers.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Series {
    /// Legend text (usually the method's name).
    pub label: String,
    /// The points, in any order (they are sorted by x for drawing).
    pub points: Vec<SeriesPoint>,
}

/// How a [`Curve`] is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CurveStyle {
    /// A proven lower bound: solid thick black line.
    LowerBound,
    /// An upper bound (what a known method guarantees): dashed black line.
    UpperBound,
    /// Any other guide line: dotted grey line.
    Guide,
}

impl CurveStyle {
    /// The name used in the CSV's `curve_style` column.
    pub fn csv_name(self) -> &'static str {
        match self {
            CurveStyle::LowerBound => "lower_bound",
            CurveStyle::UpperBound => "upper_bound",
            CurveStyle::Guide => "guide",
        }
    }
}

/// A theoretical curve (a bound) drawn as a line through its points.
#[derive(Debug, Clone, PartialEq)]
pub struct Curve {
    /// Legend text.
    pub label: String,
    /// The `(x, y)` points, in any order (they are sorted by x for drawing).
    pub points: Vec<(f64, f64)>,
    /// Line style.
    pub style: CurveStyle,
}

/// Scale of an axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Scale {
    /// Linear axis.
    #[default]
    Linear,
    /// Logarithmic axis with ticks at powers of ten.
    Log10,
    /// Logarithmic axis with ticks at powers of two.
    Log2,
}

/// Everything [`draw`] needs for one chart.
#[derive(Debug, Clone, PartialEq)]
pub struct ChartSpec {
    /// Title at the top of the chart.
    pub title: String,
    /// Optional second line under the title (smaller, grey).
    pub subtitle: Option<String>,
    /// x axis description.
    pub x_label: String,
    /// y axis description.
    pub y_label: String,
    /// x axis scale.
    pub x_scale: Scale,
    /// y axis scale.
    pub y_scale: Scale,
    /// The measured series (one per method).
    pub series: Vec<Series>,
    /// The theoretical curves (bounds).
    pub curves: Vec<Curve>,
    /// Image width in pixels (the SVG uses the same size).
    pub width: u32,
    /// Image height in pixels.
    pub height: u32,
}

impl Default for ChartSpec {
    /// An empty linear chart of 1000 x 650 pixels.
    fn default() -> Self {
        ChartSpec {
            title: String::new(),
            subtitle: None,
            x_label: String::new(),
            y_label: String::new(),
            x_scale: Scale::Linear,
            y_scale: Scale::Linear,
            series: Vec::new(),
            curves: Vec::new(),
            width: DEFAULT_WIDTH,
            height: DEFAULT_HEIGHT,
        }
    }
}

/// The files written by [`draw`] or [`draw_game_2d`], and the notes shown on
/// the picture.
#[derive(Debug, Clone, PartialEq)]
pub struct ChartFiles {
    /// The SVG picture.
    pub svg: PathBuf,
    /// The PNG picture.
    pub png: PathBuf,
    /// The data behind the picture, as CSV (see the module documentation).
    pub csv: PathBuf,
    /// Notes shown on the picture (dropped points, unlabelled queries, ...);
    /// empty when nothing needed saying.
    pub notes: Vec<String>,
}

/// A cut of a two-dimensional game: the half-plane `{y : normal . y < offset}`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cut2d {
    /// Normal vector of the boundary line.
    pub normal: [f64; 2],
    /// Right-hand side: the boundary is `{y : normal . y = offset}`.
    pub offset: f64,
}

/// Everything [`draw_game_2d`] needs for a picture of a two-dimensional game.
#[derive(Debug, Clone, PartialEq)]
pub struct Game2d {
    /// Title at the top of the picture.
    pub title: String,
    /// `R`: the game is played in the square `[-R, R]^2`.
    pub half_width: f64,
    /// The alive box `(x_lo, x_hi, y_lo, y_hi)` after each answer; index 0 is
    /// the initial box.
    pub boxes: Vec<[f64; 4]>,
    /// The query points in the order they were asked.
    pub queries: Vec<[f64; 2]>,
    /// The cuts in the order they were answered.
    pub cuts: Vec<Cut2d>,
    /// Image width in pixels.
    pub width: u32,
    /// Image height in pixels.
    pub height: u32,
}

impl Default for Game2d {
    /// An empty game on `[-1, 1]^2`, 1000 x 650 pixels.
    fn default() -> Self {
        Game2d {
            title: String::new(),
            half_width: 1.0,
            boxes: Vec::new(),
            queries: Vec::new(),
            cuts: Vec::new(),
            width: DEFAULT_WIDTH,
            height: DEFAULT_HEIGHT,
        }
    }
}

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

/// The font family name under which the embedded font is registered.
const FAMILY: &str = "DejaVu Sans";
static FONT_BYTES: &[u8] = include_bytes!("../assets/fonts/DejaVuSans.ttf");
static FONT_READY: OnceLock<Result<(), String>> = OnceLock::new();
static FONT_FACE: OnceLock<Option<FontRef<'static>>> = OnceLock::new();

const TEXT: RGBColor = RGBColor(20, 20, 20);
const MUTED: RGBColor = RGBColor(90, 90, 90);
const NOTE: RGBColor = RGBColor(170, 30, 20);
const GRID_BOLD: RGBColor = RGBColor(218, 218, 218);
const GRID_LIGHT: RGBColor = RGBColor(240, 240, 240);
const AXIS: RGBColor = RGBColor(60, 60, 60);
const BLACK: RGBColor = RGBColor(0, 0, 0);
const GUIDE_GREY: RGBColor = RGBColor(125, 125, 125);

/// Okabe–Ito colours (without yellow and black, which are hard to see on white
/// or reserved for bounds), then two darker extras.
const PALETTE: [RGBColor; 8] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(140, 86, 75),
    RGBColor(110, 110, 20),
];

const BOX_BLUE: RGBColor = RGBColor(0, 114, 178);
const FINAL_FILL: RGBColor = RGBColor(230, 159, 0);
const FINAL_EDGE: RGBColor = RGBColor(213, 94, 0);
const CUT_RED: RGBColor = RGBColor(200, 40, 30);

type Px = (i32, i32);
type Coord2 = Cartesian2d<TickAxis, TickAxis>;

// ---------------------------------------------------------------------------
// Public entry points
// ---------------------------------------------------------------------------

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
    write_file(&files.csv, &chart_csv(spec, &prepared))?;
    let painter = ChartPainter {
        spec,
        data: &prepared,
    };
    write_images(&painter, &files, spec.width, spec.height)?;
    files.notes = prepared.notes.clone();
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
    write_file(&files.csv, &game_csv(game))?;
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

// ---------------------------------------------------------------------------
// Files
// ---------------------------------------------------------------------------

fn check_size(width: u32, height: u32, stem: &Path) -> Result<(), Error> {
    if !(MIN_WIDTH..=MAX_SIDE).contains(&width) || !(MIN_HEIGHT..=MAX_SIDE).contains(&height) {
        return Err(Error::Chart {
            path: stem.to_path_buf(),
            reason: format!(
                "image size {width}x{height} is outside {MIN_WIDTH}..={MAX_SIDE} by \
                 {MIN_HEIGHT}..={MAX_SIDE} pixels"
            ),
        });
    }
    Ok(())
}

fn with_suffix(stem: &Path, suffix: &str) -> PathBuf {
    let mut name: OsString = stem.as_os_str().to_owned();
    name.push(".");
    name.push(suffix);
    PathBuf::from(name)
}

fn output_files(stem: &Path) -> Result<ChartFiles, Error> {
    if stem.file_name().is_none() {
        return Err(Error::Chart {
            path: stem.to_path_buf(),
            reason: "the output stem must name a file, e.g. out/queries".into(),
        });
    }
    if let Some(parent) = stem.parent() {
        if !parent.as_os_str().is_empty() {
            std::fs::create_dir_all(parent).map_err(|source| Error::Io {
                action: "cannot create directory",
                path: parent.to_path_buf(),
                source,
            })?;
        }
    }
    Ok(ChartFiles {
        svg: with_suffix(stem, "svg"),
        png: with_suffix(stem, "png"),
        csv: with_suffix(stem, "csv"),
        notes: Vec::new(),
    })
}

fn write_file(path: &Path, contents: &str) -> Result<(), Error> {
    std::fs::write(path, contents).map_err(|source| Error::Io {
        action: "cannot write",
        path: path.to_path_buf(),
        source,
    })
}

fn ensure_font() -> Result<(), String> {
    FONT_READY
        .get_or_init(|| {
            register_font(FAMILY, FontStyle::Normal, FONT_BYTES)
                .map_err(|_| "the embedded DejaVu Sans font could not be loaded".to_string())
        })
        .clone()
}

/// Something that paints a whole picture on any plotters backend.
trait Painter {
    fn paint<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
    ) -> Result<(), String>;
}

fn write_images<P: Painter>(
    painter: &P,
    files: &ChartFiles,
    width: u32,
    height: u32,
) -> Result<(), Error> {
    let svg_err = |reason: String| Error::Chart {
        path: files.svg.clone(),
        reason,
    };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        painter.paint(&root, Ink::Vector).map_err(svg_err)?;
        root.present().map_err(|e| svg_err(e.to_string()))?;
    }
    write_file(&files.svg, &svg)?;

    let png_err = |reason: String| Error::Chart {
        path: files.png.clone(),
        reason,
    };
    let root = BitMapBackend::new(&files.png, (width, height)).into_drawing_area();
    painter.paint(&root, Ink::Raster).map_err(png_err)?;
    root.present().map_err(|e| png_err(e.to_string()))?;
    Ok(())
}

fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

fn csv_num(v: f64) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        if v > 0.0 { "inf" } else { "-inf" }.into()
    } else {
        format!("{v}")
    }
}

// ---------------------------------------------------------------------------
// Text helpers
// ---------------------------------------------------------------------------

fn dr<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

fn font(size: f64) -> FontDesc<'static> {
    FontDesc::new(FontFamily::Name(FAMILY), size, FontStyle::Normal)
}

/// The embedded font, parsed once.
fn face() -> Option<&'static FontRef<'static>> {
    FONT_FACE
        .get_or_init(|| FontRef::try_from_slice(FONT_BYTES).ok())
        .as_ref()
}

/// How text reaches the picture: as `<text>` elements (SVG) or as pixels
/// rasterised here from the embedded font (PNG).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Ink {
    Vector,
    Raster,
}

/// The look and anchoring of one piece of text; `em` is the font size in
/// pixels (the SVG `font-size`).
#[derive(Clone, Copy)]
struct Label {
    em: f64,
    color: RGBColor,
    h: HPos,
    v: VPos,
    vertical: bool,
}

fn label(em: f64, color: RGBColor, h: HPos, v: VPos) -> Label {
    Label {
        em,
        color,
        h,
        v,
        vertical: false,
    }
}

/// Ratio of plotters' font size to the SVG `font-size` it writes.
const PLOTTERS_SIZE_PER_EM: f64 = 1.24;

/// The ab_glyph scale giving an em of `em` pixels.
fn px_scale(font: &FontRef<'static>, em: f64) -> PxScale {
    let per_em = font.units_per_em().unwrap_or(2048.0);
    let height = font.height_unscaled();
    PxScale::from((em * f64::from(height / per_em)) as f32)
}

/// Width of `text` in pixels at `em`, and its nominal height (one em).
fn text_size(em: f64, text: &str) -> (i32, i32) {
    let h = em.round() as i32;
    let Some(f) = face() else {
        return ((text.chars().count() as f64 * em * 0.6) as i32, h);
    };
    let scaled = f.as_scaled(px_scale(f, em));
    let mut width = 0f32;
    let mut prev = None;
    for ch in text.chars() {
        let id = scaled.glyph_id(ch);
        if let Some(p) = prev {
            width += scaled.kern(p, id);
        }
        width += scaled.h_advance(id);
        prev = Some(id);
    }
    (width.ceil() as i32, h)
}

/// Offsets (along the text, across it) from the anchor to the start of the
/// baseline, the same as the SVG backend's `text-anchor` and `dy`.
fn anchor_offsets(l: &Label, width: f64) -> (f64, f64) {
    let du = match l.h {
        HPos::Left => 0.0,
        HPos::Center => -width / 2.0,
        HPos::Right => -width,
    };
    let dv = match l.v {
        VPos::Top => 0.76 * l.em,
        VPos::Center => 0.27 * l.em,
        VPos::Bottom => -0.27 * l.em,
    };
    (du.round(), dv.round())
}

/// Draws `text` anchored at `at`.
fn put_text<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    text: &str,
    at: Px,
    l: Label,
) -> Result<(), String> {
    if text.is_empty() {
        return Ok(());
    }
    match ink {
        Ink::Vector => {
            let mut st = font(l.em * PLOTTERS_SIZE_PER_EM)
                .color(&l.color)
                .pos(Pos::new(l.h, l.v));
            if l.vertical {
                st = st.transform(FontTransform::Rotate270);
            }
            root.draw(&Text::new(text.to_string(), at, st)).map_err(dr)
        }
        Ink::Raster => raster_text(root, text, at, l),
    }
}

/// Rasterises `text` with the embedded font, glyph by glyph with kerning and
/// side bearings, blending coverage into the picture.
fn raster_text<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    text: &str,
    at: Px,
    l: Label,
) -> Result<(), String> {
    let f =
        face().ok_or_else(|| "the embedded DejaVu Sans font could not be loaded".to_string())?;
    let scale = px_scale(f, l.em);
    let scaled = f.as_scaled(scale);
    let mut glyphs = Vec::new();
    let mut pen = 0f32;
    let mut prev = None;
    for ch in text.chars() {
        let id = scaled.glyph_id(ch);
        if let Some(p) = prev {
            pen += scaled.kern(p, id);
        }
        glyphs.push(id.with_scale_and_position(scale, point(pen, 0.0)));
        pen += scaled.h_advance(id);
        prev = Some(id);
    }
    let (du, dv) = anchor_offsets(&l, f64::from(pen));
    let (du, dv) = (du as i32, dv as i32);
    let mut failure = None;
    for g in glyphs {
        let Some(outline) = f.outline_glyph(g) else {
            continue;
        };
        let b = outline.px_bounds();
        let (bx, by) = (b.min.x as i32, b.min.y as i32);
        outline.draw(|gx, gy, coverage| {
            if coverage < 0.02 || failure.is_some() {
                return;
            }
            let u = bx + gx as i32 + du;
            let v = by + gy as i32 + dv;
            let pixel = if l.vertical {
                (at.0 + v, at.1 - u)
            } else {
                (at.0 + u, at.1 + v)
            };
            let color = l.color.mix(f64::from(coverage.min(1.0)));
            if let Err(e) = root.draw_pixel(pixel, &color) {
                failure = Some(e.to_string());
            }
        });
    }
    failure.map_or(Ok(()), Err)
}

/// Splits `text` into lines no wider than `max_w` pixels (a single word wider
/// than that stays on its own line).
fn wrap(text: &str, size: f64, max_w: i32) -> Vec<String> {
    let mut lines = Vec::new();
    for paragraph in text.lines() {
        let mut current = String::new();
        for word in paragraph.split_whitespace() {
            let candidate = if current.is_empty() {
                word.to_string()
            } else {
                format!("{current} {word}")
            };
            if current.is_empty() || text_size(size, &candidate).0 <= max_w {
                current = candidate;
            } else {
                lines.push(std::mem::replace(&mut current, word.to_string()));
            }
        }
        if !current.is_empty() {
            lines.push(current);
        }
    }
    lines
}

/// Shortens `text` with an ellipsis so that it is at most `max_w` pixels wide.
fn ellipsize(text: &str, size: f64, max_w: i32) -> String {
    if text_size(size, text).0 <= max_w {
        return text.to_string();
    }
    let chars: Vec<char> = text.chars().collect();
    let mut keep = chars.len();
    while keep > 1 {
        keep -= 1;
        let candidate: String = chars[..keep].iter().collect::<String>() + "…";
        if text_size(size, &candidate).0 <= max_w {
            return candidate;
        }
    }
    "…".into()
}

struct HeaderLine {
    text: String,
    size: f64,
    color: RGBColor,
}

/// Draws centred header lines from the top; returns the height used.
fn draw_header<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    lines: &[HeaderLine],
    top: i32,
    width: i32,
) -> Result<i32, String> {
    let mut y = top;
    for line in lines {
        let l = label(line.size, line.color, HPos::Center, VPos::Top);
        put_text(root, ink, &line.text, (width / 2, y), l)?;
        y += (line.size * 1.4).round() as i32;
    }
    Ok(y)
}

fn header_lines(
    title: &str,
    subtitle: Option<&str>,
    notes: &[String],
    width: i32,
    s: f64,
) -> Vec<HeaderLine> {
    let max_w = width - (40.0 * s) as i32;
    let mut lines = Vec::new();
    for text in wrap(title, 23.0 * s, max_w) {
        lines.push(HeaderLine {
            text,
            size: 23.0 * s,
            color: TEXT,
        });
    }
    if let Some(sub) = subtitle {
        for text in wrap(sub, 16.5 * s, max_w) {
            lines.push(HeaderLine {
                text,
                size: 16.5 * s,
                color: MUTED,
            });
        }
    }
    for note in notes {
        for text in wrap(&format!("Note: {note}"), 15.0 * s, max_w) {
            lines.push(HeaderLine {
                text,
                size: 15.0 * s,
                color: NOTE,
            });
        }
    }
    lines
}

/// How much larger than at 1000 x 650 pixels text and strokes are drawn.
fn scale_factor(width: u32, height: u32) -> f64 {
    let rw = f64::from(width) / f64::from(DEFAULT_WIDTH);
    let rh = f64::from(height) / f64::from(DEFAULT_HEIGHT);
    (rw * rh).sqrt().min(1.3 * rw.min(rh)).clamp(0.75, 4.0)
}

// ---------------------------------------------------------------------------
// Ticks
// ---------------------------------------------------------------------------

/// Tick positions in plot space (the logarithm for log axes) with labels, and
/// unlabelled minor grid positions.
#[derive(Debug, Clone, Default, PartialEq)]
struct Ticks {
    bold: Vec<(f64, String)>,
    light: Vec<f64>,
}

fn to_plot(scale: Scale, v: f64) -> Option<f64> {
    if !v.is_finite() {
        return None;
    }
    match scale {
        Scale::Linear => Some(v),
        Scale::Log10 if v > 0.0 => Some(v.log10()),
        Scale::Log2 if v > 0.0 => Some(v.log2()),
        _ => None,
    }
}

fn nice_step(span: f64, max_ticks: usize) -> f64 {
    let raw = span / max_ticks.max(1) as f64;
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let mag = 10f64.powf(raw.log10().floor());
    for m in [1.0, 2.0, 5.0] {
        if m * mag >= raw * (1.0 - 1e-9) {
            return m * mag;
        }
    }
    10.0 * mag
}

/// Nice round tick values within `[lo, hi]` and their spacing.
fn linear_values(lo: f64, hi: f64, max_ticks: usize) -> (Vec<f64>, f64) {
    let step = nice_step(hi - lo, max_ticks);
    let k0 = (lo / step - 1e-9).ceil();
    let k1 = (hi / step + 1e-9).floor();
    if !(k0.is_finite() && k1.is_finite()) || k1 < k0 || k1 - k0 > 1000.0 || k0.abs() > 1e15 {
        return (Vec::new(), step);
    }
    let values = (0..=(k1 - k0) as i64)
        .map(|i| (k0 + i as f64) * step)
        .collect();
    (values, step)
}

fn trim_mantissa(text: &str) -> String {
    match text.split_once('e') {
        Some((m, e)) if m.contains('.') => {
            let m = m.trim_end_matches('0').trim_end_matches('.');
            format!("{m}e{e}")
        }
        _ => text.to_string(),
    }
}

/// Formats a linear tick value with as many decimals as its spacing needs.
fn format_linear(v: f64, step: f64) -> String {
    let v = if v.abs() < step.abs() * 1e-6 { 0.0 } else { v };
    let mag = v.abs();
    let step_exp = step.abs().log10().floor();
    if mag >= 1e6 || (mag > 0.0 && mag < 1e-4) {
        let digits = (mag.log10().floor() - step_exp).clamp(0.0, 12.0) as usize;
        trim_mantissa(&format!("{v:.digits$e}"))
    } else {
        let decimals = (-step_exp).clamp(0.0, 12.0) as usize;
        format!("{v:.decimals$}")
    }
}

fn superscript(e: i64) -> String {
    e.to_string()
        .chars()
        .map(|c| match c {
            '-' => '⁻',
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            _ => '⁹',
        })
        .collect()
}

/// Whether powers `base^e` for `e` in `e0..=e1` all read well as plain numbers.
fn plain_powers(base: f64, e0: i64, e1: i64) -> bool {
    if base == 2.0 {
        e0 >= -4 && e1 <= 16
    } else {
        e0 >= -3 && e1 <= 5
    }
}

fn power_label(base: f64, e: i64, plain: bool) -> String {
    match (base == 2.0, plain) {
        (true, true) if e >= 0 => format!("{}", 1i64 << e.min(62)),
        (true, true) => format!("{}", 2f64.powi(e as i32)),
        (true, false) => format!("2{}", superscript(e)),
        (false, _) => mantissa_label(1, e, plain),
    }
}

fn mantissa_label(m: i64, e: i64, plain: bool) -> String {
    if plain && (0..=15).contains(&e) {
        format!("{}", m * 10i64.pow(e as u32))
    } else if plain && e < 0 {
        let decimals = (-e).min(20) as usize;
        format!("{:.decimals$}", m as f64 * 10f64.powi(e as i32))
    } else if m == 1 {
        format!("10{}", superscript(e))
    } else {
        format!("{m}×10{}", superscript(e))
    }
}

/// Ticks of a log axis whose plot-space range is `[lo, hi]` (exponents).
fn log_ticks(base: f64, lo: f64, hi: f64, max_ticks: usize) -> Ticks {
    if !(lo.is_finite() && hi.is_finite()) || hi <= lo || hi - lo > 4000.0 {
        return Ticks::default();
    }
    let e0 = (lo - 1e-9).ceil() as i64;
    let e1 = (hi + 1e-9).floor() as i64;
    let n = e1 - e0 + 1;
    if n < 2 {
        // Less than two powers in range: 1-2-5 steps if there are enough,
        // else round numbers of the data space.
        if base == 10.0 {
            let bold: Vec<(f64, String)> = ((e0 - 2)..=(e1 + 1))
                .flat_map(|e| [1i64, 2, 5].map(|m| (e, m)))
                .map(|(e, m)| (e as f64 + (m as f64).log10(), e, m))
                .filter(|(v, _, _)| *v >= lo - 1e-12 && *v <= hi + 1e-12)
                .map(|(v, e, m)| (v, mantissa_label(m, e, (-3..=5).contains(&e))))
                .collect();
            if bold.len() >= 3 {
                return Ticks {
                    bold,
                    light: Vec::new(),
                };
            }
        }
        let (values, step) = linear_values(base.powf(lo), base.powf(hi), max_ticks.min(6));
        let bold = values
            .into_iter()
            .filter(|v| *v > 0.0)
            .map(|v| (v.log(base), format_linear(v, step)))
            .collect();
        return Ticks {
            bold,
            light: Vec::new(),
        };
    }
    let step = ((n as f64) / max_ticks.max(2) as f64).ceil().max(1.0) as i64;
    let exps: Vec<i64> = (e0..=e1).filter(|e| e.rem_euclid(step) == 0).collect();
    let plain = plain_powers(
        base,
        exps.first().copied().unwrap_or(e0),
        exps.last().copied().unwrap_or(e1),
    );
    let mut bold: Vec<(f64, String)> = exps
        .iter()
        .map(|&e| (e as f64, power_label(base, e, plain)))
        .collect();
    let mut light: Vec<f64> = (e0..=e1)
        .filter(|e| e.rem_euclid(step) != 0)
        .map(|e| e as f64)
        .collect();
    if base == 10.0 {
        let within = |v: f64| v >= lo - 1e-12 && v <= hi + 1e-12;
        if n <= 2 && max_ticks >= 6 {
            for e in (e0 - 1)..=e1 {
                for m in [2i64, 5] {
                    let v = e as f64 + (m as f64).log10();
                    if within(v) {
                        bold.push((v, mantissa_label(m, e, plain)));
                    }
                }
            }
            bold.sort_by(|a, b| a.0.total_cmp(&b.0));
        }
        if hi - lo <= 5.0 && step == 1 {
            for e in (e0 - 1)..=e1 {
                for m in 2..=9 {
                    let v = e as f64 + f64::from(m).log10();
                    if within(v) && !bold.iter().any(|(b, _)| (b - v).abs() < 1e-9) {
                        light.push(v);
                    }
                }
            }
        }
    }
    Ticks { bold, light }
}

fn axis_ticks(scale: Scale, lo: f64, hi: f64, max_ticks: usize) -> Ticks {
    match scale {
        Scale::Linear => {
            let (values, step) = linear_values(lo, hi, max_ticks);
            let bold: Vec<(f64, String)> = values
                .iter()
                .map(|v| (*v, format_linear(*v, step)))
                .collect();
            let light = values
                .windows(2)
                .map(|w| (w[0] + w[1]) / 2.0)
                .collect::<Vec<_>>();
            Ticks { bold, light }
        }
        Scale::Log10 => log_ticks(10.0, lo, hi, max_ticks),
        Scale::Log2 => log_ticks(2.0, lo, hi, max_ticks),
    }
}

/// The densest ticks whose labels do not collide along an axis of `len_px`
/// pixels (labels side by side when `horizontal`, stacked otherwise).
fn fit_ticks(
    scale: Scale,
    lo: f64,
    hi: f64,
    len_px: f64,
    horizontal: bool,
    label_size: f64,
) -> Ticks {
    let mut last = Ticks::default();
    for max_ticks in (2..=10).rev() {
        let ticks = axis_ticks(scale, lo, hi, max_ticks);
        let pos = |v: f64| (v - lo) / (hi - lo) * len_px;
        let fits = ticks.bold.windows(2).all(|w| {
            let gap = (pos(w[1].0) - pos(w[0].0)).abs();
            let (wa, ha) = text_size(label_size, &w[0].1);
            let (wb, hb) = text_size(label_size, &w[1].1);
            if horizontal {
                gap >= f64::from(wa + wb) / 2.0 + label_size * 0.8
            } else {
                gap >= f64::from(ha.max(hb)) * 1.5
            }
        });
        if fits && !ticks.bold.is_empty() {
            return ticks;
        }
        if !ticks.bold.is_empty() || last.bold.is_empty() {
            last = ticks;
        }
    }
    last
}

/// A linear plot-space axis (the logarithm of the data on log axes) whose
/// grid lines and labels sit exactly at the planned ticks.
#[derive(Debug, Clone)]
struct TickAxis {
    lo: f64,
    hi: f64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl TickAxis {
    fn new(plan: &AxisPlan) -> Self {
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

/// Pads a plot-space range; a degenerate range (one value) gets a fixed width.
fn padded_range(values: &[f64], scale: Scale) -> (f64, f64) {
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let magnitude = lo.abs().max(hi.abs());
    if hi - lo <= magnitude * 1e-9 || hi - lo < 1e-300 {
        let c = (lo + hi) / 2.0;
        let d = match scale {
            Scale::Linear if c == 0.0 => 1.0,
            Scale::Linear => c.abs() * 0.1,
            Scale::Log10 => 0.5,
            Scale::Log2 => 1.0,
        };
        return (c - d, c + d);
    }
    let pad = (hi - lo) * 0.05;
    (lo - pad, hi + pad)
}

// ---------------------------------------------------------------------------
// Chart: preparation
// ---------------------------------------------------------------------------

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Marker {
    Circle,
    Square,
    TriangleUp,
    Diamond,
    TriangleDown,
}

const MARKERS: [Marker; 5] = [
    Marker::Circle,
    Marker::Square,
    Marker::TriangleUp,
    Marker::Diamond,
    Marker::TriangleDown,
];

#[derive(Debug, Clone, Copy)]
struct PPoint {
    x: f64,
    /// Lower band end; `None` when it was `<= 0` on a log axis (clipped).
    lo: Option<f64>,
    mid: f64,
    hi: f64,
    censored: bool,
}

#[derive(Debug, Clone)]
struct PSeries {
    label: String,
    color: RGBColor,
    marker: Marker,
    points: Vec<PPoint>,
}

#[derive(Debug, Clone)]
struct PCurve {
    style: CurveStyle,
    points: Vec<(f64, f64)>,
}

#[derive(Debug, Clone)]
struct PreparedChart {
    series: Vec<PSeries>,
    curves: Vec<PCurve>,
    /// Which input points are drawn: `series_plotted[i][j]` for point `j` of
    /// series `i`.
    series_plotted: Vec<Vec<bool>>,
    curve_plotted: Vec<Vec<bool>>,
    x_range: (f64, f64),
    y_range: (f64, f64),
    any_censored: bool,
    notes: Vec<String>,
}

fn plural(n: usize, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{n} {many}")
    }
}

fn prepare_chart(spec: &ChartSpec) -> PreparedChart {
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

fn chart_csv(spec: &ChartSpec, prepared: &PreparedChart) -> String {
    let mut out = String::from("kind,label,x,y,min,median,max,censored,curve_style,plotted\n");
    for (s, plotted) in spec.series.iter().zip(&prepared.series_plotted) {
        let label = csv_field(&s.label);
        for (p, shown) in s.points.iter().zip(plotted) {
            out.push_str(&format!(
                "series,{label},{},{},{},{},{},{},,{shown}\n",
                csv_num(p.x),
                csv_num(p.median),
                csv_num(p.min),
                csv_num(p.median),
                csv_num(p.max),
                p.censored
            ));
        }
    }
    for (c, plotted) in spec.curves.iter().zip(&prepared.curve_plotted) {
        let label = csv_field(&c.label);
        for (&(x, y), shown) in c.points.iter().zip(plotted) {
            out.push_str(&format!(
                "curve,{label},{},{},,,,,{},{shown}\n",
                csv_num(x),
                csv_num(y),
                c.style.csv_name()
            ));
        }
    }
    out
}

// ---------------------------------------------------------------------------
// Chart: drawing
// ---------------------------------------------------------------------------

#[derive(Debug, Clone, Copy)]
enum LegendKey {
    Series { color: RGBColor, marker: Marker },
    Curve(CurveStyle),
    Censored,
}

#[derive(Debug, Clone)]
struct LegendEntry {
    key: LegendKey,
    label: String,
}

struct Sizes {
    s: f64,
    tick: f64,
    desc: f64,
    legend: f64,
    marker: i32,
}

impl Sizes {
    fn new(s: f64) -> Self {
        Sizes {
            s,
            tick: 15.5 * s,
            desc: 18.0 * s,
            legend: 15.5 * s,
            marker: (5.0 * s).round().max(3.0) as i32,
        }
    }
    fn px(&self, v: f64) -> i32 {
        (v * self.s).round() as i32
    }
}

struct AxisPlan {
    lo: f64,
    hi: f64,
    ticks: Ticks,
}

struct ChartPainter<'a> {
    spec: &'a ChartSpec,
    data: &'a PreparedChart,
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

fn curve_look(style: CurveStyle, s: f64) -> (RGBColor, u32, Option<(f64, f64)>) {
    match style {
        CurveStyle::LowerBound => (BLACK, (3.0 * s).round().max(2.0) as u32, None),
        CurveStyle::UpperBound => (
            BLACK,
            (2.0 * s).round().max(1.0) as u32,
            Some((11.0 * s, 7.0 * s)),
        ),
        CurveStyle::Guide => (
            GUIDE_GREY,
            (2.0 * s).round().max(1.0) as u32,
            Some((2.5 * s, 5.0 * s)),
        ),
    }
}

fn plan_axis(
    scale: Scale,
    range: (f64, f64),
    len_px: f64,
    horizontal: bool,
    sz: &Sizes,
) -> AxisPlan {
    AxisPlan {
        lo: range.0,
        hi: range.1,
        ticks: fit_ticks(scale, range.0, range.1, len_px, horizontal, sz.tick),
    }
}

fn build_chart<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, Shift>,
    xa: &AxisPlan,
    ya: &AxisPlan,
    x_area: i32,
    y_area: i32,
    sz: &Sizes,
) -> Result<ChartContext<'a, DB, Coord2>, String> {
    ChartBuilder::on(area)
        .margin_top(sz.px(8.0))
        .margin_left(sz.px(10.0))
        .margin_right(sz.px(28.0))
        .margin_bottom(sz.px(8.0))
        .x_label_area_size(x_area)
        .y_label_area_size(y_area)
        .build_cartesian_2d(TickAxis::new(xa), TickAxis::new(ya))
        .map_err(dr)
}

fn y_label_area(ya: &AxisPlan, desc: &str, sz: &Sizes) -> i32 {
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

fn x_label_area(desc: &str, sz: &Sizes) -> i32 {
    let desc_h = if desc.is_empty() {
        0
    } else {
        (sz.desc * 1.2).round() as i32 + sz.px(8.0)
    };
    sz.px(11.0) + (sz.tick * 1.0).round() as i32 + desc_h + sz.px(4.0)
}

fn legend_entries(spec: &ChartSpec, data: &PreparedChart) -> Vec<LegendEntry> {
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

struct LegendLayout {
    pad: i32,
    row_h: i32,
    swatch_w: i32,
    gap: i32,
    w: i32,
    h: i32,
}

fn legend_layout(entries: &mut [LegendEntry], max_text_w: i32, sz: &Sizes) -> LegendLayout {
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
fn data_samples(
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

fn sample_polyline(points: &[(f64, f64)], step: f64, out: &mut Vec<(f64, f64)>) {
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
fn choose_corner(
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

fn paint_chart<DB: DrawingBackend>(
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

/// Grid lines, axis lines and tick marks; the tick labels and axis
/// descriptions are drawn by [`draw_axis_text`] with the embedded font.
fn draw_mesh<DB: DrawingBackend>(
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
fn draw_axis_text<DB: DrawingBackend>(
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

fn marker_outline(m: Marker, c: Px, r: i32) -> Vec<Px> {
    let (x, y) = (f64::from(c.0), f64::from(c.1));
    let r = f64::from(r);
    let pts: Vec<(f64, f64)> = match m {
        Marker::Circle => Vec::new(),
        Marker::Square => {
            let h = r * 0.9;
            vec![
                (x - h, y - h),
                (x + h, y - h),
                (x + h, y + h),
                (x - h, y + h),
            ]
        }
        Marker::TriangleUp => vec![
            (x, y - r * 1.25),
            (x + r * 1.1, y + r * 0.8),
            (x - r * 1.1, y + r * 0.8),
        ],
        Marker::TriangleDown => vec![
            (x, y + r * 1.25),
            (x + r * 1.1, y - r * 0.8),
            (x - r * 1.1, y - r * 0.8),
        ],
        Marker::Diamond => vec![
            (x, y - r * 1.3),
            (x + r * 1.05, y),
            (x, y + r * 1.3),
            (x - r * 1.05, y),
        ],
    };
    pts.into_iter()
        .map(|(a, b)| (a.round() as i32, b.round() as i32))
        .collect()
}

fn draw_marker<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    m: Marker,
    c: Px,
    r: i32,
    color: RGBColor,
    hollow: bool,
    s: f64,
) -> Result<(), String> {
    let fill: RGBAColor = if hollow {
        WHITE.to_rgba()
    } else {
        color.to_rgba()
    };
    let fill_style = ShapeStyle {
        color: fill,
        filled: true,
        stroke_width: 1,
    };
    let edge_style = ShapeStyle {
        color: if hollow {
            color.to_rgba()
        } else {
            WHITE.to_rgba()
        },
        filled: false,
        stroke_width: if hollow {
            (2.0 * s).round().max(2.0) as u32
        } else {
            1
        },
    };
    if m == Marker::Circle {
        root.draw(&Circle::new(c, r, fill_style)).map_err(dr)?;
        root.draw(&Circle::new(c, r, edge_style)).map_err(dr)?;
    } else {
        let pts = marker_outline(m, c, r);
        root.draw(&Polygon::new(pts.clone(), fill_style))
            .map_err(dr)?;
        let mut closed = pts;
        if let Some(first) = closed.first().copied() {
            closed.push(first);
        }
        root.draw(&PathElement::new(closed, edge_style))
            .map_err(dr)?;
    }
    Ok(())
}

/// A small upward arrow above a marker of radius `r` at `c`.
fn draw_up_arrow<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: Px,
    r: i32,
    color: RGBColor,
    s: f64,
) -> Result<(), String> {
    let base = c.1 - (f64::from(r) * 1.35).round() as i32 - (2.0 * s).round() as i32;
    let tip = base - (14.0 * s).round() as i32;
    let head_h = (6.0 * s).round().max(4.0) as i32;
    let head_w = (4.5 * s).round().max(3.0) as i32;
    let width = (2.0 * s).round().max(1.0) as u32;
    root.draw(&PathElement::new(
        vec![(c.0, base), (c.0, tip + head_h - 1)],
        color.stroke_width(width),
    ))
    .map_err(dr)?;
    root.draw(&Polygon::new(
        vec![
            (c.0, tip),
            (c.0 + head_w, tip + head_h),
            (c.0 - head_w, tip + head_h),
        ],
        color.filled(),
    ))
    .map_err(dr)?;
    Ok(())
}

/// Splits a pixel polyline into dashes of `on` pixels separated by `off`.
fn dash_polyline(points: &[(f64, f64)], on: f64, off: f64) -> Vec<Vec<(f64, f64)>> {
    let (on, off) = (on.max(1.0), off.max(1.0));
    let mut dashes = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    let mut drawing = true;
    let mut left = on;
    for w in points.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        if !(len.is_finite() && len > 0.0) {
            continue;
        }
        let at = |t: f64| (a.0 + (b.0 - a.0) * t / len, a.1 + (b.1 - a.1) * t / len);
        let mut t = 0.0;
        while len - t > 1e-9 {
            let step = (len - t).min(left);
            if drawing {
                if current.is_empty() {
                    current.push(at(t));
                }
                current.push(at(t + step));
            }
            t += step;
            left -= step;
            if left <= 1e-9 {
                if drawing && current.len() >= 2 {
                    dashes.push(std::mem::take(&mut current));
                }
                current.clear();
                drawing = !drawing;
                left = if drawing { on } else { off };
            }
        }
    }
    if drawing && current.len() >= 2 {
        dashes.push(current);
    }
    dashes
}

fn draw_styled_path<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    pts: &[(f64, f64)],
    color: RGBColor,
    width: u32,
    dash: Option<(f64, f64)>,
) -> Result<(), String> {
    let to_px = |p: &(f64, f64)| (p.0.round() as i32, p.1.round() as i32);
    let pieces = match dash {
        None => vec![pts.to_vec()],
        Some((on, off)) => dash_polyline(pts, on, off),
    };
    for piece in pieces {
        if piece.len() >= 2 {
            let px: Vec<Px> = piece.iter().map(to_px).collect();
            root.draw(&PathElement::new(px, color.stroke_width(width)))
                .map_err(dr)?;
        }
    }
    Ok(())
}

fn draw_legend<DB: DrawingBackend>(
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

// ---------------------------------------------------------------------------
// Game pictures
// ---------------------------------------------------------------------------

#[derive(Debug, Clone)]
struct PreparedGame {
    r: f64,
    /// Valid boxes, in order.
    boxes: Vec<[f64; 4]>,
    /// Valid queries with their 0-based index in the input.
    queries: Vec<(usize, [f64; 2])>,
    /// Valid cuts.
    cuts: Vec<Cut2d>,
    /// Zoom window `(x_lo, x_hi, y_lo, y_hi)`, when the final box is small.
    zoom: Option<[f64; 4]>,
    notes: Vec<String>,
}

fn prepare_game(game: &Game2d) -> PreparedGame {
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

fn game_csv(game: &Game2d) -> String {
    let mut out = String::from("kind,index,x,y,normal_x,normal_y,offset,x_lo,x_hi,y_lo,y_hi\n");
    for (i, b) in game.boxes.iter().enumerate() {
        out.push_str(&format!(
            "box,{i},,,,,,{},{},{},{}\n",
            csv_num(b[0]),
            csv_num(b[1]),
            csv_num(b[2]),
            csv_num(b[3])
        ));
    }
    for (i, q) in game.queries.iter().enumerate() {
        out.push_str(&format!(
            "query,{},{},{},,,,,,,\n",
            i + 1,
            csv_num(q[0]),
            csv_num(q[1])
        ));
    }
    for (i, c) in game.cuts.iter().enumerate() {
        out.push_str(&format!(
            "cut,{},,,{},{},{},,,,\n",
            i + 1,
            csv_num(c.normal[0]),
            csv_num(c.normal[1]),
            csv_num(c.offset)
        ));
    }
    out
}

fn label_notes_for(data: &PreparedGame, shown: &[bool]) -> Vec<String> {
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
fn clip_line(normal: [f64; 2], offset: f64, rect: [f64; 4]) -> Option<[(f64, f64); 2]> {
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
fn visible_edges(b: [f64; 4], win: [f64; 4]) -> Vec<[(f64, f64); 2]> {
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

fn intersect(a: [f64; 4], b: [f64; 4]) -> Option<[f64; 4]> {
    let r = [
        a[0].max(b[0]),
        a[1].min(b[1]),
        a[2].max(b[2]),
        a[3].min(b[3]),
    ];
    (r[0] <= r[1] && r[2] <= r[3]).then_some(r)
}

struct GamePainter<'a> {
    game: &'a Game2d,
    data: &'a PreparedGame,
    extra_notes: &'a [String],
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
enum GameKey {
    Box,
    Final,
    Cut,
    Query,
}

struct Panel {
    /// `(x, y, width, height)` in pixels.
    rect: (i32, i32, i32, i32),
    /// The view `(x_lo, x_hi, y_lo, y_hi)`.
    window: [f64; 4],
    title: String,
    /// The zoom window to outline (whole-square panel only).
    mark: Option<[f64; 4]>,
}

/// Sizes of a game panel's parts, in pixels.
struct PanelLayout {
    title_h: i32,
    x_area: i32,
    y_area: i32,
    side: i32,
    margins: (i32, i32, i32, i32),
}

impl GamePainter<'_> {
    /// Paints the picture; returns, per input query, whether its number is
    /// shown in some panel.
    fn paint_game<DB: DrawingBackend>(
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

    fn draw_panel<DB: DrawingBackend>(
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
            let dash = Some((6.0 * sz.s, 4.0 * sz.s));
            draw_styled_path(root, &pts, TEXT, thick, dash)?;
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

/// Sizes of a panel's title, label areas and (square) plot side.
fn panel_layout(panel: &Panel, sz: &Sizes) -> PanelLayout {
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
        ticks: fit_ticks(Scale::Linear, win[2], win[3], provisional, false, sz.tick),
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

fn overlaps(a: &[i32; 4], b: &[i32; 4]) -> bool {
    a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]
}

fn draw_query_dot<DB: DrawingBackend>(
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

fn fmt_short(v: f64) -> String {
    let text = format!("{v:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text.is_empty() {
        "0".into()
    } else {
        text.to_string()
    }
}

fn fmt_factor(f: f64) -> String {
    if f >= 100.0 {
        format!("{f:.0}")
    } else {
        format!("{f:.1}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Decodes a PNG into (width, height, RGB pixels).
    fn decode_png(path: &Path) -> (u32, u32, Vec<[u8; 3]>) {
        let file = std::fs::File::open(path).expect("png exists");
        let mut reader = png::Decoder::new(file).read_info().expect("png header");
        let mut buf = vec![0; reader.output_buffer_size()];
        let info = reader.next_frame(&mut buf).expect("png frame");
        let channels = info.color_type.samples();
        assert!(
            channels >= 3,
            "unexpected colour type {:?}",
            info.color_type
        );
        assert_eq!(info.bit_depth, png::BitDepth::Eight);
        let mut pixels = Vec::with_capacity((info.width * info.height) as usize);
        for row in buf[..info.buffer_size()].chunks(info.line_size) {
            for px in row.chunks(channels) {
                pixels.push([px[0], px[1], px[2]]);
            }
        }
        (info.width, info.height, pixels)
    }

    /// The PNG has the requested size, several colours and ink in its middle.
    fn check_png(path: &Path, width: u32, height: u32) {
        let (w, h, pixels) = decode_png(path);
        assert_eq!((w, h), (width, height));
        let distinct: std::collections::HashSet<[u8; 3]> = pixels.iter().copied().collect();
        assert!(distinct.len() > 2, "only {} colours", distinct.len());
        let inked = (h / 4..3 * h / 4)
            .flat_map(|y| (w / 4..3 * w / 4).map(move |x| (x, y)))
            .filter(|&(x, y)| pixels[(y * w + x) as usize] != [255, 255, 255])
            .count();
        assert!(inked > 100, "plot area nearly blank: {inked} inked pixels");
    }

    /// The contents of the SVG's `<text>` elements, trimmed.
    fn svg_texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                let body = t.split_once('>')?.1;
                Some(body.split_once("</text>")?.0.trim().to_string())
            })
            .collect()
    }

    fn point(x: f64, median: f64) -> SeriesPoint {
        SeriesPoint {
            x,
            min: median * 0.8,
            median,
            max: median * 1.25,
            censored: false,
        }
    }

    fn spec(series: Vec<Series>, curves: Vec<Curve>) -> ChartSpec {
        ChartSpec {
            title: "Queries against the bound".into(),
            subtitle: Some("median over seeds".into()),
            x_label: "dimension d".into(),
            y_label: "oracle queries".into(),
            series,
            curves,
            width: 640,
            height: 420,
            ..ChartSpec::default()
        }
    }

    fn two_series() -> Vec<Series> {
        vec![
            Series {
                label: "bisection".into(),
                points: (1..=6)
                    .map(|d| point(f64::from(d), 10.0 * f64::from(d)))
                    .collect(),
            },
            Series {
                label: "ellipsoid".into(),
                points: (1..=6)
                    .map(|d| point(f64::from(d), 5.0 * f64::from(d * d)))
                    .collect(),
            },
        ]
    }

    fn bound() -> Curve {
        Curve {
            label: "lower bound".into(),
            points: (1..=6)
                .map(|d| (f64::from(d), 8.0 * f64::from(d)))
                .collect(),
            style: CurveStyle::LowerBound,
        }
    }

    #[test]
    fn chart_writes_svg_png_csv_with_texts() {
        let dir = tempfile::tempdir().expect("tempdir");
        let mut s = spec(two_series(), vec![bound()]);
        s.curves.push(Curve {
            label: "upper bound".into(),
            points: vec![(1.0, 20.0), (6.0, 400.0)],
            style: CurveStyle::UpperBound,
        });
        s.curves.push(Curve {
            label: "guide".into(),
            points: vec![(1.0, 50.0), (6.0, 50.0)],
            style: CurveStyle::Guide,
        });
        let files = draw(&s, &dir.path().join("sub/chart")).expect("drawn");
        assert!(files.notes.is_empty(), "{:?}", files.notes);
        check_png(&files.png, 640, 420);
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        for text in [
            "Queries against the bound",
            "median over seeds",
            "dimension d",
            "oracle queries",
            "bisection",
            "ellipsoid",
            "lower bound",
            "upper bound",
        ] {
            assert!(svg.contains(text), "SVG lacks {text:?}");
        }
        assert!(svg.contains(FAMILY));
        let texts = svg_texts(&svg);
        assert!(texts.iter().any(|t| t == "dimension d"));
        assert!(texts.iter().any(|t| t == "oracle queries"));
        assert!(!svg.contains("censored (budget)"));
        let csv = std::fs::read_to_string(&files.csv).expect("csv");
        let mut lines = csv.lines();
        assert_eq!(
            lines.next(),
            Some("kind,label,x,y,min,median,max,censored,curve_style,plotted")
        );
        assert_eq!(
            lines.clone().filter(|l| l.starts_with("series,")).count(),
            12
        );
        assert_eq!(lines.filter(|l| l.starts_with("curve,")).count(), 10);
        assert!(csv.contains("series,bisection,1,10,8,10,12.5,false,,true"));
        assert!(csv.contains("curve,lower bound,1,8,,,,,lower_bound,true"));
    }

    #[test]
    fn one_point_and_single_series_draw() {
        let dir = tempfile::tempdir().expect("tempdir");
        let one = Series {
            label: "only".into(),
            points: vec![point(3.0, 7.0)],
        };
        let files = draw(&spec(vec![one], vec![]), &dir.path().join("one")).expect("drawn");
        check_png(&files.png, 640, 420);
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        assert!(svg.contains("only"));

        let single = spec(two_series()[..1].to_vec(), vec![]);
        let files = draw(&single, &dir.path().join("single")).expect("drawn");
        check_png(&files.png, 640, 420);
    }

    #[test]
    fn equal_values_and_empty_charts_still_draw() {
        let dir = tempfile::tempdir().expect("tempdir");
        let flat = Series {
            label: "flat".into(),
            points: (0..4)
                .map(|i| SeriesPoint {
                    x: 2.0,
                    min: 5.0,
                    median: 5.0,
                    max: 5.0,
                    censored: i == 3,
                })
                .collect(),
        };
        for (x_scale, y_scale) in [(Scale::Linear, Scale::Linear), (Scale::Log2, Scale::Log10)] {
            let s = ChartSpec {
                x_scale,
                y_scale,
                ..spec(vec![flat.clone()], vec![])
            };
            let files = draw(&s, &dir.path().join("flat")).expect("drawn");
            check_png(&files.png, 640, 420);
        }
        let empty = spec(vec![], vec![]);
        let files = draw(&empty, &dir.path().join("empty")).expect("drawn");
        assert!(files.notes.iter().any(|n| n.contains("nothing to plot")));
        let (w, h, _) = decode_png(&files.png);
        assert_eq!((w, h), (640, 420));
    }

    #[test]
    fn log_axes_drop_zero_and_negative_values_with_a_note() {
        let dir = tempfile::tempdir().expect("tempdir");
        let mut series = two_series();
        series[0].points.push(point(7.0, 0.0));
        series[0].points.push(point(8.0, -3.0));
        series[1].points.push(SeriesPoint {
            x: 0.0,
            min: 1.0,
            median: 2.0,
            max: 3.0,
            censored: false,
        });
        series[1].points.push(SeriesPoint {
            x: 7.0,
            min: 0.0,
            median: 2.0,
            max: 3.0,
            censored: false,
        });
        series[1].points.push(point(f64::NAN, 1.0));
        let mut curve = bound();
        curve.points.push((2.0, 0.0));
        let s = ChartSpec {
            x_scale: Scale::Log2,
            y_scale: Scale::Log10,
            ..spec(series, vec![curve])
        };
        let files = draw(&s, &dir.path().join("log")).expect("drawn");
        check_png(&files.png, 640, 420);
        let expected = [
            "1 point with x ≤ 0 dropped from the log x axis",
            "3 points with y ≤ 0 dropped from the log y axis",
            "1 band with min ≤ 0 clipped at the bottom of the log y axis",
            "1 point with non-finite values dropped",
        ];
        assert_eq!(files.notes, expected);
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        assert!(
            svg.contains("dropped from the log y axis"),
            "note missing in SVG"
        );
        assert!(
            svg.contains("dropped from the log x axis"),
            "note missing in SVG"
        );
        let csv = std::fs::read_to_string(&files.csv).expect("csv");
        assert!(csv.contains("series,bisection,8,-3,-2.4000000000000004,-3,-3.75,false,,false"));
        assert!(csv.contains("series,ellipsoid,NaN,1,0.8,1,1.25,false,,false"));
    }

    #[test]
    fn censored_points_are_hollow_with_one_legend_entry() {
        let dir = tempfile::tempdir().expect("tempdir");
        let mut series = two_series();
        for s in &mut series {
            if let Some(last) = s.points.last_mut() {
                last.censored = true;
            }
        }
        let files = draw(&spec(series, vec![bound()]), &dir.path().join("c")).expect("drawn");
        check_png(&files.png, 640, 420);
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        assert_eq!(svg.matches("censored (budget)").count(), 1);
        // Hollow markers: white fill inside the series colour's outline.
        assert!(svg.contains(r##"stroke="#0072B2" stroke-width="2""##));
        assert!(svg.contains(r##"fill="#FFFFFF""##));
        let csv = std::fs::read_to_string(&files.csv).expect("csv");
        assert_eq!(csv.matches(",true,,true").count(), 2);
    }

    #[test]
    fn bad_sizes_and_stems_are_errors() {
        let dir = tempfile::tempdir().expect("tempdir");
        let small = ChartSpec {
            width: 10,
            ..spec(two_series(), vec![])
        };
        let err = draw(&small, &dir.path().join("x")).expect_err("too small");
        assert!(matches!(err, Error::Chart { .. }), "{err}");
        assert!(err.to_string().contains("10x420"));
        let err = draw(&spec(vec![], vec![]), Path::new("")).expect_err("no stem");
        assert!(matches!(err, Error::Chart { .. }), "{err}");
        let blocker = dir.path().join("file");
        std::fs::write(&blocker, "x").expect("write");
        let err = draw(&spec(vec![], vec![]), &blocker.join("chart")).expect_err("not a dir");
        assert!(matches!(err, Error::Io { .. }), "{err}");
    }

    #[test]
    fn extreme_values_never_panic() {
        let dir = tempfile::tempdir().expect("tempdir");
        let extremes = [
            (1e-300, 1e300),
            (-f64::MAX, f64::MAX),
            (1e12, 1e12 + 1e-3),
            (5e-324, 1e-320),
        ];
        for (k, (a, b)) in extremes.into_iter().enumerate() {
            for (x_scale, y_scale) in [(Scale::Linear, Scale::Linear), (Scale::Log10, Scale::Log2)]
            {
                let series = vec![Series {
                    label: "a, \"quoted\" <label> & more ".repeat(4),
                    points: vec![
                        SeriesPoint {
                            x: a,
                            min: a,
                            median: a,
                            max: b,
                            censored: true,
                        },
                        SeriesPoint {
                            x: b,
                            min: a,
                            median: b,
                            max: b,
                            censored: false,
                        },
                    ],
                }];
                let curves = vec![Curve {
                    label: String::new(),
                    points: vec![(a, b), (b, a)],
                    style: CurveStyle::Guide,
                }];
                let s = ChartSpec {
                    title: "t".repeat(300),
                    x_scale,
                    y_scale,
                    width: MIN_WIDTH,
                    height: MIN_HEIGHT,
                    ..spec(series, curves)
                };
                draw(&s, &dir.path().join(format!("x{k}"))).expect("drawn");
            }
        }
        // A header taller than the image leaves no room for the plot.
        let wordy = ChartSpec {
            title: "many words ".repeat(200),
            width: MIN_WIDTH,
            height: MIN_HEIGHT,
            ..spec(two_series(), vec![bound()])
        };
        draw(&wordy, &dir.path().join("wordy")).expect("drawn");
        let wordy_game = Game2d {
            title: "many words ".repeat(200),
            width: MIN_WIDTH,
            height: MIN_HEIGHT,
            ..halving_game(12)
        };
        draw_game_2d(&wordy_game, &dir.path().join("wordy_game")).expect("drawn");
        let huge = Game2d {
            half_width: 1e300,
            queries: vec![[1e300, -1e300], [0.0, 0.0]],
            cuts: vec![Cut2d {
                normal: [1e-300, 1e300],
                offset: 1.0,
            }],
            boxes: vec![[-1e300, 1e300, -1e300, 1e300], [0.0, 0.0, 0.0, 0.0]],
            width: MIN_WIDTH,
            height: MIN_HEIGHT,
            ..Game2d::default()
        };
        draw_game_2d(&huge, &dir.path().join("huge")).expect("drawn");
    }

    #[test]
    fn csv_fields_are_quoted_when_needed() {
        assert_eq!(csv_field("plain"), "plain");
        assert_eq!(csv_field("a,b"), "\"a,b\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(csv_num(f64::INFINITY), "inf");
        assert_eq!(csv_num(0.5), "0.5");
    }

    #[test]
    fn ticks_are_round_and_labelled() {
        let t = axis_ticks(Scale::Linear, -0.3, 10.4, 6);
        let labels: Vec<&str> = t.bold.iter().map(|b| b.1.as_str()).collect();
        assert_eq!(labels, ["0", "2", "4", "6", "8", "10"]);
        let t = axis_ticks(Scale::Linear, 0.0, 0.001, 5);
        assert_eq!(t.bold[1].1, "0.0002");
        let t = axis_ticks(Scale::Linear, 0.0, 3.0e7, 4);
        assert_eq!(t.bold[1].1, "1e7");
        let t = axis_ticks(Scale::Log10, 0.5, 4.2, 10);
        let labels: Vec<&str> = t.bold.iter().map(|b| b.1.as_str()).collect();
        assert_eq!(labels, ["10", "100", "1000", "10000"]);
        assert!(!t.light.is_empty());
        let t = axis_ticks(Scale::Log10, -7.5, 9.0, 10);
        assert!(t.bold.iter().all(|b| b.1.starts_with("10")));
        assert!(t.bold.iter().any(|b| b.1 == "10⁻⁶"));
        let t = axis_ticks(Scale::Log2, 0.8, 6.2, 10);
        let labels: Vec<&str> = t.bold.iter().map(|b| b.1.as_str()).collect();
        assert_eq!(labels, ["2", "4", "8", "16", "32", "64"]);
        let t = axis_ticks(Scale::Log2, -30.0, -10.0, 5);
        assert!(t.bold.iter().all(|b| b.1.starts_with("2⁻")));
        // Less than one decade: round numbers of the data.
        let t = axis_ticks(Scale::Log10, 2.0f64.log10(), 7.0f64.log10(), 6);
        assert!(t.bold.len() >= 3);
        assert!(t.bold.iter().any(|b| b.1 == "5"));
    }

    #[test]
    fn degenerate_ranges_are_padded() {
        assert_eq!(padded_range(&[], Scale::Linear), (0.0, 1.0));
        assert_eq!(padded_range(&[0.0], Scale::Linear), (-1.0, 1.0));
        assert_eq!(padded_range(&[10.0, 10.0], Scale::Linear), (9.0, 11.0));
        assert_eq!(padded_range(&[1.0], Scale::Log10), (0.5, 1.5));
        let (lo, hi) = padded_range(&[0.0, 10.0], Scale::Linear);
        assert!((lo + 0.5).abs() < 1e-12 && (hi - 10.5).abs() < 1e-12);
    }

    #[test]
    fn lines_are_clipped_to_the_window() {
        let win = [-1.0, 1.0, -1.0, 1.0];
        let seg = clip_line([1.0, 0.0], 0.5, win).expect("crosses");
        let xs = [seg[0].0, seg[1].0];
        assert!(xs.iter().all(|x| (x - 0.5).abs() < 1e-12));
        let ys = [seg[0].1.min(seg[1].1), seg[0].1.max(seg[1].1)];
        assert_eq!(ys, [-1.0, 1.0]);
        let diag = clip_line([1.0, 1.0], 0.0, win).expect("crosses");
        let len = ((diag[0].0 - diag[1].0).powi(2) + (diag[0].1 - diag[1].1).powi(2)).sqrt();
        assert!((len - 8f64.sqrt()).abs() < 1e-9);
        assert!(clip_line([1.0, 0.0], 2.0, win).is_none());
        assert_eq!(visible_edges([0.0, 2.0, 0.0, 0.5], win).len(), 3);
    }

    #[test]
    fn dashes_alternate_along_the_path() {
        let dashes = dash_polyline(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0)], 4.0, 2.0);
        // 20 px of path: dashes at 0-4, 6-10, 12-16, 18-20.
        assert_eq!(dashes.len(), 4);
        let length = |d: &Vec<(f64, f64)>| {
            d.windows(2)
                .map(|w| ((w[1].0 - w[0].0).powi(2) + (w[1].1 - w[0].1).powi(2)).sqrt())
                .sum::<f64>()
        };
        assert!((length(&dashes[1]) - 4.0).abs() < 1e-9);
        assert!((length(&dashes[3]) - 2.0).abs() < 1e-9);
        assert!(dash_polyline(&[(0.0, 0.0)], 4.0, 2.0).is_empty());
    }

    fn halving_game(steps: usize) -> Game2d {
        let mut boxes = vec![[-1.0, 1.0, -1.0, 1.0]];
        let mut queries = Vec::new();
        let mut cuts = Vec::new();
        for k in 0..steps {
            let b = boxes[boxes.len() - 1];
            let q = [(b[0] + b[1]) / 2.0, (b[2] + b[3]) / 2.0];
            queries.push(q);
            let mut next = b;
            if k % 2 == 0 {
                next[1] = q[0];
                cuts.push(Cut2d {
                    normal: [1.0, 0.0],
                    offset: q[0],
                });
            } else {
                next[2] = q[1];
                cuts.push(Cut2d {
                    normal: [0.0, -1.0],
                    offset: -q[1],
                });
            }
            boxes.push(next);
        }
        Game2d {
            title: "Halving game".into(),
            half_width: 1.0,
            boxes,
            queries,
            cuts,
            width: 800,
            height: 520,
        }
    }

    #[test]
    fn game_picture_has_zoom_numbers_and_csv() {
        let dir = tempfile::tempdir().expect("tempdir");
        let game = halving_game(10);
        let files = draw_game_2d(&game, &dir.path().join("game")).expect("drawn");
        check_png(&files.png, 800, 520);
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        assert!(svg.contains("Halving game"));
        assert!(svg.contains("zoom ×"));
        let texts = svg_texts(&svg);
        assert!(texts.iter().any(|t| t == "1") && texts.iter().any(|t| t == "10"));
        let csv = std::fs::read_to_string(&files.csv).expect("csv");
        assert!(csv.starts_with("kind,index,x,y,normal_x,normal_y,offset,x_lo,x_hi,y_lo,y_hi\n"));
        assert_eq!(csv.matches("\nbox,").count(), 11);
        assert_eq!(csv.matches("\nquery,").count(), 10);
        assert_eq!(csv.matches("\ncut,").count(), 10);
        assert!(csv.contains("\nquery,1,0,0,,,,,,,\n"));
        assert!(csv.contains("\ncut,2,,,0,-1,-0,,,,\n"));

        // A short game needs no zoom.
        let files = draw_game_2d(&halving_game(2), &dir.path().join("short")).expect("drawn");
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        assert!(!svg.contains("zoom ×"));
        check_png(&files.png, 800, 520);
    }

    #[test]
    fn game_with_many_queries_numbers_the_first_thirty() {
        let dir = tempfile::tempdir().expect("tempdir");
        let mut game = halving_game(4);
        game.queries = (0..45)
            .map(|i| {
                let t = f64::from(i) / 45.0 * std::f64::consts::TAU;
                [0.8 * t.cos(), 0.8 * t.sin()]
            })
            .collect();
        let files = draw_game_2d(&game, &dir.path().join("many")).expect("drawn");
        assert!(files
            .notes
            .iter()
            .any(|n| n.contains("only the first 30 of 45 queries are numbered")));
        let svg = std::fs::read_to_string(&files.svg).expect("svg");
        assert!(svg.contains("only the first 30 of 45 queries"));
        let texts = svg_texts(&svg);
        assert!(texts.iter().any(|t| t == "30"));
        assert!(!texts.iter().any(|t| t == "31"));
        check_png(&files.png, 800, 520);
    }

    #[test]
    fn game_input_problems_are_notes_or_errors() {
        let dir = tempfile::tempdir().expect("tempdir");
        let bad = Game2d {
            half_width: 0.0,
            ..halving_game(2)
        };
        let err = draw_game_2d(&bad, &dir.path().join("bad")).expect_err("R = 0");
        assert!(matches!(err, Error::Chart { .. }), "{err}");
        let mut odd = halving_game(3);
        odd.cuts.push(Cut2d {
            normal: [0.0, 0.0],
            offset: 1.0,
        });
        odd.queries.push([f64::NAN, 0.0]);
        odd.boxes.push([1.0, -1.0, 0.0, 0.0]);
        let files = draw_game_2d(&odd, &dir.path().join("odd")).expect("drawn");
        assert_eq!(files.notes.len(), 3, "{:?}", files.notes);
        let empty = Game2d {
            title: "nothing yet".into(),
            ..Game2d::default()
        };
        let files = draw_game_2d(&empty, &dir.path().join("empty")).expect("drawn");
        assert!(files.notes.is_empty());
        let (w, h, _) = decode_png(&files.png);
        assert_eq!((w, h), (DEFAULT_WIDTH, DEFAULT_HEIGHT));
    }
}
