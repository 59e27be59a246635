//! Where each figure goes, as the format's writer says: in the report, or
//! a file beside it (SVG, or PNG at the front matter's resolution).

use crate::diag::Diagnostic;
use crate::doc::ImageFormat;
use crate::figure::{PlacedFigure, draw_all};
use crate::outcome::BlockResult;
use crate::render::Format;

/// The figures of every block, each with the file it is written to (if any),
/// and those files' names and bytes.
pub struct Placement {
    pub placed: Vec<Vec<PlacedFigure>>,
    pub files: Vec<(String, Vec<u8>)>,
}

/// Draws every block's figures and places them for `format`; files are
/// named after the report's `stem`.
pub fn place_figures(
    results: &[BlockResult],
    format: Format,
    images: ImageFormat,
    stem: &str,
) -> Result<Placement, Diagnostic> {
    let mut files: Vec<(String, Vec<u8>)> = Vec::new();
    let mut placed: Vec<Vec<PlacedFigure>> = Vec::with_capacity(results.len());
    for figs in draw_all(results) {
        let mut block = Vec::with_capacity(figs.len());
        for figure in figs {
            let file = match format
                .writer()
                .figure_file(stem, &figure, images)
                .map_err(|e| {
                    Diagnostic::new(format!("internal error drawing {}: {e}", figure.id))
                })? {
                Some((name, bytes)) => {
                    files.push((name.clone(), bytes));
                    Some(name)
                }
                None => None,
            };
            block.push(PlacedFigure { figure, file });
        }
        placed.push(block);
    }
    Ok(Placement { placed, files })
}
