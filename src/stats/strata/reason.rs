//! Why the classical stratum table is not available for a layout: returned
//! as data so that the report can name the cells, units and terms.

/// A stratum: the units of one random term, or the residual (the
/// observations themselves).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum StratumId {
    /// The units of the random term with this index (in the caller's order).
    Random(usize),
    /// The observations: the bottom stratum, whose error is the residual.
    Residual,
}

/// One combination of treatment levels that a unit lacks.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MissingCell {
    /// The random term whose unit lacks it.
    pub random_term: usize,
    /// The unit (a level index of that random term).
    pub unit: usize,
    /// The missing combination: one level index per treatment factor.
    pub levels: Vec<usize>,
}

/// A reason the layout is not a recognised balanced multi-stratum design.
/// Indices are the caller's: random terms, treatment factors, fixed terms,
/// units and levels.
#[derive(Debug, Clone, PartialEq)]
pub enum NotClassical {
    /// Fewer than two observations.
    TooFewObservations,
    /// The response, the treatment rows and the random-term rows differ in
    /// length (a caller error, reported rather than panicking).
    LengthsDiffer,
    /// A level index at or beyond its factor's declared number of levels, a
    /// row of the wrong width, or a term naming no factor or an unknown one.
    LevelOutOfRange,
    /// Observations whose response is missing or not finite.
    MissingResponse { observations: Vec<usize> },
    /// No random term: there is a single stratum, the ordinary analysis.
    NoRandomTerm,
    /// A random term with a single unit: it is the whole experiment.
    RandomTermIsWhole { random_term: usize },
    /// A random term with one observation per unit duplicates the residual.
    RandomTermIsResidual { random_term: usize },
    /// Two random terms that group the observations identically.
    SameUnits { first: usize, second: usize },
    /// The units of a random term hold different numbers of observations:
    /// (unit, size) for every present unit.
    UnequalUnitSizes {
        random_term: usize,
        sizes: Vec<(usize, usize)>,
    },
    /// Two crossed random terms whose units do not all meet.
    CrossedUnevenly { first: usize, second: usize },
    /// Two crossed random terms whose common units (their meet) are not a
    /// declared random term nor the single observations.
    UndeclaredMeet { first: usize, second: usize },
    /// Two random terms whose smallest common grouping (their join) is not a
    /// declared random term nor the whole experiment.
    UndeclaredJoin { first: usize, second: usize },
    /// A treatment factor constant within some units of a random term but
    /// not within these (it looks applied to those units, and is not).
    VariesWithinUnits {
        factor: usize,
        random_term: usize,
        units: Vec<usize>,
    },
    /// Treatment combinations absent from units that should hold them (the
    /// first hundred named; `unnamed` counts the rest).
    MissingCells {
        cells: Vec<MissingCell>,
        unnamed: usize,
    },
    /// Treatment combinations (one level per factor) with their number of
    /// observations, when not all equal or not all present.
    UnequalReplication { counts: Vec<(Vec<usize>, usize)> },
    /// A fixed term whose levels are not balanced over the units of a random
    /// term above the stratum where it is estimated.
    NotOrthogonal { term: usize, random_term: usize },
    /// A fixed term constant within the units of two strata neither of which
    /// lies above the other: it has no single stratum.
    NoSingleStratum { term: usize },
}
