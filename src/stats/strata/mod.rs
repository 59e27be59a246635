//! The classical multi-stratum ANOVA of balanced designs with more than one
//! size of experimental unit (split-plot, strip-plot, split-split-plot,
//! subsampling, random blocks, crossed random terms): the layout recognised
//! from the declared random terms and the data, or the reasons it is not; the
//! table with one error line per stratum, each treatment term tested against
//! the error of the stratum where it is estimated; ANOVA estimates of the
//! variance components with Satterthwaite χ² intervals; and the SEDs and LSDs
//! of every kind of comparison.
//!
//! Use: fill a [`StrataInput`] and call [`analyse`]. It returns either a
//! [`StratumAnalysis`] (strata coarsest first, each with its treatment lines
//! and error line; the total; the variance components; the stratum of each
//! fixed term; [`StratumAnalysis::comparisons`] for the SED and LSD of each
//! [`ComparisonKind`]; [`StratumAnalysis::mean_error`] for the SE of a mean)
//! or every [`NotClassical`] reason found at the first check that failed.
//! Strata are named by [`StratumId`] (the caller's random-term index, or the
//! residual); fixed terms, treatment factors, units and levels are the
//! caller's indices. No labels, no formatting.
//!
//! The expected mean squares are those of the unrestricted model (interaction
//! effects of a random and a fixed factor independent), as REML fits; the
//! classical table then agrees with REML exactly when every ANOVA component
//! is positive (spec 3.5). A negative component is kept as computed and
//! flagged.
//!
//! ```
//! use sheaf::stats::linear::Layout;
//! use sheaf::stats::strata::{StrataInput, StratumId, analyse};
//!
//! // Invented: 2 blocks × 2 whole plots (A) × 2 subplots (S).
//! let mut treatments = Layout { levels: vec![2, 2], rows: Vec::new() };
//! let mut random = Layout { levels: vec![2, 4], rows: Vec::new() };
//! for block in 0..2 {
//!     for a in 0..2 {
//!         for s in 0..2 {
//!             treatments.rows.push(vec![a, s]);
//!             random.rows.push(vec![block, block * 2 + a]);
//!         }
//!     }
//! }
//! let y = [3.0, 4.0, 6.0, 8.0, 2.5, 4.5, 7.0, 7.5];
//! let terms = vec![vec![0], vec![1], vec![0, 1]];
//! let input = StrataInput { y: &y, shift: 0.0, treatments: &treatments, terms: &terms, random: &random };
//! let analysis = analyse(&input).expect("a balanced split-plot");
//! assert_eq!(analysis.term_strata[0], StratumId::Random(1)); // A on whole plots
//! assert_eq!(analysis.strata[1].error.df, 1); // Error (a): (r − 1)(a − 1)
//! ```

mod analysis;
mod combination;
mod comparison;
mod components;
mod input;
mod partition;
mod reason;
mod table;
mod treatment_layout;
mod unit_structure;

pub use analysis::{StratumAnalysis, analyse};
pub use combination::{Combination, chi2_isf};
pub use comparison::{Comparison, ComparisonKind, MeanError, SeBasis};
pub use components::VarianceComponent;
pub use input::StrataInput;
pub use reason::{MissingCell, NotClassical, StratumId};
pub use table::{ErrorLine, Stratum, Total, TreatmentLine};

#[cfg(test)]
#[path = "strata_tests.rs"]
mod tests;

#[cfg(test)]
#[path = "strata_properties_tests.rs"]
mod properties;
