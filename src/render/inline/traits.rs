//! The names a block with several responses gives prose: each trait's
//! whole namespace under `traits.<response>` (as a one-trait block's), and
//! the trait table's own numbers under `trait_table.<response>`.

use crate::outcome::linear::LinearOutcome;
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
            let column = ColumnContext {
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
