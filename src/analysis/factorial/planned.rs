//! A factorial (or covariate) model's planned contrasts and trend: one
//! factor's estimated marginal means with their covariance from the fit,
//! weighed by `analysis::contrasts` and `analysis::trend`.

use super::fit::Fitted;
use super::model::{Errors, Model};
use crate::analysis::contrasts::{LevelMeans, contrast_factor, planned};
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::outcome::contrasts::ContrastDetail;
use crate::outcome::trend::TrendDetail;
use crate::stats::linear::grid_average;

/// What the contrasts and the trend are computed from.
pub(super) struct Planning<'a> {
    pub errors: &'a Errors<'a>,
    pub model: &'a Model,
    pub data: &'a FactorialData,
    pub levels: &'a [usize],
    pub fitted: &'a Fitted,
    pub alpha: f64,
}

impl Planning<'_> {
    /// Factor f's marginal means and their covariance (MSE·L(XᵀX)⁻¹Lᵀ).
    fn level_means(&self, f: usize) -> Result<LevelMeans<'_>, Diagnostic> {
        let (fitted, levels) = (self.fitted, self.levels);
        if fitted.rank_deficient {
            return Err(self.errors.model(
                "the marginal means a contrast or trend weighs cannot be estimated with empty cells and an interaction in the model".into(),
                "drop the interaction, or state the contrasts in a model without empty cells",
            ));
        }
        let rows: Vec<Vec<f64>> = (0..levels[f])
            .map(|l| {
                let mut fixed = vec![None; levels.len()];
                fixed[f] = Some(l);
                grid_average(&self.model.terms, levels, &fixed)
            })
            .collect();
        let mse = fitted.mse();
        let means = rows
            .iter()
            .map(|r| self.data.origin + fitted.estimate(r).0)
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
        Ok(LevelMeans {
            factor: &self.model.factor_names[f],
            labels: &self.data.layout.levels[f],
            means,
            covariance,
            df: fitted.residual_df as f64,
        })
    }

    /// The block's contrasts over the marginal means of the factor whose
    /// levels they name.
    pub fn contrasts(&self) -> Result<Option<ContrastDetail>, Diagnostic> {
        let (doc, spec) = (self.errors.doc, self.errors.spec);
        let model = self.model;
        let candidates: Vec<(String, Vec<String>)> = model
            .treatment_factors()
            .into_iter()
            .map(|f| {
                (
                    model.factor_names[f].clone(),
                    self.data.layout.levels[f].clone(),
                )
            })
            .collect();
        let Some(name) = contrast_factor(doc, spec, &candidates)? else {
            return Ok(None);
        };
        let f = model.index_of(&name).unwrap_or(0);
        planned(doc, spec, &self.level_means(f)?, self.alpha)
    }

    /// The trend over the named factor's marginal means, on the model's
    /// error (no fitted curve: that needs one factor).
    pub fn trend(&self) -> Result<Option<TrendDetail>, Diagnostic> {
        let (doc, spec) = (self.errors.doc, self.errors.spec);
        let Some(t) = &spec.trend else {
            return Ok(None);
        };
        let f = self.model.trend_factor(doc, t)?;
        let means = self.level_means(f)?;
        crate::analysis::trend::trend(doc, spec, &means, (self.fitted.mse(), None), self.alpha)
    }
}
