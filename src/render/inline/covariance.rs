//! A repeated-measures block's covariance structure in prose:
//! `covariance.structure` (its name in words), `covariance.parameter.<name>`
//! (the results file's parameter names), `covariance.aic` and `bic`, and,
//! with a comparison, `covariance.lowest_aic` and `lowest_bic` (names).

use crate::outcome::covariance::{CovarianceDetail, StructureFit};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub(super) struct CovarianceContext {
    structure: &'static str,
    parameter: BTreeMap<String, f64>,
    aic: f64,
    bic: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    lowest_aic: Option<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    lowest_bic: Option<&'static str>,
}

/// The structure the block's tests use, when it has one.
pub(super) fn covariance_context(o: &LinearOutcome) -> Option<CovarianceContext> {
    let c: &CovarianceDetail = o.repeated.as_ref()?.covariance.as_ref()?;
    let lowest = |key: fn(&StructureFit) -> f64| {
        c.compared
            .iter()
            .filter(|s| s.failed.is_none())
            .min_by(|a, b| key(a).total_cmp(&key(b)))
            .map(|s| s.structure.name())
    };
    Some(CovarianceContext {
        structure: c.structure.name(),
        parameter: c
            .parameters
            .iter()
            .map(|p| (p.name.clone(), p.value))
            .collect(),
        aic: c.fit.aic,
        bic: c.fit.bic,
        lowest_aic: lowest(|s| s.aic),
        lowest_bic: lowest(|s| s.bic),
    })
}
