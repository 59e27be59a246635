//! sheaf compiles a Markdown document with analysis blocks into a reproducible
//! statistical report.

pub mod data;
pub mod diag;
pub mod stats;
