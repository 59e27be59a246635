//! What a model with random terms adds to the linear outcome: how it was
//! fitted, the variance components, whether the classical stratum table
//! exists (and why not), and the standard errors of differences per kind of
//! comparison. The error strata themselves and each term's test (with its
//! own denominator df and error) are in `LinearOutcome`.

use crate::doc::block::DdfMethod;
use crate::stats::assumptions::ShapiroWilk;

/// How a mixed model was fitted (REML).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Fit {
    pub ddf: DdfMethod,
    pub converged: bool,
    pub iterations: usize,
    /// The REML log-likelihood in the form that does not depend on how the
    /// fixed effects are coded (−½ of the criterion with ln|X'X|).
    pub log_likelihood: f64,
    /// AIC and BIC from that criterion, counting the variance parameters
    /// (BIC with ln(N − p)).
    pub aic: f64,
    pub bic: f64,
    /// The largest scaled gradient at the estimate.
    pub max_gradient: f64,
    /// Observations used.
    pub n: usize,
    /// Fixed-effect parameters (rank of the fixed design).
    pub p: usize,
}

/// One random term's variance, or the residual's.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct VarianceComponent {
    /// The term as written (`block:variety`), or `residual`.
    pub term: String,
    pub variance: f64,
    pub sd: f64,
    /// Interval for the SD at 1 − α (profile likelihood); NaN where it
    /// could not be computed.
    pub ci_lower: f64,
    pub ci_upper: f64,
    /// Levels of the term (units of this size); 0 for the residual.
    pub levels: usize,
    /// Percentage of the total variance (negative estimates count as 0).
    pub percent: f64,
    /// Estimated at zero, on the boundary of the parameter space.
    pub on_boundary: bool,
}

/// Why the classical stratum table is not printed.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum NotClassical {
    /// Some units or cells have no observation, or unequal numbers.
    Unbalanced { detail: String },
    /// A treatment term is not estimated within one stratum.
    NotOrthogonal { detail: String },
    /// A stratum's variance is estimated at zero, so REML pools it with the
    /// stratum below and its tests differ from the classical ones.
    Pooled { term: String },
    /// The errors follow a covariance structure over the repeated factor,
    /// fitted by REML on every observation: there are no strata.
    Structured,
    /// The model has covariates, which no stratum table adjusts for.
    Covariate { names: Vec<String> },
}

/// The standard error of a difference of two means of one kind, with its
/// df and least significant difference at α.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Sed {
    /// What the two means share, in plain words: `two V means`, `two N
    /// levels at the same V`.
    pub kind: String,
    pub sed: f64,
    pub df: f64,
    pub lsd: f64,
}

/// One unit whose predicted effect is far from 0 for its term.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FlaggedUnit {
    /// The unit's labels (`III:Victory`).
    pub unit: String,
    /// The predicted effect, in the response's units.
    pub effect: f64,
    /// The effect over its standard deviation under the model.
    pub standardized: f64,
}

/// A random term's predicted unit effects (BLUPs), checked as residuals
/// are: their shape, and the units beyond the outlier threshold.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PredictedEffects {
    pub term: String,
    /// Units of the term.
    pub units: usize,
    /// Shapiro-Wilk on the standardised effects; `None` when the variance is
    /// estimated at 0 or there are fewer than 3 units (or more than 5,000).
    pub shapiro_wilk: Option<ShapiroWilk>,
    /// Units beyond the threshold in all, and the most extreme of them.
    pub flagged_count: usize,
    pub flagged: Vec<FlaggedUnit>,
}

/// How the components' intervals were computed.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub enum IntervalMethod {
    /// Profile likelihood (models with at most 200 random-effect levels).
    #[default]
    Profile,
    /// Satterthwaite's χ² approximation from the REML information.
    Satterthwaite,
}

impl IntervalMethod {
    /// The name in the results file.
    pub fn key(self) -> &'static str {
        match self {
            IntervalMethod::Profile => "profile",
            IntervalMethod::Satterthwaite => "satterthwaite",
        }
    }
}

/// Everything a model with random terms adds.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MixedDetail {
    pub fit: Fit,
    /// Random terms in document order, then the residual.
    pub components: Vec<VarianceComponent>,
    /// `None` when the strata of `LinearOutcome` are the classical table
    /// (balanced data) and REML reproduced it.
    pub not_classical: Option<NotClassical>,
    /// Coefficients of variation of each classical error, in percent.
    pub cvs: Vec<(String, f64)>,
    pub seds: Vec<Sed>,
    /// Each random term's predicted effects, checked (empty with
    /// `checks: summary` or `none`).
    #[serde(default)]
    pub predicted: Vec<PredictedEffects>,
    #[serde(default)]
    pub interval_method: IntervalMethod,
    /// `cells: yes` with two treatment factors: the two-way table's letters.
    #[serde(default)]
    pub cell_letters: Option<CellLetters>,
}

/// A two-way table of cell means lettered within rows and within columns:
/// lowercase letters compare the column factor's levels at one row level,
/// uppercase letters the row factor's levels at one column level. Each is
/// an ordinary simple-effects family, so each pair keeps its own SED and df
/// (in a split-plot, the rows are whole-plot levels: their lowercase
/// letters use the subplot error, the uppercase ones a combined error).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CellLetters {
    /// Factor indices (into `LinearOutcome::factors`).
    pub rows: usize,
    pub columns: usize,
    /// Index into `LinearOutcome::families` of each row level's family (the
    /// column factor compared at that level), in level order.
    pub row_families: Vec<usize>,
    /// Index of each column level's family (the row factor compared there).
    pub column_families: Vec<usize>,
}
