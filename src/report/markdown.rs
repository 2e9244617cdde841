//! The report as Markdown (GitHub flavour): the same sections and tables as the HTML
//! page, charts linked as the PNG files beside it.

use super::document::{Block, Document, Table};

/// Escapes the characters that would break a table cell or start markup.
fn cell(text: &str) -> String {
    text.replace('\\', "\\\\")
        .replace('|', "\\|")
        .replace('*', "\\*")
        .replace('_', "\\_")
        .replace('\n', " ")
}

/// The whole document.
pub fn render(doc: &Document) -> String {
    let mut out = format!("# {}\n\n", doc.title);
    for section in &doc.sections {
        out.push_str(&format!("## {}\n\n", section.heading));
        for block in &section.blocks {
            match block {
                Block::Paragraph(text) => out.push_str(&format!("{text}\n\n")),
                Block::Facts(facts) => {
                    for (k, v) in facts {
                        out.push_str(&format!("- **{k}**: {v}\n"));
                    }
                    out.push('\n');
                }
                Block::List(items) => {
                    for item in items {
                        out.push_str(&format!("- {item}\n"));
                    }
                    out.push('\n');
                }
                Block::Commands(lines) => {
                    out.push_str(&format!("```sh\n{}\n```\n\n", lines.join("\n")));
                }
                Block::Charts(charts) => {
                    for chart in charts {
                        out.push_str(&format!(
                            "![{0}]({0}.png)\n\n({0}.svg, data in {0}.csv)\n\n",
                            chart.name
                        ));
                    }
                }
                Block::Table(table) => table_md(table, &mut out),
            }
        }
    }
    out
}

fn table_md(table: &Table, out: &mut String) {
    out.push_str(&format!("**{}**\n\n", table.caption));
    let header: Vec<String> = table.header.iter().map(|h| cell(h)).collect();
    out.push_str(&format!("| {} |\n", header.join(" | ")));
    out.push_str(&format!("|{}\n", " --- |".repeat(header.len())));
    for row in &table.rows {
        let cells: Vec<String> = row.iter().map(|c| cell(&c.text)).collect();
        out.push_str(&format!("| {} |\n", cells.join(" | ")));
    }
    out.push('\n');
}
