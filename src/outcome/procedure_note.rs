//! What the report says about a comparison procedure, as typed facts; the
//! words live in the rendering layer (`render::tables::procedure_note`).

use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;

/// One note on how a family's pairs were compared.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum ProcedureNote {
    /// Fisher's LSD without protection; `several_tests` for blocks with
    /// several F tests (factorial designs).
    Unprotected {
        several_tests: bool,
    },
    /// Protected LSD whose F test (of `term`, named when the block has
    /// several) was not significant: no pair is declared different.
    ProtectionWithheld {
        term: Option<String>,
        alpha: f64,
    },
    /// Protected LSD whose F test was significant.
    ProtectionPassed {
        alpha: f64,
    },
    /// The LSD with four or more levels does not hold the familywise rate.
    LsdManyLevels,
    /// Holm's p with Bonferroni's intervals.
    Holm,
    Scheffe,
    /// Dunn's mean-rank comparisons with this adjustment.
    Dunn {
        adjust: Method,
    },
    GamesHowell,
    /// Dunnett's many-to-one comparisons, in this direction.
    Dunnett {
        sides: Sides,
    },
    /// Each pair of a mixed model with its own SE and df.
    MixedOwnDf,
    /// Tukey's procedure with a df per pair.
    MixedTukeyApproximate,
    /// Dunnett's joint critical value in a mixed model.
    MixedDunnett,
    /// Nemenyi's simultaneous comparison of rank sums within blocks.
    Nemenyi,
    /// Conover's per-pair t on rank sums within blocks; `rejected` says
    /// whether Friedman's test rejected at α (otherwise no pair is declared).
    ConoverFriedman {
        rejected: bool,
        alpha: f64,
    },
}
