//! The results-file record of Friedman's test (`method: ranks` with
//! `block:`): the test, Kendall's W, each level's ranks and letters, and
//! the post hoc procedure's pairs of rank sums.

use super::finite;
use crate::outcome::friedman::FriedmanDetail;
use crate::outcome::linear::{Comparison, LinearOutcome};
use serde::Serialize;

#[derive(Serialize)]
pub struct FriedmanRecord {
    /// The treatment factor and the blocking factor.
    pub factor: String,
    pub block: String,
    /// χ², corrected for ties within blocks.
    pub statistic: Option<f64>,
    pub statistic_uncorrected: Option<f64>,
    pub df: f64,
    pub p: Option<f64>,
    pub kendall_w: Option<f64>,
    pub blocks: usize,
    /// Σ(t³ − t) over the tie groups of every block.
    pub ties: f64,
    /// 1 − ties/(b(k³ − k)), the divisor of χ²; 1 without ties.
    pub tie_correction: f64,
    /// The post hoc procedure's key (`nemenyi`, `conover`); null without one.
    pub procedure: Option<&'static str>,
    pub levels: Vec<RankedLevelRecord>,
    pub pairs: Vec<RankPairRecord>,
}

#[derive(Serialize)]
pub struct RankedLevelRecord {
    pub level: String,
    pub blocks: usize,
    pub rank_sum: f64,
    pub mean_rank: f64,
    pub median: Option<f64>,
    /// Empty without a post hoc procedure.
    pub letters: String,
}

#[derive(Serialize)]
pub struct RankPairRecord {
    pub a: String,
    pub b: String,
    /// Rank sum of `a` minus that of `b`.
    pub rank_sum_diff: f64,
    pub mean_rank_diff: f64,
    /// q (Nemenyi: the studentized range) or t (Conover).
    pub statistic: Option<f64>,
    /// The procedure's p: simultaneous for Nemenyi, per pair for Conover.
    pub p_adj: Option<f64>,
    pub significant: bool,
}

/// The record; `comparison` is the treatment family's, when compared.
pub fn friedman_record(
    o: &LinearOutcome,
    d: &FriedmanDetail,
    comparison: Option<&Comparison>,
) -> FriedmanRecord {
    let f = &d.test;
    let letter = |i: usize| {
        comparison
            .and_then(|c| c.letters.get(i))
            .cloned()
            .unwrap_or_default()
    };
    let name = |i: usize| d.levels[i].name.clone();
    FriedmanRecord {
        factor: o.factors[d.factor].name.clone(),
        block: o.factors[d.block].name.clone(),
        statistic: finite(f.chi_sq),
        statistic_uncorrected: finite(f.chi_sq_uncorrected),
        df: f.df,
        p: finite(f.p),
        kendall_w: finite(f.kendall_w),
        blocks: f.blocks,
        ties: f.ties,
        tie_correction: f.tie_correction,
        procedure: comparison.map(|c| c.method.key()),
        levels: (d.levels.iter().enumerate())
            .map(|(i, l)| RankedLevelRecord {
                level: l.name.clone(),
                blocks: l.blocks,
                rank_sum: l.rank_sum,
                mean_rank: l.mean_rank,
                median: finite(l.median),
                letters: letter(i),
            })
            .collect(),
        pairs: comparison.map_or(Vec::new(), |c| {
            c.contrasts
                .iter()
                .map(|p| RankPairRecord {
                    a: name(p.a),
                    b: name(p.b),
                    rank_sum_diff: f.rank_sums[p.a] - f.rank_sums[p.b],
                    mean_rank_diff: f.mean_ranks[p.a] - f.mean_ranks[p.b],
                    statistic: finite(p.statistic),
                    p_adj: finite(p.p_adj),
                    significant: p.significant,
                })
                .collect()
        }),
    }
}
