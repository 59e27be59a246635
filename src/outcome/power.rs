//! The outcome of a planned experiment's power block.

use crate::doc::power::EffectInput;

/// A planned one-way experiment: the power at n per group, or the n for a power.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PowerResult {
    pub id: String,
    pub line: usize,
    pub groups: usize,
    pub effect: EffectInput,
    pub cohens_f: f64,
    pub alpha: f64,
    /// The target power when solving for n.
    pub target: Option<f64>,
    /// n per group: the answer when solving for n, else the input.
    pub n_per_group: Option<usize>,
    /// Power at `n_per_group`.
    pub power: f64,
    /// Power over a range of n per group, for the table.
    pub curve: Vec<(usize, f64)>,
    pub caption: Option<String>,
    pub warnings: Vec<String>,
}
