//! The classical multi-stratum ANOVA of balanced designs with more than one
//! size of experimental unit (split-plot, strip-plot, split-split-plot,
//! subsampling, random blocks, crossed random terms): the layout recognised
//! from the declared random terms and the data, or the reasons it is not; the
//! table with one error line per stratum, each treatment term tested against
//! the error of the stratum where it is estimated; ANOVA estimates of the
//! variance components with Satterthwaite χ² intervals; and the SEDs and LSDs
//! of every kind of comparison.
//!
//! Use: fill a [`StrataInput`] and call [`analyse`]. Strata are named by
//! [`StratumId`] (the caller's random-term index, or the residual); fixed
//! terms, treatment factors, units and levels are the caller's indices.

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
