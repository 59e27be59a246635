//! An orthonormal basis of the between-subject model, built term by term so
//! that each term's block of basis vectors spans what it adds to the terms
//! before it (sequential sums of squares).

use super::error::RepeatedError;
use super::input::BetweenTerm;
use crate::stats::sum::neumaier;

/// The most between-subject columns (intercept plus every level of every
/// term) the dense basis takes: it holds subjects × columns numbers.
pub const MAX_BETWEEN_COLUMNS: usize = 1000;

/// A column whose norm falls below this fraction of its starting norm after
/// projection lies in the span of the earlier ones (indicator columns are
/// either exactly dependent, leaving rounding of order 1e-16, or far from it).
const ALIAS_TOLERANCE: f64 = 1e-9;

/// Orthonormal columns over the subjects: the intercept first, then one
/// block per term.
pub(crate) struct BetweenBasis {
    /// Basis vectors, each of length N.
    pub(crate) vectors: Vec<Vec<f64>>,
    /// Per term, the range of `vectors` it added (its df is the length).
    pub(crate) blocks: Vec<std::ops::Range<usize>>,
}

impl BetweenBasis {
    pub(crate) fn new(subjects: usize, terms: &[BetweenTerm]) -> Result<Self, RepeatedError> {
        let columns = terms
            .iter()
            .fold(1usize, |sum, t| sum.saturating_add(t.levels));
        if columns > MAX_BETWEEN_COLUMNS {
            return Err(RepeatedError::TooLarge {
                columns,
                limit: MAX_BETWEEN_COLUMNS,
            });
        }
        let unit = 1.0 / (subjects as f64).sqrt();
        let mut basis = BetweenBasis {
            vectors: vec![vec![unit; subjects]],
            blocks: Vec::with_capacity(terms.len()),
        };
        for (index, term) in terms.iter().enumerate() {
            let start = basis.vectors.len();
            for level in 0..term.levels {
                let indicator = term
                    .level_of
                    .iter()
                    .map(|&l| if l == level { 1.0 } else { 0.0 })
                    .collect();
                basis.add(indicator);
            }
            if basis.vectors.len() == start {
                return Err(RepeatedError::AliasedTerm { term: index });
            }
            basis.blocks.push(start..basis.vectors.len());
        }
        Ok(basis)
    }

    /// The rank of the between-subject model.
    pub(crate) fn rank(&self) -> usize {
        self.vectors.len()
    }

    /// Gram-Schmidt twice ("twice is enough", Giraud et al. 2005, from
    /// memory): keeps the basis orthonormal to rounding. Dependent columns are
    /// dropped.
    fn add(&mut self, mut column: Vec<f64>) {
        let start = norm(&column);
        for _pass in 0..2 {
            for q in &self.vectors {
                let c = dot(q, &column);
                column.iter_mut().zip(q).for_each(|(x, qi)| *x -= c * qi);
            }
        }
        let remaining = norm(&column);
        if remaining > ALIAS_TOLERANCE * start {
            column.iter_mut().for_each(|x| *x /= remaining);
            self.vectors.push(column);
        }
    }
}

/// Compensated inner product.
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    neumaier(a.iter().zip(b).map(|(x, y)| x * y))
}

fn norm(a: &[f64]) -> f64 {
    dot(a, a).sqrt()
}
