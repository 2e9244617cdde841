//! The report as one self-contained HTML file: styles in the page, charts inlined as
//! SVG, method swatches inlined as small SVGs; no script, no font or file fetched.
//!
//! Each chart sits in a `figure` with a 3-pixel border of its own colour,
//! `rgb(190, 196, 200 + k)` for the k-th chart (k from 0), so that a screenshot can
//! locate every chart (the browser test does).

use crate::chart::series_swatch_svg;

use super::document::{Block, Cell, Chart, Document, Table};

/// The border colour of the `k`-th chart's figure.
pub fn figure_color(k: usize) -> (u8, u8, u8) {
    (190, 196, 200 + (k % 56) as u8)
}

/// Escapes text for HTML.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const STYLE: &str = "
body { font-family: 'DejaVu Sans', Verdana, sans-serif; margin: 24px; color: #141414;
       background: #ffffff; line-height: 1.4; }
h1 { font-size: 26px; margin: 0 0 8px 0; }
h2 { font-size: 20px; margin: 28px 0 8px 0; border-bottom: 1px solid #dddddd; }
p, li { max-width: 60em; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 2px 16px; }
dl.facts dt { font-weight: bold; }
dl.facts dd { margin: 0; }
.charts { display: grid; grid-template-columns: repeat(auto-fill, minmax(520px, 1fr));
          gap: 16px; }
figure.chart { margin: 0; padding: 4px; border-style: solid; border-width: 3px;
               background: #ffffff; }
figure.chart svg { display: block; width: 100%; height: auto; }
figure.chart figcaption { font-size: 13px; color: #5a5a5a; padding: 4px 2px 0 2px; }
table { border-collapse: collapse; margin: 6px 0 18px 0; font-size: 13px; }
caption { text-align: left; font-weight: bold; padding: 4px 0; }
th, td { border: 1px solid #cccccc; padding: 2px 6px; text-align: right; }
th { background: #f2f2f2; }
td.text, th.text { text-align: left; }
td .swatch { vertical-align: middle; margin-right: 4px; }
pre { background: #f6f6f6; padding: 8px; overflow-x: auto; }
";

/// The whole page.
pub fn render(doc: &Document) -> String {
    let mut out = String::new();
    out.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    out.push_str(&format!("<title>{}</title>\n", escape(&doc.title)));
    out.push_str(&format!("<style>{STYLE}</style>\n</head>\n<body>\n"));
    out.push_str(&format!("<h1>{}</h1>\n", escape(&doc.title)));
    out.push_str("<nav><p>");
    let links: Vec<String> = doc
        .sections
        .iter()
        .map(|s| format!("<a href=\"#{}\">{}</a>", s.id, escape(&s.heading)))
        .collect();
    out.push_str(&links.join(" · "));
    out.push_str("</p></nav>\n");
    let mut figure = 0;
    for section in &doc.sections {
        out.push_str(&format!(
            "<section id=\"{}\">\n<h2>{}</h2>\n",
            section.id,
            escape(&section.heading)
        ));
        for block in &section.blocks {
            render_block(block, &mut figure, &mut out);
        }
        out.push_str("</section>\n");
    }
    out.push_str("</body>\n</html>\n");
    out
}

fn render_block(block: &Block, figure: &mut usize, out: &mut String) {
    match block {
        Block::Paragraph(text) => out.push_str(&format!("<p>{}</p>\n", escape(text))),
        Block::Facts(facts) => {
            out.push_str("<dl class=\"facts\">\n");
            for (k, v) in facts {
                out.push_str(&format!("<dt>{}</dt><dd>{}</dd>\n", escape(k), escape(v)));
            }
            out.push_str("</dl>\n");
        }
        Block::List(items) => {
            out.push_str("<ul>\n");
            for item in items {
                out.push_str(&format!("<li>{}</li>\n", escape(item)));
            }
            out.push_str("</ul>\n");
        }
        Block::Commands(lines) => {
            out.push_str(&format!(
                "<pre><code>{}</code></pre>\n",
                escape(&lines.join("\n"))
            ));
        }
        Block::Table(table) => render_table(table, out),
        Block::Charts(charts) => {
            out.push_str("<div class=\"charts\">\n");
            for chart in charts {
                render_chart(chart, *figure, out);
                *figure += 1;
            }
            out.push_str("</div>\n");
        }
    }
}

fn render_chart(chart: &Chart, k: usize, out: &mut String) {
    let (r, g, b) = figure_color(k);
    out.push_str(&format!(
        "<figure class=\"chart\" id=\"chart-{}\" style=\"border-color: rgb({r}, {g}, {b})\">\n",
        escape(&chart.name)
    ));
    // The SVG as drawn, without an XML declaration.
    let svg = chart
        .svg
        .trim_start()
        .strip_prefix("<?xml")
        .and_then(|rest| rest.split_once("?>").map(|(_, s)| s))
        .unwrap_or(&chart.svg);
    out.push_str(svg.trim());
    out.push_str(&format!(
        "\n<figcaption>{0} (files: <a href=\"{0}.svg\">{0}.svg</a>, <a href=\"{0}.png\">{0}.png</a>, \
         data <a href=\"{0}.csv\">{0}.csv</a>)</figcaption>\n</figure>\n",
        escape(&chart.name)
    ));
}

fn render_cell(cell: &Cell, tag: &str, text_column: bool, out: &mut String) {
    let class = if text_column { " class=\"text\"" } else { "" };
    out.push_str(&format!("<{tag}{class}>"));
    if let Some(look) = cell.look {
        out.push_str(&series_swatch_svg(look).replacen("<svg ", "<svg class=\"swatch\" ", 1));
    }
    out.push_str(&escape(&cell.text));
    out.push_str(&format!("</{tag}>"));
}

fn render_table(table: &Table, out: &mut String) {
    // Columns holding words (not numbers) are left-aligned.
    let text_columns: Vec<bool> = (0..table.header.len())
        .map(|i| {
            table.rows.iter().any(|row| {
                row.get(i)
                    .is_some_and(|c| c.look.is_some() || !looks_numeric(&c.text))
            })
        })
        .collect();
    out.push_str(&format!(
        "<table id=\"{}\" class=\"results\">\n<caption>{}</caption>\n<thead><tr>",
        table.id,
        escape(&table.caption)
    ));
    for (i, h) in table.header.iter().enumerate() {
        render_cell(&Cell::text(h.clone()), "th", text_columns[i], out);
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    for row in &table.rows {
        out.push_str("<tr>");
        for (i, cell) in row.iter().enumerate() {
            render_cell(
                cell,
                "td",
                text_columns.get(i).copied().unwrap_or(true),
                out,
            );
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n");
}

fn looks_numeric(text: &str) -> bool {
    text == "-"
        || text.parse::<f64>().is_ok()
        || text.split(" of ").all(|p| p.parse::<u64>().is_ok())
}
