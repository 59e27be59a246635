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
    /// A part's heading (a trait's name in a block with several responses).
    pub heading: Option<String>,
    /// Parts laid out after the block's own tables, each under its heading:
    /// one per trait in a block with several responses.
    pub parts: Vec<BlockView>,
}

impl BlockView {
    /// The block's tables and then its parts', in the order they print.
    pub fn all_tables(&self) -> Vec<&TableView> {
        let mut out: Vec<&TableView> = self.tables.iter().collect();
        for p in &self.parts {
            out.extend(p.all_tables());
        }
        out
    }
}
