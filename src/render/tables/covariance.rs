//! The tables of a repeated-measures block with `covariance`: the fitted
//! structure's parameters with the correlations they imply, and, when
//! asked, every structure's REML information criteria side by side.

use super::keys::Keys;
use super::{cell, col, measure, shown_term, text};
use crate::doc::block::PlotSpec;
use crate::doc::block_covariance::CovarianceStructure;
use crate::format::capitalised;
use crate::format::{fixed, significant};
use crate::outcome::covariance::{CovarianceDetail, StructureFit};
use crate::outcome::linear::LinearOutcome;
use crate::outcome::repeated::RepeatedDetail;
use crate::render::view::TableView;

/// What a structure assumes, in plain words.
fn structure_meaning(plots: &PlotSpec, c: &CovarianceDetail) -> String {
    match c.structure {
        CovarianceStructure::CompoundSymmetry => "Compound symmetry: the same variance at every occasion and the same correlation between any two occasions of a subject, however far apart.".to_string(),
        CovarianceStructure::Autoregressive => format!(
            "First-order autoregressive: the same variance at every occasion, and a correlation that shrinks with the time between occasions (the correlation one unit apart raised to the power of the distance{}).",
            match &c.times {
                Some(_) => format!(", taken from the levels of {} as numbers", shown_term(plots, &c.factor)),
                None => ", with the occasions taken as equally spaced".to_string(),
            }
        ),
        CovarianceStructure::Unstructured => "Unstructured: a variance for every occasion and a covariance for every pair, all estimated from the data; the most flexible structure, and the one needing the most subjects.".to_string(),
    }
}

/// The structure's parameters: estimate and implied correlation.
pub fn structure_table(
    o: &LinearOutcome,
    r: &RepeatedDetail,
    c: &CovarianceDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let rows = c
        .parameters
        .iter()
        .map(|p| {
            let k = |q: &str| keys.field(&format!("repeated.covariance.parameters.{}.{q}", p.name));
            vec![
                text(p.label.clone()),
                cell(significant(p.value, 4), k("value")),
                if p.correlation.is_finite() {
                    cell(fixed(p.correlation, 3), k("correlation"))
                } else {
                    text("")
                },
            ]
        })
        .collect();
    let plots = &o.presentation.plots;
    let mut footnotes = vec![structure_meaning(plots, c)];
    footnotes.push(format!(
        "Fitted by REML on all {} observations of {} subjects ({}; those with missing occasions included), {}",
        o.n,
        r.subjects,
        plots.display(&r.subject),
        "which is valid when whether an observation is missing depends only on what was observed (missing at random); nothing was imputed."
    ));
    TableView {
        number,
        id: format!("{}-covariance", o.id),
        caption: format!(
            "Table {number}. Covariance of a subject's observations of {} over {}: {}.",
            measure(o),
            shown_term(plots, &c.factor),
            c.structure.name()
        ),
        columns: vec![
            col("Parameter", false),
            col("Estimate", true),
            col("Correlation", true),
        ],
        rows,
        footnotes,
    }
}

/// Each structure's parameters, REML log-likelihood, AIC and BIC.
pub fn comparison_table(
    o: &LinearOutcome,
    c: &CovarianceDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let rows = c
        .compared
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let k = |q: &str| keys.field(&format!("repeated.covariance.comparison.{i}.{q}"));
            let name = text(capitalised(s.structure.name()));
            match &s.failed {
                Some(_) => vec![name, text("–"), text("not fitted"), text(""), text("")],
                None => vec![
                    name,
                    cell(s.parameters.to_string(), k("parameters")),
                    cell(fixed(-2.0 * s.log_likelihood, 2), k("log_likelihood")),
                    cell(fixed(s.aic, 2), k("aic")),
                    cell(fixed(s.bic, 2), k("bic")),
                ],
            }
        })
        .collect();
    TableView {
        number,
        id: format!("{}-structures", o.id),
        caption: format!(
            "Table {number}. Covariance structures for {} over {} compared (REML, same fixed effects).",
            measure(o),
            shown_term(&o.presentation.plots, &c.factor)
        ),
        columns: vec![
            col("Structure", false),
            col("Parameters", true),
            col("−2 log-likelihood", true),
            col("AIC", true),
            col("BIC", true),
        ],
        rows,
        footnotes: comparison_notes(o, c),
    }
}

/// How to read the comparison, which structure is lowest, and which one
/// the tests use.
fn comparison_notes(o: &LinearOutcome, c: &CovarianceDetail) -> Vec<String> {
    let fitted: Vec<&StructureFit> = c.compared.iter().filter(|s| s.failed.is_none()).collect();
    let lowest = |key: fn(&StructureFit) -> f64| {
        fitted
            .iter()
            .min_by(|a, b| key(a).total_cmp(&key(b)))
            .map(|s| s.structure.name())
    };
    let mut notes = vec![format!(
        "Lower is better. AIC = −2 log-likelihood + 2q and BIC = −2 log-likelihood + q·ln(N − p), with q covariance parameters, N = {} observations and p = {} fixed-effect parameters (some programs use the number of subjects in BIC instead; the results file has both). The log-likelihood is REML's in the form that does not depend on how the fixed effects are coded, so it may differ from other programs' by a constant that is the same for every structure. The criteria compare structures only with the same fixed effects; differences below about 2 are commonly read as no clear preference.",
        o.n,
        o.mixed.as_ref().map_or(0, |m| m.fit.p)
    )];
    if let (Some(aic), Some(bic)) = (lowest(|s| s.aic), lowest(|s| s.bic)) {
        let chosen = c.structure.name();
        let agree = if aic == bic {
            format!("Both criteria are lowest for {aic}.")
        } else {
            format!("AIC is lowest for {aic}, BIC for {bic}.")
        };
        notes.push(format!(
            "{agree} The tests above use {chosen}, the structure the block names; sheaf does not switch structures on its own. If the document should use another, name it in `covariance` and say why in the text."
        ));
    }
    for s in c.compared.iter().filter(|s| s.failed.is_some()) {
        notes.push(format!(
            "{} was not fitted: {}.",
            capitalised(s.structure.name()),
            s.failed.as_deref().unwrap_or_default()
        ));
    }
    notes
}
