//! What every engine's outcome starts from: the block's identity, its data
//! and response as written, α, the checks and the presentation options; the
//! rest empty until the engine fills it (struct update syntax), so that a
//! field added to the outcome is defaulted in one place.

use crate::doc::Block;
use crate::doc::block::AnovaSpec;
use crate::outcome::Checks;
use crate::outcome::linear::{Alternatives, InputForm, LinearOutcome, Observed, Presentation};

pub(super) fn base_outcome(
    block: &Block,
    spec: &AnovaSpec,
    alpha: f64,
    checks: Checks,
    presentation: Presentation,
) -> LinearOutcome {
    LinearOutcome {
        id: block.id.clone(),
        line: block.line,
        data: spec.data.value.clone(),
        query: spec.query.as_ref().map(|q| q.value.clone()),
        response: spec.model.value.response.clone(),
        alpha,
        n: 0,
        exclusions: Vec::new(),
        method: spec.method,
        ss_type: None,
        types_agree: true,
        factors: Vec::new(),
        strata: Vec::new(),
        terms: Vec::new(),
        total_df: 0,
        total_ss: f64::NAN,
        r_squared: f64::NAN,
        levels: Vec::new(),
        ci_pooled: false,
        cells: Vec::new(),
        cell_factors: Vec::new(),
        families: Vec::new(),
        alternatives: Alternatives {
            welch: None,
            kruskal: None,
        },
        checks,
        warnings: Vec::new(),
        acknowledged: Vec::new(),
        presentation,
        observations: Vec::new(),
        observed: Observed::default(),
        mixed: None,
        repeated: None,
        covariates: None,
        contrasts: None,
        trend: None,
        transform: None,
        dose: None,
        friedman: None,
        equivalence: None,
        input: InputForm::default(),
    }
}
