//! The checks of a model's assumptions, as computed.

use crate::stats::assumptions::{ChiSquareTest, FTest, ShapiroWilk, ShapiroWilkSkip};

/// Assumption checks of one block (computed always; shown unless `checks: none`).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Checks {
    pub shown: bool,
    pub brown_forsythe: Option<FTest>,
    pub levene: Option<FTest>,
    pub bartlett: Option<ChiSquareTest>,
    pub shapiro_wilk: Result<ShapiroWilk, ShapiroWilkSkip>,
    pub skewness: f64,
    pub excess_kurtosis: f64,
    /// Largest over smallest level SD.
    pub sd_ratio: f64,
    pub balanced: bool,
    /// How many observations are beyond the outlier threshold in all.
    pub outlier_count: usize,
    /// The most extreme of them (at most `OUTLIERS_KEPT`), in data order.
    pub outliers: Vec<OutlierRow>,
    /// Only summaries were given, so the raw-data checks could not run.
    pub from_summary: bool,
    /// The summaries-only set was asked for (`checks: summary`).
    #[serde(default)]
    pub by_request: bool,
    /// Which residuals were checked, and how flagged ones were scaled.
    #[serde(default)]
    pub residuals: ResidualKind,
}

/// The residuals a model's checks read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
pub enum ResidualKind {
    /// Observation less fitted value; outliers by the externally
    /// studentized residual.
    #[default]
    Ordinary,
    /// Observation less the fixed effects and the predicted unit effects (a
    /// model with random terms); outliers by the studentized conditional
    /// residual.
    Conditional,
    /// Each subject's marginal residuals premultiplied by the inverse
    /// Cholesky factor of its fitted covariance (a covariance structure over
    /// a repeated factor): uncorrelated with unit variance under the model;
    /// outliers by their size.
    Normalised,
}

impl ResidualKind {
    /// The name in the results file; none for ordinary residuals.
    pub fn key(self) -> Option<&'static str> {
        match self {
            Self::Ordinary => None,
            Self::Conditional => Some("conditional"),
            Self::Normalised => Some("normalised"),
        }
    }

    /// The residuals, in a sentence ("conditional residuals").
    pub fn plural(self) -> &'static str {
        match self {
            Self::Ordinary => "residuals",
            Self::Conditional => "conditional residuals",
            Self::Normalised => "normalised residuals",
        }
    }

    /// How a flagged residual was scaled, in a sentence.
    pub fn scaled(self) -> &'static str {
        match self {
            Self::Ordinary => "an externally studentized residual",
            Self::Conditional => "a studentized conditional residual",
            Self::Normalised => "a normalised residual",
        }
    }

    /// The residual of one flagged observation ("studentized residual").
    pub fn flagged(self) -> &'static str {
        match self {
            Self::Ordinary => "studentized residual",
            Self::Conditional => "studentized conditional residual",
            Self::Normalised => "normalised residual",
        }
    }
}

/// An observation flagged by its studentized residual.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct OutlierRow {
    pub line: usize,
    pub level: String,
    pub value: f64,
    pub studentized_residual: f64,
}

/// How many flagged observations reports and the terminal name one by one.
pub const OUTLIERS_LISTED: usize = 5;

/// The `k` flagged observations with the largest |studentized residual|,
/// most extreme first (ties in data order).
pub fn most_extreme(rows: &[OutlierRow], k: usize) -> Vec<&OutlierRow> {
    let mut sorted: Vec<&OutlierRow> = rows.iter().collect();
    sorted.sort_by(|a, b| {
        b.studentized_residual
            .abs()
            .total_cmp(&a.studentized_residual.abs())
            .then(a.line.cmp(&b.line))
    });
    sorted.truncate(k);
    sorted
}
