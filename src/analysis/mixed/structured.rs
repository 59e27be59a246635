//! The mixed model with a covariance structure over the repeated factor
//! (`covariance`): each subject's errors correlated as the structure says,
//! fitted by REML on every observation, so subjects with missing occasions
//! stay in (mixed-models spec 7.4, 7.5); and, when asked, every
//! structure's AIC and BIC with the same fixed effects, reported without
//! choosing one silently.

use super::super::notes::Note;
use super::repeated::Refusal;
use crate::data::FactorialRows;
use crate::doc::block::DdfMethod;
use crate::doc::block_covariance::{Covariance, CovarianceStructure};
use crate::outcome::covariance::{CovarianceDetail, CovarianceParameter, StructureFit};
use crate::stats::mixed::{
    self, FixedDesign, FixedInference, MixedError, RepeatedFit, RepeatedLayout, Structure,
    StructuredResiduals,
};

/// The fitted structure with what the tests and checks read.
pub(super) struct Structured {
    pub fit: RepeatedFit,
    pub residuals: StructuredResiduals,
    pub detail: CovarianceDetail,
}

impl Structured {
    /// The fixed-effect inference the tests use: Kenward-Roger without the
    /// second-derivative terms for the autoregressive structure, whose
    /// value with them depends on the parameterisation (spec 3.3).
    pub fn inference(&self) -> &FixedInference {
        if self.detail.first_order {
            &self.fit.first_order
        } else {
            &self.fit.fixed
        }
    }
}

/// The repeated layout as the fit sees it.
pub(super) struct Repeats<'a> {
    pub data: &'a FactorialRows,
    pub design: &'a FixedDesign,
    /// The subject column's index among the data's factors.
    pub subject: usize,
    /// The within-subject factors' indices, and every factor's name.
    pub within: &'a [usize],
    pub factor_names: &'a [String],
    /// Kenward-Roger asked for (the first-order version applies to AR(1)).
    pub kenward_roger: bool,
    /// Subjects observed at every occasion.
    pub complete_subjects: usize,
}

/// Fits the structure `covariance` names (and the others when it asks for
/// the comparison).
pub(super) fn structured(r: &Repeats<'_>, covariance: Covariance) -> Result<Structured, Refusal> {
    let (layout, occasions) = r.layout();
    let chosen = covariance.structure;
    let fit = r.fit(&layout, chosen)?;
    let residuals = fit
        .residuals(&r.data.offsets, r.design, &layout)
        .map_err(|e| {
            (
                format!("the residuals could not be computed: {e}"),
                HINT.into(),
            )
        })?;
    let compared = if covariance.compare {
        CovarianceStructure::ALL
            .into_iter()
            .map(|s| {
                if s == chosen {
                    fit_statistics(&fit, s)
                } else {
                    match r.fit(&layout, s) {
                        Ok(f) => fit_statistics(&f, s),
                        Err((reason, _)) => failed(s, reason),
                    }
                }
            })
            .collect()
    } else {
        Vec::new()
    };
    let detail = CovarianceDetail {
        structure: chosen,
        factor: r.factor_name(),
        parameters: parameters(&fit, &occasions, layout.times.is_some()),
        occasions,
        times: layout.times.clone(),
        covariance: fit.covariance.clone(),
        fit: fit_statistics(&fit, chosen),
        first_order: r.kenward_roger && fit.second_derivative_terms,
        compared,
    };
    Ok(Structured {
        fit,
        residuals,
        detail,
    })
}

const HINT: &str = "check the subject column and that each subject has at most one observation per occasion; a simpler structure (`compound-symmetry`) needs fewer subjects";

impl Repeats<'_> {
    /// The within factors' combined name (`week`, or `a:b`).
    fn factor_name(&self) -> String {
        self.within
            .iter()
            .map(|&f| self.factor_names[f].as_str())
            .collect::<Vec<_>>()
            .join(":")
    }

    /// Each observation's subject and occasion (combinations of the within
    /// factors' levels, the first slowest), the occasions' labels, and
    /// their times: the labels as numbers when there is one within factor
    /// and every label is a number, else equally spaced.
    fn layout(&self) -> (RepeatedLayout, Vec<String>) {
        let data = self.data;
        let counts: Vec<usize> = self
            .within
            .iter()
            .map(|&f| data.layout.levels[f].len())
            .collect();
        let occasion = |row: &[usize]| {
            self.within
                .iter()
                .zip(&counts)
                .fold(0, |acc, (&f, &c)| acc * c + row[f])
        };
        let mut labels = vec![String::new()];
        for &f in self.within {
            labels = labels
                .iter()
                .flat_map(|l| {
                    data.layout.levels[f].iter().map(move |v| {
                        if l.is_empty() {
                            v.clone()
                        } else {
                            format!("{l}:{v}")
                        }
                    })
                })
                .collect();
        }
        let times = match self.within {
            [f] => data.layout.levels[*f]
                .iter()
                .map(|l| l.trim().parse::<f64>().ok().filter(|t| t.is_finite()))
                .collect::<Option<Vec<f64>>>(),
            _ => None,
        };
        let n = data.offsets.len();
        let layout = RepeatedLayout {
            subjects: data.layout.levels[self.subject].len(),
            subject_of: (0..n).map(|i| data.row(i)[self.subject]).collect(),
            occasions: labels.len(),
            occasion_of: (0..n).map(|i| occasion(data.row(i))).collect(),
            times,
        };
        (layout, labels)
    }

    /// One structure's fit, or why it failed in plain words.
    fn fit(
        &self,
        layout: &RepeatedLayout,
        structure: CovarianceStructure,
    ) -> Result<RepeatedFit, Refusal> {
        if structure == CovarianceStructure::Autoregressive && self.within.len() > 1 {
            return Err((
                format!(
                    "the autoregressive structure needs one within-subject factor ordered in time; {} all vary within subjects",
                    self.within
                        .iter()
                        .map(|&f| format!("`{}`", self.factor_names[f]))
                        .collect::<Vec<_>>()
                        .join(" and ")
                ),
                "use `compound-symmetry` or `unstructured`".into(),
            ));
        }
        let stats_structure = match structure {
            CovarianceStructure::CompoundSymmetry => Structure::CompoundSymmetry,
            CovarianceStructure::Autoregressive => Structure::Autoregressive,
            CovarianceStructure::Unstructured => Structure::Unstructured,
        };
        mixed::fit_repeated(&self.data.offsets, self.design, layout, stats_structure)
            .map_err(|e| self.failure(&e, stats_structure, layout))
    }

    /// Why a fit failed, in plain words. An unstructured covariance with
    /// fewer complete subjects than occasions can have no maximum: the
    /// likelihood keeps rising as the fitted covariance turns singular in a
    /// direction the complete subjects' residuals leave free, which the fit
    /// meets as a flat or unending climb.
    fn failure(&self, e: &MixedError, structure: Structure, layout: &RepeatedLayout) -> Refusal {
        let occasions = layout.occasions;
        let diverging = matches!(
            e,
            MixedError::NotIdentified { .. } | MixedError::NotConverged { .. }
        );
        if structure == Structure::Unstructured && diverging {
            return (
                format!(
                    "the unstructured covariance could not be estimated: its likelihood has no maximum on these data (the fitted covariance drifts towards a singular matrix); {} of the {} subjects are observed at all {occasions} occasions",
                    self.complete_subjects,
                    layout.subjects
                ),
                "use `autoregressive` or `compound-symmetry`, which have two parameters, or fewer occasions".into(),
            );
        }
        (
            format!(
                "the {} structure could not be fitted: {e}",
                structure.name()
            ),
            HINT.into(),
        )
    }
}

/// A fit's information criteria.
fn fit_statistics(fit: &RepeatedFit, structure: CovarianceStructure) -> StructureFit {
    StructureFit {
        structure,
        parameters: fit.parameters.len(),
        log_likelihood: -fit.statistics.criterion / 2.0,
        aic: fit.statistics.aic,
        bic: fit.statistics.bic,
        bic_subjects: fit.bic_subjects,
        failed: None,
    }
}

/// A structure that could not be fitted.
fn failed(structure: CovarianceStructure, reason: String) -> StructureFit {
    StructureFit {
        structure,
        parameters: 0,
        log_likelihood: f64::NAN,
        aic: f64::NAN,
        bic: f64::NAN,
        bic_subjects: f64::NAN,
        failed: Some(reason),
    }
}

/// The parameters named with the occasions' labels, with the
/// correlations they imply.
fn parameters(fit: &RepeatedFit, occasions: &[String], timed: bool) -> Vec<CovarianceParameter> {
    let v: Vec<f64> = fit.parameters.iter().map(|p| p.value).collect();
    let param = |name: String, label: String, value: f64, correlation: f64| CovarianceParameter {
        name,
        label,
        value,
        correlation,
    };
    match fit.structure {
        Structure::CompoundSymmetry => vec![
            param(
                "covariance".into(),
                "Covariance within a subject".into(),
                v[0],
                v[0] / (v[0] + v[1]),
            ),
            param(
                "residual".into(),
                "Residual variance".into(),
                v[1],
                f64::NAN,
            ),
        ],
        Structure::Autoregressive => vec![
            param("variance".into(), "Variance".into(), v[0], f64::NAN),
            param(
                "correlation".into(),
                if timed {
                    "Correlation one time unit apart".to_string()
                } else {
                    "Correlation of adjacent occasions".into()
                },
                v[1],
                v[1],
            ),
        ],
        Structure::Unstructured => {
            let sigma = &fit.covariance;
            let mut out = Vec::new();
            for l in 0..occasions.len() {
                for j in 0..=l {
                    let (a, b) = (&occasions[j], &occasions[l]);
                    out.push(if j == l {
                        param(
                            format!("variance[{a}]"),
                            format!("Variance at {a}"),
                            sigma[j][j],
                            f64::NAN,
                        )
                    } else {
                        param(
                            format!("covariance[{a},{b}]"),
                            format!("Covariance of {a} and {b}"),
                            sigma[j][l],
                            sigma[j][l] / (sigma[j][j] * sigma[l][l]).sqrt(),
                        )
                    });
                }
            }
            out
        }
    }
}

/// Warnings on the structure: Satterthwaite's df with an unstructured
/// covariance on few subjects are far too generous (spec 7.4: Wald F 10.70
/// on 17 df against the exact 5.66 on 9 on sleepstudy).
pub(super) fn notes(detail: &CovarianceDetail, ddf: DdfMethod) -> Vec<Note> {
    let mut notes = Vec::new();
    if detail.structure == CovarianceStructure::Unstructured && ddf == DdfMethod::Satterthwaite {
        notes.push(Note::other(
            "With an unstructured covariance, Satterthwaite's degrees of freedom are too generous when subjects are few, so its tests find differences too easily; use the default `ddf: kenward-roger`, which reproduces the exact multivariate test on complete data.".to_string(),
        ));
    }
    if detail.structure == CovarianceStructure::Autoregressive && detail.times.is_none() {
        notes.push(Note::other(format!(
            "The levels of `{}` are not numbers, so the autoregressive structure takes them as equally spaced in the order of the levels; name the levels by their times (for example 0, 7, 14) if they are not.",
            detail.factor
        )));
    }
    notes
}
