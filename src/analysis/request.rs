//! What an engine is asked to analyse, what it returns, and which engine a
//! block's model goes to.

use super::binding::Data;
use crate::diag::Diagnostic;
use crate::doc::block::AnovaSpec;
use crate::doc::{Block, BlockSpec, Document};
use crate::outcome::linear::LinearOutcome;
use crate::provenance::Input;

/// An `anova` block with its data, as every linear engine receives it.
pub struct Request<'a> {
    pub doc: &'a Document,
    pub block: &'a Block,
    pub spec: &'a AnovaSpec,
    pub data: Data<'a>,
    /// The data file's name as messages print it.
    pub display_path: &'a str,
}

/// An engine's answer: the outcome, and the record of a file it streamed
/// (hash and size, no bytes).
pub type Analysis = Result<(LinearOutcome, Option<Input>), Diagnostic>;

/// Runs the engine for the block's model: the one-factor engine (which also
/// streams and reads summaries) for one term of one factor, the linear-model
/// engine for several terms.
pub fn run_linear(request: Request<'_>) -> Analysis {
    let model = &request.spec.model.value;
    if request.spec.random.is_some() {
        super::mixed::run_mixed(request)
    } else if model.terms.len() > 1 || model.terms.iter().any(|t| t.factors.len() > 1) {
        super::factorial::run_factorial(request)
    } else {
        super::one_way::run_anova(request)
    }
}

/// Runs an `anova` block on CSV text held in memory as `d.csv`, through the
/// same engines as a report (for `validate` and tests); `None` for a block
/// of another kind.
pub fn run_on_csv(doc: &Document, block: &Block, csv: &str) -> Option<Analysis> {
    let BlockSpec::Anova(spec) = &block.spec else {
        return None;
    };
    let input = Input::loaded("d.csv", csv.as_bytes().to_vec());
    Some(run_linear(Request {
        doc,
        block,
        spec,
        data: Data::Loaded(&input),
        display_path: "d.csv",
    }))
}
