//! The results-file records of a model with random terms: how it was
//! fitted, the variance components, the classical strata (balanced designs)
//! and the SEDs per kind of comparison.

use super::finite;
use crate::outcome::linear::LinearOutcome;
use crate::outcome::mixed::MixedDetail;
use serde::Serialize;

#[derive(Serialize)]
pub struct FitRecord {
    /// Always "reml".
    pub method: &'static str,
    /// "kenward-roger" or "satterthwaite".
    pub ddf: &'static str,
    pub converged: bool,
    pub iterations: usize,
    pub log_likelihood: Option<f64>,
    pub aic: Option<f64>,
    pub bic: Option<f64>,
}

#[derive(Serialize)]
pub struct ComponentRecord {
    /// The random term as written, or "residual".
    pub term: String,
    pub variance: Option<f64>,
    pub sd: Option<f64>,
    /// Interval for the SD (profile likelihood), at 1 − alpha.
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
    /// Units of this size; absent for the residual.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub levels: Option<usize>,
    /// Share of the total variance, in percent.
    pub percent: Option<f64>,
}

#[derive(Serialize)]
pub struct StratumRecord {
    /// The unit whose variation is this stratum's error (`B:V`), or
    /// "residual".
    pub name: String,
    /// The treatment terms tested against this stratum's error.
    pub terms: Vec<String>,
    pub df: usize,
    pub ss: Option<f64>,
    pub ms: Option<f64>,
}

#[derive(Serialize)]
pub struct SedRecord {
    pub kind: String,
    pub sed: Option<f64>,
    pub df: Option<f64>,
    pub lsd: Option<f64>,
}

/// The records a block with random terms adds.
pub struct MixedRecords {
    pub fit: FitRecord,
    pub variance_components: Vec<ComponentRecord>,
    pub strata: Option<Vec<StratumRecord>>,
    pub seds: Vec<SedRecord>,
}

pub fn mixed_records(o: &LinearOutcome, m: &MixedDetail) -> MixedRecords {
    let fit = &m.fit;
    MixedRecords {
        fit: FitRecord {
            method: "reml",
            ddf: fit.ddf.key(),
            converged: fit.converged,
            iterations: fit.iterations,
            log_likelihood: finite(fit.log_likelihood),
            aic: finite(fit.aic),
            bic: finite(fit.bic),
        },
        variance_components: m
            .components
            .iter()
            .map(|c| ComponentRecord {
                term: c.term.clone(),
                variance: finite(c.variance),
                sd: finite(c.sd),
                ci_lower: finite(c.ci_lower),
                ci_upper: finite(c.ci_upper),
                levels: (c.levels > 0).then_some(c.levels),
                percent: finite(c.percent),
            })
            .collect(),
        strata: m.not_classical.is_none().then(|| strata(o)),
        seds: m
            .seds
            .iter()
            .map(|s| SedRecord {
                kind: s.kind.clone(),
                sed: finite(s.sed),
                df: finite(s.df),
                lsd: finite(s.lsd),
            })
            .collect(),
    }
}

/// The classical strata: each error with the terms tested against it.
fn strata(o: &LinearOutcome) -> Vec<StratumRecord> {
    o.strata
        .iter()
        .enumerate()
        .map(|(i, s)| StratumRecord {
            name: s.name.clone(),
            terms: o
                .terms
                .iter()
                .filter(|t| t.stratum == Some(i) && t.tested)
                .map(|t| t.name.clone())
                .collect(),
            // Balanced strata have whole degrees of freedom.
            df: s.df.round() as usize,
            ss: finite(s.ss),
            ms: finite(s.ms),
        })
        .collect()
}
