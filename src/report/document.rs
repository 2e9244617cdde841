//! The report as a document: sections of paragraphs, key-value lists, tables, charts,
//! item lists and commands, independent of the format it is written in (HTML or
//! Markdown, [`super::html`] and [`super::markdown`]).

/// A whole report.
#[derive(Debug, Clone, PartialEq)]
pub struct Document {
    /// The title.
    pub title: String,
    /// The sections, in order.
    pub sections: Vec<Section>,
}

/// One section: a heading and its blocks.
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    /// The heading.
    pub heading: String,
    /// The anchor (letters, digits and `-`).
    pub id: String,
    /// The contents, in order.
    pub blocks: Vec<Block>,
}

/// A block of a section.
#[derive(Debug, Clone, PartialEq)]
pub enum Block {
    /// A paragraph of plain text.
    Paragraph(String),
    /// A two-column list of names and values.
    Facts(Vec<(String, String)>),
    /// A table.
    Table(Table),
    /// The charts of the folder.
    Charts(Vec<Chart>),
    /// A bulleted list.
    List(Vec<String>),
    /// Commands to type, one a line.
    Commands(Vec<String>),
}

/// A table: a caption, column names and rows of cells.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// What the table holds (one line).
    pub caption: String,
    /// The anchor of the table (letters, digits and `-`).
    pub id: String,
    /// Column names.
    pub header: Vec<String>,
    /// The rows; each as long as the header.
    pub rows: Vec<Vec<Cell>>,
}

/// One cell of a table.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Cell {
    /// The text.
    pub text: String,
    /// A method's look ([`crate::chart::series_look`]), shown as a swatch before the text
    /// in HTML.
    pub look: Option<usize>,
}

impl Cell {
    /// A plain cell.
    pub fn text(text: impl Into<String>) -> Cell {
        Cell {
            text: text.into(),
            look: None,
        }
    }
}

/// A chart of the folder, inlined as SVG in HTML and linked as PNG in Markdown.
#[derive(Debug, Clone, PartialEq)]
pub struct Chart {
    /// The file stem (`queries-vs-dim`, ...).
    pub name: String,
    /// The SVG text, as drawn.
    pub svg: String,
}
