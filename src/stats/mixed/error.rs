//! Why a mixed-model fit or test could not be given.

use std::fmt;

/// Every way a fit, test or interval can fail. Each message names the sizes
/// or the term involved, so the caller can pass it on as it stands.
#[derive(Debug, Clone, PartialEq)]
pub enum MixedError {
    /// The response, the design and the random terms disagree in length.
    LengthMismatch {
        what: String,
        expected: usize,
        found: usize,
    },
    /// A response value is NaN or infinite.
    NonFiniteResponse { row: usize },
    /// A random term names a level at or beyond its declared count.
    LevelOutOfRange {
        term: String,
        row: usize,
        level: usize,
        levels: usize,
    },
    /// More random-effect levels or fixed columns than the dense method takes.
    TooLarge {
        what: &'static str,
        size: usize,
        limit: usize,
    },
    /// No residual degrees of freedom: N ≤ p.
    NoResidualDf {
        observations: usize,
        fixed_columns: usize,
    },
    /// Every level of the term holds one observation, so the term is the
    /// residual under another name and the two variances cannot be told apart.
    DuplicatesResidual { term: String },
    /// Two random terms split the observations into the same groups (each
    /// level of one holds exactly the observations of one level of the
    /// other), so their variances cannot be told apart.
    SameGrouping { first: String, second: String },
    /// A factorisation failed: the fixed design or a covariance is singular.
    Singular { what: &'static str },
    /// The optimiser stopped without meeting the convergence criterion.
    NotConverged {
        iterations: usize,
        criterion: f64,
        gradient: Vec<f64>,
    },
    /// The observed information is not positive definite on the free
    /// parameters: a direction of the likelihood is flat.
    NotIdentified { smallest: f64, largest: f64 },
    /// A contrast gives weight to a column that was dropped as aliased.
    NotEstimable,
    /// A hypothesis matrix is empty, of the wrong width, or of deficient rank.
    BadHypothesis { reason: String },
    /// A profile-likelihood limit could not be bracketed.
    ProfileFailed { parameter: String },
    /// Two observations of one subject at the same occasion.
    RepeatedOccasion {
        occasion: usize,
        first_row: usize,
        second_row: usize,
    },
    /// The occasions' times are not one finite, distinct number each.
    BadTimes { reason: String },
    /// Too few subjects to estimate the structure.
    TooFewSubjects {
        structure: &'static str,
        subjects: usize,
        needed: usize,
    },
    /// Two occasions never observed on one subject: their covariance
    /// does not enter the likelihood.
    OccasionsNeverTogether { first: usize, second: usize },
}

impl fmt::Display for MixedError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::LengthMismatch {
                what,
                expected,
                found,
            } => {
                write!(
                    f,
                    "{what} has {found} entries where {expected} were expected"
                )
            }
            Self::NonFiniteResponse { row } => {
                write!(f, "the response in row {} is not a finite number", row + 1)
            }
            Self::LevelOutOfRange {
                term,
                row,
                level,
                levels,
            } => write!(
                f,
                "random term '{term}': row {} has level index {level}, but the term has {levels} levels",
                row + 1
            ),
            Self::TooLarge { what, size, limit } => write!(
                f,
                "the model has {size} {what}; the dense REML method takes at most {limit} \
                 (a sparse method is needed beyond that)"
            ),
            Self::NoResidualDf {
                observations,
                fixed_columns,
            } => write!(
                f,
                "{observations} observations leave no residual degrees of freedom for {fixed_columns} fixed-effect columns"
            ),
            Self::DuplicatesResidual { term } => write!(
                f,
                "random term '{term}' has one observation per level, so its variance cannot be told apart \
                 from the residual variance (the model is not identifiable); remove the term"
            ),
            Self::SameGrouping { first, second } => write!(
                f,
                "random terms '{first}' and '{second}' group the observations in the same way \
                 (each level of one holds exactly the observations of one level of the other), so \
                 their variances cannot be told apart (the model is not identifiable); remove one of them"
            ),
            Self::Singular { what } => write!(f, "{what} is singular"),
            Self::NotConverged {
                iterations,
                criterion,
                gradient,
            } => write!(
                f,
                "REML did not converge in {iterations} iterations (last criterion {}, largest gradient component {})",
                short(*criterion),
                short(gradient.iter().fold(0.0, |m: f64, g| m.max(g.abs())))
            ),
            Self::NotIdentified { smallest, largest } => write!(
                f,
                "a direction of the likelihood is flat (parameter not identified): the information has \
                 eigenvalues from {} to {}",
                short(*smallest),
                short(*largest)
            ),
            Self::NotEstimable => write!(
                f,
                "the contrast involves fixed-effect columns that are aliased, so it is not estimable"
            ),
            Self::BadHypothesis { reason } => write!(f, "hypothesis not testable: {reason}"),
            Self::ProfileFailed { parameter } => {
                write!(
                    f,
                    "the profile likelihood of '{parameter}' could not be bracketed"
                )
            }
            Self::RepeatedOccasion {
                occasion,
                first_row,
                second_row,
            } => write!(
                f,
                "rows {} and {} are the same subject at the same occasion ({}); each subject may be \
                 measured once per occasion",
                first_row + 1,
                second_row + 1,
                occasion + 1
            ),
            Self::BadTimes { reason } => write!(f, "the occasions' times are not usable: {reason}"),
            Self::TooFewSubjects {
                structure,
                subjects,
                needed,
            } => write!(
                f,
                "the {structure} covariance needs at least {needed} subjects with data; there are {subjects}"
            ),
            Self::OccasionsNeverTogether { first, second } => write!(
                f,
                "occasions {} and {} are never observed on the same subject, so their covariance \
                 cannot be estimated; choose a structure with fewer parameters",
                first + 1,
                second + 1
            ),
        }
    }
}

impl std::error::Error for MixedError {}

/// A number in a message: three significant digits in scientific form, a
/// plain 0 for zero.
fn short(x: f64) -> String {
    if x == 0.0 {
        "0".to_string()
    } else {
        format!("{x:.2e}")
    }
}
