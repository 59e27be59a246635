//! The names a block with several responses gives prose: each trait's
//! whole namespace under `traits.<response>` (as a one-trait block's), and
//! the trait table's own numbers under `trait_table.<response>`.

use crate::outcome::linear::LinearOutcome;
use crate::outcome::precision::{Sed, sed};
use crate::outcome::traits::{TraitsOutcome, mark};
use minijinja::value::Value;
use serde::Serialize;
use std::collections::BTreeMap;

/// One column of the trait table.
#[derive(Serialize)]
struct ColumnContext {
    /// The mean of the observations analysed.
    grand_mean: Option<f64>,
    /// The CV as computed, whether or not the table shows it.
    cv: Option<f64>,
    /// False when the trait has a value ≤ 0 and the table shows "–".
    cv_shown: bool,
    minimum: f64,
    /// Each tested term's mark: `ns`, `*`, `**` or `***`.
    marks: BTreeMap<String, &'static str>,
    /// Per compared factor: the SED and LSD (null under unequal
    /// replication), and their `[smallest, largest]`.
    sed: BTreeMap<String, Option<f64>>,
    lsd: BTreeMap<String, Option<f64>>,
    sed_range: BTreeMap<String, [f64; 2]>,
    lsd_range: BTreeMap<String, [f64; 2]>,
    residual_df: f64,
}

#[derive(Serialize)]
struct TraitsContext {
    responses: Vec<String>,
    traits: BTreeMap<String, Value>,
    trait_table: BTreeMap<String, ColumnContext>,
}

/// The namespace of a block with several responses; `linear` gives one
/// trait's namespace.
pub(super) fn traits_context(t: &TraitsOutcome, linear: impl Fn(&LinearOutcome) -> Value) -> Value {
    let traits = t
        .traits
        .iter()
        .map(|x| (x.response.clone(), linear(&x.outcome)))
        .collect();
    let trait_table = t
        .traits
        .iter()
        .map(|x| {
            let seds: Vec<(String, Sed)> = x
                .row_families()
                .into_iter()
                .filter_map(|f| Some((f.term.clone(), sed(f.comparison.as_ref()?)?)))
                .collect();
            let single = |s: &Sed, v: f64| s.single().then_some(v);
            let column = ColumnContext {
                sed: seds
                    .iter()
                    .map(|(f, s)| (f.clone(), single(s, s.min)))
                    .collect(),
                lsd: seds
                    .iter()
                    .map(|(f, s)| (f.clone(), single(s, s.lsd_min)))
                    .collect(),
                sed_range: seds
                    .iter()
                    .map(|(f, s)| (f.clone(), [s.min, s.max]))
                    .collect(),
                lsd_range: seds
                    .iter()
                    .map(|(f, s)| (f.clone(), [s.lsd_min, s.lsd_max]))
                    .collect(),
                grand_mean: x.outcome.grand_mean(),
                cv: x.outcome.cv_percent(),
                cv_shown: x.cv_meaningful(),
                minimum: x.minimum,
                marks: x
                    .tested_terms()
                    .filter_map(|term| Some((term.name.clone(), mark(term.p)?)))
                    .collect(),
                residual_df: x.outcome.residual().df,
            };
            (x.response.clone(), column)
        })
        .collect();
    super::to_value(TraitsContext {
        responses: t.traits.iter().map(|x| x.response.clone()).collect(),
        traits,
        trait_table,
    })
}
