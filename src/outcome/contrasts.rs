//! Planned contrasts among one factor's levels (linear-extensions
//! specification B.1, B.2): each estimate with its SE, t, df, p and
//! interval, whether the set is orthogonal, and the joint test.

use super::covariates::FTest;
use crate::doc::block_contrasts::ContrastAdjust;

/// One contrast: Σ wᵢ·meanᵢ over the factor's levels.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PlannedContrast {
    pub name: String,
    /// (level, weight) as the document wrote them.
    pub weights: Vec<(String, f64)>,
    pub estimate: f64,
    pub se: f64,
    pub df: f64,
    pub t: f64,
    /// Two-sided, unadjusted.
    pub p: f64,
    /// Adjusted for the set (`None` when the set is not adjusted).
    pub p_adj: Option<f64>,
    /// The interval at 1 − α (simultaneous when adjusted).
    pub lower: f64,
    pub upper: f64,
    /// The positive weights sum to 1: the estimate is a difference of two
    /// averages in the response's units.
    pub data_units: bool,
}

/// The contrasts of one block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ContrastDetail {
    /// The factor whose levels (marginal means) the contrasts weigh.
    pub factor: String,
    pub adjust: ContrastAdjust,
    pub contrasts: Vec<PlannedContrast>,
    /// Every pair of contrasts is uncorrelated under the model (with
    /// unequal n, Σ cᵢdᵢ/nᵢ = 0), so their sums of squares add up.
    pub orthogonal: bool,
    /// All contrasts at once (None for one contrast, or when they are
    /// linearly dependent).
    pub joint: Option<FTest>,
    /// The critical value the intervals use (t, or Scheffé's √((k−1)F));
    /// NaN when the contrasts have different df (each interval then uses
    /// its own).
    pub critical: f64,
    /// With random terms: each contrast's SE and df from the mixed model by
    /// this method; `None` for the pooled error of a fixed-effects model.
    pub own_df: Option<crate::doc::block::DdfMethod>,
}
