//! Profile-likelihood intervals of the standard deviations (mixed-models
//! spec 6.2): the set of σⱼ whose profiled criterion, the other parameters
//! re-estimated, lies within χ²₁(level) of the minimum. Limits by Brent's
//! method on the SD scale; the lower limit is 0 when the profile at 0 is
//! within the cutoff. Each inner fit starts from the previous inner
//! optimum of the same limit search (the first from the REML estimate);
//! the search visits its points in a fixed order, so results are
//! reproducible.

use crate::stats::{dist, roots};

use super::error::MixedError;
use super::fit::MixedFit;
use super::model::CovarianceModel;
use super::optimiser;

/// A profile interval on the SD scale.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SdInterval {
    pub lower: f64,
    pub upper: f64,
}

/// Bracket expansions before giving up.
const MAX_EXPANSIONS: usize = 60;
/// Brent's stopping width, relative to the SD.
const TOL_REL: f64 = 1e-12;

impl MixedFit {
    /// Profile intervals at `level` (e.g. 0.95) for every component, in the
    /// order of `components` (random terms, then the residual).
    pub fn profile_intervals(&self, level: f64) -> Result<Vec<SdInterval>, MixedError> {
        // χ²₁ quantile = square of the normal quantile.
        let z = dist::normal_isf((1.0 - level) / 2.0);
        let cutoff = z * z;
        (0..self.psi.len())
            .map(|k| self.profile_interval(k, cutoff))
            .collect()
    }

    /// d_prof(σ²ₖ = s²) − d_min − cutoff, starting from `warm` (updated to
    /// the new inner optimum).
    fn excess(
        &self,
        k: usize,
        s: f64,
        cutoff: f64,
        warm: &mut Vec<f64>,
    ) -> Result<f64, MixedError> {
        let mut start = warm.clone();
        start[k] = s * s;
        let mut held = vec![false; start.len()];
        held[k] = true;
        let opt = optimiser::minimise(&self.model, start, &held)?;
        *warm = opt.psi;
        Ok(opt.criterion - self.statistics.criterion - cutoff)
    }

    fn profile_interval(&self, k: usize, cutoff: f64) -> Result<SdInterval, MixedError> {
        let name = self.model.param_name(k);
        let failed = || MixedError::ProfileFailed {
            parameter: name.clone(),
        };
        let sd = self.psi[k].sqrt();
        let scale = if sd > 0.0 {
            sd
        } else {
            self.psi[self.psi.len() - 1].sqrt()
        };
        let tol_abs = TOL_REL * scale;
        let mut error = None;
        let mut warm = self.psi.clone();
        let mut f = |s: f64| match self.excess(k, s, cutoff, &mut warm) {
            Ok(v) => v,
            Err(e) => {
                error.get_or_insert(e);
                f64::NAN
            }
        };
        let lower = if self.model.may_be_zero(k) {
            let at_zero = f(0.0);
            if at_zero <= 0.0 || sd == 0.0 {
                0.0
            } else {
                roots::brent_known(&mut f, (0.0, at_zero), (sd, -cutoff), tol_abs, TOL_REL)
            }
        } else {
            let (s, v) = expand(&mut f, sd, 0.5).ok_or_else(failed)?;
            roots::brent_known(&mut f, (s, v), (sd, -cutoff), tol_abs, TOL_REL)
        };
        let (s, v) = expand(&mut f, scale, 2.0).ok_or_else(failed)?;
        let upper = roots::brent_known(&mut f, (sd, -cutoff), (s, v), tol_abs, TOL_REL);
        if let Some(e) = error {
            return Err(e);
        }
        if !(lower.is_finite() && upper.is_finite()) {
            return Err(failed());
        }
        Ok(SdInterval { lower, upper })
    }
}

/// Multiplies s by `factor` until the excess is positive.
fn expand(f: &mut impl FnMut(f64) -> f64, from: f64, factor: f64) -> Option<(f64, f64)> {
    let mut s = from;
    for _ in 0..MAX_EXPANSIONS {
        s *= factor;
        let v = f(s);
        if v.is_nan() {
            return None;
        }
        if v > 0.0 {
            return Some((s, v));
        }
    }
    None
}
