//! Observed cell means: rows by the first factor and columns by the second
//! for two factors, one row per cell otherwise. (Not shown when every cell
//! holds a single observation: that table would be the data themselves.)

use super::keys::Keys;
use super::{cell, col, measure, text};
use crate::format::{alpha_text, fixed};
use crate::outcome::CellRow;
use crate::outcome::linear::LinearOutcome;
use crate::render::view::{Cell, Column, TableView};

pub fn cell_table(o: &LinearOutcome, keys: &Keys, number: usize) -> TableView {
    let cf = &o.cell_factors;
    let shown = |f: usize| o.presentation.plots.display(&o.factors[f].name).to_string();
    let level = |f: usize, l: usize| o.factors[f].levels[l].clone();
    let cell_family = o.families.iter().find(|f| f.term == "cells");
    let show = |c: &CellRow| -> Cell {
        let label = cf
            .iter()
            .zip(&c.levels)
            .map(|(&f, &l)| level(f, l))
            .collect::<Vec<_>>()
            .join(" × ");
        if c.n == 0 {
            return text("no data");
        }
        // The cell's letters, when the cells were compared.
        let letters = cell_family
            .and_then(|fam| {
                let i = fam.estimates.iter().position(|m| m.label == label)?;
                let letters = &fam.comparison.as_ref()?.letters;
                letters.get(i).map(|l| format!(" {l}"))
            })
            .unwrap_or_default();
        cell(
            format!(
                "{} (n = {}){letters}",
                fixed(c.mean, o.presentation.decimals),
                c.n
            ),
            keys.cell(&label, "mean"),
        )
    };
    let (columns, rows): (Vec<Column>, Vec<Vec<Cell>>) = if let [fa, fb] = cf[..] {
        let mut columns = vec![col(format!("{} \\ {}", shown(fa), shown(fb)), false)];
        columns.extend(o.factors[fb].levels.iter().map(|l| col(l.clone(), true)));
        let rows = (0..o.factors[fa].levels.len())
            .map(|a| {
                let mut row = vec![text(level(fa, a))];
                for b in 0..o.factors[fb].levels.len() {
                    let c = o.cells.iter().find(|c| c.levels == [a, b]);
                    row.push(c.map_or_else(|| text(""), show));
                }
                row
            })
            .collect();
        (columns, rows)
    } else {
        let mut columns: Vec<Column> = cf.iter().map(|&f| col(shown(f), false)).collect();
        columns.push(col("Mean (n)", true));
        let rows = o
            .cells
            .iter()
            .map(|c| {
                let mut row: Vec<Cell> = cf
                    .iter()
                    .zip(&c.levels)
                    .map(|(&f, &l)| text(level(f, l)))
                    .collect();
                row.push(show(c));
                row
            })
            .collect();
        (columns, rows)
    };
    let mut footnotes = vec!["Observed cell means with their number of observations.".to_string()];
    if let Some(c) = cell_family.and_then(|f| f.comparison.as_ref()) {
        footnotes.push(format!(
            "Cells sharing a letter are not significantly different ({}, α = {}).",
            c.method.title(),
            alpha_text(c.alpha)
        ));
    }
    TableView {
        number,
        id: format!("{}-cells", o.id),
        caption: format!(
            "Table {number}. Cell means of {} by {}.",
            measure(o),
            cf.iter()
                .map(|&f| shown(f))
                .collect::<Vec<_>>()
                .join(" and ")
        ),
        columns,
        rows,
        footnotes,
    }
}
