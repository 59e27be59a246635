//! sheaf compiles a Markdown document with analysis blocks into a reproducible
//! statistical report.
//!
//! The pipeline, one module per stage, driven by [`compile::compile`]:
//! 1. [`doc`]: front matter, analysis blocks (`key: value` specs, model
//!    formulas) and prose expressions, each with its source line;
//! 2. [`data`]: CSV reading with exact decimals and missing values;
//! 3. [`analysis`]: binds a block to its data and runs the statistics;
//! 4. [`stats`]: pure numerical functions (distributions, ANOVA,
//!    comparisons, letters), no I/O and no formatting;
//! 5. [`render`]: view models, templates and Markdown to HTML;
//! 6. [`results`]: the JSON results file, a documented contract;
//!
//! and [`output`] writes the files as one set, keeping the block [`cache`].

// Diagnostics are returned by value on the (cold) error path; boxing them
// would only add noise at every call site.
#![allow(clippy::result_large_err)]

pub mod analysis;
pub mod cache;
pub mod compile;
pub mod data;
pub mod diag;
pub mod doc;
pub mod escape;
pub mod figure;
pub mod format;
#[doc(hidden)]
pub mod fuzzing;
pub mod outcome;
pub mod output;
pub mod plan;
pub mod provenance;
pub mod render;
pub mod results;
pub mod scaffold;
pub mod source;
pub mod stats;
pub mod validate;
pub mod verify;
pub mod watch;
pub mod world;

/// sheaf's version, printed in every report and results file.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
