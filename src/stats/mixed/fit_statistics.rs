//! What a REML fit reports about itself, whichever covariance it fitted
//! (random terms or a structure within subjects).

use super::optimiser::Optimum;

#[derive(Debug, Clone, PartialEq)]
pub struct FitStatistics {
    /// d = −2ℓ_R in the coding-invariant form (with −ln|X'X|; spec 2.2).
    pub criterion: f64,
    /// d as most programs print it (without −ln|X'X|; depends on the coding).
    pub criterion_as_fitted: f64,
    /// d + 2k with k covariance parameters (invariant d).
    pub aic: f64,
    /// d + k·ln(N − p) (invariant d).
    pub bic: f64,
    pub iterations: usize,
    /// maxᵢ |∂d/∂ψᵢ|·|ψᵢ| over the free parameters at the estimate.
    pub max_scaled_gradient: f64,
    /// Always true: a fit that does not converge is an `Err`.
    pub converged: bool,
    pub observations: usize,
    pub fixed_columns: usize,
}

impl FitStatistics {
    /// From the optimum of a model with `parameters` covariance parameters,
    /// `n` observations and `p` fixed columns; `ln_det_xtx` = ln|X'X|.
    pub(super) fn new(
        opt: &Optimum,
        parameters: usize,
        (n, p): (usize, usize),
        ln_det_xtx: f64,
    ) -> Self {
        let k = parameters as f64;
        FitStatistics {
            criterion: opt.criterion,
            criterion_as_fitted: opt.criterion + ln_det_xtx,
            aic: opt.criterion + 2.0 * k,
            bic: opt.criterion + k * ((n - p) as f64).ln(),
            iterations: opt.iterations,
            max_scaled_gradient: opt.max_scaled_gradient,
            converged: true,
            observations: n,
            fixed_columns: p,
        }
    }
}
