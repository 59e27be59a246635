//! A REML fit of a variance-component model and what it reports.

use nalgebra::DMatrix;

use super::components::VarianceComponents;
use super::crossprod::CrossProducts;
use super::ddf::{self, DfInputs};
use super::design::{FixedDesign, RandomTerm};
use super::error::MixedError;
use super::fit_statistics::FitStatistics;
use super::inference::FixedInference;
use super::model::CovarianceModel;
use super::optimiser;

/// Most random-effect levels q (the cost grows as q² in the term with the
/// most levels and as q³ in the others).
pub const MAX_RANDOM_LEVELS: usize = 1500;
/// Most kept fixed-effect columns p.
pub const MAX_FIXED_COLUMNS: usize = 500;
/// A free parameter's information eigenvalue below this fraction of the
/// largest counts as a flat direction (spec 2.3.5).
const FLAT: f64 = 1e-8;

/// One variance component (random terms in order, the residual last).
#[derive(Debug, Clone, PartialEq)]
pub struct VarianceComponent {
    /// The random term's name, or "residual".
    pub name: String,
    pub variance: f64,
    /// Number of levels (for the residual, the number of observations).
    pub levels: usize,
    /// Estimated at exactly 0 (θ on its bound); left out of ψ for the df.
    pub on_boundary: bool,
}

/// A converged REML fit. Fixed-effect quantities are over the kept columns
/// of the [`FixedDesign`] (aliased columns dropped).
#[derive(Debug, Clone)]
pub struct MixedFit {
    pub components: Vec<VarianceComponent>,
    /// β̂ and the tests and contrasts on it.
    pub fixed: FixedInference,
    /// Φ = (X'V̂⁻¹X)⁻¹, row-major.
    pub phi: Vec<Vec<f64>>,
    /// Kenward-Roger's Φ_A = Φ + 2Λ.
    pub phi_adjusted: Vec<Vec<f64>>,
    /// The criterion at the estimate, AIC, BIC and how it was reached.
    pub statistics: FitStatistics,
    pub(crate) model: VarianceComponents,
    pub(crate) psi: Vec<f64>,
}

/// Fits y = Xβ + Σⱼ Zⱼuⱼ + e by REML. `y` is already decimal-shifted by the
/// caller; each random term gives one level per observation.
pub fn fit(y: &[f64], fixed: &FixedDesign, random: &[RandomTerm]) -> Result<MixedFit, MixedError> {
    validate(y, fixed, random)?;
    let cp = CrossProducts::new(y, fixed, random)?;
    let names = random.iter().map(|t| t.name.clone()).collect();
    let model = VarianceComponents::new(cp, names);
    let np = model.n_params();
    let opt = optimiser::minimise(&model, model.start()?, &vec![false; np])?;
    let free = opt.free.clone();
    check_identified(&opt.derivatives, &free)?;
    // Parameters at 0 are known for the df (spec 2.5).
    let df_free: Vec<usize> = (0..np)
        .filter(|&i| opt.psi[i] > 0.0 || !model.may_be_zero(i))
        .collect();
    let (df_inputs, beta) = df_inputs(&model, &opt.psi, &opt.derivatives, &df_free)?;
    let (n, p) = model.sizes();
    let mut components: Vec<VarianceComponent> = random
        .iter()
        .enumerate()
        .map(|(j, t)| VarianceComponent {
            name: t.name.clone(),
            variance: opt.psi[j],
            levels: t.levels,
            on_boundary: opt.psi[j] == 0.0,
        })
        .collect();
    components.push(VarianceComponent {
        name: "residual".into(),
        variance: opt.psi[np - 1],
        levels: n,
        on_boundary: false,
    });
    Ok(MixedFit {
        components,
        phi: rows_of(&df_inputs.phi),
        phi_adjusted: rows_of(&df_inputs.phi_adjusted),
        statistics: FitStatistics::new(&opt, np, (n, p), model.ln_det_xtx()),
        model,
        psi: opt.psi,
        fixed: FixedInference { beta, df_inputs },
    })
}

fn validate(y: &[f64], fixed: &FixedDesign, random: &[RandomTerm]) -> Result<(), MixedError> {
    if let Some(row) = y.iter().position(|v| !v.is_finite()) {
        return Err(MixedError::NonFiniteResponse { row });
    }
    let q: usize = random.iter().map(|t| t.levels).sum();
    if q > MAX_RANDOM_LEVELS {
        return Err(MixedError::TooLarge {
            what: "random-effect levels",
            size: q,
            limit: MAX_RANDOM_LEVELS,
        });
    }
    if fixed.rank() > MAX_FIXED_COLUMNS {
        return Err(MixedError::TooLarge {
            what: "fixed-effect columns",
            size: fixed.rank(),
            limit: MAX_FIXED_COLUMNS,
        });
    }
    if y.len() <= fixed.rank() {
        return Err(MixedError::NoResidualDf {
            observations: y.len(),
            fixed_columns: fixed.rank(),
        });
    }
    for t in random {
        let mut count = vec![0usize; t.levels];
        for &l in &t.level_of {
            if let Some(c) = count.get_mut(l) {
                *c += 1;
            }
        }
        if count.iter().all(|c| *c <= 1) {
            return Err(MixedError::DuplicatesResidual {
                term: t.name.clone(),
            });
        }
    }
    for (i, first) in random.iter().enumerate() {
        if let Some(second) = random[i + 1..].iter().find(|t| same_grouping(first, t)) {
            return Err(MixedError::SameGrouping {
                first: first.name.clone(),
                second: second.name.clone(),
            });
        }
    }
    Ok(())
}

/// Whether two random terms split the observations into the same groups:
/// the levels of one map one-to-one onto the levels of the other.
fn same_grouping(a: &RandomTerm, b: &RandomTerm) -> bool {
    let mut a_to_b: Vec<Option<usize>> = vec![None; a.levels];
    let mut b_to_a: Vec<Option<usize>> = vec![None; b.levels];
    a.level_of.iter().zip(&b.level_of).all(|(&la, &lb)| {
        match (a_to_b.get_mut(la), b_to_a.get_mut(lb)) {
            (Some(forward), Some(backward)) => {
                *forward.get_or_insert(lb) == lb && *backward.get_or_insert(la) == la
            }
            _ => false,
        }
    })
}

/// The observed information on the free parameters must be positive
/// definite (spec 2.3.5). It is first scaled by the expected information's
/// diagonal, so the test does not depend on the units of the parameters
/// (variances of very different sizes are not a flat direction).
pub(super) fn check_identified(
    der: &super::model::Derivatives,
    free: &[usize],
) -> Result<(), MixedError> {
    if free.is_empty() {
        return Ok(());
    }
    let scale: Vec<f64> = free
        .iter()
        .map(|&i| der.expected[(i, i)].max(f64::MIN_POSITIVE).sqrt())
        .collect();
    let h = DMatrix::from_fn(free.len(), free.len(), |r, c| {
        der.hessian[(free[r], free[c])] / (scale[r] * scale[c])
    });
    let eig = h.symmetric_eigen().eigenvalues;
    let (smallest, largest) = (eig.min(), eig.max());
    if !(largest > 0.0 && smallest > FLAT * largest) {
        return Err(MixedError::NotIdentified { smallest, largest });
    }
    Ok(())
}

/// Φ, Φ_A, the Pᵢ and both covariances of ψ̂ over the free parameters,
/// and β̂.
fn df_inputs(
    model: &VarianceComponents,
    psi: &[f64],
    der: &super::model::Derivatives,
    free: &[usize],
) -> Result<(DfInputs, Vec<f64>), MixedError> {
    let fe = model.fixed_effects(psi, free)?;
    let pick = |m: &DMatrix<f64>| {
        DMatrix::from_fn(free.len(), free.len(), |r, c| m[(free[r], free[c])] * 0.5)
    };
    let invert = |m: DMatrix<f64>| {
        m.cholesky()
            .map(|c| c.inverse())
            .ok_or(MixedError::NotIdentified {
                smallest: 0.0,
                largest: 0.0,
            })
    };
    // Information of ℓ_R = half the second derivatives of d.
    let cov_expected = invert(pick(&der.expected))?;
    let cov_observed = invert(pick(&der.hessian))?;
    let phi_adjusted = ddf::adjusted_phi(&fe.phi, &fe.p, &fe.q, &cov_expected);
    Ok((
        DfInputs {
            phi: fe.phi,
            phi_adjusted,
            p: fe.p,
            cov_expected,
            cov_observed,
        },
        fe.beta,
    ))
}

pub(super) fn rows_of(m: &DMatrix<f64>) -> Vec<Vec<f64>> {
    (0..m.nrows())
        .map(|r| m.row(r).iter().copied().collect())
        .collect()
}

pub(super) fn matrix_of(rows: &[Vec<f64>], width: usize) -> Result<DMatrix<f64>, MixedError> {
    if rows.is_empty() {
        return Err(MixedError::BadHypothesis {
            reason: "no rows".into(),
        });
    }
    if let Some(r) = rows.iter().find(|r| r.len() != width) {
        return Err(MixedError::BadHypothesis {
            reason: format!("a row has {} entries where {width} were expected", r.len()),
        });
    }
    Ok(DMatrix::from_fn(rows.len(), width, |r, c| rows[r][c]))
}

#[cfg(test)]
#[path = "fit_tests.rs"]
mod tests;
