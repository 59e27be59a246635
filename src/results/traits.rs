//! The record of a block with several responses: one ordinary record per
//! trait (its `id` is the response, so keys read `block.traits.<response>`)
//! and `trait_table`, the numbers the trait table prints.

use super::{BlockRecord, FigureRecord, block_record, finite};
use crate::outcome::precision::sed;
use crate::outcome::traits::{Trait, TraitsOutcome, figure_stem, mark};
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub struct TraitsRecord {
    pub id: String,
    pub kind: &'static str,
    pub line: usize,
    pub data: String,
    pub responses: Vec<String>,
    pub factors: Vec<String>,
    pub alpha: f64,
    pub traits: Vec<BlockRecord>,
    pub trait_table: TraitTableRecord,
    /// Always empty: each trait's record holds its figures.
    pub figures: Vec<FigureRecord>,
    pub warnings: Vec<String>,
}

#[derive(Serialize)]
pub struct TraitTableRecord {
    /// The letters' procedure (null without comparisons).
    pub procedure: Option<&'static str>,
    pub factors: Vec<TableFactorRecord>,
    /// Response → its footer.
    pub columns: BTreeMap<String, TraitColumnRecord>,
}

/// One factor's block of rows.
#[derive(Serialize)]
pub struct TableFactorRecord {
    pub term: String,
    pub rows: Vec<TableRowRecord>,
}

#[derive(Serialize)]
pub struct TableRowRecord {
    pub level: String,
    /// Response → mean and letters; a trait without that level is absent.
    pub cells: BTreeMap<String, TableCellRecord>,
}

#[derive(Serialize)]
pub struct TableCellRecord {
    pub n: usize,
    pub mean: Option<f64>,
    /// Empty without letters.
    pub letters: String,
}

/// One trait's footer.
#[derive(Serialize)]
pub struct TraitColumnRecord {
    pub grand_mean: Option<f64>,
    pub minimum: Option<f64>,
    /// Null when the trait has a value ≤ 0 (a CV has no meaning then).
    pub cv_percent: Option<f64>,
    /// The CV as computed, shown or not.
    pub cv_computed: Option<f64>,
    /// Factor → `[smallest, largest]` SED and LSD of its means.
    pub sed: BTreeMap<String, [f64; 2]>,
    pub lsd: BTreeMap<String, [f64; 2]>,
    /// Tested term → `ns`, `*`, `**` or `***`.
    pub marks: BTreeMap<String, &'static str>,
    /// Interactions significant at α, which make the factor rows misleading.
    pub interactions: Vec<String>,
    pub residual_df: f64,
}

/// The block's record; `figures` gives each trait's figure records by the
/// stem their ids start with (`figure_stem`).
pub fn traits_record(
    t: &TraitsOutcome,
    figures: impl Fn(&str) -> Vec<FigureRecord>,
) -> TraitsRecord {
    let first = t.traits.first().map(|x| &x.outcome);
    TraitsRecord {
        id: t.id.clone(),
        kind: "traits",
        line: t.line,
        data: t.data.clone(),
        responses: t.traits.iter().map(|x| x.response.clone()).collect(),
        factors: first.map_or_else(Vec::new, |o| {
            o.factors.iter().map(|f| f.name.clone()).collect()
        }),
        alpha: first.map_or(f64::NAN, |o| o.alpha),
        traits: t
            .traits
            .iter()
            .map(|x| {
                let mut rec = block_record(&x.outcome);
                rec.head.id = x.response.clone();
                rec.figures = figures(&figure_stem(&t.id, &x.response));
                rec
            })
            .collect(),
        trait_table: table_record(t),
        figures: Vec::new(),
        warnings: t.warnings.clone(),
    }
}

fn table_record(t: &TraitsOutcome) -> TraitTableRecord {
    let procedure = t
        .traits
        .iter()
        .flat_map(|x| x.row_families())
        .find_map(|f| f.comparison.as_ref())
        .map(|c| c.method.key());
    let mut factors: Vec<TableFactorRecord> = Vec::new();
    for (term, level) in t.rows() {
        let cells = t
            .traits
            .iter()
            .filter_map(|x| Some((x.response.clone(), cell(x, &term, &level)?)))
            .collect();
        let row = TableRowRecord { level, cells };
        match factors.iter_mut().find(|f| f.term == term) {
            Some(f) => f.rows.push(row),
            None => factors.push(TableFactorRecord {
                term,
                rows: vec![row],
            }),
        }
    }
    TraitTableRecord {
        procedure,
        factors,
        columns: t
            .traits
            .iter()
            .map(|x| (x.response.clone(), column(x)))
            .collect(),
    }
}

fn cell(x: &Trait, term: &str, level: &str) -> Option<TableCellRecord> {
    let family = x.row_families().into_iter().find(|f| f.term == term)?;
    let i = family.estimates.iter().position(|e| e.label == level)?;
    let e = &family.estimates[i];
    Some(TableCellRecord {
        n: e.n,
        mean: finite(e.mean),
        letters: family
            .comparison
            .as_ref()
            .and_then(|c| c.letters.get(i).cloned())
            .unwrap_or_default(),
    })
}

fn column(x: &Trait) -> TraitColumnRecord {
    let o = &x.outcome;
    let seds: Vec<(String, crate::outcome::precision::Sed)> = x
        .row_families()
        .into_iter()
        .filter_map(|f| Some((f.term.clone(), sed(f.comparison.as_ref()?)?)))
        .collect();
    TraitColumnRecord {
        grand_mean: o.grand_mean().and_then(finite),
        minimum: finite(x.minimum),
        cv_percent: x.cv_shown(),
        cv_computed: o.cv_percent(),
        sed: seds
            .iter()
            .map(|(f, s)| (f.clone(), [s.min, s.max]))
            .collect(),
        lsd: seds
            .iter()
            .map(|(f, s)| (f.clone(), [s.lsd_min, s.lsd_max]))
            .collect(),
        marks: x
            .tested_terms()
            .filter_map(|t| Some((t.name.clone(), mark(t.p)?)))
            .collect(),
        interactions: x
            .significant_interactions()
            .iter()
            .map(|t| t.name.clone())
            .collect(),
        residual_df: o.residual().df,
    }
}
