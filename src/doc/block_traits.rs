//! Several responses in one block (`model: yield, height ~ variety + block`):
//! each is analysed alone with the block's model, and the report adds a
//! trait table. Only fixed-effects models with the classical F test take
//! several responses; the keys that would need more are refused here.

use super::block::{Located, SpecError, bad};
use super::block_keys::AnovaDraft;
use super::formula::Formula;
use super::keyvalue::Entry;
use crate::doc::block::Omnibus;

/// What several responses cannot be combined with, and why.
const REFUSED: [(&str, &str); 6] = [
    (
        "random",
        "random terms are not supported with several responses yet; analyse each response in its own block",
    ),
    (
        "subject",
        "repeated measures are not supported with several responses yet; analyse each response in its own block",
    ),
    (
        "covariance",
        "a covariance structure is not supported with several responses yet; analyse each response in its own block",
    ),
    (
        "covariate",
        "covariates are not supported with several responses yet (each trait may need its own covariate); analyse each response in its own block",
    ),
    (
        "input",
        "published summaries hold one response; write one block per response",
    ),
    (
        "transform",
        "a transformation is not supported with several responses yet (each trait may need its own scale); analyse the transformed response in its own block",
    ),
];

/// The problems of a block whose model names several responses.
pub(super) fn traits_keys(d: &AnovaDraft, model: &Located<Formula>) -> Vec<SpecError> {
    if !model.value.several() {
        return Vec::new();
    }
    let mut errors = Vec::new();
    let at_model = |message: String, hint: &str| SpecError {
        line: model.line,
        column: model.column,
        message,
        hint: Some(hint.to_string()),
    };
    for response in &model.value.responses {
        if !plain_name(response) {
            errors.push(at_model(
                format!("the response `{response}` is not a plain column name"),
                "with several responses each names its trait in table ids, figure files and prose: use letters, digits and `_` (rename the column)",
            ));
        }
    }
    let given: [(&str, Option<&Entry>); 6] = [
        ("random", d.random.as_ref().map(|(e, _)| e)),
        ("subject", d.subject.as_ref().map(|(e, _)| e)),
        ("covariance", d.covariance.as_ref().map(|(e, _)| e)),
        ("covariate", d.covariates.as_ref().map(|(e, _)| e)),
        (
            "input",
            d.input.as_ref().filter(|(_, s)| *s).map(|(e, _)| e),
        ),
        ("transform", d.transform.as_ref().map(|(e, _)| e)),
    ];
    for (key, entry) in given {
        if let (Some(e), Some((_, hint))) = (entry, REFUSED.iter().find(|(k, _)| *k == key)) {
            errors.push(bad(
                e,
                format!("`{key}` cannot be combined with several responses"),
                *hint,
            ));
        }
    }
    if let Some((e, true)) = &d.layout {
        errors.push(bad(
            e,
            "`layout: wide` cannot be combined with several responses".into(),
            "a wide table holds one response spread over columns; write the data in long layout, one column per response",
        ));
    }
    if let Some(m) = d.method.filter(|m| *m != Omnibus::Anova) {
        errors.push(at_model(
            format!("`method: {}` cannot be combined with several responses", m.key()),
            "the trait table reports the F test, CV, SED and LSD of the classical analysis; analyse each response in its own block for another test",
        ));
    }
    if d.plots.label.is_some() || d.plots.unit.is_some() {
        errors.push(at_model(
            "`label` and `unit` name one response, and this model has several".into(),
            "give each response its shown name (with its unit) in `names`, for example `names: Prewt = Weight before (lb), Postwt = Weight after (lb)`",
        ));
    }
    errors
}

/// A column name that can name a trait in ids, file names and prose.
fn plain_name(name: &str) -> bool {
    !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
}
