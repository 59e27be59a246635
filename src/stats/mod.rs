//! Statistics: pure functions on numbers. No I/O, no formatting, no Markdown.

pub mod assumptions;
pub mod chi_scale;
pub mod compare;
pub mod dist;
pub mod dose;
pub mod dunnett;
pub mod effect;
pub mod equivalence;
pub mod extremes;
pub mod friedman;
pub mod jonckheere;
pub mod letters;
pub mod linear;
pub mod mixed;
pub mod normal_table;
pub mod oneway;
pub mod ptukey;
pub mod quadrature;
pub mod range_tail;
pub mod ranks;
pub mod repeated;
pub mod roots;
pub mod selection;
pub mod spacings;
pub mod special;
pub mod steel;
pub mod step_down;
pub mod strata;
pub mod sum;
pub mod transform;
pub mod welch;
pub mod williams;
pub mod williams_grid;

/// True for a positive number; false for zero, negatives and NaN. Reads
/// better than a negated comparison where NaN must count as "not positive".
pub(crate) fn is_positive(x: f64) -> bool {
    x > 0.0
}
