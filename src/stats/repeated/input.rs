//! What the repeated-measures analysis is given, and its checks.

use super::error::RepeatedError;

/// One term of the between-subject model: a partition of the subjects
/// (each subject's level, 0-based).
#[derive(Debug, Clone, PartialEq)]
pub struct BetweenTerm {
    pub levels: usize,
    pub level_of: Vec<usize>,
}

/// Complete repeated-measures data, one row of responses per subject.
#[derive(Debug, Clone, Copy)]
pub struct RepeatedInput<'a> {
    /// Per subject, its responses at the k occasions. An occasion is a
    /// combination of the within-subject factors' levels, the first factor
    /// varying slowest: occasion = ((l₁·n₂ + l₂)·n₃ + l₃)… for levels lᵢ of
    /// factors with nᵢ levels.
    pub responses: &'a [Vec<f64>],
    /// The level counts of the within-subject factors (at least one).
    pub within: &'a [usize],
    /// The between-subject model's terms, fitted in this order after the
    /// intercept (each adjusted for the ones before it). Empty for a single
    /// group; one term (the caller's groups, all between factors combined)
    /// for the table of spec 7.1; a nuisance term such as blocks goes first.
    pub between: &'a [BetweenTerm],
}

impl RepeatedInput<'_> {
    pub fn subjects(&self) -> usize {
        self.responses.len()
    }

    /// Checks everything that does not need arithmetic; returns k.
    pub(crate) fn validate(&self) -> Result<usize, RepeatedError> {
        let occasions = self.occasions()?;
        for (subject, row) in self.responses.iter().enumerate() {
            if row.len() != occasions {
                return Err(RepeatedError::NotRectangular {
                    subject,
                    expected: occasions,
                    found: row.len(),
                });
            }
            if let Some(occasion) = row.iter().position(|y| !y.is_finite()) {
                return Err(RepeatedError::NonFinite { subject, occasion });
            }
        }
        for (term, t) in self.between.iter().enumerate() {
            self.check_term(term, t)?;
        }
        Ok(occasions)
    }

    fn occasions(&self) -> Result<usize, RepeatedError> {
        if self.within.is_empty() {
            return Err(RepeatedError::NoWithinFactor);
        }
        let mut k: usize = 1;
        for (factor, &levels) in self.within.iter().enumerate() {
            if levels < 2 {
                return Err(RepeatedError::TooFewWithinLevels { factor, levels });
            }
            k = k
                .checked_mul(levels)
                .ok_or(RepeatedError::TooManyOccasions)?;
        }
        Ok(k)
    }

    fn check_term(&self, term: usize, t: &BetweenTerm) -> Result<(), RepeatedError> {
        if t.level_of.len() != self.subjects() {
            return Err(RepeatedError::TermLength {
                term,
                expected: self.subjects(),
                found: t.level_of.len(),
            });
        }
        // A level count far beyond the subjects would only mean empty levels;
        // refusing it here also bounds the allocation below.
        let mut used = vec![false; t.levels.min(self.subjects() + 1)];
        for (subject, &level) in t.level_of.iter().enumerate() {
            if level >= t.levels {
                return Err(RepeatedError::LevelOutOfRange {
                    term,
                    subject,
                    level,
                    levels: t.levels,
                });
            }
            if let Some(slot) = used.get_mut(level) {
                *slot = true;
            }
        }
        match used.iter().position(|u| !u) {
            Some(level) => Err(RepeatedError::EmptyLevel { term, level }),
            None if t.levels > used.len() => Err(RepeatedError::EmptyLevel {
                term,
                level: used.len(),
            }),
            None => Ok(()),
        }
    }
}
