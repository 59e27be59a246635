//! The view model: every number of a block formatted once, as strings, with
//! the results-file key it came from. Templates only lay these out; the
//! tables are built in `render::tables`.

use serde::Serialize;

#[derive(Debug, Clone, Serialize)]
pub struct Cell {
    pub text: String,
    /// Results-file path of the quantity, e.g. `growth.anova.terms.group.f`.
    pub key: Option<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Column {
    pub label: String,
    pub numeric: bool,
}

#[derive(Debug, Clone, Serialize)]
pub struct TableView {
    pub number: usize,
    pub id: String,
    pub caption: String,
    pub columns: Vec<Column>,
    pub rows: Vec<Vec<Cell>>,
    pub footnotes: Vec<String>,
}

/// A figure as the templates place it: inline SVG (HTML) or a file link (Markdown).
#[derive(Debug, Clone, Serialize)]
pub struct FigureView {
    pub id: String,
    pub caption: String,
    pub svg: Option<String>,
    pub file: Option<String>,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct BlockView {
    pub id: String,
    pub figures: Vec<FigureView>,
    /// A sentence that opens the block (power blocks state their answer).
    pub lead: Option<String>,
    pub tables: Vec<TableView>,
    pub notes: Vec<String>,
    pub warnings: Vec<String>,
}
