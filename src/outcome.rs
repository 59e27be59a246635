//! The outcome of every analysis block: what engines produce and what every
//! projection (tables, prose, the results file, figures) reads. It imports
//! no engine and no output.

mod checks;
pub mod contrasts;
pub mod covariance;
pub mod covariates;
pub mod dose;
pub mod equivalence;
pub mod friedman;
pub mod linear;
pub mod mixed;
mod power;
pub mod precision;
pub mod procedure_note;
pub mod repeated;
pub mod traits;
pub mod transform;
pub mod trend;

pub use checks::{Checks, OUTLIERS_LISTED, OutlierRow, ResidualKind, most_extreme};
pub use linear::{CellRow, RESIDUAL, term_label};
pub use power::PowerResult;

/// The outcome of any analysis block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum BlockResult {
    /// Every linear analysis, whatever its engine.
    Linear(Box<linear::LinearOutcome>),
    Power(PowerResult),
    /// Several responses, each analysed as its own linear model.
    Traits(Box<traits::TraitsOutcome>),
}

impl BlockResult {
    pub fn id(&self) -> &str {
        match self {
            BlockResult::Linear(r) => &r.id,
            BlockResult::Power(r) => &r.id,
            BlockResult::Traits(r) => &r.id,
        }
    }

    pub fn line(&self) -> usize {
        match self {
            BlockResult::Linear(r) => r.line,
            BlockResult::Power(r) => r.line,
            BlockResult::Traits(r) => r.line,
        }
    }

    /// Moves a (cached) result to the block's current line.
    pub fn set_line(&mut self, line: usize) {
        match self {
            BlockResult::Linear(r) => r.line = line,
            BlockResult::Power(r) => r.line = line,
            BlockResult::Traits(r) => {
                r.line = line;
                for t in &mut r.traits {
                    t.outcome.line = line;
                }
            }
        }
    }

    /// A linear block's outcome, the form every projection reads.
    pub fn linear(&self) -> Option<&linear::LinearOutcome> {
        match self {
            BlockResult::Linear(r) => Some(r),
            BlockResult::Power(_) | BlockResult::Traits(_) => None,
        }
    }

    /// Every linear analysis of the block: its own, or one per trait.
    pub fn linear_outcomes(&self) -> Vec<&linear::LinearOutcome> {
        match self {
            BlockResult::Linear(r) => vec![r],
            BlockResult::Power(_) => Vec::new(),
            BlockResult::Traits(r) => r.traits.iter().map(|t| &t.outcome).collect(),
        }
    }

    /// The block's warnings, to add one found after the analysis (a stale
    /// `query` file).
    pub fn warnings_mut(&mut self) -> &mut Vec<String> {
        match self {
            BlockResult::Linear(r) => &mut r.warnings,
            BlockResult::Power(r) => &mut r.warnings,
            BlockResult::Traits(r) => &mut r.warnings,
        }
    }

    pub fn warnings(&self) -> &[String] {
        match self {
            BlockResult::Linear(r) => &r.warnings,
            BlockResult::Power(r) => &r.warnings,
            BlockResult::Traits(r) => &r.warnings,
        }
    }
}

/// The layout number of a cached outcome; raise it whenever any type of
/// this module changes shape, so that older cache entries become misses.
impl crate::cache::Cacheable for BlockResult {
    const SCHEMA: u32 = 17;
}
