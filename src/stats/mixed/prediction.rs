//! Predicted random effects (BLUPs) and conditional residuals at the REML
//! estimate, standardised so that the usual checks (normality, outliers)
//! can read them.
//!
//! û = GZ'V⁻¹(y − Xβ̂) (Henderson 1975; Robinson 1991, *Statist. Sci.*
//! 6(1)), and the conditional residual e = y − Xβ̂ − Zû. With V = σ²H and
//! H⁻¹ = I − ZΛA⁻¹ΛZ', A = ΛZ'ZΛ + I (components.rs), û = ΛA⁻¹ΛZ'r with
//! r = y − Xβ̂, so no N×N matrix is formed.
//!
//! Scales, with the variances held at their estimates: var(û) = GZ'ΠZG,
//! so ûₖ/(σ²ⱼ·√(Z'ΠZ)ₖₖ) is standard normal under the model; and e = σ²Πy
//! (because I − ZGZ'V⁻¹ = σ²V⁻¹), so var(eᵢ) = σ⁴Πᵢᵢ and eᵢ/(σ²·√Πᵢᵢ) is
//! the studentized conditional residual. (Z'V⁻¹Z)ₖₖ uses
//! (Σₗ A⁻¹ₖₗλₗ(Z'Z)ₗₖ)/(λₖσ²), an identity from A⁻¹(A − I) = I − A⁻¹ that
//! avoids subtracting nearly equal numbers when λₖ is small.

use nalgebra::DMatrix;

use super::design::{FixedDesign, RandomTerm};
use super::error::MixedError;
use super::fit::MixedFit;

/// One random term's predicted effects, level by level.
#[derive(Debug, Clone, PartialEq)]
pub struct PredictedTerm {
    pub name: String,
    /// û for every level (0 for a term whose variance is estimated at 0).
    pub effects: Vec<f64>,
    /// ûₖ divided by its standard deviation under the model; NaN where that
    /// is 0 (a variance at 0, or a level without observations).
    pub standardized: Vec<f64>,
}

/// The predictions of a fit, in the units of the response it was given.
#[derive(Debug, Clone, PartialEq)]
pub struct Predictions {
    pub terms: Vec<PredictedTerm>,
    /// Xβ̂ + Zû per observation.
    pub fitted: Vec<f64>,
    /// y − Xβ̂ − Zû per observation.
    pub residuals: Vec<f64>,
    /// Residual over its standard deviation under the model; NaN where the
    /// fit leaves the observation no freedom (Πᵢᵢ ≤ 0).
    pub studentized: Vec<f64>,
}

impl MixedFit {
    /// The predicted random effects and conditional residuals. `y`,
    /// `fixed` and `random` must be what the fit was given.
    pub fn predictions(
        &self,
        y: &[f64],
        fixed: &FixedDesign,
        random: &[RandomTerm],
    ) -> Result<Predictions, MixedError> {
        let cp = &self.model.cp;
        if y.len() != cp.n || fixed.rank() != cp.p || random.len() != cp.blocks.len() {
            return Err(MixedError::LengthMismatch {
                what: "the data given for predictions".into(),
                expected: cp.n,
                found: y.len(),
            });
        }
        let scale = Scale::new(self)?;
        let (q, p) = (cp.q, cp.p);
        let zz = cp.ww.view((0, 0), (q, q));
        let zx = cp.ww.view((0, q), (q, p)).clone_owned();
        // β in the centred coordinates the cross-products were formed in.
        let mut beta_c = DMatrix::from_column_slice(p, 1, &self.fixed.beta);
        if p > 0 {
            beta_c[0] -= cp.y_mean;
        }
        let zr = cp.ww.view((0, cp.y_index()), (q, 1)) - &zx * &beta_c;
        let u = scale.lambda_a_inv_lambda(&zr);
        // K = A⁻¹ΛZ'X, for V⁻¹X = (X − ZΛK)/σ².
        let lz_x = DMatrix::from_fn(q, p, |r, c| scale.lambda[r] * zx[(r, c)]);
        let k = &scale.a_inv * &lz_x;
        let phi = DMatrix::from_fn(p, p, |r, c| self.phi[r][c]);
        let zvx =
            (&zx - zz * DMatrix::from_fn(q, p, |r, c| scale.lambda[r] * k[(r, c)])) / scale.sigma2;
        let terms = random
            .iter()
            .enumerate()
            .map(|(j, t)| {
                let block = cp.blocks[j].clone();
                let variance = self.psi[j];
                let standardized = block
                    .clone()
                    .map(|kk| {
                        let s = scale.zvz_diagonal(zz, kk)
                            - quadratic(&phi, &zvx.row(kk).clone_owned());
                        let sd = variance * s.max(0.0).sqrt();
                        if sd > 0.0 { u[kk] / sd } else { f64::NAN }
                    })
                    .collect();
                PredictedTerm {
                    name: t.name.clone(),
                    effects: block.map(|kk| u[kk]).collect(),
                    standardized,
                }
            })
            .collect();
        let rows = RowWise {
            scale: &scale,
            fixed,
            random,
            blocks: &cp.blocks,
            beta: &self.fixed.beta,
            u: &u,
            k: &k,
            phi: &phi,
        };
        let (fitted, residuals, studentized) = rows.residuals(y);
        Ok(Predictions {
            terms,
            fitted,
            residuals,
            studentized,
        })
    }
}

/// σ², Λ and A⁻¹ at the estimate.
struct Scale {
    sigma2: f64,
    lambda: Vec<f64>,
    a_inv: DMatrix<f64>,
}

impl Scale {
    fn new(fit: &MixedFit) -> Result<Self, MixedError> {
        let cp = &fit.model.cp;
        let j = cp.blocks.len();
        let sigma2 = fit.psi[j];
        let mut lambda = vec![0.0; cp.q];
        for (t, b) in cp.blocks.iter().enumerate() {
            for k in b.clone() {
                lambda[k] = (fit.psi[t] / sigma2).sqrt();
            }
        }
        // The partitioned inverse of the fit's elimination: a dense
        // inverse of A took a quarter of a 20,000-row build.
        let a_inv = fit.model.random_inverse(&fit.psi)?;
        Ok(Self {
            sigma2,
            lambda,
            a_inv,
        })
    }

    /// ΛA⁻¹Λv.
    fn lambda_a_inv_lambda(&self, v: &DMatrix<f64>) -> Vec<f64> {
        let lv = DMatrix::from_fn(v.nrows(), 1, |r, _| self.lambda[r] * v[(r, 0)]);
        let w = &self.a_inv * lv;
        (0..v.nrows()).map(|r| self.lambda[r] * w[(r, 0)]).collect()
    }

    /// (Z'V⁻¹Z)ₖₖ by the identity in the module comment; Z'Z/σ² at λₖ = 0.
    fn zvz_diagonal(&self, zz: nalgebra::DMatrixView<'_, f64>, k: usize) -> f64 {
        if self.lambda[k] == 0.0 {
            return zz[(k, k)] / self.sigma2;
        }
        let c: f64 = (0..zz.nrows())
            .map(|l| self.a_inv[(k, l)] * self.lambda[l] * zz[(l, k)])
            .sum();
        c / (self.lambda[k] * self.sigma2)
    }
}

/// v'Φv for a row vector v.
fn quadratic(phi: &DMatrix<f64>, v: &nalgebra::RowDVector<f64>) -> f64 {
    (v * phi * v.transpose())[(0, 0)]
}

/// What the per-observation quantities need.
struct RowWise<'a> {
    scale: &'a Scale,
    fixed: &'a FixedDesign,
    random: &'a [RandomTerm],
    blocks: &'a [std::ops::Range<usize>],
    beta: &'a [f64],
    u: &'a [f64],
    k: &'a DMatrix<f64>,
    phi: &'a DMatrix<f64>,
}

impl RowWise<'_> {
    /// Fitted values, residuals and studentized residuals, row by row:
    /// Πᵢᵢ = (V⁻¹)ᵢᵢ − aᵢ'Φaᵢ with (V⁻¹)ᵢᵢ = (1 − zᵢ'ΛA⁻¹Λzᵢ)/σ² and
    /// aᵢ = (xᵢ − Σⱼ λ·K[ℓⱼ])/σ², where ℓⱼ is the row's level of term j.
    fn residuals(&self, y: &[f64]) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
        let (s, p) = (self.scale, self.beta.len());
        let n = y.len();
        let (mut fitted, mut residuals, mut studentized) = (
            Vec::with_capacity(n),
            Vec::with_capacity(n),
            Vec::with_capacity(n),
        );
        let mut columns = vec![0usize; self.random.len()];
        for i in 0..n {
            for (j, t) in self.random.iter().enumerate() {
                columns[j] = self.blocks[j].start + t.level_of[i];
            }
            let x: Vec<f64> = self.fixed.columns.iter().map(|c| c[i]).collect();
            let f = x.iter().zip(self.beta).map(|(a, b)| a * b).sum::<f64>()
                + columns.iter().map(|&c| self.u[c]).sum::<f64>();
            let e = y[i] - f;
            let mut zaz = 0.0;
            for &a in &columns {
                for &b in &columns {
                    zaz += s.lambda[a] * s.a_inv[(a, b)] * s.lambda[b];
                }
            }
            let v_ii = (1.0 - zaz) / s.sigma2;
            let a = nalgebra::RowDVector::from_fn(p, |_, c| {
                (x[c]
                    - columns
                        .iter()
                        .map(|&l| s.lambda[l] * self.k[(l, c)])
                        .sum::<f64>())
                    / s.sigma2
            });
            let pi_ii = v_ii - quadratic(self.phi, &a);
            fitted.push(f);
            residuals.push(e);
            studentized.push(if pi_ii > 0.0 {
                e / (s.sigma2 * pi_ii.sqrt())
            } else {
                f64::NAN
            });
        }
        (fitted, residuals, studentized)
    }
}

#[cfg(test)]
#[path = "prediction_tests.rs"]
mod tests;
