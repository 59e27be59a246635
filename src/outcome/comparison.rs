//! One family of comparisons with its letters.

use crate::stats::compare::{Method, Pair};
use crate::stats::dunnett::Sides;

/// One pairwise family with its letters.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ComparisonResult {
    pub method: Method,
    pub alpha: f64,
    pub pairs: Vec<Pair>,
    /// Letters per level, in level order; empty for Dunnett (many-to-one).
    pub letters: Vec<String>,
    /// The t or q critical value behind the intervals.
    pub critical: f64,
    /// Dunnett's control level (index into the levels).
    pub control: Option<usize>,
    /// Dunnett's sidedness.
    pub sides: Sides,
    /// True when Fisher's protection withheld all declarations (F not significant).
    pub withheld: bool,
    /// Plain-language notes on the procedure (protection, interval choice).
    pub notes: Vec<String>,
}
