//! The CSV written beside each picture (layouts in the module documentation of
//! [`crate::chart`]).

use super::prepare::PreparedChart;
use super::{ChartSpec, Game2d};

pub(super) fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

pub(super) fn csv_num(v: f64) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        if v > 0.0 { "inf" } else { "-inf" }.into()
    } else {
        format!("{v}")
    }
}

pub(super) fn chart_csv(spec: &ChartSpec, prepared: &PreparedChart) -> String {
    let mut out =
        String::from("kind,label,x,y,min,median,max,censored,curve_style,plotted,outcome\n");
    for (s, plotted) in spec.series.iter().zip(&prepared.series_plotted) {
        let label = csv_field(&s.label);
        for (p, shown) in s.points.iter().zip(plotted) {
            out.push_str(&format!(
                "series,{label},{},{},{},{},{},{},,{shown},\n",
                csv_num(p.x),
                csv_num(p.median),
                csv_num(p.min),
                csv_num(p.median),
                csv_num(p.max),
                p.censored
            ));
        }
    }
    for (s, plotted) in spec.series.iter().zip(&prepared.flags_plotted) {
        let label = csv_field(&s.label);
        for (f, shown) in s.flagged.iter().zip(plotted) {
            out.push_str(&format!(
                "flagged,{label},{},{},,,,,,{shown},{}\n",
                csv_num(f.x),
                csv_num(f.y),
                f.flag.outcome()
            ));
        }
    }
    for (c, plotted) in spec.curves.iter().zip(&prepared.curve_plotted) {
        let label = csv_field(&c.label);
        for (&(x, y), shown) in c.points.iter().zip(plotted) {
            out.push_str(&format!(
                "curve,{label},{},{},,,,,{},{shown},\n",
                csv_num(x),
                csv_num(y),
                c.style.csv_name()
            ));
        }
    }
    out
}

pub(super) fn game_csv(game: &Game2d) -> String {
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
