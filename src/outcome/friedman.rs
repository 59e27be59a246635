//! What Friedman's test adds to a blocked block (`method: ranks` with
//! `block:`): the test on the ranks within blocks, Kendall's W, and each
//! level's ranks. The post hoc procedure's pairs and letters are the
//! treatment family's comparison, as for every procedure.

use crate::stats::friedman::Friedman;

/// One level of the treatment factor, ranked within every block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RankedLevel {
    pub name: String,
    /// Blocks holding the level (every block: the design is complete).
    pub blocks: usize,
    pub rank_sum: f64,
    pub mean_rank: f64,
    /// The median of the level's observations (over the blocks).
    pub median: f64,
}

/// Friedman's test of one treatment factor in complete blocks.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FriedmanDetail {
    /// The treatment factor's name (index into the outcome's factors).
    pub factor: usize,
    /// The blocking factor's index.
    pub block: usize,
    pub test: Friedman,
    /// In the factor's level order.
    pub levels: Vec<RankedLevel>,
}

/// How strongly the blocks agree in their ordering of the levels, in plain
/// words. The bands are a reading aid, not a test: W = 0 is no agreement
/// beyond chance, 1 is every block ranking the levels alike. The cut points
/// 0.1, 0.3 and 0.5 are Cohen's (1988) small, medium and large for a
/// correlation, as commonly applied to W (from memory); no standard fixes
/// them, and the report prints W itself beside the words.
pub fn agreement_words(w: f64) -> &'static str {
    if !w.is_finite() {
        "not defined"
    } else if w < 0.1 {
        "little or no agreement"
    } else if w < 0.3 {
        "weak agreement"
    } else if w < 0.5 {
        "moderate agreement"
    } else {
        "strong agreement"
    }
}
