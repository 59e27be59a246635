//! What the optimiser, the df methods and the profile intervals need from a
//! covariance model V(ψ). Variance components implement it now; R-side
//! structures per subject (compound symmetry, AR(1), unstructured) can be
//! added as further implementations without touching those three.

use nalgebra::DMatrix;

use super::error::MixedError;

/// The REML criterion and its derivatives at one ψ, all on the scale of
/// d = −2ℓ_R (mixed-models spec 2.2, 2.4).
#[derive(Debug, Clone)]
pub(crate) struct Derivatives {
    /// ∂d/∂ψᵢ = tr(ΠVᵢ) − y'ΠVᵢΠy.
    pub gradient: Vec<f64>,
    /// E[∂²d/∂ψᵢ∂ψⱼ] = tr(ΠVᵢΠVⱼ) (twice the expected information).
    pub expected: DMatrix<f64>,
    /// ∂²d/∂ψᵢ∂ψⱼ (twice the observed information).
    pub hessian: DMatrix<f64>,
}

/// The fixed effects at one ψ with the matrices Kenward-Roger and
/// Satterthwaite need (mixed-models spec 3.2, 3.3), over the kept columns.
#[derive(Debug, Clone)]
pub(crate) struct FixedEffects {
    pub beta: Vec<f64>,
    /// Φ = (X'V⁻¹X)⁻¹.
    pub phi: DMatrix<f64>,
    /// Pᵢ = −X'V⁻¹VᵢV⁻¹X.
    pub p: Vec<DMatrix<f64>>,
    /// Qᵢⱼ = X'V⁻¹VᵢV⁻¹VⱼV⁻¹X.
    pub q: Vec<Vec<DMatrix<f64>>>,
}

/// A covariance model V(ψ) with parameters on the variance-covariance scale
/// (where V is linear, so the second derivatives Rᵢⱼ of KR vanish).
pub(crate) trait CovarianceModel {
    /// Number of parameters ψ.
    fn n_params(&self) -> usize;
    /// The name of parameter i, for messages.
    fn param_name(&self, i: usize) -> String;
    /// True when parameter i may reach 0 exactly (a variance component);
    /// false for a parameter that must stay strictly positive.
    fn may_be_zero(&self, i: usize) -> bool;
    /// True when parameter i may take either sign (a covariance, a
    /// correlation): the optimiser then neither projects nor shortens the
    /// step for its sign, and `criterion` alone decides admissibility.
    fn signed(&self, _i: usize) -> bool {
        false
    }
    /// d(ψ) in the coding-invariant form; `Err` when ψ is not admissible.
    fn criterion(&self, psi: &[f64]) -> Result<f64, MixedError>;
    /// The point with the overall scale re-optimised for the same relative
    /// parameters (profiled σ²), which never has a larger criterion.
    fn profile_scale(&self, psi: &[f64]) -> Result<Vec<f64>, MixedError>;
    /// A deterministic starting point.
    fn start(&self) -> Result<Vec<f64>, MixedError>;
    /// Gradient, expected and observed second derivatives of d.
    fn derivatives(&self, psi: &[f64]) -> Result<Derivatives, MixedError>;
    /// β̂, Φ and the Pᵢ, Qᵢⱼ over the parameters listed in `free`.
    fn fixed_effects(&self, psi: &[f64], free: &[usize]) -> Result<FixedEffects, MixedError>;
    /// ln|X'X|, the difference between the criterion as fitted and the
    /// invariant form.
    fn ln_det_xtx(&self) -> f64;
    /// Number of observations and of fixed columns.
    fn sizes(&self) -> (usize, usize);
}
