//! sheaf compiles a Markdown document with analysis blocks into a reproducible
//! statistical report.

// Diagnostics are returned by value on the (cold) error path; boxing them
// would only add noise at every call site.
#![allow(clippy::result_large_err)]

pub mod data;
pub mod diag;
pub mod doc;
pub mod source;
pub mod stats;
