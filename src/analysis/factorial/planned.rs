//! A factorial (or covariate) model's planned contrasts: one factor's
//! estimated marginal means with their covariance from the fit, weighed
//! by `analysis::contrasts`.

use super::fit::Fitted;
use super::model::{Errors, Model};
use crate::analysis::contrasts::{LevelMeans, factor_of, planned};
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::outcome::contrasts::ContrastDetail;
use crate::stats::linear::grid_average;

/// The block's contrasts over the marginal means of the factor whose
/// levels they name.
pub(super) fn contrasts(
    errors: &Errors<'_>,
    (model, data, levels): (&Model, &FactorialData, &[usize]),
    fitted: &Fitted,
    alpha: f64,
) -> Result<Option<ContrastDetail>, Diagnostic> {
    let (doc, spec) = (errors.doc, errors.spec);
    let Some(first) = spec.contrasts.first() else {
        return Ok(None);
    };
    let candidates: Vec<(String, Vec<String>)> = model
        .treatment_factors()
        .into_iter()
        .map(|f| (model.factor_names[f].clone(), data.levels[f].clone()))
        .collect();
    let (name, labels) = match factor_of(spec, &candidates) {
        Ok(Some((name, labels))) => (name, labels),
        Ok(None) => {
            return Err(doc
                .error_at(first.line, Some(first.column), format!("no treatment factor has every level `{}` names", first.name))
                .hint("a contrast weighs the levels of one treatment factor; check the spelling of the levels"));
        }
        Err(several) => {
            return Err(doc
                .error_at(
                    first.line,
                    Some(first.column),
                    format!(
                        "the levels of `{}` belong to several factors ({})",
                        first.name,
                        several.join(", ")
                    ),
                )
                .hint(format!(
                    "name the factor with each level, e.g. `{}={}`",
                    several[0], first.weights[0].0
                )));
        }
    };
    if fitted.rank_deficient {
        return Err(errors.model(
            "the marginal means the contrasts weigh cannot be estimated with empty cells and an interaction in the model".into(),
            "drop the interaction, or state the contrasts in a model without empty cells",
        ));
    }
    let f = model.index_of(name).unwrap_or(0);
    let rows: Vec<Vec<f64>> = (0..levels[f])
        .map(|l| {
            let mut fixed = vec![None; levels.len()];
            fixed[f] = Some(l);
            grid_average(&model.terms, levels, &fixed)
        })
        .collect();
    let mse = fitted.mse();
    let means = rows
        .iter()
        .map(|r| data.origin + fitted.estimate(r).0)
        .collect();
    // lᵀCm by polarisation: ¼[var(l + m) − var(l − m)].
    let var = |a: &[f64], b: &[f64], sign: f64| {
        let l: Vec<f64> = a.iter().zip(b).map(|(x, y)| x + sign * y).collect();
        fitted.estimate(&l).1
    };
    let covariance = rows
        .iter()
        .map(|a| {
            rows.iter()
                .map(|b| mse * 0.25 * (var(a, b, 1.0) - var(a, b, -1.0)))
                .collect()
        })
        .collect();
    let means = LevelMeans {
        factor: name,
        labels,
        means,
        covariance,
        df: fitted.residual_df as f64,
    };
    planned(doc, spec, &means, alpha)
}
