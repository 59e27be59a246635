//! What every comparison family shares, whatever the engine: Fisher's
//! protection, the notes on a procedure's intervals, and the letters.

use crate::outcome::linear::{Comparison, Contrast};
use crate::outcome::procedure_note::ProcedureNote;
use crate::stats::compare::{Method, Pair, Pairwise};
use crate::stats::dunnett::Sides;
use crate::stats::letters::compact_letters;

/// Fisher's protection: unless the F test guarding the family rejected at
/// α (an undefined p counts as not rejected), no pair is declared
/// different. Returns whether the declarations were withheld.
pub(crate) fn protect(pairs: &mut [Pair], p: f64, alpha: f64) -> bool {
    let rejected = p < alpha;
    let withheld = !rejected;
    if withheld {
        for pair in pairs {
            pair.significant = false;
        }
    }
    withheld
}

/// Compact letters for `k` levels from a family of all pairs; `order_by`
/// orders the letters (means, or mean ranks).
pub(crate) fn letters(pairs: &[Pair], order_by: &[f64]) -> Vec<String> {
    let k = order_by.len();
    let mut different = vec![vec![false; k]; k];
    for p in pairs {
        different[p.a][p.b] = p.significant;
        different[p.b][p.a] = p.significant;
    }
    compact_letters(order_by, |i, j| different[i][j])
}

/// A comparison family with its letters, withholding and notes.
pub(crate) struct Declared {
    pub letters: Vec<String>,
    pub withheld: bool,
    pub notes: Vec<ProcedureNote>,
}

/// The outcome of a family of comparisons: each pair becomes a contrast
/// with its own SE and df (`df`, the error's, unless the procedure gives
/// the pair its own).
pub(crate) fn comparison_result(
    method: Method,
    family: Pairwise,
    (alpha, df): (f64, f64),
    declared: Declared,
    control: Option<usize>,
    sides: Sides,
) -> Comparison {
    Comparison {
        method,
        alpha,
        contrasts: family
            .pairs
            .into_iter()
            .map(|p| Contrast {
                a: p.a,
                b: p.b,
                estimate: p.diff,
                se: p.se,
                df: p.df.unwrap_or(df),
                own_df: p.df.is_some(),
                lower: p.lower,
                upper: p.upper,
                statistic: p.statistic,
                p_raw: p.p_raw,
                p_adj: p.p_adj,
                significant: p.significant,
            })
            .collect(),
        letters: declared.letters,
        critical: family.critical,
        control,
        sides,
        withheld: declared.withheld,
        notes: declared.notes,
    }
}

/// Whether a method's family holds every pair (Dunnett's compares each
/// level with the control only, so it has no letters).
pub(crate) fn has_letters(method: Method) -> bool {
    method != Method::Dunnett
}
