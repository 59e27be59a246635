//! Residuals of a fit with a covariance structure over a repeated factor.
//! The marginal residuals rᵢ = yᵢ − xᵢ'β̂ are correlated within a subject
//! and their variances differ between occasions, so the checks read the
//! normalised residuals: each subject's rᵢ premultiplied by L⁻¹, where
//! LL' is Σ̂ at the occasions the subject has (Cholesky, occasions in
//! order). Under the model they are uncorrelated with unit variance
//! (Pinheiro & Bates 2000, *Mixed-Effects Models in S and S-PLUS*, 4.3.1).

use nalgebra::{DMatrix, DVector};

use super::design::FixedDesign;
use super::error::MixedError;
use super::repeated_fit::RepeatedFit;
use super::repeated_layout::RepeatedLayout;

/// Fitted values and residuals per observation, in the data's order.
#[derive(Debug, Clone, PartialEq)]
pub struct StructuredResiduals {
    /// xᵢ'β̂.
    pub fitted: Vec<f64>,
    /// yᵢ − xᵢ'β̂.
    pub marginal: Vec<f64>,
    /// L⁻¹r within each subject: uncorrelated, unit variance under the model.
    pub normalised: Vec<f64>,
}

impl RepeatedFit {
    /// The residuals of the fit; `y`, `fixed` and `layout` must be what it
    /// was given.
    pub fn residuals(
        &self,
        y: &[f64],
        fixed: &FixedDesign,
        layout: &RepeatedLayout,
    ) -> Result<StructuredResiduals, MixedError> {
        let beta = &self.fixed.beta;
        if fixed.rank() != beta.len() || fixed.rows() != y.len() {
            return Err(MixedError::LengthMismatch {
                what: "the data given for residuals".into(),
                expected: y.len(),
                found: fixed.rows(),
            });
        }
        let fitted: Vec<f64> = (0..y.len())
            .map(|i| fixed.columns.iter().zip(beta).map(|(c, b)| c[i] * b).sum())
            .collect();
        let marginal: Vec<f64> = y.iter().zip(&fitted).map(|(y, f)| y - f).collect();
        let mut normalised = vec![f64::NAN; y.len()];
        for subject in layout.by_subject(y.len())? {
            let k = subject.rows.len();
            let sigma = DMatrix::from_fn(k, k, |a, b| {
                self.covariance[subject.occasions[a]][subject.occasions[b]]
            });
            let chol = sigma.cholesky().ok_or(MixedError::Singular {
                what: "a subject's covariance matrix",
            })?;
            let r = DVector::from_iterator(k, subject.rows.iter().map(|&i| marginal[i]));
            let z = chol
                .l()
                .solve_lower_triangular(&r)
                .ok_or(MixedError::Singular {
                    what: "a subject's covariance matrix",
                })?;
            for (&i, v) in subject.rows.iter().zip(z.iter()) {
                normalised[i] = *v;
            }
        }
        Ok(StructuredResiduals {
            fitted,
            marginal,
            normalised,
        })
    }
}

#[cfg(test)]
#[path = "normalised_tests.rs"]
mod tests;
