//! The precision figures agronomy readers look for first: the coefficient
//! of variation of the residual error, and each comparison family's
//! standard error of a difference (SED) with its least significant
//! difference (LSD), one value under equal replication, else their range.

use super::linear::{Comparison, LinearOutcome};
use crate::stats::compare::Method;
use crate::stats::dist::t_isf;
use crate::stats::sum::neumaier;

/// A family's SEDs and the LSDs at its α (t on the error df times the SED).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sed {
    pub min: f64,
    pub max: f64,
    pub df: f64,
    pub lsd_min: f64,
    pub lsd_max: f64,
}

impl Sed {
    /// One SED for every pair (equal replication, to 1e-9 relative).
    pub fn single(&self) -> bool {
        (self.max - self.min).abs() <= 1e-9 * self.max.abs()
    }
}

/// The SEDs of a family whose pairs share one error df; `None` where each
/// pair has its own (Games-Howell, mixed models) or there are no pairs.
pub fn sed(c: &Comparison) -> Option<Sed> {
    // Rank procedures compare ranks, not means: their SE is in rank units.
    if matches!(
        c.method,
        Method::Dunn | Method::Nemenyi | Method::ConoverFriedman
    ) {
        return None;
    }
    let first = c.contrasts.first()?;
    if c.contrasts.iter().any(|p| p.own_df || p.df != first.df) || !first.se.is_finite() {
        return None;
    }
    let (min, max) = c
        .contrasts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.se), b.max(p.se))
        });
    let t = t_isf(c.alpha / 2.0, first.df);
    Some(Sed {
        min,
        max,
        df: first.df,
        lsd_min: t * min,
        lsd_max: t * max,
    })
}

impl LinearOutcome {
    /// The mean of the observations analysed, from the level or cell means
    /// and their counts; `None` without observations.
    pub fn grand_mean(&self) -> Option<f64> {
        let (n, sum) = if self.levels.is_empty() {
            let present = self.cells.iter().filter(|c| c.n > 0);
            let n: usize = present.clone().map(|c| c.n).sum();
            (n, neumaier(present.map(|c| c.n as f64 * c.mean)))
        } else {
            let n: usize = self.levels.iter().map(|l| l.n).sum();
            (n, neumaier(self.levels.iter().map(|l| l.n as f64 * l.mean)))
        };
        (n > 0).then(|| sum / n as f64)
    }

    /// The residual SD as a percentage of the grand mean, for models with
    /// one error (fixed effects); `None` with random terms, where each
    /// stratum has its own, or when the mean is zero.
    pub fn cv_percent(&self) -> Option<f64> {
        // On a transformed scale the ratio of SD to mean has no meaning.
        let transformed = self.transformation().is_some();
        if self.mixed.is_some() || self.repeated.is_some() || transformed {
            return None;
        }
        let mean = self.grand_mean()?;
        let cv = 100.0 * self.residual().ms.sqrt() / mean.abs();
        cv.is_finite().then_some(cv)
    }
}
