//! Inference on the fixed effects of a fitted mixed model: Wald F tests of
//! Lβ = 0, Type III tests of a term, single contrasts with SE and df. Every
//! covariance model (variance components, structures over a repeated
//! factor) ends in the same β̂, Φ and df matrices, so they share this type
//! and the analyses that read it need not know which model was fitted.

use super::ddf::{self, ContrastTest, Ddf, DfInputs, Information, WaldTest};
use super::design::FixedDesign;
use super::error::MixedError;
use super::fit::matrix_of;

/// β̂ over the kept columns with what the df methods need.
#[derive(Debug, Clone)]
pub struct FixedInference {
    pub beta: Vec<f64>,
    pub(crate) df_inputs: DfInputs,
}

impl FixedInference {
    /// The Wald F test of Lβ = 0 (rows of L over the kept columns).
    pub fn wald(&self, l: &[Vec<f64>], method: Ddf) -> Result<WaldTest, MixedError> {
        let lm = matrix_of(l, self.beta.len())?;
        let test = match method {
            Ddf::KenwardRoger => ddf::kenward_roger(&self.df_inputs, &self.beta, &lm),
            Ddf::Satterthwaite(info) => ddf::satterthwaite(&self.df_inputs, &self.beta, &lm, info),
        };
        test.ok_or_else(|| MixedError::BadHypothesis {
            reason: "the rows of L are not linearly independent".into(),
        })
    }

    /// The Type III test of fixed term `term` of `design`.
    pub fn type3(
        &self,
        design: &FixedDesign,
        term: usize,
        method: Ddf,
    ) -> Result<WaldTest, MixedError> {
        self.wald(&design.type3_rows(term)?, method)
    }

    /// One linear function lβ (l over the kept columns; see
    /// [`FixedDesign::restrict`]) with its SE and df.
    pub fn contrast(&self, l: &[f64], method: Ddf) -> Result<ContrastTest, MixedError> {
        if l.len() != self.beta.len() {
            return Err(MixedError::LengthMismatch {
                what: "a contrast".into(),
                expected: self.beta.len(),
                found: l.len(),
            });
        }
        Ok(ddf::contrast(&self.df_inputs, &self.beta, l, method))
    }

    /// Satterthwaite df of one contrast with either information (both are
    /// offered; spec 3.2).
    pub fn satterthwaite_df(&self, l: &[f64], information: Information) -> f64 {
        ddf::satterthwaite_single(&self.df_inputs, l, information)
    }
}
