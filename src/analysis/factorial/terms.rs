//! Which terms the data can estimate: terms confounded with earlier ones,
//! combinations of levels without observations, and the size of the fit.

use super::model::{Errors, Model};
use crate::analysis::notes::Note;
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::stats::linear::{Layout, design_matrix, fit, term_columns, term_width};

/// Limits that keep a model's fit and reference grid to a size that fits in
/// memory and finishes in seconds.
const MAX_DESIGN_COLUMNS: usize = 2_000;
const MAX_GRID_CELLS: f64 = 1_000_000.0;

/// Every combination of the given factors' levels, first factor slowest.
pub(super) fn combinations(factors: &[usize], levels: &[usize]) -> Vec<Vec<usize>> {
    let mut out = vec![Vec::new()];
    for &f in factors {
        out = out
            .into_iter()
            .flat_map(|prefix| (0..levels[f]).map(move |l| [prefix.clone(), vec![l]].concat()))
            .collect();
    }
    out
}

/// A model term none of whose contrasts is estimable after the terms before
/// it, and the earlier term that alone already determines it, if one does.
struct Confounded {
    term: usize,
    with: Option<usize>,
}

/// Terms wholly aliased with earlier terms, in model order. `design` holds
/// one row per observed combination of levels (weights do not change which
/// columns are aliased); `ranges` are the terms' columns.
fn confounded_terms(design: &[Vec<f64>], ranges: &[std::ops::Range<usize>]) -> Vec<Confounded> {
    let rows = design.first().map_or(0, Vec::len);
    let zeros = vec![0.0; rows];
    let all = fit(design, &zeros);
    let mut out = Vec::new();
    for (i, range) in ranges.iter().enumerate() {
        if range.is_empty() || range.clone().any(|c| all.kept[c]) {
            continue;
        }
        // Which single earlier term already spans it: fit the intercept,
        // that term and this one, and see whether this one adds nothing.
        let with = (0..i).find(|&j| {
            let cols: Vec<Vec<f64>> = std::iter::once(0)
                .chain(ranges[j].clone())
                .chain(range.clone())
                .map(|c| design[c].clone())
                .collect();
            let own = 1 + ranges[j].len();
            let pair = fit(&cols, &zeros);
            pair.kept[own..].iter().all(|k| !k)
        });
        out.push(Confounded { term: i, with });
    }
    out
}

/// A term confounded with an earlier main effect (the classical layout: a
/// factorial's highest interaction given up to blocks) has no contrast left
/// to test; the usual analysis leaves it in that factor's sum of squares
/// and says so. Any other wholly aliased term is an error. Covariate
/// terms vary within cells and are left to the fit (and its checks).
pub(super) fn drop_confounded(
    model: &mut Model,
    data: &FactorialData,
    levels: &[usize],
    errors: &Errors<'_>,
) -> Result<Vec<Note>, Diagnostic> {
    let layout = Layout {
        levels: levels.to_vec(),
        rows: data.layout.cells.clone(),
    };
    // The factor terms, by their index in the model.
    let factor_terms: Vec<usize> = (0..model.terms.len())
        .filter(|&t| model.is_factor_term(&model.terms[t]))
        .collect();
    let terms: Vec<_> = factor_terms
        .iter()
        .map(|&t| model.terms[t].clone())
        .collect();
    let found = confounded_terms(
        &design_matrix(&layout, &terms),
        &term_columns(&terms, levels),
    );
    let found = found.into_iter().map(|c| Confounded {
        term: factor_terms[c.term],
        with: c.with.map(|w| factor_terms[w]),
    });
    let mut notes = Vec::new();
    for c in found.rev() {
        let names = &model.term_names;
        let Some(with) = c.with.filter(|&j| model.terms[j].len() == 1) else {
            let hint = "check that the factors really cross (each combination of levels occurs), or remove the term";
            return Err(errors.model(
                format!(
                    "the term `{}` is not estimable: every one of its contrasts is determined by the terms before it ({})",
                    names[c.term],
                    names[..c.term].join(", ")
                ),
                hint,
            ));
        };
        notes.push(Note::other(format!(
            "`{0}` is confounded with `{1}`: each level of `{1}` holds only level combinations on one side of the `{0}` contrast, so that contrast is part of the differences among levels of `{1}`. It cannot be tested from these data; as in the usual analysis of a confounded design it is left out of the model and its degrees of freedom stay with `{1}`.",
            names[c.term], names[with]
        )));
        model.terms.remove(c.term);
        model.term_names.remove(c.term);
    }
    Ok(notes)
}

/// Cells of every interaction term that have no observation, as
/// `A=a1, B=b2`, each once.
pub(super) fn empty_cells(model: &Model, data: &FactorialData, levels: &[usize]) -> Vec<String> {
    let mut empty: Vec<String> = Vec::new();
    for t in model.terms.iter().filter(|t| t.len() > 1) {
        for combo in combinations(t, levels) {
            let present = data
                .layout
                .cells
                .iter()
                .any(|r| t.iter().zip(&combo).all(|(&f, &l)| r[f] == l));
            if present {
                continue;
            }
            let label = t
                .iter()
                .zip(&combo)
                .map(|(&f, &l)| format!("{}={}", model.factor_names[f], data.layout.levels[f][l]))
                .collect::<Vec<_>>()
                .join(", ");
            if !empty.contains(&label) {
                empty.push(label);
            }
        }
    }
    empty
}

/// The design matrix has one column per estimable contrast and the
/// marginal means average over every combination of levels: bound both.
pub(super) fn check_size(
    model: &Model,
    levels: &[usize],
    errors: &Errors<'_>,
) -> Result<(), Diagnostic> {
    let width: usize = 1 + model
        .terms
        .iter()
        .map(|t| term_width(t, levels))
        .sum::<usize>();
    let grid: f64 = levels.iter().map(|&l| l as f64).product();
    if width > MAX_DESIGN_COLUMNS || grid > MAX_GRID_CELLS {
        return Err(errors.model(
            format!(
                "the model needs {width} design columns over {grid} combinations of levels, more than sheaf fits"
            ),
            "drop high-order interactions (write the terms with `+` and `:`), or merge rare levels",
        ));
    }
    Ok(())
}
