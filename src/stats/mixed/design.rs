//! The fixed-effects design of a mixed model: the columns of
//! [`crate::stats::linear`] in sum-to-zero coding, with aliased columns
//! dropped by the same Householder QR (METHODS 3.3), and the random terms
//! as per-observation level indices.

use std::ops::Range;

use crate::stats::linear::{self, Layout, TermFactors};

use super::error::MixedError;

/// The fixed part: kept design columns and where each term's columns are.
#[derive(Debug, Clone)]
pub struct FixedDesign {
    /// Kept columns, column-major (intercept first when kept).
    pub(crate) columns: Vec<Vec<f64>>,
    /// For every column of the full design: kept, or dropped as aliased.
    pub kept: Vec<bool>,
    /// Each term's columns in the full design (as `linear::term_columns`).
    pub term_ranges: Vec<Range<usize>>,
}

impl FixedDesign {
    /// Builds the design of `terms` over `layout` (intercept plus every
    /// term, sum-to-zero coding) and drops aliased columns.
    pub fn new(layout: &Layout, terms: &[TermFactors]) -> Self {
        let full = linear::design_matrix(layout, terms);
        Self::from_columns(full, linear::term_columns(terms, &layout.levels))
    }

    /// A design from given full columns (column-major, intercept first) and
    /// the terms' column ranges; aliased columns are dropped.
    pub fn from_columns(full: Vec<Vec<f64>>, term_ranges: Vec<Range<usize>>) -> Self {
        let n = full.first().map_or(0, Vec::len);
        let qr = linear::fit(&full, &vec![0.0; n]);
        let columns = full
            .into_iter()
            .zip(&qr.kept)
            .filter(|(_, k)| **k)
            .map(|(c, _)| c)
            .collect();
        Self {
            columns,
            kept: qr.kept,
            term_ranges,
        }
    }

    /// Number of observations.
    pub fn rows(&self) -> usize {
        self.columns.first().map_or(0, Vec::len)
    }

    /// Number of kept (estimable) columns, p.
    pub fn rank(&self) -> usize {
        self.columns.len()
    }

    /// Position among the kept columns of each full-design column.
    fn kept_position(&self) -> Vec<Option<usize>> {
        let mut next = 0;
        self.kept
            .iter()
            .map(|&k| {
                k.then(|| {
                    next += 1;
                    next - 1
                })
            })
            .collect()
    }

    /// A linear function over the full design columns restated over the kept
    /// columns. Refused when the design has aliased columns and the function
    /// gives any weight to one (estimability then depends on the coding).
    pub fn restrict(&self, l_full: &[f64]) -> Result<Vec<f64>, MixedError> {
        if l_full.len() != self.kept.len() {
            return Err(MixedError::LengthMismatch {
                what: "a contrast".into(),
                expected: self.kept.len(),
                found: l_full.len(),
            });
        }
        if self.kept.iter().any(|k| !k) && l_full.iter().any(|v| *v != 0.0) {
            return Err(MixedError::NotEstimable);
        }
        Ok(l_full
            .iter()
            .zip(&self.kept)
            .filter(|(_, k)| **k)
            .map(|(v, _)| *v)
            .collect())
    }

    /// The Type III hypothesis of term `t`: one row per kept column of the
    /// term, selecting its coefficient (sum-to-zero coding makes this the
    /// fixed-effects Type III hypothesis).
    pub fn type3_rows(&self, t: usize) -> Result<Vec<Vec<f64>>, MixedError> {
        let range = self
            .term_ranges
            .get(t)
            .ok_or_else(|| MixedError::BadHypothesis {
                reason: format!("there is no fixed term {t}"),
            })?;
        let position = self.kept_position();
        let rows: Vec<Vec<f64>> = range
            .clone()
            .filter_map(|c| position[c])
            .map(|k| {
                let mut row = vec![0.0; self.rank()];
                row[k] = 1.0;
                row
            })
            .collect();
        if rows.is_empty() {
            return Err(MixedError::BadHypothesis {
                reason: "every column of the term is aliased".into(),
            });
        }
        Ok(rows)
    }
}

/// One random term: a level index per observation. Nested terms (block
/// within variety) are formed by the caller from label combinations.
#[derive(Debug, Clone, PartialEq)]
pub struct RandomTerm {
    /// The name used in messages and in the fitted components.
    pub name: String,
    /// Number of levels; levels without observations are allowed and
    /// change nothing.
    pub levels: usize,
    /// `level_of[i]` is the level of observation i.
    pub level_of: Vec<usize>,
}
