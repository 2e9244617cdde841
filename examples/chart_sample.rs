//! Renders a sample chart and a sample game picture, to look at the charts
//! module's output: `cargo run --example chart_sample -- OUT_DIR`
//! writes `OUT_DIR/sample_chart.{svg,png,csv}` and `OUT_DIR/sample_game.{svg,png,csv}`.

use std::path::PathBuf;

use naysayer::chart::{
    draw, draw_game_2d, ChartSpec, Curve, CurveStyle, Cut2d, Flag, FlaggedGame, Game2d, Scale,
    Series, SeriesPoint,
};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out = PathBuf::from(std::env::args().nth(1).unwrap_or_else(|| ".".into()));
    let dims = [2.0, 4.0, 8.0, 16.0, 32.0, 64.0];
    let log_inv_eps = 20.0;
    let mk = |label: &str, f: &dyn Fn(f64) -> f64, spread: f64, censor_above: f64| Series {
        label: label.into(),
        points: dims
            .iter()
            .map(|&d| {
                let m = f(d);
                let censored = m > censor_above;
                let m = m.min(censor_above);
                SeriesPoint {
                    x: d,
                    min: m / spread,
                    median: m,
                    max: (m * spread).min(censor_above),
                    censored,
                }
            })
            .collect(),
        ..Series::default()
    };
    // A solver that wrongly claimed "empty" early, and one that failed: drawn as their
    // own marks, outside the median and band.
    let mut random = mk("random cuts", &|d| 6.0 * d * log_inv_eps, 2.0, 1e6);
    random.flagged = vec![
        FlaggedGame {
            x: 8.0,
            y: 3.0,
            flag: Flag::EmptyRefuted,
        },
        FlaggedGame {
            x: 32.0,
            y: 150.0,
            flag: Flag::MethodFailed,
        },
    ];
    let spec = ChartSpec {
        title: "Queries to certify emptiness against the resisting oracle".into(),
        subtitle: Some("median over 16 seeds, band = min..max; eps = 2^-20".into()),
        x_label: "dimension d".into(),
        y_label: "oracle queries".into(),
        x_scale: Scale::Log2,
        y_scale: Scale::Log10,
        series: vec![
            mk("center of gravity", &|d| 1.4 * d * log_inv_eps, 1.15, 1e6),
            mk("ellipsoid", &|d| 2.0 * d * d * log_inv_eps, 1.3, 4e4),
            random,
        ],
        curves: vec![
            Curve {
                label: "lower bound d log2(1/eps)".into(),
                points: dims.iter().map(|&d| (d, d * log_inv_eps)).collect(),
                style: CurveStyle::LowerBound,
                look: None,
            },
            Curve {
                label: "upper bound 2 d^2 log2(1/eps)".into(),
                points: dims
                    .iter()
                    .map(|&d| (d, 2.2 * d * d * log_inv_eps))
                    .collect(),
                style: CurveStyle::UpperBound,
                look: None,
            },
            Curve {
                label: "budget".into(),
                points: vec![(2.0, 4e4), (64.0, 4e4)],
                style: CurveStyle::Guide,
                look: None,
            },
        ],
        x_integer: true,
        footnotes: vec![
            "Invented numbers, to show the look: the lower line holds for every method; the \
             upper line for the ellipsoid method only."
                .into(),
        ],
        ..ChartSpec::default()
    };
    let files = draw(&spec, &out.join("sample_chart"))?;
    println!("{files:?}");

    // A halving game in the square [-1, 1]^2: each answer halves the alive box
    // along its longer side through the query at its centre.
    let mut boxes = vec![[-1.0, 1.0, -1.0, 1.0]];
    let mut queries = Vec::new();
    let mut cuts = Vec::new();
    let target = [0.3137, -0.5821];
    for _ in 0..12 {
        let b: [f64; 4] = *boxes.last().unwrap_or(&[-1.0, 1.0, -1.0, 1.0]);
        let q = [(b[0] + b[1]) / 2.0, (b[2] + b[3]) / 2.0];
        queries.push(q);
        let mut nb = b;
        if b[1] - b[0] >= b[3] - b[2] {
            if target[0] < q[0] {
                nb[1] = q[0];
                cuts.push(Cut2d {
                    normal: [1.0, 0.0],
                    offset: q[0],
                });
            } else {
                nb[0] = q[0];
                cuts.push(Cut2d {
                    normal: [-1.0, 0.0],
                    offset: -q[0],
                });
            }
        } else if target[1] < q[1] {
            nb[3] = q[1];
            cuts.push(Cut2d {
                normal: [0.0, 1.0],
                offset: q[1],
            });
        } else {
            nb[2] = q[1];
            cuts.push(Cut2d {
                normal: [0.0, -1.0],
                offset: -q[1],
            });
        }
        boxes.push(nb);
    }
    let game = Game2d {
        title: "Halving against the box adversary, d = 2".into(),
        half_width: 1.0,
        boxes,
        queries,
        cuts,
        ..Game2d::default()
    };
    let files = draw_game_2d(&game, &out.join("sample_game"))?;
    println!("{files:?}");
    Ok(())
}
