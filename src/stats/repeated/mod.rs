//! The univariate repeated-measures ANOVA of complete subjects (spec 7.1-7.3
//! of the mixed-models methods): the between-subject table against subjects
//! within groups; every within-subject effect (each within factor and each
//! interaction of within factors, contrasts the Kronecker product of the
//! factors' orthonormal contrasts) and its interaction with each
//! between-subject term, against the effect × subjects-within-groups error;
//! Mauchly's test of sphericity with the Greenhouse-Geisser, Huynh-Feldt
//! (Lecoutre's form) and lower-bound epsilons, and the corrected p-values.
//!
//! Use: fill a [`RepeatedInput`] (complete subjects only: the caller lists
//! and leaves out subjects with a missing occasion, spec 7.5) and call
//! [`analyse`]. Between terms are fitted sequentially in the order given
//! (intercept first), so with unequal group sizes the within effect itself is
//! tested on subject-weighted means. No labels, no formatting: factors, terms,
//! subjects and occasions are the caller's indices.
//!
//! ```
//! use sheaf::stats::repeated::{BetweenTerm, RepeatedInput, Sphericity, analyse};
//!
//! // Invented: 6 animals in 2 diets, weighed in 3 weeks.
//! let responses = vec![
//!     vec![10.0, 12.5, 15.0], vec![11.0, 12.0, 16.5], vec![9.5, 13.0, 14.0],
//!     vec![10.5, 14.0, 18.0], vec![12.0, 15.5, 19.5], vec![11.0, 13.5, 19.0],
//! ];
//! let diet = BetweenTerm { levels: 2, level_of: vec![0, 0, 0, 1, 1, 1] };
//! let input = RepeatedInput { responses: &responses, within: &[3], between: &[diet] };
//! let analysis = analyse(&input).expect("complete subjects, ν = 4 > p = 2");
//! let week = &analysis.within[0];
//! assert_eq!((week.effect.test.df, week.error.df), (2, 8));
//! assert!(matches!(week.sphericity, Sphericity::Tested(_)));
//! assert!((0.5..=1.0).contains(&week.epsilons.gg)); // 1/p ≤ ε̂ ≤ 1
//! ```

mod analysis;
mod between_basis;
mod contrast;
mod error;
mod input;
mod sphericity;
mod sscp;
mod table;

pub use analysis::analyse;
pub use between_basis::MAX_BETWEEN_COLUMNS;
pub use error::RepeatedError;
pub use input::{BetweenTerm, RepeatedInput};
pub use sphericity::{Epsilons, MauchlyTest};
pub use table::{
    BetweenTable, CorrectedP, ErrorLine, RepeatedAnalysis, Sphericity, TestLine, WithinEffect,
    WithinLine,
};

#[cfg(test)]
#[path = "repeated_tests.rs"]
mod tests;
