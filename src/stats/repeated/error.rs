//! Why a repeated-measures analysis could not be given.

use std::fmt;

/// Every refusal of [`super::analyse`]. Subjects, occasions, terms and
/// factors are the caller's 0-based indices; the messages print them 1-based.
#[derive(Debug, Clone, PartialEq)]
pub enum RepeatedError {
    /// No within-subject factor was given.
    NoWithinFactor,
    /// A within-subject factor has fewer than two levels.
    TooFewWithinLevels { factor: usize, levels: usize },
    /// The product of the within factors' level counts overflows.
    TooManyOccasions,
    /// A subject does not have exactly one response per occasion.
    NotRectangular {
        subject: usize,
        expected: usize,
        found: usize,
    },
    /// A response is NaN or infinite.
    NonFinite { subject: usize, occasion: usize },
    /// A between-subject term does not give one level per subject.
    TermLength {
        term: usize,
        expected: usize,
        found: usize,
    },
    /// A subject's level of a between-subject term is at or past its count.
    LevelOutOfRange {
        term: usize,
        subject: usize,
        level: usize,
        levels: usize,
    },
    /// A level of a between-subject term (a group) has no subject.
    EmptyLevel { term: usize, level: usize },
    /// A between-subject term adds nothing to the terms before it (one
    /// level, or its groups are unions of earlier terms' groups).
    AliasedTerm { term: usize },
    /// The between-subject model has more columns than this dense method takes.
    TooLarge { columns: usize, limit: usize },
    /// Too few subjects: the residual df ν of the between-subject model must
    /// be at least 1, and above the number of contrasts p of every effect
    /// tested for sphericity (M = C'SC is singular otherwise).
    TooFewSubjects {
        subjects: usize,
        residual_df: usize,
        contrasts: usize,
    },
    /// An error sum of squares is zero, so F is not defined.
    NoResidualVariation { what: String },
    /// The residual covariance of an effect's contrasts is singular, so
    /// Mauchly's W is 0 and its χ² infinite.
    SingularCovariance { effect: Vec<usize> },
    /// A sum of squares overflowed (responses too large to square).
    Overflow,
}

fn one_based(factors: &[usize]) -> String {
    let names: Vec<String> = factors.iter().map(|f| (f + 1).to_string()).collect();
    names.join(" × ")
}

impl fmt::Display for RepeatedError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NoWithinFactor => write!(f, "no within-subject factor was given"),
            Self::TooFewWithinLevels { factor, levels } => write!(
                f,
                "within-subject factor {} has {levels} level(s); it needs at least 2",
                factor + 1
            ),
            Self::TooManyOccasions => {
                write!(
                    f,
                    "the within-subject factors have too many level combinations"
                )
            }
            Self::NotRectangular {
                subject,
                expected,
                found,
            } => write!(
                f,
                "subject {} has {found} responses where {expected} occasions were expected \
                 (the univariate analysis needs complete subjects)",
                subject + 1
            ),
            Self::NonFinite { subject, occasion } => write!(
                f,
                "the response of subject {} at occasion {} is not a finite number",
                subject + 1,
                occasion + 1
            ),
            Self::TermLength {
                term,
                expected,
                found,
            } => write!(
                f,
                "between-subject term {} gives {found} levels for {expected} subjects",
                term + 1
            ),
            Self::LevelOutOfRange {
                term,
                subject,
                level,
                levels,
            } => write!(
                f,
                "between-subject term {}: subject {} has level index {level}, but the term has {levels} levels",
                term + 1,
                subject + 1
            ),
            Self::EmptyLevel { term, level } => write!(
                f,
                "between-subject term {}: level {} has no subject",
                term + 1,
                level + 1
            ),
            Self::AliasedTerm { term } => write!(
                f,
                "between-subject term {} adds nothing to the terms before it (one level, or \
                 groups that earlier terms already separate)",
                term + 1
            ),
            Self::TooLarge { columns, limit } => write!(
                f,
                "the between-subject model has {columns} columns; this method takes at most {limit}"
            ),
            Self::TooFewSubjects {
                subjects,
                residual_df,
                contrasts,
            } => write!(
                f,
                "{subjects} subjects leave {residual_df} residual degrees of freedom between subjects; \
                 the tests need more than {contrasts}"
            ),
            Self::NoResidualVariation { what } => {
                write!(
                    f,
                    "the error sum of squares of {what} is zero, so F is not defined"
                )
            }
            Self::SingularCovariance { effect } => write!(
                f,
                "the residual covariance of the contrasts of within-subject effect {} is singular, \
                 so Mauchly's test is not defined",
                one_based(effect)
            ),
            Self::Overflow => write!(
                f,
                "a sum of squares overflowed: the responses are too large to square"
            ),
        }
    }
}

impl std::error::Error for RepeatedError {}
