//! The results-file record of a repeated-measures block (`subject`): the
//! factors' classification, the subjects used, and the univariate
//! within-subject tests with their sphericity test and corrected p-values.

use super::finite;
use crate::outcome::covariance::{CovarianceDetail, StructureFit};
use crate::outcome::repeated::{RepeatedDetail, WithinTest};
use serde::Serialize;

#[derive(Serialize)]
pub struct RepeatedRecord {
    /// The column naming the subjects.
    pub subject: String,
    /// Factors that vary within subjects, and those constant within each.
    pub within: Vec<String>,
    pub between: Vec<String>,
    /// Subjects with data; those complete at every occasion (the
    /// univariate analysis uses only these); the others (at most 100
    /// listed) and how many.
    pub subjects: usize,
    pub complete_subjects: usize,
    pub incomplete: Vec<String>,
    pub incomplete_count: usize,
    /// The within-subject tests; null when the univariate analysis was not
    /// possible, with the reason in `univariate_not_computed`.
    pub univariate: Option<Vec<WithinRecord>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub univariate_not_computed: Option<String>,
    /// The covariance structure of the mixed model (`covariance`); absent
    /// when the subject is a random term.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub covariance: Option<CovarianceRecord>,
}

/// The structure the tests use, its parameters and fitted covariance, and
/// the comparison of structures when asked.
#[derive(Serialize)]
pub struct CovarianceRecord {
    /// `compound-symmetry`, `autoregressive` or `unstructured`.
    pub structure: &'static str,
    /// The repeated factor (within-subject factors joined with `:`).
    pub factor: String,
    pub occasions: Vec<String>,
    /// The occasions' times for the autoregressive structure (the level
    /// names as numbers); null when taken as equally spaced.
    pub times: Option<Vec<f64>>,
    pub parameters: Vec<ParameterRecord>,
    /// Σ̂ over the occasions, row by row.
    pub matrix: Vec<Vec<Option<f64>>>,
    pub log_likelihood: Option<f64>,
    pub aic: Option<f64>,
    pub bic: Option<f64>,
    pub bic_subjects: Option<f64>,
    /// Kenward-Roger was computed without its second-derivative terms
    /// (autoregressive structure).
    pub kenward_roger_first_order: bool,
    /// Every structure, when `covariance` asks for the comparison (empty
    /// otherwise).
    pub comparison: Vec<StructureRecord>,
}

#[derive(Serialize)]
pub struct ParameterRecord {
    pub name: String,
    pub value: Option<f64>,
    /// The correlation a covariance implies (null for variances).
    pub correlation: Option<f64>,
}

/// One structure's REML information criteria; null values and the reason
/// in `not_fitted` when it could not be fitted.
#[derive(Serialize)]
pub struct StructureRecord {
    pub structure: &'static str,
    pub parameters: usize,
    pub log_likelihood: Option<f64>,
    pub aic: Option<f64>,
    pub bic: Option<f64>,
    pub bic_subjects: Option<f64>,
    pub lowest_aic: bool,
    pub lowest_bic: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub not_fitted: Option<String>,
}

#[derive(Serialize)]
pub struct WithinRecord {
    pub term: String,
    pub df: f64,
    pub df_den: f64,
    pub f: Option<f64>,
    pub p: Option<f64>,
    /// p with both df multiplied by the Greenhouse-Geisser, Huynh-Feldt
    /// (Lecoutre's form, capped at 1) and lower-bound epsilons.
    pub p_gg: Option<f64>,
    pub p_hf: Option<f64>,
    pub p_lower_bound: Option<f64>,
    pub sphericity: SphericityRecord,
}

/// Mauchly's test and the epsilons; for an effect with one df the test
/// fields are null (sphericity holds trivially) and the epsilons 1.
#[derive(Serialize)]
pub struct SphericityRecord {
    pub mauchly_w: Option<f64>,
    pub chi_sq: Option<f64>,
    pub df: Option<usize>,
    pub p: Option<f64>,
    pub gg_epsilon: Option<f64>,
    pub hf_epsilon: Option<f64>,
    /// Huynh-Feldt's epsilon before the cap at 1.
    pub hf_epsilon_uncapped: Option<f64>,
}

pub fn repeated_record(r: &RepeatedDetail) -> RepeatedRecord {
    RepeatedRecord {
        subject: r.subject.clone(),
        within: r.within.clone(),
        between: r.between.clone(),
        subjects: r.subjects,
        complete_subjects: r.complete_subjects,
        incomplete: r.incomplete.clone(),
        incomplete_count: r.incomplete_count,
        univariate: r
            .univariate
            .as_ref()
            .ok()
            .map(|tests| tests.iter().map(within_record).collect()),
        univariate_not_computed: r.univariate.as_ref().err().cloned(),
        covariance: r.covariance.as_ref().map(covariance_record),
    }
}

fn covariance_record(c: &CovarianceDetail) -> CovarianceRecord {
    let lowest = |key: fn(&StructureFit) -> f64| {
        c.compared
            .iter()
            .filter(|s| s.failed.is_none())
            .min_by(|a, b| key(a).total_cmp(&key(b)))
            .map(|s| s.structure)
    };
    let (aic, bic) = (lowest(|s| s.aic), lowest(|s| s.bic));
    CovarianceRecord {
        structure: c.structure.key(),
        factor: c.factor.clone(),
        occasions: c.occasions.clone(),
        times: c.times.clone(),
        parameters: c
            .parameters
            .iter()
            .map(|p| ParameterRecord {
                name: p.name.clone(),
                value: finite(p.value),
                correlation: finite(p.correlation),
            })
            .collect(),
        matrix: c
            .covariance
            .iter()
            .map(|row| row.iter().map(|&v| finite(v)).collect())
            .collect(),
        log_likelihood: finite(c.fit.log_likelihood),
        aic: finite(c.fit.aic),
        bic: finite(c.fit.bic),
        bic_subjects: finite(c.fit.bic_subjects),
        kenward_roger_first_order: c.first_order,
        comparison: c
            .compared
            .iter()
            .map(|s| StructureRecord {
                structure: s.structure.key(),
                parameters: s.parameters,
                log_likelihood: finite(s.log_likelihood),
                aic: finite(s.aic),
                bic: finite(s.bic),
                bic_subjects: finite(s.bic_subjects),
                lowest_aic: Some(s.structure) == aic,
                lowest_bic: Some(s.structure) == bic,
                not_fitted: s.failed.clone(),
            })
            .collect(),
    }
}

fn within_record(t: &WithinTest) -> WithinRecord {
    let m = t.sphericity.as_ref();
    WithinRecord {
        term: t.term.clone(),
        df: t.df,
        df_den: t.df_den,
        f: finite(t.f),
        p: finite(t.p),
        p_gg: finite(t.p_gg),
        p_hf: finite(t.p_hf),
        p_lower_bound: finite(t.p_lower_bound),
        sphericity: SphericityRecord {
            mauchly_w: m.and_then(|m| finite(m.w)),
            chi_sq: m.and_then(|m| finite(m.chi_sq)),
            df: m.map(|m| m.df),
            p: m.and_then(|m| finite(m.p)),
            gg_epsilon: finite(t.gg_epsilon),
            hf_epsilon: finite(t.hf_epsilon),
            hf_epsilon_uncapped: finite(t.hf_epsilon_uncapped),
        },
    }
}
