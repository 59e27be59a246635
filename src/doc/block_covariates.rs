//! The `covariate` key: numeric columns (an initial weight, a stand count,
//! a baseline score) that enter the model as straight lines, one common
//! slope each. A column enters that way only when it is declared here;
//! numeric-looking factors (doses, block numbers) stay factors.

use super::block::{Located, SpecError, bad, list};
use super::block_keys::AnovaDraft;
use super::formula::{Formula, Term};
use super::keyvalue::Entry;

pub(super) fn read_covariate(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let names = list(&e.value);
    if names.is_empty() {
        return Err(bad(
            e,
            "`covariate` names no column".into(),
            "write the numeric column measured on each unit, e.g. `covariate: initial_weight`",
        ));
    }
    d.covariates = Some((e.clone(), names));
    Ok(())
}

/// Checks the covariates against the other keys and the model, and adds
/// each one the model does not name as a term of its own before the
/// others (the classical layout: the regression first, then the
/// treatments adjusted for it; the order matters only for `ss: 1`).
pub(super) fn covariate_keys(d: &AnovaDraft, formula: &mut Formula) -> Vec<SpecError> {
    let Some((e, names)) = &d.covariates else {
        return Vec::new();
    };
    let mut errors = Vec::new();
    let mut refuse = |message: String, hint: &str| errors.push(bad(e, message, hint));
    for name in names {
        if *name == formula.response {
            refuse(
                format!("`{name}` is the response; it cannot also be a covariate"),
                "a covariate is another column measured on the same units",
            );
        }
        if d.blocks.as_ref().is_some_and(|b| b.value.contains(name)) {
            refuse(
                format!("`{name}` is named by both `block` and `covariate`"),
                "a block is a factor (groups of units); a covariate is a measured number",
            );
        }
        if let Some(t) = formula
            .terms
            .iter()
            .find(|t| t.factors.len() > 1 && t.factors.contains(name))
        {
            refuse(
                format!("the covariate `{name}` appears in the interaction `{t}`"),
                "write it as a term of its own (`y ~ treatment + covariate`); the test of equal slopes is always run and shown",
            );
        }
    }
    let random_columns: Vec<&String> = (d.random.iter().flat_map(|r| &r.1))
        .chain(d.subject.iter().map(|s| &s.1))
        .flat_map(|t| &t.factors)
        .collect();
    if let Some(name) = names.iter().find(|n| random_columns.contains(n)) {
        refuse(
            format!("`{name}` is named both as a covariate and in a random term or `subject`"),
            "a random term's column names units (plots, animals); a covariate is a number measured on each unit",
        );
    }
    let unsupported = [
        (
            d.input.as_ref().filter(|i| i.1).map(|i| &i.0),
            "`input: summary`",
        ),
        (
            d.layout.as_ref().filter(|l| l.1).map(|l| &l.0),
            "`layout: wide`",
        ),
    ];
    for (entry, what) in unsupported {
        if entry.is_some() {
            refuse(
                format!("covariates cannot be combined with {what} in this version"),
                match what {
                    "`input: summary`" => {
                        "adjusting for a covariate needs each unit's pair of values: give one row per unit"
                    }
                    _ => "write the data with one row per unit (long layout)",
                },
            );
        }
    }
    if let Some(c) = d.cells.as_ref().filter(|c| c.value.wanted()) {
        errors.push(SpecError {
            line: c.line,
            column: c.column,
            message: "`cells` compares observed cell means, which a covariate does not adjust".into(),
            hint: Some("compare the adjusted marginal means (the default), or within one factor with `within`".into()),
        });
    }
    if errors.is_empty() {
        let missing: Vec<Term> = names
            .iter()
            .filter(|n| !formula.terms.iter().any(|t| t.factors == [n.to_string()]))
            .map(|n| Term {
                factors: vec![n.clone()],
            })
            .collect();
        formula.terms.splice(0..0, missing);
    }
    errors
}

/// The declared covariates, where they were written.
pub(super) fn located_covariates(d: &AnovaDraft) -> Option<Located<Vec<String>>> {
    d.covariates.as_ref().map(|(e, names)| Located {
        value: names.clone(),
        line: e.line,
        column: e.value_column,
    })
}
