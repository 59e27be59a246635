//! `cells: yes` on a two-factor block with random terms: the cell means
//! compared within rows and within columns rather than with one letter set
//! over every cell. In a split-plot the pairs within a row (same whole-plot
//! level) share the subplot error while the pairs within a column use a
//! combined error, so one letter set over all cells mixes errors and is not
//! unique (mixed-models specification 4.3); two sets of simple effects,
//! lowercase within rows and uppercase within columns, keep each kind of
//! comparison with its own error, as field-trial tables print them.

use super::families::{Estimating, Slice};
use crate::analysis::factorial::model::Model;
use crate::outcome::linear::{Family, TermTest};
use crate::outcome::mixed::CellLetters;
use crate::stats::compare::Method;

/// Adds the row and column families (reusing any `within` already made)
/// and says which family letters which row and column.
pub(super) fn row_and_column_families(
    estimating: &Estimating<'_>,
    model: &Model,
    terms: &[TermTest],
    factors: [usize; 2],
    method: Method,
    families: &mut Vec<Family>,
) -> CellLetters {
    let [rows, columns] = rows_first(terms, factors);
    let mut slice_families = |vary: usize, held: usize| -> Vec<usize> {
        (0..estimating.levels[held])
            .map(|s| {
                let name = &model.factor_names[vary];
                let within = format!(
                    "{}={}",
                    model.factor_names[held], estimating.labels[held][s]
                );
                let existing = families
                    .iter()
                    .position(|f| &f.term == name && f.within.as_deref() == Some(&within));
                existing.unwrap_or_else(|| {
                    let slice = Slice {
                        vary: vec![vary],
                        within: Some((held, s)),
                    };
                    families.push(estimating.family(name, &slice, method, None));
                    families.len() - 1
                })
            })
            .collect()
    };
    let row_families = slice_families(columns, rows);
    let column_families = slice_families(rows, columns);
    for &i in &column_families {
        if let Some(c) = families[i].comparison.as_mut() {
            for l in &mut c.letters {
                *l = l.to_uppercase();
            }
        }
    }
    CellLetters {
        rows,
        columns,
        row_families,
        column_families,
    }
}

/// The factor applied to the larger unit goes in the rows: its main effect
/// is tested on fewer denominator df (the whole-plot error). Equal df keep
/// the model's order.
fn rows_first(terms: &[TermTest], [a, b]: [usize; 2]) -> [usize; 2] {
    let df = |f: usize| {
        terms
            .iter()
            .find(|t| t.factors == [f])
            .map_or(f64::INFINITY, |t| t.denominator_df)
    };
    if df(b) < df(a) - 1e-9 { [b, a] } else { [a, b] }
}
