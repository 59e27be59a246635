//! The repeated-measures table (spec 7.1): between-subject lines against
//! subjects within groups, within-subject effects against their own error.

use super::sphericity::{Epsilons, MauchlyTest};
use crate::stats::dist::f_sf;

/// A tested line: SS on df, MS = SS/df, F = MS/MS_error, p from F(df, error df).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TestLine {
    pub ss: f64,
    pub df: usize,
    pub ms: f64,
    pub f: f64,
    pub p: f64,
}

/// An error line: SS on df and MS.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ErrorLine {
    pub ss: f64,
    pub df: usize,
    pub ms: f64,
}

impl ErrorLine {
    pub(crate) fn new(ss: f64, df: usize) -> Self {
        ErrorLine {
            ss,
            df,
            ms: ss / df as f64,
        }
    }

    pub(crate) fn test(&self, ss: f64, df: usize) -> TestLine {
        let ms = ss / df as f64;
        let f = ms / self.ms;
        TestLine {
            ss,
            df,
            ms,
            f,
            p: f_sf(f, df as f64, self.df as f64),
        }
    }
}

/// The between-subject part: each term (adjusted for the ones before it)
/// against subjects within groups (N − rank of the between model df).
#[derive(Debug, Clone, PartialEq)]
pub struct BetweenTable {
    /// One line per between-subject term, in the input's order.
    pub terms: Vec<TestLine>,
    pub error: ErrorLine,
}

/// Whether sphericity had to be tested.
#[derive(Debug, Clone, PartialEq)]
pub enum Sphericity {
    /// One contrast (a factor of two levels): sphericity holds by
    /// construction, every epsilon is 1 and there is no test.
    HoldsTrivially,
    /// Mauchly's test on the effect's p ≥ 2 contrasts.
    Tested(MauchlyTest),
}

/// The p-values of a within-subject line with both df multiplied by ε.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CorrectedP {
    pub gg: f64,
    /// With the capped Lecoutre Huynh-Feldt epsilon.
    pub hf: f64,
    pub lower_bound: f64,
}

/// A within-subject line: the uncorrected test and its corrected p-values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WithinLine {
    pub test: TestLine,
    pub corrected: CorrectedP,
}

impl WithinLine {
    pub(crate) fn new(test: TestLine, error: &ErrorLine, epsilons: &Epsilons) -> Self {
        let at = |eps: f64| f_sf(test.f, eps * test.df as f64, eps * error.df as f64);
        WithinLine {
            test,
            corrected: CorrectedP {
                gg: at(epsilons.gg),
                hf: at(epsilons.hf),
                lower_bound: at(epsilons.lower_bound),
            },
        }
    }
}

/// One within-subject effect (a within factor or an interaction of within
/// factors), its interactions with the between terms, and its error.
#[derive(Debug, Clone, PartialEq)]
pub struct WithinEffect {
    /// The within factors of the effect (indices into the input's `within`).
    pub factors: Vec<usize>,
    /// p: the number of its contrasts, the product of (levels − 1).
    pub contrasts: usize,
    /// The effect itself.
    pub effect: WithinLine,
    /// Its interaction with each between term, in the input's order.
    pub by_between: Vec<WithinLine>,
    /// Effect × subjects within groups.
    pub error: ErrorLine,
    pub sphericity: Sphericity,
    /// All 1 when sphericity holds trivially.
    pub epsilons: Epsilons,
}

/// The univariate repeated-measures analysis of complete subjects.
#[derive(Debug, Clone, PartialEq)]
pub struct RepeatedAnalysis {
    pub subjects: usize,
    pub occasions: usize,
    /// ν: the residual df of the between-subject model, N − its rank.
    pub residual_df: usize,
    pub between: BetweenTable,
    /// Main effects first, then interactions of increasing order.
    pub within: Vec<WithinEffect>,
}
