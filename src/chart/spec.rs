//! What a chart or a game picture shows: the public specifications [`draw`](super::draw)
//! and [`draw_game_2d`](super::draw_game_2d) take, and the files they write.

use std::path::PathBuf;

use super::{DEFAULT_HEIGHT, DEFAULT_WIDTH};

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

/// One method's measurements: a min–max band, a median line and markers, and the games
/// drawn apart from them ([`FlaggedGame`]).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Series {
    /// Legend text (usually the method's name).
    pub label: String,
    /// The points, in any order (they are sorted by x for drawing).
    pub points: Vec<SeriesPoint>,
    /// Games whose count is not a completed game (a refuted output, a failed method),
    /// each drawn as its own marker in the series' colour and named in the legend; the
    /// caller leaves them out of `points`.
    pub flagged: Vec<FlaggedGame>,
    /// The series' fixed look: its colour and marker are [`series_look`](super::series_look)
    /// of this number. Give every method its place in the scenario's method list, so that
    /// it looks the same in every chart of a results folder (and in the report); `None`
    /// takes the series' position in this chart.
    pub look: Option<usize>,
}

/// How a game ended when its count is not a completed game; the names are the
/// `outcome` values of `games.csv`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Flag {
    /// `output-refuted`: a witness agreeing with every answer shows the output wrong.
    OutputRefuted,
    /// `empty-refuted`: the method said "empty" and a nonempty witness agrees with every
    /// answer.
    EmptyRefuted,
    /// `empty-breaks-promise`: the method said "empty" although the class promises a
    /// nonempty K.
    EmptyBreaksPromise,
    /// `method-failed`: the method gave up, broke the protocol or made a bad query.
    MethodFailed,
}

impl Flag {
    /// Every flag, in legend order.
    pub const ALL: [Flag; 4] = [
        Flag::OutputRefuted,
        Flag::EmptyRefuted,
        Flag::EmptyBreaksPromise,
        Flag::MethodFailed,
    ];

    /// The `outcome` value of `games.csv` (also the chart CSV's `outcome` column).
    pub fn outcome(self) -> &'static str {
        match self {
            Flag::OutputRefuted => "output-refuted",
            Flag::EmptyRefuted => "empty-refuted",
            Flag::EmptyBreaksPromise => "empty-breaks-promise",
            Flag::MethodFailed => "method-failed",
        }
    }

    /// The flag of a `games.csv` outcome, `None` for completed or censored games.
    pub fn from_outcome(outcome: &str) -> Option<Flag> {
        Flag::ALL.into_iter().find(|f| f.outcome() == outcome)
    }

    /// The legend text.
    pub fn legend(self) -> &'static str {
        match self {
            Flag::OutputRefuted => "output refuted by a witness (not a lower bound)",
            Flag::EmptyRefuted => "wrong \"empty\" claim (a nonempty witness agrees)",
            Flag::EmptyBreaksPromise => "\"empty\" claimed although K is promised nonempty",
            Flag::MethodFailed => "method failed (no output)",
        }
    }
}

/// One game drawn apart from its series' line and band.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlaggedGame {
    /// The x value.
    pub x: f64,
    /// The game's count (queries used).
    pub y: f64,
    /// How it ended.
    pub flag: Flag,
}

/// How a [`Curve`] is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CurveStyle {
    /// A proven lower bound: thick black line (solid, then long dashes, dash-dots).
    LowerBound,
    /// An upper bound (what a known method guarantees): black line with dashes (dashed,
    /// dash-dot, long dashes, dash-dot-dot, short dashes).
    UpperBound,
    /// Any other guide line: grey line (dotted, dot-dash).
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
    /// Which variant of its style's dash patterns the curve gets: give every bound line
    /// of a results folder its own fixed number so that it looks the same in every chart;
    /// `None` takes the curve's position among this chart's curves of its style. Two
    /// curves of one style in one chart never share a pattern unless there are more
    /// curves than patterns.
    pub look: Option<usize>,
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

/// Everything [`draw`](super::draw) needs for one chart.
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
    /// Whether x takes whole numbers only (a dimension, a query index): ticks then sit
    /// at whole numbers only.
    pub x_integer: bool,
    /// Whether y takes whole numbers only.
    pub y_integer: bool,
    /// What the curves and series assume, one sentence each, printed under the plot
    /// (grey, wrapped, never cut).
    pub footnotes: Vec<String>,
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
            x_integer: false,
            y_integer: false,
            footnotes: Vec::new(),
            width: DEFAULT_WIDTH,
            height: DEFAULT_HEIGHT,
        }
    }
}

/// The files written by [`draw`](super::draw) or [`draw_game_2d`](super::draw_game_2d), and the notes shown on
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

/// Everything [`draw_game_2d`](super::draw_game_2d) needs for a picture of a two-dimensional game.
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
