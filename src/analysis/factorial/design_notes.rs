//! Notes on a factorial design's data: unequal cell sizes, rows left out,
//! level spellings, block labels reused across blocks, empty cells.

use super::model::Model;
use super::table::{Chosen, ss_name};
use crate::analysis::exclusions::exclusion_notes;
use crate::analysis::notes::{Note, NoteKind, all_of};
use crate::data::FactorialData;

/// The notes on the data, in the order a reader meets them.
pub(super) fn design_notes(
    data: &FactorialData,
    model: &Model,
    chosen: &Chosen,
    empty: &[String],
    rank_deficient: bool,
    (path, reused): (&str, Option<&String>),
) -> Vec<Note> {
    let mut notes = Vec::new();
    // A covariate is never orthogonal to the factors; the table's own
    // footnote says which sums of squares it shows.
    if !chosen.types_agree && model.covariate_names.is_empty() {
        notes.push(Note::new(
            NoteKind::Unbalanced,
            format!(
                "The data are unbalanced, so Types I, II and III sums of squares differ; this table uses {}.",
                ss_name(chosen.ss_type)
            ),
        ));
    }
    notes.extend(exclusion_notes(&data.excluded, path));
    notes.extend(all_of(NoteKind::Other, level_spellings(data, model)));
    notes.extend(reused.map(|r| Note::other(r.clone())));
    if !empty.is_empty() {
        notes.push(Note::new(
            NoteKind::EmptyCells,
            format!(
                "{} of levels {} no observations ({}); {}",
                crate::format::counted(empty.len(), "combination", "combinations"),
                if empty.len() == 1 { "has" } else { "have" },
                empty.join("; "),
                if rank_deficient {
                    "the interaction is estimated only from the cells with data, and marginal means cannot be estimated"
                } else {
                    "the additive model estimates them from the other cells"
                }
            ),
        ));
    }
    notes
}

/// Spelling variants among each factor's levels, and numeric treatment
/// factors with many levels for the rows. Blocks are often numbered, so
/// they are held to the spelling check only: their row count is given as
/// unbounded, which no number of levels can exceed.
fn level_spellings(data: &FactorialData, model: &Model) -> Vec<String> {
    // Each level's first line: that of the first cell holding it (cells
    // are in order of first appearance).
    let mut first: Vec<Vec<usize>> = data
        .layout
        .levels
        .iter()
        .map(|l| vec![0; l.len()])
        .collect();
    for (cell, &line) in data.layout.cells.iter().zip(&data.cell_lines) {
        for (f, &l) in cell.iter().enumerate() {
            if first[f][l] == 0 {
                first[f][l] = line;
            }
        }
    }
    let mut warnings = Vec::new();
    for (f, levels) in data.layout.levels.iter().enumerate() {
        let named: Vec<(&str, usize)> = levels
            .iter()
            .map(String::as_str)
            .zip(first[f].iter().copied())
            .collect();
        let rows = if model.is_block(f) {
            usize::MAX
        } else {
            data.n()
        };
        warnings.extend(crate::data::levels::level_warnings(
            &model.factor_names[f],
            &named,
            rows,
        ));
    }
    warnings
}

/// Block factors whose labels look reused within another block factor
/// (`iblock` 1 of `rep` 1 and `iblock` 1 of `rep` 2 being different blocks):
/// every combination of the two occurs and holds several observations,
/// which incomplete blocks numbered afresh in each replicate give. Read as
/// crossed factors, such blocks are analysed wrongly.
pub(super) fn reused_block_labels(data: &FactorialData, model: &Model) -> Option<String> {
    let blocks = &model.blocks;
    for &outer in blocks {
        for &inner in blocks.iter().filter(|&&b| b != outer) {
            if model
                .terms
                .iter()
                .any(|t| t.contains(&outer) && t.contains(&inner))
            {
                continue;
            }
            let (a, b) = (
                data.layout.levels[outer].len(),
                data.layout.levels[inner].len(),
            );
            let mut counts = vec![0usize; a * b];
            for (row, cell) in data.layout.cells.iter().zip(&data.cell_summaries) {
                counts[row[outer] * b + row[inner]] += cell.n;
            }
            if counts.iter().all(|&c| c >= 2) && a * b <= data.layout.cells.len() {
                let (o, n) = (&model.factor_names[outer], &model.factor_names[inner]);
                return Some(format!(
                    "every level of `{n}` occurs in every level of `{o}`, with several plots each: if `{n}` is numbered afresh within each `{o}` (so `{n}` 1 of `{o}` 1 and `{n}` 1 of `{o}` 2 are different blocks), the blocks are nested and the model reads them as crossed. Write the nested term `{o}:{n}` in the model in place of `{n}`, or give every block a label of its own (e.g. 1-1, 2-1)"
                ));
            }
        }
    }
    None
}
