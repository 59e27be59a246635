//! A block with several responses: each trait analysed alone by the
//! block's own engine, with the same model and comparison procedure. Rows
//! missing one trait are dropped for that trait only, as its own analysis
//! reads them; n, error df and MSE are the trait's.

use super::binding::{Data, presentation};
use super::request::{Request, run_linear};
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, PlotKind};
use crate::doc::{Block, Document};
use crate::outcome::linear::Observed;
use crate::outcome::traits::{Trait, TraitsOutcome, trait_id};
use crate::provenance::Input;

/// The block as one trait's analysis reads it: the model for that response
/// alone. The caption belongs to the trait table, not to each trait's tables.
pub fn trait_spec(spec: &AnovaSpec, response: &str) -> AnovaSpec {
    let mut one = spec.clone();
    one.model.value = spec.model.value.for_response(response);
    one.caption = None;
    one
}

/// Analyses every response of a block whose data are in memory.
pub fn run_traits(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    input: &Input,
    display_path: &str,
) -> Result<TraitsOutcome, Diagnostic> {
    let mut traits = Vec::with_capacity(spec.model.value.responses.len());
    let mut warnings = Vec::new();
    for response in &spec.model.value.responses {
        let t = one_trait(doc, block, spec, input, display_path, response)?;
        // The column's name, not its display name: `names` is a
        // presentation key, and a cached outcome keeps these words.
        warnings.extend(
            t.outcome
                .warnings
                .iter()
                .map(|w| format!("{response}: {w}")),
        );
        traits.push(t);
    }
    Ok(TraitsOutcome {
        id: block.id.clone(),
        line: block.line,
        data: spec.data.value.clone(),
        traits,
        caption: spec.caption.clone(),
        warnings,
    })
}

/// One trait through the engine its model goes to. The engines keep the
/// observations only for figures; the trait table needs the smallest value
/// (a CV only for a strictly positive trait), so they are asked for and,
/// when the block draws no figure, dropped again to keep the outcome (and
/// its cache entry) small.
fn one_trait(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    input: &Input,
    display_path: &str,
    response: &str,
) -> Result<Trait, Diagnostic> {
    let mut one = trait_spec(spec, response);
    let figures = !one.plots.kinds.is_empty();
    if !figures {
        one.plots.kinds = vec![PlotKind::Residuals];
    }
    let (mut outcome, _) = run_linear(Request {
        doc,
        block,
        spec: &one,
        data: Data::Loaded(input),
        display_path,
    })?;
    let minimum = outcome
        .observations
        .iter()
        .map(|o| o.value)
        .fold(f64::INFINITY, f64::min);
    if !figures {
        outcome.observations.clear();
        if !outcome.is_one_factor() {
            outcome.observed = Observed::default();
        }
    }
    outcome.id = trait_id(&block.id, response);
    outcome.presentation = presentation(&trait_spec(spec, response), outcome.presentation.decimals);
    Ok(Trait {
        response: response.to_string(),
        outcome,
        minimum,
    })
}

/// Re-applies the block's presentation-only keys to a cached outcome.
pub fn represent(outcome: &mut TraitsOutcome, spec: &AnovaSpec) {
    outcome.caption = spec.caption.clone();
    for t in &mut outcome.traits {
        let one = trait_spec(spec, &t.response);
        t.outcome.presentation = presentation(&one, t.outcome.presentation.decimals);
    }
}
