//! What a repeated-measures block with `covariance` adds: the structure of
//! each subject's errors over the repeated factor as fitted by REML, its
//! parameters and fitted covariance, and, when asked, every structure's
//! information criteria with the same fixed effects (mixed-models spec 7.4).

use crate::doc::block_covariance::CovarianceStructure;

/// One covariance parameter at its estimate.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CovarianceParameter {
    /// Short name for the results file and prose keys: `covariance`,
    /// `residual`, `variance`, `correlation`, `variance[a]`,
    /// `covariance[a,b]` (a, b occasions' labels).
    pub name: String,
    /// The name as the report prints it.
    pub label: String,
    pub value: f64,
    /// The correlation the parameter implies, for covariances (and the
    /// autoregressive correlation itself); NaN otherwise.
    pub correlation: f64,
}

/// How well one structure fits (REML, same fixed effects), or why it could
/// not be fitted.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct StructureFit {
    pub structure: CovarianceStructure,
    /// Number of covariance parameters q.
    pub parameters: usize,
    /// ℓ_R in the coding-invariant form; NaN when not fitted.
    pub log_likelihood: f64,
    /// −2ℓ_R + 2q.
    pub aic: f64,
    /// −2ℓ_R + q·ln(N − p).
    pub bic: f64,
    /// −2ℓ_R + q·ln(subjects), the other convention.
    pub bic_subjects: f64,
    /// Why the structure could not be fitted, in plain words.
    pub failed: Option<String>,
}

/// The structure the block's tests use.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CovarianceDetail {
    pub structure: CovarianceStructure,
    /// The repeated factor (within-subject factors joined with `:`).
    pub factor: String,
    /// The occasions' labels, in the fitted covariance's order.
    pub occasions: Vec<String>,
    /// The times autoregression is over: the occasions' labels as numbers,
    /// or `None` for equally spaced occasions in level order.
    pub times: Option<Vec<f64>>,
    pub parameters: Vec<CovarianceParameter>,
    /// Σ̂ over the occasions, row-major.
    pub covariance: Vec<Vec<f64>>,
    /// This structure's fit statistics.
    pub fit: StructureFit,
    /// Kenward-Roger was computed without its second-derivative terms (the
    /// autoregressive structure is not linear in its parameters).
    pub first_order: bool,
    /// Every structure, when `covariance` asks for the comparison.
    pub compared: Vec<StructureFit>,
}
