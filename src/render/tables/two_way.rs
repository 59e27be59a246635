//! `cells: yes` with random terms: the two-way table of estimated cell
//! means with lowercase letters within rows and uppercase letters within
//! columns, and one table of the pairs behind both sets of letters.

use super::contrasts::difference_rows;
use super::keys::Keys;
use super::{cell, col, measure, text};
use crate::format::{alpha_text, fixed};
use crate::outcome::linear::{Family, LinearOutcome};
use crate::outcome::mixed::CellLetters;
use crate::render::view::TableView;

/// Rows by the factor applied to the larger unit, columns by the other; each
/// cell its estimated mean, its row's lowercase and its column's uppercase
/// letters.
pub fn letter_table(
    o: &LinearOutcome,
    layout: &CellLetters,
    keys: &Keys,
    number: usize,
) -> TableView {
    let d = o.presentation.decimals;
    let shown = |f: usize| o.presentation.plots.display(&o.factors[f].name).to_string();
    let column_levels = &o.factors[layout.columns].levels;
    let counts: Vec<usize> = layout
        .row_families
        .iter()
        .flat_map(|&i| o.families[i].estimates.iter().map(|e| e.n))
        .collect();
    let equal_n = counts.windows(2).all(|w| w[0] == w[1]);
    let rows = layout
        .row_families
        .iter()
        .enumerate()
        .map(|(r, &ri)| {
            let row_family = &o.families[ri];
            let mut row = vec![text(o.factors[layout.rows].levels[r].clone())];
            for (c, e) in row_family.estimates.iter().enumerate() {
                let lower = letters_of(row_family, c);
                let upper = layout
                    .column_families
                    .get(c)
                    .map_or(String::new(), |&ci| letters_of(&o.families[ci], r));
                let n = if equal_n {
                    String::new()
                } else {
                    format!(" (n = {})", e.n)
                };
                row.push(cell(
                    format!("{}{n} {lower} {upper}", fixed(e.mean, d)),
                    keys.estimate(row_family, &e.label, "mean"),
                ));
            }
            row
        })
        .collect();
    let mut columns = vec![col(
        format!("{} \\ {}", shown(layout.rows), shown(layout.columns)),
        false,
    )];
    columns.extend(column_levels.iter().map(|l| col(l.clone(), true)));
    TableView {
        number,
        id: format!("{}-cell-letters", o.id),
        caption: format!(
            "Table {number}. Estimated cell means of {} by {} and {}, compared within rows and within columns.",
            measure(o),
            shown(layout.rows),
            shown(layout.columns)
        ),
        columns,
        rows,
        footnotes: letter_footnotes(
            o,
            layout,
            equal_n.then(|| counts.first().copied()).flatten(),
        ),
    }
}

fn letters_of(family: &Family, i: usize) -> String {
    family
        .comparison
        .as_ref()
        .and_then(|c| c.letters.get(i).cloned())
        .unwrap_or_default()
}

fn letter_footnotes(o: &LinearOutcome, layout: &CellLetters, n: Option<usize>) -> Vec<String> {
    let shown = |f: usize| o.presentation.plots.display(&o.factors[f].name).to_string();
    let (rows, columns) = (shown(layout.rows), shown(layout.columns));
    let method = layout
        .row_families
        .first()
        .and_then(|&i| o.families[i].comparison.as_ref());
    let procedure = method.map_or(String::new(), |c| {
        format!("{}, α = {}", c.method.title(), alpha_text(c.alpha))
    });
    let mut notes = vec![format!(
        "Within a row, means followed by the same lowercase letter do not differ: {columns} levels compared at one {rows} level. Within a column, means followed by the same uppercase letter do not differ: {rows} levels compared at one {columns} level ({procedure}). Each pair is compared with its own standard error of the difference and df from the mixed model, so the two kinds of comparison each use their own error."
    )];
    notes.push(match n {
        Some(n) => format!(
            "Estimated marginal means of the cells from the mixed model ({n} observations per cell)."
        ),
        None => "Estimated marginal means of the cells from the mixed model; n is the number of observations in each cell.".to_string(),
    });
    notes
}

/// Every pair behind the letters: within rows first, then within columns,
/// each row naming the level it was compared at.
pub fn slice_pairs_table(
    o: &LinearOutcome,
    layout: &CellLetters,
    keys: &Keys,
    number: usize,
) -> Option<TableView> {
    let shown = |f: usize| o.presentation.plots.display(&o.factors[f].name).to_string();
    let mut columns = None;
    let mut rows = Vec::new();
    let mut method = None;
    let groups = [
        (&layout.row_families, layout.rows),
        (&layout.column_families, layout.columns),
    ];
    for (families, held) in groups {
        for (level, &i) in families.iter().enumerate() {
            let family = &o.families[i];
            let Some(c) = family.comparison.as_ref() else {
                continue;
            };
            method = Some(c);
            let (cols, family_rows) = difference_rows(o, family, c, keys);
            columns.get_or_insert(cols);
            let at = format!("{} = {}", shown(held), o.factors[held].levels[level]);
            rows.extend(family_rows.into_iter().map(|r| {
                let mut row = vec![text(at.clone())];
                row.extend(r);
                row
            }));
        }
    }
    let c = method?;
    let mut columns = columns?;
    columns.insert(0, col("At", false));
    columns.push(col(
        if c.method == crate::stats::compare::Method::Lsd {
            "p"
        } else {
            "adjusted p"
        },
        true,
    ));
    columns.push(col(
        format!("Significant at α = {}", alpha_text(c.alpha)),
        false,
    ));
    Some(TableView {
        number,
        id: format!("{}-cell-pairs", o.id),
        caption: format!(
            "Table {number}. Pairwise comparisons of cell means of {} within rows and within columns ({}).",
            measure(o),
            c.method.title()
        ),
        columns,
        rows,
        footnotes: vec![format!(
            "Each set of comparisons at one level is a family of its own, adjusted by {} ({}); the df are each pair's own from the mixed model.",
            c.method.title(),
            c.method.citation()
        )],
    })
}
