//! Who was measured when: the subject and the occasion of every
//! observation, and the occasions' times (mixed-models spec 7.4, 7.5).
//! Subjects may miss occasions; they stay in the fit.

use super::error::MixedError;
use super::structure::Structure;

/// Most occasions a repeated factor may have (Σ is k×k, UN has
/// k(k + 1)/2 parameters).
pub const MAX_OCCASIONS: usize = 100;

/// The repeated layout of the observations.
#[derive(Debug, Clone, PartialEq)]
pub struct RepeatedLayout {
    /// Number of subjects; subjects without observations change nothing.
    pub subjects: usize,
    /// `subject_of[i]` is the subject of observation i.
    pub subject_of: Vec<usize>,
    /// Number of occasions k.
    pub occasions: usize,
    /// `occasion_of[i]` is the occasion of observation i, below k.
    pub occasion_of: Vec<usize>,
    /// One numeric time per occasion (AR(1) uses ρ^|tⱼ − tₗ|); `None`
    /// means equally spaced, 0, 1, …, k − 1.
    pub times: Option<Vec<f64>>,
}

/// One subject's observations in occasion order.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SubjectRows {
    pub occasions: Vec<usize>,
    pub rows: Vec<usize>,
}

impl RepeatedLayout {
    /// The times of the occasions, checked.
    pub(crate) fn checked_times(&self) -> Result<Vec<f64>, MixedError> {
        let Some(times) = &self.times else {
            return Ok((0..self.occasions).map(|j| j as f64).collect());
        };
        if times.len() != self.occasions {
            return Err(MixedError::LengthMismatch {
                what: "the occasions' times".into(),
                expected: self.occasions,
                found: times.len(),
            });
        }
        if let Some(j) = times.iter().position(|t| !t.is_finite()) {
            return Err(MixedError::BadTimes {
                reason: format!("the time of occasion {} is not a finite number", j + 1),
            });
        }
        for j in 0..times.len() {
            if let Some(l) = (j + 1..times.len()).find(|&l| times[l] == times[j]) {
                return Err(MixedError::BadTimes {
                    reason: format!("occasions {} and {} have the same time", j + 1, l + 1),
                });
            }
        }
        Ok(times.clone())
    }

    /// Checks the layout against `n` observations and returns each
    /// subject's rows in occasion order, subjects in index order (so the
    /// result does not depend on the order of the rows).
    pub(crate) fn by_subject(&self, n: usize) -> Result<Vec<SubjectRows>, MixedError> {
        if self.occasions > MAX_OCCASIONS {
            return Err(MixedError::TooLarge {
                what: "occasions",
                size: self.occasions,
                limit: MAX_OCCASIONS,
            });
        }
        for (what, v) in [
            ("the subject of each observation", &self.subject_of),
            ("the occasion of each observation", &self.occasion_of),
        ] {
            if v.len() != n {
                return Err(MixedError::LengthMismatch {
                    what: what.into(),
                    expected: n,
                    found: v.len(),
                });
            }
        }
        for (term, v, levels) in [
            ("subject", &self.subject_of, self.subjects),
            ("occasion", &self.occasion_of, self.occasions),
        ] {
            if let Some(row) = v.iter().position(|&l| l >= levels) {
                return Err(MixedError::LevelOutOfRange {
                    term: term.into(),
                    row,
                    level: v[row],
                    levels,
                });
            }
        }
        let mut order: Vec<usize> = (0..n).collect();
        order.sort_by_key(|&i| (self.subject_of[i], self.occasion_of[i], i));
        let mut out: Vec<SubjectRows> = Vec::new();
        let mut last: Option<usize> = None;
        for &i in &order {
            let (s, o) = (self.subject_of[i], self.occasion_of[i]);
            match out.last_mut() {
                Some(sub) if last == Some(s) => {
                    if sub.occasions.last() == Some(&o) {
                        return Err(MixedError::RepeatedOccasion {
                            occasion: o,
                            first_row: *sub.rows.last().unwrap_or(&i),
                            second_row: i,
                        });
                    }
                    sub.occasions.push(o);
                    sub.rows.push(i);
                }
                _ => out.push(SubjectRows {
                    occasions: vec![o],
                    rows: vec![i],
                }),
            }
            last = Some(s);
        }
        Ok(out)
    }
}

/// The structure's data requirements: CS needs two subjects, UN needs more subjects than
/// occasions (with an intercept the residual cross-products of the k
/// occasions have rank at most subjects − 1) and every pair of occasions
/// observed together on some subject.
pub(crate) fn check_estimable(
    structure: Structure,
    occasions: usize,
    subjects: &[SubjectRows],
) -> Result<(), MixedError> {
    if structure == Structure::CompoundSymmetry {
        // One subject: the common covariance is confounded with the mean.
        if subjects.len() < 2 {
            return Err(MixedError::TooFewSubjects {
                structure: structure.name(),
                subjects: subjects.len(),
                needed: 2,
            });
        }
        return Ok(());
    }
    if structure == Structure::Autoregressive {
        return Ok(());
    }
    if subjects.len() <= occasions {
        return Err(MixedError::TooFewSubjects {
            structure: structure.name(),
            subjects: subjects.len(),
            needed: occasions + 1,
        });
    }
    let mut together = vec![false; occasions * occasions];
    for s in subjects {
        for &a in &s.occasions {
            for &b in &s.occasions {
                together[a * occasions + b] = true;
            }
        }
    }
    for l in 0..occasions {
        for j in 0..=l {
            if !together[j * occasions + l] {
                return Err(MixedError::OccasionsNeverTogether {
                    first: j,
                    second: l,
                });
            }
        }
    }
    Ok(())
}
