//! The outcome of a one-factor analysis (classic, Welch or ranks).

use super::{Checks, ComparisonResult};
use crate::data::Exclusion;
use crate::doc::block::{Omnibus, Order};
use crate::stats::effect::EffectSizes;
use crate::stats::oneway::OneWay;
use crate::stats::ranks::KruskalWallis;
use crate::stats::welch::WelchAnova;

/// Summary of one level of the factor.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LevelResult {
    pub name: String,
    pub n: usize,
    pub mean: f64,
    /// Sample SD (n − 1 divisor); NaN for n = 1.
    pub sd: f64,
    /// Standard error of the mean: √(MSE/n) pooled, or s/√n under Welch.
    pub se: f64,
    /// Confidence interval for the mean: pooled MSE on ν error df, or the
    /// level's own SD under Welch (see `AnovaResult::ci_pooled`).
    pub ci_lower: f64,
    pub ci_upper: f64,
    pub median: f64,
    /// First and third quartiles (linear interpolation, "type 7").
    pub q1: f64,
    pub q3: f64,
}

/// Everything computed for one `anova` block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct AnovaResult {
    pub method: Omnibus,
    pub checks: Checks,
    pub welch: Option<WelchAnova>,
    pub kruskal: Option<KruskalWallis>,
    pub effect: Option<EffectSizes>,
    /// True when SEs and intervals use the pooled MSE; false for per-level SDs.
    pub ci_pooled: bool,
    pub id: String,
    pub line: usize,
    pub data: String,
    pub response: String,
    pub factor: String,
    pub alpha: f64,
    pub n: usize,
    pub exclusions: Vec<Exclusion>,
    pub table: OneWay,
    /// Levels that entered the analysis, in design order.
    pub levels: Vec<LevelResult>,
    pub comparison: Option<ComparisonResult>,
    pub warnings: Vec<String>,
    /// Notes the author acknowledged (`acknowledge`, planned exclusions):
    /// listed in the provenance section rather than boxed.
    pub acknowledged: Vec<String>,
    /// Decimals for means, SDs, SEs, intervals and differences.
    pub decimals: u32,
    pub caption: Option<String>,
    pub order: Order,
    pub show: crate::doc::block::Show,
    /// The observations per level (absolute values), for figures; empty
    /// when the block draws none, and for summary input.
    pub observations: Vec<Vec<f64>>,
    /// Data lines of the observations, parallel to `observations`.
    pub observation_lines: Vec<Vec<usize>>,
    /// Figures asked for with `plot`, with their axis settings.
    pub plots: crate::doc::block::PlotSpec,
}
