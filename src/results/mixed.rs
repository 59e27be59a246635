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
    /// Interval for the SD at 1 − alpha, by `ci_method`: "profile"
    /// (profile likelihood) or "satterthwaite" (Satterthwaite's χ²);
    /// all three null when not computed.
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
    pub ci_method: Option<&'static str>,
    /// Units of this size; absent for the residual.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub levels: Option<usize>,
    /// Share of the total variance, in percent.
    pub percent: Option<f64>,
    /// The checks on the term's predicted unit effects; absent for the
    /// residual and with `checks: summary`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub predicted_effects: Option<PredictedRecord>,
}

/// A random term's predicted unit effects (BLUPs), checked.
#[derive(Serialize)]
pub struct PredictedRecord {
    /// Shapiro-Wilk on the standardised effects; `null` when the variance
    /// is estimated at 0 or there are fewer than 3 units.
    pub shapiro_wilk: Option<super::ShapiroRecord>,
    /// |standardised effect| above which units are listed.
    pub threshold: f64,
    /// How many units are beyond it in all.
    pub flagged_count: usize,
    /// The most extreme of them (at most 100), in unit order.
    pub flagged: Vec<FlaggedRecord>,
}

#[derive(Serialize)]
pub struct FlaggedRecord {
    pub unit: String,
    pub effect: Option<f64>,
    pub standardized: Option<f64>,
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
                ci_method: c.ci_lower.is_finite().then(|| m.interval_method.key()),
                levels: (c.levels > 0).then_some(c.levels),
                percent: finite(c.percent),
                predicted_effects: m
                    .predicted
                    .iter()
                    .find(|p| p.term == c.term)
                    .map(predicted_record),
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

fn predicted_record(p: &crate::outcome::mixed::PredictedEffects) -> PredictedRecord {
    PredictedRecord {
        shapiro_wilk: p.shapiro_wilk.map(|s| super::ShapiroRecord {
            w: finite(s.w),
            p: finite(s.p),
            n: s.n,
        }),
        threshold: crate::stats::assumptions::OUTLIER_THRESHOLD,
        flagged_count: p.flagged_count,
        flagged: p
            .flagged
            .iter()
            .map(|u| FlaggedRecord {
                unit: u.unit.clone(),
                effect: finite(u.effect),
                standardized: finite(u.standardized),
            })
            .collect(),
    }
}
