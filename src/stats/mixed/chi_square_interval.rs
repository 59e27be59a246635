//! Satterthwaite's χ² interval for each variance component (mixed-models
//! spec 6.2), the cheap alternative to profile likelihood for large
//! models: ν = 2σ̂⁴/var(σ̂²), with var(σ̂²) from the expected information at
//! the REML estimate, and the SD between √(νσ̂²/χ²_{ν; α/2}) and
//! √(νσ̂²/χ²_{ν; 1−α/2}) (upper-tail quantiles). For balanced data the
//! expected information gives var(σ̂²) = 2Σ(cₛMSₛ)²/fₛ for σ̂² = ΣcₛMSₛ, so ν
//! is the spec's mean-square formula. A variance estimated at 0 has none.

use super::fit::MixedFit;
use super::model::CovarianceModel;
use super::profile::SdInterval;
use crate::stats::dist::chi2_isf;

impl MixedFit {
    /// One interval per component (random terms, then the residual) at
    /// confidence `level`; `None` for a component at 0 or a degenerate ν.
    pub fn satterthwaite_intervals(&self, level: f64) -> Vec<Option<SdInterval>> {
        let np = self.psi.len();
        // The df inputs' covariance is over the parameters not held at 0.
        let free: Vec<usize> = (0..np)
            .filter(|&i| self.psi[i] > 0.0 || !self.model.may_be_zero(i))
            .collect();
        let cov = &self.fixed.df_inputs.cov_expected;
        let tail = (1.0 - level) / 2.0;
        (0..np)
            .map(|i| {
                let k = free.iter().position(|&f| f == i)?;
                let (v, var) = (self.psi[i], cov[(k, k)]);
                let nu = 2.0 * v * v / var;
                if !(v > 0.0 && nu.is_finite() && nu > 0.0) {
                    return None;
                }
                Some(SdInterval {
                    lower: (nu * v / chi2_isf(tail, nu)).sqrt(),
                    upper: (nu * v / chi2_isf(1.0 - tail, nu)).sqrt(),
                })
            })
            .collect()
    }
}
