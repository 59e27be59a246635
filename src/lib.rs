//! sheaf compiles a Markdown document with analysis blocks into a reproducible
//! statistical report.
//!
//! The pipeline, driven by [`compile::compile`]: [`doc`] (front matter,
//! blocks, prose expressions) → [`plan`] (every check that needs no data,
//! all errors at once) → [`data`] (readers, exact decimals) → [`analysis`]
//! (the engines) → [`outcome`] (one typed outcome per block) → projections
//! ([`render`] tables and prose, [`results`], [`figure`]) → a writer
//! ([`render::writer`]); [`output`] writes the files as one set. Support
//! code sits below every stage ([`world`], [`provenance`], [`format`](mod@format),
//! [`escape`], [`cache`], [`diag`]) and [`stats`] holds the numerics.
//! `tests/architecture.rs` keeps the imports pointing down.

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
pub mod query;
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
