//! A REML fit of a covariance structure over a repeated factor and what it
//! reports (mixed-models spec 2.6, 3, 7.4, 7.5): the same quantities as
//! [`super::MixedFit`], with the structure's parameters in place of
//! variance components. A parallel type, because `MixedFit` carries the
//! variance-component model its profile intervals and predictions re-use.
//!
//! **Kenward-Roger for AR(1).** V is not linear in ρ, so KR's Φ_A has the
//! second-derivative terms Rᵢⱼ = X'V⁻¹VᵢⱼV⁻¹X (spec 3.3); they depend on
//! the parameterisation, here (σ², ρ). `RepeatedFit::fixed` includes
//! them (the 1997 formula as printed); `RepeatedFit::first_order` leaves
//! them out, the version spec 3.3
//! recommends printing as "Kenward-Roger (first-order, without
//! second-derivative terms)". The df m and the scale λ do not involve Rᵢⱼ.
//! For CS and UN the two coincide.

use nalgebra::DMatrix;

use super::ddf::{self, DfInputs};
use super::design::FixedDesign;
use super::error::MixedError;
use super::fit::{MAX_FIXED_COLUMNS, check_identified, rows_of};
use super::fit_statistics::FitStatistics;
use super::inference::FixedInference;
use super::model::{CovarianceModel, Derivatives};
use super::optimiser::{self, Optimum};
use super::repeated_layout::{RepeatedLayout, check_estimable};
use super::structure::{Pattern, Structure};
use super::subjects::SubjectBlocks;

/// Most entries of the Kenward-Roger matrices Qᵢⱼ (parameters² × columns²)
/// kept at once: about 80 MB.
pub const MAX_KR_ENTRIES: usize = 10_000_000;

/// One covariance parameter at its estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct CovarianceParameter {
    pub name: String,
    pub value: f64,
}

/// A converged REML fit of y = Xβ + e with a covariance structure within
/// subjects. Fixed-effect quantities are over the kept columns.
#[derive(Debug, Clone)]
pub struct RepeatedFit {
    pub structure: Structure,
    /// ψ̂ in the structure's order (see [`Structure`]).
    pub parameters: Vec<CovarianceParameter>,
    /// Σ̂ over all occasions, row-major.
    pub covariance: Vec<Vec<f64>>,
    /// β̂ and the tests and contrasts on it (KR with Rᵢⱼ).
    pub fixed: FixedInference,
    /// The same with KR's Φ_A without Rᵢⱼ (equal to `fixed` unless
    /// `second_derivative_terms`); only its Kenward-Roger tests differ.
    pub first_order: FixedInference,
    /// Φ = (X'V̂⁻¹X)⁻¹, row-major.
    pub phi: Vec<Vec<f64>>,
    /// Kenward-Roger's Φ_A = Φ + 2Λ (with Rᵢⱼ for AR(1)).
    pub phi_adjusted: Vec<Vec<f64>>,
    /// The criterion at the estimate, AIC, BIC and how it was reached.
    pub statistics: FitStatistics,
    /// d + q·ln(number of subjects), the other convention (spec 7.4).
    pub bic_subjects: f64,
    /// Subjects with at least one observation.
    pub subjects: usize,
    /// True when Kenward-Roger's Rᵢⱼ are not zero (AR(1)).
    pub second_derivative_terms: bool,
}

/// Fits the structure by REML. `y` is already decimal-shifted by the
/// caller; `layout` gives each observation's subject and occasion.
pub fn fit_repeated(
    y: &[f64],
    fixed: &FixedDesign,
    layout: &RepeatedLayout,
    structure: Structure,
) -> Result<RepeatedFit, MixedError> {
    let model = build(y, fixed, layout, structure)?;
    let opt = best_optimum(&model)?;
    let np = model.n_params();
    let all: Vec<usize> = (0..np).collect();
    check_identified(&opt.derivatives, &all)?;
    let (df_inputs, df_inputs_first_order, beta) = df_inputs(&model, &opt.psi, &opt.derivatives)?;
    let (n, p) = model.sizes();
    let q = np as f64;
    let sigma = model.pattern.sigma(&opt.psi);
    Ok(RepeatedFit {
        structure,
        parameters: (0..np)
            .map(|i| CovarianceParameter {
                name: model.param_name(i),
                value: opt.psi[i],
            })
            .collect(),
        covariance: rows_of(&sigma),
        phi: rows_of(&df_inputs.phi),
        phi_adjusted: rows_of(&df_inputs.phi_adjusted),
        statistics: FitStatistics::new(&opt, np, (n, p), model.ln_det_xtx()),
        bic_subjects: opt.criterion + q * (model.subjects() as f64).ln(),
        subjects: model.subjects(),
        second_derivative_terms: !model.pattern.linear(),
        fixed: FixedInference {
            beta: beta.clone(),
            df_inputs,
        },
        first_order: FixedInference {
            beta,
            df_inputs: df_inputs_first_order,
        },
    })
}

/// Checks the input and builds the model.
fn build(
    y: &[f64],
    fixed: &FixedDesign,
    layout: &RepeatedLayout,
    structure: Structure,
) -> Result<SubjectBlocks, MixedError> {
    if fixed.rows() != y.len() {
        return Err(MixedError::LengthMismatch {
            what: "the fixed-effects design".into(),
            expected: y.len(),
            found: fixed.rows(),
        });
    }
    if let Some(row) = y.iter().position(|v| !v.is_finite()) {
        return Err(MixedError::NonFiniteResponse { row });
    }
    let p = fixed.rank();
    if p > MAX_FIXED_COLUMNS {
        return Err(MixedError::TooLarge {
            what: "fixed-effect columns",
            size: p,
            limit: MAX_FIXED_COLUMNS,
        });
    }
    let subjects = layout.by_subject(y.len())?;
    let times = layout.checked_times()?;
    let k = structure.parameter_count(layout.occasions);
    if k * k * p * p > MAX_KR_ENTRIES {
        return Err(MixedError::TooLarge {
            what: "Kenward-Roger matrix entries (parameters² × columns²)",
            size: k * k * p * p,
            limit: MAX_KR_ENTRIES,
        });
    }
    if y.len() <= p {
        return Err(MixedError::NoResidualDf {
            observations: y.len(),
            fixed_columns: p,
        });
    }
    check_estimable(structure, layout.occasions, &subjects)?;
    SubjectBlocks::new(y, fixed, &subjects, Pattern::new(structure, &times))
}

/// The optimum from each deterministic start (two for AR(1), spec 2.3.7),
/// the lowest criterion kept; the first start wins ties.
fn best_optimum(model: &SubjectBlocks) -> Result<Optimum, MixedError> {
    let held = vec![false; model.n_params()];
    let mut best: Option<Result<Optimum, MixedError>> = None;
    for start in model.starts()? {
        let found = optimiser::minimise(model, start, &held);
        best = Some(match (best, found) {
            (None, f) => f,
            (Some(Ok(b)), Ok(f)) if f.criterion < b.criterion => Ok(f),
            (Some(Ok(b)), _) => Ok(b),
            (Some(Err(_)), f) => f,
        });
    }
    best.unwrap_or(Err(MixedError::Singular { what: "the start" }))
}

/// The df inputs with KR's Φ_A including Rᵢⱼ and without, and β̂.
fn df_inputs(
    model: &SubjectBlocks,
    psi: &[f64],
    der: &Derivatives,
) -> Result<(DfInputs, DfInputs, Vec<f64>), MixedError> {
    let np = psi.len();
    let free: Vec<usize> = (0..np).collect();
    let (fe, r) = model.kr_matrices(psi, &free)?;
    let invert = |m: &DMatrix<f64>| {
        (m * 0.5)
            .cholesky()
            .map(|c| c.inverse())
            .ok_or(MixedError::NotIdentified {
                smallest: 0.0,
                largest: 0.0,
            })
    };
    // Information of ℓ_R = half the second derivatives of d.
    let cov_expected = invert(&der.expected)?;
    let cov_observed = invert(&der.hessian)?;
    let q_minus_r: Vec<Vec<DMatrix<f64>>> =
        fe.q.iter()
            .zip(&r)
            .map(|(qi, ri)| qi.iter().zip(ri).map(|(q, r)| q - r * 0.25).collect())
            .collect();
    let with_r = ddf::adjusted_phi(&fe.phi, &fe.p, &q_minus_r, &cov_expected);
    let first_order = ddf::adjusted_phi(&fe.phi, &fe.p, &fe.q, &cov_expected);
    let make = |phi_adjusted| DfInputs {
        phi: fe.phi.clone(),
        phi_adjusted,
        p: fe.p.clone(),
        cov_expected: cov_expected.clone(),
        cov_observed: cov_observed.clone(),
    };
    Ok((make(with_r), make(first_order), fe.beta.clone()))
}

#[cfg(test)]
#[path = "repeated_fit_tests.rs"]
mod tests;
