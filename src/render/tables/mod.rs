//! The tables of a block, written once from the outcome: every linear block
//! (one factor, factorial, blocked, Latin square) through `linear_view`,
//! power blocks through `power_view`. Each numeric cell carries the
//! results-file key of the number it shows (see `keys`).

mod anova;
mod cells;
mod checks;
mod contrasts;
mod covariance;
mod covariates;
mod dose;
mod equivalence;
mod friedman;
mod keys;
mod means;
mod mixed;
mod planned;
mod power;
mod precision;
mod procedure_note;
mod repeated;
mod traits;
mod transform;
mod trend;
mod two_way;

pub use equivalence::conclusion as equivalence_conclusion;
pub use power::power_view;
pub use traits::traits_view;

use super::view::{BlockView, Cell, Column, TableView};
use crate::doc::block::{Omnibus, Order, PlotSpec};
use crate::format::typographic_minus;
use crate::outcome::linear::{Family, LinearOutcome};
use keys::Keys;

/// Under the checks of a block running Friedman's test, which assumes
/// neither normal errors nor equal variances.
const FRIEDMAN_CHECKS_NOTE: &str = "These checks describe the residuals of the two-way analysis of variance of the same data, for orientation: Friedman's test ranks within blocks and assumes neither normal errors nor equal variances.";

fn cell(text: String, key: String) -> Cell {
    Cell {
        text,
        key: Some(key),
    }
}

fn text(t: impl Into<String>) -> Cell {
    Cell {
        text: t.into(),
        key: None,
    }
}

fn col(label: impl Into<String>, numeric: bool) -> Column {
    Column {
        label: label.into(),
        numeric,
    }
}

/// The columns of an analysis-of-variance table: source, df, SS, MS, F, p.
fn variance_columns() -> Vec<Column> {
    std::iter::once(col("Source", false))
        .chain(["df", "SS", "MS", "F", "p"].map(|c| col(c, true)))
        .collect()
}

/// Numbers tables through the document.
struct Numbering<'a>(&'a mut usize);

impl Numbering<'_> {
    fn next(&mut self) -> usize {
        let n = *self.0;
        *self.0 += 1;
        n
    }
}

/// Builds a linear block's tables; `next_table` is the number of its first
/// table. Order: ANOVA (or its alternative), checks, cell means, then each
/// family's means and contrasts.
pub fn linear_view(o: &LinearOutcome, next_table: &mut usize) -> BlockView {
    let mut numbers = Numbering(next_table);
    let keys = Keys::new(&o.id);
    let show = o.presentation.show;
    let mut tables = Vec::new();
    if show.anova {
        omnibus_tables(o, &keys, &mut numbers, &mut tables);
    }
    if let Some(d) = o.covariates.as_deref().filter(|_| show.anova) {
        for c in 0..d.covariates.len() {
            tables.push(covariates::covariate_table(o, d, c, &keys, numbers.next()));
        }
        if let Some(s) = &d.separate {
            tables.push(covariates::lines_table(o, d, s, &keys, numbers.next()));
        }
    }
    if let Some(b) = o.transform.as_deref().and_then(|t| t.box_cox.as_ref()) {
        tables.push(transform::box_cox_table(o, b, &keys, numbers.next()));
    }
    if o.checks.shown {
        let subject = format!("{} by {}", measure(o), factors_text(o));
        let shown = |term: &str| shown_term(&o.presentation.plots, term);
        let mut table = checks::checks_table(
            &o.checks,
            (o.mixed.as_ref().map_or(&[][..], |m| &m.predicted), &shown),
            &keys,
            o.alpha,
            &subject,
            numbers.next(),
        );
        if o.friedman.is_some() {
            table.footnotes.push(FRIEDMAN_CHECKS_NOTE.to_string());
        }
        tables.push(table);
    }
    let cell_letters = o.mixed.as_ref().and_then(|m| m.cell_letters.as_ref());
    if let Some(layout) = cell_letters {
        if show.means {
            tables.push(two_way::letter_table(o, layout, &keys, numbers.next()));
        }
    } else if show.means && o.cell_factors.len() >= 2 && o.cells.iter().any(|c| c.n > 1) {
        tables.push(cells::cell_table(o, &keys, numbers.next()));
    }
    // The two-way table's families are shown in it and in one table of
    // pairs, not one pair of tables per row and column.
    let in_two_way = |i: usize| {
        cell_letters.is_some_and(|l| l.row_families.contains(&i) || l.column_families.contains(&i))
    };
    let mut notes = Vec::new();
    let mut ranked_family = None;
    for (i, family) in o.families.iter().enumerate() {
        if let Some(c) = &family.comparison {
            // Families of one block often share their notes: say each once.
            for n in c.notes.iter().map(procedure_note::procedure_note_text) {
                if !notes.contains(&n) {
                    notes.push(n);
                }
            }
        }
        if in_two_way(i) {
            continue;
        }
        // Friedman's test: its own tables of ranks, after the loop.
        if let Some(d) = o.friedman.as_deref() {
            if family.within.is_none() && family.term == o.factors[d.factor].name {
                ranked_family = Some(family);
            }
            continue;
        }
        // A factorial block without comparisons shows its marginal means in
        // figures only; its tables are the ANOVA and cell tables.
        let compared = family.comparison.is_some() || o.is_one_factor();
        if show.means && compared {
            let number = numbers.next();
            let transformed = o.transformation();
            tables.push(if o.is_one_factor() && o.method == Omnibus::Ranks {
                means::ranks_table(o, family, &keys, number)
            } else if let Some(t) = transformed.filter(|_| family.term != "cells") {
                transform::transformed_means_table(o, family, t, &keys, number)
            } else {
                means::means_table(o, family, &keys, number)
            });
        }
        if let Some(c) = family.comparison.as_ref().filter(|_| show.pairs) {
            tables.push(contrasts::contrasts_table(
                o,
                family,
                c,
                &keys,
                numbers.next(),
            ));
        }
    }
    if let Some(d) = o.friedman.as_deref() {
        rank_tables(o, (d, ranked_family), &keys, &mut numbers, &mut tables);
    }
    planned_tables(o, &keys, &mut numbers, &mut tables);
    if let Some(layout) = cell_letters.filter(|_| show.pairs) {
        let number = *numbers.0;
        if let Some(t) = two_way::slice_pairs_table(o, layout, &keys, number) {
            numbers.next();
            tables.push(t);
        }
    }
    typeset(BlockView {
        figures: Vec::new(),
        id: o.id.clone(),
        lead: None,
        tables,
        notes,
        warnings: o.warnings.clone(),
        ..BlockView::default()
    })
}

/// The tables of the analyses a block asks for beyond its comparisons:
/// planned contrasts, a trend, the dose-response tests, equivalence.
fn planned_tables(
    o: &LinearOutcome,
    keys: &Keys,
    numbers: &mut Numbering,
    tables: &mut Vec<TableView>,
) {
    if let Some(d) = o.contrasts.as_deref() {
        tables.push(planned::planned_table(o, d, keys, numbers.next()));
    }
    if let Some(t) = o.trend.as_deref() {
        tables.push(trend::trend_table(o, t, keys, numbers.next()));
    }
    if let Some(d) = o.dose.as_deref() {
        // Dunnett's steps are the pairs table already shown.
        for t in d
            .tests
            .iter()
            .filter(|t| t.method != crate::outcome::dose::DoseMethod::Dunnett)
        {
            tables.push(dose::dose_table(o, d, t, keys, numbers.next()));
        }
        tables.push(dose::noec_table(o, d, keys, numbers.next()));
    }
    if let Some(e) = o.equivalence.as_deref() {
        tables.push(equivalence::equivalence_table(o, e, keys, numbers.next()));
    }
}

/// The ANOVA table (or its alternative); with random terms, the classical
/// stratum table where the design has one, the mixed model's tests, the
/// variance components and the SEDs.
fn omnibus_tables(
    o: &LinearOutcome,
    keys: &Keys,
    numbers: &mut Numbering,
    tables: &mut Vec<TableView>,
) {
    if let Some(d) = o.friedman.as_deref() {
        tables.push(friedman::friedman_table(o, d, keys, numbers.next()));
        return;
    }
    let Some(m) = &o.mixed else {
        let number = numbers.next();
        tables.push(match o.method {
            Omnibus::Anova => anova::anova_table(o, keys, number),
            Omnibus::Welch => anova::welch_table(o, keys, number),
            Omnibus::Ranks => anova::kruskal_table(o, keys, number),
        });
        return;
    };
    if m.not_classical.is_none() {
        tables.push(anova::anova_table(o, keys, numbers.next()));
    }
    tables.push(mixed::fixed_tests_table(o, m, keys, numbers.next()));
    if !m.components.is_empty() {
        tables.push(mixed::components_table(o, m, keys, numbers.next()));
    }
    if !m.seds.is_empty() {
        tables.push(mixed::sed_table(o, m, keys, numbers.next()));
    }
    if let Some(r) = &o.repeated {
        repeated_tables(o, r, keys, numbers, tables);
    }
}

/// Friedman's levels table and the pairs of its post hoc procedure.
fn rank_tables(
    o: &LinearOutcome,
    (d, family): (&crate::outcome::friedman::FriedmanDetail, Option<&Family>),
    keys: &Keys,
    numbers: &mut Numbering,
    tables: &mut Vec<TableView>,
) {
    let show = o.presentation.show;
    if show.means {
        tables.push(friedman::levels_table(o, d, family, keys, numbers.next()));
    }
    let compared = family.and_then(|f| f.comparison.as_ref().map(|c| (f, c)));
    if let Some(pair) = compared.filter(|_| show.pairs) {
        tables.push(friedman::pairs_table(o, d, pair, keys, numbers.next()));
    }
}

/// A repeated-measures block's univariate tests and sphericity, or why
/// there are none.
fn repeated_tables(
    o: &LinearOutcome,
    r: &crate::outcome::repeated::RepeatedDetail,
    keys: &Keys,
    numbers: &mut Numbering,
    tables: &mut Vec<TableView>,
) {
    if let Some(c) = &r.covariance {
        tables.push(covariance::structure_table(o, r, c, keys, numbers.next()));
        if !c.compared.is_empty() {
            tables.push(covariance::comparison_table(o, c, keys, numbers.next()));
        }
    }
    if let Ok(tests) = &r.univariate {
        tables.push(repeated::within_table(o, r, tests, keys, numbers.next()));
        let number = *numbers.0;
        if let Some(t) = repeated::sphericity_table(o, tests, keys, number) {
            numbers.next();
            tables.push(t);
        }
    }
}

/// The view as printed: minus signs in numeric cells and footnotes.
fn typeset(mut v: BlockView) -> BlockView {
    for t in &mut v.tables {
        for row in &mut t.rows {
            for (c, column) in row.iter_mut().zip(&t.columns) {
                if column.numeric {
                    c.text = typographic_minus(&c.text);
                }
            }
        }
        for f in &mut t.footnotes {
            *f = typographic_minus(f);
        }
    }
    v
}

/// A table's caption: the author's, or the one sheaf writes.
fn caption(number: usize, author: &Option<String>, written: impl FnOnce() -> String) -> String {
    match author {
        Some(c) => format!("Table {number}. {c}"),
        None => format!("Table {number}. {}", written()),
    }
}

/// A block's headline table, its columns, rows and notes still to fill:
/// its id is the block's with `suffix`, its caption the author's when the
/// block gives one, else `written`.
fn headline_table(
    o: &LinearOutcome,
    number: usize,
    suffix: &str,
    written: impl FnOnce() -> String,
) -> TableView {
    TableView {
        number,
        id: format!("{}-{suffix}", o.id),
        caption: caption(number, &o.presentation.caption, written),
        columns: Vec::new(),
        rows: Vec::new(),
        footnotes: Vec::new(),
    }
}

/// Decimals for a column of effect sizes: two, or three when any value is
/// below 0.1 (METHODS 4.2), so that a column never mixes 0.32 and 0.032.
fn effect_decimals(values: impl IntoIterator<Item = f64>) -> u32 {
    if values.into_iter().any(|x| x.is_finite() && x.abs() < 0.1) {
        3
    } else {
        2
    }
}

/// Rows in display order: by `key` descending (mean or mean rank), or as designed.
fn display_order(order: Order, key: &[f64]) -> Vec<usize> {
    let mut rows: Vec<usize> = (0..key.len()).collect();
    if order == Order::Mean {
        rows.sort_by(|&a, &b| key[b].total_cmp(&key[a]).then(a.cmp(&b)));
    }
    rows
}

/// A term for people, with display names: `Wool × Tension`.
fn shown_term(plots: &PlotSpec, name: &str) -> String {
    name.split(':')
        .map(|f| plots.display(f))
        .collect::<Vec<_>>()
        .join(" × ")
}

/// Every factor of the model for a caption: `wool and tension`.
fn factors_text(o: &LinearOutcome) -> String {
    let shown: Vec<String> = o
        .factors
        .iter()
        .map(|f| o.presentation.plots.display(&f.name).to_string())
        .collect();
    join_words(&shown)
}

/// What a family's estimates are of, for captions and headers: the
/// factor's display name, or `cell`.
fn family_subject(o: &LinearOutcome, family: &Family) -> String {
    if family.term == "cells" && !o.is_one_factor() {
        "cell".to_string()
    } else {
        o.presentation.plots.display(&family.term).to_string()
    }
}

/// A slice of a simple-effects family for captions: ` at Wool = A`.
fn family_slice(o: &LinearOutcome, family: &Family) -> String {
    family
        .within
        .as_ref()
        .map_or(String::new(), |w| match w.split_once('=') {
            Some((factor, level)) => {
                format!(" at {} = {level}", o.presentation.plots.display(factor))
            }
            None => format!(" at {w}"),
        })
}

/// The table id of a family's table: `warp-means-tension-wool=A`.
fn family_table_id(o: &LinearOutcome, what: &str, family: &Family) -> String {
    let within = family
        .within
        .as_ref()
        .map_or(String::new(), |w| format!("-{w}"));
    format!("{}-{what}-{}{within}", o.id, family.term)
}

/// The response as captions name it: its label (or display name, or column
/// name) and unit.
/// The response as the tables name it: its label and unit, or on a
/// transformed scale `ln(label)`.
fn measure(o: &LinearOutcome) -> String {
    let plots = &o.presentation.plots;
    if let Some(t) = o.transformation() {
        let name = plots.label.clone();
        let name = name.unwrap_or_else(|| plots.display(&o.response).to_string());
        // `Dry weight (mg)` → `ln(Dry weight)`: a unit has no log.
        let name = match name.rsplit_once(" (") {
            Some((head, _)) if name.ends_with(')') => head.to_string(),
            _ => name,
        };
        return crate::outcome::transform::Wording::label(t, &name);
    }
    data_measure(o)
}

/// The response on the data's own scale: its label and unit.
fn data_measure(o: &LinearOutcome) -> String {
    let plots = &o.presentation.plots;
    let name = plots
        .label
        .clone()
        .unwrap_or_else(|| plots.display(&o.response).to_string());
    match &plots.unit {
        Some(u) => format!("{name} ({u})"),
        None => name,
    }
}

/// "a", "a and b", "a, b and c".
fn join_words(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

fn yes_no(b: bool) -> String {
    if b { "yes".into() } else { "no".into() }
}
