//! The engines: each binds an analysis block to its data, checks the
//! design and runs the statistics. Their results are the one source of
//! every number in the report, the results file and the prose.
//!
//! - `binding`: where a block's rows come from and how they are read
//!   (streams, row rules, design order, labels, data-file errors);
//! - `one_way`: one factor, from raw observations or published summaries;
//! - `factorial`: factorial, block and Latin-square designs (linear model);
//! - `power`: the `power` block, which reads no data;
//! - `traits`: several responses, each through its engine;
//! - `request`: what an engine receives and returns, and which engine a
//!   model goes to;
//! - shared by the engines: `checks` (assumption checks and their advice),
//!   `compare` (protection, letters), `notes` (typed notes and
//!   `acknowledge:`), `exclusions` (rows left out, told in sentences).

mod binding;
mod checks;
mod compare;
mod contrasts;
mod dose;
mod equivalence;
mod exclusions;
mod factorial;
mod mixed;
mod notes;
mod observed;
mod one_way;
mod outcome_base;
mod power;
mod request;
mod traits;
mod transformation;
mod trend;

pub use binding::{Data, block_columns, presentation, streams};
pub(crate) use binding::{data_error, reads_csv_rows};
pub use notes::{Note, NoteKind};
pub use one_way::RoundingRange;
pub use power::run_power;
pub use request::{Analysis, Request, run_linear, run_on_csv};
pub use traits::{represent, run_traits, trait_spec};

/// Above this many levels pairwise comparisons are skipped with a warning
/// (200 levels are 19,900 pairs, each with its own studentized-range tail).
pub const MAX_COMPARED_LEVELS: usize = 200;

#[cfg(test)]
#[path = "analysis/engines_tests.rs"]
mod tests;
