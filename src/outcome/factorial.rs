//! The outcome of a factorial, blocked or Latin-square analysis.

use super::{Checks, ComparisonResult};
use crate::stats::linear::SsType;

/// Why a blocking factor's row shows no F, p or effect size.
pub const BLOCK_NOT_TESTED: &str = "Blocks are reported (SS, df, MS) but not tested: blocks are not randomized, so an F for them is not a valid test (Montgomery, ch. 4). Their sum of squares is what the blocking removed from the error.";

/// One row of the factorial ANOVA table.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TermRow {
    /// Factor names joined by `:` (`wool:tension`).
    pub name: String,
    pub factors: Vec<usize>,
    pub df: usize,
    pub ss: f64,
    pub ms: f64,
    pub f: f64,
    pub p: f64,
    pub critical_f: f64,
    pub partial_eta_sq: f64,
    pub partial_omega_sq: f64,
    pub partial_eta_sq_ci: (f64, f64),
    /// A declared blocking factor: its SS, df and MS are reported, but its
    /// F, p, critical value and effect size are not (all NaN): blocks are
    /// not randomized, so their F is no valid test.
    pub is_block: bool,
}

/// Observed data in one cell (one combination of the treatment factors' levels).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CellRow {
    pub levels: Vec<usize>,
    pub n: usize,
    pub mean: f64,
    pub sd: f64,
    /// The mean less the data's origin, as computed from the offsets: cell
    /// contrasts taken from `mean` would carry the rounding of the origin's
    /// magnitude (1e-8 near 1e8).
    #[serde(skip)]
    pub offset: f64,
}

/// An estimated marginal (or cell) mean.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EmmRow {
    pub label: String,
    pub n: usize,
    pub mean: f64,
    pub se: f64,
    pub ci_lower: f64,
    pub ci_upper: f64,
}

/// One family of comparisons: a main effect, a slice of one (`within`), or all cells.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Family {
    /// The compared factor's name, or `cells`.
    pub term: String,
    /// `Some("B=level")` for simple effects.
    pub within: Option<String>,
    pub means: Vec<EmmRow>,
    pub comparison: ComparisonResult,
}

/// Everything computed for a factorial `anova` block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FactorialResult {
    pub id: String,
    pub line: usize,
    pub data: String,
    pub response: String,
    pub factors: Vec<String>,
    pub levels: Vec<Vec<String>>,
    pub alpha: f64,
    pub ss_type: SsType,
    /// False when the three SS types give different tables (unbalanced data).
    pub types_agree: bool,
    pub terms: Vec<TermRow>,
    pub residual_df: usize,
    pub residual_ss: f64,
    pub mse: f64,
    pub total_ss: f64,
    pub r_squared: f64,
    pub n: usize,
    pub exclusions: Vec<crate::data::Exclusion>,
    pub cells: Vec<CellRow>,
    /// The factors a cell's `levels` refer to: every factor but the blocks.
    pub cell_factors: Vec<usize>,
    pub families: Vec<Family>,
    /// Estimated marginal means of each treatment factor when nothing is
    /// compared (`compare: none`): what means plots draw.
    #[serde(default)]
    pub marginal_means: Vec<(String, Vec<EmmRow>)>,
    pub checks: Checks,
    pub warnings: Vec<String>,
    /// Notes the author acknowledged, listed in the provenance section.
    pub acknowledged: Vec<String>,
    pub decimals: u32,
    pub caption: Option<String>,
    pub order: crate::doc::block::Order,
    pub show: crate::doc::block::Show,
    /// Per observation: factor levels, value, fitted value, residual, data line (for figures).
    pub rows: Vec<Vec<usize>>,
    pub values: Vec<f64>,
    pub fitted: Vec<f64>,
    pub residuals: Vec<f64>,
    pub lines: Vec<usize>,
    pub plots: crate::doc::block::PlotSpec,
}

/// Term label for people: `wool × tension`.
pub fn term_label(name: &str) -> String {
    name.replace(':', " × ")
}
